//! The layout of the evidence keys: the `[spreads]` table (the spread of a number by where it
//! comes from) and the spellings of an origin. The meaning (units, ranges, which number an origin
//! belongs to) is checked in `network/build/evidence.rs`.

use serde::Deserialize;
use toml::Spanned;

/// The origin words accepted after `origin =` and as `[spreads.WORD]` tables, in the order
/// they are listed in messages.
pub const ORIGINS: [&str; 4] = [
    "measured",
    "computed-ground-state",
    "computed-excited-state",
    "estimated",
];

/// `[spreads]`: one optional row per origin. A row given replaces the defaults of that origin
/// field by field (a field left out keeps its default).
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Spreads {
    /// `[spreads.measured]`.
    pub measured: Option<Spanned<SpreadRow>>,
    /// `[spreads.computed-ground-state]`.
    #[serde(rename = "computed-ground-state")]
    pub computed_ground_state: Option<Spanned<SpreadRow>>,
    /// `[spreads.computed-excited-state]`.
    #[serde(rename = "computed-excited-state")]
    pub computed_excited_state: Option<Spanned<SpreadRow>>,
    /// `[spreads.estimated]`.
    pub estimated: Option<Spanned<SpreadRow>>,
}

/// The spread of each kind of number with one origin.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct SpreadRow {
    /// Standard deviation of a barrier (ΔG‡, Ea, ΔH‡ or E₀), e.g. "1.5 kcal/mol", or "none".
    pub barrier: Option<Spanned<String>>,
    /// Geometric standard deviation of a rate constant given as `k` (a number above 1, e.g. 2),
    /// or "none".
    pub rate_factor: Option<Spanned<toml::Value>>,
    /// Standard deviation of a branching fraction: a number (absolute, e.g. 0.05), a percentage
    /// of the value ("10 %"), or "none".
    pub fraction: Option<Spanned<toml::Value>>,
    /// Standard deviation of a quantum yield or efficiency, as for `fraction`.
    pub quantum_yield: Option<Spanned<toml::Value>>,
}
