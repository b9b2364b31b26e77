//! `[[uncertain]]` entries: distributions for values of the network file, addressed by the same
//! dotted keys as `--set` (README, "Uncertainty"). Only the layout lives here; the meaning (units,
//! ranges, whether the key exists) is checked in `network::uncertain`.

use serde::Deserialize;
use toml::Spanned;

/// A bound or parameter: a plain number (dimensionless) or a quantity with its unit.
#[derive(Debug, Deserialize, Clone, PartialEq)]
#[serde(untagged)]
pub enum Amount {
    /// A plain number, e.g. `0.3`.
    Number(f64),
    /// A quantity with unit, e.g. `"2 mW"`.
    Text(String),
}

/// `beta = { alpha = 2, beta = 5, low = 0.0, high = 0.5 }`: a beta distribution on [low, high]
/// (default [0, 1]).
#[derive(Debug, Deserialize, Clone)]
#[serde(deny_unknown_fields)]
pub struct Beta {
    /// First shape parameter (> 0).
    pub alpha: f64,
    /// Second shape parameter (> 0).
    pub beta: f64,
    /// Lower end, default 0.
    pub low: Option<Amount>,
    /// Upper end, default 1.
    pub high: Option<Amount>,
}

/// `lognormal = { median = "1e6 /s", factor = 2 }`: ln X is normal with mean ln(median) and
/// standard deviation ln(factor), so median/factor .. median×factor holds about 68 %.
#[derive(Debug, Deserialize, Clone)]
#[serde(deny_unknown_fields)]
pub struct LogNormal {
    /// The median, with unit (or a plain number).
    pub median: Amount,
    /// The geometric standard deviation (> 1).
    pub factor: f64,
}

/// One `[[uncertain]]` entry: a key and exactly one distribution.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Uncertain {
    /// A `--set` key, e.g. `"light.UV LED.power"`.
    pub key: Option<Spanned<String>>,
    /// `"23.5 kcal/mol ± 2 kcal/mol"` (also `+/-`; the spread may be a percentage, `± 10 %`).
    pub normal: Option<Spanned<String>>,
    /// `[low, high]`, numbers or quantities with units.
    pub uniform: Option<Spanned<Vec<Amount>>>,
    /// See [`Beta`].
    pub beta: Option<Spanned<Beta>>,
    /// See [`LogNormal`].
    pub lognormal: Option<Spanned<LogNormal>>,
    /// Free text: where the spread comes from.
    pub note: Option<Spanned<String>>,
}
