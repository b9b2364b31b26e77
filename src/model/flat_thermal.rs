//! The thermal reactions laid out for the right-hand side: every step of total order up to two
//! as a pair of positions into one gathered vector, then the changes summed species by species.
//!
//! The right-hand side of a network with thousands of thermal steps is dominated by this loop.
//! Walking reactions and scattering each one's changes into `dy` (the earlier layout) costs a
//! variable-length inner loop and a dependent store per change. Here a step's rate is
//! `k · z[a] · z[b]` with `z = [c, 1, c⁺]` (the concentrations, a one for a unimolecular or
//! zero-order step, and the concentrations with a negative value seen as zero, for an
//! autocatalyst: [`super::Reaction::seen`]), and each species' change is a gather over the steps
//! that change it, in reaction order. The additions happen in the same order as before, and the
//! products are formed in the same order (`(k · c_a) · c_b`), so the result is the same to the
//! last bit; steps of higher order (a `2 A`, a termolecular step) keep the general product.

use std::cell::RefCell;

/// The thermal reactions as gather tables. Concentrations in mol/L, rates in mol L⁻¹ s⁻¹.
pub(super) struct FlatThermal {
    /// Number of species.
    ns: usize,
    /// Rate constant of each reaction, (L/mol)^(n−1) s⁻¹.
    k: Vec<f64>,
    /// For a step of order ≤ 2 with distinct reactants: its two positions in `z`.
    pair: Vec<[u32; 2]>,
    /// Steps taken by the general product instead (a reactant with ν ≥ 2, or three reactants):
    /// the reaction's index and its reactants as (position in `z`, ν).
    general: Vec<(usize, Vec<(usize, u32)>)>,
    /// Per species i, the changes `c_rxn[p]`, `c_coef[p]` over `c_start[i]..c_start[i+1]`, in
    /// reaction order.
    c_start: Vec<usize>,
    c_rxn: Vec<u32>,
    c_coef: Vec<f64>,
    /// Scratch: `z` (2 ns + 1) and the rates (one per reaction).
    scratch: RefCell<(Vec<f64>, Vec<f64>)>,
}

impl FlatThermal {
    /// The tables of `reactions` over `ns` species.
    pub(super) fn new(reactions: &[super::Reaction], ns: usize) -> Self {
        let one = ns; // z[ns] = 1
        let at = |i: usize, auto: bool| if auto { ns + 1 + i } else { i };
        let mut k = Vec::with_capacity(reactions.len());
        let mut pair = Vec::with_capacity(reactions.len());
        let mut general = Vec::new();
        for (j, r) in reactions.iter().enumerate() {
            k.push(r.k);
            let pos: Vec<(usize, u32)> = r
                .reactants
                .iter()
                .enumerate()
                .map(|(p, &(i, nu))| (at(i, r.autocatalytic[p]), nu))
                .collect();
            match pos.as_slice() {
                [] => pair.push([one as u32, one as u32]),
                [(a, 1)] => pair.push([*a as u32, one as u32]),
                [(a, 1), (b, 1)] => pair.push([*a as u32, *b as u32]),
                _ => {
                    pair.push([one as u32, one as u32]);
                    general.push((j, pos));
                }
            }
        }
        let mut c_start = vec![0usize; ns + 1];
        for r in reactions {
            for &(i, _) in &r.net {
                c_start[i + 1] += 1;
            }
        }
        for i in 0..ns {
            c_start[i + 1] += c_start[i];
        }
        let mut fill = c_start.clone();
        let mut c_rxn = vec![0u32; c_start[ns]];
        let mut c_coef = vec![0.0; c_start[ns]];
        for (j, r) in reactions.iter().enumerate() {
            for &(i, v) in &r.net {
                c_rxn[fill[i]] = j as u32;
                c_coef[fill[i]] = v;
                fill[i] += 1;
            }
        }
        FlatThermal {
            ns,
            k,
            pair,
            general,
            c_start,
            c_rxn,
            c_coef,
            scratch: RefCell::new((vec![0.0; 2 * ns + 1], vec![0.0; reactions.len()])),
        }
    }

    /// Add every reaction's net change × rate (k Π c^ν, mol L⁻¹ s⁻¹) to the species part of
    /// `dy`. Each species' sum starts from its value in `dy`.
    pub(super) fn add_rates(&self, c: &[f64], dy: &mut [f64]) {
        let ns = self.ns;
        let mut guard = self.scratch.borrow_mut();
        let (z, rates) = &mut *guard;
        z[..ns].copy_from_slice(&c[..ns]);
        z[ns] = 1.0;
        for (zf, &ci) in z[ns + 1..].iter_mut().zip(&c[..ns]) {
            // as `Reaction::seen`: below zero counts as zero; NaN stays NaN
            *zf = if ci < 0.0 { 0.0 } else { ci };
        }
        for ((r, &k), &[a, b]) in rates.iter_mut().zip(&self.k).zip(&self.pair) {
            *r = k * z[a as usize] * z[b as usize];
        }
        for (j, pos) in &self.general {
            let mut rate = self.k[*j];
            for &(p, nu) in pos {
                let ci = z[p];
                // powi(2) is exactly c·c; the call is the cost
                rate *= match nu {
                    1 => ci,
                    2 => ci * ci,
                    nu => ci.powi(nu as i32),
                };
            }
            rates[*j] = rate;
        }
        for (i, d) in dy[..ns].iter_mut().enumerate() {
            let (s, e) = (self.c_start[i], self.c_start[i + 1]);
            let mut acc = *d;
            for (&j, &v) in self.c_rxn[s..e].iter().zip(&self.c_coef[s..e]) {
                acc += v * rates[j as usize];
            }
            *d = acc;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::Reaction;
    use super::FlatThermal;

    fn rx(reactants: &[(usize, u32)], net: &[(usize, f64)], k: f64, auto: &[bool]) -> Reaction {
        Reaction {
            name: String::new(),
            reactants: reactants.to_vec(),
            net: net.to_vec(),
            k,
            autocatalytic: auto.to_vec(),
        }
    }

    /// The reference: each reaction's changes scattered in reaction order, as the rate law says.
    fn scattered(reactions: &[Reaction], c: &[f64], dy: &mut [f64]) {
        for r in reactions {
            let mut rate = r.k;
            for (p, &(i, nu)) in r.reactants.iter().enumerate() {
                let ci = r.seen(p, c[i]);
                rate *= match nu {
                    1 => ci,
                    2 => ci * ci,
                    nu => ci.powi(nu as i32),
                };
            }
            for &(i, v) in &r.net {
                dy[i] += v * rate;
            }
        }
    }

    /// Every kind of step (zero order, first order, two distinct reactants, 2 A, termolecular,
    /// an autocatalyst below zero, a NaN) gives the scattered sum to the last bit.
    #[test]
    fn gathered_sums_equal_the_scattered_sums_bit_for_bit() {
        let reactions = vec![
            rx(&[], &[(0, 1.0)], 1e-7, &[]),
            rx(&[(0, 1)], &[(0, -1.0), (1, 1.0)], 0.3, &[false]),
            rx(
                &[(1, 1), (2, 1)],
                &[(1, -1.0), (2, -1.0), (3, 1.0)],
                1.7e3,
                &[false, false],
            ),
            rx(&[(3, 2)], &[(3, -2.0), (4, 1.0)], 2.2e2, &[false]),
            rx(
                &[(0, 1), (1, 1), (2, 1)],
                &[(0, -1.0), (4, 1.0)],
                9.1e5,
                &[false, false, false],
            ),
            rx(&[(0, 1), (5, 1)], &[(0, -1.0), (5, 1.0)], 11.0, &[false, true]),
            rx(&[(5, 1)], &[(5, -1.0), (6, 1.0)], 0.9, &[false]),
            rx(&[(1, 1), (6, 1)], &[(1, -1.0), (6, 1.0)], 3.3, &[false, true]),
        ];
        let ns = 7;
        let flat = FlatThermal::new(&reactions, ns);
        let states = [
            vec![1e-3, 2.5e-4, 7e-5, 3.3e-6, 0.0, 1.2e-9, 4e-7],
            vec![1e-3, 2.5e-4, 7e-5, 3.3e-6, 0.0, -1.2e-12, -4e-15],
            vec![0.3, f64::NAN, 7e-5, 3.3e-6, 1.0, 1e-3, 0.2],
        ];
        for c in &states {
            let mut want = vec![0.5; ns + 2];
            let mut got = want.clone();
            scattered(&reactions, c, &mut want);
            flat.add_rates(c, &mut got);
            for (w, g) in want.iter().zip(&got) {
                assert!(
                    w.to_bits() == g.to_bits() || (w.is_nan() && g.is_nan()),
                    "{w:e} vs {g:e}"
                );
            }
        }
    }
}
