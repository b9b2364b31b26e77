//! Fitting a network's parameters to experiments. The network is built and validated once; each
//! experiment's conditions and every free parameter are typed values written into a copy of it
//! (`network::params::set`), which is compiled and integrated to the data times. No evaluation
//! formats or parses text. The slopes the search needs come from `slopes.rs`.

use super::goodness::{Goodness, RunsTest};
use super::lsq::{self, Budget, ErrorScale, Identifiability, Settings, Solution};
use super::score::{criteria, likelihood};
pub use super::slopes::Derivatives;
use super::slopes::Evaluate;
use crate::error::{Diagnostic, Error, Result};
use crate::file::data::{EndpointKind, Experiment};
use crate::kinetics::{self, Options};
use crate::model::Model;
use crate::network::params::{self, Key, Transform};
use crate::network::{Branching, Network};
use rand::{Rng, SeedableRng, rngs::StdRng};
use rayon::prelude::*;

/// A parameter set free in the fit.
#[derive(Debug, Clone, PartialEq)]
pub struct Free {
    /// Its key as the user writes it.
    pub key: String,
    /// Its typed address in the network.
    pub address: Key,
    /// Start value from the file (internal unit).
    pub start: f64,
    /// Unit of the internal value as written in `--set`, e.g. "J/mol".
    pub unit: &'static str,
    /// How the range is kept.
    pub transform: Transform,
}

impl Free {
    /// The `--set` value text for `value` (for the fitted file written at the end).
    pub fn text(&self, value: f64) -> String {
        if self.unit.is_empty() {
            format!("{value:e}")
        } else {
            format!("{value:e} {}", self.unit)
        }
    }
}

/// Integration settings for every model evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Accuracy {
    /// Relative tolerance (tight, so finite differences see the parameters and not the solver).
    pub rtol: f64,
    /// Absolute tolerance on concentrations, mol/L.
    pub atol: f64,
}

impl Default for Accuracy {
    fn default() -> Self {
        Accuracy {
            rtol: 1e-10,
            atol: 1e-16,
        }
    }
}

/// A network, the data and the free parameters: everything one evaluation needs.
pub struct Setup<'a> {
    /// The network as given (with the command line's values), validated once.
    pub base: Network,
    /// The experiments.
    pub experiments: &'a [Experiment],
    /// Each experiment's own values (its `set` list, parsed once), in experiment order.
    conditions: Vec<Vec<(Key, f64)>>,
    /// Free parameters.
    pub free: Vec<Free>,
    /// Integration settings.
    pub accuracy: Accuracy,
}

/// What the model predicts for every measurement of one experiment.
#[derive(Debug, Clone, PartialEq)]
pub struct Prediction {
    /// One value per time-course point, in the point's unit (mol/L or fraction).
    pub points: Vec<f64>,
    /// One value per end point.
    pub endpoints: Vec<f64>,
}

fn located(file: &std::path::Path, line: usize, field: &str, msg: String, help: String) -> Error {
    let mut d = Diagnostic::error(field, msg).with_help(help).in_file(file);
    d.line_col = Some((line, 1));
    Error::invalid(d)
}

/// An experiment's `set` list as typed values of `net`, each key and value read once.
fn experiment_values(net: &Network, e: &Experiment) -> Result<Vec<(Key, f64)>> {
    let bad = |m: String| Error::Usage(format!("experiment \"{}\": set {m}", e.name));
    let mut out = Vec::new();
    for (k, v) in &e.set {
        let key = Key::parse(net, k).map_err(bad)?;
        let value = params::get(net, key)
            .parse_value(v)
            .map_err(|m| bad(format!("{k} = \"{v}\": {m}")))?;
        out.push((key, value));
    }
    let mut trial = net.clone();
    params::set_all(&mut trial, &out).map_err(bad)?;
    Ok(out)
}

impl<'a> Setup<'a> {
    /// Check the free keys and the data against `base` (the network as given, with the command
    /// line's values).
    pub fn new(
        base: &Network,
        experiments: &'a [Experiment],
        free_keys: &[String],
        accuracy: Accuracy,
    ) -> Result<Self> {
        if free_keys.is_empty() {
            return Err(Error::Usage(
                "no free parameters: name them with --free or a [fit] free list".into(),
            ));
        }
        Self::checked(base, experiments, free_keys, accuracy)
    }

    /// The network as given against the data, nothing free: for scoring it as it stands
    /// ([`score`]).
    pub fn fixed(base: &Network, experiments: &'a [Experiment], accuracy: Accuracy) -> Result<Self> {
        Self::checked(base, experiments, &[], accuracy)
    }

    /// [`Setup::new`] without the demand for free keys.
    fn checked(
        base: &Network,
        experiments: &'a [Experiment],
        free_keys: &[String],
        accuracy: Accuracy,
    ) -> Result<Self> {
        let conditions = experiments
            .iter()
            .map(|e| experiment_values(base, e))
            .collect::<Result<Vec<_>>>()?;
        let mut free: Vec<Free> = Vec::new();
        for key in free_keys {
            if free.iter().any(|f: &Free| &f.key == key) {
                return Err(Error::Usage(format!("--free {key} is named twice")));
            }
            let p = params::parameter(base, key).map_err(|m| Error::Usage(format!("--free {m}")))?;
            if let Key::Fraction { transient, .. } = p.address
                && let Some(c) = base.evidence.counts_of(transient)
            {
                let name = &base.transients[transient].name;
                return Err(Error::Usage(format!(
                    "--free {key}: this share comes from the trajectory counts of \"{name}\" ({} runs), which define it; \
                     a fit cannot move it. Remove the counts (give the channels fractions) to fit the shares, \
                     or free something else, such as a rate or quantum yield",
                    c.finished()
                )));
            }
            let transform = Transform::for_range(p.range);
            if transform == Transform::Log && p.value <= 0.0 {
                return Err(Error::Usage(format!(
                    "--free {key}: the start is {} and a positive value is needed; give one with --set",
                    p.value
                )));
            }
            if let Some(other) = free.iter().find(|f| f.address.target() == p.address.target()) {
                return Err(Error::Usage(format!(
                    "--free {key} and {} write the same value (one replaces the other); free one of them",
                    other.key
                )));
            }
            for (e, c) in experiments.iter().zip(&conditions) {
                if c.iter().any(|(k, _)| k.target() == p.address.target()) {
                    return Err(Error::Usage(format!(
                        "--free {key} is also set by experiment \"{}\"; a free parameter is shared by all experiments",
                        e.name
                    )));
                }
            }
            free.push(Free {
                key: key.clone(),
                address: p.address,
                start: p.value,
                unit: p.unit,
                transform,
            });
        }
        let setup = Setup {
            base: base.clone(),
            experiments,
            conditions,
            free,
            accuracy,
        };
        // Every experiment must build, and every name in the data must exist.
        for e in experiments {
            let net = setup.network(e, &setup.start())?;
            let known = |s: &str| net.species_index(s).is_some();
            let names = || {
                net.species
                    .iter()
                    .map(|s| s.name.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            };
            for p in &e.points {
                if !known(&p.species) {
                    return Err(located(
                        &p.file,
                        p.line,
                        "species",
                        format!("no species \"{}\" in the network", p.species),
                        format!("species: {}", names()),
                    ));
                }
                if p.is_yield && e.yield_of.is_none() {
                    return Err(located(
                        &p.file,
                        p.line,
                        "value",
                        format!(
                            "a yield (no unit) but experiment \"{}\" names no yield_of species",
                            e.name
                        ),
                        "add yield_of = \"SPECIES\" to the experiment, or give the value column a concentration unit"
                            .into(),
                    ));
                }
            }
            if let Some(y) = &e.yield_of
                && !known(y)
            {
                return Err(Error::Usage(format!(
                    "experiment \"{}\": yield_of \"{y}\" is not a species; species: {}",
                    e.name,
                    names()
                )));
            }
            for ep in &e.endpoints {
                let bad = |m: String| located(&ep.file, ep.line, "endpoints", m, format!("species: {}", names()));
                match &ep.kind {
                    EndpointKind::Final(s) | EndpointKind::QuantumYield(s) if !known(s) => {
                        return Err(bad(format!("no species \"{s}\"")));
                    }
                    EndpointKind::Yield(s) if !known(s) || e.yield_of.is_none() => {
                        return Err(bad(format!(
                            "a yield of \"{s}\" needs the species and the experiment's yield_of"
                        )));
                    }
                    EndpointKind::Ratio(a, b) if !known(a) || !known(b) => {
                        return Err(bad(format!("no species \"{a}\" or \"{b}\"")));
                    }
                    EndpointKind::ReactantQuantumYield(s, a) => {
                        if !known(s) || !known(a) {
                            return Err(bad(format!("no species \"{s}\" or \"{a}\"")));
                        }
                        let model = Model::compile(&net);
                        let absorbs = net.species_index(a).is_some_and(|i| model.absorbers.contains(&i));
                        if !absorbs {
                            return Err(located(
                                &ep.file,
                                ep.line,
                                "endpoints.absorber",
                                format!("\"{a}\" absorbs no light in this network"),
                                "a species with an epsilon at the light's wavelengths".into(),
                            ));
                        }
                    }
                    EndpointKind::Lifetime(t) => lifetime(&net, t)
                        .map_err(|m| {
                            located(
                                &ep.file,
                                ep.line,
                                "endpoints",
                                m,
                                "a transient whose channels all have rates".into(),
                            )
                        })
                        .map(|_| ())?,
                    _ => {}
                }
            }
        }
        Ok(setup)
    }

    /// The start values (the file's, with the command-line overrides).
    pub fn start(&self) -> Vec<f64> {
        self.free.iter().map(|f| f.start).collect()
    }

    /// The transforms of the free parameters.
    pub fn transforms(&self) -> Vec<Transform> {
        self.free.iter().map(|f| f.transform).collect()
    }

    /// The network of experiment `e` (one of this setup's) at `x`: the base with the
    /// experiment's values, then the free parameters, written as typed values.
    pub fn network(&self, e: &Experiment, x: &[f64]) -> Result<Network> {
        let i = self
            .experiments
            .iter()
            .position(|q| std::ptr::eq(q, e))
            .ok_or_else(|| Error::Usage(format!("experiment \"{}\" is not one of this fit's", e.name)))?;
        let mut net = self.base.clone();
        params::set_all(&mut net, &self.conditions[i]).map_err(Error::Usage)?;
        let values: Vec<(Key, f64)> = self.free.iter().map(|f| f.address).zip(x.iter().copied()).collect();
        params::set_all(&mut net, &values).map_err(Error::Usage)?;
        Ok(net)
    }

    /// The run length of experiment `e`, s.
    pub fn until(e: &Experiment) -> f64 {
        let last = e.points.iter().map(|p| p.time).fold(0.0, f64::max);
        e.until.unwrap_or(0.0).max(last).max(f64::MIN_POSITIVE)
    }

    /// The integration settings of experiment `e`: its data times and its end.
    pub(super) fn options(&self, e: &Experiment) -> Options {
        let until = Self::until(e);
        let mut opts = Options::until(until);
        opts.rtol = self.accuracy.rtol;
        opts.atol = self.accuracy.atol;
        opts.times = e.points.iter().map(|p| p.time).collect();
        if opts.times.is_empty() || opts.times.iter().all(|&t| t < until) {
            opts.times.push(until);
        }
        opts
    }

    /// Predict every measurement of experiment `e` at `x`.
    pub fn predict(&self, e: &Experiment, x: &[f64]) -> Result<Prediction> {
        let net = self.network(e, x)?;
        let model = Model::compile(&net);
        let traj = kinetics::simulate(&model, &self.options(e), &mut |_| {})?;
        read(e, &net, &model, &traj.layout, Self::until(e), &traj.times, &traj.states)
    }

    /// Measured values, standard deviations and weighted flags, in prediction order.
    pub fn observations(&self) -> Vec<(f64, f64, bool)> {
        let mut v = Vec::new();
        for e in self.experiments {
            v.extend(e.points.iter().map(|p| (p.value, p.sd, p.weighted)));
            v.extend(e.endpoints.iter().map(|p| (p.value, p.sd, p.weighted)));
        }
        v
    }

    /// Weighted residuals (measured − predicted) / σ over all experiments, None when a model
    /// evaluation fails (an invalid parameter combination or an integrator failure).
    pub fn residuals(&self, x: &[f64]) -> Option<Vec<f64>> {
        let obs = self.observations();
        let mut pred = Vec::with_capacity(obs.len());
        for e in self.experiments {
            let p = self.predict(e, x).ok()?;
            pred.extend(p.points);
            pred.extend(p.endpoints);
        }
        Some(obs.iter().zip(&pred).map(|((y, s, _), f)| (y - f) / s).collect())
    }
}

/// Every measurement of experiment `e` read from `states` at `times` (a run of `model`, built
/// from `net`, to `until`).
pub(super) fn read(
    e: &Experiment,
    net: &Network,
    model: &Model,
    layout: &crate::model::rhs::LedgerLayout,
    until: f64,
    times: &[f64],
    states: &[Vec<f64>],
) -> Result<Prediction> {
    let idx = |name: &str| net.species_index(name).unwrap_or(0);
    let basis = e.yield_of.as_deref().map_or(1.0, |y| net.species[idx(y)].initial);
    let at = |t: f64| -> &[f64] {
        let k = times.partition_point(|&u| u < t * (1.0 - 1e-12));
        &states[k.min(states.len() - 1)]
    };
    let points = e
        .points
        .iter()
        .map(|p| {
            let c = at(p.time)[idx(&p.species)];
            if p.is_yield { c / basis } else { c }
        })
        .collect();
    let end = states.last().map(|s| s.as_slice()).unwrap_or(&[]);
    let first = &states[0];
    let mut endpoints = Vec::new();
    for ep in &e.endpoints {
        let v = match &ep.kind {
            EndpointKind::Final(s) => end[idx(s)],
            EndpointKind::Yield(s) => end[idx(s)] / basis,
            EndpointKind::Ratio(a, b) => end[idx(a)] / end[idx(b)],
            // Per photon absorbed by the whole sample (every absorber, inner filters included).
            EndpointKind::QuantumYield(s) => {
                let l = kinetics::ledger::read(model, layout, until, end);
                (end[idx(s)] - first[idx(s)]) * model.volume / l.absorbed
            }
            // Per photon absorbed by the reactant alone (IUPAC Glossary of terms used in
            // photochemistry, 3rd ed., Pure Appl. Chem. 79 (2007) 293, "quantum yield").
            EndpointKind::ReactantQuantumYield(s, a) => {
                let l = kinetics::ledger::read(model, layout, until, end);
                let by = l
                    .by_absorber
                    .iter()
                    .find(|b| &b.species == a)
                    .map_or(0.0, |b| b.absorbed);
                (end[idx(s)] - first[idx(s)]) * model.volume / by
            }
            EndpointKind::Lifetime(t) => lifetime(net, t).map_err(Error::Usage)?,
        };
        endpoints.push(v);
    }
    Ok(Prediction { points, endpoints })
}

/// Lifetime of transient `name` in `net`, s: 1 / Σ (rates + k₂ [quencher]₀).
pub fn lifetime(net: &Network, name: &str) -> std::result::Result<f64, String> {
    let t = net
        .transient_index(name)
        .ok_or_else(|| format!("no transient \"{name}\""))?;
    let mut total = 0.0;
    for c in &net.transients[t].channels {
        total += match c.branching {
            Branching::Rate { k, .. } => k,
            Branching::Quenching { partner, k2, .. } => k2 * net.species[partner].initial,
            _ => return Err(format!("\"{name}\" has fixed fractions, so no lifetime")),
        };
    }
    Ok(1.0 / total)
}

/// How to search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    /// Number of starts: the file's values, then seeded random starts around them.
    pub starts: usize,
    /// Seed of the random starts (each start has its own stream, so results do not depend on
    /// the number of threads).
    pub seed: u64,
    /// Least-squares settings (their `errors` field is set by the fit from the data and
    /// `scale_errors`).
    pub settings: Settings,
    /// Scale the standard errors by the reduced χ² even when every observation has an sd
    /// (by default given sd are taken as known and the covariance is left unscaled).
    pub scale_errors: bool,
    /// Cap on model evaluations over all starts (each evaluation integrates every experiment
    /// once; with [`Derivatives::Differences`] a Jacobian costs two per free parameter). Default [`DEFAULT_MAX_EVALUATIONS`].
    pub max_evaluations: usize,
    /// Optional wall-clock limit on the search.
    pub time_limit: Option<std::time::Duration>,
    /// How the Jacobian is found.
    pub derivatives: Derivatives,
}

/// The default cap on model evaluations of a fit, over all starts.
pub const DEFAULT_MAX_EVALUATIONS: usize = 2000;

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            starts: 1,
            seed: 1,
            settings: Settings {
                ftol: 1e-10,
                xtol: 1e-10,
                gtol: 1e-10,
                patience: 100,
                step: 1e-4,
                errors: ErrorScale::ReducedChi2,
            },
            scale_errors: false,
            max_evaluations: DEFAULT_MAX_EVALUATIONS,
            time_limit: None,
            derivatives: Derivatives::default(),
        }
    }
}

/// How far a fit has got, as reported to the progress callback.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Progress {
    /// Model evaluations used so far, over all starts.
    pub evaluations: usize,
    /// The cap on them.
    pub max_evaluations: usize,
    /// The lowest χ² seen so far (∞ before the first evaluation).
    pub best_chi2: f64,
    /// Starts finished.
    pub starts_done: usize,
    /// Starts in all.
    pub starts: usize,
    /// Time since the search began, s.
    pub elapsed: f64,
}

/// Why the standard errors are, or are not, scaled by the reduced χ².
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorBasis {
    /// Every observation has an sd, taken as known: covariance (JᵀJ)⁻¹ unscaled.
    KnownSd,
    /// Every observation has an sd, and scaling by the reduced χ² was asked for.
    ScaledOnRequest,
    /// Some observations have no sd: σ is estimated from the scatter, covariance × reduced χ².
    EstimatedSd,
}

impl ErrorBasis {
    /// The basis for data that are `weighted` (every observation has an sd) with `scale_errors`.
    pub fn choose(weighted: bool, scale_errors: bool) -> Self {
        match (weighted, scale_errors) {
            (false, _) => ErrorBasis::EstimatedSd,
            (true, true) => ErrorBasis::ScaledOnRequest,
            (true, false) => ErrorBasis::KnownSd,
        }
    }

    /// How the least-squares core scales the covariance.
    pub fn scale(self) -> ErrorScale {
        match self {
            ErrorBasis::KnownSd => ErrorScale::Unscaled,
            _ => ErrorScale::ReducedChi2,
        }
    }

    /// What was done and why, in words (the interval method is stated once, by
    /// [`lsq::Solution::interval_method`]).
    pub fn describe(self) -> &'static str {
        match self {
            ErrorBasis::KnownSd => {
                "standard errors not scaled by the reduced χ²: every observation has an sd, taken as known (--scale-errors scales them)"
            }
            ErrorBasis::ScaledOnRequest => {
                "standard errors scaled by the reduced χ², as asked (--scale-errors), though every observation has an sd"
            }
            ErrorBasis::EstimatedSd => {
                "standard errors scaled by the reduced χ²: some observations have no sd, so σ is estimated from the scatter"
            }
        }
    }
}

/// One start of a multi-start fit.
#[derive(Debug, Clone, PartialEq)]
pub struct StartOutcome {
    /// Natural start values.
    pub start: Vec<f64>,
    /// χ² reached, or the failure.
    pub chi2: std::result::Result<f64, String>,
}

/// The result of a fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitResult {
    /// The free parameters.
    pub free: Vec<Free>,
    /// How the search found its Jacobian.
    pub derivatives: Derivatives,
    /// The best solution over all starts.
    pub solution: Solution,
    /// Identifiability warnings, in words.
    pub warnings: Vec<String>,
    /// Every start and where it ended.
    pub starts: Vec<StartOutcome>,
    /// Number of observations.
    pub n: usize,
    /// True when every observation had a standard deviation.
    pub weighted: bool,
    /// Whether and why the standard errors are scaled by the reduced χ².
    pub errors: ErrorBasis,
    /// Whether the model describes the data: χ² against its degrees of freedom (sd given) and
    /// the runs of residual signs per experiment.
    pub goodness: Goodness,
    /// Why the search was stopped before converging (None: it converged); the solution is then
    /// the best point reached.
    pub stopped: Option<lsq::Stop>,
    /// −2 ln L at the optimum (χ² with given σ; n ln(χ²/n) when σ is estimated).
    pub minus_two_log_likelihood: f64,
    /// Number of estimated quantities (free parameters, plus σ when estimated).
    pub k: usize,
    /// AICc.
    pub aicc: f64,
    /// BIC.
    pub bic: f64,
    /// The family the network file wrote its energies in: fitted barriers are shown in it.
    pub energy_unit: crate::units::display::EnergyUnit,
}

/// A standard normal draw (Box–Muller, common practice).
fn normal(rng: &mut StdRng) -> f64 {
    let u1: f64 = 1.0 - rng.random::<f64>();
    let u2: f64 = rng.random::<f64>();
    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
}

/// The starts: the file's values, then draws around them on the fitted scale (spread 1 for
/// log and logistic parameters, i.e. a factor e; 5 % of the magnitude for unbounded ones).
pub fn starts(setup: &Setup, opts: &FitOptions) -> Vec<Vec<f64>> {
    let x0 = setup.start();
    let mut out = vec![x0.clone()];
    for i in 1..opts.starts.max(1) {
        let mut rng = StdRng::seed_from_u64(opts.seed.wrapping_mul(0x9E37_79B9_7F4A_7C15).wrapping_add(i as u64));
        out.push(
            setup
                .free
                .iter()
                .zip(&x0)
                .map(|(f, x)| match f.transform {
                    Transform::Identity => x + 0.05 * x.abs().max(1.0) * normal(&mut rng),
                    t => t.inverse(t.forward(*x) + normal(&mut rng)),
                })
                .collect(),
        );
    }
    out
}

/// Fit: every start in parallel (rayon), the best χ² kept (ties to the earlier start), within
/// the evaluation cap and time limit of `opts` (on either, each start ends at the best point it
/// reached and the result says so in [`FitResult::stopped`]); `progress` is called after every
/// model evaluation and every finished start.
pub fn fit(setup: &Setup, opts: &FitOptions, progress: &(dyn Fn(&Progress) + Sync)) -> Result<FitResult> {
    let transforms = setup.transforms();
    let all = starts(setup, opts);
    let model = Evaluate {
        setup,
        derivatives: opts.derivatives,
    };
    let obs = setup.observations();
    let weighted = obs.iter().all(|o| o.2);
    let errors = ErrorBasis::choose(weighted, opts.scale_errors);
    let settings = Settings {
        errors: errors.scale(),
        ..opts.settings
    };
    let budget = Budget::new(opts.max_evaluations, opts.time_limit);
    let done = std::sync::atomic::AtomicUsize::new(0);
    let report = |b: &Budget| {
        progress(&Progress {
            evaluations: b.used().min(b.max_evaluations()),
            max_evaluations: b.max_evaluations(),
            best_chi2: b.best_chi2(),
            starts_done: done.load(std::sync::atomic::Ordering::Relaxed),
            starts: all.len(),
            elapsed: b.elapsed().as_secs_f64(),
        })
    };
    let outcomes: Vec<std::result::Result<Solution, String>> = all
        .par_iter()
        .map(|x0| {
            let r = lsq::fit_within(&model, x0, &transforms, &settings, &budget, &report).map_err(|e| e.0);
            done.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
            report(&budget);
            r
        })
        .collect();
    let mut best: Option<&Solution> = None;
    for s in outcomes.iter().flatten() {
        if best.is_none_or(|b| s.chi2 < b.chi2) {
            best = Some(s);
        }
    }
    let Some(best) = best else {
        let why = outcomes
            .iter()
            .filter_map(|o| o.as_ref().err())
            .next()
            .cloned()
            .unwrap_or_default();
        return Err(Error::Numerical(format!("no start converged: {why}")));
    };
    let solution = best.clone();
    let names: Vec<&str> = setup.free.iter().map(|f| f.key.as_str()).collect();
    let warnings = solution
        .warnings(&transforms)
        .iter()
        .map(|w| match w {
            Identifiability::NearSingular(r) => format!(
                "the information matrix is near singular (reciprocal condition {r:.1e}): the data do not pin down all free parameters together"
            ),
            Identifiability::Correlated(i, j, c) => {
                format!("{} and {} correlate ({c:+.3}): the data mostly fix a combination of them", names[*i], names[*j])
            }
            Identifiability::AtBound(i) => format!(
                "{} ended on the edge of its range: it has no standard error or interval, and the others' are given with it held there",
                names[*i]
            ),
            Identifiability::Loose(i) => format!("{}: the standard error exceeds the value", names[*i]),
        })
        .collect();
    let n = obs.len();
    let p = setup.free.len();
    let (m2ll, k) = likelihood(solution.chi2, n, p, weighted);
    let (aicc, bic) = criteria(m2ll, k, n);
    let goodness = goodness(setup, &solution, weighted);
    let stopped = (!solution.converged).then(|| budget.stopped().unwrap_or(lsq::Stop::Patience));
    Ok(FitResult {
        free: setup.free.clone(),
        derivatives: opts.derivatives,
        starts: all
            .into_iter()
            .zip(&outcomes)
            .map(|(start, o)| StartOutcome {
                start,
                chi2: o.as_ref().map(|s| s.chi2).map_err(|e| e.clone()),
            })
            .collect(),
        solution,
        warnings,
        n,
        weighted,
        errors,
        goodness,
        stopped,
        minus_two_log_likelihood: m2ll,
        k,
        aicc,
        bic,
        energy_unit: setup.base.energy_unit,
    })
}

/// The goodness-of-fit checks at `solution`: the χ² test when every observation has a given sd
/// (`weighted`), and the runs of residual signs of each experiment's time courses, each
/// species in time order (end points are single values and take no part).
fn goodness(setup: &Setup, solution: &Solution, weighted: bool) -> Goodness {
    let mut runs = Vec::new();
    let mut at = 0;
    for e in setup.experiments {
        let r = &solution.residuals[at..at + e.points.len()];
        at += e.points.len() + e.endpoints.len();
        let mut species: Vec<&str> = Vec::new();
        for p in &e.points {
            if !species.contains(&p.species.as_str()) {
                species.push(&p.species);
            }
        }
        if species.is_empty() {
            continue;
        }
        let sequences: Vec<Vec<f64>> = species
            .iter()
            .map(|s| {
                let mut v: Vec<(f64, f64)> = e
                    .points
                    .iter()
                    .zip(r)
                    .filter(|(p, _)| p.species == *s)
                    .map(|(p, r)| (p.time, *r))
                    .collect();
                v.sort_by(|a, b| a.0.total_cmp(&b.0));
                v.into_iter().map(|x| x.1).collect()
            })
            .collect();
        runs.push(RunsTest::new(&e.name, &sequences));
    }
    Goodness {
        chi2: if weighted {
            super::goodness::Chi2Test::new(solution.chi2, solution.dof)
        } else {
            None
        },
        runs,
    }
}

/// A dense prediction of one experiment for plots: times (s) and each measured species.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    /// Experiment name.
    pub experiment: String,
    /// Times, s.
    pub times: Vec<f64>,
    /// (species, values in the data's unit) for each species measured.
    pub series: Vec<(String, Vec<f64>, bool)>,
}

/// Curves of every experiment at `x`, `n` output times each.
pub fn curves(setup: &Setup, x: &[f64], n: usize) -> Result<Vec<Curve>> {
    let mut out = Vec::new();
    for e in setup.experiments {
        let net = setup.network(e, x)?;
        let model = Model::compile(&net);
        let mut opts = Options::until(Setup::until(e));
        opts.outputs = n;
        opts.rtol = 1e-8;
        opts.atol = 1e-15;
        let traj = kinetics::simulate(&model, &opts, &mut |_| {})?;
        let basis = e
            .yield_of
            .as_deref()
            .and_then(|y| net.species_index(y))
            .map_or(1.0, |i| net.species[i].initial);
        let mut names: Vec<(String, bool)> = Vec::new();
        for p in &e.points {
            if !names.iter().any(|n| n.0 == p.species) {
                names.push((p.species.clone(), p.is_yield));
            }
        }
        let series = names
            .into_iter()
            .map(|(s, y)| {
                let i = net.species_index(&s).unwrap_or(0);
                let v = traj.series(i).iter().map(|c| if y { c / basis } else { *c }).collect();
                (s, v, y)
            })
            .collect();
        out.push(Curve {
            experiment: e.name.clone(),
            times: traj.times.clone(),
            series,
        });
    }
    Ok(out)
}

/// Synthetic data: each experiment of `template` with its values replaced by the model's
/// predictions at `x` plus normal noise of each point's sd (seeded; common practice for
/// recovery tests). Time-course points and end points keep their times, sd and lines.
pub fn synthesize(setup: &Setup, x: &[f64], seed: u64) -> Result<Vec<Experiment>> {
    let mut rng = StdRng::seed_from_u64(seed);
    let mut out = Vec::new();
    for e in setup.experiments {
        let p = setup.predict(e, x)?;
        let mut e2 = e.clone();
        for (pt, f) in e2.points.iter_mut().zip(&p.points) {
            pt.value = f + pt.sd * normal(&mut rng);
        }
        for (ep, f) in e2.endpoints.iter_mut().zip(&p.endpoints) {
            ep.value = f + ep.sd * normal(&mut rng);
        }
        out.push(e2);
    }
    Ok(out)
}
