//! A study of one network: every engine that applies, run in turn, with the results kept
//! together for a report. Pure: no file I/O and no printing (the `report` command writes).
//!
//! Kinetics always run; the single-molecule chain runs when the network has an end a molecule
//! can reach (a closed photoswitch has none, and the study says why instead); barrier verdicts
//! run when a window is asked for; a plan (time to a target, dose, other lamp powers) when a
//! target is given.

use crate::barrier::{self, Verdict};
use crate::chain::{self, Analysis};
use crate::error::Result;
use crate::file::data::Experiment;
use crate::fit::mechanism::FitOptions;
use crate::fit::run::{self as fit_run, Fitted, Ranking};
use crate::kinetics::{self, Trajectory};
use crate::model::Model;
use crate::network::Network;
use crate::plan::{self, Plan, PlanOptions};
use crate::report::chain::{self as chain_report, Summary};
use crate::report::chain_paths::{ClosedSummary, closed_run_summary};

/// What to run.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct StudyOptions {
    /// Irradiation time, s (None: from the kinetics, [`plan::horizon::automatic`]: until the
    /// target, or 99 % conversion of the limiting reagent, or nothing changes, rounded up to a
    /// round number).
    pub until: Option<f64>,
    /// Window for barrier verdicts, s (None: no verdicts).
    pub barrier_window: Option<f64>,
    /// A target to plan for, as written for `plan --target` (None: no plan).
    pub target: Option<String>,
}

/// Probability of crossing asked of every barrier verdict in a study.
pub const BARRIER_PROBABILITY: f64 = 0.5;

/// The chain analysis of one molecule, as the `ledger` command finds it with its defaults.
#[derive(Debug, Clone)]
pub struct ChainStudy {
    /// The analysis (the photon-count distribution included).
    pub analysis: Analysis,
    /// Ends, cycles, visits and sorted sensitivities.
    pub summary: Summary,
}

/// Barrier verdicts on every step with a rate.
#[derive(Debug, Clone)]
pub struct BarrierStudy {
    /// The window, s.
    pub window: f64,
    /// The probability of crossing asked for.
    pub probability: f64,
    /// One verdict per step or channel with a rate.
    pub rows: Vec<Verdict>,
    /// The hot ground-state channels: yields before cooling.
    pub hot: Vec<barrier::HotVerdict>,
}

/// Everything a study found.
#[derive(Debug, Clone)]
pub struct Study {
    /// Irradiation time used, s.
    pub until: f64,
    /// How that time was chosen (for the report).
    pub until_reason: String,
    /// The automatic horizon found from the kinetics, when no time was asked for
    /// ([`plan::horizon::automatic`]: a stated conversion, or nothing changing, capped).
    pub horizon: Option<plan::horizon::Horizon>,
    /// The kinetics run, with the photon ledger in its states.
    pub kinetics: Trajectory,
    /// True when the output times are spaced logarithmically because most of the change
    /// happens early ([`front_loaded`]); plots then use a log time axis.
    pub log_time: bool,
    /// How many times the kinetics were integrated for [`Study::kinetics`] (counted; one, since
    /// both output grids come from the same run, see [`kinetics_once`]).
    pub integrations: usize,
    /// The chain, or why it does not apply to this network.
    pub chain: std::result::Result<ChainStudy, String>,
    /// When no molecule can end (a closed switch), the photostationary state instead, from
    /// the chain and from the kinetics ([`ClosedStudy`]).
    pub closed: Option<ClosedStudy>,
    /// Barrier verdicts, when a window was given.
    pub barrier: Option<BarrierStudy>,
    /// The plan, when a target was given.
    pub plan: Option<PlanStudy>,
    /// The fit to data (and the ranking against rivals), when data were given ([`fit_study`]).
    pub fit: Option<FitStudy>,
    /// The network under each of its labelled sets of values, when it carries some
    /// ([`crate::levels::compare`] at the study's time and target), or why they could not be
    /// compared.
    pub levels: Option<std::result::Result<crate::levels::Comparison, String>>,
}

/// A fit of the network to data, and its ranking against rival networks when there are some.
#[derive(Debug, Clone)]
pub struct FitStudy {
    /// The network's name as the reader knows it (its file).
    pub network: String,
    /// The experiments fitted.
    pub experiments: Vec<Experiment>,
    /// The network's species in order (their plot colours follow it).
    pub species: Vec<String>,
    /// The fit of this network.
    pub fitted: Fitted,
    /// Rival networks (name, fit), each with its own `[fit] free` list.
    pub rivals: Vec<(String, Fitted)>,
    /// The ranking of this network (index 0) and the rivals (1..), when there are rivals.
    pub ranking: Option<Ranking>,
}

/// One network to fit: its name, the network as built and the keys it frees.
pub type Candidate = (String, Network, Vec<String>);

/// Fit `candidate` to `experiments`, exactly as the `fit` command does; fit each rival with its
/// own free keys and rank all of them as `compare` does.
pub fn fit_study(
    candidate: &Candidate,
    experiments: Vec<Experiment>,
    rivals: &[Candidate],
    opts: &FitOptions,
) -> Result<FitStudy> {
    use rayon::prelude::*;
    let (network, net, free) = candidate;
    let fitted = fit_run::fit_network(net, free, &experiments, opts, &|_| {})?;
    let rival_fits = rivals
        .par_iter()
        .map(|(name, n, free)| {
            fit_run::fit_network(n, free, &experiments, opts, &|_| {}).map_err(|e| fit_run::named_error(name, e))
        })
        .collect::<Result<Vec<_>>>()?;
    let rivals: Vec<(String, Fitted)> = rivals.iter().map(|r| r.0.clone()).zip(rival_fits).collect();
    let ranking = (!rivals.is_empty()).then(|| {
        let mut all = vec![(network.to_string(), &fitted)];
        all.extend(rivals.iter().map(|(n, f)| (n.clone(), f)));
        fit_run::rank(&all, &experiments)
    });
    Ok(FitStudy {
        network: network.to_string(),
        species: net.species.iter().map(|s| s.name.clone()).collect(),
        experiments,
        fitted,
        rivals,
        ranking,
    })
}

/// Factors on the file's light for the "other lamp powers" of a plan.
pub const POWER_FACTORS: [f64; 5] = [0.25, 0.5, 1.0, 2.0, 4.0];

/// The time to a target with every light source scaled by one factor.
#[derive(Debug, Clone, PartialEq)]
pub struct Alternative {
    /// Factor on every source's photon flux.
    pub scale: f64,
    /// Radiant power of all sources at that factor, W.
    pub power: f64,
    /// Time to the target, s (None: not reached).
    pub time: Option<f64>,
    /// Absorbed photons per mole of the target amount, einstein/mol.
    pub absorbed_per_mol: Option<f64>,
    /// Why the plan failed, when it did.
    pub failed: Option<String>,
}

/// The plan for a target: the answer under the file's light, and under other powers.
#[derive(Debug, Clone)]
pub struct PlanStudy {
    /// Time to target, dose and products at the file's light.
    pub plan: Plan,
    /// The same target at each of [`POWER_FACTORS`].
    pub alternatives: Vec<Alternative>,
}

/// Plan `target` (as written, e.g. "product > 90 %") on `model`, light on throughout.
fn plan_study(model: &Model, target: &str) -> Result<PlanStudy> {
    let target = plan::target::parse(target, model)?;
    let opts = PlanOptions::default();
    let base = plan::time_to_target(model, &target, &opts)?;
    let jobs = POWER_FACTORS
        .iter()
        .filter(|f| **f != 1.0)
        .map(|&f| (f, model.with_light_scale(f), target.clone()))
        .collect();
    let mut points = plan::sweep(jobs, &opts).into_iter();
    let alternatives = POWER_FACTORS
        .iter()
        .map(|&scale| {
            let power = base.dose.power * scale;
            let from = |p: &Plan| Alternative {
                scale,
                power,
                time: p.time,
                absorbed_per_mol: p.dose.absorbed_per_mol,
                failed: None,
            };
            if scale == 1.0 {
                return from(&base);
            }
            match points.next().map(|p| p.plan) {
                Some(Ok(p)) => from(&p),
                Some(Err(e)) => Alternative {
                    scale,
                    power,
                    time: None,
                    absorbed_per_mol: None,
                    failed: Some(e),
                },
                None => Alternative {
                    scale,
                    power,
                    time: None,
                    absorbed_per_mol: None,
                    failed: Some("not run".into()),
                },
            }
        })
        .collect();
    Ok(PlanStudy {
        plan: base,
        alternatives,
    })
}

/// True when every species that changes noticeably (by more than 1e-3 of the largest
/// concentration) has made 90 % of its net change within the first tenth of the run: a linear
/// time axis would squeeze the dynamics against its left edge.
pub fn front_loaded(tr: &Trajectory, n_species: usize) -> bool {
    let (Some(first), Some(last)) = (tr.states.first(), tr.states.last()) else {
        return false;
    };
    let t_end = *tr.times.last().unwrap_or(&0.0);
    let Some(k) = tr.times.iter().position(|t| *t >= 0.1 * t_end) else {
        return false;
    };
    let scale = first[..n_species]
        .iter()
        .chain(&last[..n_species])
        .fold(0.0f64, |a, b| a.max(b.abs()));
    let mut changed = 0;
    for i in 0..n_species {
        let total = last[i] - first[i];
        if total.abs() <= 1e-3 * scale {
            continue;
        }
        changed += 1;
        if (tr.states[k][i] - first[i]) / total < 0.9 {
            return false;
        }
    }
    changed > 0
}

/// The kinetics of a study to `until` s, integrated once: the run asks for the output times of
/// the linear grid and of the logarithmic grid together (the BDF integrator steps independently
/// of the output times and interpolates, so each grid's states are those a run asking for that
/// grid alone gives; Dop853 steps to every output time, so there they agree within the
/// tolerance), decides on the linear grid whether the run is [`front_loaded`], and keeps
/// the logarithmic grid if it is (true returned) and the linear one if not.
/// `integrate` runs the kinetics of `model` with the options it is given (the study passes
/// [`kinetics::simulate`] and counts the calls).
pub fn kinetics_once(
    model: &Model,
    until: f64,
    integrate: &mut dyn FnMut(&kinetics::Options) -> Result<Trajectory>,
) -> Result<(Trajectory, bool)> {
    let linear = kinetics::Options::until(until);
    let log = kinetics::Options {
        log_time: true,
        ..linear.clone()
    };
    let (lin_t, log_t) = (kinetics::output_times(&linear, 0.0), kinetics::output_times(&log, 0.0));
    let both = kinetics::Options {
        times: lin_t.iter().chain(&log_t).copied().collect(),
        ..linear
    };
    let all = integrate(&both)?;
    let on_linear = all.on_grid(&lin_t);
    if front_loaded(&on_linear, model.n_species()) {
        Ok((all.on_grid(&log_t), true))
    } else {
        Ok((on_linear, false))
    }
}

/// The chain as `ledger` builds it by default: stirred-cell light at the initial
/// concentrations, from the initial mixture.
fn chain_study(model: &Model, net: &Network) -> Result<ChainStudy> {
    let run = chain::run(model, net, &chain::ChainOptions::default())?;
    let summary = chain_report::summary(
        &net.about.name,
        &run.chain,
        &run.analysis,
        &run.start_note,
        &run.light,
        &model.products,
        run.sensitivities.clone(),
    )
    .in_energy_unit(net.energy_unit)
    .with_check(chain::agreement::check(model, net, &run, None)?);
    Ok(ChainStudy {
        analysis: run.analysis,
        summary,
    })
}

/// The photostationary state of a network where no molecule ends (None for any other).
/// A closed switch's photostationary state, three ways: one molecule under the light shared
/// as at the start (`ledger --at "0 s"`), one molecule under the light the mixture lets
/// through at the end of the run (`ledger --at`), and the mixture itself at the end of the run
/// (the kinetics). When the run has reached the photostationary state the last two agree: the
/// mixture's composition is then the time share of one molecule under the light that mixture
/// shares out. The first differs where the forms filter the lamps differently.
#[derive(Debug, Clone)]
pub struct ClosedStudy {
    /// One molecule, light shared at the initial concentrations.
    pub at_start: ClosedSummary,
    /// One molecule, light shared at the concentrations at the end of the run (None, with
    /// the reason, when that chain could not be built).
    pub at_end: std::result::Result<ClosedSummary, String>,
    /// Each form of the switch (the chain's species states) with its share of the forms'
    /// total in the mixture at the end of the run.
    pub mixture: Vec<(String, f64)>,
    /// The end of the run, s.
    pub until: f64,
}

/// The chain's photostationary state at the start, or None when a molecule can end.
fn closed_study(model: &Model, net: &Network) -> Result<Option<ClosedSummary>> {
    let chain::Followed::Closed(c) = chain::follow(model, net, &chain::ChainOptions::default())? else {
        return Ok(None);
    };
    Ok(Some(closed_run_summary(net, &c)))
}

/// [`ClosedStudy`] from the chain at the start and the kinetics run `tr` to `until` (s).
fn closed_with_kinetics(
    model: &Model,
    net: &Network,
    at_start: ClosedSummary,
    tr: &Trajectory,
    until: f64,
) -> ClosedStudy {
    let ns = model.n_species();
    let last = &tr.last()[..ns];
    let opts = chain::ChainOptions {
        settings: chain::build::Settings {
            concentrations: Some(last.to_vec()),
            ..Default::default()
        },
        sensitivities: false,
        ..Default::default()
    };
    let at_end = match chain::follow(model, net, &opts) {
        Ok(chain::Followed::Closed(c)) => Ok(closed_run_summary(net, &c)),
        Ok(chain::Followed::Ends(_)) => Err("a molecule can end under the light at the end of the run".into()),
        Err(e) => Err(e.to_string()),
    };
    let forms: Vec<usize> = at_start
        .composition
        .iter()
        .filter(|f| f.kind == "species")
        .filter_map(|f| model.species_index(&f.state))
        .collect();
    let total: f64 = forms.iter().map(|&i| last[i]).sum();
    let mixture = forms
        .iter()
        .map(|&i| {
            (
                model.species[i].clone(),
                if total > 0.0 { last[i] / total } else { f64::NAN },
            )
        })
        .collect();
    ClosedStudy {
        at_start,
        at_end,
        mixture,
        until,
    }
}

/// Run the study of `net` (compiled as `model`).
pub fn run(net: &Network, model: &Model, opts: &StudyOptions) -> Result<Study> {
    let chain = chain_study(model, net).map_err(|e| match e {
        // No end state: the reason alone, without the diagnostic's "error:" and file.
        crate::Error::Invalid(ds) => ds.iter().map(|d| d.message.as_str()).collect::<Vec<_>>().join("; "),
        e => e.to_string(),
    });
    let closed = match &chain {
        Ok(_) => None,
        Err(_) => closed_study(model, net)?,
    };
    let (until, until_reason, horizon) = match opts.until {
        Some(t) => (t, "as asked (--until)".to_string(), None),
        None => {
            let target = opts
                .target
                .as_deref()
                .map(|t| plan::target::parse(t, model))
                .transpose()?;
            let h = plan::horizon::automatic(model, target.as_ref())?;
            let until = plan::horizon::round_up(h.time);
            let reason = match h.ended {
                plan::horizon::Ended::NothingConsumed => {
                    format!("{}, so one hour by default; set it with --until", h.reason())
                }
                _ => format!(
                    "from the kinetics: {}; rounded up to {}; set it with --until",
                    h.reason(),
                    crate::units::format_time(until)
                ),
            };
            (until, reason, Some(h))
        }
    };
    let mut integrations = 0;
    let (kinetics, log_time) = kinetics_once(model, until, &mut |o| {
        integrations += 1;
        kinetics::simulate(model, o, &mut |_| {})
    })?;
    let closed = closed.map(|c| closed_with_kinetics(model, net, c, &kinetics, until));
    let barrier = match opts.barrier_window {
        Some(window) => Some(BarrierStudy {
            window,
            probability: BARRIER_PROBABILITY,
            rows: barrier::network_verdicts(net, window, BARRIER_PROBABILITY, Some(&kinetics))?,
            hot: barrier::hot_verdicts(net),
        }),
        None => None,
    };
    let plan = opts.target.as_deref().map(|t| plan_study(model, t)).transpose()?;
    let levels = (!net.levels.is_empty()).then(|| {
        let lo = crate::levels::LevelOptions {
            target: opts.target.clone(),
            until: Some(until),
        };
        crate::levels::compare(net, &lo)
            .map(|mut c| {
                c.until_reason = format!("the report's irradiation time: {until_reason}");
                c
            })
            .map_err(|e| e.to_string())
    });
    Ok(Study {
        until,
        until_reason,
        horizon,
        kinetics,
        log_time,
        integrations,
        chain,
        closed,
        barrier,
        plan,
        fit: None,
        levels,
    })
}

#[cfg(test)]
mod tests {
    use super::kinetics_once;
    use crate::kinetics::{self, Trajectory};
    use crate::model::Model;
    use crate::network::{self, Overrides};

    /// The bundled photoswitch (invented): under its LEDs it reaches its photostationary state
    /// within a minute.
    fn photoswitch() -> Model {
        let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
            .expect("bundled network");
        let loaded = crate::file::parse_text(std::path::Path::new("photoswitch.toml"), text).expect("parses");
        Model::compile(&network::build(&loaded, &Overrides::none()).expect("valid"))
    }

    /// The largest difference between two runs on the same grid, over the largest value.
    fn largest_difference(a: &Trajectory, b: &Trajectory) -> f64 {
        assert_eq!(a.times, b.times);
        let scale = b.states.iter().flatten().fold(0.0f64, |m, v| m.max(v.abs()));
        let d = a
            .states
            .iter()
            .flatten()
            .zip(b.states.iter().flatten())
            .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
        d / scale
    }

    /// `kinetics_once` with a count of its integrations.
    fn once(model: &Model, until: f64) -> (Trajectory, bool) {
        let mut n = 0;
        let r = kinetics_once(model, until, &mut |o| {
            n += 1;
            kinetics::simulate(model, o, &mut |_| {})
        })
        .expect("runs");
        assert_eq!(n, 1, "integrated once");
        r
    }

    #[test]
    fn one_integration_gives_the_grid_a_separate_run_gives() {
        let model = photoswitch();
        // An hour: the photostationary state comes within the first tenth, so the log grid.
        let (tr, log) = once(&model, 3600.0);
        assert!(log, "the photoswitch settles early in an hour");
        let mut o = kinetics::Options::until(3600.0);
        o.log_time = true;
        let alone = kinetics::simulate(&model, &o, &mut |_| {}).expect("runs");
        let d = largest_difference(&tr, &alone);
        // BDF interpolates between its own steps, so its grids are the same to the last digit;
        // Dop853 steps to every output time, so more output times move its numbers within the
        // tolerance asked for (rtol 1e-6 of `Options::until`).
        assert!(d < 1e-6, "log grid: {d} relative ({:?})", alone.method);
        // Ten seconds: still converting at the end, so the linear grid.
        let (tr, log) = once(&model, 10.0);
        assert!(!log, "ten seconds are not front-loaded");
        let alone = kinetics::simulate(&model, &kinetics::Options::until(10.0), &mut |_| {}).expect("runs");
        let d = largest_difference(&tr, &alone);
        assert!(d < 1e-6, "linear grid: {d} relative ({:?})", alone.method);
    }

    #[test]
    fn a_study_integrates_its_kinetics_once() {
        let model = photoswitch();
        let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
            .expect("bundled network");
        let loaded = crate::file::parse_text(std::path::Path::new("photoswitch.toml"), text).expect("parses");
        let net = network::build(&loaded, &Overrides::none()).expect("valid");
        let opts = super::StudyOptions {
            until: Some(3600.0),
            ..Default::default()
        };
        let s = super::run(&net, &model, &opts).expect("study");
        assert!(s.log_time);
        assert_eq!(s.integrations, 1);
        let mut o = kinetics::Options::until(3600.0);
        o.log_time = true;
        assert_eq!(s.kinetics.times, kinetics::output_times(&o, 0.0), "the log grid alone");
    }
}
