//! Floors below which light and thermal rates are taken as zero: nothing they would do could
//! ever happen or be measured. The compiled [`super::Model`] applies them, so every engine (the
//! kinetics, the chain, planning) sees a light or a step under its floor as absent, and
//! `network::ranges` warns about each one when the network is built (`check` and every command
//! print it before their results).
//!
//! Without them a sun `scale = 1e-300` spreads about 1e-306 einstein/s over two thousand
//! wavelength bins, each a subnormal number that slows every product it enters a hundredfold,
//! and a plan calls the untouched sample "a steady state with nothing left to convert" instead
//! of "no light".

use crate::units::constants::AVOGADRO;

/// The age of the universe, s: 13.8 × 10⁹ years (from memory; Planck Collaboration 2018
/// results give 13.787 ± 0.020 Gyr). The longest time any floor below is judged over.
pub const AGE_OF_UNIVERSE: f64 = 13.8e9 * 365.25 * 86400.0;

/// Photon flux below which a light source, or one wavelength bin of it, is taken as dark,
/// einstein/s: fewer than one photon enters the sample in [`AGE_OF_UNIVERSE`]
/// (1 / (N_A × 4.35e17 s) ≈ 3.8e-42 einstein/s). An absolute floor: however small the sample,
/// a photon that never arrives changes nothing.
pub const LIGHT_FLOOR: f64 = 1.0 / (AVOGADRO * AGE_OF_UNIVERSE);

/// Rate below which a thermal step is taken as not running, as a pseudo-first-order rate
/// constant, s⁻¹: k × (`DENSEST` mol/L)^(order − 1) under 1e-30 s⁻¹ converts less than
/// 1e-30 × 4.35e17 ≈ 4e-13 of its reactant in [`AGE_OF_UNIVERSE`] even in a neat liquid
/// (`network::ranges::DENSEST`, 100 mol/L), below any measurement and below the finest
/// relative tolerance the integrator accepts (1e-14 per step, far more over a run). Absolute
/// rather than relative to the fastest step: a slow step beside a fast one still decides
/// what happens at long times (as on Robertson's problem, rate constants 1e9 apart).
pub const RATE_FLOOR: f64 = 1e-30;

/// Concentration scale for the rate floor of steps above first order, mol/L: the densest
/// solution (`network::ranges::DENSEST`).
const DENSEST: f64 = crate::network::ranges::DENSEST;

/// True when a photon flux (einstein/s) is positive but under [`LIGHT_FLOOR`].
pub fn light_below_floor(flux: f64) -> bool {
    flux > 0.0 && flux < LIGHT_FLOOR
}

/// The pseudo-first-order rate, s⁻¹, of a step of this `order` with rate constant `k`
/// ((L/mol)^(order − 1) s⁻¹) at the densest concentration.
pub fn pseudo_first_order(k: f64, order: u32) -> f64 {
    k * DENSEST.powi(order as i32 - 1)
}

/// True when a rate constant `k` of a step of this `order` is positive but under
/// [`RATE_FLOOR`] as a pseudo-first-order rate.
pub fn rate_below_floor(k: f64, order: u32) -> bool {
    k > 0.0 && pseudo_first_order(k, order) < RATE_FLOOR
}

/// What the floors took away from a compiled model.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Floored {
    /// Sources whose whole photon flux was positive but under [`LIGHT_FLOOR`]: now dark.
    pub sources: Vec<usize>,
    /// Wavelength bins (of the other sources) under [`LIGHT_FLOOR`] set to zero.
    pub bins: usize,
    /// Thermal reactions whose rate constant was under [`RATE_FLOOR`]: now zero.
    pub reactions: Vec<usize>,
}

impl Floored {
    /// True when some light was positive and every source is now dark because of the floor.
    pub fn all_light(&self, sources: usize) -> bool {
        !self.sources.is_empty() && self.sources.len() == sources
    }
}

/// Apply the light floor to `bins` (each `(source, flux)` in einstein/s) of `n_sources`
/// sources in place: a source whose total is under the floor goes dark, and any other bin
/// under the floor is zero. Returns the sources darkened and the bins zeroed.
pub fn floor_light(bins: &mut [(usize, &mut f64)], n_sources: usize) -> (Vec<usize>, usize) {
    let mut totals = vec![0.0f64; n_sources];
    for (s, f) in bins.iter() {
        totals[*s] += **f;
    }
    let dark: Vec<usize> = (0..n_sources).filter(|&s| light_below_floor(totals[s])).collect();
    let mut zeroed = 0;
    for (s, f) in bins.iter_mut() {
        if dark.contains(s) {
            **f = 0.0;
        } else if light_below_floor(**f) {
            **f = 0.0;
            zeroed += 1;
        }
    }
    (dark, zeroed)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_floors_are_what_their_reasons_say() {
        // One photon in the age of the universe is LIGHT_FLOOR × N_A × age.
        assert!((LIGHT_FLOOR * AVOGADRO * AGE_OF_UNIVERSE - 1.0).abs() < 1e-12);
        const { assert!(LIGHT_FLOOR > 3.7e-42 && LIGHT_FLOOR < 3.9e-42) };
        // A first-order step at the floor converts under 1e-12 in the age of the universe.
        const { assert!(RATE_FLOOR * AGE_OF_UNIVERSE < 1e-12) };
        assert!(rate_below_floor(1e-31, 1) && !rate_below_floor(1e-29, 1));
        // Second order: judged at 100 mol/L.
        assert!(rate_below_floor(1e-33, 2) && !rate_below_floor(1e-31, 2));
        assert!(!rate_below_floor(0.0, 1) && !light_below_floor(0.0));
    }

    #[test]
    fn a_faint_source_goes_dark_and_a_bright_one_loses_only_its_empty_bins() {
        let mut f = [1e-300, 1e-300, 1e-3, 1e-50, 2e-3];
        let (a, b) = f.split_at_mut(2);
        let mut bins: Vec<(usize, &mut f64)> = a.iter_mut().map(|x| (0, x)).collect();
        bins.extend(b.iter_mut().map(|x| (1, x)));
        let (dark, zeroed) = floor_light(&mut bins, 2);
        assert_eq!((dark, zeroed), (vec![0], 1));
        assert_eq!(f, [0.0, 0.0, 1e-3, 0.0, 2e-3]);
    }
}
