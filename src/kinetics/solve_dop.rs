//! The non-stiff path and cross-check: ode_solvers' Dop853.

use super::{Counts, Options, Run, Stop};
use crate::error::{Error, Result};
use crate::model::rhs::Rhs;
use ode_solvers::{DVector, Dop853, System};

struct Sys<'a, 'm> {
    rhs: &'a Rhs<'m>,
}

impl System<f64, DVector<f64>> for Sys<'_, '_> {
    fn system(&self, _t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        self.rhs.eval(y.as_slice(), dy.as_mut_slice());
    }
}

pub(super) fn run(rhs: &Rhs, y0: &[f64], times: &[f64], opts: &Options, progress: &mut dyn FnMut(f64)) -> Result<Run> {
    let mut out = Run {
        times: vec![0.0],
        states: vec![y0.to_vec()],
        counts: Counts::default(),
        stop: Stop::EndTime,
    };
    let mut y = DVector::from_vec(y0.to_vec());
    // Integrate from output time to output time so every output is a solver point.
    for w in times.windows(2) {
        let (t0, t1) = (w[0], w[1]);
        if t1 <= t0 {
            continue;
        }
        let mut s = Dop853::new(Sys { rhs }, t0, t1, t1 - t0, y.clone(), opts.rtol, opts.atol);
        let stats = s
            .integrate()
            .map_err(|e| Error::Numerical(format!("the Dop853 integrator stopped at {t0} s: {e}")))?;
        out.counts.steps += stats.accepted_steps as usize;
        out.counts.rejected += stats.rejected_steps as usize;
        let ys = s.y_out();
        y = ys.last().cloned().unwrap_or(y);
        out.times.push(t1);
        out.states.push(y.as_slice().to_vec());
        progress(t1 / opts.until);
    }
    Ok(out)
}
