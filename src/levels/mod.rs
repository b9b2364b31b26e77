//! Competing levels of theory side by side: the network run under each of its labelled sets of
//! computed values (`Network::levels`), with the observables a photochemist measures (yields,
//! the product ratio, photons absorbed per product, excited-state lifetimes, the time in the
//! excited manifold per photon, the time to a target and the products at a common time), and
//! which observables the sets disagree on most and which they agree on: the measurement that
//! would tell them apart. `score.rs` scores each set against measured data.
//!
//! Each set is written into a copy of the network with `params::set` (`Level::apply`); the
//! chain is `chain::follow` as `ledger` runs it by default, the kinetics are `plan`'s. Times in
//! s, concentrations in mol/L. No file I/O, no printing.

pub mod score;

use crate::chain::{self, ChainOptions, Followed};
use crate::error::{Error, Result};
use crate::kinetics;
use crate::model::Model;
use crate::network::Network;
use crate::plan::{self, PlanOptions};
use serde::Serialize;

/// What to run under each set.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LevelOptions {
    /// A target as written for `plan --target` (None: no time to a target).
    pub target: Option<String>,
    /// The common time at which the products are compared, s (None: the longest automatic
    /// horizon of the sets, rounded up, as `report` chooses one).
    pub until: Option<f64>,
}

/// What an observable is, for its unit and the measurement that gives it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Kind {
    /// Chance that one molecule followed ends as a product (chain).
    Yield,
    /// Ratio of the yields of the two main products (chain).
    Ratio,
    /// Photons absorbed per molecule of a product formed (chain; 1 / its quantum yield).
    PhotonsPerProduct,
    /// A transient's lifetime 1/Σk, s.
    Lifetime,
    /// Mean time in the excited manifold per photon absorbed, s.
    ExcitedTime,
    /// Share of the time one molecule spends in a form at the photostationary state (a chain
    /// with no end).
    StationaryShare,
    /// Time for the kinetics to reach the target, s.
    TimeToTarget,
    /// Concentration of a product at the common time, mol/L.
    Final,
}

impl Kind {
    /// The measurement that gives this observable, in words (None: not measured directly).
    pub fn measurement(self) -> Option<&'static str> {
        match self {
            Kind::Yield | Kind::Final => Some("product yields (HPLC, GC or NMR after irradiation)"),
            Kind::Ratio => Some("the product ratio (HPLC, GC or NMR after irradiation)"),
            Kind::PhotonsPerProduct => Some("the quantum yield of the product (actinometry and conversion)"),
            Kind::Lifetime => Some("the excited-state lifetime (transient absorption or time-resolved emission)"),
            Kind::StationaryShare => Some("the photostationary composition (UV-vis or NMR under the lamp)"),
            Kind::TimeToTarget => Some("the irradiation time to the target (conversion against time)"),
            Kind::ExcitedTime => None,
        }
    }

    /// True when the values are times (s).
    pub fn is_time(self) -> bool {
        matches!(self, Kind::Lifetime | Kind::ExcitedTime | Kind::TimeToTarget)
    }
}

/// How far apart the sets are on one observable.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// Within [`AGREE`] of each other.
    Agree,
    /// Apart by more than [`AGREE`] and less than [`DISAGREE`].
    Differ,
    /// Apart by [`DISAGREE`] or more, or one set gives it and another does not.
    Disagree,
}

/// Largest factor between the sets' values counted as agreement: 5 %, about what a careful
/// measurement of a yield or a lifetime resolves (common practice).
pub const AGREE: f64 = 1.05;
/// Smallest factor counted as a disagreement a measurement of ±10 % tells apart without doubt
/// (our choice: 1.5).
pub const DISAGREE: f64 = 1.5;

/// One observable under every set.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observable {
    /// What it is, e.g. "yield of ring".
    pub name: String,
    /// Its kind.
    pub kind: Kind,
    /// Its value under each set, in set order (SI; None: the set gives none, e.g. a target
    /// not reached or a transient with fractions only).
    pub values: Vec<Option<f64>>,
    /// Largest over smallest value (1 when all are equal, ∞ when one set gives zero or none
    /// and another a value; None when no set gives it).
    pub factor: Option<f64>,
    /// The sets with the smallest and the largest value (indices).
    pub extremes: Option<(usize, usize)>,
    /// Agreement by [`AGREE`] and [`DISAGREE`].
    pub verdict: Option<Verdict>,
}

impl Observable {
    fn new(name: String, kind: Kind, values: Vec<Option<f64>>) -> Observable {
        let (factor, extremes) = spread(&values);
        let verdict = factor.map(|f| {
            if f <= AGREE {
                Verdict::Agree
            } else if f < DISAGREE {
                Verdict::Differ
            } else {
                Verdict::Disagree
            }
        });
        Observable {
            name,
            kind,
            values,
            factor,
            extremes,
            verdict,
        }
    }
}

/// Largest over smallest value and the sets giving them; a set that gives none while another
/// gives a value counts as infinitely far (smallest).
fn spread(values: &[Option<f64>]) -> (Option<f64>, Option<(usize, usize)>) {
    let given: Vec<(usize, f64)> = values
        .iter()
        .enumerate()
        .filter_map(|(i, v)| v.filter(|x| x.is_finite()).map(|x| (i, x)))
        .collect();
    if given.is_empty() {
        return (None, None);
    }
    let (hi, max) = given
        .iter()
        .copied()
        .fold((0, f64::NEG_INFINITY), |a, b| if b.1 > a.1 { b } else { a });
    if let Some(none) = values.iter().position(|v| v.is_none_or(|x| !x.is_finite())) {
        return (Some(f64::INFINITY), Some((none, hi)));
    }
    let (lo, min) = given
        .iter()
        .copied()
        .fold((0, f64::INFINITY), |a, b| if b.1 < a.1 { b } else { a });
    if max == min {
        return (Some(1.0), Some((lo, hi)));
    }
    if min <= 0.0 {
        return (Some(f64::INFINITY), Some((lo, hi)));
    }
    (Some(max / min), Some((lo, hi)))
}

/// One set as the comparison shows it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SetInfo {
    /// The user's label.
    pub label: String,
    /// The file's note.
    pub note: String,
    /// Why the chain gives nothing under this set (None: it ran).
    pub chain_error: Option<String>,
}

/// A value a set writes, shown beside the others': the key and each set's value (internal
/// unit; None where the set leaves the file's value), or each set's trajectory counts.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SetValue {
    /// The key as `--set` spells it (or `transient.NAME.trajectories` for counts).
    pub key: String,
    /// Unit of the values as `--set` writes it ("" for plain numbers and counts).
    pub unit: &'static str,
    /// Each set's value (empty for counts).
    pub values: Vec<Option<f64>>,
    /// Each set's counts, one per channel (empty for values).
    pub counts: Vec<Option<Vec<u64>>>,
}

/// The sets compared.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Comparison {
    /// The sets, in file order.
    pub sets: Vec<SetInfo>,
    /// What each set writes.
    pub values: Vec<SetValue>,
    /// The observables, in the order chain, lifetimes, kinetics.
    pub observables: Vec<Observable>,
    /// The target, as written, when one was given.
    pub target: Option<String>,
    /// The common time of the products, s.
    pub until: f64,
    /// How that time was chosen.
    pub until_reason: String,
    /// The light the chain assumes, in words.
    pub chain_light: String,
    /// The family the network's molar energies are shown in (the file's).
    #[serde(skip)]
    pub energy_unit: crate::units::display::EnergyUnit,
}

impl Comparison {
    /// Indices of the observables, largest factor first (only those with a factor).
    pub fn by_disagreement(&self) -> Vec<usize> {
        let mut v: Vec<usize> = (0..self.observables.len())
            .filter(|&i| self.observables[i].factor.is_some())
            .collect();
        v.sort_by(|&a, &b| {
            let f = |i: usize| self.observables[i].factor.unwrap_or(1.0);
            f(b).total_cmp(&f(a))
        });
        v
    }

    /// The observable a measurement should target: the one with the largest factor that a
    /// measurement gives, among those per photon or per molecule first (they do not depend on
    /// the lamp's calibration), then the times and amounts of the kinetics (None when every
    /// one agrees).
    pub fn telling(&self) -> Option<&Observable> {
        let apart = |o: &&Observable| o.kind.measurement().is_some() && o.verdict != Some(Verdict::Agree);
        let order: Vec<&Observable> = self
            .by_disagreement()
            .into_iter()
            .map(|i| &self.observables[i])
            .collect();
        order
            .iter()
            .copied()
            .filter(apart)
            .find(|o| !matches!(o.kind, Kind::TimeToTarget | Kind::Final))
            .or_else(|| order.iter().copied().find(apart))
    }

    /// A lifetime the sets agree on while they disagree on a product yield or ratio: "the
    /// right lifetime for the wrong reason" (lifetime, the yield or ratio apart the most).
    pub fn same_lifetime_other_products(&self) -> Option<(&Observable, &Observable)> {
        let life = self
            .observables
            .iter()
            .find(|o| o.kind == Kind::Lifetime && o.verdict == Some(Verdict::Agree))?;
        let prod = self
            .by_disagreement()
            .into_iter()
            .map(|i| &self.observables[i])
            .find(|o| matches!(o.kind, Kind::Ratio | Kind::Yield) && o.verdict == Some(Verdict::Disagree))?;
        Some((life, prod))
    }
}

/// The chain's observables of one set.
struct ChainValues {
    /// (name, kind, value).
    rows: Vec<(String, Kind, Option<f64>)>,
    light: String,
}

/// Run the chain of `net` (compiled as `model`) as `ledger` does by default, without the
/// photon-count distribution or sensitivities.
fn chain_values(model: &Model, net: &Network) -> Result<ChainValues> {
    let opts = ChainOptions {
        analysis: chain::Options {
            distribution: false,
            ..chain::Options::default()
        },
        sensitivities: false,
        ..ChainOptions::default()
    };
    let mut rows = Vec::new();
    match chain::follow(model, net, &opts)? {
        Followed::Ends(run) => {
            let (ch, an) = (&run.chain, &run.analysis);
            let names: Vec<String> = an.absorbing.iter().map(|&s| ch.states[s].name.clone()).collect();
            for (k, name) in names.iter().enumerate() {
                rows.push((format!("yield of {name}"), Kind::Yield, Some(an.yields[k])));
            }
            for (k, name) in names.iter().enumerate() {
                let per = an.quantum_yield(k).filter(|q| *q > 0.0).map(|q| 1.0 / q);
                rows.push((format!("photons absorbed per {name}"), Kind::PhotonsPerProduct, per));
            }
            let l = chain::lifetimes::lifetimes(ch, net, &an.visits);
            lifetime_rows(&l, &mut rows);
            Ok(ChainValues { rows, light: run.light })
        }
        Followed::Closed(c) => {
            if let Some(share) = &c.stationary.time_share {
                for &i in &c.stationary.class {
                    if matches!(c.chain.states[i].kind, chain::StateKind::Species(_)) {
                        rows.push((
                            format!("photostationary share of {}", c.chain.states[i].name),
                            Kind::StationaryShare,
                            Some(share[i]),
                        ));
                    }
                }
            }
            let l = chain::lifetimes::lifetimes(&c.chain, net, &c.stationary.visits);
            lifetime_rows(&l, &mut rows);
            Ok(ChainValues { rows, light: c.light })
        }
    }
}

fn lifetime_rows(l: &chain::lifetimes::Lifetimes, rows: &mut Vec<(String, Kind, Option<f64>)>) {
    for t in &l.transients {
        rows.push((format!("lifetime of {}", t.name), Kind::Lifetime, t.lifetime));
    }
    rows.push((
        "time in the excited manifold per photon".into(),
        Kind::ExcitedTime,
        l.excited_time_per_photon,
    ));
}

/// The networks of `net` under each of its sets, in file order.
pub fn networks(net: &Network) -> Result<Vec<Network>> {
    net.levels
        .iter()
        .map(|l| {
            l.apply(net)
                .map_err(|m| Error::Usage(format!("level \"{}\": {m}", l.label)))
        })
        .collect()
}

/// Run `net` under each of its sets and put the observables side by side.
pub fn compare(net: &Network, opts: &LevelOptions) -> Result<Comparison> {
    if net.levels.is_empty() {
        return Err(Error::Usage(
            "the network carries no sets of values: add [[level]] tables with a label and set = { KEY = VALUE } (README, Competing levels of theory)".into(),
        ));
    }
    let nets = networks(net)?;
    let models: Vec<Model> = nets.iter().map(Model::compile).collect();
    let n = nets.len();
    let mut sets = Vec::new();
    // name -> (kind, values per set), in first-seen order.
    let mut rows: Vec<(String, Kind, Vec<Option<f64>>)> = Vec::new();
    let put = |rows: &mut Vec<(String, Kind, Vec<Option<f64>>)>, i: usize, name: String, kind: Kind, v: Option<f64>| {
        let at = match rows.iter().position(|r| r.0 == name) {
            Some(p) => p,
            None => {
                rows.push((name, kind, vec![None; n]));
                rows.len() - 1
            }
        };
        rows[at].2[i] = v;
    };
    let mut light = String::new();
    for (i, (lnet, model)) in nets.iter().zip(&models).enumerate() {
        let level = &net.levels[i];
        let chain_error = match chain_values(model, lnet) {
            Ok(c) => {
                for (name, kind, v) in c.rows {
                    put(&mut rows, i, name, kind, v);
                }
                light = c.light;
                None
            }
            Err(e) => Some(one_line(&e)),
        };
        sets.push(SetInfo {
            label: level.label.clone(),
            note: level.note.clone(),
            chain_error,
        });
    }
    // The ratio of the two main ends (largest summed yield over the sets), in chain order, the
    // same pair under every set.
    let yields: Vec<usize> = (0..rows.len()).filter(|&r| rows[r].1 == Kind::Yield).collect();
    if yields.len() >= 2 {
        let total = |r: usize| rows[r].2.iter().flatten().sum::<f64>();
        let mut main = yields.clone();
        main.sort_by(|&a, &b| total(b).total_cmp(&total(a)));
        let (mut a, mut b) = (main[0], main[1]);
        if a > b {
            std::mem::swap(&mut a, &mut b);
        }
        let name = |r: usize| rows[r].0.trim_start_matches("yield of ").to_string();
        let values: Vec<Option<f64>> = (0..n)
            .map(|i| match (rows[a].2[i], rows[b].2[i]) {
                (Some(x), Some(y)) if y > 0.0 => Some(x / y),
                _ => None,
            })
            .collect();
        let at = yields.last().map_or(rows.len(), |&l| l + 1);
        rows.insert(at, (format!("ratio {} : {}", name(a), name(b)), Kind::Ratio, values));
    }
    // Kinetics: the time to the target, then the products at one common time.
    let plan_opts = PlanOptions::default();
    let mut horizons = Vec::new();
    if let Some(t) = &opts.target {
        for (i, model) in models.iter().enumerate() {
            let target = plan::target::parse(t, model)?;
            let p = plan::time_to_target(model, &target, &plan_opts)?;
            put(&mut rows, i, format!("time to \"{t}\""), Kind::TimeToTarget, p.time);
        }
    }
    let (until, until_reason) = match opts.until {
        Some(u) => (u, "as asked (--until)".to_string()),
        None => {
            for model in &models {
                let target = opts
                    .target
                    .as_deref()
                    .map(|t| plan::target::parse(t, model))
                    .transpose()?;
                horizons.push(plan::horizon::automatic(model, target.as_ref())?);
            }
            let longest = horizons.iter().map(|h| h.time).fold(0.0, f64::max);
            let until = plan::horizon::round_up(longest);
            let why = horizons
                .iter()
                .zip(&net.levels)
                .max_by(|a, b| a.0.time.total_cmp(&b.0.time))
                .map_or(String::new(), |(h, l)| format!("{} under \"{}\"", h.reason(), l.label));
            (
                until,
                format!(
                    "the longest automatic horizon of the sets ({why}), rounded up to {}; set it with --until",
                    crate::units::format_time(until)
                ),
            )
        }
    };
    for (i, model) in models.iter().enumerate() {
        let tr = kinetics::simulate(model, &kinetics::Options::until(until), &mut |_| {})?;
        let last = tr.last();
        for &p in &model.products {
            put(
                &mut rows,
                i,
                format!("{} at {}", model.species[p], crate::units::format_time(until)),
                Kind::Final,
                Some(last[p]),
            );
        }
    }
    let observables = rows
        .into_iter()
        .filter(|(_, _, values)| values.iter().any(Option::is_some))
        .map(|(name, kind, values)| Observable::new(name, kind, values))
        .collect();
    Ok(Comparison {
        energy_unit: net.energy_unit,
        sets,
        values: set_values(net),
        observables,
        target: opts.target.clone(),
        until,
        until_reason,
        chain_light: light,
    })
}

/// What each set writes, key by key in first-seen order.
fn set_values(net: &Network) -> Vec<SetValue> {
    let n = net.levels.len();
    let mut out: Vec<SetValue> = Vec::new();
    let row = |out: &mut Vec<SetValue>, key: String, unit: &'static str, counts: bool| match out
        .iter()
        .position(|s| s.key == key)
    {
        Some(a) => a,
        None => {
            out.push(SetValue {
                key,
                unit,
                values: if counts { Vec::new() } else { vec![None; n] },
                counts: if counts { vec![None; n] } else { Vec::new() },
            });
            out.len() - 1
        }
    };
    for (i, l) in net.levels.iter().enumerate() {
        for &(k, v) in &l.values {
            let at = row(&mut out, k.spell(net), crate::network::params::get(net, k).unit, false);
            out[at].values[i] = Some(v);
        }
        for c in &l.counts {
            let key = format!("transient.{}.trajectories", net.transients[c.transient].name);
            let at = row(&mut out, key, "", true);
            out[at].counts[i] = Some(c.runs.clone());
        }
    }
    out
}

fn one_line(e: &Error) -> String {
    match e {
        Error::Invalid(ds) => ds.iter().map(|d| d.message.as_str()).collect::<Vec<_>>().join("; "),
        e => e.to_string().lines().next().unwrap_or("").to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spread_is_the_factor_between_extremes() {
        let (f, e) = spread(&[Some(0.25), Some(0.75)]);
        assert!((f.unwrap() - 3.0).abs() < 1e-12);
        assert_eq!(e, Some((0, 1)));
        let (f, _) = spread(&[Some(2.0), Some(2.0)]);
        assert_eq!(f, Some(1.0));
        let (f, e) = spread(&[Some(5.0), None]);
        assert_eq!(f, Some(f64::INFINITY));
        assert_eq!(e, Some((1, 0)));
        assert_eq!(spread(&[None, None]).0, None);
        let o = Observable::new("x".into(), Kind::Yield, vec![Some(1.0), Some(1.04)]);
        assert_eq!(o.verdict, Some(Verdict::Agree));
        let o = Observable::new("x".into(), Kind::Yield, vec![Some(1.0), Some(1.2)]);
        assert_eq!(o.verdict, Some(Verdict::Differ));
        let o = Observable::new("x".into(), Kind::Yield, vec![Some(0.0), Some(0.2)]);
        assert_eq!(o.verdict, Some(Verdict::Disagree));
    }
}
