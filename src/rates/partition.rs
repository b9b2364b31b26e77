//! Harmonic vibrational partition functions and the transition-state-theory rate from them.
//!
//! Energies are molar (J/mol): a mode of wavenumber ν̃ is stored as its quantum h c ν̃ N_A.
//!
//! Zero-point convention: every partition function here is measured from the zero-point level
//! of its own species, q = Π 1 / (1 − exp(−hνᵢ / k_B T)), and the barrier E₀ is the
//! zero-point-corrected barrier (transition-state zero-point level minus reactant zero-point
//! level). With this convention the RRKM k(E) (energies measured from the reactant zero-point
//! level, transition-state sums counted from E₀) averages over a thermal distribution to the
//! same rate as [`tst_rate`].

use crate::units::constants::{AVOGADRO, BOLTZMANN, PLANCK};
use std::f64::consts::PI;

/// An external free one-dimensional rotor (Stein–Rabinovitch treatment: classical, unhindered).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rotor {
    /// Rotational constant B as a molar energy (h c B̃ N_A), J/mol.
    pub constant: f64,
    /// Rotational symmetry number (≥ 1).
    pub symmetry: u32,
}

/// The modes of one species (reactant or transition state).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Modes {
    /// Real harmonic vibrations, each as h ν N_A, J/mol.
    pub vibrations: Vec<f64>,
    /// The reaction-coordinate mode of a transition state: |h ν‡| N_A, J/mol. Excluded from
    /// every partition function and state count.
    pub imaginary: Option<f64>,
    /// External free rotors, counted classically.
    pub rotors: Vec<Rotor>,
}

impl Modes {
    /// Zero-point energy Σ hνᵢ/2, J/mol.
    pub fn zero_point(&self) -> f64 {
        self.vibrations.iter().sum::<f64>() / 2.0
    }
}

/// Harmonic vibrational partition function measured from the zero-point level, for molar
/// quanta `vibrations` (J/mol) at `temperature` K.
pub fn vibrational_partition(vibrations: &[f64], temperature: f64) -> f64 {
    let rt = AVOGADRO * BOLTZMANN * temperature;
    vibrations.iter().map(|&e| 1.0 / (1.0 - (-e / rt).exp())).product()
}

/// Classical partition function of free one-dimensional rotors: Π (1/σ) √(π k_B T / B).
pub fn rotor_partition(rotors: &[Rotor], temperature: f64) -> f64 {
    let rt = AVOGADRO * BOLTZMANN * temperature;
    rotors
        .iter()
        .map(|r| (PI * rt / r.constant).sqrt() / r.symmetry.max(1) as f64)
        .product()
}

/// Partition function of all modes (vibrations from the zero-point level, rotors classical).
pub fn partition(modes: &Modes, temperature: f64) -> f64 {
    vibrational_partition(&modes.vibrations, temperature) * rotor_partition(&modes.rotors, temperature)
}

/// Transition-state-theory rate constant, s⁻¹:
/// k = κ σ (k_B T / h) (Q‡ / Q) exp(−E₀ / RT), with E₀ the zero-point-corrected barrier
/// (J/mol), σ the reaction-path degeneracy and κ a transmission coefficient (for example
/// [`super::wigner::wigner`]). The imaginary mode of `ts` is not part of Q‡.
pub fn tst_rate(reactant: &Modes, ts: &Modes, barrier: f64, temperature: f64, degeneracy: f64, kappa: f64) -> f64 {
    let kt = BOLTZMANN * temperature;
    let rt = AVOGADRO * kt;
    kappa * degeneracy * kt / PLANCK * partition(ts, temperature) / partition(reactant, temperature)
        * (-barrier / rt).exp()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Quantity, parse};

    fn wn(x: f64) -> f64 {
        parse(&format!("{x} cm-1"), Quantity::MolarEnergy).unwrap()
    }

    #[test]
    fn one_mode_partition_function() {
        // q = 1/(1 − e^(−u)), u = c₂ ν̃ / T with c₂ = 1.438777 cm K (CODATA 2018): 500 cm⁻¹ at 300 K
        let u: f64 = 1.438_776_877 * 500.0 / 300.0;
        let q = vibrational_partition(&[wn(500.0)], 300.0);
        assert!((q - 1.0 / (1.0 - (-u).exp())).abs() < 1e-9, "{q}");
    }

    #[test]
    fn identical_species_give_eyring_at_zero_barrier() {
        // Q‡ = Q and E₀ = 0 leave k_B T / h (common practice: TST reduces to the universal
        // frequency); 6.2124e12 /s at 298.15 K from CODATA 2018 k_B and h.
        let m = Modes {
            vibrations: vec![wn(300.0), wn(1200.0)],
            ..Default::default()
        };
        let k = tst_rate(&m, &m, 0.0, 298.15, 1.0, 1.0);
        assert!((k - 6.2124e12).abs() / 6.2124e12 < 1e-4, "{k}");
    }

    #[test]
    fn a_lost_soft_mode_slows_the_rate() {
        // Removing a 100 cm⁻¹ mode from the transition state divides k by its q (> 1).
        let r = Modes {
            vibrations: vec![wn(100.0), wn(1000.0)],
            ..Default::default()
        };
        let ts = Modes {
            vibrations: vec![wn(1000.0)],
            imaginary: Some(wn(800.0)),
            rotors: vec![],
        };
        let ratio = tst_rate(&r, &ts, 0.0, 300.0, 1.0, 1.0) / tst_rate(&ts, &ts, 0.0, 300.0, 1.0, 1.0);
        let q100 = vibrational_partition(&[wn(100.0)], 300.0);
        assert!((ratio * q100 - 1.0).abs() < 1e-12, "{ratio}");
    }
}
