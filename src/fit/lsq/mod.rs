//! Weighted nonlinear least squares: Levenberg–Marquardt (the `levenberg-marquardt` crate) on
//! transformed parameters, and the linearised statistics at the optimum.
//!
//! Bounds are kept by transformation, never by clipping: a value in [0, 1] is fitted as
//! z = logit(x), a positive value as z = ln x, anything else as itself. The Jacobian is taken by
//! central differences on the transformed scale; 95 % intervals are taken on that scale and
//! transformed back, so they keep the range too. Standard errors come from (JᵀJ)⁻¹ of the
//! weighted residuals at the optimum in the natural parameters, either as they are (σ known:
//! [`ErrorScale::Unscaled`]) or scaled by the reduced χ² (σ estimated from the scatter:
//! [`ErrorScale::ReducedChi2`], the default of [`Settings`]; it is what the NIST StRD certified
//! standard deviations are). Bevington & Robinson, Data Reduction and Error Analysis for the
//! Physical Sciences, 3rd ed., 2003, ch. 8 (`from memory` for the chapter); SciPy's `curve_fit`
//! documents the same choice as `absolute_sigma`.

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::{DMatrix, DVector, Dyn, Owned};
use statrs::distribution::{ContinuousCDF, Normal, StudentsT};
use std::cell::RefCell;
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// How the covariance of the parameters is scaled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorScale {
    /// σ estimated from the scatter: (JᵀJ)⁻¹ × reduced χ², intervals with Student t (n − p dof).
    ReducedChi2,
    /// σ known (the residuals are divided by given standard deviations): (JᵀJ)⁻¹ as it is,
    /// intervals with the normal quantile (common practice: nothing is estimated from the scatter).
    Unscaled,
}

pub use crate::network::params::Transform;

/// A least-squares model: weighted residuals rᵢ = (yᵢ − fᵢ(x)) / σᵢ at natural parameters x.
pub trait Residuals: Sync {
    /// The weighted residuals, or None where the model cannot be evaluated at `x`.
    fn residuals(&self, x: &[f64]) -> Option<Vec<f64>>;

    /// True when [`Residuals::derivatives`] gives exact derivatives: the search then takes its
    /// Jacobian from them instead of central differences.
    fn has_derivatives(&self) -> bool {
        false
    }

    /// The residuals at natural `x` and their derivatives, `columns[j][i]` = ∂rᵢ/∂xⱼ, from one
    /// evaluation of the model (None where it cannot be evaluated, or has no derivatives).
    fn derivatives(&self, _x: &[f64]) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
        None
    }
}

impl<F: Fn(&[f64]) -> Option<Vec<f64>> + Sync> Residuals for F {
    fn residuals(&self, x: &[f64]) -> Option<Vec<f64>> {
        self(x)
    }
}

/// Stopping tolerances and limits.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// Relative reduction of the sum of squares below which the search stops.
    pub ftol: f64,
    /// Relative step below which the search stops.
    pub xtol: f64,
    /// Orthogonality of residuals and Jacobian columns below which the search stops.
    pub gtol: f64,
    /// The search's own budget of residual evaluations (Jacobians not counted), in multiples of
    /// (number of parameters + 1); a [`Budget`] caps every evaluation, Jacobians included.
    pub patience: usize,
    /// Relative central-difference step on the transformed scale.
    pub step: f64,
    /// How the covariance is scaled.
    pub errors: ErrorScale,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            ftol: 1e-12,
            xtol: 1e-12,
            gtol: 1e-12,
            patience: 200,
            step: 1e-6,
            errors: ErrorScale::ReducedChi2,
        }
    }
}

/// Why a fit failed.
#[derive(Debug, Clone, PartialEq)]
pub struct FitFailure(pub String);

/// The optimum and its linearised statistics.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// Best natural parameter values.
    pub values: Vec<f64>,
    /// Fitted (transformed) values at the optimum.
    pub fitted: Vec<f64>,
    /// Weighted residuals at the optimum.
    pub residuals: Vec<f64>,
    /// χ² = Σ rᵢ² (the residual sum of squares when unweighted).
    pub chi2: f64,
    /// Degrees of freedom n − p.
    pub dof: usize,
    /// χ² / dof (NaN when dof is 0).
    pub reduced_chi2: f64,
    /// How the covariance was scaled.
    pub errors: ErrorScale,
    /// Covariance of the natural parameters, (JᵀJ)⁻¹, × reduced χ² with
    /// [`ErrorScale::ReducedChi2`] (pseudo-inverse if singular).
    pub covariance: DMatrix<f64>,
    /// Standard errors √diag(covariance).
    pub standard_errors: Vec<f64>,
    /// The 97.5 % quantile the intervals use: Student t with dof degrees of freedom when scaled,
    /// the normal one when unscaled.
    pub quantile: f64,
    /// 95 % intervals, computed on the fitting scale and transformed back (so they stay inside
    /// the range): [x(z − q se_z), x(z + q se_z)] with se_z = se / |dx/dz|, q = `quantile`. For an
    /// untransformed parameter this is value ± q × se.
    pub intervals: Vec<(f64, f64)>,
    /// Correlation matrix.
    pub correlation: DMatrix<f64>,
    /// Reciprocal condition number of JᵀJ scaled to unit diagonal (near 0: not identifiable).
    pub rcond: f64,
    /// Model evaluations used by this search (Jacobian columns included).
    pub evaluations: usize,
    /// Jacobians the search asked for (with central differences each cost two evaluations per
    /// parameter; with exact derivatives they come with an evaluation).
    pub jacobians: usize,
    /// How the search ended, in words.
    pub termination: String,
    /// False when the search stopped before meeting its tolerances (an evaluation cap or a time
    /// limit): the values are then the best point reached, not an optimum.
    pub converged: bool,
}

/// Why a search stopped before converging.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Stop {
    /// The cap on model evaluations (over every start) was reached.
    EvaluationCap(usize),
    /// The wall-clock limit was reached, s.
    TimeLimit(f64),
    /// The search's own budget ([`Settings::patience`]) was used up.
    Patience,
}

impl Stop {
    /// The reason in words.
    pub fn describe(&self) -> String {
        match self {
            Stop::EvaluationCap(n) => format!("stopped at the cap of {n} model evaluations"),
            Stop::TimeLimit(s) => format!("stopped at the time limit of {} s", crate::units::sig(*s, 3)),
            Stop::Patience => "stopped: the search's own evaluation budget was used up".into(),
        }
    }
}

/// Limits shared by every start of a fit (a cap on model evaluations and an optional
/// wall-clock limit), and what they have seen so far: evaluations used and the best χ².
#[derive(Debug)]
pub struct Budget {
    max_evaluations: usize,
    limit: Option<Duration>,
    started: Instant,
    used: AtomicUsize,
    state: Mutex<(Option<Stop>, f64)>,
}

impl Budget {
    /// At most `max_evaluations` model evaluations, and at most `limit` of wall-clock time.
    pub fn new(max_evaluations: usize, limit: Option<Duration>) -> Self {
        Budget {
            max_evaluations,
            limit,
            started: Instant::now(),
            used: AtomicUsize::new(0),
            state: Mutex::new((None, f64::INFINITY)),
        }
    }

    /// No limits.
    pub fn unlimited() -> Self {
        Budget::new(usize::MAX, None)
    }

    /// The cap on model evaluations.
    pub fn max_evaluations(&self) -> usize {
        self.max_evaluations
    }

    /// Model evaluations used so far.
    pub fn used(&self) -> usize {
        self.used.load(Ordering::Relaxed)
    }

    /// Time since the budget was made.
    pub fn elapsed(&self) -> Duration {
        self.started.elapsed()
    }

    /// The lowest χ² seen so far (∞ before the first evaluation).
    pub fn best_chi2(&self) -> f64 {
        self.state.lock().map_or(f64::INFINITY, |s| s.1)
    }

    /// Why the searches were stopped, if they were.
    pub fn stopped(&self) -> Option<Stop> {
        self.state.lock().ok().and_then(|s| s.0)
    }

    fn stop(&self, why: Stop) {
        if let Ok(mut s) = self.state.lock()
            && s.0.is_none()
        {
            s.0 = Some(why);
        }
    }

    /// Take one evaluation; false (and the reason recorded) when a limit is reached.
    fn take(&self) -> bool {
        if self.stopped().is_some() {
            return false;
        }
        if self.used.fetch_add(1, Ordering::Relaxed) >= self.max_evaluations {
            self.stop(Stop::EvaluationCap(self.max_evaluations));
            return false;
        }
        if let Some(l) = self.limit
            && self.started.elapsed() >= l
        {
            self.stop(Stop::TimeLimit(l.as_secs_f64()));
            return false;
        }
        true
    }

    fn offer(&self, chi2: f64) {
        if let Ok(mut s) = self.state.lock()
            && chi2 < s.1
        {
            s.1 = chi2;
        }
    }
}

/// The problem as the LM crate sees it: transformed parameters. Every evaluation is taken
/// from the budget, and the best point seen (χ², z) is kept for a search that is stopped.
struct Problem<'a> {
    model: &'a dyn Residuals,
    transforms: &'a [Transform],
    z: DVector<f64>,
    step: f64,
    budget: &'a Budget,
    tick: &'a (dyn Fn(&Budget) + Sync),
    best: RefCell<Option<(f64, Vec<f64>)>>,
    evaluations: RefCell<usize>,
    jacobians: RefCell<usize>,
    /// With exact derivatives: the Jacobian on the transformed scale at the point last evaluated.
    exact: RefCell<Option<(Vec<f64>, DMatrix<f64>)>>,
    /// The number of residuals, known from the start.
    size: RefCell<usize>,
}

/// Each residual of a trial point the model cannot evaluate (a barrier so low that the rate
/// constant overflows, a value outside its range): far worse than any real point, so the search
/// rejects the step and shortens it instead of giving up.
const UNUSABLE: f64 = 1e100;

impl Problem<'_> {
    fn natural(&self, z: &[f64]) -> Vec<f64> {
        z.iter().zip(self.transforms).map(|(z, t)| t.inverse(*z)).collect()
    }

    fn eval(&self, z: &[f64]) -> Option<Vec<f64>> {
        // The start is always evaluated (counted, never refused), so a stopped search has a point.
        let first = *self.evaluations.borrow() == 0;
        if first {
            self.budget.used.fetch_add(1, Ordering::Relaxed);
        } else if !self.budget.take() {
            return None;
        }
        *self.evaluations.borrow_mut() += 1;
        let x = self.natural(z);
        let r = if self.model.has_derivatives() {
            // One model evaluation gives the residuals and, on the side, the Jacobian there.
            match self.model.derivatives(&x) {
                Some((r, columns)) => {
                    let jz = on_transformed_scale(&columns, z, self.transforms, r.len());
                    *self.exact.borrow_mut() = jz.map(|j| (z.to_vec(), j));
                    Some(r)
                }
                None => {
                    *self.exact.borrow_mut() = None;
                    self.model.residuals(&x)
                }
            }
        } else {
            self.model.residuals(&x)
        };
        let r = r.filter(|r| r.iter().all(|v| v.is_finite()));
        if first && let Some(r) = &r {
            *self.size.borrow_mut() = r.len();
        }
        let r = match r {
            None if !first => {
                (self.tick)(self.budget);
                return Some(vec![UNUSABLE; *self.size.borrow()]);
            }
            r => r,
        };
        if let Some(r) = &r {
            let chi2: f64 = r.iter().map(|v| v * v).sum();
            let mut best = self.best.borrow_mut();
            if best.as_ref().is_none_or(|b| chi2 < b.0) {
                *best = Some((chi2, z.to_vec()));
            }
            self.budget.offer(chi2);
        }
        (self.tick)(self.budget);
        r
    }
}

/// Exact derivatives ∂r/∂x (columns) as the Jacobian in z: ∂r/∂zⱼ = ∂r/∂xⱼ · dxⱼ/dzⱼ. None when
/// a column is missing, of the wrong length or not finite.
fn on_transformed_scale(columns: &[Vec<f64>], z: &[f64], transforms: &[Transform], n: usize) -> Option<DMatrix<f64>> {
    if columns.len() != z.len() || columns.iter().any(|c| c.len() != n || c.iter().any(|v| !v.is_finite())) {
        return None;
    }
    let cols: Vec<DVector<f64>> = columns
        .iter()
        .zip(z.iter().zip(transforms))
        .map(|(c, (&zj, t))| DVector::from_iterator(n, c.iter().map(|v| v * t.slope(zj))))
        .collect();
    Some(DMatrix::from_columns(&cols))
}

/// Central-difference Jacobian of `f` at `z`, steps `h_j = step × max(|z_j|, 1)`.
fn jacobian(f: &dyn Fn(&[f64]) -> Option<Vec<f64>>, z: &[f64], step: f64) -> Option<DMatrix<f64>> {
    let mut cols = Vec::with_capacity(z.len());
    for j in 0..z.len() {
        let h = step * z[j].abs().max(1.0);
        let mut zp = z.to_vec();
        let mut zm = z.to_vec();
        zp[j] += h;
        zm[j] -= h;
        let (rp, rm) = (f(&zp)?, f(&zm)?);
        cols.push(DVector::from_iterator(
            rp.len(),
            rp.iter().zip(&rm).map(|(a, b)| (a - b) / (zp[j] - zm[j])),
        ));
    }
    Some(DMatrix::from_columns(&cols))
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, z: &DVector<f64>) {
        self.z.copy_from(z);
    }

    fn params(&self) -> DVector<f64> {
        self.z.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        self.eval(self.z.as_slice()).map(DVector::from_vec)
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        *self.jacobians.borrow_mut() += 1;
        if self.model.has_derivatives() {
            let cached = || {
                let c = self.exact.borrow();
                c.as_ref()
                    .filter(|(z, _)| z.as_slice() == self.z.as_slice())
                    .map(|(_, j)| j.clone())
            };
            if let Some(j) = cached() {
                return Some(j);
            }
            self.eval(self.z.as_slice())?;
            if let Some(j) = cached() {
                return Some(j);
            }
        }
        jacobian(&|z| self.eval(z), self.z.as_slice(), self.step)
    }
}

/// Fit `model` from natural `start` values with the given transforms, without limits.
pub fn fit(
    model: &dyn Residuals,
    start: &[f64],
    transforms: &[Transform],
    settings: &Settings,
) -> Result<Solution, FitFailure> {
    fit_within(model, start, transforms, settings, &Budget::unlimited(), &|_| {})
}

/// Fit `model` from natural `start` values with the given transforms, every model evaluation
/// taken from `budget` and followed by a call of `tick`. When the budget runs out the search
/// ends at the best point it has seen, marked not converged ([`Solution::converged`]).
pub fn fit_within(
    model: &dyn Residuals,
    start: &[f64],
    transforms: &[Transform],
    settings: &Settings,
    budget: &Budget,
    tick: &(dyn Fn(&Budget) + Sync),
) -> Result<Solution, FitFailure> {
    assert_eq!(start.len(), transforms.len(), "one transform per parameter");
    let z0: Vec<f64> = start.iter().zip(transforms).map(|(x, t)| t.forward(*x)).collect();
    let problem = Problem {
        model,
        transforms,
        z: DVector::from_vec(z0),
        step: settings.step,
        budget,
        tick,
        best: RefCell::new(None),
        evaluations: RefCell::new(0),
        jacobians: RefCell::new(0),
        exact: RefCell::new(None),
        size: RefCell::new(0),
    };
    if problem.residuals().is_none() {
        return Err(FitFailure("the model cannot be evaluated at the start".into()));
    }
    let (problem, report) = LevenbergMarquardt::new()
        .with_ftol(settings.ftol)
        .with_xtol(settings.xtol)
        .with_gtol(settings.gtol)
        .with_patience(settings.patience)
        .minimize(problem);
    use levenberg_marquardt::TerminationReason as T;
    let stop = match &report.termination {
        T::User(_) if budget.stopped().is_some() => budget.stopped(),
        T::LostPatience => Some(Stop::Patience),
        _ => None,
    };
    let termination = match (stop, report.termination) {
        (Some(s), _) => format!("{}; the best point reached is reported, not an optimum", s.describe()),
        (None, T::Converged { .. }) => "converged".to_string(),
        (None, T::Orthogonal) => "converged (gradient orthogonal to residuals)".to_string(),
        (None, T::ResidualsZero) => "converged (residuals zero)".to_string(),
        (None, T::NoImprovementPossible(w)) => format!("converged to machine precision ({w})"),
        (None, other) => return Err(FitFailure(format!("the search failed: {other:?}"))),
    };
    let evaluations = *problem.evaluations.borrow();
    // A stopped search may have left the parameters at an untried step: take the best point seen.
    let z: Vec<f64> = match (stop, problem.best.borrow().as_ref()) {
        (Some(_), Some((_, z))) => z.clone(),
        _ => problem.z.iter().copied().collect(),
    };
    let values = problem.natural(&z);
    let mut s = statistics(model, values, z, transforms, settings, evaluations, termination)?;
    s.jacobians = *problem.jacobians.borrow();
    s.converged = stop.is_none();
    Ok(s)
}

/// Linearised statistics at the optimum `values` (natural) with fitted values `z`.
fn statistics(
    model: &dyn Residuals,
    values: Vec<f64>,
    z: Vec<f64>,
    transforms: &[Transform],
    settings: &Settings,
    evaluations: usize,
    termination: String,
) -> Result<Solution, FitFailure> {
    let exact = if model.has_derivatives() {
        model.derivatives(&values)
    } else {
        None
    };
    let residuals = match &exact {
        Some((r, _)) => r.clone(),
        None => model
            .residuals(&values)
            .ok_or_else(|| FitFailure("the model cannot be evaluated at the optimum".into()))?,
    };
    let n = residuals.len();
    let p = values.len();
    let chi2: f64 = residuals.iter().map(|r| r * r).sum();
    let dof = n.saturating_sub(p);
    let reduced_chi2 = if dof > 0 { chi2 / dof as f64 } else { f64::NAN };
    // Jacobian in the natural parameters: J_x = J_z / (dx/dz), each column.
    let eval = |zz: &[f64]| {
        let x: Vec<f64> = zz.iter().zip(transforms).map(|(z, t)| t.inverse(*z)).collect();
        model.residuals(&x)
    };
    let jz = match exact.and_then(|(_, c)| on_transformed_scale(&c, &z, transforms, n)) {
        Some(j) => j,
        None => jacobian(&eval, &z, settings.step)
            .ok_or_else(|| FitFailure("the model cannot be evaluated next to the optimum".into()))?,
    };
    // A parameter on the edge of its range has no linearised error (the data bound it from one
    // side at most): it is held at its value and the others' errors are conditional on it.
    let inside: Vec<usize> = (0..p).filter(|&j| !transforms[j].at_bound(z[j])).collect();
    let m = inside.len();
    let mut jx = DMatrix::zeros(n, m);
    for (k, &j) in inside.iter().enumerate() {
        let s = transforms[j].slope(z[j]);
        jx.set_column(k, &(jz.column(j) / s));
    }
    if jx.iter().any(|v| !v.is_finite()) {
        return Err(FitFailure(
            "the Jacobian at the optimum is not finite, so no errors can be given".into(),
        ));
    }
    let info = jx.transpose() * &jx;
    // Scale to unit diagonal before judging the conditioning (units differ between parameters).
    let d: Vec<f64> = (0..m).map(|i| info[(i, i)].sqrt().max(f64::MIN_POSITIVE)).collect();
    let scaled = DMatrix::from_fn(m, m, |i, j| info[(i, j)] / (d[i] * d[j]));
    // Bounded iterations: the decompositions end (with an error) rather than loop.
    const MAX_SWEEPS: usize = 10_000;
    let rcond = if m == 0 {
        0.0
    } else {
        let eig = scaled
            .clone()
            .try_symmetric_eigen(f64::EPSILON, MAX_SWEEPS)
            .ok_or_else(|| FitFailure("the information matrix has no eigen-decomposition".into()))?;
        let (lo, hi) = eig
            .eigenvalues
            .iter()
            .fold((f64::INFINITY, 0.0f64), |(lo, hi), &e| (lo.min(e), hi.max(e)));
        if hi > 0.0 { (lo / hi).max(0.0) } else { 0.0 }
    };
    let inv_scaled = if m == 0 {
        DMatrix::zeros(0, 0)
    } else {
        scaled
            .clone()
            .try_svd(true, true, f64::EPSILON, MAX_SWEEPS)
            .ok_or_else(|| FitFailure("the information matrix cannot be decomposed".into()))?
            .pseudo_inverse(1e-14)
            .map_err(|e| FitFailure(format!("the information matrix cannot be inverted: {e}")))?
    };
    let scale = match settings.errors {
        ErrorScale::ReducedChi2 if reduced_chi2.is_finite() => reduced_chi2,
        _ => 1.0,
    };
    let mut covariance = DMatrix::from_element(p, p, f64::NAN);
    for (a, &i) in inside.iter().enumerate() {
        for (b, &j) in inside.iter().enumerate() {
            covariance[(i, j)] = inv_scaled[(a, b)] / (d[a] * d[b]) * scale;
        }
    }
    let standard_errors: Vec<f64> = (0..p).map(|i| covariance[(i, i)].max(0.0).sqrt()).collect();
    let standard_errors: Vec<f64> = (0..p)
        .map(|i| {
            if inside.contains(&i) {
                standard_errors[i]
            } else {
                f64::NAN
            }
        })
        .collect();
    let correlation = DMatrix::from_fn(p, p, |i, j| {
        let s = standard_errors[i] * standard_errors[j];
        if s > 0.0 { covariance[(i, j)] / s } else { f64::NAN }
    });
    let quantile = match settings.errors {
        ErrorScale::ReducedChi2 => t_quantile(0.975, dof),
        ErrorScale::Unscaled => normal_quantile(0.975),
    };
    // On the fitting scale: the standard error of z by the same delta method, se_z = se / |dx/dz|
    // (NaN, no interval, for a parameter on the edge).
    let intervals = (0..p)
        .map(|j| {
            let t = transforms[j];
            let half = quantile * standard_errors[j] / t.slope(z[j]).abs();
            let (a, b) = (t.inverse(z[j] - half), t.inverse(z[j] + half));
            (a.min(b), a.max(b))
        })
        .collect();
    Ok(Solution {
        values,
        fitted: z,
        residuals,
        chi2,
        dof,
        reduced_chi2,
        errors: settings.errors,
        covariance,
        standard_errors,
        quantile,
        intervals,
        correlation,
        rcond,
        evaluations,
        jacobians: 0,
        termination,
        converged: true,
    })
}

/// How the 95 % intervals were made: the one statement every report prints (text, HTML, JSON).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum IntervalMethod {
    /// Student t with `dof` degrees of freedom (σ estimated from the scatter).
    StudentT {
        /// Degrees of freedom n − p.
        dof: usize,
        /// Its 97.5 % point.
        quantile: f64,
    },
    /// The normal distribution (σ known).
    Normal {
        /// Its 97.5 % point.
        quantile: f64,
    },
}

impl IntervalMethod {
    /// The distribution's name as JSON gives it: "student_t" or "normal".
    pub fn name(&self) -> &'static str {
        match self {
            IntervalMethod::StudentT { .. } => "student_t",
            IntervalMethod::Normal { .. } => "normal",
        }
    }

    /// The 97.5 % point used.
    pub fn quantile(&self) -> f64 {
        match self {
            IntervalMethod::StudentT { quantile, .. } | IntervalMethod::Normal { quantile } => *quantile,
        }
    }

    /// In words, e.g. "95 % intervals from Student t with 12 degrees of freedom (97.5 % point 2.179)".
    pub fn describe(&self) -> String {
        match self {
            IntervalMethod::StudentT { dof, quantile } => format!(
                "95 % intervals from Student t with {dof} degrees of freedom (97.5 % point {})",
                crate::units::sig(*quantile, 4)
            ),
            IntervalMethod::Normal { quantile } => format!(
                "95 % intervals from the normal distribution (97.5 % point {}), the sd being taken as known",
                crate::units::sig(*quantile, 4)
            ),
        }
    }
}

impl Solution {
    /// How the intervals of this solution were made (from the same scale and quantile they used).
    pub fn interval_method(&self) -> IntervalMethod {
        match self.errors {
            ErrorScale::ReducedChi2 => IntervalMethod::StudentT {
                dof: self.dof,
                quantile: self.quantile,
            },
            ErrorScale::Unscaled => IntervalMethod::Normal {
                quantile: self.quantile,
            },
        }
    }
}

/// The `p` quantile of Student's t with `dof` degrees of freedom (statrs); NaN for dof 0.
pub fn t_quantile(p: f64, dof: usize) -> f64 {
    if dof == 0 {
        return f64::NAN;
    }
    StudentsT::new(0.0, 1.0, dof as f64).map_or(f64::NAN, |t| t.inverse_cdf(p))
}

/// The `p` quantile of the standard normal distribution (statrs).
pub fn normal_quantile(p: f64) -> f64 {
    Normal::new(0.0, 1.0).map_or(f64::NAN, |n| n.inverse_cdf(p))
}

/// A warning about what the data cannot pin down.
#[derive(Debug, Clone, PartialEq)]
pub enum Identifiability {
    /// The information matrix is near singular (reciprocal condition number given).
    NearSingular(f64),
    /// Two parameters (indices) correlate beyond 0.95 in magnitude.
    Correlated(usize, usize, f64),
    /// A parameter (index) ended on the edge of its range.
    AtBound(usize),
    /// A parameter's standard error exceeds its magnitude.
    Loose(usize),
}

impl Solution {
    /// Identifiability warnings for the fitted parameters with `transforms`.
    pub fn warnings(&self, transforms: &[Transform]) -> Vec<Identifiability> {
        let mut w = Vec::new();
        if self.rcond < 1e-10 {
            w.push(Identifiability::NearSingular(self.rcond));
        }
        let p = self.values.len();
        for i in 0..p {
            for j in i + 1..p {
                let c = self.correlation[(i, j)];
                if c.abs() > 0.95 {
                    w.push(Identifiability::Correlated(i, j, c));
                }
            }
        }
        for (i, t) in transforms.iter().enumerate() {
            if t.at_bound(self.fitted[i]) {
                w.push(Identifiability::AtBound(i));
            } else if self.standard_errors[i] > self.values[i].abs() {
                w.push(Identifiability::Loose(i));
            }
        }
        w
    }
}

#[cfg(test)]
mod tests;
