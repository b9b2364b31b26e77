//! The main routes of a chain that ends: loop-erased paths from the start to each end, with
//! their probabilities.
//!
//! The route of one molecule is its path with every loop erased in the order the loops close
//! (chronological loop erasure: a photon absorbed with no reaction, a return through a hot
//! ground state, a detour and back all vanish). Given the first states γ₀…γⱼ of the route, the
//! next move is m (from γⱼ to y) with probability ∝ p_m h(y), h(y) being the probability of
//! reaching the end from y before coming back to any of γ₀…γⱼ (h = 1 at the end, 0 at the other
//! ends and on γ₀…γⱼ): the loop-erased walk is the walk's "Laplacian" walk (Lawler,
//! Intersections of Random Walks, 1991, ch. 7, for Markov chains in general). The probability
//! of a route is the product of these steps times the probability of reaching the end from the
//! start, so the probabilities of all routes to an end sum to its yield, and a route's
//! probability never exceeds that of its first states: a best-first search over first states
//! lists the routes in falling probability. One sparse LU of I − Q serves every step: the
//! probabilities of reaching the end while avoiding the route so far come from the unrestricted
//! ones through the Green's function's columns at the route's states (a small dense solve).
//!
//! No file I/O, no printing.

use super::sparse::{Lu, Triplets};
use super::{Chain, Origin, StateKind};
use crate::barrier::{Outcome, Verdict};
use crate::error::{Error, Result};
use crate::network::{Network, TransientKind};
use nalgebra::{DMatrix, DVector};
use serde::Serialize;
use std::cmp::Ordering;
use std::collections::BinaryHeap;
use std::collections::HashMap;

/// How far to search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RouteOptions {
    /// Stop an end's list once its routes cover this share of its yield.
    pub cover: f64,
    /// At most this many routes per end.
    pub max_routes: usize,
    /// At most this many extended routes (one LU each) per end.
    pub budget: usize,
    /// Ends with a yield below this share of the largest are not searched.
    pub min_yield: f64,
}

impl Default for RouteOptions {
    /// 99 % of each yield or the top ten routes, 2000 steps of search per end, ends with at
    /// least 1e-6 of the largest yield.
    fn default() -> Self {
        RouteOptions {
            cover: 0.99,
            max_routes: 10,
            budget: 2000,
            min_yield: 1e-6,
        }
    }
}

/// One route: the moves taken, loops erased.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Route {
    /// The state it starts from.
    pub start: usize,
    /// Indices into [`Chain::moves`], in order.
    pub moves: Vec<usize>,
    /// Probability that a molecule followed takes this route (and ends at its end).
    pub probability: f64,
}

/// The main routes to one end.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EndRoutes {
    /// The end (chain state).
    pub end: usize,
    /// Its yield.
    pub yield_fraction: f64,
    /// The routes found, most probable first.
    pub routes: Vec<Route>,
    /// Σ of their probabilities.
    pub covered: f64,
    /// Why the list stops: "covered" (99 % of the yield), "top" (the route limit), "budget"
    /// (the search limit), or "all" (every route listed).
    pub stopped: &'static str,
}

struct Node {
    p: f64,
    states: Vec<usize>,
    moves: Vec<usize>,
    done: bool,
}

impl PartialEq for Node {
    fn eq(&self, o: &Self) -> bool {
        self.p == o.p
    }
}
impl Eq for Node {}
impl PartialOrd for Node {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Node {
    fn cmp(&self, o: &Self) -> Ordering {
        // ties: complete routes first, then shorter ones
        self.p
            .total_cmp(&o.p)
            .then(self.done.cmp(&o.done))
            .then(o.moves.len().cmp(&self.moves.len()))
            .then(o.states.cmp(&self.states))
    }
}

/// The Green's function G = (I − Q)⁻¹ of the whole chain, column by column as asked for
/// (one solve on the one LU each), so the probability of reaching an end while avoiding a set S
/// comes from the unrestricted one: h_S = h − G[:, S] G[S, S]⁻¹ h[S] (the inverse of a principal
/// block of I − Q as a Schur complement of its inverse).
struct Green {
    /// Chain state -> local index among the non-absorbing states (usize::MAX for absorbing).
    local: Vec<usize>,
    lu: Lu,
    columns: HashMap<usize, Vec<f64>>,
}

impl Green {
    fn new(chain: &Chain) -> Result<Green> {
        let mut local = vec![usize::MAX; chain.states.len()];
        let mut m = 0;
        for (l, s) in local.iter_mut().zip(&chain.states) {
            if !s.absorbing {
                *l = m;
                m += 1;
            }
        }
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
        Ok(Green {
            local,
            lu: Lu::new(&a)?,
            columns: HashMap::new(),
        })
    }

    /// Probability of reaching `end` from each state (0 on absorbing states but `end`).
    fn reach(&self, chain: &Chain, end: usize) -> Result<Vec<f64>> {
        let m = self.local.iter().filter(|&&l| l != usize::MAX).count();
        let mut b = vec![0.0; m];
        for mv in &chain.moves {
            let i = self.local[mv.from];
            if i != usize::MAX && mv.to == end {
                b[i] += mv.probability;
            }
        }
        let x = self.lu.solve(&b)?;
        let mut h = vec![0.0; chain.states.len()];
        for (i, &l) in self.local.iter().enumerate() {
            if l != usize::MAX {
                h[i] = x[l].clamp(0.0, 1.0);
            }
        }
        h[end] = 1.0;
        Ok(h)
    }

    /// Column `s` of G (chain state `s`, non-absorbing), by local index.
    fn column(&mut self, s: usize) -> Result<&Vec<f64>> {
        if !self.columns.contains_key(&s) {
            let m = self.local.iter().filter(|&&l| l != usize::MAX).count();
            let mut e = vec![0.0; m];
            e[self.local[s]] = 1.0;
            let c = self.lu.solve(&e)?;
            self.columns.insert(s, c);
        }
        Ok(&self.columns[&s])
    }

    /// h at each of `targets` for a walk killed on entering `removed` (non-absorbing states),
    /// from h, the unkilled probabilities.
    fn avoiding(&mut self, h: &[f64], removed: &[usize], targets: &[usize]) -> Result<Vec<f64>> {
        let k = removed.len();
        for &s in removed {
            self.column(s)?;
        }
        let g = |this: &Self, row: usize, col: usize| this.columns[&col][this.local[row]];
        let gss = DMatrix::from_fn(k, k, |a, b| g(self, removed[a], removed[b]));
        let hs = DVector::from_iterator(k, removed.iter().map(|&s| h[s]));
        let z = gss
            .lu()
            .solve(&hs)
            .ok_or_else(|| Error::Numerical("a route's block of the Green's function is singular".into()))?;
        Ok(targets
            .iter()
            .map(|&y| {
                if self.local[y] == usize::MAX {
                    return h[y];
                }
                let c: f64 = (0..k).map(|a| g(self, y, removed[a]) * z[a]).sum();
                (h[y] - c).clamp(0.0, 1.0)
            })
            .collect())
    }
}

/// The main routes from `start` (a distribution over the chain's states) to every end in
/// `ends` (chain states, with their `yields`).
pub fn routes(
    chain: &Chain,
    start: &[f64],
    ends: &[usize],
    yields: &[f64],
    opts: &RouteOptions,
) -> Result<Vec<EndRoutes>> {
    let n = chain.states.len();
    let total: f64 = start.iter().sum();
    let largest = yields.iter().copied().fold(0.0, f64::max);
    let mut out_moves: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (k, m) in chain.moves.iter().enumerate() {
        if m.probability > 0.0 && !chain.states[m.from].absorbing {
            out_moves[m.from].push(k);
        }
    }
    let mut green = Green::new(chain)?;
    let mut all = Vec::new();
    for (&end, &y) in ends.iter().zip(yields) {
        if !(y > 0.0 && y >= opts.min_yield * largest) {
            continue;
        }
        let h0 = green.reach(chain, end)?;
        let mut heap = BinaryHeap::new();
        for (s, &w) in start.iter().enumerate() {
            let p = w / total * if s == end { 1.0 } else { h0[s] };
            if p > 0.0 && (s == end || !chain.states[s].absorbing) {
                heap.push(Node {
                    p,
                    states: vec![s],
                    moves: Vec::new(),
                    done: s == end,
                });
            }
        }
        let mut found: Vec<Route> = Vec::new();
        let mut covered = 0.0;
        let mut steps = 0;
        let stopped = loop {
            if covered >= opts.cover * y {
                break "covered";
            }
            if found.len() >= opts.max_routes {
                break "top";
            }
            let Some(node) = heap.pop() else {
                break "all";
            };
            if node.done {
                covered += node.p;
                found.push(Route {
                    start: node.states[0],
                    moves: node.moves,
                    probability: node.p,
                });
                continue;
            }
            if steps >= opts.budget {
                break "budget";
            }
            steps += 1;
            let here = *node.states.last().unwrap_or(&0);
            let mut removed = vec![false; n];
            node.states.iter().for_each(|&i| removed[i] = true);
            let targets: Vec<usize> = out_moves[here]
                .iter()
                .map(|&k| chain.moves[k].to)
                .filter(|&y| !removed[y] && !chain.states[y].absorbing)
                .collect();
            let hy = green.avoiding(&h0, &node.states, &targets)?;
            let weight = |k: usize| {
                let m = &chain.moves[k];
                if m.to == end {
                    m.probability
                } else if removed[m.to] || chain.states[m.to].absorbing {
                    0.0
                } else {
                    targets
                        .iter()
                        .position(|&y| y == m.to)
                        .map_or(0.0, |i| m.probability * hy[i])
                }
            };
            let sum: f64 = out_moves[here].iter().map(|&k| weight(k)).sum();
            if sum <= 0.0 {
                continue;
            }
            for &k in &out_moves[here] {
                let w = weight(k);
                if w <= 0.0 {
                    continue;
                }
                let to = chain.moves[k].to;
                let mut states = node.states.clone();
                states.push(to);
                let mut moves = node.moves.clone();
                moves.push(k);
                heap.push(Node {
                    p: node.p * w / sum,
                    states,
                    moves,
                    done: to == end,
                });
            }
        };
        all.push(EndRoutes {
            end,
            yield_fraction: y,
            routes: found,
            covered,
            stopped,
        });
    }
    Ok(all)
}

/// What a route needs, judged against a time window.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Judgement {
    /// Photons absorbed on the route.
    pub photons: usize,
    /// The excited-state transients it passes through (excited states and intersections).
    pub excited: Vec<String>,
    /// Each thermal step on the route: (name, crosses within the window, the verdict in words).
    pub thermal: Vec<(String, bool, String)>,
    /// "light": it needs a photon, so it passes through an excited state; "ground": every step
    /// is thermal and crosses within the window; "too slow": every step is thermal, and one or
    /// more does not cross within the window; "undetermined": a thermal step has no rate.
    pub verdict: &'static str,
}

/// Judge `route` of `chain` (built from `net`) with the barrier verdicts of the network's
/// thermal steps (`verdicts[r]` for thermal step r, as [`crate::barrier::network_verdicts`]
/// lists them first).
pub fn judge(chain: &Chain, net: &Network, route: &Route, verdicts: &[Verdict]) -> Judgement {
    let mut photons = 0;
    let mut excited: Vec<String> = Vec::new();
    let mut thermal = Vec::new();
    let (mut slow, mut open) = (false, false);
    for &k in &route.moves {
        let m = &chain.moves[k];
        if m.photon {
            photons += 1;
        }
        if let StateKind::Transient(t) = chain.states[m.to].kind
            && net
                .transients
                .get(t)
                .is_some_and(|x| matches!(x.kind, TransientKind::Excited | TransientKind::Intersection))
            && !excited.contains(&chain.states[m.to].name)
        {
            excited.push(chain.states[m.to].name.clone());
        }
        if let Origin::Reaction(r) = m.origin
            && let Some(v) = verdicts.get(r)
        {
            let name = net.thermal.get(r).map_or_else(|| v.name.clone(), |s| s.name.clone());
            match v.outcome() {
                Outcome::Crosses => {}
                Outcome::TooSlow => slow = true,
                Outcome::Undetermined => open = true,
            }
            thermal.push((name, v.crosses(), v.words()));
        }
    }
    let verdict = if photons > 0 {
        "light"
    } else if slow {
        "too slow"
    } else if open {
        "undetermined"
    } else {
        "ground"
    };
    Judgement {
        photons,
        excited,
        thermal,
        verdict,
    }
}
