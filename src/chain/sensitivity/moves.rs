//! ∂(move probability)/∂(parameter), exactly, from how each parameter enters the chain's rows.
//!
//! A species' row is its ways out normalised by their total, P_e = ρ_e/T with T = Σ ρ. Every
//! rate is proportional to its one parameter θ (a yield factor or a rate constant), so
//! ∂ρ_e/∂θ = ρ_e/θ, and ∂P_e/∂θ = ∂ρ_e/T − ρ_e (Σ ∂ρ)/T². A yield factor moves the light that
//! does nothing the other way (what the steps leave of the absorber's absorption), so its row
//! total stays put; at the upper bound, where nothing is left and the chain has no such move,
//! that move is still differentiated (the derivative from below). A transient's row is the
//! shares of its channels, differentiated by [`ShareTotals::share_derivative`] (the one rule
//! of the model), times [partner] for a quenching constant.

use crate::chain::build::{Parameter, Parts, Slot, Source, Values, channel_input, channel_target};
use crate::chain::{Chain, StateKind};
use crate::model::Model;
use crate::model::transients::ShareTotals;
use crate::network::Network;

/// One entry of ∂P/∂θ: the probability of the move `from` → `to` changes by `d` per unit of θ.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct DMove {
    /// From state (chain index).
    pub from: usize,
    /// To state (chain index).
    pub to: usize,
    /// True for a photon absorption.
    pub photon: bool,
    /// ∂P/∂θ.
    pub d: f64,
}

/// Which ways out each parameter moves, found once for all parameters.
pub(super) struct Index {
    /// Per model reaction: (species, way out) it is.
    by_reaction: Vec<Vec<(usize, usize)>>,
    /// Per photochemical step: (absorber species, way out) it is.
    by_step: Vec<Option<(usize, usize)>>,
    /// Per species: its way out by light absorbed with no reaction, if the chain has one.
    no_reaction: Vec<Option<usize>>,
    /// The removed state, if the chain has one.
    removed: Option<usize>,
}

impl Index {
    /// Index the ways out in `parts` (of `chain`, built from a model with `reactions` reactions
    /// and a network with `steps` photochemical steps).
    pub(super) fn of(parts: &Parts, chain: &Chain, reactions: usize, steps: usize) -> Index {
        let mut by_reaction = vec![Vec::new(); reactions];
        let mut by_step = vec![None; steps];
        let mut no_reaction = vec![None; parts.exits.len()];
        for (i, ex) in parts.exits.iter().enumerate() {
            for (e, x) in ex.iter().enumerate() {
                match x.source {
                    Source::Reaction(r) => by_reaction[r].push((i, e)),
                    Source::Photo(p) => by_step[p] = Some((i, e)),
                    Source::NoReaction => no_reaction[i] = Some(e),
                }
            }
        }
        let removed = chain.states.iter().position(|s| s.kind == StateKind::Removed);
        Index {
            by_reaction,
            by_step,
            no_reaction,
            removed,
        }
    }
}

/// The nonzero entries of ∂P/∂θ for parameter `p` at `values` (those the chain was built with).
pub(super) fn derivative(
    p: &Parameter,
    model: &Model,
    net: &Network,
    values: &Values,
    chain: &Chain,
    parts: &Parts,
    index: &Index,
) -> Vec<DMove> {
    let mut out = Vec::new();
    let theta = values.get(p.slot);
    if !(theta > 0.0 && theta.is_finite()) {
        return out;
    }
    match p.slot {
        Slot::YieldFactor(step) => {
            if let Some((a, e)) = index.by_step[step] {
                let d = parts.exits[a][e].rate / theta;
                // The light that does nothing gives way: −d, on the move a → a (added here when
                // the chain has no such move, at the bound: usize::MAX matches no way out).
                let rest = index.no_reaction[a].unwrap_or(usize::MAX);
                row(a, &[(e, d), (rest, -d)], chain, parts, index, &mut out);
                if index.no_reaction[a].is_none() && !chain.states[a].absorbing {
                    let total: f64 = parts.exits[a].iter().map(|x| x.rate).sum();
                    out.push(DMove {
                        from: a,
                        to: a,
                        photon: true,
                        d: -d / total,
                    });
                }
            }
        }
        Slot::Reaction(r) => {
            // One way out per reactant species; group them by species (rows).
            let ways = &index.by_reaction[r];
            let mut k = 0;
            while k < ways.len() {
                let s = ways[k].0;
                let mut changes = Vec::new();
                while k < ways.len() && ways[k].0 == s {
                    let e = ways[k].1;
                    changes.push((e, parts.exits[s][e].rate / theta));
                    k += 1;
                }
                row(s, &changes, chain, parts, index, &mut out);
            }
        }
        Slot::Channel(t, c) => {
            let ns = model.n_species();
            let tr = &net.transients[t];
            let vals = &values.channel[t];
            let inputs: Vec<_> = tr
                .channels
                .iter()
                .enumerate()
                .map(|(ci, ch)| channel_input(&ch.branching, vals[ci], &parts.c))
                .collect();
            let totals = ShareTotals::of(inputs.iter().copied());
            // ∂(input of c)/∂θ: 1, or [partner] for a quenching constant.
            let factor = match tr.channels[c].branching {
                crate::network::Branching::Quenching { partner, .. } => parts.c[partner].max(0.0),
                _ => 1.0,
            };
            for (j, ch) in tr.channels.iter().enumerate() {
                let d = factor * totals.share_derivative(inputs[j], j == c, inputs[c]);
                let to = channel_target(ns, &ch.target).or(index.removed);
                if let (Some(to), true) = (to, d != 0.0) {
                    out.push(DMove {
                        from: ns + t,
                        to,
                        photon: false,
                        d,
                    });
                }
            }
        }
    }
    out
}

/// The entries of ∂P/∂θ of species `s`'s row, when its ways out `changes` (way out, ∂ρ/∂θ) move.
fn row(s: usize, changes: &[(usize, f64)], chain: &Chain, parts: &Parts, index: &Index, out: &mut Vec<DMove>) {
    if chain.states[s].absorbing {
        return;
    }
    let ex = &parts.exits[s];
    let total: f64 = ex.iter().map(|x| x.rate).sum();
    if total <= 0.0 {
        return;
    }
    let dtotal: f64 = changes.iter().map(|c| c.1).sum();
    for (e, x) in ex.iter().enumerate() {
        let own: f64 = changes.iter().filter(|c| c.0 == e).map(|c| c.1).sum();
        // Each ratio taken alone: total² underflows to zero for rates near the smallest
        // doubles (a starting absorbance of 1e298 leaves 1e-302 /s of light per molecule),
        // which made 0/0 = NaN of a derivative that is finite.
        let d = own / total - (x.rate / total) * (dtotal / total);
        let Some(to) = x.to.or(index.removed) else {
            continue;
        };
        if d != 0.0 {
            out.push(DMove {
                from: s,
                to,
                photon: x.photon,
                d,
            });
        }
    }
}
