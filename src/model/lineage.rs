//! Which species a photon made, and what each species becomes: the network's lineage,
//! decided on its graph once when the model is compiled.
//!
//! The rule (README, "Photoproducts and thermal co-products"):
//! - a species a photochemical step forms (a short form's products, or a species its transients
//!   lead to, other than the absorber coming back) is reached through a photochemical step: a
//!   *photoproduct*;
//! - a thermal step passes each species it consumes on to its *principal* products only: the
//!   species it forms with the most atoms other than hydrogen (from the formulas; ties all count).
//!   The rest of what it forms are co-products: the water of a condensation, the HI of an
//!   oxidation. When a species the step forms has no formula, its products cannot be told
//!   apart and all of them count as principal;
//! - a species reached from a photoproduct along these steps is a photoproduct; nothing else is.
//!
//! So in `dihydro + I2 -> product + 2 HI` the product is a photoproduct (the dihydro
//! intermediate came from a photon) and HI is a thermal co-product; the iodohydrin HI forms with
//! an epoxide is thermal too. The same steps say what a reagent becomes, with the most moles
//! formed per mole of it consumed along any route ([`Lineage::from`]): the stoichiometric
//! ceiling of a selectivity.

use super::{Outcome, Reaction};
use crate::network::Network;

/// The lineage of every species of a model.
#[derive(Debug, Clone, PartialEq)]
pub struct Lineage {
    /// Per species: the species one step passes it on to, with the moles formed per mole of it
    /// consumed in that step.
    pub edges: Vec<Vec<(usize, f64)>>,
    /// Per species: true when reached through a photochemical step (a photoproduct).
    pub photoproduct: Vec<bool>,
    /// Per species: true when some photochemical step forms it directly.
    pub photo_formed: Vec<bool>,
}

/// Atoms other than hydrogen in a species' formula (None without a formula).
fn heavy_atoms(net: &Network, s: usize) -> Option<f64> {
    net.species[s].composition.as_ref().map(|c| {
        c.iter()
            .filter(|(el, _)| !matches!(el.as_str(), "H" | "D" | "T" | "charge"))
            .map(|(_, n)| *n)
            .sum()
    })
}

impl Lineage {
    /// The lineage of `net` from its compiled thermal reactions and photochemical outcomes.
    pub fn new(net: &Network, reactions: &[Reaction], outcomes: &[Outcome]) -> Lineage {
        let n = net.species.len();
        let mut edges: Vec<Vec<(usize, f64)>> = vec![Vec::new(); n];
        let mut add = |from: usize, to: usize, ratio: f64| match edges[from].iter_mut().find(|e| e.0 == to) {
            Some(e) => e.1 = e.1.max(ratio),
            None => edges[from].push((to, ratio)),
        };
        for r in reactions {
            let formed: Vec<(usize, f64)> = r.net.iter().copied().filter(|x| x.1 > 0.0).collect();
            let sizes: Option<Vec<f64>> = formed.iter().map(|&(s, _)| heavy_atoms(net, s)).collect();
            let principal: Vec<(usize, f64)> = match sizes {
                Some(sz) => {
                    let most = sz.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                    formed
                        .iter()
                        .zip(&sz)
                        .filter(|(_, z)| **z >= most)
                        .map(|(f, _)| *f)
                        .collect()
                }
                None => formed.clone(),
            };
            for &(c, nu) in r.net.iter().filter(|x| x.1 < 0.0) {
                for &(p, np) in &principal {
                    add(c, p, np / -nu);
                }
            }
        }
        let mut photo_formed = vec![false; n];
        for o in outcomes {
            let absorber = net.photo[o.step].absorber;
            for &(s, v) in o.net.iter().filter(|x| x.1 > 0.0) {
                photo_formed[s] = true;
                add(absorber, s, v);
            }
        }
        let mut photoproduct = photo_formed.clone();
        let mut todo: Vec<usize> = (0..n).filter(|&s| photoproduct[s]).collect();
        while let Some(s) = todo.pop() {
            for &(t, _) in &edges[s] {
                if !photoproduct[t] {
                    photoproduct[t] = true;
                    todo.push(t);
                }
            }
        }
        Lineage {
            edges,
            photoproduct,
            photo_formed,
        }
    }

    /// What `seed` becomes: for each species reached from it along the steps, the most moles
    /// formed per mole of `seed` consumed along any one route (the stoichiometric ceiling);
    /// None where it is not reached. `seed` itself is None unless a route leads back to it.
    pub fn from(&self, seed: usize) -> Vec<Option<f64>> {
        let n = self.edges.len();
        let mut best: Vec<Option<f64>> = vec![None; n];
        let mut level = vec![None; n];
        level[seed] = Some(1.0);
        // Longest multiplicative route, relaxed at most n times (a cycle that multiplies
        // moles stops there).
        for _ in 0..n.max(1) {
            let mut changed = false;
            let mut next = level.clone();
            for (out, x) in self.edges.iter().zip(&level) {
                let Some(x) = *x else { continue };
                for &(t, r) in out {
                    let v: f64 = x * r;
                    if best[t].is_none_or(|b| v > b * (1.0 + 1e-12)) {
                        best[t] = Some(v);
                        if t != seed && next[t].is_none_or(|b| v > b) {
                            next[t] = Some(v);
                        }
                        changed = true;
                    }
                }
            }
            level = next;
            if !changed {
                break;
            }
        }
        best
    }

    /// Per species: true when it is one of `targets` or becomes one along the steps.
    pub fn leads_to(&self, targets: &[usize]) -> Vec<bool> {
        let n = self.edges.len();
        let mut back: Vec<Vec<usize>> = vec![Vec::new(); n];
        for (s, out) in self.edges.iter().enumerate() {
            for &(t, _) in out {
                back[t].push(s);
            }
        }
        let mut hit = vec![false; n];
        let mut todo: Vec<usize> = targets.to_vec();
        for &t in targets {
            hit[t] = true;
        }
        while let Some(t) = todo.pop() {
            for &s in &back[t] {
                if !hit[s] {
                    hit[s] = true;
                    todo.push(s);
                }
            }
        }
        hit
    }
}
