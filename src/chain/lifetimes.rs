//! Lifetimes of the transients and the time a molecule spends in the excited manifold per
//! photon absorbed.
//!
//! A transient's lifetime is 1 / Σk over its rate channels (quenching at the partner
//! concentration the chain was built at): the chain's mean holding time per visit. A transient
//! given by fractions only has no lifetime. The excited manifold is the transients of kind
//! `excited` and `intersection` (hot ground states are on the ground state); with weights w
//! (expected visits of a chain that ends, or stationary visit shares of one that does not), the
//! time in it per photon absorbed is Σ_t w_t τ_t / Σ_i w_i φ_i, φ_i the photon probability of
//! state i's ways out. Photons that lead to no transient (short-form steps, photons absorbed
//! with no reaction) count with no time in the manifold. Times in s. No file I/O, no printing.

use super::{Chain, StateKind};
use crate::network::{Network, TransientKind};
use serde::Serialize;

/// One transient's lifetime.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Lifetime {
    /// Chain state.
    pub state: usize,
    /// Name.
    pub name: String,
    /// Its kind, as written in files ("excited", "intersection", "hot", "other").
    pub kind: &'static str,
    /// 1 / Σk over its rate channels, s (None: given by fractions only).
    pub lifetime: Option<f64>,
    /// True when it counts as the excited manifold.
    pub excited: bool,
}

/// Lifetimes and the time in the excited manifold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Lifetimes {
    /// Every transient of the chain, in chain order.
    pub transients: Vec<Lifetime>,
    /// Mean time in the excited manifold per photon absorbed, s (None: no photon absorbed, or no
    /// excited transient with a lifetime).
    pub excited_time_per_photon: Option<f64>,
    /// Share of the absorbed photons that lead into a transient (the others count no time in
    /// the excited manifold); None when no photon is absorbed.
    pub photons_into_transients: Option<f64>,
}

/// Lifetimes of the transients of `chain` (built from `net`) and the time in the excited
/// manifold per photon at `weights` (per chain state).
pub fn lifetimes(chain: &Chain, net: &Network, weights: &[f64]) -> Lifetimes {
    let n = chain.states.len();
    let mut ph = vec![0.0; n];
    let mut into = 0.0;
    for m in &chain.moves {
        if m.photon {
            ph[m.from] += m.probability;
            if matches!(chain.states[m.to].kind, StateKind::Transient(_)) {
                into += weights.get(m.from).copied().unwrap_or(0.0) * m.probability;
            }
        }
    }
    let photons: f64 = (0..n).map(|i| weights.get(i).copied().unwrap_or(0.0) * ph[i]).sum();
    let mut transients = Vec::new();
    let mut excited_time = 0.0;
    let mut any_timed = false;
    for (i, s) in chain.states.iter().enumerate() {
        let StateKind::Transient(t) = s.kind else {
            continue;
        };
        let kind = net.transients.get(t).map_or(TransientKind::Other, |x| x.kind);
        let excited = matches!(kind, TransientKind::Excited | TransientKind::Intersection);
        let lifetime = (s.holding > 0.0).then_some(s.holding);
        if excited && let Some(tau) = lifetime {
            any_timed = true;
            excited_time += weights.get(i).copied().unwrap_or(0.0) * tau;
        }
        transients.push(Lifetime {
            state: i,
            name: s.name.clone(),
            kind: kind.word(),
            lifetime,
            excited,
        });
    }
    Lifetimes {
        transients,
        excited_time_per_photon: (photons > 0.0 && any_timed).then(|| excited_time / photons),
        photons_into_transients: (photons > 0.0).then(|| into / photons),
    }
}
