//! The reference the exact sensitivities are checked against: central finite differences
//! through the chain construction. Each parameter p is moved to p(1 ± h) with h = 1e-4, the
//! chain rebuilt and analysed (without the distribution): one chain and one factorisation per
//! parameter and side, so it is slow on large networks and kept for the tests only.
//! At an upper bound (a quantum yield whose absorber's yields already sum to 1, a fraction of 1)
//! the difference is one-sided, from p(1 − h) to p.
//! For rate constants given by a barrier E (Eyring ΔG‡ or ΔH‡, Arrhenius Ea), k ∝ exp(−E/RT)
//! at fixed temperature, so ∂/∂E = −(k/RT) ∂/∂k exactly; barriers are reported per kcal/mol.

use super::Sensitivity;
use crate::chain::build::{self, Parameter, Settings, Values};
use crate::chain::{Analysis, Options, analyse};
use crate::error::Result;
use crate::model::Model;
use crate::network::Network;
use crate::units::constants::{CALORIE, GAS_CONSTANT};

/// Relative step of the finite differences.
pub const STEP: f64 = 1e-4;

/// Sensitivities for every parameter of [`build::parameters`] by finite differences, for a
/// molecule started from `start` (a distribution over the chain's states, which are the same
/// for every parameter): the reference for [`super::sensitivities`].
pub fn finite_differences(
    model: &Model,
    net: &Network,
    settings: &Settings,
    start: &[f64],
) -> Result<Vec<Sensitivity>> {
    let base = Values::of(model, net);
    let opts = Options {
        distribution: false,
        ..Options::default()
    };
    let run = |v: &Values| -> Result<Analysis> {
        let chain = build::build(model, net, settings, v)?;
        let mut s = start.to_vec();
        s.resize(chain.states.len(), 0.0);
        analyse(&chain, &s, &opts)
    };
    let rt_per_kcal = GAS_CONSTANT * model.temperature / (1000.0 * CALORIE);
    let mut out = Vec::new();
    for p in build::parameters(model, net) {
        let key = p.key.map(|k| k.spell(net));
        let Parameter {
            label,
            key: _,
            slot,
            value,
            unit,
            barrier,
            upper,
            shown_per_unit,
        } = p;
        if !(value > 0.0 && value.is_finite()) {
            continue;
        }
        let (mut up, mut down) = (base.clone(), base.clone());
        // Central where p(1 + h) is allowed, else one-sided from below: span/STEP = 2 or 1.
        let central = value * (1.0 + STEP) <= upper;
        let span = if central { 2.0 } else { 1.0 };
        if central {
            up.set(slot, value * (1.0 + STEP));
        }
        down.set(slot, value * (1.0 - STEP));
        let (a, b) = (run(&up)?, run(&down)?);
        let r = a.yields.len().min(b.yields.len());
        let elasticity_photons: Vec<Option<f64>> = (0..r)
            .map(|k| match (a.photons_mean[k], b.photons_mean[k]) {
                (Some(x), Some(y)) if x > 0.0 && y > 0.0 => Some((x.ln() - y.ln()) / (span * STEP)),
                _ => None,
            })
            .collect();
        let yield_derivative: Vec<f64> = (0..r)
            .map(|k| (a.yields[k] - b.yields[k]) / (span * STEP * value))
            .collect();
        let (photons_per_barrier, yield_per_barrier) = if barrier {
            // ∂/∂E = −(k/RT) ∂/∂k, E in kcal/mol.
            (
                Some(elasticity_photons.iter().map(|e| e.map(|e| -e / rt_per_kcal)).collect()),
                Some(yield_derivative.iter().map(|d| -d * value / rt_per_kcal).collect()),
            )
        } else {
            (None, None)
        };
        // show a yield factor as the quantum yield itself: d yield / dΦ = (d yield / d factor) / Φ
        let yield_derivative = yield_derivative.into_iter().map(|d| d / shown_per_unit).collect();
        out.push(Sensitivity {
            parameter: label,
            key,
            value: value * shown_per_unit,
            unit: unit.to_string(),
            elasticity_photons,
            yield_derivative,
            photons_per_barrier,
            yield_per_barrier,
        });
    }
    Ok(out)
}
