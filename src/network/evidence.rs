//! Where the numbers of a network come from: the origin stated for a barrier, rate, branching
//! fraction or quantum yield, the spread each origin carries (`[spreads]`, with defaults), and
//! branching given as counts of dynamics trajectories. Built in `build/evidence.rs` and
//! `build/transients.rs`; `uncertainty::evidence` turns them into distributions.
//!
//! Units: barrier spreads in J/mol; rate factors and shares are plain numbers.

use super::params::Key;

/// Where a number comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Source {
    /// Measured.
    Measured,
    /// Computed for the ground state (e.g. a DFT barrier).
    ComputedGround,
    /// Computed for an excited state.
    ComputedExcited,
    /// Estimated (analogy, a rule of thumb, a guess).
    Estimated,
}

impl Source {
    /// Every origin, in the order of `file::evidence::ORIGINS`.
    pub const ALL: [Source; 4] = [
        Source::Measured,
        Source::ComputedGround,
        Source::ComputedExcited,
        Source::Estimated,
    ];

    /// The word written in files and output (`file::evidence::ORIGINS`).
    pub fn word(self) -> &'static str {
        crate::file::evidence::ORIGINS[self as usize]
    }

    /// The origin written `word`, if it is one.
    pub fn from_word(word: &str) -> Option<Source> {
        Source::ALL.into_iter().find(|s| s.word() == word.trim())
    }
}

/// A standard deviation of a share (fraction, quantum yield).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ShareSd {
    /// In absolute terms (0.05 is ±0.05).
    Absolute(f64),
    /// As a fraction of the value (0.1 is ±10 %).
    Relative(f64),
}

impl ShareSd {
    /// The standard deviation for a share of `value`.
    pub fn at(self, value: f64) -> f64 {
        match self {
            ShareSd::Absolute(s) => s,
            ShareSd::Relative(r) => r * value.abs(),
        }
    }
}

/// One spread with whether it is the built-in default (shown as such by `check`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spread<T> {
    /// The value (None: no spread, the number is not drawn).
    pub value: Option<T>,
    /// True when the file did not set it.
    pub default: bool,
}

impl<T> Spread<T> {
    fn default_value(value: Option<T>) -> Self {
        Spread { value, default: true }
    }
}

/// The spreads of one origin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpreadRow {
    /// Standard deviation of a barrier (ΔG‡, Ea, ΔH‡ or E₀), J/mol.
    pub barrier: Spread<f64>,
    /// Geometric standard deviation (> 1) of a rate constant given as `k`.
    pub rate_factor: Spread<f64>,
    /// Standard deviation of a branching fraction.
    pub fraction: Spread<ShareSd>,
    /// Standard deviation of a quantum yield or efficiency.
    pub quantum_yield: Spread<ShareSd>,
}

/// The spreads of every origin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spreads {
    /// One row per [`Source`], in [`Source::ALL`] order.
    pub rows: [SpreadRow; 4],
}

/// kcal/mol in J/mol (thermochemical calorie, exact).
const KCAL: f64 = 4184.0;

impl Default for Spreads {
    /// The defaults (README, *Where a number comes from*): computed barriers ±1.5 kcal/mol for
    /// the ground state and ±7 kcal/mol for excited states (the usual size of the error of
    /// ground-state DFT and of excited-state methods on barriers; common practice); measured
    /// values ±0.3 kcal/mol on a barrier, a factor 1.25 on a rate constant and ±10 % on a share
    /// (common practice for kinetics and actinometry); estimates have none (the one who
    /// estimates states it).
    fn default() -> Self {
        let none = SpreadRow {
            barrier: Spread::default_value(None),
            rate_factor: Spread::default_value(None),
            fraction: Spread::default_value(None),
            quantum_yield: Spread::default_value(None),
        };
        let barrier = |kcal: f64| SpreadRow {
            barrier: Spread::default_value(Some(kcal * KCAL)),
            ..none
        };
        Spreads {
            rows: [
                SpreadRow {
                    barrier: Spread::default_value(Some(0.3 * KCAL)),
                    rate_factor: Spread::default_value(Some(1.25)),
                    fraction: Spread::default_value(Some(ShareSd::Relative(0.1))),
                    quantum_yield: Spread::default_value(Some(ShareSd::Relative(0.1))),
                },
                barrier(1.5),
                barrier(7.0),
                none,
            ],
        }
    }
}

impl Spreads {
    /// The row of `source`.
    pub fn of(&self, source: Source) -> &SpreadRow {
        &self.rows[source as usize]
    }

    /// The row of `source`, to change.
    pub fn of_mut(&mut self, source: Source) -> &mut SpreadRow {
        &mut self.rows[source as usize]
    }
}

/// A number whose origin the file states.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stated {
    /// The number: a rate's barrier (or activation, enthalpy, E₀; `k` for a rate given as `k`),
    /// a channel's fraction, a photo step's quantum yield or efficiency.
    pub key: Key,
    /// Where it comes from.
    pub source: Source,
    /// 1-based line where the origin was written.
    pub line: usize,
}

/// A transient whose branching is given as counts of dynamics trajectories.
#[derive(Debug, Clone, PartialEq)]
pub struct Counts {
    /// Index into `Network::transients`.
    pub transient: usize,
    /// Runs that left by each channel, in channel order.
    pub runs: Vec<u64>,
    /// Runs that reached no channel (left out of the shares).
    pub unfinished: u64,
    /// Dirichlet prior added to every channel's count (0.5 Jeffreys, 1 uniform).
    pub prior: f64,
    /// True when the file set the prior.
    pub prior_given: bool,
}

impl Counts {
    /// Runs that reached a channel.
    pub fn finished(&self) -> u64 {
        self.runs.iter().sum()
    }

    /// The Dirichlet parameters of the branching given the counts: count + prior per channel.
    pub fn alphas(&self) -> Vec<f64> {
        self.runs.iter().map(|&n| n as f64 + self.prior).collect()
    }

    /// The prior in words, e.g. "Jeffreys prior ½ per channel".
    pub fn prior_words(&self) -> String {
        let name = if self.prior == 0.5 {
            "Jeffreys prior ½"
        } else if self.prior == 1.0 {
            "uniform prior 1"
        } else {
            "prior"
        };
        let v = if self.prior == 0.5 || self.prior == 1.0 {
            String::new()
        } else {
            format!(" {}", crate::units::sig(self.prior, 4))
        };
        format!(
            "{name}{v} per channel{}",
            if self.prior_given { "" } else { " (default)" }
        )
    }
}

/// The default Dirichlet prior on trajectory counts: Jeffreys' ½ per channel.
pub const DEFAULT_PRIOR: f64 = 0.5;

/// What a network says about the origin of its numbers.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Evidence {
    /// Numbers with a stated origin, in file order.
    pub stated: Vec<Stated>,
    /// The spread of each origin.
    pub spreads: Spreads,
    /// Transients branching by trajectory counts.
    pub counts: Vec<Counts>,
}

impl Evidence {
    /// The counts of transient `t`, if its branching is given by counts.
    pub fn counts_of(&self, t: usize) -> Option<&Counts> {
        self.counts.iter().find(|c| c.transient == t)
    }
}
