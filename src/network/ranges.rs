//! Every number the engines will use, checked when the network is built: a value that makes a
//! derived number infinite or NaN (a rate constant, a photon flux, an absorbance) is an error
//! naming the field that caused it, at `check` time, instead of a solver failure or an `inf` in
//! a table later; finite values no solution photochemistry meets get a warning.
//!
//! The plausibility limits are common practice, stated where they are used: a warning, never a
//! refusal, so an unusual but real experiment (a glass at 77 K, a neat liquid) still runs.

use super::diagnostics::{Places, Sink};
use super::*;
use crate::error::Origin;
use crate::model::floor;
use crate::units::constants::{BOLTZMANN, PLANCK};
use crate::units::display;
use crate::units::sig;

/// Above this temperature, K, no solution or matrix photochemistry is done (solvents boil or
/// decompose long before; common practice).
pub const HOTTEST: f64 = 1000.0;

/// Above this total concentration, mol/L, a solution is denser than any neat liquid (water is
/// 55.5 mol/L; common practice).
pub const DENSEST: f64 = 100.0;

/// Above this photon flux per volume, einstein L⁻¹ s⁻¹, no continuous lamp or laser delivers
/// (a 100 W, 365 nm source fully into 1 mL gives about 0.3; common practice).
pub const BRIGHTEST: f64 = 10.0;

/// Above this molar absorption coefficient, L mol⁻¹ cm⁻¹, no known molecule absorbs (the
/// strongest dyes and porphyrin Soret bands reach a few 1e5; common practice).
pub const MOST_ABSORBING: f64 = 1e6;

/// Above this absorbance over the path, all light is gone within nanometres and the numbers no
/// longer describe a measurable sample (common practice).
pub const DARKEST: f64 = 1e4;

/// Above this first-order rate constant, s⁻¹, a step is faster than a molecular vibration
/// (kT/h is 6.2e12 s⁻¹ at 298 K; the fastest internal conversions take about 10 fs; common practice).
pub const FASTEST_FIRST_ORDER: f64 = 1e15;

/// Above this second-order rate constant, L mol⁻¹ s⁻¹, a step is faster than diffusion allows
/// (about 1e10 in water at 298 K; common practice).
pub const FASTEST_SECOND_ORDER: f64 = 1e11;

/// Check every derived number of `net` (built from the file whose item positions are `at`).
pub(super) fn check(sink: &mut Sink, at: &Places, net: &Network) {
    let c = &net.conditions;
    let t = c.temperature;
    if !(t.is_finite() && (BOLTZMANN * t / PLANCK).is_finite()) {
        sink.error(
            "conditions.temperature",
            &at.temperature,
            format!("{t:e} K makes every rate constant infinite"),
            Some("a temperature in K, °C or °F, e.g. 298.15 K".into()),
        );
    } else if t > HOTTEST {
        sink.warn(
            "conditions.temperature",
            &at.temperature,
            format!(
                "{} K is above any solution photochemistry (over {HOTTEST} K)",
                sig(t, 4)
            ),
            None,
        );
    }
    let total: f64 = net.species.iter().map(|s| s.initial).sum();
    for (i, s) in net.species.iter().enumerate() {
        if !s.initial.is_finite() {
            sink.error(
                &format!("species \"{}\".initial", s.name),
                &at.species[i],
                "is too large to compute with (not finite in mol/L)",
                None,
            );
        }
    }
    if total.is_finite() && total > DENSEST {
        sink.warn(
            "species",
            at.species.first().unwrap_or(&Origin::Unknown),
            format!(
                "the starting concentrations add up to {} mol/L, more than any neat liquid holds (over {DENSEST} mol/L)",
                sig(total, 4)
            ),
            None,
        );
    }
    lights(sink, at, net);
    absorbance(sink, at, net);
    // With an infinite kT/h every rate is infinite: the temperature is the one error to fix.
    if (BOLTZMANN * t / PLANCK).is_finite() {
        rates(sink, at, net);
    }
}

/// Each light's photon flux finite, and per volume not beyond any real source.
fn lights(sink: &mut Sink, at: &Places, net: &Network) {
    let litres = net.conditions.volume_litres();
    for (i, l) in net.lights.iter().enumerate() {
        let origin = at.lights.get(i).unwrap_or(&Origin::Unknown);
        let flux: f64 = l.bins.iter().map(|b| b.flux).sum();
        let per_volume = flux / litres;
        if !(flux.is_finite() && per_volume.is_finite() && l.emitted_power.is_finite()) {
            sink.error(
                &format!("light \"{}\"", l.name),
                origin,
                format!("its photon flux per volume is not finite ({flux:e} einstein/s into {litres:e} L)"),
                Some("check the light's power or photon flux and conditions.volume".into()),
            );
        } else if floor::light_below_floor(flux) {
            sink.warn(
                &format!("light \"{}\"", l.name),
                origin,
                format!(
                    "{} einstein/s into the sample is fewer than one photon in the age of the universe \
                     (the floor is {} einstein/s): taken as no light",
                    sig(flux, 3),
                    sig(floor::LIGHT_FLOOR, 2)
                ),
                Some("check the light's power, photon flux or scale and its unit".into()),
            );
        } else if per_volume > BRIGHTEST {
            sink.warn(
                &format!("light \"{}\"", l.name),
                origin,
                format!(
                    "{} einstein/(L s) into the sample is beyond any continuous lamp or laser (over {BRIGHTEST})",
                    sig(per_volume, 3)
                ),
                Some("check the light's power and conditions.volume".into()),
            );
        }
    }
}

/// Each absorber's ε finite and not beyond any known molecule, and the sample's absorbance at
/// the starting concentrations finite and not beyond measurable (the absorbance later depends on
/// the chemistry; an absorber made from nothing starts at zero).
fn absorbance(sink: &mut Sink, at: &Places, net: &Network) {
    let path = net.conditions.path_length;
    let wavelengths: Vec<f64> = net
        .lights
        .iter()
        .flat_map(|l| l.bins.iter().map(|b| b.wavelength))
        .collect();
    if wavelengths.is_empty() {
        return;
    }
    let mut start = vec![0.0f64; wavelengths.len()];
    for (i, s) in net.species.iter().enumerate() {
        let Some(eps) = &s.epsilon else { continue };
        let field = format!("species \"{}\".epsilon", s.name);
        let origin = at.epsilon.get(i).unwrap_or(&Origin::Unknown);
        let mut most = 0.0f64;
        for (a, &w) in start.iter_mut().zip(&wavelengths) {
            let e = eps.at(w);
            most = most.max(e);
            *a += e * s.initial * path;
        }
        // ε inside is L mol⁻¹ m⁻¹; messages use the L/(mol cm) users write.
        let per_cm = most / 100.0;
        if !per_cm.is_finite() {
            sink.error(&field, origin, "is not finite under the light", None);
        } else if per_cm > MOST_ABSORBING {
            sink.warn(
                &field,
                origin,
                format!(
                    "reaches {} L/(mol cm) under the light, more than any known molecule absorbs (over {MOST_ABSORBING:e})",
                    sig(per_cm, 3)
                ),
                Some("check the value and its unit (L/(mol cm), or L/(mol m) written out)".into()),
            );
        }
    }
    let a = start.iter().copied().fold(0.0f64, f64::max);
    let first = at.species.first().unwrap_or(&Origin::Unknown);
    if !a.is_finite() {
        sink.error(
            "species",
            first,
            "the starting concentrations give an absorbance over the path that is not finite",
            Some("check the concentrations, ε and conditions.path_length".into()),
        );
    } else if a > DARKEST {
        sink.warn(
            "species",
            first,
            format!(
                "the starting concentrations absorb {} over the path (over {DARKEST}): the light is gone within nanometres",
                sig(a, 3)
            ),
            Some("check the concentrations, ε's unit and conditions.path_length".into()),
        );
    }
}

/// Every thermal step's and channel's rate constant finite and not negative, and not faster
/// than a vibration or diffusion allows.
fn rates(sink: &mut Sink, at: &Places, net: &Network) {
    let t = net.conditions.temperature;
    let cause = |law: &crate::rates::RateLaw| match law {
        crate::rates::RateLaw::Constant(_) => "the rate constant".to_string(),
        _ => format!("the rate at {} K", sig(t, 5)),
    };
    for (i, s) in net.thermal.iter().enumerate() {
        let origin = at.thermal.get(i).unwrap_or(&Origin::Unknown);
        let field = format!("thermal \"{}\"", s.name);
        if !(s.k.is_finite() && s.k >= 0.0) {
            sink.error(
                &field,
                origin,
                format!("{} gives k = {:e}, not a finite rate constant", cause(&s.rate), s.k),
                Some("check the barrier, prefactor or k and its unit".into()),
            );
            continue;
        }
        if floor::rate_below_floor(s.k, s.order) {
            sink.warn(
                &field,
                origin,
                format!(
                    "{} gives k = {} {}, below the floor of {:e} s⁻¹ at {DENSEST} mol/L: taken as zero \
                     (it would convert less than 1e-12 of its reactant in the age of the universe)",
                    cause(&s.rate),
                    sig(s.k, 3),
                    order_unit(s.order),
                    floor::RATE_FLOOR
                ),
                Some("check the barrier, prefactor or k and its unit".into()),
            );
            continue;
        }
        let (limit, unit) = match s.order {
            1 => (FASTEST_FIRST_ORDER, display::rate_constant(1)),
            2 => (FASTEST_SECOND_ORDER, display::rate_constant(2)),
            _ => continue,
        };
        if s.k > limit {
            let why = if s.order == 1 {
                "faster than a molecular vibration"
            } else {
                "faster than diffusion allows"
            };
            sink.warn(
                &field,
                origin,
                format!("k = {} {unit} is {why} (over {limit:e} {unit})", sig(s.k, 3)),
                None,
            );
        }
    }
    for (i, tr) in net.transients.iter().enumerate() {
        let origin = at.transients.get(i).unwrap_or(&Origin::Unknown);
        for (j, ch) in tr.channels.iter().enumerate() {
            let field = format!("transient \"{}\".channels[{j}]", tr.name);
            let (k, law) = match &ch.branching {
                Branching::Rate { k, law } => (*k, law),
                Branching::Quenching { k2, law, .. } => (*k2, law),
                Branching::Fraction(f) | Branching::Hot { fraction: f, .. } => {
                    if !f.is_finite() {
                        sink.error(&field, origin, "its fraction is not a finite number", None);
                    }
                    continue;
                }
                Branching::Rest => continue,
            };
            if !(k.is_finite() && k >= 0.0) {
                sink.error(
                    &field,
                    origin,
                    format!("{} gives k = {k:e}, not a finite rate constant", cause(law)),
                    Some("check the barrier, prefactor or k and its unit".into()),
                );
            }
        }
    }
}

/// The unit of a rate constant of this order, as messages write it (the display rule).
fn order_unit(order: u32) -> String {
    display::rate_constant(order).to_string()
}
