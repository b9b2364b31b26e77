//! Irradiation planning: how long to irradiate to reach a target, how many photons and how much
//! energy that takes, what lamp power or flow rate gets it done in a given time, how many days
//! of sunlight, and what a sweep over power, wavelength, concentration or temperature changes.
//!
//! Every time to target comes from event detection in the integrator (root finding on the
//! target species' level), never from scanning output. A target that is never reached is found
//! by integrating in growing stretches (each ten times the last, from the state reached) until
//! either the event fires, the state stops changing (a steady state: photostationary, or
//! nothing left to react), or the horizon is passed.
//!
//! No file I/O, no printing: results are structs for `report::plan`.

pub mod actinometry;
pub mod horizon;
pub mod sweep;
pub mod target;

use crate::error::{Error, Result};
use crate::kinetics::{self, Options, Schedule, Stop, Trajectory};
use crate::model::Model;
use crate::model::rhs::Rhs;
pub use target::{Direction, Target};

/// How to plan.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanOptions {
    /// Relative tolerance of the integrator.
    pub rtol: f64,
    /// Absolute tolerance, mol/L.
    pub atol: f64,
    /// Longest time to integrate before calling the target unreachable, s.
    pub horizon: f64,
    /// Optional light schedule (sun-hours a day).
    pub schedule: Option<Schedule>,
    /// Species whose shares (selectivity) are reported; None: the model's products.
    pub products: Option<Vec<usize>>,
}

impl Default for PlanOptions {
    /// rtol 1e-8, atol 1e-15 mol/L, a horizon of 100 years, light on throughout.
    fn default() -> Self {
        PlanOptions {
            rtol: 1e-8,
            atol: 1e-15,
            horizon: 100.0 * 365.25 * 86400.0,
            schedule: None,
            products: None,
        }
    }
}

/// Why a target is out of reach.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Why {
    /// The concentrations stopped changing while light is still turned over productively:
    /// forward and back steps balance (a photostationary state).
    Photostationary,
    /// The concentrations stopped changing and nothing is left that light or heat converts.
    Exhausted,
    /// Still changing at the horizon.
    Horizon,
    /// No light enters the sample (every source at zero) and the dark steps stopped short.
    Dark,
    /// The light is under its floor ([`crate::model::floor::LIGHT_FLOOR`]: fewer than one
    /// photon in the age of the universe), taken as none, and the dark steps stopped short.
    BelowFloor,
}

impl Why {
    /// A sentence for reports.
    pub fn words(self) -> &'static str {
        match self {
            Why::Photostationary => {
                "a photostationary state: the light still drives reactions, but forward and back steps balance"
            }
            Why::Exhausted => "a steady state with nothing left to convert: the material went elsewhere",
            Why::Horizon => "the concentrations were still changing at the horizon",
            Why::Dark => "no light: every source is at zero, and the dark steps alone came to rest short of it",
            Why::BelowFloor => {
                "no light (below floor): the sources deliver fewer than one photon in the age of the universe, \
                 taken as none, and the dark steps alone came to rest short of it"
            }
        }
    }
}

/// A step that consumed the target species, with its rate at the time of the peak.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Consumer {
    /// Step or outcome label.
    pub step: String,
    /// Rate of consumption of the species, mol L⁻¹ s⁻¹.
    pub rate: f64,
}

/// The target was not reached.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Unreachable {
    /// Why.
    pub why: Why,
    /// Level at the end of the run, mol/L.
    pub final_level: f64,
    /// Closest level to the target seen (highest for a rise, lowest for a fall), mol/L.
    pub best_level: f64,
    /// When the closest level was reached, s: for a level that settles (photostationary or
    /// exhausted), the first time it came within [`SETTLED`] of the whole change from the start
    /// to the closest level (linear between output times), so the time and the photons are those
    /// needed to get there in practice, not to the last digit of a creeping approach.
    pub best_time: f64,
    /// How long was integrated, s.
    pub horizon: f64,
    /// Steps consuming the species at the closest point, largest first (for a rise).
    pub consumers: Vec<Consumer>,
}

/// The share of the whole change that counts as having settled: 99 % (common practice for
/// "reached the photostationary state").
pub const SETTLED: f64 = 0.99;

/// The closest approach `best` (level, time, state) moved to the first time the target species
/// came within [`SETTLED`] of the change from `start` to the closest level (states and time
/// linear between output times); `best` itself when that is no earlier.
fn settled(tr: &Trajectory, species: usize, start: f64, best: (f64, f64, Vec<f64>)) -> (f64, f64, Vec<f64>) {
    let goal = start + SETTLED * (best.0 - start);
    let rising = best.0 >= start;
    let reached = |v: f64| if rising { v >= goal } else { v <= goal };
    let Some(k) = tr.states.iter().position(|y| reached(y[species])) else {
        return best;
    };
    let (t, y) = if k == 0 {
        (tr.times[0], tr.states[0].clone())
    } else {
        let (y0, y1) = (&tr.states[k - 1], &tr.states[k]);
        let (v0, v1) = (y0[species], y1[species]);
        let f = if v1 != v0 {
            ((goal - v0) / (v1 - v0)).clamp(0.0, 1.0)
        } else {
            1.0
        };
        let t = tr.times[k - 1] + f * (tr.times[k] - tr.times[k - 1]);
        (t, y0.iter().zip(y1).map(|(a, b)| a + f * (b - a)).collect())
    };
    if t < best.1 { (best.0, t, y) } else { best }
}

/// Photons and energy up to a time.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Dose {
    /// Time the light was on, s.
    pub lit_time: f64,
    /// Photons that entered the sample, einstein.
    pub incident: f64,
    /// Photons absorbed by species, einstein.
    pub absorbed: f64,
    /// Per litre of solution, einstein/L.
    pub incident_per_litre: f64,
    /// Per litre of solution, einstein/L.
    pub absorbed_per_litre: f64,
    /// Amount of the target species formed (rise) or consumed (fall), mol.
    pub amount: f64,
    /// Incident photons per mole of that amount, einstein/mol.
    pub incident_per_mol: Option<f64>,
    /// Absorbed photons per mole, einstein/mol.
    pub absorbed_per_mol: Option<f64>,
    /// Radiant power of all sources while lit, W.
    pub power: f64,
    /// Radiant energy delivered into the sample, J.
    pub radiant_energy: f64,
    /// Radiant energy per mole of the amount, J/mol.
    pub radiant_per_mol: Option<f64>,
}

/// A product and its share at the target time.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Share {
    /// Species name.
    pub species: String,
    /// Concentration formed, mol/L (final minus initial).
    pub formed: f64,
    /// Selectivity: mol formed per mol of the reference reagent consumed (IUPAC Gold Book,
    /// "selectivity", `from memory`), 0 when none of it was consumed; None when the species is
    /// not formed from the reference (a co-product of other reagents, such as a scavenger's
    /// product: [`crate::model::lineage`]) or there is no reference.
    pub selectivity: Option<f64>,
    /// The most mol of it the stoichiometry forms per mol of the reference consumed, along any
    /// route of the network (1 for an isomer, 2 for `A -> 2 B`); None when not formed from it.
    pub stoichiometric_max: Option<f64>,
    /// The reference reagent: the target's yield reference, else the limiting reagent.
    pub reference: Option<String>,
}

/// The answer for one model and target.
#[derive(Debug, Clone)]
pub struct Plan {
    /// The target.
    pub target: Target,
    /// Time the target was met, s (None: unreachable).
    pub time: Option<f64>,
    /// Why not, when not.
    pub unreachable: Option<Unreachable>,
    /// Photons and energy to the target time (unreachable: to the closest approach).
    pub dose: Dose,
    /// Products at that time (unreachable: at the closest approach).
    pub products: Vec<Share>,
    /// The whole run, joined from its stretches.
    pub trajectory: Trajectory,
    /// Integrator stretches run (one, unless the first horizon was too short).
    pub stretches: usize,
}

impl Plan {
    /// The state at the target time (or the end).
    pub fn state(&self) -> &[f64] {
        self.trajectory.last()
    }
}

/// The first stretch to integrate: three times the time the initial rate of the target
/// species would take to reach the level, or 100 s when it does not move at the start.
fn first_stretch(model: &Model, target: &Target) -> f64 {
    let rhs = Rhs::new(model);
    let y = rhs.initial_state();
    let mut dy = vec![0.0; y.len()];
    rhs.eval(&y, &mut dy);
    let (x0, r) = (y[target.species], dy[target.species]);
    let gap = target.level - x0;
    if r != 0.0 && gap / r > 0.0 && (gap / r).is_finite() {
        (3.0 * gap / r).max(1e-9)
    } else {
        100.0
    }
}

/// Outputs on a log grid per decade of [`FIRST_DECADES`] below the end of the first stretch.
pub const FIRST_PER_DECADE: usize = 20;

/// Decades below its end the first stretch's log grid reaches.
pub const FIRST_DECADES: usize = 6;

/// The output times of a first stretch from 0 to `end` (s): `linear` evenly spaced, and
/// [`FIRST_PER_DECADE`] per decade over the [`FIRST_DECADES`] decades below `end`, sorted.
fn first_outputs(end: f64, linear: usize) -> Vec<f64> {
    let n = linear.max(1);
    let logs = FIRST_PER_DECADE * FIRST_DECADES;
    let mut t: Vec<f64> = (1..=n)
        .map(|i| end * i as f64 / n as f64)
        .chain((0..logs).map(|i| end * 10f64.powf(-(FIRST_DECADES as f64) + i as f64 / FIRST_PER_DECADE as f64)))
        .collect();
    t.sort_by(f64::total_cmp);
    t.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * b.abs());
    t
}

/// True when nothing changes noticeably over ten times the elapsed time `t`: every species'
/// rate × 10 t is below 1e-6 of the largest initial concentration.
fn steady(rhs: &Rhs, y: &[f64], t: f64, scale: f64) -> bool {
    let mut dy = vec![0.0; y.len()];
    rhs.eval(y, &mut dy);
    let ns = rhs.layout.n_species;
    dy[..ns].iter().all(|d| d.abs() * 10.0 * t <= 1e-6 * scale)
}

/// Time to reach `target` on `model`, with the dose and the products at that time.
pub fn time_to_target(model: &Model, target: &Target, opts: &PlanOptions) -> Result<Plan> {
    if opts.horizon.is_nan() || opts.horizon <= 0.0 {
        return Err(Error::Usage("the horizon must be positive".into()));
    }
    let rhs = Rhs::new(model);
    let dark = model.with_light_scale(0.0);
    let dark_rhs = Rhs::new(&dark);
    let scale = model.initial.iter().cloned().fold(target.level, f64::max);
    let mut t = 0.0;
    let mut y = rhs.initial_state();
    let mut stretch = first_stretch(model, target);
    if let Some(s) = opts.schedule {
        // Whole cycles, so the steady-state test compares like with like.
        stretch = (stretch / s.period).ceil().max(1.0) * s.period;
    }
    let mut joined: Option<Trajectory> = None;
    let mut stretches = 0;
    let mut best = (y[target.species], 0.0, y.clone());
    let closer = |a: f64, b: f64| match target.direction {
        Direction::Above => a > b,
        Direction::Below => a < b,
    };
    let (time, why) = 'stretches: loop {
        let end = (t + stretch).min(opts.horizon);
        // On a schedule the stretch ends with one whole cycle run on its own, so the state one
        // cycle before the end is at hand for the periodic steady-state test.
        let legs = match opts.schedule {
            Some(s) if end - s.period > t + 1e-9 * s.period => vec![end - s.period, end],
            _ => vec![end],
        };
        let mut cycle_before: Option<Vec<f64>> = None;
        for (leg_i, &leg) in legs.iter().enumerate() {
            if leg_i + 1 == legs.len() && legs.len() > 1 {
                cycle_before = Some(y.clone());
            }
            let mut o = Options::until(leg);
            o.rtol = opts.rtol;
            o.atol = opts.atol;
            o.outputs = 200;
            if t == 0.0 && opts.schedule.is_none() {
                // The first stretch also on a log grid from a millionth of it: a fast start is
                // then resolved, and a later target found on this run (`time_to_target_reusing`)
                // integrates again only a short interval instead of the whole start.
                o.times = first_outputs(leg, o.outputs);
            }
            o.event = Some(target.event());
            o.schedule = opts.schedule;
            o.method = kinetics::Method::Bdf;
            let tr = kinetics::simulate_from(model, t, &y, &o, &mut |_| {})?;
            for (tt, st) in tr.times.iter().zip(&tr.states) {
                if closer(st[target.species], best.0) {
                    best = (st[target.species], *tt, st.clone());
                }
            }
            y.copy_from_slice(tr.last());
            let stop = tr.stop;
            joined = Some(match joined {
                None => tr,
                Some(mut j) => {
                    j.times.extend(tr.times.iter().skip(1));
                    j.states.extend(tr.states.into_iter().skip(1));
                    j.counts.steps += tr.counts.steps;
                    j.counts.rhs += tr.counts.rhs;
                    j.counts.jacobian_products += tr.counts.jacobian_products;
                    j.counts.jacobian_setups += tr.counts.jacobian_setups;
                    j.counts.lu_kept += tr.counts.lu_kept;
                    j.counts.rejected += tr.counts.rejected;
                    j.counts.newton_iterations += tr.counts.newton_iterations;
                    j.counts.newton_failures += tr.counts.newton_failures;
                    j.retries.extend(tr.retries);
                    j.stop = stop;
                    j
                }
            });
            t = leg;
            if let Stop::Event(te) = stop {
                stretches += 1;
                break 'stretches (Some(te), None);
            }
        }
        stretches += 1;
        let at_rest = match (opts.schedule, &cycle_before) {
            // Periodic steady state: one more cycle moves nothing noticeably (scaled, as below,
            // to ten times the elapsed time).
            (Some(s), Some(prev)) => {
                let ns = model.n_species();
                y[..ns]
                    .iter()
                    .zip(&prev[..ns])
                    .all(|(a, b)| (a - b).abs() * 10.0 * t / s.period <= 1e-6 * scale)
            }
            (Some(_), None) => steady(&rhs, &y, t, scale) && steady(&dark_rhs, &y, t, scale),
            (None, _) => steady(&rhs, &y, t, scale),
        };
        if at_rest {
            // Productive photochemistry still running? (photon rate into changing outcomes)
            let mut dy = vec![0.0; y.len()];
            rhs.eval(&y, &mut dy);
            let productive: f64 = model
                .outcomes
                .iter()
                .enumerate()
                .filter(|(_, o)| !o.returns)
                .map(|(i, _)| dy[rhs.layout.outcome(i)])
                .sum();
            let why = if productive * t > 1e-6 * scale {
                Why::Photostationary
            } else if model.total_flux() <= 0.0 && !model.floored.sources.is_empty() {
                Why::BelowFloor
            } else if model.total_flux() <= 0.0 {
                Why::Dark
            } else {
                Why::Exhausted
            };
            break (None, Some(why));
        }
        if end >= opts.horizon {
            break (None, Some(Why::Horizon));
        }
        stretch = 10.0 * t;
        if let Some(s) = opts.schedule {
            stretch = (stretch / s.period).ceil() * s.period;
        }
    };
    let trajectory = joined.ok_or_else(|| Error::Numerical("no integration ran".into()))?;
    let t_end = time.unwrap_or(t);
    Ok(assemble(
        model,
        target,
        opts,
        trajectory,
        (time, why),
        t_end,
        best,
        stretches,
    ))
}

/// The plan from a finished run: why it ended, the dose and the products at the target time
/// (unreachable: at the closest approach `best`, (level, time, state)).
#[allow(clippy::too_many_arguments)]
fn assemble(
    model: &Model,
    target: &Target,
    opts: &PlanOptions,
    trajectory: Trajectory,
    (time, why): (Option<f64>, Option<Why>),
    t_end: f64,
    best: (f64, f64, Vec<f64>),
    stretches: usize,
) -> Plan {
    let rhs = Rhs::new(model);
    let last = trajectory.last().to_vec();
    let best = match why {
        Some(Why::Photostationary | Why::Exhausted) => {
            settled(&trajectory, target.species, model.initial[target.species], best)
        }
        _ => best,
    };
    let unreachable = why.map(|why| {
        let mut dy = vec![0.0; last.len()];
        rhs.eval(&best.2, &mut dy);
        Unreachable {
            why,
            final_level: last[target.species],
            best_level: best.0,
            best_time: best.1,
            horizon: t_end,
            consumers: consumers(model, &rhs, &best.2, target.species),
        }
    });
    // Unreachable: the photons and products up to the closest approach (a product's peak).
    let (t_dose, y_dose) = match why {
        Some(_) => (best.1, best.2.as_slice()),
        None => (t_end, last.as_slice()),
    };
    let dose = dose(model, &trajectory, target, t_dose, y_dose);
    // Default shares: the model's products, leaving out solvent-like species (1 M or more at the start).
    let default: Vec<usize> = model
        .products
        .iter()
        .cloned()
        .filter(|&p| model.initial[p] < 1.0)
        .collect();
    let reference = match &target.basis {
        target::Basis::YieldOf { reference, .. } => model.species_index(reference),
        _ => target::limiting_reagent(model),
    };
    let products = shares(model, opts.products.as_deref().unwrap_or(&default), y_dose, reference);
    Plan {
        target: target.clone(),
        time,
        unreachable,
        dose,
        products,
        trajectory,
        stretches,
    }
}

/// [`time_to_target`] reusing `earlier`, a plan made on the same `model` with the same `opts`
/// for another target (it starts from the model's initial state). When `earlier`'s run passes
/// `target` between two of its output states, only that interval is integrated again, with
/// root finding on the target, instead of a new run from t = 0; otherwise (met at the start,
/// never met in `earlier`'s run, or a light schedule) this is [`time_to_target`].
pub fn time_to_target_reusing(model: &Model, target: &Target, earlier: &Plan, opts: &PlanOptions) -> Result<Plan> {
    let tr = &earlier.trajectory;
    let crossing = tr.states.iter().position(|s| target.met_by(s[target.species]));
    let i = match crossing {
        Some(i) if i > 0 && opts.schedule.is_none() && tr.schedule.is_none() => i,
        _ => return time_to_target(model, target, opts),
    };
    let mut o = Options::until(tr.times[i]);
    o.rtol = opts.rtol;
    o.atol = opts.atol;
    o.outputs = 20;
    o.event = Some(target.event());
    o.method = kinetics::Method::Bdf;
    let leg = kinetics::simulate_from(model, tr.times[i - 1], &tr.states[i - 1], &o, &mut |_| {})?;
    let Stop::Event(te) = leg.stop else {
        return time_to_target(model, target, opts);
    };
    let mut joined = tr.clone();
    joined.times.truncate(i);
    joined.states.truncate(i);
    joined.times.extend(leg.times.iter().skip(1));
    joined.states.extend(leg.states.into_iter().skip(1));
    joined.stop = leg.stop;
    joined.segments.retain(|seg| seg.from < tr.times[i - 1]);
    if let Some(last) = joined.segments.last_mut() {
        last.to = last.to.min(tr.times[i - 1]);
    }
    joined.segments.extend(leg.segments);
    joined.retries.extend(leg.retries);
    let best = (joined.last()[target.species], te, joined.last().to_vec());
    Ok(assemble(model, target, opts, joined, (Some(te), None), te, best, 1))
}

/// Steps consuming species `sp` at state `y`, largest first.
fn consumers(model: &Model, rhs: &Rhs, y: &[f64], sp: usize) -> Vec<Consumer> {
    let mut out = Vec::new();
    for r in &model.reactions {
        let nu: f64 = r.net.iter().filter(|x| x.0 == sp).map(|x| x.1).sum();
        if nu < 0.0 {
            let mut rate = r.k;
            for &(i, n) in &r.reactants {
                rate *= y[i].max(0.0).powi(n as i32);
            }
            out.push(Consumer {
                step: r.name.clone(),
                rate: -nu * rate,
            });
        }
    }
    let mut dy = vec![0.0; y.len()];
    rhs.eval(y, &mut dy);
    for (o, oc) in model.outcomes.iter().enumerate() {
        let nu: f64 = oc.net.iter().filter(|x| x.0 == sp).map(|x| x.1).sum();
        if nu < 0.0 {
            out.push(Consumer {
                step: oc.label.clone(),
                rate: -nu * dy[rhs.layout.outcome(o)],
            });
        }
    }
    out.retain(|c| c.rate > 0.0);
    out.sort_by(|a, b| b.rate.total_cmp(&a.rate));
    out
}

/// The dose up to `t` from the final state `y`.
fn dose(model: &Model, tr: &Trajectory, target: &Target, t: f64, y: &[f64]) -> Dose {
    let lit = tr.lit_time(t);
    let led = kinetics::ledger::read_lit(model, &tr.layout, t, lit, y);
    let v = model.volume;
    let change = (y[target.species] - model.initial[target.species]) * v;
    let amount = match target.direction {
        Direction::Above => change,
        Direction::Below => -change,
    };
    let per = |x: f64| (amount > 0.0).then(|| x / amount);
    let power = model.total_power();
    Dose {
        lit_time: lit,
        incident: led.incident,
        absorbed: led.absorbed,
        incident_per_litre: led.incident / v,
        absorbed_per_litre: led.absorbed / v,
        amount,
        incident_per_mol: per(led.incident),
        absorbed_per_mol: per(led.absorbed),
        power,
        radiant_energy: power * lit,
        radiant_per_mol: per(power * lit),
    }
}

/// Species `which` formed at state `y` and their selectivities: mol formed per mol of
/// `reference` consumed, for the species formed from it.
fn shares(model: &Model, which: &[usize], y: &[f64], reference: Option<usize>) -> Vec<Share> {
    let consumed = reference.map_or(0.0, |r| (model.initial[r] - y[r]).max(0.0));
    let from = reference.map(|r| model.lineage.from(r));
    which
        .iter()
        .map(|&p| {
            let f = (y[p] - model.initial[p]).max(0.0);
            let most = from.as_ref().and_then(|d| d[p]);
            Share {
                species: model.species[p].clone(),
                formed: f,
                selectivity: most.map(|_| if consumed > 0.0 { f / consumed } else { 0.0 }),
                stoichiometric_max: most,
                reference: reference.map(|r| model.species[r].clone()),
            }
        })
        .collect()
}

/// The light scale that reaches the target in a given time.
#[derive(Debug, Clone)]
pub struct PowerSolve {
    /// Factor on every source's photon flux (and power).
    pub scale: f64,
    /// The plan at that scale.
    pub plan: Plan,
    /// Plans evaluated.
    pub evaluations: usize,
    /// Relative tolerance met on the time, |t/T − 1|.
    pub tolerance: f64,
}

/// The answer of [`power_for_time`] when no light scale in its range reaches the target in the
/// time asked: the target is not reachable in that time (a photostationary state below the
/// level at every light, or thermal steps too slow whatever the light).
#[derive(Debug, Clone)]
pub struct NoLightScale {
    /// Why, in words: the range of scales tried, and whether any of them reached the target.
    pub why: String,
    /// True when no scale tried reached the target at all (within the plan's horizon).
    pub unreachable_at_every_scale: bool,
    /// Plans evaluated.
    pub evaluations: usize,
}

/// Relative tolerance of [`power_for_time`] on the time to target.
pub const POWER_TOLERANCE: f64 = 1e-6;

/// The factor on all light sources that makes the time to `target` equal `duration` (s):
/// a root of g(x) = ln t(eˣ) − ln T, where x is the log of the factor, bracketed from the
/// 1/power guess and closed by the Illinois variant of regula falsi until |t/T − 1| < 1e-6.
/// `Ok(Err(..))` is an answer, not a failure: no factor between 1e-9 and 1e9 reaches the target
/// in `duration`.
pub fn power_for_time(
    model: &Model,
    target: &Target,
    duration: f64,
    opts: &PlanOptions,
) -> Result<std::result::Result<PowerSolve, NoLightScale>> {
    if !(duration > 0.0 && duration.is_finite()) {
        return Err(Error::Usage("the time to reach the target must be positive".into()));
    }
    if model.total_flux() <= 0.0 && !model.floored.sources.is_empty() {
        return Err(Error::Usage(format!(
            "the light of the file is below the floor of {:.1e} einstein/s (fewer than one photon in the age \
             of the universe), taken as none: no factor on it brings any light; give a source a power or photon \
             flux (--set light.NAME.power=...)",
            crate::model::floor::LIGHT_FLOOR
        )));
    }
    if model.total_flux() <= 0.0 {
        return Err(Error::Usage(
            "the light of the file is zero (every source switched off): no factor on it brings any light; \
             give a source a power or photon flux (--set light.NAME.power=...)"
                .into(),
        ));
    }
    let mut evaluations = 0;
    let mut eval = |x: f64| -> Result<(f64, Plan)> {
        evaluations += 1;
        let m = model.with_light_scale(x.exp());
        let p = time_to_target(&m, target, opts)?;
        let g = match p.time {
            Some(t) => (t / duration).ln(),
            None => f64::INFINITY,
        };
        Ok((g, p))
    };
    let (g0, p0) = eval(0.0)?;
    if g0.abs() < POWER_TOLERANCE {
        return Ok(Ok(PowerSolve {
            scale: 1.0,
            plan: p0,
            evaluations,
            tolerance: POWER_TOLERANCE,
        }));
    }
    // Bracket: lo has g > 0 (too slow), hi has g < 0 (too fast).
    let mut lo: Option<(f64, f64)> = None;
    let mut hi: Option<(f64, f64)> = None;
    let mut x = 0.0;
    let mut g = g0;
    drop(p0);
    let limit = (1e9f64).ln();
    loop {
        if g > 0.0 {
            lo = Some((x, g));
        } else {
            hi = Some((x, g));
        }
        if lo.is_some() && hi.is_some() {
            break;
        }
        // Time ∝ 1/power as a guess; an unreachable target: ten times the light.
        let step = if g.is_finite() {
            g * 1.2 + g.signum() * 0.01
        } else {
            10f64.ln()
        };
        x += step;
        if x.abs() > limit {
            return Ok(Err(NoLightScale {
                why: format!(
                    "no light between 1e-9 and 1e9 times the file's reaches \"{}\" in the time asked{}",
                    target.text,
                    if g.is_finite() {
                        ""
                    } else {
                        " (not reached at all at any scale tried)"
                    }
                ),
                unreachable_at_every_scale: !g.is_finite(),
                evaluations,
            }));
        }
        let (gn, pn) = eval(x)?;
        g = gn;
        if g.abs() < POWER_TOLERANCE {
            return Ok(Ok(PowerSolve {
                scale: x.exp(),
                plan: pn,
                evaluations,
                tolerance: POWER_TOLERANCE,
            }));
        }
    }
    let (mut a, mut b) = (lo.expect("bracketed"), hi.expect("bracketed"));
    let mut side = 0;
    for _ in 0..100 {
        let ga = if a.1.is_finite() { a.1 } else { 10.0 };
        let xm = b.0 - b.1 * (b.0 - a.0) / (b.1 - ga);
        let xm = if xm.is_finite() && xm > a.0.min(b.0) && xm < a.0.max(b.0) {
            xm
        } else {
            0.5 * (a.0 + b.0)
        };
        let (gm, pm) = eval(xm)?;
        if gm.abs() < POWER_TOLERANCE || (a.0 - b.0).abs() < 1e-12 {
            return Ok(Ok(PowerSolve {
                scale: xm.exp(),
                plan: pm,
                evaluations,
                tolerance: POWER_TOLERANCE,
            }));
        }
        if gm > 0.0 {
            a = (xm, gm);
            if side == -1 {
                b.1 *= 0.5;
            }
            side = -1;
        } else {
            b = (xm, gm);
            if side == 1 && a.1.is_finite() {
                a.1 *= 0.5;
            }
            side = 1;
        }
    }
    Err(Error::Numerical(format!(
        "the light scale for \"{}\" did not converge in 100 steps",
        target.text
    )))
}

/// A tubular flow reactor: plug flow treated as a batch over the residence time.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Tube {
    /// Inner diameter, m (taken as the optical path length).
    pub inner_diameter: f64,
    /// Irradiated length, m.
    pub length: f64,
}

impl Tube {
    /// Irradiated volume, L.
    pub fn volume_litres(&self) -> f64 {
        std::f64::consts::PI * 0.25 * self.inner_diameter * self.inner_diameter * self.length * 1000.0
    }

    /// The model in this tube: path length = inner diameter, volume = the tube's, the
    /// background absorbance scaled with the path (Beer–Lambert, taking the background as the
    /// solvent's), the sources' photon flux unchanged (it is the flux entering the tubing).
    pub fn apply(&self, model: &Model) -> Model {
        let mut m = model.clone();
        if model.path > 0.0 {
            let r = self.inner_diameter / model.path;
            for a in &mut m.background {
                *a *= r;
            }
        }
        m.path = self.inner_diameter;
        m.volume = self.volume_litres();
        m
    }
}

/// The flow answer.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Flow {
    /// Residence time, s.
    pub residence_time: f64,
    /// Flow rate, L/s.
    pub flow_rate: f64,
    /// Output of the target species (formed, or consumed for a fall), mol/s.
    pub throughput: f64,
}

/// Flow rate and throughput for a plan made on `tube.apply(model)`.
pub fn flow(tube: &Tube, plan: &Plan, model_in_tube: &Model) -> Option<Flow> {
    let tau = plan.time?;
    let q = tube.volume_litres() / tau;
    let c = plan.dose.amount / model_in_tube.volume;
    Some(Flow {
        residence_time: tau,
        flow_rate: q,
        throughput: q * c,
    })
}

/// Where the target was met on a light schedule.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Days {
    /// Day on which it happened (1 = the first).
    pub day: u64,
    /// Fraction of that day's lit time used (1 when met in the dark after the light).
    pub fraction_of_lit: f64,
    /// True when met in the dark (a thermal step finished it).
    pub in_dark: bool,
    /// Days as a number: whole days before plus the fraction of the last day's light.
    pub days: f64,
    /// Lit hours used in all, h.
    pub lit_hours: f64,
}

/// Days for a time `t` (s) on `schedule`.
pub fn days(schedule: &Schedule, t: f64) -> Days {
    let n = (t / schedule.period).floor();
    let into = t - n * schedule.period;
    let in_dark = into > schedule.lit;
    let fraction = (into / schedule.lit).min(1.0);
    Days {
        day: n as u64 + 1,
        fraction_of_lit: fraction,
        in_dark,
        days: n + fraction,
        lit_hours: schedule.lit_time(t) / 3600.0,
    }
}

/// One point of a sweep.
#[derive(Debug, Clone)]
pub struct SweepPoint {
    /// The swept value (SI, or mol/L).
    pub value: f64,
    /// The plan, or why it failed.
    pub plan: std::result::Result<Plan, String>,
}

/// Plan every (value, model, target) of a sweep in parallel (rayon); the points keep their
/// order. Each model carries its own target, since a concentration sweep moves a yield's level.
pub fn sweep(jobs: Vec<(f64, Model, Target)>, opts: &PlanOptions) -> Vec<SweepPoint> {
    use rayon::prelude::*;
    jobs.into_par_iter()
        .map(|(value, m, t)| SweepPoint {
            value,
            plan: time_to_target(&m, &t, opts).map_err(|e| e.to_string()),
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn schedule_pieces_and_lit_time() {
        let s = Schedule::daily(6.0);
        let p = s.pieces(0.0, 2.0 * 86400.0);
        assert_eq!(p.len(), 4);
        assert_eq!(p[0], (0.0, 21600.0, true));
        assert_eq!(p[1], (21600.0, 86400.0, false));
        assert!((s.lit_time(86400.0 + 3600.0) - 25200.0).abs() < 1e-9);
        let d = days(&s, 86400.0 + 10800.0);
        assert_eq!(d.day, 2);
        assert!((d.fraction_of_lit - 0.5).abs() < 1e-12);
        assert!(!d.in_dark);
    }

    #[test]
    fn tube_volume() {
        let t = Tube {
            inner_diameter: 1e-3,
            length: 2.0,
        };
        // π (0.5 mm)² × 2 m = 1.5708 mL
        assert!((t.volume_litres() - 1.5707963e-3).abs() < 1e-9);
    }
}
