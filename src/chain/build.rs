//! The chain of one molecule, built from the compiled [`Model`] and the transients of its
//! [`Network`].
//!
//! Rates come from the model (reaction rate constants, ε per bin, photon bins, base yields per
//! bin) and the transients' channel shares follow the model's collapse through the one shared
//! rule, [`crate::model::transients::ShareTotals`], applied to the (possibly perturbed) values:
//! fixed fractions as given ("rest" is what the others leave), rates normalised by the
//! transient's total rate, quenching at k₂ [partner]. Nothing is re-derived from the file.
//!
//! Where the molecule goes when a step has several products: to the first product written
//! (write the species you follow first). Photon absorption per molecule, s⁻¹, either
//! - [`Light::Stirred`] (default): its share of the light absorbed in the well-stirred cell at
//!   the stated concentrations, k_a = Σ_b q_b g(A_b) l ε_ab / V (q_b einstein/s, l in m,
//!   ε in L mol⁻¹ m⁻¹, V in L, g(A) = (1 − 10^−A)/A, A_b including the background), which
//!   needs no irradiated area; or
//! - [`Light::Thin`]: the optically thin limit Σ_b σ_b E_b with σ = 1000 ln(10) ε / N_A
//!   (ε in L mol⁻¹ cm⁻¹, σ in cm², converted to m²) and photon irradiance E_b = q_b N_A / S
//!   (photons m⁻² s⁻¹) over the irradiated area S.

use super::{Chain, Counted, Origin, StateKind};
use crate::error::{Error, Result};
use crate::model::Model;
use crate::model::absorption::g;
use crate::model::transients::{ShareInput, ShareTotals};
use crate::network::params::{Key, RateAt, RateField};
use crate::network::{Branching, Network, PhotoOutcome, Target};
use crate::rates::RateLaw;
use crate::units::constants::{AVOGADRO, cross_section_m2};
use crate::units::{Quantity, internal_spelling};

/// How the per-molecule photon absorption rate is found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Light {
    /// The well-stirred cell at the stated concentrations (inner filter and background included).
    Stirred,
    /// The optically thin limit over the irradiated area (needs `irradiated_area`).
    Thin,
}

/// Conditions at which the chain is built.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// The light model.
    pub light: Light,
    /// Concentrations for light absorption, linearised bimolecular steps and quenching, mol/L
    /// (None: the initial ones).
    pub concentrations: Option<Vec<f64>>,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            light: Light::Stirred,
            concentrations: None,
        }
    }
}

/// Which number of the model a [`Parameter`] is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Slot {
    /// A factor on the quantum yield (or efficiency) spectrum of photochemical step p.
    YieldFactor(usize),
    /// The value of channel c of transient t: a fraction, a rate (s⁻¹) or a quenching
    /// constant (L mol⁻¹ s⁻¹).
    Channel(usize, usize),
    /// The rate constant of model reaction r, (L/mol)^(n−1) s⁻¹.
    Reaction(usize),
}

/// One number the answer may hang on.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    /// Display label.
    pub label: String,
    /// The network parameter it is, where one exists: the key `--set`, `--free` and
    /// `[[uncertain]]` use (a step's quantum yield or efficiency, a channel's fraction or rate,
    /// a thermal step's rate constant or, when the file gives one, its barrier). None for a hot
    /// channel's computed share and for a share given by trajectory counts.
    pub key: Option<Key>,
    /// Where it sits.
    pub slot: Slot,
    /// Its value (1 for yield factors).
    pub value: f64,
    /// What one unit of `value` is worth when shown: the mean quantum yield or efficiency for a
    /// yield factor (so the report shows Φ itself and derivatives per unit Φ), 1 otherwise.
    pub shown_per_unit: f64,
    /// Unit of `value`, written out.
    pub unit: &'static str,
    /// True when it is a rate constant given by a barrier (Eyring or Arrhenius), so that
    /// ∂/∂(barrier) = −(k/RT) ∂/∂k.
    pub barrier: bool,
    /// The largest value it may take (quantum yields of one absorber sum to at most 1 in every
    /// light bin; fractions are at most 1; rates are unbounded). At the bound the exact
    /// sensitivities take the derivative from below, and the finite-difference reference looks
    /// down only.
    pub upper: f64,
}

/// The numbers the chain is built from, editable for sensitivities.
#[derive(Debug, Clone, PartialEq)]
pub struct Values {
    /// Per photochemical step: factor on its yield spectrum.
    pub yield_factor: Vec<f64>,
    /// Per transient, per channel: fraction, rate or k₂ (NaN for "rest").
    pub channel: Vec<Vec<f64>>,
    /// Per model reaction: rate constant.
    pub reaction: Vec<f64>,
}

impl Values {
    /// The values as compiled.
    pub fn of(model: &Model, net: &Network) -> Values {
        Values {
            yield_factor: vec![1.0; net.photo.len()],
            channel: net
                .transients
                .iter()
                .map(|t| {
                    t.channels
                        .iter()
                        .map(|c| match c.branching {
                            Branching::Fraction(x) | Branching::Hot { fraction: x, .. } => x,
                            Branching::Rest => f64::NAN,
                            Branching::Rate { k, .. } => k,
                            Branching::Quenching { k2, .. } => k2,
                        })
                        .collect()
                })
                .collect(),
            reaction: model.reactions.iter().map(|r| r.k).collect(),
        }
    }

    /// The value at `slot`.
    pub fn get(&self, slot: Slot) -> f64 {
        match slot {
            Slot::YieldFactor(p) => self.yield_factor[p],
            Slot::Channel(t, c) => self.channel[t][c],
            Slot::Reaction(r) => self.reaction[r],
        }
    }

    /// Set the value at `slot`.
    pub fn set(&mut self, slot: Slot, v: f64) {
        match slot {
            Slot::YieldFactor(p) => self.yield_factor[p] = v,
            Slot::Channel(t, c) => self.channel[t][c] = v,
            Slot::Reaction(r) => self.reaction[r] = v,
        }
    }
}

fn is_barrier(law: &RateLaw) -> bool {
    !matches!(law, RateLaw::Constant(_))
}

/// The key of a rate: its barrier when the file gives the rate by one (the number a user would
/// free or sample), else its rate constant.
fn rate_key(at: RateAt, law: &RateLaw) -> Key {
    let field = match law {
        RateLaw::EyringFree { .. } | RateLaw::Frequencies { .. } => RateField::Barrier,
        _ => RateField::K,
    };
    Key::Rate { at, field }
}

/// Every quantum yield, fraction, rate and barrier of the network that the chain uses.
pub fn parameters(model: &Model, net: &Network) -> Vec<Parameter> {
    let vals = Values::of(model, net);
    let nb = model.bins.len();
    // The yield spectrum of each step, and their sum per absorber and bin.
    let base = |p: usize| model.outcomes.iter().find(|o| o.step == p).map(|o| (o.slot, &o.base));
    let mut used = vec![0.0; model.absorbers.len() * nb];
    for p in 0..net.photo.len() {
        if let Some((slot, b)) = base(p) {
            for (k, y) in b.iter().enumerate().take(nb) {
                used[slot * nb + k] += y;
            }
        }
    }
    let mut out = Vec::new();
    for (p, step) in net.photo.iter().enumerate() {
        if let Some((slot, b)) = base(p) {
            let upper = b
                .iter()
                .enumerate()
                .take(nb)
                .filter(|(_, y)| **y > 0.0)
                .map(|(k, y)| 1.0 + (1.0 - used[slot * nb + k]) / y)
                .fold(f64::INFINITY, f64::min);
            let word = match step.outcome {
                crate::network::PhotoOutcome::Products(_) => "quantum yield",
                crate::network::PhotoOutcome::Transient(_) => "efficiency",
            };
            let mean = step.quantum_yield.mean();
            out.push(Parameter {
                label: format!("{word} of \"{}\" (scaled over its spectrum)", step.name),
                key: Some(match step.outcome {
                    crate::network::PhotoOutcome::Products(_) => Key::QuantumYield(p),
                    crate::network::PhotoOutcome::Transient(_) => Key::Efficiency(p),
                }),
                slot: Slot::YieldFactor(p),
                value: 1.0,
                shown_per_unit: if mean > 0.0 { mean } else { 1.0 },
                unit: "",
                barrier: false,
                upper,
            });
        }
    }
    for (t, tr) in net.transients.iter().enumerate() {
        for (c, ch) in tr.channels.iter().enumerate() {
            let to = target_name(net, &ch.target);
            let (unit, barrier) = match &ch.branching {
                Branching::Rest => continue,
                Branching::Fraction(_) | Branching::Hot { .. } => ("", false),
                Branching::Rate { law, .. } => (internal_spelling(Quantity::RateConstant(1)), is_barrier(law)),
                Branching::Quenching { law, .. } => (internal_spelling(Quantity::RateConstant(2)), is_barrier(law)),
            };
            let what = match &ch.branching {
                Branching::Fraction(_) | Branching::Hot { .. } => "fraction",
                Branching::Rate { .. } => "rate",
                _ => "quenching rate constant",
            };
            let at = RateAt::Channel {
                transient: t,
                channel: c,
            };
            let key = match &ch.branching {
                // A share from trajectory counts is set by its counts, not by a key.
                Branching::Fraction(_) if net.evidence.counts_of(t).is_some() => None,
                Branching::Fraction(_) => Some(Key::Fraction {
                    transient: t,
                    channel: c,
                }),
                Branching::Rate { law, .. } | Branching::Quenching { law, .. } => Some(rate_key(at, law)),
                _ => None,
            };
            out.push(Parameter {
                label: format!("{what} {} -> {to}", tr.name),
                key,
                slot: Slot::Channel(t, c),
                value: vals.channel[t][c],
                unit,
                barrier,
                upper: if unit.is_empty() { 1.0 } else { f64::INFINITY },
                shown_per_unit: 1.0,
            });
        }
    }
    for (r, re) in model.reactions.iter().enumerate() {
        let order: u32 = re.reactants.iter().map(|x| x.1).sum();
        out.push(Parameter {
            label: format!("rate constant of \"{}\"", re.name),
            key: net.thermal.get(r).map(|t| rate_key(RateAt::Thermal(r), &t.rate)),
            slot: Slot::Reaction(r),
            value: re.k,
            unit: internal_spelling(Quantity::RateConstant(order)),
            barrier: net.thermal.get(r).is_some_and(|t| is_barrier(&t.rate)),
            upper: f64::INFINITY,
            shown_per_unit: 1.0,
        });
    }
    out
}

fn target_name(net: &Network, t: &Target) -> String {
    net.target_name(t)
}

/// Per-molecule photon absorption rate of each absorber slot per bin, s⁻¹.
pub fn absorption_rates(model: &Model, net: &Network, light: Light, c: &[f64]) -> Result<Vec<Vec<f64>>> {
    let nb = model.bins.len();
    let ns = model.absorbers.len();
    let mut k = vec![vec![0.0; nb]; ns];
    match light {
        Light::Stirred => {
            for b in 0..nb {
                let mut a = model.background[b];
                for (slot, &s) in model.absorbers.iter().enumerate() {
                    a += model.path * model.eps[slot * nb + b] * c[s].max(0.0);
                }
                let gb = g(a);
                for (slot, row) in k.iter_mut().enumerate() {
                    row[b] = model.bins[b].flux * gb * model.path * model.eps[slot * nb + b] / model.volume;
                }
            }
        }
        Light::Thin => {
            let area = net.conditions.irradiated_area.filter(|a| *a > 0.0).ok_or_else(|| {
                Error::Usage(
                    "the optically thin light model needs conditions.irradiated_area; give it in the file, or use \
                     the stirred-cell model"
                        .into(),
                )
            })?;
            for b in 0..nb {
                let irradiance = model.bins[b].flux * AVOGADRO / area; // photons m⁻² s⁻¹
                for (slot, row) in k.iter_mut().enumerate() {
                    // ε inside is L mol⁻¹ m⁻¹; cross_section_m2 takes L mol⁻¹ cm⁻¹.
                    row[b] = cross_section_m2(model.eps[slot * nb + b] / 100.0) * irradiance;
                }
            }
        }
    }
    Ok(k)
}

/// The species a step leads the molecule to: the first species with a positive net change,
/// `Some(None)` for nothing (removed), None when nothing changes.
fn follow(net: &[(usize, f64)]) -> Option<Option<usize>> {
    if net.is_empty() {
        return None;
    }
    Some(net.iter().find(|x| x.1 > 0.0).map(|x| x.0))
}

fn fmt_conc(c: f64) -> String {
    crate::units::format_concentration(c)
}

/// What a species' way out depends on: the photochemical step it is (its rate ∝ the step's
/// yield factor), the photons absorbed with no reaction (what the steps leave of the absorber's
/// absorption), or a thermal step (its rate ∝ the step's rate constant).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Source {
    /// Photochemical step p.
    Photo(usize),
    /// Light absorbed with no reaction.
    NoReaction,
    /// Model reaction r.
    Reaction(usize),
}

/// One way out of a species, per molecule.
#[derive(Debug, Clone)]
pub(super) struct Exit {
    /// The species it leads to (None: removed).
    pub to: Option<usize>,
    /// Rate, s⁻¹.
    pub rate: f64,
    /// True for a photon absorption.
    pub photon: bool,
    /// Label when its repetitions are counted.
    pub counted: Option<String>,
    /// What its rate depends on.
    pub source: Source,
}

/// What the chain was built from, beyond the chain itself: every species' ways out (before
/// normalisation) and the concentrations used; the exact derivatives of the moves start here.
#[derive(Debug, Clone)]
pub(super) struct Parts {
    /// Per species, its ways out.
    pub exits: Vec<Vec<Exit>>,
    /// Concentrations for light, linearisation and quenching, mol/L.
    pub c: Vec<f64>,
}

/// What a transient's channel with branching `b` and value `value` (fraction, rate or k₂)
/// brings to the channel shares, at concentrations `c`.
pub(super) fn channel_input(b: &Branching, value: f64, c: &[f64]) -> ShareInput {
    match *b {
        Branching::Fraction(_) | Branching::Hot { .. } => ShareInput::Fixed(value),
        Branching::Rest => ShareInput::Rest,
        Branching::Rate { .. } => ShareInput::Rate(value),
        Branching::Quenching { partner, .. } => ShareInput::Rate(value.max(0.0) * c[partner].max(0.0)),
    }
}

/// The state a channel leads to (transients follow the `ns` species); None for the removed state.
pub(super) fn channel_target(ns: usize, t: &Target) -> Option<usize> {
    match t {
        Target::Transient(k) => Some(ns + k),
        Target::Species(terms) => terms.first().map(|x| x.species),
    }
}

/// Build the chain of `model` (with the transients of `net`) at `settings`, with `values`.
pub fn build(model: &Model, net: &Network, settings: &Settings, values: &Values) -> Result<Chain> {
    Ok(build_parts(model, net, settings, values)?.0)
}

/// [`build`], also returning what the chain was built from.
pub(super) fn build_parts(
    model: &Model,
    net: &Network,
    settings: &Settings,
    values: &Values,
) -> Result<(Chain, Parts)> {
    let ns = model.n_species();
    let nt = net.transients.len();
    let c: Vec<f64> = match &settings.concentrations {
        Some(c) if c.len() == ns => c.clone(),
        Some(c) => {
            return Err(Error::Usage(format!(
                "{} concentrations given for {ns} species",
                c.len()
            )));
        }
        None => model.initial.clone(),
    };
    let mut chain = Chain::default();
    let kabs = absorption_rates(model, net, settings.light, &c)?;
    let nb = model.bins.len();
    // Exit rates per species accumulated first.
    let mut exits: Vec<Vec<Exit>> = (0..ns).map(|_| Vec::new()).collect();
    for (slot, &a) in model.absorbers.iter().enumerate() {
        let ka: f64 = kabs[slot].iter().sum();
        if ka <= 0.0 {
            continue;
        }
        let mut used = 0.0;
        let mut steps: Vec<usize> = model
            .outcomes
            .iter()
            .filter(|o| o.slot == slot)
            .map(|o| o.step)
            .collect();
        steps.dedup();
        for p in steps {
            let Some(o) = model.outcomes.iter().find(|o| o.step == p) else {
                continue;
            };
            let f = values.yield_factor[p].max(0.0);
            let rate: f64 = (0..nb).map(|b| kabs[slot][b] * o.base[b] * f).sum();
            if rate <= 0.0 {
                continue;
            }
            used += rate;
            let (to, counted) = match &net.photo[p].outcome {
                PhotoOutcome::Transient(t) => (Some(ns + t), None),
                PhotoOutcome::Products(_) => match follow(&o.net) {
                    None => (
                        Some(a),
                        Some(format!(
                            "\"{}\": photon absorbed by {}, no change",
                            net.photo[p].name, model.species[a]
                        )),
                    ),
                    Some(s) => (s, None),
                },
            };
            exits[a].push(Exit {
                to,
                rate,
                photon: true,
                counted,
                source: Source::Photo(p),
            });
        }
        let rest = ka - used;
        if rest > ka * 1e-15 {
            exits[a].push(Exit {
                to: Some(a),
                rate: rest,
                photon: true,
                counted: Some(format!(
                    "photon absorbed by {}, no reaction (1 − quantum yields)",
                    model.species[a]
                )),
                source: Source::NoReaction,
            });
        }
    }
    for (r, re) in model.reactions.iter().enumerate() {
        let k = values.reaction[r];
        for &(s, _) in &re.reactants {
            let loss = re.net.iter().find(|x| x.0 == s).map_or(0.0, |x| -x.1);
            if loss <= 0.0 {
                continue;
            }
            // Per-molecule rate of loss of s: loss · k Π c^ν / c_s.
            let mut rate = loss * k;
            let mut partners = Vec::new();
            for &(i, nui) in &re.reactants {
                let pow = if i == s { nui as i32 - 1 } else { nui as i32 };
                if pow > 0 {
                    rate *= c[i].max(0.0).powi(pow);
                    partners.push(format!("[{}] = {}", model.species[i], fmt_conc(c[i].max(0.0))));
                }
            }
            if !partners.is_empty() {
                if rate > 0.0 {
                    chain.notes.push(format!(
                        "\"{}\" is not first order: for {} it is linearised at {} (pseudo-first-order {})",
                        re.name,
                        model.species[s],
                        partners.join(", "),
                        crate::units::display::format_rate_constant(rate, 1)
                    ));
                } else {
                    chain.notes.push(format!(
                        "\"{}\" cannot be linearised for {}: at {} it never happens, so the chain leaves it out",
                        re.name,
                        model.species[s],
                        partners.join(", ")
                    ));
                }
            }
            if rate <= 0.0 {
                continue;
            }
            let to = re.net.iter().find(|x| x.1 > 0.0).map(|x| x.0);
            exits[s].push(Exit {
                to,
                rate,
                photon: false,
                counted: None,
                source: Source::Reaction(r),
            });
        }
    }
    let products = &model.products;
    let mut removed: Option<usize> = None;
    let n_states = ns + nt;
    for (i, ex) in exits.iter().enumerate() {
        let total: f64 = ex.iter().map(|e| e.rate).sum();
        // A species whose every way out leads back to itself (light absorbed with no net
        // photochemistry, its reactions off at these concentrations) has no way out either.
        let only_back = !ex.is_empty() && ex.iter().all(|e| e.to == Some(i));
        let absorbing = products.contains(&i) || total <= 0.0 || only_back;
        let holding = if absorbing { 0.0 } else { 1.0 / total };
        chain.add_state(&model.species[i], StateKind::Species(i), absorbing, holding);
    }
    for (t, tr) in net.transients.iter().enumerate() {
        let total: f64 = tr
            .channels
            .iter()
            .enumerate()
            .map(|(ci, ch)| match ch.branching {
                Branching::Rate { .. } => values.channel[t][ci],
                Branching::Quenching { partner, .. } => values.channel[t][ci] * c[partner].max(0.0),
                _ => 0.0,
            })
            .sum();
        let holding = if total > 0.0 { 1.0 / total } else { 0.0 };
        chain.add_state(&tr.name, StateKind::Transient(t), false, holding);
    }
    let mut removed_state = |chain: &mut Chain| -> usize {
        *removed.get_or_insert_with(|| chain.add_state("(nothing followed)", StateKind::Removed, true, 0.0))
    };
    for (i, ex) in exits.iter().enumerate() {
        if chain.states[i].absorbing {
            continue;
        }
        let total: f64 = ex.iter().map(|e| e.rate).sum();
        for e in ex {
            let to = match e.to {
                Some(s) => s,
                None => removed_state(&mut chain),
            };
            let origin = match e.source {
                Source::Photo(p) => Origin::Photo(p),
                Source::NoReaction => Origin::NoReaction,
                Source::Reaction(r) => Origin::Reaction(r),
            };
            let mv = chain.add_move_from(i, to, e.rate / total, e.photon, origin);
            if let Some(label) = &e.counted {
                chain.counted.push(Counted {
                    label: label.clone(),
                    mv,
                });
            }
        }
    }
    for (t, tr) in net.transients.iter().enumerate() {
        let vals = &values.channel[t];
        // The model's rule, on the (possibly perturbed) values: fixed fractions normalised when
        // there is no "rest" (only matters when a sensitivity moves one of them), squeezed when
        // they exceed one; rates normalised by the total.
        let input = |ci: usize, b: &Branching| channel_input(b, vals[ci], &c);
        let totals = ShareTotals::of(tr.channels.iter().enumerate().map(|(ci, ch)| input(ci, &ch.branching)));
        for (ci, ch) in tr.channels.iter().enumerate() {
            let p = totals.share(input(ci, &ch.branching));
            if p <= 0.0 {
                continue;
            }
            let to = match channel_target(ns, &ch.target) {
                Some(s) => s,
                None => removed_state(&mut chain),
            };
            let mv = chain.add_move_from(ns + t, to, p, false, Origin::Channel(t, ci));
            if ch.returns {
                let mut label = format!("return {} -> {}", tr.name, target_name(net, &ch.target));
                if let Branching::Quenching { partner, .. } = &ch.branching {
                    label.push_str(&format!(" [quenched by {}]", net.species[*partner].name));
                } else if tr.channels.iter().enumerate().any(|(cj, other)| {
                    cj != ci
                        && other.returns
                        && other.target == ch.target
                        && !matches!(other.branching, Branching::Quenching { .. })
                }) {
                    label.push_str(&format!(" (channel {})", ci + 1));
                }
                chain.counted.push(Counted { label, mv });
            }
        }
        if let Branching::Quenching { partner, .. } = tr
            .channels
            .iter()
            .map(|c| &c.branching)
            .find(|b| matches!(b, Branching::Quenching { .. }))
            .unwrap_or(&Branching::Rest)
        {
            chain.notes.push(format!(
                "quenching of {} taken at [{}] = {}",
                tr.name,
                model.species[*partner],
                fmt_conc(c[*partner].max(0.0))
            ));
        }
    }
    debug_assert!(chain.states.len() >= n_states);
    // No light reaches the sample: no absorption to say how it is counted.
    let lit = model.bins.iter().any(|b| b.flux > 0.0);
    chain.notes.extend(lit.then(|| {
        match settings.light {
            Light::Stirred => format!(
                "photon absorption per molecule: its share of the light absorbed in the well-stirred cell at the {} \
             (background and inner filter included)",
                if settings.concentrations.is_some() {
                    "concentrations the light is shared at (said with the light)"
                } else {
                    "initial concentrations"
                }
            ),
            Light::Thin => "photon absorption per molecule: optically thin limit, σ(λ) × photon irradiance over the \
                        irradiated area"
                .into(),
        }
    }));
    Ok((chain, Parts { exits, c }))
}

/// The start distribution: species `from`, or the initial mixture (species that can change,
/// weighted by their initial concentrations). Returns the distribution and a note.
pub fn start(model: &Model, chain: &Chain, from: Option<&str>) -> Result<(Vec<f64>, String)> {
    let mut pi = vec![0.0; chain.states.len()];
    if let Some(name) = from {
        let i = model.species_index(name).ok_or_else(|| {
            Error::Usage(format!(
                "--from \"{name}\": no such species; the species are {}",
                model.species.join(", ")
            ))
        })?;
        pi[i] = 1.0;
        let note = if chain.states[i].absorbing && model.total_flux() <= 0.0 {
            format!(
                "started from {name}, which has no way out in the dark (no light: {}): it stays as it is",
                model.dark_words()
            )
        } else if chain.states[i].absorbing {
            format!("started from {name}, which has no way out: it stays as it is")
        } else {
            format!("started from one molecule of {name}")
        };
        return Ok((pi, note));
    }
    let mut parts = Vec::new();
    let mut skipped = Vec::new();
    for (i, &c0) in model.initial.iter().enumerate() {
        if c0 <= 0.0 {
            continue;
        }
        if chain.states[i].absorbing {
            skipped.push(model.species[i].clone());
        } else {
            pi[i] = c0;
            parts.push(i);
        }
    }
    let total: f64 = pi.iter().sum();
    if total <= 0.0 && model.total_flux() <= 0.0 {
        return Err(Error::Usage(format!(
            "no light ({}) and nothing in the initial mixture changes in the dark; \
             switch a light on, or name a start with --from SPECIES",
            model.dark_words()
        )));
    }
    if total <= 0.0 {
        return Err(Error::Usage(
            "nothing in the initial mixture can change under these conditions; name a start with --from SPECIES".into(),
        ));
    }
    let shares: Vec<String> = parts
        .iter()
        .map(|&i| format!("{} {} %", model.species[i], crate::units::sig(100.0 * pi[i] / total, 3)))
        .collect();
    let mut note = format!(
        "started from the initial mixture, molecules followed: {}",
        shares.join(", ")
    );
    if !skipped.is_empty() {
        note.push_str(&format!(" (left out, no way out: {})", skipped.join(", ")));
    }
    Ok((pi, note))
}
