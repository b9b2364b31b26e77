//! Chemical actinometry: turn measurements into the photon flux entering a sample.
//!
//! **Ferrioxalate** (the standard procedure: the Fe²⁺ formed is complexed with
//! 1,10-phenanthroline and read at 510 nm):
//!
//! ```text
//! n(Fe²⁺) = ΔA(510) · V_total / (ε(510) · l) · V_irradiated / V_aliquot       mol
//! q       = n(Fe²⁺) / (Φ(λ) · t · f)                                          einstein/s
//! ```
//! with V_total the volume the aliquot was diluted to, l the cuvette path of the 510 nm reading,
//! t the irradiation time and f the fraction of the light the actinometer absorbed. The
//! uncertainty is propagated to first order: the relative variances of the factors add.
//!
//! **Any photoreaction of a network** with a known quantum yield: the flux scale that makes the
//! simulated conversion of the step's absorber match measured conversions, by Gauss–Newton on
//! the log of the scale (a one-parameter least-squares solve).

use crate::error::{Error, Result};
use crate::kinetics::{self, Method, Options};
use crate::model::Model;
use crate::model::rhs::Rhs;
use crate::units::constants::molar_photon_energy;

/// A value with its standard uncertainty (same unit; 0 when not given).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Measured {
    /// Value.
    pub value: f64,
    /// Standard uncertainty.
    pub sigma: f64,
}

impl Measured {
    /// An exact value.
    pub fn exact(value: f64) -> Self {
        Measured { value, sigma: 0.0 }
    }

    /// Relative uncertainty.
    pub fn relative(&self) -> f64 {
        if self.value == 0.0 {
            0.0
        } else {
            (self.sigma / self.value).abs()
        }
    }
}

/// Which published table of ferrioxalate quantum yields.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum YieldTable {
    /// Hatchard & Parker, Proc. R. Soc. A 235 (1956) 518: 254–546 nm (values `from memory`
    /// in this project's reference notes). The default: it covers the whole range.
    HatchardParker1956,
    /// Lee & Seliger, J. Chem. Phys. 40 (1964) 519: 365/366 nm only (checked).
    LeeSeliger1964,
}

impl YieldTable {
    /// Citation for reports.
    pub fn citation(self) -> &'static str {
        match self {
            YieldTable::HatchardParker1956 => {
                "Hatchard & Parker, Proc. R. Soc. A 235 (1956) 518 (values as recalled, not checked against the paper)"
            }
            YieldTable::LeeSeliger1964 => "Lee & Seliger, J. Chem. Phys. 40 (1964) 519",
        }
    }
}

/// Actinometer solution strength (the tables differ by concentration).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Strength {
    /// 0.006 mol/L potassium ferrioxalate (UV to 436 nm).
    Dilute,
    /// 0.15 mol/L (visible, 436–546 nm).
    Concentrated,
}

/// Quantum yield of Fe²⁺ (wavelength nm, Φ) by table and strength.
fn table(t: YieldTable, s: Strength) -> (&'static [(f64, f64)], f64) {
    // (points, standard uncertainty of Φ)
    match (t, s) {
        (YieldTable::HatchardParker1956, Strength::Dilute) => (
            &[
                (254.0, 1.25),
                (297.0, 1.24),
                (302.0, 1.24),
                (313.0, 1.24),
                (334.0, 1.23),
                (361.0, 1.21),
                (366.0, 1.21),
                (405.0, 1.14),
                (436.0, 1.11),
            ],
            0.0,
        ),
        (YieldTable::HatchardParker1956, Strength::Concentrated) => (
            &[
                (436.0, 1.01),
                (468.0, 0.93),
                (480.0, 0.94),
                (509.0, 0.86),
                (546.0, 0.15),
            ],
            0.0,
        ),
        (YieldTable::LeeSeliger1964, Strength::Dilute) => (&[(365.0, 1.26), (366.0, 1.26)], 0.03),
        (YieldTable::LeeSeliger1964, Strength::Concentrated) => (&[(365.0, 1.20), (366.0, 1.20)], 0.03),
    }
}

/// Φ(Fe²⁺) at `wavelength` (m) from one table: the tabulated value, or a linear interpolation
/// between its neighbours (said in the note). Outside the table: an error naming its range.
pub fn ferrioxalate_yield(t: YieldTable, s: Strength, wavelength: f64) -> Result<(Measured, String)> {
    let nm = wavelength * 1e9;
    let (pts, sigma) = table(t, s);
    let (lo, hi) = (pts[0].0, pts[pts.len() - 1].0);
    let strength = match s {
        Strength::Dilute => "0.006 M",
        Strength::Concentrated => "0.15 M",
    };
    if nm < lo - 0.5 || nm > hi + 0.5 {
        return Err(Error::Usage(format!(
            "{} at {strength} tabulates {lo}–{hi} nm, not {} nm; choose another table (--yield-table), \
             the other strength (--strength), or give --quantum-yield",
            t.citation(),
            crate::units::sig(nm, 4)
        )));
    }
    let nm = nm.clamp(lo, hi);
    if let Some(p) = pts.iter().find(|p| (p.0 - nm).abs() < 0.5) {
        return Ok((
            Measured { value: p.1, sigma },
            format!("{} nm, {strength}, from {}", p.0, t.citation()),
        ));
    }
    let i = pts.iter().position(|p| p.0 > nm).unwrap_or(pts.len() - 1).max(1);
    let (a, b) = (pts[i - 1], pts[i]);
    let v = a.1 + (b.1 - a.1) * (nm - a.0) / (b.0 - a.0);
    if a.1 == b.1 {
        return Ok((
            Measured { value: v, sigma },
            format!("one value for {}–{} nm, {strength}, from {}", a.0, b.0, t.citation()),
        ));
    }
    Ok((
        Measured { value: v, sigma },
        format!(
            "interpolated linearly between {} and {} nm, {strength}, from {}",
            a.0,
            b.0,
            t.citation()
        ),
    ))
}

/// ε(510 nm) of Fe(phen)₃²⁺, 1.11e4 L mol⁻¹ cm⁻¹ (a value recalled, not checked), in the
/// internal L mol⁻¹ m⁻¹.
pub const EPSILON_510: f64 = 1.11e4 * 100.0;

/// The ferrioxalate measurement. Volumes in L, lengths in m, times in s, ε in L mol⁻¹ m⁻¹.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Ferrioxalate {
    /// Absorbance change at 510 nm (irradiated minus dark).
    pub delta_a: Measured,
    /// Cuvette path of the 510 nm reading, m.
    pub path: Measured,
    /// Volume irradiated, L.
    pub v_irradiated: Measured,
    /// Aliquot taken from it, L.
    pub v_aliquot: Measured,
    /// Volume the aliquot was made up to (after phenanthroline, buffer, dilution), L.
    pub v_total: Measured,
    /// Irradiation time, s.
    pub time: Measured,
    /// Wavelength of the irradiation, m.
    pub wavelength: f64,
    /// Fraction of the incident light absorbed by the actinometer.
    pub fraction_absorbed: Measured,
    /// Quantum yield of Fe²⁺.
    pub quantum_yield: Measured,
    /// ε(510 nm) of the complex, L mol⁻¹ m⁻¹.
    pub epsilon: Measured,
}

/// A photon flux from actinometry.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FluxResult {
    /// Fe²⁺ (or product) formed in the irradiated volume, mol.
    pub moles: Measured,
    /// Photon flux entering the sample, einstein/s.
    pub photon_flux: Measured,
    /// The same as radiant power at the wavelength, W.
    pub power: Measured,
    /// Each input's share of the relative variance of the flux: (name, relative uncertainty).
    pub contributions: Vec<(String, f64)>,
    /// The inputs given without an uncertainty, taken as exact (they add nothing to the
    /// uncertainty above, which is then a lower bound).
    pub exact: Vec<String>,
}

/// Photon flux from a ferrioxalate measurement, with first-order uncertainty.
pub fn ferrioxalate(m: &Ferrioxalate) -> Result<FluxResult> {
    let parts: [(&str, Measured); 9] = [
        ("absorbance change", m.delta_a),
        ("cuvette path", m.path),
        ("irradiated volume", m.v_irradiated),
        ("aliquot volume", m.v_aliquot),
        ("total (diluted) volume", m.v_total),
        ("irradiation time", m.time),
        ("fraction absorbed", m.fraction_absorbed),
        ("quantum yield", m.quantum_yield),
        ("ε(510 nm)", m.epsilon),
    ];
    for (name, p) in &parts {
        if p.value.is_nan() || p.value <= 0.0 || !p.value.is_finite() || p.sigma.is_nan() || p.sigma < 0.0 {
            return Err(Error::Usage(format!(
                "the {name} must be positive (with a non-negative uncertainty), not {}",
                p.value
            )));
        }
    }
    if m.fraction_absorbed.value > 1.0 {
        return Err(Error::Usage(format!(
            "the fraction absorbed is at most 1, not {}",
            m.fraction_absorbed.value
        )));
    }
    if m.v_aliquot.value > m.v_irradiated.value || m.v_aliquot.value > m.v_total.value {
        return Err(Error::Usage(
            "the aliquot cannot be larger than the irradiated volume or the volume it was made up to".into(),
        ));
    }
    let n =
        m.delta_a.value * m.v_total.value / (m.epsilon.value * m.path.value) * m.v_irradiated.value / m.v_aliquot.value;
    let q = n / (m.quantum_yield.value * m.time.value * m.fraction_absorbed.value);
    let rel = |ps: &[(&str, Measured)]| ps.iter().map(|p| p.1.relative().powi(2)).sum::<f64>().sqrt();
    let rel_n = rel(&[parts[0], parts[1], parts[2], parts[3], parts[4], parts[8]]);
    let rel_q = rel(&parts);
    let e = molar_photon_energy(m.wavelength);
    Ok(FluxResult {
        moles: Measured {
            value: n,
            sigma: n * rel_n,
        },
        photon_flux: Measured {
            value: q,
            sigma: q * rel_q,
        },
        power: Measured {
            value: q * e,
            sigma: q * e * rel_q,
        },
        contributions: parts
            .iter()
            .filter(|p| p.1.sigma > 0.0)
            .map(|p| (p.0.to_string(), p.1.relative()))
            .collect(),
        exact: parts
            .iter()
            .filter(|p| p.1.sigma == 0.0)
            .map(|p| p.0.to_string())
            .collect(),
    })
}

/// A flux fitted through a network.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct NetworkFit {
    /// Factor on the file's light (all sources together).
    pub scale: Measured,
    /// Total photon flux entering the sample at that scale, einstein/s.
    pub photon_flux: Measured,
    /// Residual sum of squares of the conversions.
    pub rss: f64,
    /// Number of data points.
    pub points: usize,
    /// Gauss–Newton iterations.
    pub iterations: usize,
    /// Conversions computed at the fitted scale, one per data point.
    pub fitted: Vec<f64>,
}

/// Conversion 1 − c/c₀ of species `sp` at each of `times` (ascending, s) on `model`.
pub fn conversions(model: &Model, sp: usize, times: &[f64], rtol: f64) -> Result<Vec<f64>> {
    let c0 = model.initial[sp];
    let mut y = Rhs::new(model).initial_state();
    let mut t = 0.0;
    let mut out = Vec::with_capacity(times.len());
    for &ti in times {
        if ti > t {
            let mut o = Options::until(ti);
            o.method = Method::Bdf;
            o.rtol = rtol;
            o.atol = 1e-16;
            o.outputs = 1;
            let tr = kinetics::simulate_from(model, t, &y, &o, &mut |_| {})?;
            y.copy_from_slice(tr.last());
            t = ti;
        }
        out.push(1.0 - y[sp] / c0);
    }
    Ok(out)
}

/// Fit the light scale that makes the conversion of species `sp` match `data`
/// (time s, conversion 0..1), starting from the file's light.
pub fn fit_flux(model: &Model, sp: usize, data: &[(f64, f64)]) -> Result<NetworkFit> {
    if data.is_empty() {
        return Err(Error::Usage("no data points".into()));
    }
    if model.initial[sp] <= 0.0 {
        return Err(Error::Usage(format!(
            "{} starts at zero: its conversion is undefined",
            model.species[sp]
        )));
    }
    if model.total_flux() <= 0.0 {
        return Err(Error::Usage("the network has no light to scale".into()));
    }
    let mut data = data.to_vec();
    data.sort_by(|a, b| a.0.total_cmp(&b.0));
    let times: Vec<f64> = data.iter().map(|d| d.0).collect();
    let rtol = 1e-10;
    let resid = |x: f64| -> Result<(Vec<f64>, f64)> {
        let c = conversions(&model.with_light_scale(x.exp()), sp, &times, rtol)?;
        let rss = c.iter().zip(&data).map(|(c, d)| (c - d.1).powi(2)).sum();
        Ok((c, rss))
    };
    let mut x = 0.0;
    let (mut c, mut rss) = resid(x)?;
    let mut jtj = 0.0;
    let mut iterations = 0;
    let h = 1e-5;
    for _ in 0..50 {
        iterations += 1;
        let (cp, _) = resid(x + h)?;
        let (cm, _) = resid(x - h)?;
        let j: Vec<f64> = cp.iter().zip(&cm).map(|(p, m)| (p - m) / (2.0 * h)).collect();
        jtj = j.iter().map(|v| v * v).sum::<f64>();
        if jtj == 0.0 {
            return Err(Error::Numerical(format!(
                "the conversion of {} does not respond to the light: nothing to fit",
                model.species[sp]
            )));
        }
        let jr: f64 = j.iter().zip(c.iter().zip(&data)).map(|(j, (c, d))| j * (c - d.1)).sum();
        let mut dx = (-jr / jtj).clamp(-3.0, 3.0);
        let mut accepted = false;
        for _ in 0..30 {
            let (cn, rn) = resid(x + dx)?;
            if rn <= rss || dx.abs() < 1e-14 {
                x += dx;
                c = cn;
                rss = rn;
                accepted = true;
                break;
            }
            dx *= 0.5;
        }
        if !accepted || dx.abs() < 1e-10 {
            break;
        }
    }
    let n = data.len();
    let sigma_x = if n > 1 {
        (rss / (n - 1) as f64 / jtj).sqrt()
    } else {
        0.0
    };
    let s = x.exp();
    let flux = model.total_flux() * s;
    Ok(NetworkFit {
        scale: Measured {
            value: s,
            sigma: s * sigma_x,
        },
        photon_flux: Measured {
            value: flux,
            sigma: flux * sigma_x,
        },
        rss,
        points: n,
        iterations,
        fitted: c,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_lookup_and_interpolation() {
        let (p, note) = ferrioxalate_yield(YieldTable::LeeSeliger1964, Strength::Dilute, 365e-9).unwrap();
        assert_eq!(p.value, 1.26);
        assert!(note.contains("Lee & Seliger"));
        let (p, note) = ferrioxalate_yield(YieldTable::HatchardParker1956, Strength::Dilute, 350e-9).unwrap();
        // between 334 nm (1.23) and 361 nm (1.21)
        assert!((p.value - (1.23 - 0.02 * 16.0 / 27.0)).abs() < 1e-12);
        assert!(note.contains("interpolated"));
        assert!(ferrioxalate_yield(YieldTable::LeeSeliger1964, Strength::Dilute, 405e-9).is_err());
        assert!(ferrioxalate_yield(YieldTable::HatchardParker1956, Strength::Dilute, 500e-9).is_err());
    }
}
