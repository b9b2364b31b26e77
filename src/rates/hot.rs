//! A vibrationally hot molecule that cools while it may react.
//!
//! The excess energy (J/mol, above the reactant's zero-point level) decays exponentially,
//! E(t) = E_init exp(−t/τ), the usual first approximation for vibrational cooling in solution
//! (common practice). With channels k_i(E), the survival is S(t) = exp(−∫₀ᵗ Σᵢ kᵢ(E(t′)) dt′)
//! and the probability of channel i before cooling is Pᵢ = ∫₀^∞ kᵢ(E(t)) S(t) dt. What is left,
//! 1 − Σ Pᵢ, is the share that cools without reacting (thermal chemistry afterwards is not
//! part of this model).
//!
//! The integral is taken over the energy, not the time: between E_init and the lowest energy at
//! which any channel is open, the energy axis is cut into segments; on each the rates are taken
//! at the segment's middle energy and held constant over the segment's duration
//! τ ln(E_upper / E_lower), for which survival and shares are exact
//! (S → S e^(−K Δt), Pᵢ += S (1 − e^(−K Δt)) kᵢ / K). This stays stable when k spans many
//! decades (a k of 10¹³ s⁻¹ empties S in one segment without overflow). The number of segments
//! doubles until the probabilities change by less than a tolerance.

/// Result of [`hot_yields`].
#[derive(Debug, Clone, PartialEq)]
pub struct HotYields {
    /// Pᵢ for each channel, in the order given.
    pub probabilities: Vec<f64>,
    /// 1 − Σ Pᵢ: cooled without reacting.
    pub cooled: f64,
    /// Segments used in the final pass.
    pub segments: usize,
    /// Largest change of any Pᵢ between the last two passes (an error estimate).
    pub change: f64,
}

/// Probabilities of each channel before the molecule cools.
///
/// * `channels`: kᵢ(E) in s⁻¹ at molar energy E (J/mol); a non-finite or negative value
///   counts as zero.
/// * `initial`: E_init, J/mol (> 0).
/// * `cooling`: τ in s; `None` means no cooling, and the yields are the branching ratios at
///   E_init.
/// * `floor`: the energy below which every channel is closed (the lowest barrier), J/mol;
///   the integration stops there, and never goes below 1e-9 E_init.
/// * `tolerance`: absolute change of the probabilities at which doubling stops (e.g. 1e-7).
pub fn hot_yields(
    channels: &[&dyn Fn(f64) -> f64],
    initial: f64,
    cooling: Option<f64>,
    floor: f64,
    tolerance: f64,
) -> HotYields {
    let rate = |i: usize, e: f64| {
        let k = channels[i](e);
        if k.is_finite() && k > 0.0 { k } else { 0.0 }
    };
    let n = channels.len();
    let Some(tau) = cooling.filter(|t| t.is_finite() && *t > 0.0) else {
        let ks: Vec<f64> = (0..n).map(|i| rate(i, initial)).collect();
        let total: f64 = ks.iter().sum();
        let probabilities: Vec<f64> = ks.iter().map(|k| if total > 0.0 { k / total } else { 0.0 }).collect();
        let cooled = 1.0 - probabilities.iter().sum::<f64>();
        return HotYields {
            probabilities,
            cooled,
            segments: 0,
            change: 0.0,
        };
    };
    // Lowest energy of the integration: the floor, but never zero (τ ln(E/0) is infinite).
    // Time spent below 1e-9 E_init is not integrated: a channel still open there is thermal
    // chemistry of the cooled molecule, not a hot-molecule reaction.
    let bottom = floor.max(initial * 1e-9).min(initial);
    let pass = |segments: usize| -> Vec<f64> {
        let mut p = vec![0.0; n];
        let mut s = 1.0f64;
        let h = (initial - bottom) / segments as f64;
        let mut ks = vec![0.0; n];
        for m in 0..segments {
            let upper = initial - m as f64 * h;
            let lower = upper - h;
            let dt = tau * (upper / lower).ln();
            let mid = 0.5 * (upper + lower);
            let mut total = 0.0;
            for (i, k) in ks.iter_mut().enumerate() {
                *k = rate(i, mid);
                total += *k;
            }
            if total > 0.0 {
                let leave = -(-total * dt).exp_m1();
                for i in 0..n {
                    p[i] += s * leave * ks[i] / total;
                }
                s *= 1.0 - leave;
            }
            if s < 1e-300 {
                break;
            }
        }
        p
    };
    let mut segments = 1000;
    let mut prev = pass(segments);
    let mut change = f64::INFINITY;
    while segments < (1 << 23) {
        segments *= 2;
        let next = pass(segments);
        change = next.iter().zip(&prev).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
        prev = next;
        if change < tolerance {
            break;
        }
    }
    let cooled = (1.0 - prev.iter().sum::<f64>()).max(0.0);
    HotYields {
        probabilities: prev,
        cooled,
        segments,
        change,
    }
}

/// One reaction of a hot molecule for [`rrkm_yields`].
#[derive(Debug, Clone, Copy)]
pub struct HotReaction<'a> {
    /// Transition-state modes.
    pub ts: &'a super::partition::Modes,
    /// Zero-point-corrected barrier E₀ above the hot molecule's zero-point level, J/mol.
    pub barrier: f64,
    /// Reaction-path degeneracy σ.
    pub degeneracy: f64,
}

/// Yields of competing reactions of a hot molecule with modes `reactant`, starting with
/// `energy` J/mol above its zero-point level and cooling exponentially with time constant
/// `cooling` s (None: no cooling), each with RRKM k(E) from Beyer–Swinehart counts on `grain`
/// J/mol ([`super::rrkm::Rrkm`]); the probabilities are those of [`hot_yields`] (tolerance
/// 1e-7), `cooled` what is left.
///
/// Errors (plain words for the caller to place): no reactions, a non-positive energy, or a
/// count that cannot be made (see [`super::rrkm::count_states`]).
pub fn rrkm_yields(
    reactant: &super::partition::Modes,
    reactions: &[HotReaction<'_>],
    energy: f64,
    cooling: Option<f64>,
    grain: f64,
) -> Result<HotYields, String> {
    if reactions.is_empty() {
        return Err("no reactions to compete with cooling".into());
    }
    if !(energy.is_finite() && energy > 0.0) {
        return Err(format!("the energy must be positive, found {energy} J/mol"));
    }
    let models = reactions
        .iter()
        .map(|r| super::rrkm::Rrkm::new(reactant, r.ts, r.barrier, r.degeneracy, grain, energy + grain))
        .collect::<Result<Vec<_>, String>>()?;
    let rates: Vec<Box<dyn Fn(f64) -> f64 + '_>> = models
        .iter()
        .map(|m| Box::new(move |e: f64| m.rate(e).unwrap_or(0.0)) as Box<dyn Fn(f64) -> f64>)
        .collect();
    let refs: Vec<&dyn Fn(f64) -> f64> = rates.iter().map(|b| b.as_ref()).collect();
    let floor = reactions.iter().map(|r| r.barrier).fold(f64::INFINITY, f64::min);
    Ok(hot_yields(&refs, energy, cooling, floor, 1e-7))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_rate_above_a_threshold() {
        // k = k₀ for E > E₀: the channel is open for t* = τ ln(E_init/E₀), so P = 1 − e^(−k₀ t*)
        // (closed form, common practice).
        let (k0, tau, e_init, e0) = (2e11, 10e-12, 300e3, 100e3);
        let k = move |e: f64| if e > e0 { k0 } else { 0.0 };
        let r = hot_yields(&[&k], e_init, Some(tau), e0, 1e-9);
        let want = 1.0 - (-k0 * tau * (e_init / e0).ln()).exp();
        assert!((r.probabilities[0] - want).abs() < 1e-6, "{:?} {want}", r);
    }

    #[test]
    fn rate_proportional_to_energy() {
        // k = a E: ∫₀^∞ a E_init e^(−t/τ) dt = a E_init τ, so P = 1 − exp(−a E_init τ).
        let (a, tau, e_init) = (1e7, 5e-12, 200e3);
        let k = move |e: f64| a * e;
        let r = hot_yields(&[&k], e_init, Some(tau), 0.0, 1e-10);
        let want = 1.0 - (-a * e_init * tau).exp();
        assert!((r.probabilities[0] - want).abs() < 1e-6, "{:?} {want}", r);
    }

    #[test]
    fn competing_channels_with_a_fixed_ratio_share_in_that_ratio() {
        // Two channels with k₁ = 3 k₂ at every energy share the reacted fraction 3 : 1.
        let k1 = |e: f64| 3e9 * (e / 1e5).powi(4);
        let k2 = |e: f64| 1e9 * (e / 1e5).powi(4);
        let r = hot_yields(&[&k1, &k2], 3e5, Some(20e-12), 0.0, 1e-10);
        let p = &r.probabilities;
        assert!((p[0] / p[1] - 3.0).abs() < 1e-6);
        assert!((p[0] + p[1] + r.cooled - 1.0).abs() < 1e-12);
        assert!(r.cooled > 0.0 && r.cooled < 1.0);
    }

    #[test]
    fn very_fast_channel_takes_everything() {
        let k = |_e: f64| 1e15;
        let r = hot_yields(&[&k], 3e5, Some(1e-12), 1e3, 1e-9);
        assert!((r.probabilities[0] - 1.0).abs() < 1e-12);
    }
}
