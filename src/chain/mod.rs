//! Photon accounting by absorbing Markov chain: follow one molecule through the network.
//!
//! States are the species and the transients of a compiled [`Model`](crate::model::Model);
//! moves are photon absorptions (from a species), thermal steps (from a species; bimolecular
//! ones linearised at stated partner concentrations) and transient channels. Species with no
//! way out, and species named as products, absorb the chain. [`build::build`] makes the chain
//! from the model; [`analyse`] works on any [`Chain`], so chains can also be written by hand.
//!
//! With Q the moves among transient (non-absorbing) states and R the moves into absorbing
//! states, the fundamental matrix N = (I − Q)⁻¹ is never formed: one sparse LU of (I − Q)
//! (faer) and a few transposed solves give, for a start distribution π,
//! visits v = Nᵀπ, yields B = Rᵀv, photon moments and the mean time. Splitting Q = Q₀ + Q₁
//! and R = R₀ + R₁ into non-photon and photon moves gives the photon-count distribution from
//! one LU of (I − Q₀) and a recursion in the number of photons n.
//!
//! Units: times in s, rates in s⁻¹; photon counts are per molecule followed.
//! No file I/O, no printing.

pub mod agreement;
pub mod build;
pub mod closed;
pub mod cycles;
pub mod drain;
pub mod lifetimes;
pub mod routes;
mod run;
pub mod sensitivity;
mod sparse;

pub use run::{
    ChainOptions, ChainRun, ClosedRun, Followed, SAMPLE_STATE, follow, light_words, run, settled_light_words,
};

use crate::error::{Error, Result};
use serde::Serialize;
use sparse::{Lu, Triplets};

/// What a state of the chain stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum StateKind {
    /// A species (index into the model's species).
    Species(usize),
    /// A transient (index into the network's transients).
    Transient(usize),
    /// Where a molecule goes when a step leaves nothing to follow.
    Removed,
    /// A state of a chain written by hand.
    Other,
}

/// A state of the chain.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct State {
    /// Display name.
    pub name: String,
    /// What it stands for.
    pub kind: StateKind,
    /// True for an absorbing state (a product, or a species with no way out).
    pub absorbing: bool,
    /// Mean time a molecule spends per visit, s (0 for transients given by fractions only).
    pub holding: f64,
}

/// What in the network a move stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Origin {
    /// Photochemical step p (index into the network's photochemical steps).
    Photo(usize),
    /// A photon absorbed with no reaction.
    NoReaction,
    /// Thermal reaction r of the model (index into `Model::reactions`, the network's thermal steps).
    Reaction(usize),
    /// Channel c of transient t.
    Channel(usize, usize),
    /// A move of a chain written by hand.
    Other,
}

/// One possible move of the molecule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Move {
    /// From state.
    pub from: usize,
    /// To state.
    pub to: usize,
    /// Probability of this move when the molecule leaves `from`.
    pub probability: f64,
    /// True when the move is the absorption of a photon.
    pub photon: bool,
    /// What it stands for in the network.
    pub origin: Origin,
}

/// A move whose repetitions are counted: a return channel (the molecule comes back to where a
/// photon found it) or an absorbed photon that changed nothing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Counted {
    /// Display label.
    pub label: String,
    /// Index into [`Chain::moves`].
    pub mv: usize,
}

/// An absorbing Markov chain over the states a molecule can be in.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Chain {
    /// The states.
    pub states: Vec<State>,
    /// The moves (several moves between the same two states add up).
    pub moves: Vec<Move>,
    /// Moves whose expected number of repetitions is reported.
    pub counted: Vec<Counted>,
    /// What was assumed in building the chain (linearisations, light model, start).
    pub notes: Vec<String>,
}

/// How much of the photon-count distribution to compute.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Options {
    /// Compute P(N = n) at all.
    pub distribution: bool,
    /// Stop once the probability not yet accounted for is below this.
    pub tail: f64,
    /// Never go beyond this many photons (the distribution is then marked truncated).
    pub max_photons: usize,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            distribution: true,
            tail: 1e-9,
            max_photons: 200_000,
        }
    }
}

/// The photon-count distribution: P(N = n, end in absorbing state k).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Distribution {
    /// `p[n][k]` for n = 0, 1, … and k over [`Analysis::absorbing`].
    pub p: Vec<Vec<f64>>,
    /// 1 − Σ p: the probability not yet accounted for at the last n.
    pub tail: f64,
    /// True when `max_photons` stopped the recursion before the tail bound was reached.
    pub truncated: bool,
}

/// What the chain says about a molecule started from a distribution over states.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Analysis {
    /// The start distribution over states.
    pub start: Vec<f64>,
    /// The absorbing states, in state order.
    pub absorbing: Vec<usize>,
    /// Probability of ending in each absorbing state (same order as `absorbing`).
    pub yields: Vec<f64>,
    /// Expected visits to each state (0 for absorbing states).
    pub visits: Vec<f64>,
    /// Expected repetitions of each counted move (same order as [`Chain::counted`]).
    pub counted: Vec<f64>,
    /// Mean photons absorbed before ending, conditional on ending in each absorbing state
    /// (None where the yield is zero).
    pub photons_mean: Vec<Option<f64>>,
    /// Variance of the same, photons².
    pub photons_variance: Vec<Option<f64>>,
    /// Mean photons absorbed per molecule followed, whatever it ends as.
    pub photons_total: f64,
    /// Mean time to absorption, s, conditional on each absorbing state.
    pub time_mean: Vec<Option<f64>>,
    /// Mean time to absorption per molecule followed, s.
    pub time_total: f64,
    /// The photon-count distribution, if asked for.
    pub distribution: Option<Distribution>,
}

impl Analysis {
    /// Overall quantum yield of absorbing state `k` (index into `absorbing`): molecules of it
    /// per photon absorbed, yield / mean photons per molecule followed (1 / mean photons when
    /// it is the only end). None when no photon is absorbed.
    pub fn quantum_yield(&self, k: usize) -> Option<f64> {
        (self.photons_total > 0.0).then(|| self.yields[k] / self.photons_total)
    }
}

impl Chain {
    /// Add a state; returns its index.
    pub fn add_state(&mut self, name: &str, kind: StateKind, absorbing: bool, holding: f64) -> usize {
        self.states.push(State {
            name: name.to_string(),
            kind,
            absorbing,
            holding,
        });
        self.states.len() - 1
    }

    /// Add a move; returns its index.
    pub fn add_move(&mut self, from: usize, to: usize, probability: f64, photon: bool) -> usize {
        self.add_move_from(from, to, probability, photon, Origin::Other)
    }

    /// Add a move standing for `origin` in the network; returns its index.
    pub fn add_move_from(&mut self, from: usize, to: usize, probability: f64, photon: bool, origin: Origin) -> usize {
        self.moves.push(Move {
            from,
            to,
            probability,
            photon,
            origin,
        });
        self.moves.len() - 1
    }

    /// The states a molecule can reach from the states with positive weight in `start`
    /// (themselves included), over moves of positive probability out of non-absorbing states.
    pub fn reachable(&self, start: &[f64]) -> Vec<bool> {
        let n = self.states.len();
        let mut out: Vec<Vec<usize>> = vec![Vec::new(); n];
        for m in &self.moves {
            if m.probability > 0.0 && m.from < n && m.to < n && !self.states[m.from].absorbing {
                out[m.from].push(m.to);
            }
        }
        let mut seen = vec![false; n];
        let mut stack: Vec<usize> = (0..n.min(start.len())).filter(|&i| start[i] > 0.0).collect();
        stack.iter().for_each(|&i| seen[i] = true);
        while let Some(i) = stack.pop() {
            for &j in &out[i] {
                if !seen[j] {
                    seen[j] = true;
                    stack.push(j);
                }
            }
        }
        seen
    }

    /// The states from which no absorbing state can be reached (a molecule there would cycle
    /// forever), by a reverse search from the absorbing states over moves of positive probability.
    pub fn stuck(&self) -> Vec<&str> {
        let n = self.states.len();
        let mut into: Vec<Vec<usize>> = vec![Vec::new(); n];
        for m in &self.moves {
            if m.probability > 0.0 && m.from < n && m.to < n && !self.states[m.from].absorbing {
                into[m.to].push(m.from);
            }
        }
        let mut reach: Vec<bool> = self.states.iter().map(|s| s.absorbing).collect();
        let mut stack: Vec<usize> = (0..n).filter(|&i| reach[i]).collect();
        while let Some(i) = stack.pop() {
            for &j in &into[i] {
                if !reach[j] {
                    reach[j] = true;
                    stack.push(j);
                }
            }
        }
        (0..n)
            .filter(|&i| !reach[i])
            .map(|i| self.states[i].name.as_str())
            .collect()
    }

    /// Check the chain: probabilities finite and in [0, 1], rows of transient states summing to
    /// one, and every transient state able to reach an absorbing one.
    pub fn validate(&self) -> Result<()> {
        let n = self.states.len();
        let mut sum = vec![0.0; n];
        for m in &self.moves {
            if m.from >= n || m.to >= n {
                return Err(Error::Numerical(format!(
                    "a move refers to state {} of {n}",
                    m.from.max(m.to)
                )));
            }
            if !(m.probability.is_finite() && (0.0..=1.0 + 1e-12).contains(&m.probability)) {
                return Err(Error::Numerical(format!(
                    "the move {} -> {} has probability {}",
                    self.states[m.from].name, self.states[m.to].name, m.probability
                )));
            }
            sum[m.from] += m.probability;
        }
        for (i, s) in self.states.iter().enumerate() {
            if !s.absorbing && (sum[i] - 1.0).abs() > 1e-9 {
                return Err(Error::Numerical(format!(
                    "the ways out of {} add up to {} instead of 1",
                    s.name, sum[i]
                )));
            }
        }
        let stuck = self.stuck();
        if !stuck.is_empty() {
            return Err(Error::Numerical(format!(
                "a molecule in {} can never reach a product or a species with no way out, so it would cycle \
                 forever; give one of them a way out or name a product",
                stuck.join(", ")
            )));
        }
        Ok(())
    }
}

/// The chain split into its transient and absorbing parts, with one LU of I − Q and the
/// visits and first photon moment's vector, shared by [`analyse`] and the sensitivities.
struct Solved {
    /// The start distribution, normalised.
    pi: Vec<f64>,
    /// The transient states (chain indices), in order.
    trans: Vec<usize>,
    /// The absorbing states (chain indices), in order.
    absorbing: Vec<usize>,
    /// Per chain state, its index among the transient or among the absorbing states.
    local: Vec<usize>,
    /// Non-photon moves among transient states, Q₀.
    q0: Triplets,
    /// Photon moves among transient states, Q₁.
    q1: Triplets,
    /// Non-photon moves into absorbing states, R₀.
    r0: Triplets,
    /// Photon moves into absorbing states, R₁.
    r1: Triplets,
    /// The start over the transient states.
    pi_t: Vec<f64>,
    /// The start over the absorbing states.
    pi_a: Vec<f64>,
    /// LU of I − Q.
    lu: Lu,
    /// Expected visits v = (I − Q)⁻ᵀ π over the transient states.
    v: Vec<f64>,
    /// u = (I − Q)⁻ᵀ Q₁ᵀ v, expected visits after a photon weighted by photons before.
    u: Vec<f64>,
}

/// Validate `chain`, index its states, factorise I − Q once and solve for v and u.
fn solve(chain: &Chain, start: &[f64]) -> Result<Solved> {
    chain.validate()?;
    let n = chain.states.len();
    if start.len() != n {
        return Err(Error::Numerical(format!(
            "the start has {} entries for {n} states",
            start.len()
        )));
    }
    let total: f64 = start.iter().sum();
    if !(total > 0.0 && total.is_finite()) || start.iter().any(|&x| x.is_nan() || x < 0.0) {
        return Err(Error::Numerical(
            "the start distribution must be non-negative and not all zero".into(),
        ));
    }
    let pi: Vec<f64> = start.iter().map(|x| x / total).collect();
    // Index the transient states 0..m and the absorbing ones 0..r.
    let mut local = vec![usize::MAX; n];
    let mut trans = Vec::new();
    let mut absorbing = Vec::new();
    for (i, s) in chain.states.iter().enumerate() {
        if s.absorbing {
            local[i] = absorbing.len();
            absorbing.push(i);
        } else {
            local[i] = trans.len();
            trans.push(i);
        }
    }
    let (m, r) = (trans.len(), absorbing.len());
    let mut q = [Triplets::new(m, m), Triplets::new(m, m)];
    let mut rr = [Triplets::new(m, r), Triplets::new(m, r)];
    for mv in &chain.moves {
        if chain.states[mv.from].absorbing || mv.probability == 0.0 {
            continue;
        }
        let (i, j) = (local[mv.from], local[mv.to]);
        let k = usize::from(mv.photon);
        if chain.states[mv.to].absorbing {
            rr[k].push(i, j, mv.probability);
        } else {
            q[k].push(i, j, mv.probability);
        }
    }
    let [q0, q1] = q;
    let [r0, r1] = rr;
    let pi_t: Vec<f64> = trans.iter().map(|&i| pi[i]).collect();
    let pi_a: Vec<f64> = absorbing.iter().map(|&i| pi[i]).collect();

    // (I − Q) with Q = Q₀ + Q₁.
    let mut a = Triplets::new(m, m);
    for i in 0..m {
        a.push(i, i, 1.0);
    }
    for (i, j, v) in q0.iter().chain(q1.iter()) {
        a.push(i, j, -v);
    }
    let lu = Lu::new(&a)?;
    let v = lu.solve_transpose(&pi_t)?; // visits
    let u = lu.solve_transpose(&q1.tmul(&v))?;
    Ok(Solved {
        pi,
        trans,
        absorbing,
        local,
        q0,
        q1,
        r0,
        r1,
        pi_t,
        pi_a,
        lu,
        v,
        u,
    })
}

/// Analyse `chain` for a molecule started from the distribution `start` over its states.
pub fn analyse(chain: &Chain, start: &[f64], opts: &Options) -> Result<Analysis> {
    let Solved {
        pi,
        trans,
        absorbing,
        q0,
        q1,
        r0,
        r1,
        pi_t,
        pi_a,
        lu,
        v,
        u,
        ..
    } = solve(chain, start)?;
    let (n, m, r) = (chain.states.len(), trans.len(), absorbing.len());
    let mut yields = r0.tmul(&v);
    add(&mut yields, &r1.tmul(&v));
    add(&mut yields, &pi_a);
    let z = lu.solve_transpose(&q1.tmul(&u))?;
    // m1_j = (Rᵀu)_j + (R₁ᵀv)_j ; m2_j (factorial) = 2 [(Rᵀz)_j + (R₁ᵀu)_j].
    let mut m1 = r0.tmul(&u);
    add(&mut m1, &r1.tmul(&u));
    add(&mut m1, &r1.tmul(&v));
    let mut m2 = r0.tmul(&z);
    add(&mut m2, &r1.tmul(&z));
    add(&mut m2, &r1.tmul(&u));
    m2.iter_mut().for_each(|x| *x *= 2.0);
    let tau: Vec<f64> = trans.iter().map(|&i| chain.states[i].holding).collect();
    let tv: Vec<f64> = v.iter().zip(&tau).map(|(a, b)| a * b).collect();
    let y = lu.solve_transpose(&tv)?;
    let mut t1 = r0.tmul(&y);
    add(&mut t1, &r1.tmul(&y));
    let cond = |x: f64, b: f64| (b > 0.0).then(|| x / b);
    let photons_mean: Vec<Option<f64>> = (0..r).map(|j| cond(m1[j], yields[j])).collect();
    let photons_variance: Vec<Option<f64>> = (0..r)
        .map(|j| {
            let mean = cond(m1[j], yields[j])?;
            Some(((m2[j] + m1[j]) / yields[j] - mean * mean).max(0.0))
        })
        .collect();
    let mut visits = vec![0.0; n];
    for (k, &i) in trans.iter().enumerate() {
        visits[i] = v[k].max(0.0);
    }
    let counted = chain
        .counted
        .iter()
        .map(|c| {
            let mv = &chain.moves[c.mv];
            visits[mv.from] * mv.probability
        })
        .collect();
    let distribution = if opts.distribution {
        Some(distribution(m, &q0, &q1, &r0, &r1, &pi_t, &pi_a, opts)?)
    } else {
        None
    };
    let time_mean = (0..r).map(|j| cond(t1[j], yields[j])).collect();
    Ok(Analysis {
        start: pi,
        yields,
        visits,
        counted,
        photons_total: m1.iter().sum(),
        photons_mean,
        photons_variance,
        time_total: t1.iter().sum(),
        time_mean,
        absorbing,
        distribution,
    })
}

fn add(a: &mut [f64], b: &[f64]) {
    a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
}

/// P(N = n, end k) by gₙ = (I − Q₀)⁻ᵀ Q₁ᵀ gₙ₋₁ (g₀ = (I − Q₀)⁻ᵀ π), P(n, ·) = R₀ᵀgₙ + R₁ᵀgₙ₋₁.
#[allow(clippy::too_many_arguments)]
fn distribution(
    m: usize,
    q0: &Triplets,
    q1: &Triplets,
    r0: &Triplets,
    r1: &Triplets,
    pi_t: &[f64],
    pi_a: &[f64],
    opts: &Options,
) -> Result<Distribution> {
    let mut a0 = Triplets::new(m, m);
    for i in 0..m {
        a0.push(i, i, 1.0);
    }
    for (i, j, v) in q0.iter() {
        a0.push(i, j, -v);
    }
    let lu0 = Lu::new(&a0)?;
    let mut g = lu0.solve_transpose(pi_t)?;
    let mut first = r0.tmul(&g);
    add(&mut first, pi_a);
    let mut acc: f64 = first.iter().sum();
    let mut p = vec![first];
    let mut truncated = false;
    while 1.0 - acc > opts.tail {
        if p.len() > opts.max_photons {
            truncated = true;
            break;
        }
        let next = lu0.solve_transpose(&q1.tmul(&g))?;
        let mut row = r0.tmul(&next);
        add(&mut row, &r1.tmul(&g));
        let s: f64 = row.iter().sum();
        acc += s;
        p.push(row);
        g = next;
        // Guard against a floor set by rounding: nothing left to move.
        if s == 0.0 && g.iter().all(|&x| x.abs() < 1e-300) {
            break;
        }
    }
    Ok(Distribution {
        p,
        tail: (1.0 - acc).max(0.0),
        truncated,
    })
}

/// A reproducible sparse chain of `states` transient states and three absorbing ones, for
/// timing, shaped like a long reaction path: from state i, a photon move on to i + 1 (0.55; the
/// last state's goes to an end), a non-photon move back to one of the 32 states before it, chosen
/// by a fixed hash of i (0.35), a photon move back to i (0.05), and an end (0.05).
pub fn generated(states: usize) -> Chain {
    let n = states.max(1);
    let mut c = Chain::default();
    for i in 0..n {
        c.add_state(&format!("s{i}"), StateKind::Other, false, 1.0);
    }
    let ends: Vec<usize> = (0..3)
        .map(|k| c.add_state(&format!("end{k}"), StateKind::Other, true, 0.0))
        .collect();
    for i in 0..n {
        let h = ((i as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 17) as usize;
        let next = if i + 1 < n { i + 1 } else { ends[0] };
        c.add_move(i, next, 0.55, true);
        c.add_move(i, i.saturating_sub(1 + h % 32), 0.35, false);
        c.add_move(i, i, 0.05, true);
        c.add_move(i, ends[i % 3], 0.05, false);
    }
    c
}
