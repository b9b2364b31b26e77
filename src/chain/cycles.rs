//! Switching cycles before a molecule is lost (fatigue): for a chain that ends, the number of
//! round trips from one form through other forms and back before the molecule reaches an end.
//!
//! The form A is a species that lies on a cycle through another species (a strongly connected
//! set of non-absorbing states holding at least two species): the one named with `--from`, or
//! else the one the molecule visits most. A cycle is completed each time the molecule arrives
//! at A having last been at another form. Transients are shared between forms (a common
//! intersection, say), so the chain is doubled over them: each transient is kept once for "the
//! last form was A" and once for "the last form was another", and the moves into A from the
//! second copy and from the other forms are the counted moves. On that chain the photon-count
//! machinery of [`super::analyse`] counts cycles instead of photons: the mean and variance from
//! the same solves, and P(K = n) from the same recursion. Every return to A starts the
//! molecule afresh, so K is geometric, P(K = n) = rⁿ (1 − r) with r = mean / (1 + mean): the
//! recursion is an independent check of that.
//!
//! No file I/O, no printing.

use super::{Analysis, Chain, Options, StateKind};
use crate::error::Result;
use petgraph::graph::DiGraph;
use serde::Serialize;

/// The cycles a molecule of one form completes before it ends.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cycles {
    /// The form the cycles start from and return to (chain state).
    pub form: usize,
    /// The other forms on its cycles (chain states).
    pub partners: Vec<usize>,
    /// Mean number of completed cycles before the molecule ends, per molecule of `form`.
    pub mean: f64,
    /// Variance of the same.
    pub variance: f64,
    /// Per end (chain state): probability of ending there from `form`, and the mean number of
    /// cycles of the molecules that end there (None where that probability is zero).
    pub ends: Vec<(usize, f64, Option<f64>)>,
    /// P(K = n), n = 0, 1, … (empty when not computed).
    pub distribution: Vec<f64>,
    /// Probability beyond the last n of `distribution`.
    pub tail: f64,
    /// True when the distribution stopped at its count limit before its tail bound.
    pub truncated: bool,
}

impl Cycles {
    /// The smallest n with P(K ≤ n) ≥ q (None when the distribution stops before it).
    pub fn quantile(&self, q: f64) -> Option<usize> {
        let mut acc = 0.0;
        for (n, p) in self.distribution.iter().enumerate() {
            acc += p;
            if acc >= q {
                return Some(n);
            }
        }
        None
    }
}

/// The form whose cycles are counted: `from` if it lies on a cycle through another species,
/// else the species on such a cycle with the most `visits`; with the other species of its cycle.
pub fn form(chain: &Chain, visits: &[f64], from: Option<usize>) -> Option<(usize, Vec<usize>)> {
    let n = chain.states.len();
    let species = |i: usize| matches!(chain.states[i].kind, StateKind::Species(_) | StateKind::Other);
    let mut g = DiGraph::<usize, ()>::with_capacity(n, chain.moves.len());
    let nodes: Vec<_> = (0..n).map(|i| g.add_node(i)).collect();
    for m in &chain.moves {
        if m.probability > 0.0 && !chain.states[m.from].absorbing && !chain.states[m.to].absorbing {
            g.add_edge(nodes[m.from], nodes[m.to], ());
        }
    }
    // Every species on a cycle through another species, with the species of its cycle.
    let mut candidates: Vec<(usize, Vec<usize>)> = Vec::new();
    for scc in petgraph::algo::tarjan_scc(&g) {
        let forms: Vec<usize> = scc.iter().map(|x| g[*x]).filter(|&i| species(i)).collect();
        if forms.len() < 2 {
            continue;
        }
        for &f in &forms {
            let mut partners: Vec<usize> = forms.iter().copied().filter(|&i| i != f).collect();
            partners.sort_unstable();
            candidates.push((f, partners));
        }
    }
    if let Some(f) = from
        && let Some(c) = candidates.iter().find(|c| c.0 == f)
    {
        return Some(c.clone());
    }
    candidates
        .into_iter()
        .max_by(|a, b| visits[a.0].total_cmp(&visits[b.0]).then(b.0.cmp(&a.0)))
}

/// Count the cycles of `form` (see [`form`]) before a molecule of it ends. `opts` bounds the
/// distribution as it does the photon counts.
pub fn cycles(chain: &Chain, form: usize, partners: Vec<usize>, opts: &Options) -> Result<Cycles> {
    let (doubled, start) = doubled(chain, form);
    let a: Analysis = super::analyse(&doubled, &start, opts)?;
    let mean = a.photons_total;
    let second: f64 = (0..a.yields.len())
        .map(|k| match (a.photons_mean[k], a.photons_variance[k]) {
            (Some(m), Some(v)) => a.yields[k] * (v + m * m),
            _ => 0.0,
        })
        .sum();
    let ends = a
        .absorbing
        .iter()
        .enumerate()
        .map(|(k, &s)| (s, a.yields[k], a.photons_mean[k]))
        .collect();
    let (distribution, tail, truncated) = match a.distribution {
        Some(d) => (d.p.iter().map(|r| r.iter().sum()).collect(), d.tail, d.truncated),
        None => (Vec::new(), 1.0, false),
    };
    Ok(Cycles {
        form,
        partners,
        mean,
        variance: (second - mean * mean).max(0.0),
        ends,
        distribution,
        tail,
        truncated,
    })
}

/// The chain doubled over its transients (last form A or another), with the moves that
/// complete a cycle marked as the counted ("photon") moves, and the start at `form`. Absorbing
/// states keep their chain index, so [`Analysis::absorbing`] names the original ends.
fn doubled(chain: &Chain, form: usize) -> (Chain, Vec<f64>) {
    let n = chain.states.len();
    let is_transient = |i: usize| matches!(chain.states[i].kind, StateKind::Transient(_));
    // copy[i]: the doubled chain's state for (i, last form A); second[i] for (i, another form).
    let mut c = Chain::default();
    for s in &chain.states {
        c.add_state(&s.name, s.kind, s.absorbing, s.holding);
    }
    let mut second = vec![usize::MAX; n];
    for i in (0..n).filter(|&i| is_transient(i) && !chain.states[i].absorbing) {
        let s = &chain.states[i];
        second[i] = c.add_state(&format!("{} (after another form)", s.name), s.kind, false, s.holding);
    }
    for m in &chain.moves {
        if chain.states[m.from].absorbing {
            continue;
        }
        let sources: Vec<(usize, bool)> = if is_transient(m.from) {
            vec![(m.from, false), (second[m.from], true)]
        } else {
            vec![(m.from, m.from != form)]
        };
        for (src, other) in sources {
            let to = if is_transient(m.to) && other {
                second[m.to]
            } else {
                m.to
            };
            let completes = m.to == form && other;
            c.add_move_from(src, to, m.probability, completes, m.origin);
        }
    }
    let mut start = vec![0.0; c.states.len()];
    start[form] = 1.0;
    (c, start)
}
