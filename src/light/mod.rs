//! Light sources and their photons, as bins of (wavelength, photon flux).
//!
//! Every source, whatever its kind, is turned into a list of [`PhotonBin`]s whose fluxes sum
//! to the source's total photon flux entering the sample (einstein/s). A line is one bin; a
//! band, a tabulated lamp and sunlight are quadratures of their spectral power, each bin
//! carrying the photons of its share of the spectrum at its own photon energy. Engines then
//! only ever see bins, so adding a source kind means writing one function that returns bins.

pub mod solar;
pub mod spectrum;

use crate::units::constants::molar_photon_energy;
pub use spectrum::{Outside, Spectrum};

/// Photons of one wavelength: `flux` einstein/s at `wavelength` m.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhotonBin {
    /// Vacuum wavelength, m.
    pub wavelength: f64,
    /// Photon flux entering the sample, einstein/s.
    pub flux: f64,
}

/// How bright a source is: a total radiant power or a total photon flux.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Intensity {
    /// Radiant power entering the sample, W.
    Power(f64),
    /// Photon flux entering the sample, einstein/s.
    PhotonFlux(f64),
}

/// What kind of source, with its defining numbers (SI).
#[derive(Debug, Clone, PartialEq)]
pub enum LightKind {
    /// A monochromatic line at `wavelength` m.
    Line {
        /// Wavelength, m.
        wavelength: f64,
    },
    /// A Gaussian LED band with centre and full width at half maximum, m.
    Band {
        /// Centre, m.
        centre: f64,
        /// Full width at half maximum, m.
        fwhm: f64,
    },
    /// A lamp with a tabulated relative spectral power.
    Lamp {
        /// The file it came from (for display).
        file: String,
        /// Points (wavelength m, relative spectral power per unit wavelength).
        relative_power: Vec<(f64, f64)>,
    },
    /// Sunlight: the ASTM G173-03 global tilt spectrum times `scale`, over the irradiated area.
    Sun {
        /// Factor on the reference spectrum (shade, depth, another atmosphere).
        scale: f64,
        /// Irradiated area, m².
        area: f64,
    },
}

/// A light source of the network.
#[derive(Debug, Clone, PartialEq)]
pub struct LightSource {
    /// Name used in ledgers and messages.
    pub name: String,
    /// Kind and shape.
    pub kind: LightKind,
    /// Total intensity (None for sunlight, whose intensity follows from the table).
    pub intensity: Option<Intensity>,
    /// Wavelength window kept (m), inclusive.
    pub window: (f64, f64),
    /// The photons, sorted by wavelength.
    pub bins: Vec<PhotonBin>,
}

impl LightSource {
    /// Build a source and its photon bins.
    pub fn new(name: String, kind: LightKind, intensity: Option<Intensity>, window: (f64, f64)) -> Self {
        let bins = bins_for(&kind, intensity, window);
        LightSource {
            name,
            kind,
            intensity,
            window,
            bins,
        }
    }

    /// Total photon flux, einstein/s.
    pub fn photon_flux(&self) -> f64 {
        self.bins.iter().map(|b| b.flux).sum()
    }

    /// Total radiant power, W.
    pub fn power(&self) -> f64 {
        self.bins
            .iter()
            .map(|b| b.flux * molar_photon_energy(b.wavelength))
            .sum()
    }

    /// Shortest and longest wavelength carrying photons (m).
    pub fn extent(&self) -> Option<(f64, f64)> {
        Some((self.bins.first()?.wavelength, self.bins.last()?.wavelength))
    }
}

/// Distribute a spectral power density `shape` (points of wavelength m, W per unit wavelength,
/// any scale) into photon bins by the trapezoid rule, each point taking half of each adjacent
/// interval. Returns bins and the total power of `shape`.
fn quadrature(shape: &[(f64, f64)]) -> (Vec<PhotonBin>, f64) {
    let n = shape.len();
    let mut bins = Vec::with_capacity(n);
    let mut total = 0.0;
    for i in 0..n {
        let left = if i > 0 { shape[i].0 - shape[i - 1].0 } else { 0.0 };
        let right = if i + 1 < n { shape[i + 1].0 - shape[i].0 } else { 0.0 };
        let p = shape[i].1 * 0.5 * (left + right);
        total += p;
        bins.push(PhotonBin {
            wavelength: shape[i].0,
            flux: p / molar_photon_energy(shape[i].0),
        });
    }
    (bins, total)
}

/// Scale bins of a shape to the requested intensity.
fn scale_to(mut bins: Vec<PhotonBin>, shape_power: f64, intensity: Option<Intensity>) -> Vec<PhotonBin> {
    let factor = match intensity {
        Some(Intensity::Power(p)) if shape_power > 0.0 => p / shape_power,
        Some(Intensity::PhotonFlux(q)) => {
            let flux: f64 = bins.iter().map(|b| b.flux).sum();
            if flux > 0.0 { q / flux } else { 0.0 }
        }
        _ => 1.0,
    };
    for b in &mut bins {
        b.flux *= factor;
    }
    bins.retain(|b| b.flux > 0.0);
    bins
}

fn clip(shape: Vec<(f64, f64)>, window: (f64, f64)) -> Vec<(f64, f64)> {
    shape
        .into_iter()
        .filter(|p| p.0 >= window.0 && p.0 <= window.1)
        .collect()
}

fn bins_for(kind: &LightKind, intensity: Option<Intensity>, window: (f64, f64)) -> Vec<PhotonBin> {
    match kind {
        LightKind::Line { wavelength } => {
            let flux = match intensity {
                Some(Intensity::Power(p)) => p / molar_photon_energy(*wavelength),
                Some(Intensity::PhotonFlux(q)) => q,
                None => 0.0,
            };
            vec![PhotonBin {
                wavelength: *wavelength,
                flux,
            }]
        }
        LightKind::Band { centre, fwhm } => {
            // Gaussian spectral power, sampled out to ±2 FWHM (beyond which less than 1e-5 of the
            // power lies), 40 points per FWHM, 161 points in all.
            let sigma = fwhm / (8.0 * std::f64::consts::LN_2).sqrt();
            let n = 161;
            let half = 2.0 * fwhm;
            let shape: Vec<(f64, f64)> = (0..n)
                .map(|i| {
                    let x = centre - half + 2.0 * half * i as f64 / (n - 1) as f64;
                    let z = (x - centre) / sigma;
                    (x, (-0.5 * z * z).exp())
                })
                .filter(|p| p.0 > 0.0)
                .collect();
            let shape = clip(shape, window);
            let (bins, p) = quadrature(&shape);
            scale_to(bins, p, intensity)
        }
        LightKind::Lamp { relative_power, .. } => {
            let shape = clip(relative_power.clone(), window);
            let (bins, p) = quadrature(&shape);
            scale_to(bins, p, intensity)
        }
        LightKind::Sun { scale, area } => {
            // W m⁻² nm⁻¹ -> W per m of wavelength over the area: × 1e9 nm/m × area.
            let shape: Vec<(f64, f64)> = solar::global_tilt()
                .iter()
                .map(|&(wl_nm, e)| (wl_nm * 1e-9, e * 1e9 * scale * area))
                .collect();
            let shape = clip(shape, window);
            let (bins, _) = quadrature(&shape);
            bins.into_iter().filter(|b| b.flux > 0.0).collect()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_power_to_photon_flux() {
        // 1 W at 365 nm = 3.0512e-6 einstein/s (CODATA 2018 exact h, c, N_A).
        let s = LightSource::new(
            "uv".into(),
            LightKind::Line { wavelength: 365e-9 },
            Some(Intensity::Power(1.0)),
            (0.0, f64::INFINITY),
        );
        assert!((s.photon_flux() - 3.0512e-6).abs() / 3.0512e-6 < 1e-4);
        assert!((s.power() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn band_keeps_its_power_and_centre() {
        let s = LightSource::new(
            "blue".into(),
            LightKind::Band {
                centre: 450e-9,
                fwhm: 20e-9,
            },
            Some(Intensity::Power(0.1)),
            (0.0, f64::INFINITY),
        );
        assert!((s.power() - 0.1).abs() < 1e-12, "{}", s.power());
        // Mean photon wavelength sits slightly red of the centre (red photons are cheaper).
        let q = s.photon_flux();
        let mean: f64 = s.bins.iter().map(|b| b.wavelength * b.flux).sum::<f64>() / q;
        assert!(mean > 450e-9 && mean < 451e-9, "{mean}");
        // FWHM check: the power at centre ± 10 nm is half the peak (common practice definition).
        let peak = s
            .bins
            .iter()
            .map(|b| b.flux * molar_photon_energy(b.wavelength))
            .fold(0.0, f64::max);
        let at = |wl: f64| {
            s.bins
                .iter()
                .min_by(|a, b| (a.wavelength - wl).abs().total_cmp(&(b.wavelength - wl).abs()))
                .map(|b| b.flux * molar_photon_energy(b.wavelength))
                .unwrap()
        };
        assert!((at(460e-9) / peak - 0.5).abs() < 0.01);
    }

    #[test]
    fn photon_flux_intensity_is_kept() {
        let s = LightSource::new(
            "b".into(),
            LightKind::Band {
                centre: 530e-9,
                fwhm: 30e-9,
            },
            Some(Intensity::PhotonFlux(2e-6)),
            (0.0, f64::INFINITY),
        );
        assert!((s.photon_flux() - 2e-6).abs() < 1e-18);
    }
}
