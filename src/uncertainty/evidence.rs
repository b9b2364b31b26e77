//! Distributions from what the network says about its numbers (`Network::evidence`): a stated
//! origin's spread, and the Dirichlet of a branching given as trajectory counts. `uncertainty`
//! draws them with no `[[uncertain]]` entry; an entry for the same value wins.
//!
//! Spreads become distributions as follows (README, *Where a number comes from*): a barrier
//! (ΔG‡, Ea, ΔH‡, E₀) is normal with the origin's standard deviation, a draw below zero taken
//! as zero (no barrier); a rate constant given as `k`
//! is log-normal with the origin's `rate_factor`, or, without one, with the factor
//! exp(σ/RT) that the barrier spread σ gives at the network temperature; a fraction or quantum
//! yield is a beta with the value as mean and the spread as standard deviation (uniform over
//! mean ± √3 sd, cut to [0, 1], when no beta has them). Counts n₁…n_K with prior a give
//! Dirichlet(n₁ + a, …, n_K + a) over the channels (Gelman et al., Bayesian Data Analysis,
//! 3rd ed., 2013, Appendix A).

use super::spec::{Distribution, Parameter};
use crate::network::Network;
use crate::network::evidence::{ShareSd, Source};
use crate::network::params::{self, Key, RateField};
use crate::units::{Quantity, constants::GAS_CONSTANT};

/// Why a value is uncertain.
#[derive(Debug, Clone, PartialEq)]
pub enum Basis {
    /// An `[[uncertain]]` entry, with its distribution as written.
    Entry(String),
    /// A stated origin.
    Origin(Source),
    /// Trajectory counts of the transient's channels.
    Counts {
        /// The channel's count.
        runs: u64,
        /// Runs that reached any channel.
        finished: u64,
        /// Runs that reached none.
        unfinished: u64,
        /// The prior in words, e.g. "Jeffreys prior ½ per channel (default)".
        prior: String,
    },
}

/// The spread an origin gives a value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spreading {
    /// Standard deviation of an energy, J/mol.
    Energy(f64),
    /// Geometric standard deviation of a rate constant; with the barrier spread (J/mol) it was
    /// derived from, if so.
    Factor(f64, Option<f64>),
    /// Standard deviation of a share.
    Share(ShareSd),
    /// The origin has no spread for this kind of number: not drawn.
    None,
    /// Not from an origin (an entry's or the counts' own distribution).
    Own,
}

/// One uncertain value of a network, for `check` and `uncertainty`.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// The `--set` key.
    pub key: String,
    /// The value in the network, internal unit (NaN when the key is not one of the network's).
    pub value: f64,
    /// Its quantity (None: a plain number).
    pub quantity: Option<Quantity>,
    /// Why it is uncertain.
    pub basis: Basis,
    /// The spread its origin gives it.
    pub spread: Spreading,
    /// True when the spread is the built-in default for the origin.
    pub default: bool,
    /// True when an `[[uncertain]]` entry for the same value replaces this one.
    pub replaced: bool,
    /// What `uncertainty` draws for it (None for entries, which are read from the file, and
    /// for values with no spread or replaced).
    pub parameter: Option<Parameter>,
}

/// Every uncertain value: the `[[uncertain]]` entries `explicit` (and a fit's), then the values
/// with a stated origin, then the channels of transients with trajectory counts.
pub fn entries(net: &Network, explicit: &[&Parameter]) -> Vec<Entry> {
    let typed: Vec<Option<Key>> = explicit.iter().map(|p| Key::parse(net, &p.key).ok()).collect();
    let taken = |k: Key| typed.iter().flatten().any(|e| e.target() == k.target());
    let mut out: Vec<Entry> = explicit
        .iter()
        .zip(&typed)
        .map(|(p, k)| {
            let (value, quantity) = match k {
                Some(k) => {
                    let q = params::get(net, *k);
                    (q.value, q.quantity)
                }
                None => (f64::NAN, None),
            };
            let written = if p.written.is_empty() {
                p.distribution.describe()
            } else {
                p.written.clone()
            };
            Entry {
                key: p.key.clone(),
                value,
                quantity,
                basis: Basis::Entry(written),
                spread: Spreading::Own,
                default: false,
                replaced: false,
                parameter: None,
            }
        })
        .collect();
    let ev = &net.evidence;
    for s in &ev.stated {
        let p = params::get(net, s.key);
        let row = ev.spreads.of(s.source);
        let (spread, default) = match s.key {
            Key::Rate {
                field: RateField::K, ..
            } => match (row.rate_factor.value, row.barrier.value) {
                (Some(f), _) => (Spreading::Factor(f, None), row.rate_factor.default),
                (None, Some(b)) => (
                    Spreading::Factor((b / (GAS_CONSTANT * net.conditions.temperature)).exp(), Some(b)),
                    row.barrier.default && row.rate_factor.default,
                ),
                (None, None) => (Spreading::None, row.rate_factor.default && row.barrier.default),
            },
            Key::Rate { .. } => (
                row.barrier.value.map_or(Spreading::None, Spreading::Energy),
                row.barrier.default,
            ),
            Key::Fraction { .. } => (
                row.fraction.value.map_or(Spreading::None, Spreading::Share),
                row.fraction.default,
            ),
            _ => (
                row.quantum_yield.value.map_or(Spreading::None, Spreading::Share),
                row.quantum_yield.default,
            ),
        };
        let replaced = taken(s.key);
        let distribution = if replaced { None } else { distribution(p.value, spread) };
        let written = format!(
            "origin = \"{}\" at line {}{}",
            s.source.word(),
            s.line,
            if default { ", default spread" } else { "" }
        );
        out.push(Entry {
            key: p.key.clone(),
            value: p.value,
            quantity: p.quantity,
            basis: Basis::Origin(s.source),
            spread,
            default,
            replaced,
            parameter: distribution.map(|d| Parameter {
                key: p.key.clone(),
                unit: p.unit.to_string(),
                distribution: d,
                line: Some(s.line),
                written,
            }),
        });
    }
    for c in &ev.counts {
        let keys: Vec<Key> = (0..c.runs.len())
            .map(|channel| Key::Fraction {
                transient: c.transient,
                channel,
            })
            .collect();
        // An entry for any channel replaces the counts' joint distribution of them all.
        let replaced = keys.iter().any(|&k| taken(k));
        let alphas = c.alphas();
        let finished = c.finished();
        for (channel, &k) in keys.iter().enumerate() {
            let p = params::get(net, k);
            let basis = Basis::Counts {
                runs: c.runs[channel],
                finished,
                unfinished: c.unfinished,
                prior: c.prior_words(),
            };
            out.push(Entry {
                key: p.key.clone(),
                value: p.value,
                quantity: None,
                basis,
                spread: Spreading::Own,
                default: !c.prior_given,
                replaced,
                parameter: (!replaced).then(|| Parameter {
                    key: p.key.clone(),
                    unit: String::new(),
                    distribution: Distribution::Counts {
                        share: p.value,
                        alphas: alphas.clone(),
                        channel,
                        block: c.transient,
                    },
                    line: None,
                    written: format!(
                        "trajectory counts {} of {finished}{}, {}",
                        c.runs[channel],
                        if c.unfinished > 0 {
                            format!(" ({} more ended nowhere, left out)", c.unfinished)
                        } else {
                            String::new()
                        },
                        c.prior_words()
                    ),
                }),
            });
        }
    }
    out
}

/// What `uncertainty` draws from the evidence of `net`, given the parameters `already` drawn
/// (`[[uncertain]]` entries, a fit's), and notes on what was left out or replaced.
pub fn parameters(net: &Network, already: &[&Parameter]) -> (Vec<Parameter>, Vec<String>) {
    let all = entries(net, already);
    let mut notes = Vec::new();
    let mut out = Vec::new();
    let mut replaced_counts: Vec<String> = Vec::new();
    for e in all {
        match (&e.basis, e.parameter) {
            (Basis::Entry(_), _) => {}
            (_, Some(p)) => out.push(p),
            (Basis::Origin(s), None) if e.replaced => notes.push(format!(
                "{}: the [[uncertain]] entry is drawn, not the spread of its origin ({})",
                e.key,
                s.word()
            )),
            (Basis::Origin(s), None) => notes.push(format!(
                "{}: origin {} has no spread for this value, so it is not drawn (set one in [spreads.{}])",
                e.key,
                s.word(),
                s.word()
            )),
            (Basis::Counts { .. }, None) => {
                let t = e.key.split(".channels[").next().unwrap_or(&e.key).to_string();
                if !replaced_counts.contains(&t) {
                    notes.push(format!(
                        "{t}: an [[uncertain]] entry on one of its channels replaces the distribution of its trajectory counts"
                    ));
                    replaced_counts.push(t);
                }
            }
        }
    }
    for c in &net.evidence.counts {
        if !out
            .iter()
            .any(|p| matches!(p.distribution, Distribution::Counts { block, .. } if block == c.transient))
        {
            continue;
        }
        let runs: Vec<String> = c.runs.iter().map(|n| n.to_string()).collect();
        notes.push(format!(
            "transient {}: branching drawn from its trajectory counts ({} of {} runs that reached a channel{}) as a Dirichlet with {}",
            net.transients[c.transient].name,
            runs.join(", "),
            c.finished(),
            if c.unfinished > 0 {
                format!("; {} that ended nowhere left out", c.unfinished)
            } else {
                String::new()
            },
            c.prior_words()
        ));
    }
    (out, notes)
}

/// The distribution a spread gives a value of `value` (internal unit).
fn distribution(value: f64, spread: Spreading) -> Option<Distribution> {
    match spread {
        // A barrier below zero is no barrier: such draws are taken as zero.
        Spreading::Energy(sd) => Some(Distribution::NormalAtLeast {
            mean: value,
            sd,
            low: 0.0,
        }),
        Spreading::Factor(factor, _) => Some(Distribution::LogNormal { median: value, factor }),
        Spreading::Share(sd) => Some(share(value, sd.at(value))),
        Spreading::None | Spreading::Own => None,
    }
}

/// A share with mean `m` and standard deviation `s`: the beta with those moments (method of
/// moments: α + β = m(1 − m)/s² − 1), or uniform over m ± √3 s cut to [0, 1] when no beta has
/// them (s² ≥ m(1 − m), or m at 0 or 1).
pub fn share(m: f64, s: f64) -> Distribution {
    let v = s * s;
    if m > 0.0 && m < 1.0 && v < m * (1.0 - m) {
        let n = m * (1.0 - m) / v - 1.0;
        Distribution::Beta {
            alpha: m * n,
            beta: (1.0 - m) * n,
            low: 0.0,
            high: 1.0,
        }
    } else {
        let h = 3f64.sqrt() * s;
        Distribution::Uniform {
            low: (m - h).max(0.0),
            high: (m + h).min(1.0),
        }
    }
}

/// The Dirichlet's mean and variance of coordinate `i` (Kotz, Balakrishnan & Johnson,
/// Continuous Multivariate Distributions, vol. 1, 2nd ed., 2000, ch. 49):
/// E = αᵢ/α₀, Var = αᵢ(α₀ − αᵢ)/(α₀²(α₀ + 1)).
pub fn dirichlet_moments(alphas: &[f64], i: usize) -> (f64, f64) {
    let a0: f64 = alphas.iter().sum();
    let a = alphas[i];
    (a / a0, a * (a0 - a) / (a0 * a0 * (a0 + 1.0)))
}
