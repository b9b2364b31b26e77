//! The chain's mean time checked against the kinetics.
//!
//! The comparison: with mean time τ to an end, a molecule that takes one exponential step
//! has reached its end by τ with probability 1 − 1/e. So the kinetics should turn
//! (1 − 1/e) × Y of the limiting reagent into the chain's main end (Y its chain yield, taken
//! 1:1 per molecule of the limiting reagent) at about τ. The time the kinetics take, t, is
//! found by event detection in the integrator ([`crate::plan::time_to_target`]), from the
//! initial mixture under the file's light. For a single first-order step A → B (and parallel
//! first-order branches) the two agree exactly: t = τ = 1/k (`common practice`). For longer
//! paths the single-exponential picture is a yardstick, so only a factor of more than
//! [`FACTOR`] is called a disagreement, and then the reasons that apply are named from the
//! model: the light each absorbing molecule gets at the chain's concentrations against the
//! kinetics' state at t (the inner filter of species absent at the start, or the optically
//! thin limit), the bimolecular steps linearised at concentrations the kinetics leave behind,
//! and ends the kinetics consume further.
//!
//! The yields are compared too: the chain's yield of each end (per molecule followed from the
//! start mixture) against what the kinetics have made of it per molecule of that mixture once
//! they have converted (the automatic horizon, [`crate::plan::horizon::automatic`]: 99 %
//! conversion of the limiting reagent, or a steady state). For first-order steps under a light
//! share that does not change the branching, the chain's absorption probabilities are the
//! kinetics' long-time yields exactly (`common practice`); second-order steps (linearised in
//! the chain, or joining two followed molecules), an inner filter that shifts light against
//! heat, ends consumed further and stoichiometry other than 1:1 make them differ legitimately,
//! and the reasons say which applies.

use super::build::{Light, absorption_rates};
pub use super::drain::DRAIN_LONGEST;
use super::drain::{Wait, drain};
use super::{ChainRun, StateKind};
use crate::error::Result;
use crate::model::Model;
use crate::network::Network;
use crate::plan::target::{self, Basis, Direction, Target};
use crate::plan::{PlanOptions, time_to_target, time_to_target_reusing};
use crate::units::{format_concentration, format_time, sig};
use serde::Serialize;

/// Ratio beyond which the chain and the kinetics are said to disagree.
pub const FACTOR: f64 = 2.0;

/// Yields agree when within this factor of each other (or within [`YIELD_CLOSE`]): they are
/// exact for first-order networks, so the margin only covers the 1 % left unconverted at the
/// horizon and the tolerances; beyond it the kinetics change the outcome, not just its time.
pub const YIELD_FACTOR: f64 = 1.2;

/// Yields this close (in molecules per molecule followed) agree whatever their ratio: one
/// percent of the start, below what NMR or HPLC tell apart in a crude mixture
/// (`common practice`, as [`crate::plan::horizon::DEFAULT_CONVERSION`]).
pub const YIELD_CLOSE: f64 = 0.01;

/// One end's yield in the chain and in the kinetics.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct YieldCheck {
    /// The end (a species).
    pub end: String,
    /// The chain's yield: probability that a molecule followed ends here.
    pub chain: f64,
    /// The kinetics' yield: its amount formed at the horizon per molecule of the start mixture
    /// consumed by then (formed within the integrator's tolerance of zero counted as 0).
    pub kinetics: f64,
    /// Kinetics over chain (None when the chain's yield is 0).
    pub ratio: Option<f64>,
    /// True when they agree ([`YIELD_FACTOR`], [`YIELD_CLOSE`]).
    pub agree: bool,
}

/// The yields of the chain's ends against the kinetics.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Yields {
    /// The species the chain follows from (the start mixture), whose total is "per molecule".
    pub start: Vec<String>,
    /// Time the kinetics were read at, s.
    pub at_s: f64,
    /// Share of the start mixture the kinetics have consumed by then.
    pub converted: f64,
    /// Why the kinetics were read there (the automatic horizon in words, and the wait for the
    /// intermediates to drain into the ends when it was needed).
    pub horizon: String,
    /// What is still on its way at that time: each intermediate (a species the molecule passes
    /// through that is neither in the start mixture nor an end) with its amount per molecule of
    /// the start mixture consumed; empty when less than [`YIELD_CLOSE`] is in transit in all.
    pub in_transit: Vec<(String, f64)>,
    /// Every end with a yield in the chain.
    pub ends: Vec<YieldCheck>,
    /// True when every end agrees.
    pub agree: bool,
    /// Why they differ (empty when they agree).
    pub reasons: Vec<String>,
    /// The comparison in words.
    pub method: String,
}

impl Yields {
    /// One line: where the kinetics were read and the verdict; then one line per end
    /// ([`Yields::end_lines`]).
    pub fn headline(&self) -> String {
        format!(
            "yield check: per molecule of {} that reacts, the kinetics read at {} ({} % of it consumed; {}); {}",
            self.start.join(" + "),
            format_time(self.at_s),
            sig(100.0 * self.converted, 3),
            self.horizon,
            if self.agree {
                "they agree".to_string()
            } else {
                "they DISAGREE: the chain's yields are not what this mixture makes".to_string()
            }
        )
    }

    /// Each end: "product: chain 1, kinetics 0.47; DISAGREE by a factor of 2.13".
    pub fn end_lines(&self) -> Vec<String> {
        self.ends
            .iter()
            .map(|e| {
                let verdict = match (e.agree, e.ratio) {
                    (true, _) => "agree".to_string(),
                    (false, Some(r)) if r > 0.0 => {
                        format!("DISAGREE by a factor of {}", sig(if r >= 1.0 { r } else { 1.0 / r }, 3))
                    }
                    _ => "DISAGREE: the kinetics make none".to_string(),
                };
                format!(
                    "{}: chain {}, kinetics {}; {verdict}",
                    e.end,
                    sig(e.chain, 4),
                    sig(e.kinetics, 4)
                )
            })
            .collect()
    }
}

/// What the kinetics make of the chain's mean time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Agreement {
    /// The chain's mean time to an end, s.
    pub chain_time_s: f64,
    /// The chain's main end (largest yield).
    pub end: String,
    /// The limiting reagent the end is counted against.
    pub reference: String,
    /// Share of the limiting reagent that must have become the end: (1 − 1/e) × chain yield.
    pub fraction: f64,
    /// Time the kinetics take to get there, s (None: never).
    pub kinetics_time_s: Option<f64>,
    /// Why the kinetics never get there, when they do not.
    pub unreachable: Option<String>,
    /// Kinetics time over chain time (None when the kinetics never get there).
    pub ratio: Option<f64>,
    /// True when the two agree within [`FACTOR`].
    pub agree: bool,
    /// The comparison in words.
    pub method: String,
    /// Why they differ (empty when they agree).
    pub reasons: Vec<String>,
    /// The chain's yields against the kinetics' (None: not compared, see `yields_skipped`).
    pub yields: Option<Yields>,
    /// Why the yields were not compared, when they were not.
    pub yields_skipped: Option<String>,
}

impl Agreement {
    /// One line: the two times and the verdict.
    pub fn headline(&self) -> String {
        let turn = format!(
            "{} % of {} into {}",
            sig(100.0 * self.fraction, 3),
            self.reference,
            self.end
        );
        let kinetics = match (self.kinetics_time_s, &self.unreachable) {
            (Some(t), _) => format!("the kinetics take {} to turn {turn}", format_time(t)),
            (None, Some(why)) => format!("the kinetics never turn {turn} ({why})"),
            (None, None) => format!("the kinetics never turn {turn}"),
        };
        let verdict = match (self.agree, self.ratio) {
            (true, Some(r)) => format!("they agree (ratio {})", sig(r, 3)),
            (false, Some(r)) => format!(
                "they DISAGREE by a factor of {}: the chain's time is not the time this mixture takes",
                sig(if r >= 1.0 { r } else { 1.0 / r }, 3)
            ),
            _ => "they DISAGREE: the chain's time is not the time this mixture takes".into(),
        };
        format!(
            "kinetics check: chain mean time {}; {kinetics}; {verdict}",
            format_time(self.chain_time_s)
        )
    }
}

/// Check the chain `run` of `net` (compiled as `model`) against the kinetics, or say why the
/// check does not apply (a start other than the initial mixture, an end that is no species, no
/// limiting reagent).
pub fn check(
    model: &Model,
    net: &Network,
    run: &ChainRun,
    from: Option<&str>,
) -> Result<std::result::Result<Agreement, String>> {
    if from.is_some() {
        return Ok(Err(
            "the kinetics start from the initial mixture, not from one species, so the check needs the default start"
                .into(),
        ));
    }
    let a = &run.analysis;
    let tau = a.time_total;
    if !(tau.is_finite() && tau > 0.0) {
        return Ok(Err("the chain's mean time is not a positive number".into()));
    }
    let Some(k) = (0..a.yields.len()).max_by(|&i, &j| a.yields[i].total_cmp(&a.yields[j])) else {
        return Ok(Err("the chain has no end".into()));
    };
    let StateKind::Species(end) = run.chain.states[a.absorbing[k]].kind else {
        return Ok(Err("the chain's main end is not a species the kinetics follow".into()));
    };
    let Some(reference) = target::limiting_reagent(model) else {
        return Ok(Err("no limiting reagent to count the end against".into()));
    };
    let fraction = (1.0 - (-1.0f64).exp()) * a.yields[k].min(1.0);
    let (end_name, ref_name) = (model.species[end].clone(), model.species[reference].clone());
    let level = model.initial[end] + fraction * model.initial[reference];
    let target = Target {
        text: format!("{end_name} > {} % of {ref_name}", sig(100.0 * fraction, 4)),
        species: end,
        species_name: end_name.clone(),
        direction: Direction::Above,
        level,
        basis: Basis::YieldOf {
            reference: ref_name.clone(),
            fraction,
            chosen: true,
        },
    };
    // One run to the automatic horizon serves both checks: the time check integrates again
    // only the interval in which that run passes its level.
    let horizon = crate::plan::horizon::automatic(model, None)?;
    let opts = PlanOptions {
        horizon: crate::plan::horizon::CAP,
        ..PlanOptions::default()
    };
    let plan = match &horizon.plan {
        Some(earlier) => time_to_target_reusing(model, &target, earlier, &opts)?,
        None => time_to_target(model, &target, &opts)?,
    };
    let ratio = plan.time.map(|t| t / tau);
    let agree = ratio.is_some_and(|r| (1.0 / FACTOR..=FACTOR).contains(&r));
    let (yields, yields_skipped) = match compare_yields(model, net, run, &horizon)? {
        Ok(y) => (Some(y), None),
        Err(why) => (None, Some(why)),
    };
    let mut reasons = if agree {
        Vec::new()
    } else {
        reasons(
            model,
            net,
            run,
            plan.trajectory.zero_within(),
            plan.state(),
            plan.time
                .unwrap_or(plan.trajectory.times.last().copied().unwrap_or(0.0)),
            end,
        )?
    };
    if let Some(u) = &plan.unreachable {
        reasons.insert(0, short_of(model, &target, u, reference, yields.as_ref()));
    }
    Ok(Ok(Agreement {
        yields,
        yields_skipped,
        chain_time_s: tau,
        end: end_name.clone(),
        reference: ref_name.clone(),
        fraction,
        kinetics_time_s: plan.time,
        unreachable: plan.unreachable.as_ref().map(|u| u.why.words().to_string()),
        ratio,
        agree,
        method: format!(
            "a molecule taking one exponential step has ended by the mean time with probability 1 − 1/e, so by \
             then the kinetics (from the initial mixture under the file's light, inner filter included) should have \
             turned (1 − 1/e) × Y of the limiting reagent {ref_name} into {end_name}, Y being the chain's yield of \
             {end_name} (1:1); exact for first-order steps, a yardstick otherwise, so only a factor over {FACTOR} \
             counts; the time is found on the run to the automatic horizon the yield check reads, the interval where it \
             passes that level integrated again and stopped there by root finding"
        ),
        reasons,
    }))
}

/// Why the kinetics never reach the level of the time check: the most they make of the end,
/// against the level the chain's yield sets; the time is then undefined, and the yield check
/// (when it was made) is where the chain and the kinetics part.
fn short_of(
    model: &Model,
    target: &Target,
    u: &crate::plan::Unreachable,
    reference: usize,
    yields: Option<&Yields>,
) -> String {
    let (end, c_ref) = (target.species, model.initial[reference]);
    let best = u.best_level - model.initial[end];
    let share = if c_ref > 0.0 { best.max(0.0) / c_ref } else { 0.0 };
    let wanted = target.level - model.initial[end];
    let most = format!(
        "the kinetics make at most {} of {} ({} % of {}, at {})",
        format_concentration(best.max(0.0)),
        target.species_name,
        sig(100.0 * share, 3),
        model.species[reference],
        format_time(u.best_time)
    );
    let level = format!(
        "short of the {} ({} % of {}) the chain's yield sets for this check",
        format_concentration(wanted),
        sig(100.0 * wanted / c_ref, 3),
        model.species[reference]
    );
    match (u.why, yields) {
        (crate::plan::Why::Horizon, _) => {
            format!("{most}, {level}, and were still changing at {}", format_time(u.horizon))
        }
        (_, Some(y)) if !y.agree => format!(
            "{most}, {level}: the chain's yield is more than this mixture makes, so there is no time to compare; the \
             yield check below compares the yields and says why"
        ),
        (_, Some(_)) => format!("{most}, {level}; the yield check below compares the yields at the automatic horizon"),
        (_, None) => format!("{most}, {level}: the chain's yield is more than this mixture makes"),
    }
}

/// The reasons, from the model, why the chain's time and the kinetics' differ: the state `y`
/// of the kinetics at time `t` against the chain's assumptions.
fn reasons(
    model: &Model,
    net: &Network,
    run: &ChainRun,
    zero: crate::units::display::ZeroWithin,
    y: &[f64],
    t: f64,
    end: usize,
) -> Result<Vec<String>> {
    let ns = model.n_species();
    let c0 = run
        .settings
        .concentrations
        .clone()
        .unwrap_or_else(|| model.initial.clone());
    let at = format_time(t);
    let mut out = Vec::new();
    // Light per absorbing molecule: the chain's against the stirred cell at the kinetics' state.
    let chain_k = absorption_rates(model, net, run.settings.light, &c0)?;
    let ode_k = absorption_rates(model, net, Light::Stirred, &y[..ns])?;
    let visited = |s: usize| run.analysis.visits.get(s).is_some_and(|v| *v > 0.0);
    for (slot, &s) in model.absorbers.iter().enumerate() {
        if !visited(s) {
            continue;
        }
        let (kc, ko): (f64, f64) = (chain_k[slot].iter().sum(), ode_k[slot].iter().sum());
        if kc <= 0.0 || ko <= 0.0 || (kc / ko < 1.5 && ko / kc < 1.5) {
            continue;
        }
        let times = if kc > ko {
            format!("{} times fewer", sig(kc / ko, 3))
        } else {
            format!("{} times more", sig(ko / kc, 3))
        };
        let filters: Vec<&str> = model
            .absorbers
            .iter()
            .filter(|&&i| c0[i] <= 0.0 && zero.shown(y[i]) > 0.0)
            .map(|&i| model.species[i].as_str())
            .collect();
        let why = match run.settings.light {
            Light::Thin => "the chain takes the optically thin limit, the kinetics the cell's absorbance".to_string(),
            Light::Stirred if !filters.is_empty() => format!(
                "the chain shares the light at concentrations where {} {} 0 M, so it sees none of the inner filter {} \
                 build{} up",
                filters.join(", "),
                if filters.len() == 1 { "is" } else { "are" },
                if filters.len() == 1 { "it" } else { "they" },
                if filters.len() == 1 { "s" } else { "" }
            ),
            Light::Stirred => {
                "the chain shares the light at its concentrations, the kinetics at the ones reached".into()
            }
        };
        out.push(format!(
            "light: a molecule of {} absorbs {} photons/s in the chain but {} photons/s in the kinetics at {at}, \
             {times}: {why}",
            model.species[s],
            sig(kc, 3),
            sig(ko, 3),
        ));
    }
    // Bimolecular steps linearised at partner concentrations the kinetics leave behind.
    for re in &model.reactions {
        let order: u32 = re.reactants.iter().map(|x| x.1).sum();
        if order < 2 || !re.reactants.iter().any(|&(i, _)| visited(i)) {
            continue;
        }
        let changed: Vec<String> = re
            .reactants
            .iter()
            .filter(|&&(i, _)| c0[i] > 0.0 && y[i] < 0.5 * c0[i])
            .map(|&(i, _)| {
                format!(
                    "[{}] {} in the chain, {} in the kinetics at {at}",
                    model.species[i],
                    format_concentration(c0[i]),
                    format_concentration(zero.shown(y[i]).max(0.0))
                )
            })
            .collect();
        if !changed.is_empty() {
            out.push(format!(
                "\"{}\" is linearised at fixed partner concentrations and never slows in the chain: {}",
                re.name,
                changed.join("; ")
            ));
        }
    }
    // The end is consumed further in the kinetics.
    let consumers = consumed_by(model, end);
    if !consumers.is_empty() {
        out.push(format!(
            "{} is an end for the chain, but the kinetics consume it further ({})",
            model.species[end],
            consumers.join(", ")
        ));
    }
    if out.is_empty() {
        out.push("the path has several slow steps in a row, so the time to an end is far from one exponential".into());
    }
    Ok(out)
}

/// The steps (thermal, and photochemical outcomes) that consume species `i`.
fn consumed_by(model: &Model, i: usize) -> Vec<&str> {
    model
        .reactions
        .iter()
        .map(|r| (&r.net, r.name.as_str()))
        .chain(model.outcomes.iter().map(|o| (&o.net, o.label.as_str())))
        .filter(|(n, _)| n.iter().any(|&(s, v)| s == i && v < 0.0))
        .map(|(_, name)| name)
        .collect()
}

/// The chain's yield of each end against the kinetics' amount of it per molecule of the start
/// mixture at the automatic horizon, or why they cannot be compared.
fn compare_yields(
    model: &Model,
    net: &Network,
    run: &ChainRun,
    h: &crate::plan::horizon::Horizon,
) -> Result<std::result::Result<Yields, String>> {
    let ns = model.n_species();
    let a = &run.analysis;
    let species_of = |state: usize| match run.chain.states.get(state).map(|s| &s.kind) {
        Some(StateKind::Species(i)) => Some(*i),
        _ => None,
    };
    // The start mixture: the species the chain follows, weighted by their initial amounts.
    let start: Vec<usize> = (0..run.start.len())
        .filter(|&s| run.start[s] > 0.0)
        .filter_map(species_of)
        .filter(|&i| model.initial[i] > 0.0)
        .collect();
    let total: f64 = start.iter().map(|&i| model.initial[i]).sum();
    if total.is_nan() || total <= 0.0 {
        return Ok(Err("the chain starts from no species of the initial mixture".into()));
    }
    let Some(plan) = &h.plan else {
        return Ok(Err(format!(
            "the kinetics have no horizon to convert by: {}",
            h.reason()
        )));
    };
    let zero = plan.trajectory.zero_within();
    // The chain follows every molecule to an end; the kinetics' mixture at the horizon still
    // holds what has not reacted, so their yields are per molecule consumed.
    let consumed_in = |y: &[f64]| -> f64 { start.iter().map(|&i| model.initial[i] - zero.shown(y[i])).sum() };
    let horizon_at = *plan.trajectory.times.last().unwrap_or(&h.time);
    let at_horizon = consumed_in(plan.state());
    if at_horizon.is_nan() || at_horizon <= 0.0 {
        return Ok(Err(format!(
            "the kinetics consume none of the start mixture by {}",
            format_time(horizon_at)
        )));
    }
    // Molecules the horizon leaves in intermediates have not ended yet, while the chain counts
    // where they will end: read the kinetics once they have drained into the ends.
    let intermediates: Vec<usize> = (0..ns)
        .filter(|&i| !start.contains(&i) && !run.chain.states.get(i).is_none_or(|st| st.absorbing))
        .filter(|&i| a.visits.get(i).is_some_and(|v| *v > 0.0))
        .collect();
    let transit_share =
        |y: &[f64]| -> f64 { intermediates.iter().map(|&i| zero.shown(y[i]).max(0.0)).sum::<f64>() / consumed_in(y) };
    let drained = drain(model, plan, &transit_share)?;
    let (at, y) = (drained.time, drained.state.as_slice());
    let consumed = consumed_in(y);
    let chain_zero = crate::units::display::ZeroWithin::relative(
        crate::units::display::largest(a.yields.iter().copied()),
        crate::units::display::CHAIN_ROUNDOFF,
    );
    let mut ends = Vec::new();
    let mut differing = Vec::new();
    for (k, &state) in a.absorbing.iter().enumerate() {
        let chain = chain_zero.shown(a.yields[k]);
        let Some(i) = species_of(state) else { continue };
        if chain <= 0.0 || i >= ns {
            continue;
        }
        let kinetics = zero.shown(y[i] - model.initial[i]).max(0.0) / consumed;
        let ratio = Some(kinetics / chain);
        let agree = (kinetics - chain).abs() <= YIELD_CLOSE
            || ratio.is_some_and(|r| (1.0 / YIELD_FACTOR..=YIELD_FACTOR).contains(&r));
        if !agree {
            differing.push(i);
        }
        ends.push(YieldCheck {
            end: model.species[i].clone(),
            chain,
            kinetics,
            ratio,
            agree,
        });
    }
    if ends.is_empty() {
        return Ok(Err("no end of the chain is a species the kinetics follow".into()));
    }
    let agree = differing.is_empty();
    let in_transit: Vec<(String, f64)> = if transit_share(y) > YIELD_CLOSE {
        intermediates
            .iter()
            .map(|&i| (model.species[i].clone(), zero.shown(y[i]).max(0.0) / consumed))
            .filter(|x| x.1 > 0.0)
            .collect()
    } else {
        Vec::new()
    };
    let mut reasons = if agree {
        Vec::new()
    } else {
        yield_reasons(model, net, run, h, zero, y, at, &start, &differing)?
    };
    if !agree && !in_transit.is_empty() {
        let amounts: Vec<String> = in_transit
            .iter()
            .map(|(n, x)| format!("{} in {n}", sig(*x, 3)))
            .collect();
        reasons.insert(
            0,
            format!(
                "at {} the kinetics still hold {} per molecule consumed in intermediates ({}), not yet at an end{}, \
                 while the chain counts where each molecule will end",
                format_time(at),
                sig(transit_share(y), 3),
                amounts.join(", "),
                match drained.ended {
                    Wait::Steady => " and never to reach one: nothing changes any more".to_string(),
                    _ => format!(
                        " and still on their way {} times after the automatic horizon",
                        sig(DRAIN_LONGEST, 4)
                    ),
                }
            ),
        );
        // the catch-all is no reason when this one applies
        reasons.retain(|r| !r.starts_with("none of the known causes"));
    }
    let horizon = match drained.ended {
        Wait::NotNeeded => h.reason(),
        Wait::Drained => format!(
            "{}; read on until under {} % of it is still in intermediates ({}), at {}",
            h.reason(),
            sig(100.0 * YIELD_CLOSE, 2),
            intermediate_names(model, &intermediates),
            format_time(at)
        ),
        Wait::Steady | Wait::Cap => format!(
            "{}; read on until the intermediates ({}) drained, which they had not by {}",
            h.reason(),
            intermediate_names(model, &intermediates),
            format_time(at)
        ),
    };
    let names: Vec<String> = start.iter().map(|&i| model.species[i].clone()).collect();
    Ok(Ok(Yields {
        method: format!(
            "the chain's yield of each end is the probability that a molecule followed from the start mixture ({}) \
             ends there; the kinetics' is the amount of it formed per molecule of that mixture consumed, read at the \
             automatic horizon or, when more than {} of a molecule is then still in intermediates, once under that \
             is (amounts within the integrator's absolute tolerance of zero counted as 0); exact for first-order \
             steps, so they agree within a factor {YIELD_FACTOR} or {} of a molecule",
            names.join(" + "),
            sig(YIELD_CLOSE, 2),
            sig(YIELD_CLOSE, 2)
        ),
        start: names,
        at_s: at,
        converted: consumed / total,
        horizon,
        in_transit,
        ends,
        agree,
        reasons,
    }))
}

/// The intermediates' names for a sentence: "B", "adduct, closed".
fn intermediate_names(model: &Model, intermediates: &[usize]) -> String {
    intermediates
        .iter()
        .map(|&i| model.species[i].as_str())
        .collect::<Vec<_>>()
        .join(", ")
}

/// Why the chain's yields and the kinetics' differ for the `differing` ends, from the model and
/// the kinetics' state `y` at the horizon `t`.
#[allow(clippy::too_many_arguments)]
fn yield_reasons(
    model: &Model,
    net: &Network,
    run: &ChainRun,
    h: &crate::plan::horizon::Horizon,
    zero: crate::units::display::ZeroWithin,
    y: &[f64],
    t: f64,
    start: &[usize],
    differing: &[usize],
) -> Result<Vec<String>> {
    let ns = model.n_species();
    let at = format_time(t);
    let c0 = run
        .settings
        .concentrations
        .clone()
        .unwrap_or_else(|| model.initial.clone());
    let visited = |s: usize| run.analysis.visits.get(s).is_some_and(|v| *v > 0.0) || start.contains(&s);
    let mut out = Vec::new();
    if !matches!(h.ended, crate::plan::horizon::Ended::Reached(_)) {
        out.push(format!("the kinetics have not converted: {}", h.reason()));
    }
    // Second-order steps among the species the molecule passes through.
    for re in &model.reactions {
        let order: u32 = re.reactants.iter().map(|x| x.1).sum();
        if order < 2 || !re.reactants.iter().any(|&(i, _)| visited(i)) {
            continue;
        }
        let followed: Vec<&str> = re
            .reactants
            .iter()
            .filter(|&&(i, _)| start.contains(&i))
            .map(|&(i, _)| model.species[i].as_str())
            .collect();
        if followed.len() >= 2 || re.reactants.iter().any(|&(i, n)| n >= 2 && start.contains(&i)) {
            out.push(format!(
                "\"{}\" is second order and joins molecules the chain follows one at a time ({}): the chain counts \
                 each as ending on its own, the kinetics make one product of the pair",
                re.name,
                followed.join(", ")
            ));
        } else {
            let partners: Vec<String> = re
                .reactants
                .iter()
                .filter(|&&(i, _)| c0[i] > 0.0 && !start.contains(&i))
                .map(|&(i, _)| {
                    format!(
                        "[{}] {} in the chain, {} in the kinetics at {at}",
                        model.species[i],
                        format_concentration(c0[i]),
                        format_concentration(zero.shown(y[i]).max(0.0))
                    )
                })
                .collect();
            out.push(format!(
                "\"{}\" is second order: the chain takes it at fixed partner concentrations{}, so its share against \
                 the other ways out is fixed there, while in the kinetics it changes as the partners are used up or \
                 built up",
                re.name,
                if partners.is_empty() {
                    String::new()
                } else {
                    format!(" ({})", partners.join("; "))
                }
            ));
        }
    }
    // Light against heat: an absorber that also has a thermal way out branches by the light it
    // gets, which the inner filter changes as the kinetics go on.
    let chain_k = absorption_rates(model, net, run.settings.light, &c0)?;
    let ode_k = absorption_rates(model, net, Light::Stirred, &y[..ns])?;
    for (slot, &s) in model.absorbers.iter().enumerate() {
        if !visited(s) {
            continue;
        }
        // light it absorbs without reacting does not compete with the heat
        if !model.outcomes.iter().any(|o| o.slot == slot && !o.returns) {
            continue;
        }
        let thermal: Vec<&str> = model
            .reactions
            .iter()
            .filter(|r| r.reactants.iter().any(|&(i, _)| i == s))
            .map(|r| r.name.as_str())
            .collect();
        let (kc, ko): (f64, f64) = (chain_k[slot].iter().sum(), ode_k[slot].iter().sum());
        if thermal.is_empty() || kc <= 0.0 || (kc / ko.max(1e-300) < 1.5 && ko / kc < 1.5) {
            continue;
        }
        out.push(format!(
            "light against heat: {} leaves by light and by {}; a molecule of it absorbs {} photons/s in the chain but \
             {} photons/s in the kinetics at {at} (inner filter and depletion), so its share that reacts by light \
             differs",
            model.species[s],
            thermal.join(", "),
            sig(kc, 3),
            sig(ko, 3)
        ));
    }
    // Ends the kinetics consume further, and stoichiometry other than one per molecule.
    for &i in differing {
        let consumers = consumed_by(model, i);
        if !consumers.is_empty() {
            out.push(format!(
                "{} is an end for the chain, but the kinetics consume it further ({})",
                model.species[i],
                consumers.join(", ")
            ));
        }
        let multiple: Vec<&str> = model
            .reactions
            .iter()
            .map(|r| (&r.net, r.name.as_str()))
            .chain(model.outcomes.iter().map(|o| (&o.net, o.label.as_str())))
            .filter(|(n, _)| n.iter().any(|&(s, v)| s == i && v > 1.0 + 1e-9))
            .map(|(_, name)| name)
            .collect();
        if !multiple.is_empty() {
            out.push(format!(
                "{} forms more than one per molecule in {}: the chain counts molecules followed, the kinetics \
                 molecules formed",
                model.species[i],
                multiple.join(", ")
            ));
        }
    }
    if out.is_empty() {
        out.push(
            "none of the known causes (second-order steps, light against heat, ends consumed further, \
             stoichiometry) applies: treat the chain's yields with care"
                .into(),
        );
    }
    Ok(out)
}
