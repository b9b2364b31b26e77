//! Kinetics under irradiation: integrate the compiled model's concentrations and photon
//! ledger from t = 0 to an end time or an event.
//!
//! Two integrators: diffsol's BDF (stiff; Newton with the model's analytic Jacobian,
//! [`crate::model::jacobian`]) and ode_solvers' Dop853 (explicit, a cross-check).
//! [`Method::Auto`] is BDF from the start: stiffness judged at t = 0 misses the stiffness that
//! develops as products form. Dop853 runs when asked for; when it finds the problem stiff, BDF
//! continues from its last point (never from t = 0), and [`Trajectory::segments`] says which
//! integrator took which stretch.
//! No file I/O, no printing: results come back as a [`Trajectory`].

pub mod check;
mod equations;
pub mod ledger;
pub mod lone_columns;
pub mod lu_reuse;
pub mod regrowth;
pub mod sensitivity;
mod solve_bdf;
mod solve_dop;
pub mod sparse_lu;

use crate::error::{Error, Result};
use crate::model::Model;
use crate::model::rhs::{LedgerLayout, Rhs};

/// Which integrator to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// BDF from the start (the safe choice whether or not the run turns stiff).
    Auto,
    /// diffsol BDF (variable order 1–5) with the exact Jacobian.
    Bdf,
    /// ode_solvers Dop853 (explicit Runge–Kutta of order 8).
    Dop853,
}

/// Stop when a species crosses a level (in either direction).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Event {
    /// Species index.
    pub species: usize,
    /// Level, mol/L.
    pub level: f64,
}

/// The most BDF steps one integration may take (diffsol's own default is 5,000, which an
/// oscillating or long network passes well before its end time). A bound on the work of one run,
/// not on its length: at microseconds to milliseconds a step it is minutes to hours (`simulate`
/// shows its progress; inside a fit, a sample or a plan the same budget applies without one,
/// and Ctrl-C stops the command); a step size that collapses stops much sooner, at diffsol's
/// smallest step.
pub const MAX_STEPS: usize = 20_000_000;

/// How to integrate.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// End time, s.
    pub until: f64,
    /// Integrator.
    pub method: Method,
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance on concentrations (mol/L) and on the ledger (einstein/L).
    pub atol: f64,
    /// Number of output times (besides t = 0).
    pub outputs: usize,
    /// Output times spaced logarithmically (from `until` × 1e-6) instead of linearly.
    pub log_time: bool,
    /// Optional stop condition.
    pub event: Option<Event>,
    /// BDF linear algebra: Some(true) sparse (faer sparse LU of the analytic Jacobian's pattern),
    /// Some(false) dense (nalgebra LU), None: sparse above 150 state variables.
    pub sparse: Option<bool>,
    /// Optional light schedule (e.g. sun-hours a day): the integration is split at every
    /// switch and the solver restarted there, so no step spans a discontinuity.
    pub schedule: Option<Schedule>,
    /// Explicit output times, s (for fitting to data): when not empty they replace `outputs`
    /// and `log_time`; the start comes first, then these sorted without repeats (those outside
    /// (start, `until`] dropped).
    pub times: Vec<f64>,
}

/// Light on for `lit` s at the start of every `period` s, off for the rest (all sources
/// together). Thermal steps run through the dark periods.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Schedule {
    /// Length of one cycle, s (86400 for a day).
    pub period: f64,
    /// Lit time at the start of each cycle, s (0 < lit ≤ period).
    pub lit: f64,
}

impl Schedule {
    /// `hours` of light at the start of every 24 h day.
    pub fn daily(hours: f64) -> Self {
        Schedule {
            period: 86400.0,
            lit: hours * 3600.0,
        }
    }

    /// Total lit time between 0 and `t` (s).
    pub fn lit_time(&self, t: f64) -> f64 {
        if self.lit >= self.period {
            return t;
        }
        let n = (t / self.period).floor();
        n * self.lit + (t - n * self.period).min(self.lit)
    }

    /// True when the light is on at time `t` (s) (a switch time belongs to the piece it starts).
    pub fn is_lit(&self, t: f64) -> bool {
        self.lit >= self.period || t - (t / self.period).floor() * self.period < self.lit
    }

    /// The pieces of constant light between `t0` and `t1`: (start, end, lit).
    pub fn pieces(&self, t0: f64, t1: f64) -> Vec<(f64, f64, bool)> {
        if self.lit >= self.period {
            return vec![(t0, t1, true)];
        }
        let mut out = Vec::new();
        let mut t = t0;
        while t < t1 {
            let n = (t / self.period).floor();
            let start = n * self.period;
            let (end, lit) = if t - start < self.lit {
                (start + self.lit, true)
            } else {
                (start + self.period, false)
            };
            // Guard against a switch time that rounds onto t itself.
            let end = if end <= t { t + self.period * 1e-12 } else { end };
            out.push((t, end.min(t1), lit));
            t = end;
        }
        out
    }
}

impl Options {
    /// Defaults for an end time: automatic method, rtol 1e-6, atol 1e-12 mol/L, 200 outputs.
    pub fn until(t: f64) -> Self {
        Options {
            until: t,
            method: Method::Auto,
            rtol: 1e-6,
            atol: 1e-12,
            outputs: 200,
            log_time: false,
            event: None,
            sparse: None,
            schedule: None,
            times: Vec::new(),
        }
    }
}

/// How the run ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Stop {
    /// Reached the end time.
    EndTime,
    /// The event happened at this time (s).
    Event(f64),
    /// The caller's watch on the outputs ([`simulate_watching`]) said enough at this output
    /// time (s).
    Enough(f64),
}

/// Work counts of a run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Counts {
    /// Accepted steps.
    pub steps: usize,
    /// Right-hand-side evaluations.
    pub rhs: usize,
    /// Jacobian-vector products (BDF).
    pub jacobian_products: usize,
    /// Iteration-matrix (LU) factorisations (BDF).
    pub jacobian_setups: usize,
    /// Analytic Jacobian evaluations (BDF).
    pub jacobians: usize,
    /// Iteration matrices answered with the factors of an earlier one and a scaled Newton
    /// correction instead of a factorisation (sparse BDF; `lu_reuse`).
    pub lu_kept: usize,
    /// Rejected steps.
    pub rejected: usize,
    /// Newton iterations (BDF), each one linear solve with the iteration matrix.
    pub newton_iterations: usize,
    /// Newton iterations that failed to converge (BDF).
    pub newton_failures: usize,
}

/// A stretch of the run and the integrator that took it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Segment {
    /// The integrator.
    pub method: Method,
    /// Start, s.
    pub from: f64,
    /// End, s.
    pub to: f64,
    /// Accepted steps in this stretch.
    pub steps: usize,
    /// Right-hand-side evaluations in this stretch.
    pub rhs: usize,
}

/// The result of a run: states at the output times.
#[derive(Debug, Clone)]
pub struct Trajectory {
    /// Output times, s (starting at 0).
    pub times: Vec<f64>,
    /// Full states (concentrations then ledger) at each output time.
    pub states: Vec<Vec<f64>>,
    /// Where the ledger sits in a state.
    pub layout: LedgerLayout,
    /// The integrator that finished the run.
    pub method: Method,
    /// Why that integrator, and where the explicit method handed over to BDF if it did.
    pub method_reason: String,
    /// Which integrator took which stretch of time, in order (one unless the explicit method
    /// found the problem stiff and BDF continued from there).
    pub segments: Vec<Segment>,
    /// True when BDF used sparse linear algebra.
    pub sparse: bool,
    /// Work counts.
    pub counts: Counts,
    /// How it ended.
    pub stop: Stop,
    /// Runs repeated with tighter tolerances because the one before gave a concentration or
    /// photon count below zero beyond the tolerance ([`check`]), first to last; empty when the
    /// first run was sound.
    pub retries: Vec<check::Retry>,
    /// Self-made species that grew back from within the absolute tolerance of zero
    /// ([`regrowth`]): the course after that is not resolved by the run.
    pub regrowth: Vec<regrowth::Regrowth>,
    /// The light schedule the run followed (None: light on throughout).
    pub schedule: Option<Schedule>,
    /// The absolute tolerance the run was integrated to, mol/L (a retry's when there was one):
    /// concentrations within it of zero are round-off (`units::display::ZeroWithin`).
    pub atol: f64,
}

impl Trajectory {
    /// The final state.
    pub fn last(&self) -> &[f64] {
        self.states.last().map(|s| s.as_slice()).unwrap_or(&[])
    }

    /// Time the light was on between 0 and `t`, s.
    pub fn lit_time(&self, t: f64) -> f64 {
        self.schedule.map_or(t, |s| s.lit_time(t))
    }

    /// The photon ledger of `model` (the model this trajectory was run on) at output `k`, with
    /// the incident photons counted over the lit time only when the run followed a schedule.
    pub fn ledger(&self, model: &Model, k: usize) -> ledger::Ledger {
        let t = self.times[k];
        ledger::read_lit(model, &self.layout, t, self.lit_time(t), &self.states[k])
    }

    /// The round-off limit of the run's concentrations: its absolute tolerance.
    pub fn zero_within(&self) -> crate::units::display::ZeroWithin {
        crate::units::display::ZeroWithin(self.atol)
    }

    /// Concentration of species `i` at each output time.
    pub fn series(&self, i: usize) -> Vec<f64> {
        self.states.iter().map(|s| s[i]).collect()
    }

    /// The outputs at the times of `grid` only (both sorted; times compared exactly, as
    /// [`output_times`] makes them and a run keeps them), and the last output when the run
    /// stopped at an event or a watch: one run asked for several grids together, split into
    /// one trajectory per grid.
    pub fn on_grid(&self, grid: &[f64]) -> Trajectory {
        let stopped = match self.stop {
            Stop::Event(t) | Stop::Enough(t) => Some(t),
            Stop::EndTime => None,
        };
        let (times, states) = self
            .times
            .iter()
            .zip(&self.states)
            .filter(|(t, _)| grid.binary_search_by(|g| g.total_cmp(t)).is_ok() || stopped == Some(**t))
            .map(|(t, y)| (*t, y.clone()))
            .unzip();
        Trajectory {
            times,
            states,
            ..self.clone()
        }
    }
}

/// The output times for `opts`, from `start` (s): the start, then the explicit `times`, or
/// `outputs` times spaced linearly or logarithmically up to `until`.
pub fn output_times(opts: &Options, start: f64) -> Vec<f64> {
    if !opts.times.is_empty() {
        let mut t: Vec<f64> = opts
            .times
            .iter()
            .copied()
            .filter(|&t| t > start && t <= opts.until)
            .collect();
        t.sort_by(f64::total_cmp);
        t.dedup();
        t.insert(0, start);
        return t;
    }
    let n = opts.outputs.max(1);
    let mut t = vec![start];
    if opts.log_time {
        let t0 = (opts.until * 1e-6).max(start);
        for i in 0..=n {
            let x = t0 * (opts.until / t0).powf(i as f64 / n as f64);
            if x > start {
                t.push(x);
            }
        }
    } else {
        for i in 1..=n {
            t.push(start + (opts.until - start) * i as f64 / n as f64);
        }
    }
    t
}

/// Integrate `model` as `opts` says; `progress` is told the fraction of the time span done.
pub fn simulate(model: &Model, opts: &Options, progress: &mut dyn FnMut(f64)) -> Result<Trajectory> {
    let y0 = Rhs::new(model).initial_state();
    simulate_from(model, 0.0, &y0, opts, progress)
}

/// Integrate `model` from state `y0` (concentrations then ledger, as [`Rhs::initial_state`]
/// lays it out) at time `t0` (s) to `opts.until` (s, absolute): the continuation of an
/// earlier run. A schedule keeps its phase: it counts from t = 0.
///
/// A run that gives a concentration or photon count below zero beyond the tolerance is
/// repeated with tolerances [`check::TIGHTEN`] times tighter, up to [`check::RETRIES`] times
/// (recorded in [`Trajectory::retries`]); if the numbers stay impossible the answer is
/// [`Error::Unphysical`], never a result.
pub fn simulate_from(
    model: &Model,
    t0: f64,
    y0: &[f64],
    opts: &Options,
    progress: &mut dyn FnMut(f64),
) -> Result<Trajectory> {
    simulate_watching(model, t0, y0, opts, progress, &mut |_, _| false)
}

/// [`simulate_from`] that also stops at the first output time (s, absolute) at which
/// `enough(time, state)` says true ([`Stop::Enough`]): one run, one integrator, where a caller
/// would otherwise restart the integrator stretch by stretch to look at the state between
/// them. A run repeated with tighter tolerances (see [`simulate_from`]) shows `enough` its
/// outputs again from the start.
pub fn simulate_watching(
    model: &Model,
    t0: f64,
    y0: &[f64],
    opts: &Options,
    progress: &mut dyn FnMut(f64),
    enough: &mut dyn FnMut(f64, &[f64]) -> bool,
) -> Result<Trajectory> {
    let (mut tr, retries) = check::retried(
        opts,
        |o| simulate_once(model, t0, y0, o, progress, enough),
        |tr| check::worst(model, &tr.layout, &tr.times, &tr.states, opts.rtol, opts.atol),
    )?;
    tr.retries = retries;
    tr.regrowth = regrowth::find(model, &tr.times, &tr.states, tr.atol);
    Ok(tr)
}

/// One run of [`simulate_from`] at the tolerances of `opts`, unchecked.
fn simulate_once(
    model: &Model,
    t0: f64,
    y0: &[f64],
    opts: &Options,
    progress: &mut dyn FnMut(f64),
    enough: &mut dyn FnMut(f64, &[f64]) -> bool,
) -> Result<Trajectory> {
    if opts.until.is_nan() || opts.until <= t0 || !opts.until.is_finite() {
        return Err(Error::Usage(format!(
            "the end time must be positive and after the start, not {} s",
            opts.until
        )));
    }
    if opts.rtol.is_nan() || opts.atol.is_nan() || opts.rtol <= 0.0 || opts.atol <= 0.0 {
        return Err(Error::Usage("tolerances must be positive".into()));
    }
    if let Some(s) = opts.schedule
        && !(s.period > 0.0 && s.lit > 0.0 && s.lit <= s.period && s.period.is_finite())
    {
        return Err(Error::Usage(format!(
            "a light schedule needs 0 < lit time ≤ period, not {} s of {} s",
            s.lit, s.period
        )));
    }
    if model.n_species() == 0 {
        return Err(Error::Usage(
            "the network has no species: there is nothing to integrate".into(),
        ));
    }
    let rhs = Rhs::new(model);
    if y0.len() != rhs.layout.len() {
        return Err(Error::Usage("the start state does not fit the model".into()));
    }
    let span = opts.until - t0;
    let (method, reason) = match opts.method {
        // Stiffness judged at the start says nothing of what develops later (Robertson's
        // problem looks non-stiff at t = 0 and turns stiff within a millisecond), and BDF
        // reaches every output by interpolation while the explicit method must step onto each
        // one: BDF is the safe and, at the usual output density, the cheaper start. The
        // explicit method runs only when asked for.
        Method::Auto | Method::Bdf => (
            Method::Bdf,
            if opts.method == Method::Auto {
                "chosen automatically: safe whether or not the run turns stiff".to_string()
            } else {
                "chosen".to_string()
            },
        ),
        Method::Dop853 => {
            if opts.event.is_some() {
                return Err(Error::Usage("an event stop needs the BDF integrator".into()));
            }
            (Method::Dop853, "chosen".into())
        }
    };
    let times = output_times(opts, t0);
    // An event already met at the start stops the run there.
    if let Some(ev) = opts.event
        && ev.species < model.n_species()
        && (y0[ev.species] - ev.level).abs() <= f64::EPSILON * ev.level.abs()
    {
        return Err(Error::Usage(format!(
            "{} starts at the stop level; choose another level",
            model.species[ev.species]
        )));
    }
    // The dark model (every bin's flux zero) for the unlit pieces of a schedule.
    let dark = opts.schedule.map(|_| model.with_light_scale(0.0));
    let dark_rhs = dark.as_ref().map(Rhs::new);
    let pieces = match opts.schedule {
        Some(s) => s.pieces(t0, opts.until),
        None => vec![(t0, opts.until, true)],
    };
    let mut all = Run {
        times: vec![t0],
        states: vec![y0.to_vec()],
        counts: Counts::default(),
        stop: Stop::EndTime,
        sparse: false,
    };
    let mut y = y0.to_vec();
    let mut method_ran = method;
    let mut reason = reason;
    let mut segments: Vec<Segment> = Vec::new();
    for (ta, tb, lit) in pieces {
        let r = if lit { &rhs } else { dark_rhs.as_ref().unwrap_or(&rhs) };
        let mut local: Vec<f64> = vec![0.0];
        local.extend(times.iter().filter(|&&t| t > ta && t < tb).map(|&t| t - ta));
        local.push(tb - ta);
        let mut lopts = opts.clone();
        lopts.until = tb - ta;
        let mut prog = |f: f64| progress(((ta - t0) + f * (tb - ta)) / span);
        let calls = r.rhs_calls.get();
        let mut watch = |t: f64, y: &[f64]| enough(ta + t, y);
        let (run, handover) = match method_ran {
            Method::Bdf => (solve_bdf::run(r, &y, &local, &lopts, &mut prog, &mut watch)?, None),
            _ => solve_dop::run(r, &y, &local, &lopts, &mut prog, &mut watch)?,
        };
        let reached = handover.as_ref().map_or(tb, |(ts, _)| ta + ts);
        record(
            &mut segments,
            method_ran,
            ta,
            reached,
            &run.counts,
            r.rhs_calls.get() - calls,
        );
        all.append(ta, run, &times);
        if let Some((ts, ys)) = handover {
            // The explicit method found the problem stiff: BDF continues from its last point.
            reason = format!(
                "{reason}; the explicit method found the problem stiff at {} and BDF went on from there",
                crate::units::format_time(ta + ts)
            );
            method_ran = Method::Bdf;
            let mut rest: Vec<f64> = vec![0.0];
            rest.extend(local.iter().filter(|&&t| t > ts).map(|&t| t - ts));
            let mut ropts = opts.clone();
            ropts.until = tb - ta - ts;
            let mut prog = |f: f64| progress(((ta + ts - t0) + f * (tb - ta - ts)) / span);
            let calls = r.rhs_calls.get();
            let mut watch = |t: f64, y: &[f64]| enough(ta + ts + t, y);
            let run = solve_bdf::run(r, &ys, &rest, &ropts, &mut prog, &mut watch)?;
            record(
                &mut segments,
                Method::Bdf,
                ta + ts,
                tb,
                &run.counts,
                r.rhs_calls.get() - calls,
            );
            all.append(ta + ts, run, &times);
        }
        if let Some(last) = all.states.last() {
            y.copy_from_slice(last);
        }
        if let Stop::Event(te) | Stop::Enough(te) = all.stop {
            if let Some(s) = segments.last_mut() {
                s.to = te;
            }
            break;
        }
    }
    let mut run = all;
    let (method, reason) = (method_ran, reason);
    run.counts.rhs = rhs.rhs_calls.get() + dark_rhs.as_ref().map_or(0, |d| d.rhs_calls.get());
    run.counts.jacobian_products = rhs.jac_calls.get() + dark_rhs.as_ref().map_or(0, |d| d.jac_calls.get());
    Ok(Trajectory {
        times: run.times,
        states: run.states,
        layout: rhs.layout,
        method,
        method_reason: reason,
        segments,
        sparse: run.sparse,
        counts: run.counts,
        stop: run.stop,
        retries: Vec::new(),
        regrowth: Vec::new(),
        schedule: opts.schedule,
        atol: opts.atol,
    })
}

/// What an integrator returns to [`simulate`].
struct Run {
    times: Vec<f64>,
    states: Vec<Vec<f64>>,
    counts: Counts,
    stop: Stop,
    sparse: bool,
}

impl Run {
    /// Add a run that started at `start` (s; its times are local, from 0): its outputs after
    /// the first (which repeats the state it started from), its counts, how it ended. An
    /// output time within round-off of one of `grid` (the times asked for, sorted) is that
    /// time exactly: `start + (t − start)` need not give t back.
    fn append(&mut self, start: f64, run: Run, grid: &[f64]) {
        let snap = |t: f64| {
            let i = grid.partition_point(|&g| g < t);
            [i.checked_sub(1), Some(i)]
                .into_iter()
                .flatten()
                .filter_map(|j| grid.get(j).copied())
                .find(|g| (g - t).abs() <= 1e-12 * g.abs().max(t.abs()))
                .unwrap_or(t)
        };
        self.sparse |= run.sparse;
        self.counts.steps += run.counts.steps;
        self.counts.jacobian_setups += run.counts.jacobian_setups;
        self.counts.lu_kept += run.counts.lu_kept;
        self.counts.jacobians += run.counts.jacobians;
        self.counts.rejected += run.counts.rejected;
        self.counts.newton_iterations += run.counts.newton_iterations;
        self.counts.newton_failures += run.counts.newton_failures;
        for (t, st) in run.times.iter().zip(run.states).skip(1) {
            self.times.push(snap(start + t));
            self.states.push(st);
        }
        match run.stop {
            Stop::Event(te) => self.stop = Stop::Event(start + te),
            Stop::Enough(te) => self.stop = Stop::Enough(start + te),
            Stop::EndTime => {}
        }
    }
}

/// Add a stretch `from`–`to` (s) taken by `method` to `segments`, merged with the last one
/// when the same method went on from where it ended (the pieces of a light schedule).
fn record(segments: &mut Vec<Segment>, method: Method, from: f64, to: f64, counts: &Counts, rhs: usize) {
    match segments.last_mut() {
        Some(s) if s.method == method && s.to == from => {
            s.to = to;
            s.steps += counts.steps;
            s.rhs += rhs;
        }
        _ => segments.push(Segment {
            method,
            from,
            to,
            steps: counts.steps,
            rhs,
        }),
    }
}
