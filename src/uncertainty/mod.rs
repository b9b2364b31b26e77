//! Uncertainty propagation: draw the uncertain values of a network (distributions declared in
//! `[[uncertain]]` entries, or a fit's covariance), rebuild the network for each sample with
//! the drawn values as `--set` overrides, run the chain analysis and/or the kinetics, and
//! summarise the outputs (quantiles, mean and sd, which parameter drives each output).
//!
//! Determinism: sample i's values come from its own random stream selected by (seed, i)
//! ([`sampling::Space::draw`]); samples are evaluated in parallel (rayon) and collected in
//! index order, so the result does not depend on the number of threads, and a run cut into
//! index ranges ([`shard_range`]) and joined again ([`merge`]) is the single run, bit for bit.
//!
//! The file is read once by the caller; each sample rebuilds the network from the text already
//! parsed ([`crate::network::build`] with overrides), so nothing here touches the disk.
//! Units: parameter values in their stated units (internal units for `[[uncertain]]` entries,
//! see [`spec::Parameter::unit`]; a key's unit comes from `network::overrides::parameter`);
//! outputs as named in [`Output`]. Descriptions (`Column::about`) are written in display units.

pub mod counts;
pub mod evidence;
pub mod fitcov;
pub mod sampling;
/// The typed uncertain values the engine draws (read from `[[uncertain]]` entries by
/// [`crate::network::uncertain::read`]).
pub mod spec {
    pub use crate::network::uncertain::{Distribution, Parameter};
}
pub mod stats;

use crate::chain;
use crate::error::{Diagnostic, Error, Result};
use crate::kinetics::{self, Stop};
use crate::model::Model;
use crate::network::Network;
use crate::network::params::{self, Key};
use crate::units;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::ops::Range;

pub use sampling::Space;

/// The quantiles reported, as fractions.
pub const QUANTILES: [f64; 5] = [0.025, 0.25, 0.5, 0.75, 0.975];

/// The absolute tolerance of each sample's kinetics, mol/L (`kinetics::Options::until`'s).
pub const KINETICS_ATOL: f64 = 1e-12;

/// The format word of a samples record.
pub const FORMAT: &str = "photoledger uncertainty samples 1";

/// What each sample computes.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Settings {
    /// Run the chain analysis (one molecule from the initial mixture, light shared at the
    /// initial concentrations, as `ledger` does by default).
    pub chain: bool,
    /// Run the kinetics to this time, s (final concentrations).
    pub until: Option<f64>,
    /// Time to reach a target, written as for `plan` ("product > 90 %", "A < 10 µM"; read
    /// on each sample's model, so a percentage follows that sample's concentrations). Needs
    /// `until`, the longest time waited.
    pub target: Option<String>,
}

/// One output column.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Column {
    /// Name, e.g. `quantum_yield[product]` or a parameter key.
    pub name: String,
    /// Unit ("" for dimensionless).
    pub unit: String,
    /// What it is.
    pub about: String,
    /// Round-off limit in `unit`: values within it of zero are not distinguishable from zero by
    /// the computation (the kinetics' absolute tolerance for concentrations). Text and plots show
    /// them as 0; CSV and JSON keep the raw numbers.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zero_within: Option<f64>,
    /// Round-off limit as a fraction of the output's largest magnitude (chain outputs:
    /// `units::display::CHAIN_ROUNDOFF`), used like `zero_within`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub zero_within_relative: Option<f64>,
    /// Right-censoring horizon in `unit`: a sample that ran without error but has no value did
    /// not reach it within this time (time to a target): counted as censored, never dropped.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub censored_above: Option<f64>,
}

/// What one output reads from a sample's results.
#[derive(Debug, Clone, PartialEq)]
enum Output {
    /// Chain: probability of ending as this species.
    Yield(String),
    /// Chain: molecules of it per photon absorbed.
    QuantumYield(String),
    /// Chain: photons absorbed per molecule of it made (1 / quantum yield).
    PhotonsPer(String),
    /// Kinetics: final concentration of species i.
    Final(usize),
    /// Kinetics: time to the target.
    TimeToTarget,
}

/// One sample: its index, drawn values and outputs (None where an output is undefined, e.g. a
/// target not reached), or why it could not be evaluated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Sample {
    /// Index in 0..total.
    pub index: usize,
    /// Drawn values, in parameter order and units.
    pub values: Vec<f64>,
    /// Outputs, in output order.
    pub outputs: Vec<Option<f64>>,
    /// Why the sample failed (network invalid at these values, an engine error).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

/// Everything that identifies a run, written with its samples.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Header {
    /// [`FORMAT`].
    pub format: String,
    /// Network name.
    pub network: String,
    /// FNV-1a hash of the file text, overrides, parameters and settings (hex).
    pub fingerprint: String,
    /// Seed.
    pub seed: u64,
    /// Samples in the whole run.
    pub total: usize,
    /// First index held.
    pub first: usize,
    /// One past the last index held.
    pub end: usize,
    /// Parameters (columns of `values`).
    pub parameters: Vec<Column>,
    /// Outputs (columns of `outputs`).
    pub outputs: Vec<Column>,
    /// Notes on what was and was not computed.
    pub notes: Vec<String>,
}

/// Samples with their header: what a shard writes and what [`merge`] joins.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Record {
    /// The run.
    pub header: Header,
    /// Samples `first..end` in index order.
    pub samples: Vec<Sample>,
}

/// A network ready to be sampled.
pub struct Problem {
    /// The network as given (with the command line's values), built and validated once.
    base: Network,
    /// The typed address of each uncertain value, in parameter order.
    keys: Vec<Key>,
    /// Each value's map to the internal unit: internal = offset + per × drawn.
    to_internal: Vec<(f64, f64)>,
    /// Hash of the network's numbers (for merging shards of the same run).
    network_hash: u64,
    space: Space,
    settings: Settings,
    outputs: Vec<Output>,
    columns: Vec<Column>,
    notes: Vec<String>,
    network_name: String,
    /// The unit of each parameter's drawn values (its own, else the key's internal one).
    param_units: Vec<String>,
}

fn fnv1a(bytes: &[u8], mut h: u64) -> u64 {
    for b in bytes {
        h ^= *b as u64;
        h = h.wrapping_mul(0x100000001b3);
    }
    h
}

impl Problem {
    /// Check every parameter's key and unit against `base` (the network as given, with the
    /// command line's values; the drawn values are written over it) and work out the outputs
    /// from the network at the nominal values.
    ///
    /// A key the network does not have, or a value of the wrong kind, is an error at the
    /// `[[uncertain]]` entry (or a usage error for a fit's key).
    pub fn new(base: &Network, space: Space, settings: Settings) -> Result<Problem> {
        if space.is_empty() {
            return Err(Error::Usage(
                "nothing is uncertain: add [[uncertain]] entries, origins with a spread, or trajectory counts to the network file (README, Uncertainty; Where a number comes from), or give --from-fit"
                    .into(),
            ));
        }
        if !settings.chain && settings.until.is_none() {
            return Err(Error::Usage(
                "nothing to compute: give --until for the kinetics, or keep the chain analysis".into(),
            ));
        }
        if settings.target.is_some() && settings.until.is_none() {
            return Err(Error::Usage("--target needs --until (the longest time to wait)".into()));
        }
        let mut p = Problem {
            base: base.clone(),
            keys: Vec::new(),
            to_internal: Vec::new(),
            network_hash: crate::network::fingerprint(base),
            space,
            settings,
            outputs: Vec::new(),
            columns: Vec::new(),
            notes: Vec::new(),
            network_name: String::new(),
            param_units: Vec::new(),
        };
        p.network_name = base.about.name.clone();
        let params: Vec<spec::Parameter> = p.space.parameters().into_iter().cloned().collect();
        let mut diags = Vec::new();
        for q in &params {
            match typed(base, q) {
                Ok((key, unit, map)) => {
                    p.keys.push(key);
                    p.param_units.push(unit);
                    p.to_internal.push(map);
                }
                Err(msg) => {
                    let mut d = Diagnostic::error(format!("uncertain \"{}\"", q.key), msg).with_help(format!(
                        "the key is a --set key ({}) and the value must have that field's unit",
                        crate::network::overrides::ACCEPTED
                    ));
                    match (q.line, &base.source) {
                        (Some(l), Some(file)) => {
                            d.file = Some(file.clone());
                            d.line_col = Some((l, 1));
                        }
                        (Some(_), None) => {}
                        (None, _) => d.field = format!("--from-fit \"{}\"", q.key),
                    }
                    diags.push(d);
                }
            }
        }
        if !diags.is_empty() {
            return Err(Error::Invalid(diags));
        }
        let nominal: Vec<f64> = params.iter().map(|q| q.distribution.nominal()).collect();
        let net = p.network(&nominal)?;
        let model = Model::compile(&net);
        if p.settings.chain {
            match chain_run(&model, &net) {
                Ok((ch, an)) => {
                    // Ends no molecule reaches at the nominal values (a solvent, a by-product of a
                    // thermal step) would only add columns of zeros.
                    for (k, &s) in an.absorbing.iter().enumerate() {
                        if let chain::StateKind::Species(_) = ch.states[s].kind
                            && an.yields[k] > 1e-12
                        {
                            let name = ch.states[s].name.clone();
                            p.outputs.push(Output::Yield(name.clone()));
                            p.outputs.push(Output::QuantumYield(name.clone()));
                            p.outputs.push(Output::PhotonsPer(name));
                        }
                    }
                }
                Err(e) => {
                    p.notes
                        .push(format!("no chain analysis: at the nominal values it says: {e}"));
                    p.settings.chain = false;
                }
            }
        }
        if let Some(t) = &p.settings.target {
            crate::plan::target::read(t, &model)?;
        }
        if p.settings.until.is_some() {
            p.outputs.extend((0..model.n_species()).map(Output::Final));
            if p.settings.target.is_some() {
                p.outputs.push(Output::TimeToTarget);
            }
        }
        if p.outputs.is_empty() {
            return Err(Error::Usage(
                "no outputs: the chain analysis is not possible here (see above) and no --until was given".into(),
            ));
        }
        p.columns = p.outputs.iter().map(|o| column(o, &model, &p.settings)).collect();
        Ok(p)
    }

    /// The network at drawn `values` (in parameter order, each in its parameter's unit),
    /// written over the base as typed values.
    pub fn network(&self, values: &[f64]) -> Result<Network> {
        let typed: Vec<(Key, f64)> = self
            .keys
            .iter()
            .zip(&self.to_internal)
            .zip(values)
            .map(|((&k, &(offset, per)), &v)| (k, offset + per * v))
            .collect();
        written(&self.base, &typed)
    }

    /// The problem with `notes` added to the notes of its record (what was drawn and why).
    pub fn with_notes(mut self, notes: Vec<String>) -> Problem {
        self.notes.extend(notes);
        self
    }

    /// The output columns.
    pub fn outputs(&self) -> &[Column] {
        &self.columns
    }

    /// Outputs at drawn `values`.
    pub fn evaluate(&self, values: &[f64]) -> Result<Vec<Option<f64>>> {
        let net = self.network(values)?;
        let model = Model::compile(&net);
        let chain = if self.settings.chain {
            Some(chain_run(&model, &net)?)
        } else {
            None
        };
        let finals = match self.settings.until {
            Some(t) => {
                let mut o = kinetics::Options::until(t);
                o.outputs = 2;
                o.atol = KINETICS_ATOL;
                let tr = kinetics::simulate(&model, &o, &mut |_| {})?;
                Some(tr.last()[..model.n_species()].to_vec())
            }
            None => None,
        };
        let time = match (&self.settings.target, self.settings.until) {
            (Some(text), Some(t)) => {
                let tg = crate::plan::target::read(text, &model)?;
                if tg.met_by(model.initial[tg.species]) {
                    Some(0.0)
                } else {
                    let mut o = kinetics::Options::until(t);
                    o.outputs = 2;
                    o.atol = KINETICS_ATOL;
                    o.event = Some(tg.event());
                    match kinetics::simulate(&model, &o, &mut |_| {})?.stop {
                        Stop::Event(te) => Some(te),
                        Stop::EndTime | Stop::Enough(_) => None,
                    }
                }
            }
            _ => None,
        };
        let find = |name: &str| -> Option<usize> {
            let (ch, an) = chain.as_ref()?;
            an.absorbing.iter().position(|&s| ch.states[s].name == name)
        };
        Ok(self
            .outputs
            .iter()
            .map(|o| match o {
                Output::Yield(n) => find(n).map(|k| chain.as_ref().map_or(0.0, |c| c.1.yields[k])),
                Output::QuantumYield(n) => find(n).and_then(|k| chain.as_ref()?.1.quantum_yield(k)),
                Output::PhotonsPer(n) => find(n).and_then(|k| {
                    let a = &chain.as_ref()?.1;
                    (a.yields[k] > 0.0 && a.photons_total > 0.0).then(|| a.photons_total / a.yields[k])
                }),
                Output::Final(i) => finals.as_ref().map(|f| f[*i]),
                Output::TimeToTarget => time,
            })
            .collect())
    }

    /// Draw and evaluate samples `range` of a run with `seed`, in parallel; `progress` is
    /// called once per sample finished (from any thread).
    pub fn run(&self, seed: u64, range: Range<usize>, progress: &(dyn Fn() + Sync)) -> Vec<Sample> {
        range
            .into_par_iter()
            .map(|i| {
                let values = self.space.draw(seed, i as u64);
                let s = match self.evaluate(&values) {
                    Ok(outputs) => Sample {
                        index: i,
                        values,
                        outputs,
                        error: None,
                    },
                    Err(e) => Sample {
                        index: i,
                        values,
                        outputs: vec![None; self.outputs.len()],
                        error: Some(one_line(&e)),
                    },
                };
                progress();
                s
            })
            .collect()
    }

    /// The header of a run of `total` samples holding `range`.
    pub fn header(&self, seed: u64, total: usize, range: Range<usize>) -> Header {
        let h = fnv1a(
            format!("{:?}{:?}", self.space, self.settings).as_bytes(),
            self.network_hash,
        );
        Header {
            format: FORMAT.into(),
            network: self.network_name.clone(),
            fingerprint: format!("{h:016x}"),
            seed,
            total,
            first: range.start,
            end: range.end,
            parameters: self
                .space
                .parameters()
                .iter()
                .enumerate()
                .map(|(i, p)| {
                    let unit = self.param_units.get(i).cloned().unwrap_or_else(|| p.unit.clone());
                    // The description in the unit a reader expects (the file's energy family,
                    // M⁻¹ s⁻¹, mM); the values themselves stay in `unit`.
                    let (per, shown) =
                        units::display::readable_unit_in(&unit, p.distribution.nominal().abs(), self.base.energy_unit);
                    let about = p.distribution.describe_in(per, &shown);
                    Column {
                        name: p.key.clone(),
                        unit,
                        about: if p.written.is_empty() {
                            about
                        } else {
                            format!("{about} (file: {})", p.written)
                        },
                        zero_within: None,
                        zero_within_relative: None,
                        censored_above: None,
                    }
                })
                .collect(),
            outputs: self.columns.clone(),
            notes: self.notes.clone(),
        }
    }

    /// Run samples `range` of `total` and return the record.
    pub fn record(&self, seed: u64, total: usize, range: Range<usize>, progress: &(dyn Fn() + Sync)) -> Record {
        Record {
            header: self.header(seed, total, range.clone()),
            samples: self.run(seed, range, progress),
        }
    }
}

/// The typed key of an uncertain value, the unit its values are drawn in, and the map from that
/// unit to the internal one (internal = offset + per × drawn), checked at the nominal value.
fn typed(base: &Network, q: &spec::Parameter) -> std::result::Result<(Key, String, (f64, f64)), String> {
    let key = Key::parse(base, &q.key)?;
    let p = params::get(base, key);
    let (unit, map) = if q.unit.is_empty() || q.unit == p.unit {
        (p.unit.to_string(), (0.0, 1.0))
    } else {
        // A unit of its own (a fit's JSON): read 0 and 1 of it once (°C has an offset).
        let zero = p.parse_value(&format!("0 {}", q.unit))?;
        let one = p.parse_value(&format!("1 {}", q.unit))?;
        (q.unit.clone(), (zero, one - zero))
    };
    let nominal = q.distribution.nominal();
    let mut trial = base.clone();
    params::set(&mut trial, key, map.0 + map.1 * nominal).map_err(|m| {
        format!(
            "the network does not take {} at this key: {m}",
            q.override_text(nominal)
        )
    })?;
    Ok((key, unit, map))
}

/// `base` with `values` written as typed values, in [`params::share_order`] (so channels of one
/// transient drawn together from trajectory counts keep their sum rule at every write).
pub fn written(base: &Network, values: &[(Key, f64)]) -> Result<Network> {
    let ordered = params::share_order(base, values);
    let mut net = base.clone();
    params::set_all(&mut net, &ordered).map_err(|m| Error::Usage(format!("a drawn value: {m}")))?;
    Ok(net)
}

fn one_line(e: &Error) -> String {
    e.to_string().lines().next().unwrap_or("").to_string()
}

/// The chain as `ledger` runs it by default (stirred-cell light at the initial concentrations,
/// from the initial mixture), without the photon-count distribution or sensitivities.
fn chain_run(model: &Model, net: &Network) -> Result<(chain::Chain, chain::Analysis)> {
    let opts = chain::ChainOptions {
        analysis: chain::Options {
            distribution: false,
            ..chain::Options::default()
        },
        sensitivities: false,
        ..chain::ChainOptions::default()
    };
    let run = chain::run(model, net, &opts)?;
    Ok((run.chain, run.analysis))
}

fn column(o: &Output, model: &Model, s: &Settings) -> Column {
    let c = |name: String, unit: &str, about: String| Column {
        name,
        unit: unit.into(),
        about,
        zero_within: None,
        zero_within_relative: Some(units::display::CHAIN_ROUNDOFF),
        censored_above: None,
    };
    let horizon = units::format_time(s.until.unwrap_or(0.0));
    match o {
        Output::Yield(n) => c(
            format!("yield[{n}]"),
            "",
            format!("chain: probability that a molecule followed ends as {n}"),
        ),
        Output::QuantumYield(n) => c(
            format!("quantum_yield[{n}]"),
            "",
            format!("chain: molecules of {n} per photon absorbed"),
        ),
        // Photons per product are at least one per molecule made, never near zero: a sample's
        // value is not round-off of another sample's, however many orders of magnitude apart
        // (a barrier's spread of several kcal/mol moves them by many).
        Output::PhotonsPer(n) => Column {
            zero_within_relative: None,
            ..c(
                format!("photons_per[{n}]"),
                "",
                format!("chain: photons absorbed per molecule of {n} made (1 / quantum yield)"),
            )
        },
        Output::Final(i) => Column {
            zero_within: Some(KINETICS_ATOL),
            zero_within_relative: None,
            ..c(
                format!("final[{}]", model.species[*i]),
                "mol/L",
                format!(
                    "kinetics: concentration of {} at {horizon} (round-off within the absolute tolerance {} mol/L of zero)",
                    model.species[*i],
                    units::sig(KINETICS_ATOL, 3)
                ),
            )
        },
        Output::TimeToTarget => Column {
            zero_within: None,
            zero_within_relative: None,
            censored_above: s.until,
            ..c(
                "time_to_target".into(),
                "s",
                format!(
                    "kinetics: time until the target is reached; a sample without a value did not reach it within \
                     {horizon} (right-censored at {horizon})"
                ),
            )
        },
    }
}

/// Samples `K/N` of `total`: indices ⌊(K−1)·total/N⌋ .. ⌊K·total/N⌋ (K from 1).
pub fn shard_range(total: usize, k: usize, n: usize) -> Result<Range<usize>> {
    if n == 0 || k == 0 || k > n {
        return Err(Error::Usage(format!(
            "--shard {k}/{n}: write K/N with 1 ≤ K ≤ N, e.g. 3/10"
        )));
    }
    let at = |j: usize| ((j as u128 * total as u128) / n as u128) as usize;
    Ok(at(k - 1)..at(k))
}

/// Join records of one run (shards) into the record of the whole run. They must share
/// everything but their index ranges, and the ranges must cover 0..total once.
pub fn merge(mut parts: Vec<Record>) -> Result<Record> {
    let Some(first) = parts.first() else {
        return Err(Error::Usage("merge: no shard files given".into()));
    };
    let same = |h: &Header| Header {
        first: 0,
        end: 0,
        ..h.clone()
    };
    let want = same(&first.header);
    for (i, p) in parts.iter().enumerate() {
        if p.header.format != FORMAT {
            return Err(Error::Usage(format!(
                "merge: part {} is not a samples record ({FORMAT})",
                i + 1
            )));
        }
        if same(&p.header) != want {
            return Err(Error::Usage(format!(
                "merge: part {} comes from a different run (network, seed, sample count, parameters or settings differ)",
                i + 1
            )));
        }
        if p.samples.len() != p.header.end - p.header.first
            || p.samples.iter().enumerate().any(|(j, s)| s.index != p.header.first + j)
        {
            return Err(Error::Usage(format!(
                "merge: part {} does not hold the samples its header says",
                i + 1
            )));
        }
    }
    parts.sort_by_key(|p| p.header.first);
    let mut at = 0;
    for p in &parts {
        if p.header.first != at {
            return Err(Error::Usage(if p.header.first > at {
                format!("merge: samples {at}..{} are missing", p.header.first)
            } else {
                format!("merge: samples from {} are given twice", p.header.first)
            }));
        }
        at = p.header.end;
    }
    if at != want.total {
        return Err(Error::Usage(format!("merge: samples {at}..{} are missing", want.total)));
    }
    let mut header = want;
    header.first = 0;
    header.end = at;
    let samples = parts.into_iter().flat_map(|p| p.samples).collect();
    Ok(Record { header, samples })
}

/// What drives one output.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Driver {
    /// Parameter key.
    pub parameter: String,
    /// Spearman's rank correlation with the output.
    pub spearman: Option<f64>,
    /// First-order Sobol index (given-data estimate, see [`stats::sobol_first_order`]).
    pub sobol_first_order: Option<f64>,
}

/// Statistics of one output.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutputSummary {
    /// The column.
    #[serde(flatten)]
    pub column: Column,
    /// Samples with a value.
    pub n: usize,
    /// Samples without one that are not censored (failed samples).
    pub missing: usize,
    /// Samples that ran but never reached the output's level within the horizon
    /// ([`Column::censored_above`]): right-censored, counted in the quantiles as "beyond".
    pub censored: usize,
    /// Mean (of the samples with a value; None when any is censored: not defined then).
    pub mean: Option<f64>,
    /// Sample standard deviation (None when any sample is censored).
    pub sd: Option<f64>,
    /// (fraction, value) at [`QUANTILES`], over every sample that ran, censored ones included;
    /// the value is None where the quantile falls among the censored samples (see
    /// `beyond_horizon`) or there are no values.
    pub quantiles: Vec<(f64, Option<f64>)>,
    /// The fractions of [`QUANTILES`] whose quantile lies beyond the horizon: not reached
    /// within [`Column::censored_above`].
    pub beyond_horizon: Vec<f64>,
    /// Parameters by decreasing |Spearman ρ| (a tornado ranking).
    pub drivers: Vec<Driver>,
}

/// Statistics of a whole run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Network name.
    pub network: String,
    /// Seed.
    pub seed: u64,
    /// Samples.
    pub samples: usize,
    /// Samples that could not be evaluated.
    pub failed: usize,
    /// The first few distinct reasons.
    pub failures: Vec<String>,
    /// Parameters.
    pub parameters: Vec<Column>,
    /// Outputs.
    pub outputs: Vec<OutputSummary>,
    /// Notes.
    pub notes: Vec<String>,
}

/// The statistics of a record (quantiles by Hyndman–Fan definition 7).
pub fn summarise(r: &Record) -> Summary {
    let ok: Vec<&Sample> = r.samples.iter().filter(|s| s.error.is_none()).collect();
    let mut failures: Vec<String> = Vec::new();
    for s in &r.samples {
        if let Some(e) = &s.error
            && !failures.contains(e)
            && failures.len() < 5
        {
            failures.push(e.clone());
        }
    }
    let params: Vec<Vec<f64>> = (0..r.header.parameters.len())
        .map(|j| ok.iter().map(|s| s.values[j]).collect())
        .collect();
    let outputs = r
        .header
        .outputs
        .iter()
        .enumerate()
        .map(|(j, col)| {
            // A censored sample (ran, no value) ranks at the horizon: above every reached value.
            let horizon = col.censored_above;
            let y: Vec<f64> = ok
                .iter()
                .map(|s| s.outputs[j].or(horizon).unwrap_or(f64::NAN))
                .collect();
            let mut v: Vec<f64> = ok
                .iter()
                .filter_map(|s| s.outputs[j])
                .filter(|x| x.is_finite())
                .collect();
            let censored = if horizon.is_some() {
                ok.iter().filter(|s| s.outputs[j].is_none()).count()
            } else {
                0
            };
            let (mean, sd) = if censored > 0 { (None, None) } else { stats::mean_sd(&v) };
            v.sort_by(f64::total_cmp);
            let quantiles: Vec<(f64, Option<stats::Censored>)> = QUANTILES
                .iter()
                .map(|&q| (q, stats::quantile_censored(&v, censored, q)))
                .collect();
            // Values within round-off of zero are zero for the ranking too: ties, not noise
            // (a species consumed to 1e-15 M in some samples and to -1e-16 M in others).
            let y = at_round_off(col, y);
            let mut drivers: Vec<Driver> = r
                .header
                .parameters
                .iter()
                .zip(&params)
                .map(|(p, x)| Driver {
                    parameter: p.name.clone(),
                    spearman: stats::spearman(x, &y),
                    sobol_first_order: stats::sobol_first_order(x, &y),
                })
                .collect();
            drivers.sort_by(|a, b| {
                let f = |d: &Driver| d.spearman.map_or(-1.0, f64::abs);
                f(b).total_cmp(&f(a))
            });
            OutputSummary {
                column: col.clone(),
                n: v.len(),
                missing: r.samples.len() - v.len() - censored,
                censored,
                mean,
                sd,
                beyond_horizon: quantiles
                    .iter()
                    .filter(|(_, x)| *x == Some(stats::Censored::Beyond))
                    .map(|(q, _)| *q)
                    .collect(),
                quantiles: quantiles
                    .iter()
                    .map(|(q, x)| {
                        (
                            *q,
                            match x {
                                Some(stats::Censored::Value(v)) => Some(*v),
                                _ => None,
                            },
                        )
                    })
                    .collect(),
                drivers,
            }
        })
        .collect();
    Summary {
        network: r.header.network.clone(),
        seed: r.header.seed,
        samples: r.samples.len(),
        failed: r.samples.len() - ok.len(),
        failures,
        parameters: r.header.parameters.clone(),
        outputs,
        notes: r.header.notes.clone(),
    }
}

/// `y` with every finite value within the column's round-off limit of zero set to 0: its
/// absolute limit, or its relative one times the largest finite magnitude.
fn at_round_off(col: &Column, y: Vec<f64>) -> Vec<f64> {
    let largest = y.iter().filter(|v| v.is_finite()).fold(0.0f64, |m, v| m.max(v.abs()));
    let limit = match (col.zero_within, col.zero_within_relative) {
        (Some(a), _) => a,
        (None, Some(rel)) => rel * largest,
        (None, None) => return y,
    };
    y.into_iter()
        .map(|v| if v.is_finite() && v.abs() <= limit { 0.0 } else { v })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn column(name: &str, zero_within: Option<f64>) -> Column {
        Column {
            name: name.into(),
            unit: "M".into(),
            about: String::new(),
            zero_within,
            zero_within_relative: None,
            censored_above: None,
        }
    }

    #[test]
    fn outputs_at_round_off_rank_as_ties_not_as_noise() {
        // Half the samples consume the species to round-off (|c| ≤ 1e-12 M), where the value
        // follows parameter a by accident of the integrator; the other half keep some of it,
        // set by parameter b. The ranking must see b only.
        let n = 200;
        let samples: Vec<Sample> = (0..n)
            .map(|i| {
                let (a, b) = ((i * 37 % n) as f64 / n as f64, (i * 91 % n) as f64 / n as f64);
                let c = if i % 2 == 0 {
                    1e-13 * (a - 0.5)
                } else {
                    1e-3 * (0.5 + b)
                };
                Sample {
                    index: i,
                    values: vec![a, b],
                    outputs: vec![Some(c)],
                    error: None,
                }
            })
            .collect();
        let record = |zero_within| Record {
            header: Header {
                format: FORMAT.into(),
                network: "invented".into(),
                fingerprint: String::new(),
                seed: 1,
                total: n,
                first: 0,
                end: n,
                parameters: vec![column("a", None), column("b", None)],
                outputs: vec![column("final[S]", zero_within)],
                notes: Vec::new(),
            },
            samples: samples.clone(),
        };
        let rho = |r: &Record, p: &str| {
            let s = summarise(r);
            s.outputs[0]
                .drivers
                .iter()
                .find(|d| d.parameter == p)
                .unwrap()
                .spearman
                .unwrap()
        };
        // Without the limit the round-off half ranks by a: a spurious dependence.
        let raw = record(None);
        assert!(rho(&raw, "a").abs() > 0.25, "{}", rho(&raw, "a"));
        // With it those samples tie at 0: a drops out, b stays.
        let tied = record(Some(1e-12));
        assert!(rho(&tied, "a").abs() < 0.1, "{}", rho(&tied, "a"));
        assert!(rho(&tied, "b") > 0.25, "{}", rho(&tied, "b"));
    }

    #[test]
    fn shards_cover_every_index_once() {
        for total in [0usize, 1, 7, 100, 1001] {
            for n in 1..=9 {
                let mut at = 0;
                for k in 1..=n {
                    let r = shard_range(total, k, n).unwrap();
                    assert_eq!(r.start, at);
                    at = r.end;
                }
                assert_eq!(at, total);
            }
        }
        assert!(shard_range(10, 0, 3).is_err() && shard_range(10, 4, 3).is_err() && shard_range(10, 1, 0).is_err());
    }
}
