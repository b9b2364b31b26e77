//! A chain with no end: one molecule that switches for ever (a closed photoswitch).
//!
//! The molecule settles into the closed class of states it cannot leave. Over that class:
//! - the stationary distribution of the jump chain, from one sparse solve: with r a state of the
//!   class and W the rest, the expected visits to each state of W between two visits to r are
//!   v = (I − Q_W)⁻ᵀ p_r (p_r the moves out of r into W); π ∝ (1, v) (Kemeny & Snell, Finite
//!   Markov Chains, 1960, ch. 4: the fixed vector as visits per return). The share of time in
//!   each state is π_i τ_i / Σ π_j τ_j (τ the mean holding time per visit): the photostationary
//!   composition one molecule sees.
//! - mean first passages from each form (a species of the class) to each other form, in photons
//!   absorbed and in time: (I − Q_{C∖b}) m = h with h the photons per move (the photon
//!   probability of each state's ways out) or the holding time, one LU per target form b.
//! - switching: a switching event is a change of form, the molecule arriving at a form other
//!   than the one it last left (through any transients in between). With x⁽ⁱ⁾ the probability
//!   that a transient's path leads first back to form i, the share of moves out of i that return
//!   to i is ρᵢ = Σ_moves p (1 if it goes to i, x⁽ⁱ⁾ if to a transient, 0 otherwise); events per
//!   unit time Σ πᵢ (1 − ρᵢ) / Σ π τ, photons per event Σ πᵢ φᵢ / Σ πᵢ (1 − ρᵢ).
//!
//! Units: times in s; photon counts per molecule. No file I/O, no printing.

use super::sparse::{Lu, Triplets};
use super::{Chain, StateKind};
use crate::error::{Error, Result};
use petgraph::graph::DiGraph;
use serde::Serialize;

/// At most this many forms get first-passage times (the ones the molecule spends most time in).
pub const MAX_FORMS: usize = 8;

/// Mean first passage from one form to another.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Passage {
    /// From state (chain index).
    pub from: usize,
    /// To state (chain index).
    pub to: usize,
    /// Mean photons absorbed on the way.
    pub photons: f64,
    /// Mean time on the way, s (None when the chain carries no holding times).
    pub time: Option<f64>,
}

/// What the chain says about a molecule that never ends.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stationary {
    /// The states of the closed class, in chain order.
    pub class: Vec<usize>,
    /// Per chain state, its share of the jump chain's moves at the stationary state (0 outside
    /// the class).
    pub visits: Vec<f64>,
    /// Per chain state, its share of the time (0 outside the class): the photostationary
    /// composition one molecule sees. None when no state of the class has a holding time.
    pub time_share: Option<Vec<f64>>,
    /// Mean photons absorbed per move of the jump chain.
    pub photons_per_move: f64,
    /// Photons absorbed per s at the stationary state (None without holding times).
    pub photon_rate: Option<f64>,
    /// Switching events (changes of form) per s (None without holding times).
    pub switch_rate: Option<f64>,
    /// Photons absorbed per switching event (None when the molecule never changes form).
    pub photons_per_switch: Option<f64>,
    /// Share of the switching events begun by a photon (the rest by heat).
    pub light_share: Option<f64>,
    /// The forms (species of the class, or states of a hand-written chain) given first
    /// passages, largest time share (or visits) first, at most [`MAX_FORMS`].
    pub forms: Vec<usize>,
    /// The forms of the class left out of the first passages (beyond [`MAX_FORMS`]).
    pub forms_left_out: usize,
    /// Mean first passages between every ordered pair of `forms`.
    pub passages: Vec<Passage>,
}

fn is_form(chain: &Chain, i: usize) -> bool {
    matches!(chain.states[i].kind, StateKind::Species(_) | StateKind::Other)
}

/// The closed classes a molecule started from `start` can settle in, when it can reach no
/// absorbing state; None when an absorbing state is reachable (the chain has ends).
pub fn closed_classes(chain: &Chain, start: &[f64]) -> Option<Vec<Vec<usize>>> {
    let reach = chain.reachable(start);
    let n = chain.states.len();
    if (0..n).any(|i| reach[i] && chain.states[i].absorbing) {
        return None;
    }
    let mut g = DiGraph::<usize, ()>::with_capacity(n, chain.moves.len());
    let nodes: Vec<_> = (0..n).map(|i| g.add_node(i)).collect();
    for m in &chain.moves {
        if m.probability > 0.0 && reach[m.from] {
            g.add_edge(nodes[m.from], nodes[m.to], ());
        }
    }
    let sccs = petgraph::algo::tarjan_scc(&g);
    let mut classes = Vec::new();
    for scc in sccs {
        let members: Vec<usize> = scc.iter().map(|x| g[*x]).collect();
        if !reach[members[0]] {
            continue;
        }
        let mut inside = vec![false; n];
        members.iter().for_each(|&i| inside[i] = true);
        let leaves = chain
            .moves
            .iter()
            .any(|m| m.probability > 0.0 && inside[m.from] && !inside[m.to]);
        if !leaves {
            let mut c = members;
            c.sort_unstable();
            classes.push(c);
        }
    }
    classes.sort();
    Some(classes)
}

/// Photon probability of each state's ways out (the mean photons per move from it).
fn photon_share(chain: &Chain) -> Vec<f64> {
    let mut ph = vec![0.0; chain.states.len()];
    for m in &chain.moves {
        if m.photon {
            ph[m.from] += m.probability;
        }
    }
    ph
}

/// I − Q over the states `set` (local indices by `local`, usize::MAX outside).
fn i_minus_q(chain: &Chain, set: &[usize], local: &[usize]) -> Triplets {
    let m = set.len();
    let mut a = Triplets::new(m, m);
    for i in 0..m {
        a.push(i, i, 1.0);
    }
    for mv in &chain.moves {
        let (i, j) = (local[mv.from], local[mv.to]);
        if i != usize::MAX && j != usize::MAX && mv.probability != 0.0 {
            a.push(i, j, -mv.probability);
        }
    }
    a
}

fn local_of(n: usize, set: &[usize]) -> Vec<usize> {
    let mut local = vec![usize::MAX; n];
    for (k, &i) in set.iter().enumerate() {
        local[i] = k;
    }
    local
}

/// Analyse a chain in which a molecule started from `start` never ends: it must reach no
/// absorbing state and settle in exactly one closed class.
pub fn analyse(chain: &Chain, start: &[f64]) -> Result<Stationary> {
    let n = chain.states.len();
    if start.len() != n || start.iter().all(|&x| x <= 0.0) {
        return Err(Error::Numerical("the start must weigh some state of the chain".into()));
    }
    let classes = closed_classes(chain, start)
        .ok_or_else(|| Error::Numerical("the molecule can reach an end: use the absorbing analysis".into()))?;
    let class = match classes.len() {
        1 => classes.into_iter().next().unwrap_or_default(),
        0 => return Err(Error::Numerical("no closed class found".into())),
        _ => {
            let names: Vec<String> = classes
                .iter()
                .map(|c| {
                    c.iter()
                        .map(|&i| chain.states[i].name.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                })
                .collect();
            return Err(Error::Usage(format!(
                "a molecule from this start can settle in {} separate cycles ({}), so no one photostationary \
                 composition describes it; start from one of them with --from SPECIES",
                names.len(),
                names.join(" | ")
            )));
        }
    };
    let ph = photon_share(chain);
    // Stationary jump-chain shares: visits between returns to the first form of the class.
    let r = class.iter().copied().find(|&i| is_form(chain, i)).unwrap_or(class[0]);
    let rest: Vec<usize> = class.iter().copied().filter(|&i| i != r).collect();
    let local = local_of(n, &rest);
    let lu = Lu::new(&i_minus_q(chain, &rest, &local))?;
    let mut out_of_r = vec![0.0; rest.len()];
    for mv in chain.moves.iter().filter(|m| m.from == r) {
        if local[mv.to] != usize::MAX {
            out_of_r[local[mv.to]] += mv.probability;
        }
    }
    let v = lu.solve_transpose(&out_of_r)?;
    let mut visits = vec![0.0; n];
    visits[r] = 1.0;
    for (k, &i) in rest.iter().enumerate() {
        visits[i] = v[k].max(0.0);
    }
    let total: f64 = visits.iter().sum();
    visits.iter_mut().for_each(|x| *x /= total);
    let cycle_time: f64 = class.iter().map(|&i| visits[i] * chain.states[i].holding).sum();
    let timed = cycle_time > 0.0 && cycle_time.is_finite();
    let time_share = timed.then(|| {
        (0..n)
            .map(|i| visits[i] * chain.states[i].holding / cycle_time)
            .collect::<Vec<f64>>()
    });
    let photons_per_move: f64 = class.iter().map(|&i| visits[i] * ph[i]).sum();
    let (switches, by_light) = switching(chain, &class, &visits)?;
    let photons_per_switch = (switches > 0.0).then(|| photons_per_move / switches);
    let light_share = (switches > 0.0).then(|| (by_light / switches).clamp(0.0, 1.0));
    // The forms, by time share (or visits without times), largest first.
    let weight = |i: usize| time_share.as_ref().map_or(visits[i], |t| t[i]);
    let mut forms: Vec<usize> = class.iter().copied().filter(|&i| is_form(chain, i)).collect();
    forms.sort_by(|&a, &b| weight(b).total_cmp(&weight(a)).then(a.cmp(&b)));
    let forms_left_out = forms.len().saturating_sub(MAX_FORMS);
    forms.truncate(MAX_FORMS);
    let mut passages = Vec::new();
    for &b in &forms {
        let others: Vec<usize> = class.iter().copied().filter(|&i| i != b).collect();
        let local = local_of(n, &others);
        let lu = Lu::new(&i_minus_q(chain, &others, &local))?;
        let h_ph: Vec<f64> = others.iter().map(|&i| ph[i]).collect();
        let h_t: Vec<f64> = others.iter().map(|&i| chain.states[i].holding).collect();
        let m_ph = lu.solve(&h_ph)?;
        let m_t = lu.solve(&h_t)?;
        for &a in forms.iter().filter(|&&a| a != b) {
            passages.push(Passage {
                from: a,
                to: b,
                photons: m_ph[local[a]],
                time: timed.then(|| m_t[local[a]]),
            });
        }
    }
    passages.sort_by_key(|p| {
        (
            forms.iter().position(|&f| f == p.from),
            forms.iter().position(|&f| f == p.to),
        )
    });
    Ok(Stationary {
        class,
        time_share,
        photons_per_move,
        photon_rate: timed.then(|| photons_per_move / cycle_time),
        switch_rate: timed.then(|| switches / cycle_time),
        photons_per_switch,
        light_share,
        visits,
        forms,
        forms_left_out,
        passages,
    })
}

/// Switching events per jump-chain move at the stationary `visits`, and those begun by a photon.
fn switching(chain: &Chain, class: &[usize], visits: &[f64]) -> Result<(f64, f64)> {
    let n = chain.states.len();
    let trans: Vec<usize> = class.iter().copied().filter(|&i| !is_form(chain, i)).collect();
    let local = local_of(n, &trans);
    let lu = Lu::new(&i_minus_q(chain, &trans, &local))?;
    let (mut all, mut light) = (0.0, 0.0);
    for &i in class.iter().filter(|&&i| is_form(chain, i)) {
        // x: probability that a transient's path reaches form i before any other form.
        let x = if trans.is_empty() {
            Vec::new()
        } else {
            let mut b = vec![0.0; trans.len()];
            for mv in &chain.moves {
                if mv.to == i && local[mv.from] != usize::MAX {
                    b[local[mv.from]] += mv.probability;
                }
            }
            lu.solve(&b)?
        };
        let (mut back, mut back_photon, mut photon) = (0.0, 0.0, 0.0);
        for mv in chain.moves.iter().filter(|m| m.from == i) {
            let r = if mv.to == i {
                1.0
            } else if local[mv.to] != usize::MAX {
                x[local[mv.to]].clamp(0.0, 1.0)
            } else {
                0.0
            };
            back += mv.probability * r;
            if mv.photon {
                photon += mv.probability;
                back_photon += mv.probability * r;
            }
        }
        all += visits[i] * (1.0 - back).max(0.0);
        light += visits[i] * (photon - back_photon).max(0.0);
    }
    Ok((all, light))
}
