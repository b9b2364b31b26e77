//! Forward sensitivities of a run: the states and their derivatives ∂y/∂θⱼ with respect to a
//! few parameters, from one integration of the augmented system (diffsol's BDF with forward
//! sensitivity equations).
//!
//! For y' = f(y; θ), y(0) = y₀(θ), the sensitivities sⱼ = ∂y/∂θⱼ obey sⱼ' = J(y) sⱼ + ∂f/∂θⱼ,
//! sⱼ(0) = ∂y₀/∂θⱼ (Hairer, Nørsett and Wanner, Solving Ordinary Differential Equations I, 2nd
//! ed., 1993, §I.14, "variational equations"). J sⱼ is the model's exact Jacobian-vector product.
//! The parametric terms come from the models compiled at θⱼ ± hⱼ ([`Perturbed`]): ∂f/∂θⱼ(y) =
//! (f₊(y) − f₋(y)) / (θ₊ − θ₋) at the current state, one pair of right-hand sides per step and
//! parameter, never a second integration. The right-hand side is linear in every rate
//! constant, quantum yield, photon flux and channel share, so for those this difference is
//! exact up to round-off; through a barrier or a temperature it is a central difference with
//! error O(h²). The sensitivities take part in the step-size control (relative tolerance as
//! the states', absolute tolerance the states' divided by |θⱼ|).
//!
//! No file I/O, no printing.

use super::{Counts, Options};
use crate::error::{Error, Result};
use crate::model::Model;
use crate::model::rhs::{LedgerLayout, Rhs};
use diffsol::{
    FaerSparseLU, FaerSparseMat, NalgebraLU, NalgebraMat, OdeBuilder, OdeSolverMethod, OdeSolverStopReason, Vector,
};

/// One parameter's models on either side of its value.
pub struct Perturbed<'m> {
    /// The model at θ + h (or at θ itself for a one-sided difference).
    pub plus: &'m Model,
    /// The model at θ − h (or at θ itself).
    pub minus: &'m Model,
    /// θ₊ − θ₋, in the parameter's unit (nonzero).
    pub span: f64,
    /// A typical magnitude of θ (its value, or the step where the value is 0), for the
    /// sensitivities' absolute tolerance.
    pub scale: f64,
}

/// States and sensitivities at the output times.
#[derive(Debug, Clone)]
pub struct SensitivityRun {
    /// Output times, s (starting at 0).
    pub times: Vec<f64>,
    /// Full states (concentrations then ledger) at each output time.
    pub states: Vec<Vec<f64>>,
    /// ∂state/∂θⱼ: `sensitivities[k][j]` at output time k, parameter j.
    pub sensitivities: Vec<Vec<Vec<f64>>>,
    /// Where the ledger sits in a state.
    pub layout: LedgerLayout,
    /// Work counts.
    pub counts: Counts,
}

/// Integrate `model` with the sensitivities to `params` to `opts.until`, reporting states and
/// sensitivities at [`super::output_times`]. BDF always (the sensitivities share its Newton
/// matrix); events and light schedules are not supported here (an error says so).
pub fn simulate(model: &Model, params: &[Perturbed], opts: &Options) -> Result<SensitivityRun> {
    if opts.event.is_some() || opts.schedule.is_some() {
        return Err(Error::Usage(
            "sensitivities are integrated without stop events or light schedules".into(),
        ));
    }
    if !(opts.until.is_finite() && opts.until > 0.0) {
        return Err(Error::Usage(format!(
            "the end time must be positive, not {} s",
            opts.until
        )));
    }
    let rhs = Rhs::new(model);
    let n = rhs.layout.len();
    let y0 = rhs.initial_state();
    let sides: Vec<(Rhs, Rhs)> = params.iter().map(|p| (Rhs::new(p.plus), Rhs::new(p.minus))).collect();
    for (p, (a, b)) in params.iter().zip(&sides) {
        if a.layout != rhs.layout || b.layout != rhs.layout || p.span == 0.0 || !p.span.is_finite() {
            return Err(Error::Numerical(
                "a perturbed model has another layout or a zero step: no sensitivities".into(),
            ));
        }
    }
    let s0: Vec<Vec<f64>> = params
        .iter()
        .zip(&sides)
        .map(|(p, (a, b))| {
            let (ya, yb) = (a.initial_state(), b.initial_state());
            ya.iter().zip(&yb).map(|(u, v)| (u - v) / p.span).collect()
        })
        .collect();
    let np = params.len();
    let times = super::output_times(opts, 0.0);
    let fail = |e: diffsol::error::DiffsolError| Error::Numerical(format!("the sensitivity integration stopped: {e}"));
    let parametric = |x: &[f64], v: &[f64], y: &mut [f64]| {
        y.iter_mut().for_each(|q| *q = 0.0);
        let mut fp = vec![0.0; n];
        let mut fm = vec![0.0; n];
        for (j, &w) in v.iter().enumerate() {
            if w == 0.0 {
                continue;
            }
            let (a, b) = &sides[j];
            a.eval(x, &mut fp);
            b.eval(x, &mut fm);
            let c = w / params[j].span;
            for i in 0..n {
                y[i] += c * (fp[i] - fm[i]);
            }
        }
    };
    let initial = |v: &[f64], y: &mut [f64]| {
        y.iter_mut().for_each(|q| *q = 0.0);
        for (j, &w) in v.iter().enumerate() {
            if w != 0.0 {
                for i in 0..n {
                    y[i] += w * s0[j][i];
                }
            }
        }
    };
    let scales: Vec<f64> = params
        .iter()
        .map(|p| {
            if p.scale.is_finite() && p.scale != 0.0 {
                p.scale.abs()
            } else {
                1.0
            }
        })
        .collect();
    macro_rules! builder {
        ($m:ty) => {
            OdeBuilder::<$m>::new()
                .rtol(opts.rtol)
                .atol(vec![opts.atol; n])
                .sens_rtol(opts.rtol)
                .sens_atol(vec![opts.atol; n])
                .param_scales(scales.clone())
                .p(vec![0.0; np])
                .rhs_sens_implicit(
                    |x: &[f64], _p: &[f64], _t: f64, y: &mut [f64]| rhs.eval(x, y),
                    |x: &[f64], _p: &[f64], _t: f64, v: &[f64], y: &mut [f64]| rhs.jac_vec(x, v, y),
                    |x: &[f64], _p: &[f64], _t: f64, v: &[f64], y: &mut [f64]| parametric(x, v, y),
                )
                .init_sens(
                    |_p: &[f64], _t: f64, y: &mut [f64]| y.copy_from_slice(&y0),
                    |_p: &[f64], _t: f64, v: &[f64], y: &mut [f64]| initial(v, y),
                    n,
                )
        };
    }
    let mut out = SensitivityRun {
        times: Vec::with_capacity(times.len()),
        states: Vec::with_capacity(times.len()),
        sensitivities: Vec::with_capacity(times.len()),
        layout: rhs.layout,
        counts: Counts::default(),
    };
    out.times.push(0.0);
    out.states.push(y0.clone());
    out.sensitivities.push(s0.clone());
    let split = |s: &[f64]| -> Vec<Vec<f64>> { (0..np).map(|j| s[j * n..(j + 1) * n].to_vec()).collect() };
    macro_rules! go {
        ($m:ty, $ls:ty) => {{
            let mut problem = builder!($m).build().map_err(fail)?;
            problem.ode_options.max_number_timesteps = super::MAX_STEPS;
            let mut solver = problem.bdf_sens::<$ls>().map_err(fail)?;
            solver.set_stop_time(opts.until).map_err(fail)?;
            let mut next = 1;
            loop {
                let reason = solver.step().map_err(fail)?;
                let t = solver.state().t;
                while next < times.len() && times[next] <= t {
                    let y = solver.interpolate(times[next]).map_err(fail)?.clone_as_vec();
                    let s = solver.interpolate_sens(times[next]).map_err(fail)?.clone_as_vec();
                    out.times.push(times[next]);
                    out.states.push(y);
                    out.sensitivities.push(split(&s));
                    next += 1;
                }
                if matches!(reason, OdeSolverStopReason::TstopReached) || next >= times.len() {
                    break;
                }
            }
            let st = solver.get_statistics();
            out.counts.steps = st.number_of_steps;
            out.counts.jacobian_setups = st.number_of_linear_solver_setups;
            out.counts.rejected = st.number_of_error_test_failures;
        }};
    }
    if opts.sparse.unwrap_or(n > 150) {
        go!(FaerSparseMat<f64>, FaerSparseLU<f64>);
    } else {
        go!(NalgebraMat<f64>, NalgebraLU<f64>);
    }
    out.counts.rhs = rhs.rhs_calls.get();
    out.counts.jacobian_products = rhs.jac_calls.get();
    if out
        .states
        .iter()
        .flatten()
        .chain(out.sensitivities.iter().flatten().flatten())
        .any(|v| !v.is_finite())
    {
        return Err(Error::Numerical(
            "the sensitivity integration gave a value that is not finite".into(),
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests;
