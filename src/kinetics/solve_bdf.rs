//! The stiff path: diffsol's BDF with the model's analytic Jacobian ([`Equations`]).

use super::equations::Equations;
use super::sparse_lu::{SparseLu, Tally};
use super::{Counts, Options, Run, Stop};
use crate::error::{Error, Result};
use crate::model::jacobian::Jacobian;
use crate::model::rhs::Rhs;
use diffsol::{Bdf, FaerSparseMat, NalgebraLU, NalgebraMat, OdeBuilder, OdeSolverMethod, OdeSolverStopReason, Vector};

/// Integrate through `times` (local, from 0), stopping at the first output at which `enough`
/// (local time, state) says true.
pub(super) fn run(
    rhs: &Rhs,
    y0: &[f64],
    times: &[f64],
    opts: &Options,
    progress: &mut dyn FnMut(f64),
    enough: &mut dyn FnMut(f64, &[f64]) -> bool,
) -> Result<Run> {
    let n = y0.len();
    let volume = rhs.model.volume;
    let fail = |e: diffsol::error::DiffsolError| Error::Numerical(stopped_words(&e, opts, volume));
    let jac = Jacobian::new(rhs.model);
    let event = opts.event;
    let sparse = opts.sparse.unwrap_or(n > 150);
    let mut out = Run {
        times: vec![0.0],
        states: vec![y0.to_vec()],
        counts: Counts::default(),
        stop: Stop::EndTime,
        sparse,
    };
    let mut drive = |solver: &mut dyn FnMut() -> std::result::Result<
        (OdeSolverStopReason<f64>, f64),
        diffsol::error::DiffsolError,
    >,
                     interp: &dyn Fn(f64) -> std::result::Result<Vec<f64>, diffsol::error::DiffsolError>|
     -> Result<()> {
        let mut next = 1;
        loop {
            let (reason, t) = solver().map_err(fail)?;
            let t_reached = match reason {
                OdeSolverStopReason::RootFound(tr, _) => tr,
                _ => t,
            };
            while next < times.len() && times[next] <= t_reached {
                let y = interp(times[next]).map_err(fail)?;
                let stop = enough(times[next], &y);
                out.times.push(times[next]);
                out.states.push(y);
                if stop {
                    out.stop = Stop::Enough(times[next]);
                    return Ok(());
                }
                next += 1;
            }
            progress((t_reached / opts.until).min(1.0));
            match reason {
                OdeSolverStopReason::RootFound(tr, _) => {
                    if out.times.last().is_some_and(|&l| l < tr) {
                        out.times.push(tr);
                        out.states.push(interp(tr).map_err(fail)?);
                    }
                    out.stop = Stop::Event(tr);
                    return Ok(());
                }
                OdeSolverStopReason::TstopReached => {
                    if next < times.len() {
                        let y = interp(times[next].min(t)).map_err(fail)?;
                        if enough(times[next], &y) {
                            out.stop = Stop::Enough(times[next]);
                        }
                        out.times.push(times[next]);
                        out.states.push(y);
                    }
                    return Ok(());
                }
                OdeSolverStopReason::InternalTimestep => {}
            }
        }
    };
    let tally = std::rc::Rc::new(std::cell::Cell::new(Tally::default()));
    macro_rules! go {
        ($m:ty, $lt:ty, $ls:expr) => {{
            let eqn = Equations::<$m>::new(rhs, &jac, y0, event);
            let mut problem = OdeBuilder::<$m>::new()
                .rtol(opts.rtol)
                .atol(vec![opts.atol; n])
                .build_from_eqn(eqn)
                .map_err(fail)?;
            problem.ode_options.max_number_timesteps = super::MAX_STEPS;
            // After a failed Newton iteration, evaluate the Jacobian again whatever the step
            // size did (diffsol re-forms the matrix with the old Jacobian when h moved by more
            // than 20 %; with kept factors, `lu_reuse`, that matrix could be met with the same
            // factors and fail again). Measured on six side-by-side networks: 5-8 % fewer Newton
            // iterations, fewer failures, about 4 % less time (DEVELOPERS.md).
            problem.ode_options.threshold_to_update_rhs_jacobian = f64::INFINITY;
            // diffsol's smallest step is an absolute 2.2e-16 s, which stopped any run with a
            // step faster than about 1e11 /s at its start; the floor that matters is relative
            // (a step too small to move t), checked after every step below.
            problem.ode_options.min_timestep = f64::MIN_POSITIVE;
            let ls = $ls;
            let state = problem.bdf_state::<$lt>().map_err(fail)?;
            let mut solver: Bdf<'_, _, $lt> = Bdf::new(&problem, state, ls).map_err(fail)?;
            solver.set_stop_time(opts.until).map_err(fail)?;
            let cell = std::cell::RefCell::new(solver);
            let mut step = || {
                let mut s = cell.borrow_mut();
                let r = s.step()?;
                let (t, h) = (s.state().t, s.state().h);
                if h.abs() < MIN_STEP_ULPS * f64::EPSILON * t.abs() {
                    return Err(diffsol::error::DiffsolError::from(
                        diffsol::error::OdeSolverError::StepSizeTooSmall { time: t },
                    ));
                }
                Ok((r, t))
            };
            let interp = |t: f64| {
                let s = cell.borrow();
                s.interpolate(t).map(|v| v.clone_as_vec())
            };
            drive(&mut step, &interp)?;
            let s = cell.borrow();
            let st = s.get_statistics();
            out.counts.steps = st.number_of_steps;
            out.counts.jacobian_setups = st.number_of_linear_solver_setups;
            out.counts.rejected = st.number_of_error_test_failures;
            out.counts.newton_iterations = st.number_of_nonlinear_solver_iterations;
            out.counts.newton_failures = st.number_of_nonlinear_solver_fails;
        }};
    }
    if sparse {
        go!(FaerSparseMat<f64>, SparseLu, SparseLu::counted(tally.clone()));
        // diffsol counts the matrices it asked for; the factorisations are the solver's
        let t = tally.get();
        out.counts.jacobian_setups = t.factorisations;
        out.counts.lu_kept = t.kept;
    } else {
        go!(NalgebraMat<f64>, NalgebraLU<f64>, NalgebraLU::<f64>::default())
    }
    out.counts.jacobians = jac.evaluations.get();
    Ok(out)
}

/// The smallest step, in units of the spacing of doubles at the current time: below it a step
/// no longer moves t reliably (common practice: a few ulps), and the run stops with
/// diffsol's step-too-small error instead of stepping in place.
const MIN_STEP_ULPS: f64 = 16.0;

/// What a stopped BDF run says: diffsol's reason in words, with the time formatted and, where
/// the tolerances are the likely cause, what to try.
fn stopped_words(e: &diffsol::error::DiffsolError, opts: &Options, volume_l: f64) -> String {
    use crate::units::display::{format_concentration, format_time};
    use diffsol::error::{DiffsolError, OdeSolverError};
    let tol = format!("rtol {:e}, atol {}", opts.rtol, format_concentration(opts.atol));
    let one_molecule = 1.0 / (crate::units::constants::AVOGADRO * volume_l);
    match e {
        DiffsolError::OdeSolverError(OdeSolverError::StepSizeTooSmall { time }) => {
            let hint = if opts.atol < one_molecule {
                format!(
                    "; the absolute tolerance is also below one molecule in the sample ({}), tighter than \
                     the equations can mean: try --atol near that or above",
                    format_concentration(one_molecule)
                )
            } else {
                String::new()
            };
            format!(
                "the BDF integrator stopped at {}: its step fell below what double precision resolves at \
                 that time ({tol}): the solution changes there faster than the tolerances can follow, as a \
                 concentration that runs away does{hint}",
                format_time(*time)
            )
        }
        DiffsolError::OdeSolverError(OdeSolverError::TooManyNonlinearSolverFailures { time, num_failures }) => {
            format!(
                "the BDF integrator stopped at {}: its implicit solve failed {num_failures} times in one step \
                 ({tol})",
                format_time(*time)
            )
        }
        DiffsolError::OdeSolverError(OdeSolverError::TooManyErrorTestFailures { time, num_failures }) => {
            format!(
                "the BDF integrator stopped at {}: {num_failures} steps in a row missed the tolerances ({tol})",
                format_time(*time)
            )
        }
        DiffsolError::OdeSolverError(OdeSolverError::TooManyTimesteps { time, num_steps }) => format!(
            "the BDF integrator stopped at {} after {num_steps} steps, its limit",
            format_time(*time)
        ),
        _ => format!("the BDF integrator stopped: {e}"),
    }
}

#[cfg(test)]
mod tests {
    use super::stopped_words;
    use crate::kinetics::Options;
    use diffsol::error::{DiffsolError, OdeSolverError};

    /// A step that became too small is said with a readable time, the tolerances, and the
    /// one-molecule hint when the absolute tolerance is below one molecule in the sample.
    #[test]
    fn a_too_small_step_is_said_in_words() {
        let e = DiffsolError::OdeSolverError(OdeSolverError::StepSizeTooSmall { time: 6.928e-17 });
        let mut opts = Options::until(1.0);
        opts.atol = 1e-30;
        opts.rtol = 1e-10;
        let says = stopped_words(&e, &opts, 3e-3);
        assert!(
            says.starts_with("the BDF integrator stopped at 0.0693 fs") && says.contains("rtol 1e-10"),
            "{says}"
        );
        assert!(says.contains("below one molecule in the sample"), "{says}");
        opts.atol = 1e-12;
        let says = stopped_words(&e, &opts, 3e-3);
        assert!(!says.contains("molecule") && says.contains("runs away"), "{says}");
    }
}
