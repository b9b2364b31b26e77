//! The result checks of a run: a concentration or a photon count below zero beyond the
//! tolerance is no result but a numerical failure. [`super::simulate_from`] retries such a run
//! with tighter tolerances ([`RETRIES`] times, each [`TIGHTEN`] times tighter) and, when the
//! numbers stay impossible, returns [`Unphysical`] (exit 4, "a numerical engine could not
//! finish").
//!
//! Every photon count of the ledger (absorbed by each species and by the background,
//! transmitted, per outcome) is an integral of a rate that is never negative, and so is never
//! negative itself; a concentration is never negative. A small undershoot is round-off: within
//! the run's tolerance it is accepted (and shown as zero, `units::display::ZeroWithin`).

use crate::model::Model;
use crate::model::rhs::LedgerLayout;
use crate::units::display::format_concentration;
use crate::units::sig;

/// How many times a run with impossible numbers is repeated with tighter tolerances before it
/// is reported as a failure. Two: the first retry usually helps (an inner filter so strong
/// that one step overshoots); a third rarely does what two did not, and costs the most.
pub const RETRIES: usize = 2;

/// How much tighter each retry's relative and absolute tolerances are than the last run's.
/// A hundredfold: the overshoot of a BDF step scales with the tolerance, so each retry cuts it
/// about that much (common practice).
pub const TIGHTEN: f64 = 100.0;

/// The tightest relative tolerance a retry uses (the tightest `--rtol` accepts).
pub const TIGHTEST_RTOL: f64 = 1e-14;

/// The undershoot below zero a concentration may have, mol/L: the absolute tolerance, or a
/// thousandth of the relative tolerance times the largest starting concentration when that is
/// larger.
pub fn concentration_limit(model: &Model, rtol: f64, atol: f64) -> f64 {
    let scale = model.initial.iter().cloned().fold(0.0, f64::max);
    atol.max(rtol * scale * 1e-3)
}

/// One impossible number of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// What went negative: a species' name, or a photon count ("photons absorbed by A").
    pub what: String,
    /// True for a photon count (einstein per litre of solution), false for a concentration
    /// (mol/L).
    pub photons: bool,
    /// The most negative value, mol/L or einstein/L.
    pub value: f64,
    /// When, s.
    pub time: f64,
    /// The undershoot accepted, same unit as `value`.
    pub limit: f64,
}

impl std::fmt::Display for Finding {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.photons {
            write!(f, "{} at {} einstein/L", self.what, sig(self.value, 3))?;
        } else {
            write!(f, "{} at {}", self.what, format_concentration(self.value))?;
        }
        write!(f, " at {}", crate::units::format_time(self.time))
    }
}

/// A run repeated with tighter tolerances because the run before gave impossible numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct Retry {
    /// The relative tolerance of the repeated run.
    pub rtol: f64,
    /// Its absolute tolerance, mol/L.
    pub atol: f64,
    /// The worst finding of the run before.
    pub because: Finding,
}

impl std::fmt::Display for Retry {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "retried at rtol {:e}, atol {} because the run before gave {} (below zero beyond the tolerance)",
            self.rtol,
            format_concentration(self.atol),
            self.because
        )
    }
}

/// A run whose numbers stayed impossible after every retry.
#[derive(Debug, Clone, PartialEq)]
pub struct Unphysical {
    /// The worst finding of the last run.
    pub finding: Finding,
    /// The tolerances tried, first to last: (rtol, atol mol/L).
    pub tried: Vec<(f64, f64)>,
}

impl std::fmt::Display for Unphysical {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let tried: Vec<String> = self
            .tried
            .iter()
            .map(|(r, a)| format!("rtol {r:e}, atol {}", format_concentration(*a)))
            .collect();
        write!(
            f,
            "the kinetics gave impossible numbers: {} (below zero beyond the tolerance of {}); tried {}: \
             no result is given. A value far outside what solution photochemistry meets (see the warnings) \
             is the usual cause",
            self.finding,
            if self.finding.photons {
                format!("{} einstein/L", sig(self.finding.limit, 2))
            } else {
                format_concentration(self.finding.limit)
            },
            tried.join("; then ")
        )
    }
}

/// The worst impossible number among `states` (full states at `times`) of a run of `model` at
/// `rtol` and `atol` (mol/L), judged against the limits of the tolerances asked for
/// (`limit_rtol`, `limit_atol`): the most negative concentration beyond
/// [`concentration_limit`], else the most negative photon count beyond the absolute
/// tolerance plus the relative tolerance times the largest count at that time.
pub fn worst(
    model: &Model,
    layout: &LedgerLayout,
    times: &[f64],
    states: &[Vec<f64>],
    limit_rtol: f64,
    limit_atol: f64,
) -> Option<Finding> {
    let n = model.n_species();
    let c_limit = concentration_limit(model, limit_rtol, limit_atol);
    let mut worst: Option<Finding> = None;
    let mut keep = |f: Finding| {
        // Compare by how far past its limit each went.
        let over = |f: &Finding| -f.value / f.limit;
        if worst.as_ref().is_none_or(|w| over(&f) > over(w)) {
            worst = Some(f);
        }
    };
    for (&t, s) in times.iter().zip(states) {
        for (i, &v) in s[..n].iter().enumerate() {
            if v < -c_limit {
                keep(Finding {
                    what: model.species[i].clone(),
                    photons: false,
                    value: v,
                    time: t,
                    limit: c_limit,
                });
            }
        }
        let ledger = &s[n..layout.len()];
        let largest = ledger.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let p_limit = limit_atol + limit_rtol * largest;
        for (j, &v) in ledger.iter().enumerate() {
            if v < -p_limit {
                keep(Finding {
                    what: ledger_label(model, layout, n + j),
                    photons: true,
                    value: v,
                    time: t,
                    limit: p_limit,
                });
            }
        }
    }
    worst
}

/// What the ledger entry at state index `k` counts, for messages.
fn ledger_label(model: &Model, layout: &LedgerLayout, k: usize) -> String {
    for s in 0..layout.n_sources {
        let source = model.sources.get(s).map_or("", String::as_str);
        for slot in 0..layout.n_slots {
            if layout.absorbed(s, slot) == k {
                return format!(
                    "photons from \"{source}\" absorbed by {}",
                    model.species[model.absorbers[slot]]
                );
            }
        }
        if layout.background(s) == k {
            return format!("photons from \"{source}\" absorbed by the background");
        }
        if layout.transmitted(s) == k {
            return format!("photons from \"{source}\" transmitted");
        }
    }
    (0..layout.n_outcomes).find(|&o| layout.outcome(o) == k).map_or_else(
        || "a photon count".to_string(),
        |o| format!("photons ending in {}", model.outcomes[o].label),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::parse_text;
    use crate::model::rhs::Rhs;
    use crate::network::{Overrides, build};
    use std::path::Path;

    /// An invented two-species network.
    const NET: &str = "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\n\
        [[light]]\nkind = \"line\"\nwavelength = \"320 nm\"\npower = \"10 mW\"\n\
        [[species]]\nname = \"A\"\ninitial = \"50 uM\"\n\
        epsilon = { at = \"320 nm\", value = \"1000 L/(mol cm)\" }\n\
        [[species]]\nname = \"B\"\n[[photo]]\nequation = \"A -> B\"\nquantum_yield = 0.3\n";

    #[test]
    fn negatives_beyond_the_tolerance_are_found_and_round_off_is_not() {
        let l = parse_text(Path::new("t.toml"), NET.to_string()).unwrap();
        let model = Model::compile(&build(&l, &Overrides::none()).unwrap());
        let layout = Rhs::new(&model).layout;
        let mut y = Rhs::new(&model).initial_state();
        let times = [0.0, 1.0];
        // Round-off within atol: sound.
        y[1] = -0.5e-12;
        assert_eq!(
            worst(&model, &layout, &times, &[y.clone(), y.clone()], 1e-6, 1e-12),
            None
        );
        // A photon count below zero: found, named by what it counts.
        let mut bad = y.clone();
        bad[layout.absorbed(0, 0)] = -1e-6;
        let f = worst(&model, &layout, &times, &[y.clone(), bad], 1e-6, 1e-12).unwrap();
        assert!(f.photons && f.what.contains("absorbed by A") && f.time == 1.0, "{f}");
        // A concentration below zero: found.
        let mut bad = y.clone();
        bad[1] = -5.7e-8;
        let f = worst(&model, &layout, &times, &[bad, y], 1e-6, 1e-12).unwrap();
        assert!(!f.photons && f.what == "B" && f.value == -5.7e-8, "{f}");
    }
}
