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

use super::Options;
use crate::error::{Error, Result};
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

/// Run `once` at the tolerances of `opts` and judge its result by `judge` (the worst impossible
/// number, against the tolerances asked for). An impossible result is run again at tolerances
/// [`TIGHTEN`] times tighter (the relative one no tighter than [`TIGHTEST_RTOL`]), at most
/// [`RETRIES`] times; the sound result comes back with the retries it took, first to last. A
/// result still impossible after the last retry (or at the tightest tolerance already) is
/// [`Error::Unphysical`] with its worst finding and every tolerance tried. An error of `once`
/// ends the loop as it is.
pub fn retried<T>(
    opts: &Options,
    mut once: impl FnMut(&Options) -> Result<T>,
    mut judge: impl FnMut(&T) -> Option<Finding>,
) -> Result<(T, Vec<Retry>)> {
    let mut o = opts.clone();
    let mut retries = Vec::new();
    let mut tried = Vec::new();
    loop {
        let result = once(&o)?;
        tried.push((o.rtol, o.atol));
        let Some(finding) = judge(&result) else {
            return Ok((result, retries));
        };
        if retries.len() == RETRIES || o.rtol <= TIGHTEST_RTOL {
            return Err(Error::Unphysical(Box::new(Unphysical { finding, tried })));
        }
        o.rtol = (o.rtol / TIGHTEN).max(TIGHTEST_RTOL);
        o.atol /= TIGHTEN;
        retries.push(Retry {
            rtol: o.rtol,
            atol: o.atol,
            because: finding,
        });
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

    /// A finding for the retry tests: a concentration of `value` mol/L.
    fn negative(value: f64) -> Finding {
        Finding {
            what: "B".into(),
            photons: false,
            value,
            time: 1.0,
            limit: 1e-12,
        }
    }

    #[test]
    fn a_run_that_stays_impossible_is_retried_twice_tighter_then_refused() {
        let opts = Options::until(10.0);
        let mut asked = Vec::new();
        // A solve that always ends below zero, by less each time (as a tighter run does).
        let e = retried(
            &opts,
            |o| {
                asked.push((o.rtol, o.atol));
                Ok(-1e-3 * o.rtol)
            },
            |&v: &f64| (v < 0.0).then(|| negative(v)),
        )
        .unwrap_err();
        let expected = [(1e-6, 1e-12), (1e-8, 1e-14), (1e-10, 1e-16)];
        assert_eq!(asked.len(), 1 + RETRIES);
        for ((r, a), (er, ea)) in asked.iter().zip(expected) {
            assert!(
                (r / er - 1.0).abs() < 1e-12 && (a / ea - 1.0).abs() < 1e-12,
                "{asked:?}"
            );
        }
        let Error::Unphysical(u) = &e else { panic!("{e}") };
        assert_eq!(u.tried, asked, "every tolerance tried is reported");
        assert_eq!(u.finding.value, -1e-13, "the last run's finding");
        let text = e.to_string();
        assert!(
            text.contains("impossible numbers") && text.contains("then rtol 1e-10"),
            "{text}"
        );
    }

    #[test]
    fn a_run_that_recovers_on_the_second_try_gives_its_result_and_the_retry() {
        let opts = Options::until(10.0);
        let mut calls = 0;
        let (v, retries) = retried(
            &opts,
            |o| {
                calls += 1;
                Ok(if o.rtol > 1e-7 { -1e-6 } else { 0.5 })
            },
            |&v: &f64| (v < 0.0).then(|| negative(v)),
        )
        .unwrap();
        assert_eq!((v, calls), (0.5, 2));
        assert_eq!(retries.len(), 1);
        assert!((retries[0].rtol / 1e-8 - 1.0).abs() < 1e-12 && retries[0].because.value == -1e-6);
    }

    #[test]
    fn a_retry_goes_no_tighter_than_the_tightest_rtol_and_a_failed_solve_is_not_retried() {
        let mut opts = Options::until(10.0);
        opts.rtol = 1e-13;
        let mut asked = Vec::new();
        let e = retried(
            &opts,
            |o| {
                asked.push(o.rtol);
                Ok(-1.0)
            },
            |&v: &f64| (v < 0.0).then(|| negative(v)),
        )
        .unwrap_err();
        assert_eq!(asked, [1e-13, TIGHTEST_RTOL], "{e}");
        let mut calls = 0;
        let e = retried(
            &opts,
            |_| -> Result<f64> {
                calls += 1;
                Err(Error::Numerical("the BDF integrator stopped".into()))
            },
            |_| None,
        )
        .unwrap_err();
        assert_eq!(calls, 1);
        assert!(matches!(e, Error::Numerical(_)), "{e}");
    }

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
