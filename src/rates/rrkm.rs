//! Microcanonical rates k(E) by RRKM theory on an energy grain.
//!
//! Energies are molar (J/mol) and measured from the reactant's zero-point level; the
//! transition state's states are counted from its own zero-point level, which lies E₀ (the
//! zero-point-corrected barrier) above the reactant's. Densities of states are per J/mol.
//!
//! * Sums and densities of harmonic vibrational states by the Beyer–Swinehart direct count
//!   (Beyer & Swinehart, Algorithm 448, Commun. ACM 16 (1973) 379): the energy axis is cut
//!   into bins of a stated width (the grain); bin `j` holds the states with energy in
//!   [jΔ, (j+1)Δ), placed at its lower edge; each frequency is rounded to a whole number of
//!   grains (the largest rounding is kept in [`StateCount::rounding`]).
//! * External free rotors as in the Stein–Rabinovitch extension (Stein & Rabinovitch,
//!   J. Chem. Phys. 58 (1973) 2438): the count starts from the classical rotor states in each
//!   bin instead of a single state at zero, and the vibrations are convolved in.
//! * k(E) = σ W‡(E − E₀) / (h N_A ρ(E)), with σ the reaction-path degeneracy, W‡ the sum of
//!   transition-state states and ρ the reactant density (per J/mol, hence the N_A).
//! * The Whitten–Rabinovitch approximation for comparison ([`whitten_rabinovitch`]).

use super::partition::{Modes, Rotor};
use crate::units::constants::{AVOGADRO, GAS_CONSTANT, PLANCK};

/// The largest number of bins a count may use (memory guard for user input).
pub const MAX_BINS: usize = 20_000_000;

/// Beyer–Swinehart state counts of one species on a grain.
#[derive(Debug, Clone, PartialEq)]
pub struct StateCount {
    /// Bin width Δ, J/mol.
    pub grain: f64,
    /// Number of states in each bin [jΔ, (j+1)Δ).
    pub counts: Vec<f64>,
    /// Sum of states W(jΔ): all states with energy below (j+1)Δ, i.e. up to and including bin j.
    pub sums: Vec<f64>,
    /// Largest |hν − nΔ| over the vibrations after rounding to whole grains, J/mol.
    pub rounding: f64,
}

/// Γ(x) for x a positive multiple of 1/2 (exact recursion from Γ(1) = 1, Γ(1/2) = √π).
fn gamma_half(x: f64) -> f64 {
    let mut g = if (x.fract() - 0.5).abs() < 1e-9 {
        std::f64::consts::PI.sqrt()
    } else {
        1.0
    };
    let mut y = if (x.fract() - 0.5).abs() < 1e-9 { 0.5 } else { 1.0 };
    while y < x - 1e-9 {
        g *= y;
        y += 1.0;
    }
    g
}

/// Classical sum of states of free 1-D rotors at molar energy `e`:
/// W(E) = C E^(r/2) / Γ(r/2 + 1) with C = Π √π / (σᵢ √Bᵢ), the inverse Laplace transform of
/// the classical rotor partition function Π (1/σᵢ) √(π RT / Bᵢ) (common practice).
pub fn rotor_sum(rotors: &[Rotor], e: f64) -> f64 {
    if rotors.is_empty() {
        return if e >= 0.0 { 1.0 } else { 0.0 };
    }
    if e <= 0.0 {
        return 0.0;
    }
    let r = rotors.len() as f64;
    let c: f64 = rotors
        .iter()
        .map(|b| std::f64::consts::PI.sqrt() / (b.symmetry.max(1) as f64 * b.constant.sqrt()))
        .product();
    c * e.powf(r / 2.0) / gamma_half(r / 2.0 + 1.0)
}

/// Count the states of `modes` (vibrations and external rotors; the imaginary mode is
/// ignored) in bins of `grain` J/mol from 0 up to `max_energy` J/mol.
///
/// Errors (as plain words for the caller to place): a non-positive or non-finite grain or
/// energy, more than [`MAX_BINS`] bins, or a vibration smaller than half a grain (it would
/// round to zero quanta).
pub fn count_states(modes: &Modes, grain: f64, max_energy: f64) -> Result<StateCount, String> {
    if !(grain.is_finite() && grain > 0.0) {
        return Err(format!("the grain must be a positive energy, found {grain} J/mol"));
    }
    if !(max_energy.is_finite() && max_energy >= 0.0) {
        return Err(format!(
            "the top energy must be finite and not negative, found {max_energy} J/mol"
        ));
    }
    let bins_f = bins_at_or_below(max_energy / grain) as f64 + 1.0;
    if bins_f > MAX_BINS as f64 {
        return Err(format!(
            "{bins_f:.0} bins of the grain are needed (at most {MAX_BINS}); use a coarser grain"
        ));
    }
    let bins = bins_f as usize;
    let mut counts = vec![0.0; bins];
    if modes.rotors.is_empty() {
        counts[0] = 1.0;
    } else {
        for (j, c) in counts.iter_mut().enumerate() {
            *c = rotor_sum(&modes.rotors, (j + 1) as f64 * grain) - rotor_sum(&modes.rotors, j as f64 * grain);
        }
    }
    let mut rounding: f64 = 0.0;
    for &v in &modes.vibrations {
        if !(v.is_finite() && v > 0.0) {
            return Err(format!("a vibration must be a positive frequency, found {v} J/mol"));
        }
        let n = (v / grain).round();
        if n < 1.0 {
            return Err(format!(
                "a vibration of {} cm-1 is smaller than half the grain of {} cm-1; use a finer grain",
                crate::units::sig(v / WAVENUMBER, 6),
                crate::units::sig(grain / WAVENUMBER, 6)
            ));
        }
        rounding = rounding.max((v - n * grain).abs());
        let n = n as usize;
        // Beyer–Swinehart: add one more quantum ladder of this mode to every bin.
        for j in n..bins {
            counts[j] += counts[j - n];
        }
    }
    let mut sums = Vec::with_capacity(bins);
    let mut acc = 0.0;
    for &c in &counts {
        acc += c;
        sums.push(acc);
    }
    Ok(StateCount {
        grain,
        counts,
        sums,
        rounding,
    })
}

/// Index of the last bin at or below `x` grains. An energy given as a whole number of grains
/// (4000 cm⁻¹ on a 10 cm⁻¹ grain) can land a rounding error below that whole number; a relative
/// tolerance of 1e-9 counts it as the whole number, so W(E) includes the states at exactly E.
fn bins_at_or_below(x: f64) -> usize {
    (x + 1e-9 * x.abs().max(1.0)).floor().max(0.0) as usize
}

/// Number of bins strictly below `x` grains, with the same tolerance as [`bins_at_or_below`].
fn bins_strictly_below(x: f64) -> usize {
    (x - 1e-9 * x.abs().max(1.0)).ceil().max(0.0) as usize
}

/// One cm⁻¹ as a molar energy, J/mol (h c × 100 m⁻¹ × N_A).
const WAVENUMBER: f64 = PLANCK * crate::units::constants::SPEED_OF_LIGHT * 100.0 * AVOGADRO;

impl StateCount {
    /// Top of the counted range, J/mol (the lower edge of the last bin).
    pub fn max_energy(&self) -> f64 {
        (self.counts.len() - 1) as f64 * self.grain
    }

    /// Sum of states W(E): the number of states with energy ≤ `e` J/mol (0 below zero;
    /// `None` above the counted range).
    pub fn sum_at(&self, e: f64) -> Option<f64> {
        if e < 0.0 {
            return Some(0.0);
        }
        self.sums.get(bins_at_or_below(e / self.grain)).copied()
    }

    /// Density of states averaged over [lo, hi): (W(hi) − W(lo)) / (hi − lo), per J/mol;
    /// `None` above the counted range or for an empty interval.
    pub fn density_between(&self, lo: f64, hi: f64) -> Option<f64> {
        if hi <= lo {
            return None;
        }
        // States sit at bin lower edges, so states in [lo, hi) are those of bins lo/Δ..hi/Δ.
        let below = |e: f64| -> Option<f64> {
            if e <= 0.0 {
                Some(0.0)
            } else {
                let j = bins_strictly_below(e / self.grain);
                if j == 0 {
                    Some(0.0)
                } else {
                    self.sums.get(j - 1).copied()
                }
            }
        };
        Some((below(hi)? - below(lo)?) / (hi - lo))
    }

    /// Density of bin j, counts / Δ, per J/mol.
    pub fn density_of_bin(&self, j: usize) -> Option<f64> {
        self.counts.get(j).map(|c| c / self.grain)
    }
}

/// An RRKM rate model: reactant and transition-state counts on a common grain.
#[derive(Debug, Clone)]
pub struct Rrkm {
    /// Reactant counts.
    pub reactant: StateCount,
    /// Transition-state counts (from its zero-point level).
    pub ts: StateCount,
    /// Zero-point-corrected barrier E₀, J/mol.
    pub barrier: f64,
    /// Reaction-path degeneracy σ.
    pub degeneracy: f64,
    /// Width of the window the reactant density is averaged over in [`Rrkm::rate`], J/mol.
    pub window: f64,
}

/// Default width of the density window used by [`Rrkm::rate`]: 100 cm⁻¹ as J/mol. Averaging
/// removes the empty bins of the direct count at low energy; where ρ is smooth it changes ρ
/// by the curvature over ±50 cm⁻¹ only.
pub fn default_window() -> f64 {
    100.0 * WAVENUMBER
}

impl Rrkm {
    /// Count reactant and transition state on `grain` J/mol up to `max_energy` J/mol (plus
    /// half the density window, so that [`Rrkm::rate`] is defined up to `max_energy`).
    pub fn new(
        reactant: &Modes,
        ts: &Modes,
        barrier: f64,
        degeneracy: f64,
        grain: f64,
        max_energy: f64,
    ) -> Result<Rrkm, String> {
        if !(barrier.is_finite() && barrier >= 0.0) {
            return Err(format!(
                "the barrier must be finite and not negative, found {barrier} J/mol"
            ));
        }
        if !(degeneracy.is_finite() && degeneracy > 0.0) {
            return Err(format!(
                "the reaction-path degeneracy must be positive, found {degeneracy}"
            ));
        }
        let window = default_window().max(grain);
        let top = max_energy + window / 2.0 + grain;
        Ok(Rrkm {
            reactant: count_states(reactant, grain, top)?,
            ts: count_states(ts, grain, top)?,
            barrier,
            degeneracy,
            window,
        })
    }

    /// The reactant density ρ̄(E) that k(E) uses, per J/mol: the count averaged over the
    /// density window centred on `e` (clipped at zero energy). `None` above the counted range.
    pub fn density(&self, e: f64) -> Option<f64> {
        let lo = (e - self.window / 2.0).max(0.0);
        self.reactant.density_between(lo, lo + self.window)
    }

    /// k(E), s⁻¹, at molar energy `e` (J/mol) for the model's barrier; see [`Rrkm::rate_over`].
    pub fn rate(&self, e: f64) -> Option<f64> {
        self.rate_over(e, self.barrier)
    }

    /// k(E) = σ W‡(E − E₀) / (h N_A ρ̄(E)), s⁻¹, with barrier `barrier` J/mol and ρ̄ the
    /// reactant density averaged over the window centred on E (clipped at zero energy).
    /// Zero below the barrier; `None` above the counted range or where ρ̄ is zero.
    pub fn rate_over(&self, e: f64, barrier: f64) -> Option<f64> {
        if e < barrier {
            return Some(0.0);
        }
        let w = self.ts.sum_at(e - barrier)?;
        let rho = self.density(e)?;
        if rho <= 0.0 {
            return None;
        }
        Some(self.degeneracy * w / (PLANCK * AVOGADRO * rho))
    }

    /// The canonical average of k(E) over ρ(E) e^(−E/RT) / Q at `temperature` K, s⁻¹.
    ///
    /// Since k(E) ρ(E) = σ W‡(E − E₀) / (h N_A), the average is
    /// (σ / (h N_A Q)) ∫ W‡(E − E₀) e^(−E/RT) dE with W‡ the step function of the count,
    /// integrated exactly over each bin, and Q = Σⱼ cⱼ e^(−jΔ/RT) from the reactant count.
    /// For frequencies and barrier that are whole multiples of the grain this equals
    /// [`super::partition::tst_rate`] (κ = 1), up to the part of the distribution above the
    /// counted range.
    pub fn canonical_rate(&self, temperature: f64) -> f64 {
        let rt = GAS_CONSTANT * temperature;
        let x = (-self.reactant.grain / rt).exp();
        let q: f64 = self
            .reactant
            .counts
            .iter()
            .enumerate()
            .map(|(j, c)| c * (-(j as f64) * self.reactant.grain / rt).exp())
            .sum();
        // ∫ over bin j of e^(−E/RT) dE = RT e^(−jΔ/RT) (1 − e^(−Δ/RT)).
        let integral: f64 = self
            .ts
            .sums
            .iter()
            .enumerate()
            .map(|(j, w)| w * (-(j as f64) * self.ts.grain / rt).exp() * (1.0 - x) * rt)
            .sum::<f64>()
            * (-self.barrier / rt).exp();
        self.degeneracy * integral / (PLANCK * AVOGADRO * q)
    }
}

/// Whitten–Rabinovitch sum and density of harmonic states at molar energy `e` (J/mol) for
/// quanta `vibrations` (J/mol): W(E) = (E + a E_z)^s / (s! Π hνᵢ), a = 1 − β ω(E′),
/// E′ = E / E_z, β = ((s − 1)/s) ⟨ν²⟩/⟨ν⟩², ω = (5.00 E′ + 2.73 E′^0.5 + 3.51)⁻¹ for
/// 0.1 < E′ < 1 and exp(−2.4191 E′^0.25) for 1 ≤ E′ < 8 (Whitten & Rabinovitch,
/// J. Chem. Phys. 38 (1963) 2466, `from memory` for the citation).
///
/// The density is the full derivative dW/dE, keeping the factor (1 − β dω/dE′) that is often
/// dropped. Returns `None` outside 0.1 < E′ < 8 (outside the published fit) or with no modes.
/// Density per J/mol.
pub fn whitten_rabinovitch(vibrations: &[f64], e: f64) -> Option<(f64, f64)> {
    let s = vibrations.len();
    if s == 0 || vibrations.iter().any(|v| v.is_nan() || *v <= 0.0) {
        return None;
    }
    let sf = s as f64;
    let ez: f64 = vibrations.iter().sum::<f64>() / 2.0;
    let ep = e / ez;
    if !(ep > 0.1 && ep < 8.0) {
        return None;
    }
    let mean = vibrations.iter().sum::<f64>() / sf;
    let mean2 = vibrations.iter().map(|v| v * v).sum::<f64>() / sf;
    let beta = (sf - 1.0) / sf * mean2 / (mean * mean);
    let (omega, domega) = if ep < 1.0 {
        let d = 5.0 * ep + 2.73 * ep.sqrt() + 3.51;
        (1.0 / d, -(5.0 + 1.365 / ep.sqrt()) / (d * d))
    } else {
        let w = (-2.4191 * ep.powf(0.25)).exp();
        (w, -2.4191 * 0.25 * ep.powf(-0.75) * w)
    };
    let a = 1.0 - beta * omega;
    // ln(s! Π hν) to avoid overflow
    let ln_den: f64 = (1..=s).map(|i| (i as f64).ln()).sum::<f64>() + vibrations.iter().map(|v| v.ln()).sum::<f64>();
    let base = e + a * ez;
    let w = (sf * base.ln() - ln_den).exp();
    let rho = (sf * base.ln() - ln_den).exp() * sf / base * (1.0 - beta * domega);
    Some((w, rho))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Direct count (common practice): modes of 1000 and 500 cm⁻¹ have 9 + 7 + 5 + 3 + 1 = 25
    // states with energy ≤ 4000 cm⁻¹ (n₁ = 0..4 quanta of 1000, then n₂ ≤ (4000 − 1000 n₁)/500),
    // and one mode of 1000 cm⁻¹ has 4 states ≤ 3000 cm⁻¹. The energies are whole numbers of grains
    // that land a rounding error below them in J/mol; W(E) still counts the states at exactly E.
    #[test]
    fn sums_include_states_at_exactly_the_energy() {
        let wn = crate::units::parse("1 cm-1", crate::units::Quantity::MolarEnergy).unwrap();
        let grain = 10.0 * wn;
        let two = Modes {
            vibrations: vec![1000.0 * wn, 500.0 * wn],
            ..Default::default()
        };
        let c = count_states(&two, grain, 6000.0 * wn).unwrap();
        assert_eq!(c.sum_at(4000.0 * wn), Some(25.0));
        let one = Modes {
            vibrations: vec![1000.0 * wn],
            ..Default::default()
        };
        let c = count_states(&one, grain, 6000.0 * wn).unwrap();
        assert_eq!(c.sum_at(3000.0 * wn), Some(4.0));
        assert_eq!(c.sum_at(2999.0 * wn), Some(3.0));
        // states in [1000, 2000) cm⁻¹: only the one at 1000
        let d = c.density_between(1000.0 * wn, 2000.0 * wn).unwrap();
        assert!((d * 1000.0 * wn - 1.0).abs() < 1e-12, "{d}");
    }

    #[test]
    fn one_oscillator_has_one_state_per_quantum() {
        // A single harmonic ladder (common practice): states at 0, ν, 2ν, ...
        let m = Modes {
            vibrations: vec![3.0 * WAVENUMBER],
            ..Default::default()
        };
        let c = count_states(&m, WAVENUMBER, 10.0 * WAVENUMBER).unwrap();
        let want = [1.0, 0.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.0];
        assert_eq!(c.counts, want);
        assert_eq!(c.sums[10], 4.0);
        assert_eq!(c.rounding, 0.0);
    }

    #[test]
    fn two_free_rotors_have_a_flat_density() {
        // r = 2: ρ = C / Γ(1) = π / (σ₁σ₂ √(B₁B₂)), constant (from the classical rotor
        // partition function, common practice).
        let b = 2.0 * WAVENUMBER;
        let m = Modes {
            rotors: vec![
                Rotor {
                    constant: b,
                    symmetry: 1,
                },
                Rotor {
                    constant: b,
                    symmetry: 2,
                },
            ],
            ..Default::default()
        };
        let c = count_states(&m, WAVENUMBER, 100.0 * WAVENUMBER).unwrap();
        let want = std::f64::consts::PI / (2.0 * b);
        for j in [0usize, 7, 99] {
            assert!((c.density_of_bin(j).unwrap() - want).abs() / want < 1e-9);
        }
    }

    #[test]
    fn bad_grains_are_refused() {
        let m = Modes {
            vibrations: vec![0.2 * WAVENUMBER],
            ..Default::default()
        };
        assert!(count_states(&m, WAVENUMBER, 100.0).unwrap_err().contains("finer grain"));
        assert!(count_states(&m, 0.0, 100.0).is_err());
        assert!(count_states(&m, 1e-30, 1e6).unwrap_err().contains("coarser"));
    }

    #[test]
    fn gamma_of_halves() {
        assert!((gamma_half(2.5) - 1.329_340_388).abs() < 1e-8); // Γ(5/2) = 3√π/4
        assert!((gamma_half(4.0) - 6.0).abs() < 1e-12);
    }
}
