//! Rate physics shared by the model and the barrier engine: Arrhenius and Eyring here;
//! Wigner tunnelling ([`wigner`]), harmonic partition functions and transition-state theory
//! ([`partition`]), RRKM k(E) by direct count ([`rrkm`]) and a cooling hot molecule ([`hot`]).
//!
//! Rate constants are in (L/mol)^(n−1) s⁻¹ for a step of molecularity n. The Eyring equation
//! is written for a standard state of c° = 1 mol/L:
//! k = κ (k_B T / h) (c°)^(1−n) exp(−ΔG‡ / RT), so for a bimolecular step the factor
//! (c°)^(−1) = 1 L/mol carries the units and is numerically one in mol/L.

pub mod hot;
pub mod partition;
pub mod rrkm;
pub mod wigner;

use crate::units::constants::{BOLTZMANN, GAS_CONSTANT, PLANCK, STANDARD_CONCENTRATION};

/// How a rate constant is given; evaluated at a temperature by [`RateLaw::rate_constant`].
#[derive(Debug, Clone, PartialEq)]
pub enum RateLaw {
    /// A rate constant in (L/mol)^(n−1) s⁻¹.
    Constant(f64),
    /// k = A exp(−Ea/RT); A in the units of k, Ea in J/mol.
    Arrhenius {
        /// Pre-exponential factor, (L/mol)^(n−1) s⁻¹.
        prefactor: f64,
        /// Activation energy, J/mol.
        activation: f64,
    },
    /// Eyring with ΔG‡ (J/mol) and transmission coefficient κ.
    EyringFree {
        /// Free energy of activation, J/mol (standard state 1 mol/L).
        barrier: f64,
        /// Transmission coefficient κ.
        transmission: f64,
    },
    /// Eyring with ΔH‡ (J/mol) and ΔS‡ (J/(mol K)).
    EyringEnthalpy {
        /// Enthalpy of activation, J/mol.
        enthalpy: f64,
        /// Entropy of activation, J/(mol K) (standard state 1 mol/L).
        entropy: f64,
        /// Transmission coefficient κ.
        transmission: f64,
    },
    /// Transition-state theory from harmonic frequencies ([`partition::tst_rate`]),
    /// unimolecular: k = κ σ (k_B T / h) (Q‡ / Q) exp(−E₀ / RT).
    Frequencies {
        /// Reactant modes.
        reactant: partition::Modes,
        /// Transition-state modes (the imaginary mode is left out of Q‡).
        ts: partition::Modes,
        /// Zero-point-corrected barrier E₀, J/mol.
        barrier: f64,
        /// Reaction-path degeneracy σ.
        degeneracy: f64,
        /// Transmission coefficient κ (before tunnelling).
        transmission: f64,
        /// Multiply κ by Wigner's factor for the transition state's imaginary mode.
        wigner: bool,
    },
}

/// Eyring rate constant for molecularity `order` at `temperature` K from ΔG‡ (J/mol).
pub fn eyring(barrier: f64, temperature: f64, order: u32, transmission: f64) -> f64 {
    let c0 = STANDARD_CONCENTRATION.powi(1 - order as i32);
    transmission * BOLTZMANN * temperature / PLANCK * c0 * (-barrier / (GAS_CONSTANT * temperature)).exp()
}

/// The Eyring ΔG‡ (J/mol, standard state 1 mol/L) that gives rate constant `k`
/// ((L/mol)^(order−1) s⁻¹) at `temperature` K with transmission coefficient `transmission`: the
/// inverse of [`eyring`].
pub fn eyring_barrier(k: f64, temperature: f64, order: u32, transmission: f64) -> f64 {
    let c0 = STANDARD_CONCENTRATION.powi(1 - order as i32);
    // As a difference of logarithms, so a very slow k (a window of 1e300 s) does not underflow
    // k·h to zero on the way.
    -GAS_CONSTANT * temperature * (k.ln() + PLANCK.ln() - (transmission * BOLTZMANN * temperature * c0).ln())
}

/// Arrhenius rate constant at `temperature` K.
pub fn arrhenius(prefactor: f64, activation: f64, temperature: f64) -> f64 {
    prefactor * (-activation / (GAS_CONSTANT * temperature)).exp()
}

impl RateLaw {
    /// The rate constant at `temperature` K for a step of molecularity `order`.
    pub fn rate_constant(&self, temperature: f64, order: u32) -> f64 {
        match *self {
            RateLaw::Constant(k) => k,
            RateLaw::Arrhenius { prefactor, activation } => arrhenius(prefactor, activation, temperature),
            RateLaw::EyringFree { barrier, transmission } => eyring(barrier, temperature, order, transmission),
            RateLaw::EyringEnthalpy {
                enthalpy,
                entropy,
                transmission,
            } => eyring(enthalpy - temperature * entropy, temperature, order, transmission),
            RateLaw::Frequencies {
                ref reactant,
                ref ts,
                barrier,
                degeneracy,
                transmission,
                ..
            } => {
                let kappa = transmission * self.tunnelling(temperature).unwrap_or(1.0);
                partition::tst_rate(reactant, ts, barrier, temperature, degeneracy, kappa)
            }
        }
    }

    /// Wigner's tunnelling factor at `temperature` K for a rate from frequencies that asks for
    /// it (`None` otherwise, or without an imaginary mode).
    pub fn tunnelling(&self, temperature: f64) -> Option<f64> {
        match self {
            RateLaw::Frequencies { ts, wigner: true, .. } => ts.imaginary.map(|v| wigner::wigner(v, temperature)),
            _ => None,
        }
    }

    /// The free energy of activation at `temperature` implied by this law (J/mol), for display.
    pub fn barrier(&self, temperature: f64, order: u32) -> f64 {
        match *self {
            RateLaw::EyringFree { barrier, .. } => barrier,
            RateLaw::EyringEnthalpy { enthalpy, entropy, .. } => enthalpy - temperature * entropy,
            _ => eyring_barrier(self.rate_constant(temperature, order), temperature, order, 1.0),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn eyring_at_zero_barrier_is_kt_over_h() {
        // k_B T / h = 6.2124e12 /s at 298.15 K (CODATA 2018 exact k_B and h).
        let k = eyring(0.0, 298.15, 1, 1.0);
        assert!((k - 6.2124e12).abs() / 6.2124e12 < 1e-4);
    }

    #[test]
    fn eyring_forms_agree() {
        let t = 310.0;
        let a = RateLaw::EyringFree {
            barrier: 80_000.0 - t * -20.0,
            transmission: 1.0,
        };
        let b = RateLaw::EyringEnthalpy {
            enthalpy: 80_000.0,
            entropy: -20.0,
            transmission: 1.0,
        };
        assert!((a.rate_constant(t, 1) - b.rate_constant(t, 1)).abs() < 1e-20);
        // and the barrier round-trips through a rate constant
        let k = RateLaw::Constant(a.rate_constant(t, 1));
        assert!((k.barrier(t, 1) - a.barrier(t, 1)).abs() < 1e-6);
    }

    #[test]
    fn arrhenius_factor_of_e() {
        // exp(-Ea/RT) = 1/e when Ea = RT (definition).
        let t = 300.0;
        let k = arrhenius(1.0, GAS_CONSTANT * t, t);
        assert!((k - (-1.0f64).exp()).abs() < 1e-15);
    }
}
