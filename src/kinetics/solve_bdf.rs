//! The stiff path: diffsol's BDF with the model's exact Jacobian-vector product.

use super::{Counts, Options, Run, Stop};
use crate::error::{Error, Result};
use crate::model::rhs::Rhs;
use diffsol::{
    FaerSparseLU, FaerSparseMat, NalgebraLU, NalgebraMat, OdeBuilder, OdeSolverMethod, OdeSolverStopReason, Vector,
};

pub(super) fn run(rhs: &Rhs, y0: &[f64], times: &[f64], opts: &Options, progress: &mut dyn FnMut(f64)) -> Result<Run> {
    let n = y0.len();
    let fail = |e: diffsol::error::DiffsolError| Error::Numerical(format!("the BDF integrator stopped: {e}"));
    let y0v = y0.to_vec();
    let y0v = &y0v;
    macro_rules! builder {
        ($m:ty) => {
            OdeBuilder::<$m>::new()
                .rtol(opts.rtol)
                .atol(vec![opts.atol; n])
                .rhs_implicit(
                    |x: &[f64], _p: &[f64], _t: f64, y: &mut [f64]| rhs.eval(x, y),
                    |x: &[f64], _p: &[f64], _t: f64, v: &[f64], y: &mut [f64]| rhs.jac_vec(x, v, y),
                )
                .init(|_p: &[f64], _t: f64, y: &mut [f64]| y.copy_from_slice(y0v), n)
        };
    }
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
                out.times.push(times[next]);
                out.states.push(interp(times[next]).map_err(fail)?);
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
                        out.times.push(times[next]);
                        out.states.push(interp(times[next].min(t)).map_err(fail)?);
                    }
                    return Ok(());
                }
                OdeSolverStopReason::InternalTimestep => {}
            }
        }
    };
    macro_rules! go {
        ($problem:expr, $ls:ty) => {{
            let problem = $problem.build().map_err(fail)?;
            let mut solver = problem.bdf::<$ls>().map_err(fail)?;
            solver.set_stop_time(opts.until).map_err(fail)?;
            let cell = std::cell::RefCell::new(solver);
            let mut step = || {
                let mut s = cell.borrow_mut();
                let r = s.step()?;
                Ok((r, s.state().t))
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
        }};
    }
    match (event, sparse) {
        (Some(ev), false) => {
            let (i, level) = (ev.species, ev.level);
            go!(
                builder!(NalgebraMat<f64>).root(
                    move |x: &[f64], _p: &[f64], _t: f64, y: &mut [f64]| y[0] = x[i] - level,
                    1
                ),
                NalgebraLU<f64>
            )
        }
        (Some(ev), true) => {
            let (i, level) = (ev.species, ev.level);
            go!(
                builder!(FaerSparseMat<f64>).root(
                    move |x: &[f64], _p: &[f64], _t: f64, y: &mut [f64]| y[0] = x[i] - level,
                    1
                ),
                FaerSparseLU<f64>
            )
        }
        (None, false) => go!(builder!(NalgebraMat<f64>), NalgebraLU<f64>),
        (None, true) => go!(builder!(FaerSparseMat<f64>), FaerSparseLU<f64>),
    }
    Ok(out)
}
