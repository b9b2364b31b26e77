//! What the finite number of trajectories alone does to the chain's answers: the branching of
//! every transient given as trajectory counts is drawn from its Dirichlet (nothing else moves),
//! the chain is run for each draw as `ledger` runs it, and the 95 % interval of each yield and
//! of the photons absorbed per product is read from the draws; then how many more trajectories
//! would halve the widest interval.
//!
//! Halving: the Dirichlet's sd of every share scales as 1/√(α₀ + 1) (α₀ = n + K·a for n runs
//! over K channels with prior a; Kotz, Balakrishnan & Johnson, Continuous Multivariate
//! Distributions, 2000, ch. 49), so halving it needs α₀ + 1 four times larger, at the same
//! shares. The interval at those counts is drawn again to show what it would be.

use super::evidence::{self, Basis};
use super::spec::{Distribution, Parameter};
use super::{Space, stats};
use crate::chain::{self, ChainOptions, StateKind};
use crate::error::Result;
use crate::model::Model;
use crate::network::Network;
use crate::network::params::Key;
use rayon::prelude::*;
use serde::Serialize;

/// Draws of the counts' Dirichlet for the intervals.
pub const DRAWS: usize = 2000;

/// Seed of the draws (fixed, so `ledger` prints the same numbers each run).
pub const SEED: u64 = 1;

/// Probability held by each interval.
pub const LEVEL: f64 = 0.95;

/// One output's interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Interval {
    /// "yield" (chance a molecule followed ends as the product) or "photons_per" (photons
    /// absorbed per molecule of it made).
    pub output: String,
    /// The product.
    pub product: String,
    /// The value at the count shares.
    pub value: f64,
    /// Lower end of the central 95 % interval.
    pub low: f64,
    /// Upper end.
    pub high: f64,
}

impl Interval {
    /// Width over the value (the comparison between outputs of different kinds).
    pub fn relative_width(&self) -> f64 {
        (self.high - self.low) / self.value.abs()
    }
}

/// The counts of one transient and the runs it would take to halve the widest interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Transient {
    /// Its name.
    pub name: String,
    /// Runs per channel.
    pub runs: Vec<u64>,
    /// Runs that reached no channel.
    pub unfinished: u64,
    /// The prior in words.
    pub prior: String,
    /// Runs reaching a channel needed for the halving (same shares).
    pub finished_needed: u64,
    /// More runs to start for that, counting those that will end nowhere at today's rate.
    pub more_runs: u64,
}

/// The intervals from the counts alone.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CountIntervals {
    /// Draws.
    pub draws: usize,
    /// Seed.
    pub seed: u64,
    /// Probability held by each interval.
    pub level: f64,
    /// The transients with counts.
    pub transients: Vec<Transient>,
    /// One interval per product and output.
    pub intervals: Vec<Interval>,
    /// Index of the widest interval (relative to its value).
    pub widest: Option<usize>,
    /// The widest output's interval drawn again with every transient at its needed runs.
    pub widest_after: Option<(f64, f64)>,
    /// Draws the chain could not evaluate.
    pub failed: usize,
}

/// The intervals of `net` from its trajectory counts, with the chain run as `opts` say (the
/// distribution and sensitivities are not computed); None when no transient has counts.
pub fn intervals(net: &Network, opts: &ChainOptions) -> Result<Option<CountIntervals>> {
    let params: Vec<Parameter> = evidence::entries(net, &[])
        .into_iter()
        .filter(|e| matches!(e.basis, Basis::Counts { .. }))
        .filter_map(|e| e.parameter)
        .collect();
    if params.is_empty() {
        return Ok(None);
    }
    let mut opts = opts.clone();
    opts.sensitivities = false;
    opts.analysis.distribution = false;
    let keys: Vec<Key> = params
        .iter()
        .map(|p| Key::parse(net, &p.key))
        .collect::<std::result::Result<_, _>>()
        .map_err(crate::error::Error::Usage)?;
    let model = Model::compile(net);
    let nominal = chain::run(&model, net, &opts)?;
    let products: Vec<String> = nominal
        .analysis
        .absorbing
        .iter()
        .enumerate()
        .filter(|&(k, &s)| {
            matches!(nominal.chain.states[s].kind, StateKind::Species(_)) && nominal.analysis.yields[k] > 1e-12
        })
        .map(|(_, &s)| nominal.chain.states[s].name.clone())
        .collect();
    let read = |run: &chain::ChainRun| -> Vec<f64> {
        let an = &run.analysis;
        let mut v = Vec::with_capacity(2 * products.len());
        for p in &products {
            let y = an
                .absorbing
                .iter()
                .position(|&s| run.chain.states[s].name == *p)
                .map_or(0.0, |k| an.yields[k]);
            v.push(y);
            v.push(if y > 0.0 { an.photons_total / y } else { f64::INFINITY });
        }
        v
    };
    let values = read(&nominal);
    let sample = |space: &Space| -> (Vec<Vec<f64>>, usize) {
        let runs: Vec<Option<Vec<f64>>> = (0..DRAWS)
            .into_par_iter()
            .map(|i| {
                let drawn = space.draw(SEED, i as u64);
                let typed: Vec<(Key, f64)> = keys.iter().copied().zip(drawn).collect();
                let n = super::written(net, &typed).ok()?;
                let m = Model::compile(&n);
                chain::run(&m, &n, &opts).ok().map(|r| read(&r))
            })
            .collect();
        let failed = runs.iter().filter(|r| r.is_none()).count();
        let mut columns = vec![Vec::new(); values.len()];
        for r in runs.into_iter().flatten() {
            for (c, x) in columns.iter_mut().zip(r) {
                if x.is_finite() {
                    c.push(x);
                }
            }
        }
        for c in &mut columns {
            c.sort_by(f64::total_cmp);
        }
        (columns, failed)
    };
    let tail = (1.0 - LEVEL) / 2.0;
    let interval = |c: &[f64]| (stats::quantile(c, tail), stats::quantile(c, 1.0 - tail));
    let space = Space {
        independent: params.clone(),
        fit: None,
    };
    let (columns, failed) = sample(&space);
    let mut out = Vec::new();
    for (j, c) in columns.iter().enumerate() {
        if let (Some(low), Some(high)) = interval(c) {
            out.push((
                j,
                Interval {
                    output: if j % 2 == 0 { "yield" } else { "photons_per" }.into(),
                    product: products[j / 2].clone(),
                    value: values[j],
                    low,
                    high,
                },
            ));
        }
    }
    let widest = (0..out.len())
        .filter(|&i| out[i].1.relative_width().is_finite())
        .max_by(|&a, &b| out[a].1.relative_width().total_cmp(&out[b].1.relative_width()));
    let mut transients = Vec::new();
    let mut scaled = params.clone();
    for c in &net.evidence.counts {
        let k = c.runs.len() as f64;
        let n = c.finished() as f64;
        let a0 = n + k * c.prior;
        let needed = (4.0 * (a0 + 1.0) - k * c.prior - 1.0).ceil();
        let more_finished = (needed - n).max(0.0);
        let per_finished = (n + c.unfinished as f64) / n;
        transients.push(Transient {
            name: net.transients[c.transient].name.clone(),
            runs: c.runs.clone(),
            unfinished: c.unfinished,
            prior: c.prior_words(),
            finished_needed: needed as u64,
            more_runs: (more_finished * per_finished).ceil() as u64,
        });
        let scale = needed / n;
        for p in &mut scaled {
            if let Distribution::Counts { alphas, block, .. } = &mut p.distribution
                && *block == c.transient
            {
                *alphas = c.runs.iter().map(|&r| r as f64 * scale + c.prior).collect();
            }
        }
    }
    let widest_after = match widest {
        Some(w) => {
            let (cols, _) = sample(&Space {
                independent: scaled,
                fit: None,
            });
            match interval(&cols[out[w].0]) {
                (Some(l), Some(h)) => Some((l, h)),
                _ => None,
            }
        }
        None => None,
    };
    Ok(Some(CountIntervals {
        draws: DRAWS,
        seed: SEED,
        level: LEVEL,
        transients,
        intervals: out.into_iter().map(|x| x.1).collect(),
        widest,
        widest_after,
        failed,
    }))
}
