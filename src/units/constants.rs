//! Exact physical constants of the 2019 SI (CGPM-26 Resolution 1, 2018; CODATA 2018).

/// Planck constant h, J s (exact).
pub const PLANCK: f64 = 6.626_070_15e-34;
/// Speed of light in vacuum c, m/s (exact).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;
/// Avogadro constant N_A, 1/mol (exact).
pub const AVOGADRO: f64 = 6.022_140_76e23;
/// Boltzmann constant k_B, J/K (exact).
pub const BOLTZMANN: f64 = 1.380_649e-23;
/// Elementary charge e, C (exact); 1 eV = e J.
pub const ELEMENTARY_CHARGE: f64 = 1.602_176_634e-19;
/// Molar gas constant R = N_A k_B, J/(mol K).
pub const GAS_CONSTANT: f64 = AVOGADRO * BOLTZMANN;
/// Thermochemical calorie, J (exact by definition).
pub const CALORIE: f64 = 4.184;
/// Standard-state concentration c° = 1 mol/L used by the Eyring standard-state correction.
pub const STANDARD_CONCENTRATION: f64 = 1.0;
/// Zero of the Celsius scale, K (exact).
pub const CELSIUS_ZERO: f64 = 273.15;

/// Energy of one photon of vacuum wavelength `wavelength` (m), in J.
pub fn photon_energy(wavelength: f64) -> f64 {
    PLANCK * SPEED_OF_LIGHT / wavelength
}

/// Energy of one einstein (a mole of photons) at `wavelength` (m), in J/mol.
pub fn molar_photon_energy(wavelength: f64) -> f64 {
    photon_energy(wavelength) * AVOGADRO
}

/// Photon flux in einstein/s carried by `power` (W) of monochromatic light at `wavelength` (m).
pub fn einstein_per_second(power: f64, wavelength: f64) -> f64 {
    power / molar_photon_energy(wavelength)
}

/// Absorption cross-section σ (m²) of one molecule with molar absorption coefficient
/// `epsilon` in L mol⁻¹ cm⁻¹: σ = 1000 ln(10) ε / N_A cm², times 1e-4 m²/cm².
pub fn cross_section_m2(epsilon_l_per_mol_cm: f64) -> f64 {
    1000.0 * std::f64::consts::LN_10 * epsilon_l_per_mol_cm / AVOGADRO * 1e-4
}

#[cfg(test)]
mod tests {
    use super::*;

    // Derived values recomputed from the CODATA 2018 exact constants (design sketch's table).
    #[test]
    fn one_watt_at_365_nm() {
        let q = einstein_per_second(1.0, 365e-9);
        assert!((q - 3.0512e-6).abs() / 3.0512e-6 < 1e-4, "{q}");
        let e = molar_photon_energy(365e-9) / 1000.0;
        assert!((e - 327.74).abs() < 0.01, "{e}");
    }

    #[test]
    fn eyring_prefactor_at_room_temperature() {
        let v = BOLTZMANN * 298.15 / PLANCK;
        assert!((v - 6.2124e12).abs() / 6.2124e12 < 1e-4, "{v}");
    }

    #[test]
    fn cross_section_per_unit_epsilon() {
        // 3.8235e-21 cm² per L mol⁻¹ cm⁻¹; the common mistake (dividing by ln 10) gives 7.21e-22.
        let s_cm2 = cross_section_m2(1.0) * 1e4;
        assert!((s_cm2 - 3.8235e-21).abs() / 3.8235e-21 < 1e-4, "{s_cm2}");
    }
}
