//! The wait for intermediates to drain before the chain's yields are compared with the
//! kinetics' ([`super::agreement`]): from the automatic horizon's state, one integration watched
//! at the end of stretches that double the time.

use super::agreement::YIELD_CLOSE;
use crate::error::Result;
use crate::model::Model;

/// How the wait for the intermediates ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Wait {
    /// Less than [`YIELD_CLOSE`] was in intermediates at the horizon already.
    NotNeeded,
    /// The run went on until less than [`YIELD_CLOSE`] was in intermediates.
    Drained,
    /// The concentrations stopped changing with more than that in intermediates.
    Steady,
    /// Still more at [`DRAIN_LONGEST`] times the horizon (or the automatic horizon's cap).
    Cap,
}

/// The kinetics' state where the yields are read.
pub(super) struct Reading {
    /// When the yields are read, s.
    pub time: f64,
    /// The state then.
    pub state: Vec<f64>,
    /// How the wait ended.
    pub ended: Wait,
}

/// The longest wait for the intermediates to drain, as a multiple of the automatic horizon:
/// twelve doublings. An intermediate that outlives the conversion of the start mixture by a
/// factor of 4096 is a product for any practical purpose, and is reported as still in transit.
pub const DRAIN_LONGEST: f64 = 4096.0;

/// Outputs per doubling stretch of [`drain`]: the reading is the first output with less than
/// [`YIELD_CLOSE`] in transit, so it lies within 1/`DRAIN_OUTPUTS` of the stretch's length of
/// the moment it drained.
const DRAIN_OUTPUTS: usize = 64;

/// Go on from the automatic horizon's `plan` (its model, the plan's tolerances, its light) for
/// stretches that double the time, until the share of the consumed start mixture in
/// intermediates, `transit(state)`, is at most [`YIELD_CLOSE`]; or until nothing changes any
/// more over a stretch, or [`DRAIN_LONGEST`] times the horizon (at most
/// [`crate::plan::horizon::CAP`]). One integration runs through the stretches and is watched at
/// their outputs ([`crate::kinetics::simulate_watching`]); restarting the integrator for every
/// stretch cost five times the steps on a 1,000-species network.
pub(super) fn drain(model: &Model, plan: &crate::plan::Plan, transit: &dyn Fn(&[f64]) -> f64) -> Result<Reading> {
    let tr = &plan.trajectory;
    let (t, y) = (*tr.times.last().unwrap_or(&0.0), tr.last().to_vec());
    let share = transit(&y);
    if share.is_nan() || share <= YIELD_CLOSE || t.is_nan() || t <= 0.0 {
        return Ok(Reading {
            time: t,
            state: y,
            ended: Wait::NotNeeded,
        });
    }
    let ns = model.n_species();
    let last = (t * DRAIN_LONGEST).min(crate::plan::horizon::CAP).max(t);
    // The stretches' ends, and DRAIN_OUTPUTS output times evenly within each.
    let mut ends = vec![t];
    while ends[ends.len() - 1] < last {
        ends.push((2.0 * ends[ends.len() - 1]).min(last));
    }
    let times: Vec<f64> = ends
        .windows(2)
        .flat_map(|w| {
            (1..=DRAIN_OUTPUTS).map(move |j| match j {
                DRAIN_OUTPUTS => w[1],
                _ => w[0] + (w[1] - w[0]) * j as f64 / DRAIN_OUTPUTS as f64,
            })
        })
        .collect();
    if times.is_empty() {
        return Ok(Reading {
            time: t,
            state: y,
            ended: Wait::Cap,
        });
    }
    let opts = crate::kinetics::Options {
        rtol: crate::plan::PlanOptions::default().rtol,
        atol: tr.atol,
        schedule: tr.schedule,
        times,
        ..crate::kinetics::Options::until(last)
    };
    // The state at the end of each stretch reached (the first: the start), for the test that
    // nothing changes any more: every concentration moved less than the tolerances over a stretch.
    let mut at_ends: Vec<Vec<f64>> = vec![y.clone()];
    let near = |a: f64, b: f64| (a - b).abs() <= 1e-12 * a.abs().max(b.abs());
    let mut still = false;
    let mut enough = |time: f64, state: &[f64]| {
        if transit(state) <= YIELD_CLOSE {
            return true;
        }
        let Some(k) = ends.iter().skip(1).position(|&e| near(e, time)) else {
            return false;
        };
        at_ends.truncate(k + 1);
        let before = &at_ends[k];
        still = state[..ns]
            .iter()
            .zip(&before[..ns])
            .all(|(a, b)| (a - b).abs() <= tr.atol.max(1e-12) + 1e-6 * b.abs());
        at_ends.push(state.to_vec());
        still
    };
    let run = crate::kinetics::simulate_watching(model, t, &y, &opts, &mut |_| {}, &mut enough)?;
    let (time, state) = (*run.times.last().unwrap_or(&last), run.last().to_vec());
    let ended = if transit(&state) <= YIELD_CLOSE {
        Wait::Drained
    } else if still {
        Wait::Steady
    } else {
        Wait::Cap
    };
    Ok(Reading { time, state, ended })
}
