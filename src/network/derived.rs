//! Rates and yields derived from harmonic frequencies while a network is built: a thermal step
//! or rate channel by transition-state theory (`rate = { barrier, reactant_frequencies,
//! ts_frequencies, ... }`), and the channels of a hot ground state by RRKM k(E) competing with
//! exponential cooling (`hot = { barrier, ts_frequencies }` with the transient's `energy`,
//! `cooling_time` and `frequencies`). Every problem is reported at its key, and a problem in a
//! frequency file at its own line.

use super::diagnostics::{Field, Sink, span};
use super::*;
use crate::error::{Error, Origin};
use crate::file::frequencies::{Role, parse_role};
use crate::file::schema;
use crate::light::LightSource;
use crate::rates::hot::{HotReaction, rrkm_yields};
use crate::rates::partition::Modes;
use crate::units::{Quantity, sig};
use std::collections::BTreeMap;
use std::path::PathBuf;
use toml::Spanned;

/// The hot molecule of a transient with hot channels.
struct HotMolecule {
    /// Starting energy, J/mol.
    energy: f64,
    /// Time constant of exponential cooling, s.
    cooling: f64,
    /// Energy grain of the state counts, J/mol.
    grain: f64,
    /// Its own vibrational modes.
    reactant: Modes,
}

/// A hot channel read from its block, before the yields are computed.
pub(super) struct HotSpec {
    /// Index of the channel in its transient.
    pub(super) channel: usize,
    /// Transition-state modes.
    pub(super) ts: Modes,
    /// E₀, J/mol.
    pub(super) barrier: f64,
    /// σ.
    pub(super) degeneracy: f64,
}

const LIST_HELP: &str = "a list of numbers in cm-1, e.g. [3050, 1620, 845.5] (the transition state's reaction \
                         coordinate as a negative number), or the name of a frequency file relative to the network \
                         file (see README, *Rates from frequencies*)";

/// Rates and yields derived from frequencies, reporting into a build's diagnostics.
pub(super) struct Derived<'s, 'a> {
    /// Where problems go.
    pub(super) sink: &'s mut Sink<'a>,
    /// The frequency files the network names, as read by `file::load`.
    pub(super) frequency_files: &'a BTreeMap<String, (PathBuf, std::result::Result<String, String>)>,
}

impl Derived<'_, '_> {
    /// The modes of `role` from an inline list or a frequency file, with the file's degeneracy.
    pub(super) fn frequency_modes(
        &mut self,
        field: &str,
        v: &Spanned<toml::Value>,
        role: Role,
    ) -> Option<(Modes, Option<f64>)> {
        let at = span(v);
        match v.get_ref() {
            toml::Value::String(name) => {
                let Some((path, text)) = self.frequency_files.get(name).cloned() else {
                    self.sink.error(field, &at, format!("\"{name}\" was not read"), None);
                    return None;
                };
                let text = match text {
                    Ok(t) => t,
                    Err(e) => {
                        self.sink.error(
                            field,
                            &at,
                            format!("cannot read the frequency file \"{name}\" ({}): {e}", path.display()),
                            Some("the path is relative to the network file".into()),
                        );
                        return None;
                    }
                };
                match parse_role(&path, &text, role) {
                    Ok(m) => Some(m),
                    Err(Error::Invalid(ds)) => {
                        for mut d in ds {
                            d.field = format!("{field} -> {}", d.field);
                            self.sink.push(d);
                        }
                        None
                    }
                    Err(e) => {
                        self.sink.error(field, &at, e.to_string(), None);
                        None
                    }
                }
            }
            toml::Value::Array(items) => self.inline_modes(field, &at, items, role),
            other => {
                self.sink.error(
                    field,
                    &at,
                    format!("{other} is neither a list of frequencies nor a file name"),
                    Some(LIST_HELP.into()),
                );
                None
            }
        }
    }

    /// The modes of `role` from an inline list of wavenumbers, cm⁻¹ (the imaginary one negative).
    fn inline_modes(
        &mut self,
        field: &str,
        at: &Origin,
        items: &[toml::Value],
        role: Role,
    ) -> Option<(Modes, Option<f64>)> {
        let mut modes = Modes::default();
        let mut imaginary = Vec::new();
        let mut ok = true;
        for (i, item) in items.iter().enumerate() {
            let x = match item {
                toml::Value::Float(x) => *x,
                toml::Value::Integer(x) => *x as f64,
                other => {
                    self.sink.error(
                        &format!("{field}[{i}]"),
                        at,
                        format!("{other} is not a number"),
                        Some(LIST_HELP.into()),
                    );
                    ok = false;
                    continue;
                }
            };
            if !x.is_finite() || x == 0.0 {
                self.sink.error(
                    &format!("{field}[{i}]"),
                    at,
                    format!("{x} is not a usable frequency (finite, not zero)"),
                    Some(LIST_HELP.into()),
                );
                ok = false;
                continue;
            }
            let e = crate::units::parse(&format!("{} cm-1", x.abs()), Quantity::MolarEnergy).ok()?;
            if x < 0.0 {
                imaginary.push(e);
            } else {
                modes.vibrations.push(e);
            }
        }
        match (role, imaginary.len()) {
            (Role::Reactant, 0) | (Role::TransitionState, 1) => {}
            (Role::Reactant, _) => {
                self.sink.error(
                    field,
                    at,
                    "has a negative (imaginary) frequency, but a reactant has only real ones",
                    Some("put the reaction coordinate in ts_frequencies".into()),
                );
                ok = false;
            }
            (Role::TransitionState, 0) => {
                self.sink.error(
                    field,
                    at,
                    "has no imaginary frequency (the reaction coordinate)",
                    Some("give it as a negative number, e.g. -1250".into()),
                );
                ok = false;
            }
            (Role::TransitionState, n) => {
                self.sink.error(
                    field,
                    at,
                    format!("has {n} imaginary (negative) frequencies; a transition state has exactly one"),
                    None,
                );
                ok = false;
            }
        }
        modes.imaginary = imaginary.first().copied();
        if ok && modes.vibrations.is_empty() {
            self.sink
                .error(field, at, "has no real frequencies", Some(LIST_HELP.into()));
            ok = false;
        }
        ok.then_some((modes, None))
    }

    /// A reaction-path degeneracy from its key, else from a file, else 1.
    fn degeneracy(&mut self, field: &str, key: &Option<Spanned<f64>>, from_file: Option<f64>) -> Option<f64> {
        match key {
            Some(d) => {
                let v = *d.get_ref();
                if v.is_finite() && v > 0.0 {
                    Some(v)
                } else {
                    self.sink.error(
                        field,
                        &span(d),
                        format!("{v} is not a positive number"),
                        Some("the number of equivalent reaction paths, e.g. 2".into()),
                    );
                    None
                }
            }
            None => Some(from_file.unwrap_or(1.0)),
        }
    }

    /// A zero-point-corrected barrier E₀ (≥ 0).
    fn e0(&mut self, field: &str, t: &schema::Text) -> Option<f64> {
        let f = Field::of(t);
        let v = self.sink.quantity(field, &f, Quantity::MolarEnergy)?;
        if v < 0.0 {
            self.sink.error(
                field,
                &f.origin,
                format!(
                    "\"{}\" is negative; a zero-point-corrected barrier is zero or more",
                    f.value
                ),
                None,
            );
            return None;
        }
        Some(v)
    }

    /// Warn when the transition state does not have one real mode fewer than the reactant.
    fn mode_count(&mut self, field: &str, at: &Origin, reactant: &Modes, ts: &Modes) {
        if ts.vibrations.len() + 1 != reactant.vibrations.len() {
            self.sink.warn(
                field,
                at,
                format!(
                    "the reactant has {} real frequencies and the transition state {}",
                    reactant.vibrations.len(),
                    ts.vibrations.len()
                ),
                Some("usually the transition state has one fewer: the reaction coordinate, given as imaginary".into()),
            );
        }
    }

    /// `rate = { barrier, reactant_frequencies, ts_frequencies, tunnelling, degeneracy,
    /// transmission }`: transition-state theory, unimolecular only.
    /// `e` is the rate with its `--set` values already put in; `at` is where the rate was written.
    pub(super) fn rate_from_frequencies(
        &mut self,
        field: &str,
        at: &Origin,
        e: &schema::Rate,
        order: u32,
    ) -> Option<RateLaw> {
        let keys = "barrier (the zero-point-corrected E0), reactant_frequencies, ts_frequencies, and optionally \
                    tunnelling = \"wigner\", degeneracy, transmission";
        if order != 1 {
            self.sink.error(
                field,
                at,
                format!("a rate from frequencies is for unimolecular steps; this one has molecularity {order}"),
                Some("give a bimolecular rate as k, Arrhenius or Eyring ΔG‡ (which refers to 1 M)".into()),
            );
            return None;
        }
        if e.k.is_some()
            || e.prefactor.is_some()
            || e.activation.is_some()
            || e.enthalpy.is_some()
            || e.entropy.is_some()
        {
            self.sink.error(
                field,
                at,
                "a rate from frequencies takes no k, prefactor, activation, enthalpy or entropy",
                Some(keys.into()),
            );
            return None;
        }
        let (Some(rf), Some(tf), Some(b)) = (&e.reactant_frequencies, &e.ts_frequencies, &e.barrier) else {
            self.sink.error(
                field,
                at,
                "a rate from frequencies needs barrier, reactant_frequencies and ts_frequencies",
                Some(keys.into()),
            );
            return None;
        };
        let reactant = self.frequency_modes(&format!("{field}.reactant_frequencies"), rf, Role::Reactant);
        let ts = self.frequency_modes(&format!("{field}.ts_frequencies"), tf, Role::TransitionState);
        let barrier = self.e0(&format!("{field}.barrier"), b);
        let wigner = match &e.tunnelling {
            None => Some(false),
            Some(t) => match t.get_ref().trim() {
                "wigner" => Some(true),
                "none" => Some(false),
                other => {
                    self.sink.error(
                        &format!("{field}.tunnelling"),
                        &span(t),
                        format!("\"{other}\" is not a tunnelling correction"),
                        Some("\"wigner\" (Wigner's factor for the imaginary frequency) or \"none\"".into()),
                    );
                    None
                }
            },
        };
        let transmission = self.sink.transmission(field, &e.transmission);
        let ((reactant, d1), (ts, d2)) = (reactant?, ts?);
        let degeneracy = self.degeneracy(&format!("{field}.degeneracy"), &e.degeneracy, d2.or(d1))?;
        self.mode_count(&format!("{field}.ts_frequencies"), &span(tf), &reactant, &ts);
        Some(RateLaw::Frequencies {
            reactant,
            ts,
            barrier: barrier?,
            degeneracy,
            transmission: transmission?,
            wigner: wigner?,
        })
    }

    /// `hot = { barrier, ts_frequencies, degeneracy }` of channel `channel`.
    pub(super) fn hot_spec(&mut self, field: &str, h: &Spanned<schema::HotChannel>, channel: usize) -> Option<HotSpec> {
        let at = span(h);
        let e = h.get_ref();
        let (Some(b), Some(tf)) = (&e.barrier, &e.ts_frequencies) else {
            self.sink.error(
                field,
                &at,
                "a hot channel needs barrier and ts_frequencies",
                Some(
                    "e.g. hot = { barrier = \"24 kcal/mol\", ts_frequencies = \"ring-closure.txt\" }, with energy, \
                     cooling_time and frequencies on the transient"
                        .into(),
                ),
            );
            return None;
        };
        let barrier = self.e0(&format!("{field}.barrier"), b);
        let ts = self.frequency_modes(&format!("{field}.ts_frequencies"), tf, Role::TransitionState);
        let (ts, d) = ts?;
        let degeneracy = self.degeneracy(&format!("{field}.degeneracy"), &e.degeneracy, d)?;
        Some(HotSpec {
            channel,
            ts,
            barrier: barrier?,
            degeneracy,
        })
    }

    /// Compute the yields of the hot channels of transient `t` (file entry) and put them into
    /// `channels`. `photon` is the mean molar energy of the photons its absorbers take up, J/mol
    /// (see [`absorbed_photon_energy`]), used for `energy = "photon"`. Returns whether they
    /// could be computed, and the hot molecule's model (kept in the network so a parameter
    /// change can recompute the yields) when it was read.
    pub(super) fn hot_yields(
        &mut self,
        field: &str,
        t: &Spanned<schema::Transient>,
        kind: TransientKind,
        specs: &[HotSpec],
        channels: &mut [(Channel, Origin)],
        photon: &AbsorbedEnergy,
    ) -> (bool, Option<HotModel>) {
        let at = span(t);
        let e = t.get_ref();
        let transient_keys = [
            ("energy", e.energy.is_some()),
            ("cooling_time", e.cooling_time.is_some()),
            ("frequencies", e.frequencies.is_some()),
            ("grain", e.grain.is_some()),
        ];
        if specs.is_empty() {
            for (key, given) in transient_keys {
                if given {
                    self.sink.error(
                        &format!("{field}.{key}"),
                        &at,
                        "applies only to a hot ground state with hot channels",
                        Some(
                            "add a channel with hot = { barrier = ..., ts_frequencies = ... }, or remove the key"
                                .into(),
                        ),
                    );
                }
            }
            return (true, None);
        }
        let mut ok = true;
        if kind != TransientKind::Hot {
            self.sink.error(
                &format!("{field}.kind"),
                &at,
                format!("has hot channels but is of kind \"{}\"", kind.word()),
                Some("hot channels belong to a vibrationally hot ground state: kind = \"hot\"".into()),
            );
            ok = false;
        }
        let others: Vec<usize> = (0..channels.len())
            .filter(|i| !specs.iter().any(|s| s.channel == *i))
            .collect();
        let rests = others
            .iter()
            .filter(|&&i| channels[i].0.branching == Branching::Rest)
            .count();
        if rests != 1 || others.len() != 1 {
            let origin = others.first().map_or(at.clone(), |&i| channels[i].1.clone());
            self.sink.error(
                &format!("{field}.channels"),
                &origin,
                "a transient with hot channels needs exactly one other channel, fraction = \"rest\": the molecules \
                 that cool",
                Some("e.g. { to = \"A\", fraction = \"rest\" } back to the ground-state species".into()),
            );
            ok = false;
        }
        let molecule = self.hot_molecule(field, t, photon);
        let (Some(m), true) = (molecule, ok) else {
            return (false, None);
        };
        let put = self.put_hot_yields(field, &at, specs, channels, &m);
        let model = Some(HotModel {
            reactant: m.reactant,
            grain: m.grain,
            cooling: m.cooling,
            photon_energy: e.energy.as_ref().is_some_and(|t| t.get_ref().trim() == "photon"),
            channels: specs
                .iter()
                .map(|s| HotChannel {
                    channel: s.channel,
                    ts: s.ts.clone(),
                    barrier: s.barrier,
                    degeneracy: s.degeneracy,
                })
                .collect(),
        });
        (put, model)
    }

    /// The hot molecule of transient `t`: its starting energy, cooling time, grain and own
    /// frequencies, each missing or bad one reported.
    fn hot_molecule(
        &mut self,
        field: &str,
        t: &Spanned<schema::Transient>,
        photon: &AbsorbedEnergy,
    ) -> Option<HotMolecule> {
        let at = span(t);
        let e = t.get_ref();
        let missing = |k: &str| format!("is missing: a transient with hot channels needs {k}");
        let energy = match &e.energy {
            None => {
                self.sink.error(
                    &format!("{field}.energy"),
                    &at,
                    missing("energy"),
                    Some("\"photon\" (the mean incident photon energy) or an energy such as \"85 kcal/mol\"".into()),
                );
                None
            }
            Some(t) if t.get_ref().trim() == "photon" => {
                if photon.energy.is_none() {
                    let why = if photon.absorbers.is_empty() {
                        "no photochemical step leads to this transient".to_string()
                    } else {
                        format!(
                            "its absorber(s) ({}) take up none of the light",
                            photon.absorbers.join(", ")
                        )
                    };
                    self.sink.error(
                        &format!("{field}.energy"),
                        &span(t),
                        format!("\"photon\" is the mean energy of the photons absorbed on the way here, but {why}"),
                        Some("give the energy, e.g. \"85 kcal/mol\"".into()),
                    );
                }
                photon.energy
            }
            Some(t) => self.sink.positive(
                &format!("{field}.energy"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                    key: None,
                },
                Quantity::MolarEnergy,
            ),
        };
        let cooling = match &e.cooling_time {
            None => {
                self.sink.error(
                    &format!("{field}.cooling_time"),
                    &at,
                    missing("cooling_time"),
                    Some("the time constant of exponential cooling, e.g. \"5 ps\"".into()),
                );
                None
            }
            Some(t) => self.sink.positive(
                &format!("{field}.cooling_time"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                    key: None,
                },
                Quantity::Time,
            ),
        };
        let grain = match &e.grain {
            None => crate::units::parse("10 cm-1", Quantity::MolarEnergy).ok(),
            Some(t) => self.sink.positive(
                &format!("{field}.grain"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                    key: None,
                },
                Quantity::MolarEnergy,
            ),
        };
        let reactant = match &e.frequencies {
            None => {
                self.sink.error(
                    &format!("{field}.frequencies"),
                    &at,
                    missing("frequencies (the hot molecule's own)"),
                    Some(LIST_HELP.into()),
                );
                None
            }
            Some(v) => self.frequency_modes(&format!("{field}.frequencies"), v, Role::Reactant),
        };
        let (Some(energy), Some(cooling), Some(grain), Some((reactant, _))) = (energy, cooling, grain, reactant) else {
            return None;
        };
        Some(HotMolecule {
            energy,
            cooling,
            grain,
            reactant,
        })
    }

    /// The RRKM yields of the hot channels `specs` of molecule `m`, put into `channels`.
    fn put_hot_yields(
        &mut self,
        field: &str,
        at: &Origin,
        specs: &[HotSpec],
        channels: &mut [(Channel, Origin)],
        m: &HotMolecule,
    ) -> bool {
        let (energy, cooling, grain, reactant) = (m.energy, m.cooling, m.grain, &m.reactant);
        for s in specs {
            let origin = channels[s.channel].1.clone();
            self.mode_count(
                &format!("{field}.channels[{}].hot.ts_frequencies", s.channel),
                &origin,
                reactant,
                &s.ts,
            );
        }
        let reactions: Vec<HotReaction> = specs
            .iter()
            .map(|s| HotReaction {
                ts: &s.ts,
                barrier: s.barrier,
                degeneracy: s.degeneracy,
            })
            .collect();
        let y = match rrkm_yields(reactant, &reactions, energy, Some(cooling), grain) {
            Ok(y) => y,
            Err(m) => {
                self.sink.error(
                    &format!("{field}.grain"),
                    at,
                    format!("the hot-molecule yields cannot be computed: {m}"),
                    None,
                );
                return false;
            }
        };
        for (s, p) in specs.iter().zip(&y.probabilities) {
            let rate_at_start =
                crate::rates::rrkm::Rrkm::new(reactant, &s.ts, s.barrier, s.degeneracy, grain, energy + grain)
                    .ok()
                    .and_then(|m| m.rate(energy))
                    .unwrap_or(0.0);
            if s.barrier >= energy {
                let origin = channels[s.channel].1.clone();
                self.sink.warn(
                    &format!("{field}.channels[{}].hot.barrier", s.channel),
                    &origin,
                    format!(
                        "E0 = {} kJ/mol is not below the starting energy {} kJ/mol: the channel never opens",
                        sig(s.barrier / 1000.0, 4),
                        sig(energy / 1000.0, 4)
                    ),
                    None,
                );
            }
            channels[s.channel].0.branching = Branching::Hot {
                fraction: *p,
                barrier: s.barrier,
                energy,
                cooling,
                rate_at_start,
            };
        }
        true
    }
}

/// The mean molar energy of the photons that lead to one transient (for `energy = "photon"`).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct AbsorbedEnergy {
    /// Mean molar photon energy, J/mol; None when no absorbed photon leads there.
    pub energy: Option<f64>,
    /// Names of the absorbing species of the photochemical steps that reach the transient.
    pub absorbers: Vec<String>,
}

impl AbsorbedEnergy {
    /// The weighting in words, for `check`.
    pub fn describe(&self) -> String {
        format!(
            "starting energy = mean energy of the photons taken up by {} on the way here, each wavelength bin \
             weighted by ε(λ)·Φ(λ)·q(λ) (optically thin; Φ the step's efficiency or quantum yield)",
            if self.absorbers.is_empty() {
                "(no absorber)".to_string()
            } else {
                self.absorbers.join(", ")
            }
        )
    }
}

/// For every transient, the mean molar energy of the photons that its absorbers take up: the
/// photochemical steps whose transient reaches it (directly or through other transients'
/// channels) count, each wavelength bin of every light weighted by ε_absorber(λ) · Φ_step(λ) ·
/// q(λ) (q the bin's photon flux, einstein/s; Φ zero outside the step's range). This is the
/// optically thin weighting: what each absorber takes up per molecule, whatever its
/// concentration and the inner filter of others.
pub(super) fn absorbed_photon_energy(
    doc: &schema::NetworkFile,
    heads: &[(String, TransientKind)],
    lights: &[LightSource],
    species: &[Species],
    photo: &[PhotoStep],
) -> Vec<AbsorbedEnergy> {
    let n = heads.len();
    // Transient -> transient edges straight from the file (the built channels come later).
    let next: Vec<Vec<usize>> = doc
        .transient
        .iter()
        .map(|t| {
            t.get_ref()
                .channels
                .iter()
                .filter_map(|c| {
                    let to = c.get_ref().to.as_ref()?.get_ref().trim().to_string();
                    heads.iter().position(|h| !h.0.is_empty() && h.0 == to)
                })
                .collect()
        })
        .collect();
    let reach = |from: usize| {
        let mut seen = vec![false; n];
        let mut stack = vec![from];
        while let Some(j) = stack.pop() {
            if j < n && !seen[j] {
                seen[j] = true;
                stack.extend(next.get(j).into_iter().flatten().copied());
            }
        }
        seen
    };
    let steps: Vec<(&PhotoStep, Vec<bool>)> = photo
        .iter()
        .filter_map(|s| match s.outcome {
            PhotoOutcome::Transient(k) => Some((s, reach(k))),
            PhotoOutcome::Products(_) => None,
        })
        .collect();
    (0..n)
        .map(|i| {
            let leading: Vec<&PhotoStep> = steps.iter().filter(|(_, r)| r[i]).map(|(s, _)| *s).collect();
            let mut absorbers: Vec<String> = Vec::new();
            for s in &leading {
                if let Some(sp) = species.get(s.absorber)
                    && !absorbers.contains(&sp.name)
                {
                    absorbers.push(sp.name.clone());
                }
            }
            AbsorbedEnergy {
                energy: mean_photon_energy(lights, species, &leading),
                absorbers,
            }
        })
        .collect()
}

/// The mean molar energy (J/mol) of the photons the photochemical steps `leading` take up from
/// `lights`: each wavelength bin weighted by ε(λ)·Φ(λ)·q(λ) of every step (optically thin; Φ the
/// step's efficiency or quantum yield). None when none is taken up. When every light is off (a
/// dark run) no photon reaches the transient, and the energy is the one the same lights would
/// bring shining ([`LightSource::shining`]: the shape of each spectrum at unit intensity), so a
/// network valid in the light stays valid in the dark.
pub(crate) fn mean_photon_energy(lights: &[LightSource], species: &[Species], leading: &[&PhotoStep]) -> Option<f64> {
    if lights.iter().flat_map(|l| &l.bins).all(|b| b.flux <= 0.0) {
        let shining: Vec<LightSource> = lights.iter().map(LightSource::shining).collect();
        if shining.iter().flat_map(|l| &l.bins).any(|b| b.flux > 0.0) {
            return weighted_photon_energy(&shining, species, leading);
        }
    }
    weighted_photon_energy(lights, species, leading)
}

/// [`mean_photon_energy`] under `lights` as they are.
fn weighted_photon_energy(lights: &[LightSource], species: &[Species], leading: &[&PhotoStep]) -> Option<f64> {
    let (mut w, mut we) = (0.0, 0.0);
    for b in lights.iter().flat_map(|l| &l.bins) {
        let take: f64 = leading
            .iter()
            .map(|s| {
                let eps = species.get(s.absorber).and_then(|sp| sp.epsilon.as_ref());
                eps.map_or(0.0, |e| e.at(b.wavelength)) * s.yield_at(b.wavelength)
            })
            .sum::<f64>()
            * b.flux;
        w += take;
        we += take * crate::units::constants::molar_photon_energy(b.wavelength);
    }
    (w > 0.0 && we.is_finite()).then(|| we / w)
}
