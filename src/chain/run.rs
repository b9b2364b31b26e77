//! One molecule followed from start to end: build the chain from a compiled model, pick the
//! start, analyse (yields, visits, photon moments and distribution) and, when asked, the
//! sensitivities. The one sequence `ledger`, `study` and `uncertainty` all run.

use super::build::{self, Settings, Values};
use super::closed::{self, Stationary};
use super::sensitivity::{self, Sensitivity};
use super::{Analysis, Chain, Options};
use crate::error::{Diagnostic, Error, Result};
use crate::kinetics;
use crate::model::Model;
use crate::network::Network;

/// How to run the chain.
#[derive(Debug, Clone, PartialEq)]
pub struct ChainOptions {
    /// Light model and concentrations the chain is built at.
    pub settings: Settings,
    /// Take the concentrations from a kinetics run of this length, s, instead (when
    /// `settings.concentrations` is None).
    pub at: Option<f64>,
    /// Follow one molecule of this species (None: the initial mixture).
    pub from: Option<String>,
    /// What the analysis computes (the photon-count distribution or not).
    pub analysis: Options,
    /// Compute the sensitivities of the yields and photon costs (exact, one factorisation).
    pub sensitivities: bool,
}

impl Default for ChainOptions {
    /// Stirred-cell light at the initial concentrations, from the initial mixture, the full
    /// analysis and the sensitivities: what `ledger` does with no options.
    fn default() -> Self {
        ChainOptions {
            settings: Settings::default(),
            at: None,
            from: None,
            analysis: Options::default(),
            sensitivities: true,
        }
    }
}

/// What a chain run found.
#[derive(Debug, Clone)]
pub struct ChainRun {
    /// The chain as built.
    pub chain: Chain,
    /// The start distribution over the chain's states.
    pub start: Vec<f64>,
    /// Where the molecule starts, in words.
    pub start_note: String,
    /// Settings the chain was built with (concentrations filled in when `at` was given).
    pub settings: Settings,
    /// The light the chain assumes, in words (for every place that prints its times).
    pub light: String,
    /// The analysis.
    pub analysis: Analysis,
    /// Sensitivities of the yields (empty when not asked for).
    pub sensitivities: Vec<Sensitivity>,
}

/// A molecule that never ends: the closed chain and its stationary analysis.
#[derive(Debug, Clone)]
pub struct ClosedRun {
    /// The chain as built.
    pub chain: Chain,
    /// The start distribution over the chain's states.
    pub start: Vec<f64>,
    /// Where the molecule starts, in words.
    pub start_note: String,
    /// Settings the chain was built with.
    pub settings: Settings,
    /// The light the chain assumes, in words.
    pub light: String,
    /// The stationary analysis.
    pub stationary: Stationary,
}

/// What following one molecule found: a chain that ends, or one that never does.
#[derive(Debug, Clone)]
pub enum Followed {
    /// Every molecule ends: yields, photon costs, sensitivities.
    Ends(Box<ChainRun>),
    /// No molecule from the start can end (a closed photoswitch): the stationary analysis.
    Closed(Box<ClosedRun>),
}

/// Build and analyse the chain of `net` (compiled as `model`) as `opts` say; a network where a
/// molecule that can end may also be stuck (or stuck states exist apart from the start's) is
/// refused as [`run`] refuses it.
pub fn follow(model: &Model, net: &Network, opts: &ChainOptions) -> Result<Followed> {
    let mut settings = opts.settings.clone();
    if let (Some(t), None) = (opts.at.filter(|&t| t > 0.0), &settings.concentrations) {
        let tr = kinetics::simulate(model, &kinetics::Options::until(t), &mut |_| {})?;
        settings.concentrations = Some(tr.last()[..model.n_species()].to_vec());
    }
    let light = light_words(&settings, opts.at);
    let values = Values::of(model, net);
    let chain = build::build(model, net, &settings, &values)?;
    let stuck = chain.stuck();
    if !stuck.is_empty() {
        let (start, start_note) = build::start(model, &chain, opts.from.as_deref())?;
        if closed::closed_classes(&chain, &start).is_some() {
            let stationary = closed::analyse(&chain, &start)?;
            return Ok(Followed::Closed(Box::new(ClosedRun {
                chain,
                start,
                start_note,
                settings,
                light,
                stationary,
            })));
        }
        return Err(no_end(net, &stuck));
    }
    let (start, start_note) = build::start(model, &chain, opts.from.as_deref())?;
    let analysis = super::analyse(&chain, &start, &opts.analysis)?;
    let sensitivities = if opts.sensitivities {
        sensitivity::sensitivities(model, net, &settings, &start)?
    } else {
        Vec::new()
    };
    Ok(Followed::Ends(Box::new(ChainRun {
        chain,
        start,
        start_note,
        settings,
        light,
        analysis,
        sensitivities,
    })))
}

/// Build and analyse the chain of `net` (compiled as `model`) as `opts` say, for a network where
/// every molecule ends; one that never ends is refused (use [`follow`]).
pub fn run(model: &Model, net: &Network, opts: &ChainOptions) -> Result<ChainRun> {
    match follow(model, net, opts)? {
        Followed::Ends(r) => Ok(*r),
        Followed::Closed(c) => {
            let stuck: Vec<&str> = c
                .stationary
                .class
                .iter()
                .map(|&i| c.chain.states[i].name.as_str())
                .collect();
            Err(no_end(net, &stuck))
        }
    }
}

/// The network cannot answer "where does one molecule end?": from the `stuck` states no molecule
/// ever reaches an end (a closed photoswitch). Invalid input for the chain, named in the file.
fn no_end(net: &Network, stuck: &[&str]) -> Error {
    let mut d = Diagnostic::error(
        "",
        format!(
            "no end state: a molecule in {} never reaches a product or a species with no way out, so \
             \"where does one molecule end?\" has no answer (`ledger` answers a closed switch with its \
             photostationary state and photons per switching event)",
            stuck.join(", ")
        ),
    )
    .with_help(
        "name a product (`product = true` on a [[species]]) or give one of them a way out; \
         `simulate` follows the whole mixture, which needs no end; `ledger` answers a network where \
         no molecule ever ends (a closed photoswitch) with its photostationary state",
    );
    if let Some(f) = &net.source {
        d = d.in_file(f);
    }
    Error::invalid(d)
}

/// The end of [`settled_light_words`], by which a closed chain's text knows its light was shared
/// at the settled mixture.
pub const SAMPLE_STATE: &str = "this sample's photostationary state";

/// The light of a closed chain shared at the mixture the kinetics settle to by `t` s.
pub fn settled_light_words(t: f64) -> String {
    format!(
        "stirred cell, light shared at the mixture the kinetics settle to (every concentration within 1 % of \
         where it ends by {}): {SAMPLE_STATE}",
        crate::units::format_time(t)
    )
}

/// The light the chain assumes, in words: the stirred cell's share at which concentrations
/// (`at`: taken from the kinetics after that many s), or the optically thin limit.
pub fn light_words(settings: &Settings, at: Option<f64>) -> String {
    match (settings.light, at, &settings.concentrations) {
        (build::Light::Thin, ..) => {
            "optically thin limit over the irradiated area (no inner filter, no light shared)".into()
        }
        (build::Light::Stirred, Some(t), _) if t > 0.0 => format!(
            "stirred cell, light shared at the concentrations the kinetics reach after {}",
            crate::units::format_time(t)
        ),
        (build::Light::Stirred, _, Some(_)) => "stirred cell, light shared at the given concentrations".into(),
        (build::Light::Stirred, _, None) => "stirred cell, light shared at the initial concentrations".into(),
    }
}
