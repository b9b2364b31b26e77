//! The explicit path and cross-check: ode_solvers' Dop853. When the method finds the problem
//! stiff it stops where it is and hands that state to the caller, which continues with BDF.

use super::{Counts, Options, Run, Stop};
use crate::error::{Error, Result};
use crate::model::rhs::Rhs;
use ode_solvers::dop_shared::IntegrationError;
use ode_solvers::{DVector, Dop853, OutputType, System};

struct Sys<'a, 'm> {
    rhs: &'a Rhs<'m>,
}

impl System<f64, DVector<f64>> for Sys<'_, '_> {
    fn system(&self, _t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        self.rhs.eval(y.as_slice(), dy.as_mut_slice());
    }
}

/// Where an explicit run found the problem stiff: the last accepted point (local time, s; state).
pub(super) type Handover = Option<(f64, Vec<f64>)>;

/// Integrate through `times` (local, from 0). A run that turns stiff ends early at its last
/// accepted point, returned beside the outputs reached so far; a run ends at the first output
/// at which `enough` (local time, state) says true.
pub(super) fn run(
    rhs: &Rhs,
    y0: &[f64],
    times: &[f64],
    opts: &Options,
    progress: &mut dyn FnMut(f64),
    enough: &mut dyn FnMut(f64, &[f64]) -> bool,
) -> Result<(Run, Handover)> {
    let mut out = Run {
        times: vec![0.0],
        states: vec![y0.to_vec()],
        counts: Counts::default(),
        stop: Stop::EndTime,
        sparse: false,
    };
    let mut y = DVector::from_vec(y0.to_vec());
    // Integrate from output time to output time so every output is a solver point.
    for w in times.windows(2) {
        let (t0, t1) = (w[0], w[1]);
        if t1 <= t0 {
            continue;
        }
        // Sparse output: every accepted step is recorded and the last one sits exactly at t1
        // (the crate's dense output mis-handles an increment equal to the whole interval).
        // Controller settings are the Hairer–Wanner defaults (safety 0.9, β 0, step ratio
        // limits 1/3 and 6), with at most 100000 steps per interval. Hairer's stiffness test
        // (h·λ estimated from the last two stages above 6.1 on 15 steps without 6 clear ones
        // between) runs on every step: the solver restarts at every output time, so a test
        // every 1000 steps, Hairer's default, would rarely run at all.
        let mut s = Dop853::from_param(
            Sys { rhs },
            t0,
            t1,
            t1 - t0,
            y.clone(),
            opts.rtol,
            opts.atol,
            0.9,
            0.0,
            0.333,
            6.0,
            t1 - t0,
            0.0,
            100_000,
            1,
            OutputType::Sparse,
        );
        match s.integrate() {
            Ok(stats) => {
                out.counts.steps += stats.accepted_steps as usize;
                out.counts.rejected += stats.rejected_steps as usize;
            }
            Err(IntegrationError::StiffnessDetected { .. }) => {
                // The last accepted point (the crate stops before advancing past it).
                let (xs, ys) = (s.x_out(), s.y_out());
                out.counts.steps += xs.len().saturating_sub(1);
                if let (Some(&x), Some(yx)) = (xs.last(), ys.last()) {
                    progress(x / opts.until);
                    return Ok((out, Some((x, yx.as_slice().to_vec()))));
                }
                return Err(Error::Numerical(format!(
                    "the Dop853 integrator found the problem stiff at {t0} s"
                )));
            }
            Err(e) => {
                return Err(Error::Numerical(format!(
                    "the Dop853 integrator stopped between {} and {}: {e}",
                    crate::units::format_time(t0),
                    crate::units::format_time(t1)
                )));
            }
        }
        let ys = s.y_out();
        y = ys.last().cloned().unwrap_or(y);
        out.times.push(t1);
        out.states.push(y.as_slice().to_vec());
        progress(t1 / opts.until);
        if enough(t1, y.as_slice()) {
            out.stop = Stop::Enough(t1);
            break;
        }
    }
    Ok((out, None))
}
