//! Wigner's tunnelling correction to a thermal rate.
//!
//! κ = 1 + (1/24) (h ν‡ / k_B T)², with ν‡ the magnitude of the imaginary frequency of the
//! reaction-coordinate mode at the transition state (Wigner, Z. Phys. Chem. B 19 (1932) 203,
//! `from memory` for the citation). It is the leading term of the expansion in h ν‡ / k_B T and
//! is meant for small corrections (κ close to 1); it grows without bound for large ν‡ / T.

use crate::units::constants::{AVOGADRO, BOLTZMANN};

/// Wigner transmission coefficient for an imaginary mode of magnitude `imaginary` (as the
/// molar energy h ν‡ N_A, J/mol) at `temperature` K. Returns 1 for a zero frequency.
pub fn wigner(imaginary: f64, temperature: f64) -> f64 {
    let u = imaginary.abs() / AVOGADRO / (BOLTZMANN * temperature);
    1.0 + u * u / 24.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Quantity, parse};

    #[test]
    fn a_thousand_wavenumbers_at_room_temperature() {
        // h c ν̃ / k_B T for 1000 cm⁻¹ at 298.15 K = 1.438777 cm K × 1000 / 298.15 = 4.8257
        // (second radiation constant c₂ = hc/k_B = 1.438777 cm K, CODATA 2018); κ = 1 + u²/24.
        let e = parse("1000 cm-1", Quantity::MolarEnergy).unwrap();
        let u: f64 = 1.438_776_877 * 1000.0 / 298.15;
        let k = wigner(e, 298.15);
        assert!((k - (1.0 + u * u / 24.0)).abs() < 1e-6, "{k}");
        assert!((k - 1.9703).abs() < 1e-3, "{k}");
    }

    #[test]
    fn no_imaginary_frequency_no_correction() {
        assert_eq!(wigner(0.0, 300.0), 1.0);
    }
}
