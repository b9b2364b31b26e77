//! `plan --sweep`: one value swept over a range, a plan at every point.
//!
//! [`parse`] reads the spec (`KEY=LO..HI:N`); [`run`] writes each point's value into a copy of
//! the built network as a typed parameter (`network::params::set`; for power and photon flux it
//! scales the compiled model's light instead), and plans every point in parallel (rayon). A sweep is by definition the single plan repeated at each value
//! (`common practice`): a point gives exactly what `plan --set KEY=VALUE` gives.

use super::{PlanOptions, SweepPoint};
use crate::error::{Error, Result};
use crate::light::LightKind;
use crate::model::Model;
use crate::network::Network;
use crate::network::params::{self, ConditionField, Key, LightField};
use crate::units::{self, Quantity, display};

/// What a sweep varies.
#[derive(Debug, Clone, PartialEq)]
pub enum Swept {
    /// Total radiant power of all sources (their ratios kept), W.
    Power,
    /// Total photon flux of all sources (their ratios kept), einstein/s.
    PhotonFlux,
    /// Wavelength (line) or centre (band) of the one tunable source, m.
    Wavelength,
    /// Reactor temperature, K.
    Temperature,
    /// Initial concentration of the named species, mol/L.
    Concentration(String),
}

/// What a sweep varies, as drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepAxis {
    /// Label with unit, e.g. "power (W)".
    pub label: String,
    /// The quantity without its unit, e.g. "total power emitted", for text where each value
    /// carries its own unit.
    pub name: String,
    /// Unit of the plotted value (the internal value times `unit_factor`), e.g. "W", "nm".
    pub unit: &'static str,
    /// The display ladder each value is shown on in text (`units::display`), or None for a
    /// unit kept fixed (nm, K).
    pub ladder: Option<&'static crate::units::display::Ladder>,
    /// Factor from the internal value to the plotted unit.
    pub unit_factor: f64,
    /// Log axis.
    pub log: bool,
}

/// A parsed `--sweep`: what is swept, how it is drawn and the values (SI, or mol/L).
#[derive(Debug, Clone, PartialEq)]
pub struct SweepSpec {
    /// The swept quantity.
    pub swept: Swept,
    /// The axis of the outputs.
    pub axis: SweepAxis,
    /// The values, in order (log-spaced for power, photon flux and concentration; evenly
    /// spaced for wavelength and temperature).
    pub values: Vec<f64>,
}

/// Most points a sweep may have.
pub const MAX_POINTS: usize = 500;

/// Read `KEY=LO..HI:N` (KEY power, photon_flux, wavelength, temperature or concentration.NAME,
/// with a unit on each end) against `net` (the species a concentration sweep names must exist).
///
/// Every error is an [`Error::Usage`] naming `--sweep`, the text and what is accepted.
pub fn parse(text: &str, net: &Network) -> Result<SweepSpec> {
    let usage = |m: String| {
        Error::Usage(format!(
            "--sweep \"{text}\": {m}; write KEY=LO..HI:N with KEY power, photon_flux, wavelength, temperature or \
             concentration.NAME, e.g. power=10mW..1W:20"
        ))
    };
    let (key, range) = text.split_once('=').ok_or_else(|| usage("no =".into()))?;
    let key = key.trim();
    let (range, n) = range
        .rsplit_once(':')
        .ok_or_else(|| usage("no :N (number of points)".into()))?;
    let n: usize = n.trim().parse().map_err(|_| usage(format!("\"{n}\" is not a count")))?;
    if !(2..=MAX_POINTS).contains(&n) {
        return Err(usage(format!("between 2 and {MAX_POINTS} points")));
    }
    let (lo, hi) = range
        .split_once("..")
        .ok_or_else(|| usage("no .. between the ends".into()))?;
    use crate::units::display::{CONCENTRATION, PHOTON_FLUX, POWER};
    let (swept, q, log, name, unit, ladder, factor): (_, _, _, String, _, Option<&'static display::Ladder>, _) =
        match key {
            "power" => (
                Swept::Power,
                Quantity::Power,
                true,
                "total power emitted".into(),
                "W",
                Some(&POWER),
                1.0,
            ),
            "photon_flux" => (
                Swept::PhotonFlux,
                Quantity::PhotonFlux,
                true,
                "total photon flux emitted".into(),
                "einstein/s",
                Some(&PHOTON_FLUX),
                1.0,
            ),
            "wavelength" => (
                Swept::Wavelength,
                Quantity::Wavelength,
                false,
                "wavelength".into(),
                "nm",
                None,
                1e9,
            ),
            "temperature" => (
                Swept::Temperature,
                Quantity::Temperature,
                false,
                "temperature".into(),
                "K",
                None,
                1.0,
            ),
            k if k.starts_with("concentration.") => {
                let name = &k["concentration.".len()..];
                if net.species_index(name).is_none() {
                    return Err(usage(format!("unknown species \"{name}\"")));
                }
                (
                    Swept::Concentration(name.to_string()),
                    Quantity::Concentration,
                    true,
                    format!("initial {name}"),
                    "mol/L",
                    Some(&CONCENTRATION),
                    1.0,
                )
            }
            other => return Err(usage(format!("unknown key \"{other}\""))),
        };
    let label = format!("{name} ({unit})");
    let p = |s: &str| units::parse(s.trim(), q).map_err(|e| usage(format!("{e}; expected {}", q.accepted())));
    let (a, b) = (p(lo)?, p(hi)?);
    if !(a > 0.0 && b > 0.0) || a == b {
        return Err(usage("the ends must be positive and different".into()));
    }
    let values = (0..n)
        .map(|i| {
            let f = i as f64 / (n - 1) as f64;
            if log { a * (b / a).powf(f) } else { a + (b - a) * f }
        })
        .collect();
    Ok(SweepSpec {
        swept,
        axis: SweepAxis {
            label,
            name,
            unit,
            ladder,
            unit_factor: factor,
            log,
        },
        values,
    })
}

/// The network a sweep starts from (built with the command's `--set` values) and its model
/// (already adjusted, as `adjust` does each point's).
pub struct Base<'a> {
    /// The network as built.
    pub network: &'a Network,
    /// Its model, after `adjust`.
    pub model: &'a Model,
}

/// A finished sweep: the axis and one point per value, in the order of the values.
#[derive(Debug, Clone)]
pub struct Sweep {
    /// The axis of the outputs.
    pub axis: SweepAxis,
    /// The points, in the order of [`SweepSpec::values`].
    pub points: Vec<SweepPoint>,
}

/// How one point's model is made.
enum Point {
    /// Scale every source of the base model by this factor.
    Scale(f64),
    /// Write one typed value into a copy of the network.
    Set(Key, f64),
}

/// Why a power or photon-flux sweep has nothing to scale.
fn no_light(key: &str, base: &Base) -> String {
    if base.network.lights.is_empty() {
        format!("--sweep {key}: the network has no light")
    } else {
        format!(
            "--sweep {key}: every source of the file is at zero, and the sweep scales the file's light; \
             give the sources their relative powers first (--set light.NAME.power=...)"
        )
    }
}

/// The `--set` key and value text of a point, or the light factor for power and flux sweeps.
fn point(spec: &SweepSpec, base: &Base, v: f64) -> Result<Point> {
    Ok(match &spec.swept {
        // the swept value is the emitted total, as `power` and `photon_flux` in the file are
        // (a from/to window then cuts it in the same proportion)
        Swept::Power => {
            let p: f64 = base.network.lights.iter().map(|l| l.emitted_power).sum();
            if p <= 0.0 {
                return Err(Error::Usage(no_light("power", base)));
            }
            Point::Scale(v / p)
        }
        Swept::PhotonFlux => {
            let q: f64 = base.network.lights.iter().map(|l| l.emitted_photon_flux).sum();
            if q <= 0.0 {
                return Err(Error::Usage(no_light("photon_flux", base)));
            }
            Point::Scale(v / q)
        }
        Swept::Wavelength => {
            let tunable: Vec<_> = base
                .network
                .lights
                .iter()
                .filter(|l| matches!(l.kind, LightKind::Line { .. } | LightKind::Band { .. }))
                .collect();
            let [l] = tunable.as_slice() else {
                return Err(Error::Usage(format!(
                    "--sweep wavelength needs exactly one line or band source; the network has {}",
                    tunable.len()
                )));
            };
            let field = if matches!(l.kind, LightKind::Line { .. }) {
                LightField::Wavelength
            } else {
                LightField::Centre
            };
            let light = base.network.lights.iter().position(|x| x.name == l.name).unwrap_or(0);
            Point::Set(Key::Light { light, field }, v)
        }
        Swept::Temperature => Point::Set(Key::Condition(ConditionField::Temperature), v),
        Swept::Concentration(name) => match base.network.species_index(name) {
            Some(i) => Point::Set(Key::Initial(i), v),
            None => return Err(Error::Usage(format!("--sweep: no species \"{name}\""))),
        },
    })
}

/// Plan `target` (as written for `plan --target`; re-read on each point's model, since a
/// concentration sweep moves a yield's level) at every value of `spec`, points in parallel.
/// A yield whose reference the target leaves to the limiting reagent keeps the reference of
/// `base` at every point: a concentration sweep can make another species limiting, and the
/// yields and selectivities of the points would then count against different species.
///
/// `adjust` is applied to each rebuilt point's model as it was to `base.model` (sunlight
/// scale, flow tube). A point whose network or target cannot be built is an error of the whole
/// sweep (the first in the order of the values); a plan that fails is kept in its point.
pub fn run(
    base: &Base,
    spec: &SweepSpec,
    target: &str,
    adjust: &(dyn Fn(Model) -> Model + Sync),
    opts: &PlanOptions,
) -> Result<Sweep> {
    use rayon::prelude::*;
    let on_base = super::target::parse(target, base.model)?;
    let target = match &on_base.basis {
        super::target::Basis::YieldOf {
            reference,
            chosen: true,
            ..
        } => format!("{} of {reference}", target.trim()),
        _ => target.to_string(),
    };
    let target = target.as_str();
    let points = spec
        .values
        .iter()
        .map(|&v| Ok((v, point(spec, base, v)?)))
        .collect::<Result<Vec<_>>>()?;
    let results: Vec<Result<SweepPoint>> = points
        .into_par_iter()
        .map(|(value, p)| {
            let model = match p {
                Point::Scale(f) => base.model.with_light_scale(f),
                Point::Set(key, v) => {
                    let mut net = base.network.clone();
                    params::set(&mut net, key, v).map_err(|m| Error::Usage(format!("--sweep {m}")))?;
                    adjust(Model::compile(&net))
                }
            };
            let t = super::target::parse(target, &model)?;
            Ok(SweepPoint {
                value,
                plan: super::time_to_target(&model, &t, opts).map_err(|e| e.to_string()),
            })
        })
        .collect();
    Ok(Sweep {
        axis: spec.axis.clone(),
        points: results.into_iter().collect::<Result<Vec<_>>>()?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::Path;

    fn net() -> Network {
        let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
            .expect("bundled network");
        let loaded = crate::file::parse_text(Path::new("photoswitch.toml"), text).expect("parses");
        crate::network::build(&loaded, &crate::network::Overrides::none()).expect("valid")
    }

    fn err(text: &str) -> String {
        parse(text, &net()).expect_err(text).to_string()
    }

    #[test]
    fn spec_values_and_axes() {
        let s = parse("power=10mW..1W:3", &net()).unwrap();
        assert_eq!(s.swept, Swept::Power);
        assert!(s.axis.log);
        for (v, want) in s.values.iter().zip([0.01, 0.1, 1.0]) {
            assert!((v - want).abs() < 1e-12 * want, "{v} vs {want}");
        }
        let s = parse("temperature=10°C..60°C:6", &net()).unwrap();
        assert!(!s.axis.log);
        assert!((s.values[1] - 293.15).abs() < 1e-9);
        let s = parse("wavelength=340nm..420nm:9", &net()).unwrap();
        assert_eq!(s.axis.unit_factor, 1e9);
        assert!((s.values[1] - 350e-9).abs() < 1e-18);
        let s = parse("concentration.E-azo=1mM..100mM:5", &net()).unwrap();
        assert_eq!(s.swept, Swept::Concentration("E-azo".into()));
        assert!((s.values[2] - 0.01).abs() < 1e-15);
    }

    #[test]
    fn spec_errors_name_the_option_and_what_is_accepted() {
        let e = err("pressure=1bar..2bar:3");
        assert!(e.contains("--sweep") && e.contains("unknown key \"pressure\""), "{e}");
        assert!(e.contains("power, photon_flux, wavelength, temperature"), "{e}");
        let e = err("power=10mW..1W:1");
        assert!(e.contains("between 2 and 500 points"), "{e}");
        let e = err("power=10mW..1W");
        assert!(e.contains("no :N"), "{e}");
        let e = err("power=10mW-1W:4");
        assert!(e.contains("no .. between the ends"), "{e}");
        let e = err("power=10..1W:4");
        assert!(e.contains("expected"), "{e}");
        let e = err("power=1W..1W:4");
        assert!(e.contains("positive and different"), "{e}");
        let e = err("concentration.nothing=1mM..2mM:3");
        assert!(e.contains("unknown species \"nothing\""), "{e}");
        let e = err("power=10mW..1W:many");
        assert!(e.contains("\"many\" is not a count"), "{e}");
    }
}
