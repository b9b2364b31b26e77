//! The parameter layer: every settable number of a built [`Network`] as a typed [`Key`], read
//! with [`get`] (value in the internal unit, its quantity and the range it may take) and written
//! with [`set`], which checks the value and recomputes only what depends on it (rate constants
//! at the temperature, a light's photon bins, the starting energy and yields of hot ground
//! states). Fits, comparisons, uncertainty sampling, sweeps and sensitivities all move numbers
//! through this layer; none of them formats or parses text per evaluation.
//!
//! The user's spelling (`thermal.NAME.barrier`, the `--set` syntax) is parsed once into a
//! [`Key`] with [`Key::parse`]; [`keys`] lists every key a network has.

mod key;
mod refresh;
mod transform;

pub use key::{ConditionField, Key, LightField, RateAt, RateField, parses};
pub use transform::Transform;

use super::{Branching, Network, PhotoOutcome};
use crate::light::{Intensity, LightKind, Spectrum};
use crate::rates::{RateLaw, eyring_barrier};
use crate::units::{self, Quantity};

/// The values a parameter may take, for bounded transformations in fitting and sampling.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Range {
    /// In [0, 1]: quantum yields, efficiencies, fractions.
    Fraction,
    /// Above zero: rate constants, concentrations, powers, lengths, temperatures.
    Positive,
    /// Any real number: energies and entropies of activation.
    Real,
}

/// A parameter of a built network: its address, its spelling and its current value.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    /// The typed address.
    pub address: Key,
    /// The key as the user writes it, e.g. `thermal.NAME.barrier`.
    pub key: String,
    /// Current value in the internal unit (SI; mol/L for concentrations).
    pub value: f64,
    /// Unit of `value` as written in a `--set` value ("" for plain numbers), e.g. "J/mol":
    /// `units::internal_spelling` of `quantity`.
    pub unit: &'static str,
    /// What the value is (None for a plain number: yields, fractions, scales); shown with
    /// `units::display::quantity`.
    pub quantity: Option<Quantity>,
    /// Values it may take.
    pub range: Range,
}

impl Parameter {
    /// The `--set` value text for `value` in the internal unit, exact on reading back (for
    /// files written at the edges, never for evaluations).
    pub fn text(&self, value: f64) -> String {
        if self.unit.is_empty() {
            format!("{value:e}")
        } else {
            format!("{value:e} {}", self.unit)
        }
    }

    /// Read `text` (a quantity in any accepted unit of this parameter, or a plain number or
    /// percentage for a dimensionless one) into the internal unit.
    pub fn parse_value(&self, text: &str) -> Result<f64, String> {
        match self.quantity {
            Some(q) => units::parse(text, q).map_err(|e| e.to_string()),
            None => units::fraction(text),
        }
    }
}

/// The rate law at `at` with its molecularity and current rate constant.
fn law_at(net: &Network, at: RateAt) -> (&RateLaw, u32, f64) {
    match at {
        RateAt::Thermal(i) => {
            let s = &net.thermal[i];
            (&s.rate, s.order, s.k)
        }
        RateAt::Channel { transient, channel } => match &net.transients[transient].channels[channel].branching {
            Branching::Rate { law, k } => (law, 1, *k),
            Branching::Quenching { law, k2, .. } => (law, 2, *k2),
            other => unreachable!("a rate key addresses a rate channel, not {other:?}"),
        },
    }
}

/// The current value of the parameter at `key`, with its unit and range.
///
/// A table-valued quantum yield or background reports the mean of its values (setting it
/// replaces the table by one number). `barrier` on a rate given another way reports the Eyring
/// ΔG‡ giving the same rate constant; `k` on any rate reports the rate constant at the network
/// temperature.
pub fn get(net: &Network, key: Key) -> Parameter {
    let (value, quantity, range) = read(net, key);
    Parameter {
        address: key,
        key: key.spell(net),
        value,
        unit: quantity.map_or("", units::internal_spelling),
        quantity,
        range,
    }
}

fn read(net: &Network, key: Key) -> (f64, Option<Quantity>, Range) {
    let c = &net.conditions;
    match key {
        Key::Condition(f) => match f {
            ConditionField::Temperature => (c.temperature, Some(Quantity::Temperature), Range::Positive),
            ConditionField::Volume => (c.volume, Some(Quantity::Volume), Range::Positive),
            ConditionField::PathLength => (c.path_length, Some(Quantity::Length), Range::Positive),
            ConditionField::IrradiatedArea => (
                c.irradiated_area.unwrap_or(f64::NAN),
                Some(Quantity::Area),
                Range::Positive,
            ),
            ConditionField::Background => (c.background.mean(), None, Range::Positive),
        },
        Key::Initial(i) => (net.species[i].initial, Some(Quantity::Concentration), Range::Positive),
        Key::Light { light, field } => {
            let l = &net.lights[light];
            match (field, &l.kind) {
                (LightField::Power, _) => {
                    let v = match l.intensity {
                        Some(Intensity::Power(w)) => w,
                        _ => l.emitted_power,
                    };
                    (v, Some(Quantity::Power), Range::Positive)
                }
                (LightField::PhotonFlux, _) => {
                    let v = match l.intensity {
                        Some(Intensity::PhotonFlux(q)) => q,
                        _ => l.emitted_photon_flux,
                    };
                    (v, Some(Quantity::PhotonFlux), Range::Positive)
                }
                (LightField::Wavelength, LightKind::Line { wavelength }) => {
                    (*wavelength, Some(Quantity::Length), Range::Positive)
                }
                (LightField::Centre, LightKind::Band { centre, .. }) => {
                    (*centre, Some(Quantity::Length), Range::Positive)
                }
                (LightField::Fwhm, LightKind::Band { fwhm, .. }) => (*fwhm, Some(Quantity::Length), Range::Positive),
                (LightField::Scale, LightKind::Sun { scale, .. }) => (*scale, None, Range::Positive),
                _ => unreachable!("a parsed light key fits its light"),
            }
        }
        Key::QuantumYield(i) | Key::Efficiency(i) => (net.photo[i].quantum_yield.mean(), None, Range::Fraction),
        Key::Fraction { transient, channel } => match net.transients[transient].channels[channel].branching {
            Branching::Fraction(x) => (x, None, Range::Fraction),
            _ => unreachable!("a fraction key addresses a fraction channel"),
        },
        Key::Rate { at, field } => {
            let (law, order, k) = law_at(net, at);
            rate_field(law, field, k, order, c.temperature)
        }
    }
}

/// The value of `field` of `law` (k its value at `temperature`).
fn rate_field(law: &RateLaw, field: RateField, k: f64, order: u32, temperature: f64) -> (f64, Option<Quantity>, Range) {
    let energy = (Some(Quantity::MolarEnergy), Range::Real);
    let with = |v: f64, (q, r): (Option<Quantity>, Range)| (v, q, r);
    match (field, law) {
        (RateField::K, _) => (k, Some(Quantity::RateConstant(order)), Range::Positive),
        (RateField::Barrier, RateLaw::EyringFree { barrier, .. }) => with(*barrier, energy),
        // From frequencies the barrier is E₀, the zero-point-corrected threshold.
        (RateField::Barrier, RateLaw::Frequencies { barrier, .. }) => with(*barrier, energy),
        (RateField::Barrier, law) => {
            // The Eyring ΔG‡ that gives the same k (with the law's transmission, else 1).
            let kappa = match law {
                RateLaw::EyringEnthalpy { transmission, .. } => *transmission,
                _ => 1.0,
            };
            with(eyring_barrier(k, temperature, order, kappa), energy)
        }
        (RateField::Prefactor, RateLaw::Arrhenius { prefactor, .. }) => {
            (*prefactor, Some(Quantity::RateConstant(order)), Range::Positive)
        }
        (RateField::Activation, RateLaw::Arrhenius { activation, .. }) => with(*activation, energy),
        (RateField::Enthalpy, RateLaw::EyringEnthalpy { enthalpy, .. }) => with(*enthalpy, energy),
        (RateField::Entropy, RateLaw::EyringEnthalpy { entropy, .. }) => {
            (*entropy, Some(Quantity::MolarEntropy), Range::Real)
        }
        (
            RateField::Transmission,
            RateLaw::EyringFree { transmission, .. }
            | RateLaw::EyringEnthalpy { transmission, .. }
            | RateLaw::Frequencies { transmission, .. },
        ) => (*transmission, None, Range::Fraction),
        _ => unreachable!("a parsed rate key fits its law"),
    }
}

/// Parse `key` against `net` and read it: the current value, unit and range, or a message
/// saying what is wrong with the key.
pub fn parameter(net: &Network, key: &str) -> Result<Parameter, String> {
    Key::parse(net, key).map(|k| get(net, k))
}

/// Every key of `net` that can be read and set, in file order: what a fit may free.
pub fn keys(net: &Network) -> Vec<String> {
    addresses(net).iter().map(|k| k.spell(net)).collect()
}

/// Every typed key of `net`, in file order.
pub fn addresses(net: &Network) -> Vec<Key> {
    use ConditionField as C;
    let mut keys = vec![
        Key::Condition(C::Temperature),
        Key::Condition(C::Volume),
        Key::Condition(C::PathLength),
    ];
    keys.extend((0..net.species.len()).map(Key::Initial));
    for (light, l) in net.lights.iter().enumerate() {
        let fields: &[LightField] = match l.kind {
            LightKind::Line { .. } => &[LightField::Power, LightField::PhotonFlux, LightField::Wavelength],
            LightKind::Band { .. } => &[
                LightField::Power,
                LightField::PhotonFlux,
                LightField::Centre,
                LightField::Fwhm,
            ],
            LightKind::Lamp { .. } => &[LightField::Power, LightField::PhotonFlux],
            LightKind::Sun { .. } => &[LightField::Scale],
        };
        keys.extend(fields.iter().map(|&field| Key::Light { light, field }));
    }
    for (i, s) in net.photo.iter().enumerate() {
        keys.push(match s.outcome {
            PhotoOutcome::Products(_) => Key::QuantumYield(i),
            PhotoOutcome::Transient(_) => Key::Efficiency(i),
        });
    }
    let rate_keys =
        |at: RateAt, law: &RateLaw| RateField::of_law(law).iter().map(move |&field| Key::Rate { at, field });
    for (i, s) in net.thermal.iter().enumerate() {
        keys.extend(rate_keys(RateAt::Thermal(i), &s.rate));
    }
    for (transient, tr) in net.transients.iter().enumerate() {
        for (channel, c) in tr.channels.iter().enumerate() {
            let at = RateAt::Channel { transient, channel };
            match &c.branching {
                Branching::Fraction(_) => keys.push(Key::Fraction { transient, channel }),
                // A hot channel's yield is computed from its barrier and the cooling model.
                Branching::Rest | Branching::Hot { .. } => {}
                Branching::Rate { law, .. } | Branching::Quenching { law, .. } => keys.extend(rate_keys(at, law)),
            }
        }
    }
    keys
}

/// Set the parameter at `key` to `value` (internal unit) and recompute what depends on it.
/// A value the parameter cannot take (out of its range, not finite, or one that makes a derived
/// number infinite or breaks a sum rule) is refused with a message naming the key, and leaves
/// `net` unchanged.
pub fn set(net: &mut Network, key: Key, value: f64) -> Result<(), String> {
    let mut trial = net.clone();
    refresh::write(&mut trial, key, value).map_err(|m| refused(net, key, value, &m))?;
    *net = trial;
    Ok(())
}

/// Set the parameter at `key` to `value` (internal unit); a refusal says why without naming
/// the key or the value (`is negative`), for callers that name both their own way (a
/// `--set` value as the user wrote it).
pub fn set_quietly(net: &mut Network, key: Key, value: f64) -> Result<(), String> {
    let mut trial = net.clone();
    refresh::write(&mut trial, key, value)?;
    *net = trial;
    Ok(())
}

/// "KEY: VALUE UNIT reason".
fn refused(net: &Network, key: Key, value: f64, reason: &str) -> String {
    let unit = get(net, key).unit;
    let v = crate::units::sig(value, 6);
    if unit.is_empty() {
        format!("{}: {v} {reason}", key.spell(net))
    } else {
        format!("{}: {v} {unit} {reason}", key.spell(net))
    }
}

/// `values` in an order in which they can be written one by one: shares (fractions, quantum
/// yields, efficiencies) that fall before those that rise, so a sum rule that holds at the end
/// (the channels of one transient, the steps of one absorber) holds at every write.
pub fn share_order(net: &Network, values: &[(Key, f64)]) -> Vec<(Key, f64)> {
    let falls = |&(k, v): &(Key, f64)| {
        matches!(k, Key::Fraction { .. } | Key::QuantumYield(_) | Key::Efficiency(_)) && v < get(net, k).value
    };
    let mut ordered: Vec<(Key, f64)> = values.iter().copied().filter(falls).collect();
    ordered.extend(values.iter().copied().filter(|x| !falls(x)));
    ordered
}

/// The network on either side of the parameter at `key`, for a derivative: at θ + h and θ − h
/// when both are allowed, else at θ + h and θ (or θ and θ − h) where the value sits at an end
/// of its range. Returns (network above, network below, their difference in θ).
pub fn around(net: &Network, key: Key, h: f64) -> Result<(Network, Network, f64), String> {
    let theta = get(net, key).value;
    let h = h.abs();
    if !(h > 0.0 && h.is_finite()) {
        return Err(format!("{}: a step of {h} cannot give a derivative", key.spell(net)));
    }
    let side = |v: f64| {
        let mut n = net.clone();
        set(&mut n, key, v).map(|()| n)
    };
    match (side(theta + h), side(theta - h)) {
        (Ok(p), Ok(m)) => Ok((p, m, 2.0 * h)),
        (Ok(p), Err(_)) => Ok((p, net.clone(), h)),
        (Err(_), Ok(m)) => Ok((net.clone(), m, h)),
        (Err(e), Err(_)) => Err(e),
    }
}

/// Set several parameters in order (each as [`set`]).
pub fn set_all(net: &mut Network, values: &[(Key, f64)]) -> Result<(), String> {
    let mut trial = net.clone();
    for &(key, value) in values {
        refresh::write(&mut trial, key, value).map_err(|m| refused(net, key, value, &m))?;
    }
    *net = trial;
    Ok(())
}

/// Replace a table by one number everywhere.
fn constant(value: f64) -> Spectrum {
    Spectrum::Constant { value, at: None }
}

#[cfg(test)]
mod tests;
