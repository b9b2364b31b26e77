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
use crate::model::Model;

/// Conversion of the limiting reagent at which an automatic horizon ends when no target is
/// given: 99 %, "full conversion" as a photochemist checks it by NMR or HPLC, whose detection
/// limit for the starting material is about 1 % (`common practice`). 95 % would stop a
/// second-order feed (ξ/(1 − ξ) = k c₀ t) five times too early to see what it feeds.
pub const DEFAULT_CONVERSION: f64 = 0.99;

/// Longest automatic horizon, s: one year of light. A report that needs longer must say so
/// with `--until`.
pub const CAP: f64 = 365.25 * 86400.0;

/// Why an automatic horizon ended where it did.
#[derive(Debug, Clone, PartialEq)]
pub enum Ended {
    /// The target (given, or the default conversion) was met at this time, s.
    Reached(f64),
    /// The concentrations stopped changing before the target was met (the reason), at or
    /// before this time, s.
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
                "{goal} is never reached: by {} nothing changes any more ({})",
                t(*at),
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
        (None, Some(u)) if u.why != Why::Horizon => (end, Ended::Steady(u.why, end)),
        _ => (end.min(CAP), Ended::Cap),
    };
    Ok(Horizon {
        time,
        ended,
        target: Some(target),
        plan: Some(plan),
    })
}
