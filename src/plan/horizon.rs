//! The automatic horizon: how long to irradiate when nobody said, found from the kinetics.
//!
//! The run goes until a stated conversion (a target when one is given, else
//! [`DEFAULT_CONVERSION`] of the limiting reagent), or until nothing changes any more (a
//! steady state: photostationary, or nothing left to convert), whichever comes first, and never
//! beyond a cap. It is [`time_to_target`] with that target: the conversion is an event found
//! by root finding in the integrator and the steady state is its test at the end of each
//! integration stretch, never a scan of output. `report` (through `study`) and the chain's
//! check against the kinetics use it.

use super::target::{self, Basis, Direction, Target};
use super::{Plan, PlanOptions, Why, time_to_target};
use crate::error::Result;
use crate::kinetics::Trajectory;
use crate::model::Model;

/// Conversion of the limiting reagent at which an automatic horizon ends when no target is
/// given: 99 %, "full conversion" as a photochemist checks it by NMR or HPLC, whose detection
/// limit for the starting material is about 1 % (`common practice`). 95 % would stop a
/// second-order feed (ξ/(1 − ξ) = k c₀ t) five times too early to see what it feeds.
pub const DEFAULT_CONVERSION: f64 = 0.99;

/// Longest automatic horizon, s: one year of light. A report that needs longer must say so
/// with `--until`.
pub const CAP: f64 = 365.25 * 86400.0;

/// The steps of [`round_up`] within each power of ten: every step at most 1.5 times the one
/// before, so rounding up never stretches a horizon by more than 1.5 (1, 2, 5 stretched 2.01
/// to 5, 2.5 times).
pub const ROUND_STEPS: [f64; 9] = [1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0];

/// The most [`round_up`] stretches a duration: the largest ratio of neighbouring
/// [`ROUND_STEPS`].
pub const MAX_STRETCH: f64 = 1.5;

/// A round duration at least `t` s, for an automatic horizon to read as a round number: the
/// next of [`ROUND_STEPS`] times a power of ten of the unit the duration is shown in
/// (`units::display::time`), at most [`MAX_STRETCH`] times `t` ("8.67 h" → "10 h", "2.01 d"
/// → "3 d", "1.01 min" → "1.5 min").
pub fn round_up(t: f64) -> f64 {
    if !(t > 0.0 && t.is_finite()) {
        return t;
    }
    let (unit, _) = crate::units::display::time(t);
    let v = t / unit;
    let p = 10f64.powf(v.log10().floor());
    let m = ROUND_STEPS
        .into_iter()
        .find(|m| m * p >= v * (1.0 - 1e-12))
        .unwrap_or(10.0);
    m * p * unit
}

/// Why an automatic horizon ended where it did.
#[derive(Debug, Clone, PartialEq)]
pub enum Ended {
    /// The target (given, or the default conversion) was met at this time, s.
    Reached(f64),
    /// The concentrations stopped changing before the target was met (the reason); by this
    /// time, s, every one had settled ([`settled_time`]).
    Steady(Why, f64),
    /// Still changing at the cap.
    Cap,
    /// Nothing in the start mixture is consumed, so there is no conversion to wait for and
    /// the kinetics were not run for the horizon.
    NothingConsumed,
}

/// An automatic horizon.
#[derive(Debug, Clone)]
pub struct Horizon {
    /// The time the chemistry asks for, s (before any rounding a caller does).
    pub time: f64,
    /// Why it ended there.
    pub ended: Ended,
    /// The target the run was stopped at (None when nothing is consumed).
    pub target: Option<Target>,
    /// The plan run that found it (None when nothing is consumed).
    pub plan: Option<Plan>,
}

impl Horizon {
    /// One sentence for reports: what the run waited for and why it ended there.
    pub fn reason(&self) -> String {
        let t = crate::units::format_time;
        let goal = self.target.as_ref().map_or_else(String::new, goal_words);
        match &self.ended {
            Ended::Reached(at) => format!("{goal} is reached at {}", t(*at)),
            Ended::Steady(why, at) => format!(
                "{goal} is never reached: by {} every concentration is within {} % of where it settles ({})",
                t(*at),
                crate::units::sig(100.0 * (1.0 - super::SETTLED), 2),
                why.words()
            ),
            Ended::Cap => format!(
                "{goal} is not reached and the concentrations still change at the cap of {}",
                t(CAP)
            ),
            Ended::NothingConsumed => "nothing in the starting mixture is consumed".into(),
        }
    }
}

/// The target in words: "95 % conversion of A" or the target as written.
fn goal_words(target: &Target) -> String {
    match &target.basis {
        Basis::OfInitial { fraction } if target.direction == Direction::Below => format!(
            "{} % conversion of {}",
            crate::units::sig(100.0 * (1.0 - fraction), 3),
            target.species_name
        ),
        _ => format!("\"{}\"", target.text),
    }
}

/// The default target: [`DEFAULT_CONVERSION`] of the limiting reagent (or, when every consumed
/// species starts at 1 mol/L or more, of the one that starts lowest). None when nothing that
/// starts above zero is consumed.
pub fn default_target(model: &Model) -> Option<Target> {
    let reagent = target::limiting_reagent(model).or_else(|| {
        let consumed = super::target::consumed(model);
        (0..model.n_species())
            .filter(|&i| model.initial[i] > 0.0 && consumed[i])
            .min_by(|&a, &b| model.initial[a].total_cmp(&model.initial[b]))
    })?;
    let fraction = 1.0 - DEFAULT_CONVERSION;
    let name = model.species[reagent].clone();
    Some(Target {
        text: format!("{name} < {} %", crate::units::sig(100.0 * fraction, 3)),
        species: reagent,
        species_name: name,
        direction: Direction::Below,
        level: fraction * model.initial[reagent],
        basis: Basis::OfInitial { fraction },
    })
}

/// The automatic horizon of `model`: until `target` (or [`default_target`]) is met, or until
/// nothing changes, never beyond [`CAP`].
pub fn automatic(model: &Model, target: Option<&Target>) -> Result<Horizon> {
    let Some(target) = target.cloned().or_else(|| default_target(model)) else {
        return Ok(Horizon {
            time: 3600.0,
            ended: Ended::NothingConsumed,
            target: None,
            plan: None,
        });
    };
    let opts = PlanOptions {
        horizon: CAP,
        ..PlanOptions::default()
    };
    let plan = time_to_target(model, &target, &opts)?;
    let end = *plan.trajectory.times.last().unwrap_or(&CAP);
    let (time, ended) = match (&plan.time, &plan.unreachable) {
        (Some(t), _) => (*t, Ended::Reached(*t)),
        (None, Some(u)) if u.why != Why::Horizon => {
            // The run is only known to be at rest at the end of the stretch that showed it
            // (ten times the one before): the horizon is when it settled.
            let settled = settled_time(&plan.trajectory, model.n_species());
            let at = if settled > 0.0 { settled } else { end };
            (at, Ended::Steady(u.why, at))
        }
        _ => (end.min(CAP), Ended::Cap),
    };
    Ok(Horizon {
        time,
        ended,
        target: Some(target),
        plan: Some(plan),
    })
}

/// When the run `tr` settled, s: the last time (linear between output times) at which any of
/// its first `n_species` concentrations was further from the value it ends at than
/// 1 − [`super::SETTLED`] (1 %) of its largest distance from it during the run; after it, every
/// concentration stays within that band, as [`super::SETTLED`] dates a closest approach.
/// Distances within the run's absolute tolerance are round-off and do not count. 0 when no
/// concentration moved.
pub fn settled_time(tr: &Trajectory, n_species: usize) -> f64 {
    let end = tr.last();
    let mut when: f64 = 0.0;
    for i in 0..n_species.min(end.len()) {
        let away = |s: &Vec<f64>| (s[i] - end[i]).abs();
        let reach = tr.states.iter().map(away).fold(0.0, f64::max);
        if reach.is_nan() || reach <= tr.atol {
            continue;
        }
        let band = (1.0 - super::SETTLED) * reach;
        let Some(k) = tr.states.iter().rposition(|s| away(s) > band) else {
            continue;
        };
        let t = match (tr.states.get(k + 1), tr.times.get(k + 1)) {
            (Some(next), Some(&t1)) => {
                let (d0, d1) = (away(&tr.states[k]), away(next));
                let f = if d0 > d1 {
                    ((d0 - band) / (d0 - d1)).clamp(0.0, 1.0)
                } else {
                    1.0
                };
                tr.times[k] + f * (t1 - tr.times[k])
            }
            _ => tr.times[k],
        };
        when = when.max(t);
    }
    when
}

#[cfg(test)]
mod tests {
    use super::{MAX_STRETCH, round_up};

    #[test]
    fn durations_round_up_to_round_numbers() {
        assert_eq!(round_up(0.7), 0.8);
        assert_eq!(round_up(3.0), 3.0);
        assert_eq!(round_up(45.0), 50.0);
        assert_eq!(round_up(300.0), 300.0); // 5 min
        assert_eq!(round_up(8.67 * 3600.0), 10.0 * 3600.0);
        assert_eq!(round_up(2.01 * 86_400.0), 3.0 * 86_400.0);
        assert_eq!(round_up(2.0 * 3600.0), 2.0 * 3600.0);
        assert_eq!(round_up(5400.0), 1.5 * 3600.0); // 1.5 h, shown in h
        assert_eq!(round_up(0.0), 0.0);
    }

    #[test]
    fn rounding_up_never_stretches_a_horizon_more_than_one_and_a_half_times() {
        // Every duration from 1 ms to 10 years on a fine log grid, unit boundaries included
        // (59.9 s, 59.9 min, 23.9 h...): the old 1, 2, 5 ladder took 2.01 to 5 (2.49 times).
        let mut worst: f64 = 1.0;
        for k in 0..=20_000 {
            let t = 1e-3 * 10f64.powf(k as f64 * 11.5 / 20_000.0);
            let r = round_up(t);
            assert!(r >= t * (1.0 - 1e-12), "{t} -> {r}");
            worst = worst.max(r / t);
        }
        assert!(worst <= MAX_STRETCH * (1.0 + 1e-9), "stretched {worst} times");
        assert!(worst > 1.45, "the grid should find the worst case: {worst}");
    }
}
