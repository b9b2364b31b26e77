//! The ASTM G173-03 reference solar spectrum, shipped inside the crate.
//!
//! Source: ASTM G173-03, Standard Tables for Reference Solar Spectral Irradiances: Direct
//! Normal and Hemispherical on 37° Tilted Surface (ASTM International, 2003; spectra derived
//! from SMARTS v. 2.9.2). The table file `astm_g173.csv` beside this module is the copy
//! distributed with the BSD-licensed pvlib package (pvlib/data/ASTMG173.csv); columns:
//! wavelength (nm), extraterrestrial, global tilt, direct + circumsolar (W m⁻² nm⁻¹), 2002
//! rows from 280 to 4000 nm on a non-uniform grid (0.5, 1 and 5 nm steps).

use std::sync::OnceLock;

const TABLE: &str = include_str!("astm_g173.csv");

/// One row of the table: wavelength (nm) and the three spectral irradiances (W m⁻² nm⁻¹).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolarRow {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Extraterrestrial spectral irradiance, W m⁻² nm⁻¹.
    pub extraterrestrial: f64,
    /// Global tilt (37°) spectral irradiance, W m⁻² nm⁻¹.
    pub global_tilt: f64,
    /// Direct + circumsolar spectral irradiance, W m⁻² nm⁻¹.
    pub direct: f64,
}

/// All 2002 rows of ASTM G173-03.
pub fn table() -> &'static [SolarRow] {
    static ROWS: OnceLock<Vec<SolarRow>> = OnceLock::new();
    ROWS.get_or_init(|| {
        TABLE
            .lines()
            .filter_map(|l| {
                let c: Vec<f64> = l
                    .split(',')
                    .map(|x| x.trim().parse::<f64>())
                    .collect::<Result<_, _>>()
                    .ok()?;
                (c.len() == 4).then(|| SolarRow {
                    wavelength_nm: c[0],
                    extraterrestrial: c[1],
                    global_tilt: c[2],
                    direct: c[3],
                })
            })
            .collect()
    })
}

/// The global tilt column as (wavelength nm, W m⁻² nm⁻¹).
pub fn global_tilt() -> &'static [(f64, f64)] {
    static ROWS: OnceLock<Vec<(f64, f64)>> = OnceLock::new();
    ROWS.get_or_init(|| table().iter().map(|r| (r.wavelength_nm, r.global_tilt)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::light::spectrum::trapezoid;

    #[test]
    fn table_is_complete() {
        assert_eq!(table().len(), 2002);
        assert_eq!(table()[0].wavelength_nm, 280.0);
        assert_eq!(table()[2001].wavelength_nm, 4000.0);
    }

    #[test]
    fn integrals_match_the_published_totals() {
        // ASTM G173-03 trapezoid integrals over 280-4000 nm: global tilt 1000.37 W/m²,
        // extraterrestrial 1347.93, direct + circumsolar 900.14; global 280-400 nm 46.10.
        let g = trapezoid(global_tilt());
        assert!((g - 1000.37).abs() < 0.01, "{g}");
        let et: Vec<(f64, f64)> = table().iter().map(|r| (r.wavelength_nm, r.extraterrestrial)).collect();
        assert!((trapezoid(&et) - 1347.93).abs() < 0.01);
        let d: Vec<(f64, f64)> = table().iter().map(|r| (r.wavelength_nm, r.direct)).collect();
        assert!((trapezoid(&d) - 900.14).abs() < 0.01);
        let uv: Vec<(f64, f64)> = global_tilt().iter().copied().filter(|p| p.0 <= 400.0).collect();
        assert!((trapezoid(&uv) - 46.10).abs() < 0.01, "{}", trapezoid(&uv));
    }
}
