//! The layout of labelled sets of computed values, one per method or level of theory:
//!
//! ```toml
//! [[level]]
//! label = "method A"                     # the user's own label, unique in the file
//! note = "where these numbers come from"
//! set = { "transient.S1.channels[0].barrier" = "2.0 kcal/mol", "transient.CI.trajectories" = [41, 12] }
//! ```
//!
//! `set` takes the dotted keys `--set` uses, plus `transient.NAME.trajectories` (a list of counts,
//! one per channel) and `transient.NAME.unfinished_trajectories` for a transient whose branching
//! the file gives as trajectory counts. Only the layout lives here; the meaning (whether a key
//! exists, units, ranges) is checked in `network/build/levels.rs`.

use serde::Deserialize;
use std::collections::BTreeMap;
use toml::Spanned;

/// One `[[level]]` table.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Level {
    /// The user's label, e.g. "XMS-CASPT2/cc-pVDZ".
    pub label: Option<Spanned<String>>,
    /// Free text: the method, where the numbers come from.
    pub note: Option<Spanned<String>>,
    /// The values of this set, by key (file order is recovered from the spans).
    pub set: Option<Spanned<BTreeMap<String, Spanned<toml::Value>>>>,
}

/// The key suffix of a level's trajectory counts (`transient.NAME.trajectories`).
pub const TRAJECTORIES: &str = ".trajectories";
/// The key suffix of a level's unfinished runs (`transient.NAME.unfinished_trajectories`).
pub const UNFINISHED: &str = ".unfinished_trajectories";
