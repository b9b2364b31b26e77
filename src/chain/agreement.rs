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

use super::build::{Light, absorption_rates};
use super::{ChainRun, StateKind};
use crate::error::Result;
use crate::model::Model;
use crate::network::Network;
use crate::plan::target::{self, Basis, Direction, Target};
use crate::plan::{PlanOptions, time_to_target};
use crate::units::{format_concentration, format_time, sig};
use serde::Serialize;

/// Ratio beyond which the chain and the kinetics are said to disagree.
pub const FACTOR: f64 = 2.0;

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
}

impl Agreement {
    /// One line: the two times and the verdict.
    pub fn headline(&self) -> String {
        let k = match (self.kinetics_time_s, &self.unreachable) {
            (Some(t), _) => format_time(t),
            (None, Some(why)) => format!("never ({why})"),
            (None, None) => "never".into(),
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
            "kinetics check: chain mean time {}; the kinetics take {} to turn {} % of {} into {}; {}",
            format_time(self.chain_time_s),
            k,
            sig(100.0 * self.fraction, 3),
            self.reference,
            self.end,
            verdict
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
    let plan = time_to_target(
        model,
        &target,
        &PlanOptions {
            horizon: crate::plan::horizon::CAP,
            ..PlanOptions::default()
        },
    )?;
    let ratio = plan.time.map(|t| t / tau);
    let agree = ratio.is_some_and(|r| (1.0 / FACTOR..=FACTOR).contains(&r));
    let reasons = if agree {
        Vec::new()
    } else {
        reasons(
            model,
            net,
            run,
            plan.state(),
            plan.time
                .unwrap_or(plan.trajectory.times.last().copied().unwrap_or(0.0)),
            end,
        )?
    };
    Ok(Ok(Agreement {
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
             counts; one kinetics run, stopped at that level by root finding"
        ),
        reasons,
    }))
}

/// The reasons, from the model, why the chain's time and the kinetics' differ: the state `y`
/// of the kinetics at time `t` against the chain's assumptions.
fn reasons(model: &Model, net: &Network, run: &ChainRun, y: &[f64], t: f64, end: usize) -> Result<Vec<String>> {
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
            .filter(|&&i| c0[i] <= 0.0 && y[i] > 0.0)
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
                    format_concentration(y[i].max(0.0))
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
    let consumers: Vec<&str> = model
        .reactions
        .iter()
        .map(|r| (&r.net, r.name.as_str()))
        .chain(model.outcomes.iter().map(|o| (&o.net, o.label.as_str())))
        .filter(|(n, _)| n.iter().any(|&(s, v)| s == end && v < 0.0))
        .map(|(_, name)| name)
        .collect();
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
