//! Rates and yields derived from harmonic frequencies while a network is built: a thermal step
//! or rate channel by transition-state theory (`rate = { barrier, reactant_frequencies,
//! ts_frequencies, ... }`), and the channels of a hot ground state by RRKM k(E) competing with
//! exponential cooling (`hot = { barrier, ts_frequencies }` with the transient's `energy`,
//! `cooling_time` and `frequencies`). Every problem is reported at its key, and a problem in a
//! frequency file at its own line.

use super::build::{Builder, Field, span};
use super::*;
use crate::error::{Error, Origin};
use crate::file::frequencies::{Role, parse_role};
use crate::file::schema;
use crate::rates::hot::{HotReaction, rrkm_yields};
use crate::rates::partition::Modes;
use crate::units::{Quantity, sig};
use toml::Spanned;

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

impl Builder<'_> {
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
                let Some((path, text)) = self.loaded.frequency_files.get(name).cloned() else {
                    self.error(field, &at, format!("\"{name}\" was not read"), None);
                    return None;
                };
                let text = match text {
                    Ok(t) => t,
                    Err(e) => {
                        self.error(
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
                            self.diags.push(d);
                        }
                        None
                    }
                    Err(e) => {
                        self.error(field, &at, e.to_string(), None);
                        None
                    }
                }
            }
            toml::Value::Array(items) => {
                let mut modes = Modes::default();
                let mut imaginary = Vec::new();
                let mut ok = true;
                for (i, item) in items.iter().enumerate() {
                    let x = match item {
                        toml::Value::Float(x) => *x,
                        toml::Value::Integer(x) => *x as f64,
                        other => {
                            self.error(
                                &format!("{field}[{i}]"),
                                &at,
                                format!("{other} is not a number"),
                                Some(LIST_HELP.into()),
                            );
                            ok = false;
                            continue;
                        }
                    };
                    if !x.is_finite() || x == 0.0 {
                        self.error(
                            &format!("{field}[{i}]"),
                            &at,
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
                        self.error(
                            field,
                            &at,
                            "has a negative (imaginary) frequency, but a reactant has only real ones",
                            Some("put the reaction coordinate in ts_frequencies".into()),
                        );
                        ok = false;
                    }
                    (Role::TransitionState, 0) => {
                        self.error(
                            field,
                            &at,
                            "has no imaginary frequency (the reaction coordinate)",
                            Some("give it as a negative number, e.g. -1250".into()),
                        );
                        ok = false;
                    }
                    (Role::TransitionState, n) => {
                        self.error(
                            field,
                            &at,
                            format!("has {n} imaginary (negative) frequencies; a transition state has exactly one"),
                            None,
                        );
                        ok = false;
                    }
                }
                modes.imaginary = imaginary.first().copied();
                if ok && modes.vibrations.is_empty() {
                    self.error(field, &at, "has no real frequencies", Some(LIST_HELP.into()));
                    ok = false;
                }
                ok.then_some((modes, None))
            }
            other => {
                self.error(
                    field,
                    &at,
                    format!("{other} is neither a list of frequencies nor a file name"),
                    Some(LIST_HELP.into()),
                );
                None
            }
        }
    }

    /// A reaction-path degeneracy from its key, else from a file, else 1.
    fn degeneracy(&mut self, field: &str, key: &Option<Spanned<f64>>, from_file: Option<f64>) -> Option<f64> {
        match key {
            Some(d) => {
                let v = *d.get_ref();
                if v.is_finite() && v > 0.0 {
                    Some(v)
                } else {
                    self.error(
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
        let f = Field {
            value: t.get_ref().clone(),
            origin: span(t),
        };
        let v = self.quantity(field, &f, Quantity::MolarEnergy)?;
        if v < 0.0 {
            self.error(
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
            self.warn(
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
    pub(super) fn rate_from_frequencies(
        &mut self,
        field: &str,
        r: &Spanned<schema::Rate>,
        order: u32,
    ) -> Option<RateLaw> {
        let at = span(r);
        let e = r.get_ref();
        let keys = "barrier (the zero-point-corrected E0), reactant_frequencies, ts_frequencies, and optionally \
                    tunnelling = \"wigner\", degeneracy, transmission";
        if order != 1 {
            self.error(
                field,
                &at,
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
            self.error(
                field,
                &at,
                "a rate from frequencies takes no k, prefactor, activation, enthalpy or entropy",
                Some(keys.into()),
            );
            return None;
        }
        let (Some(rf), Some(tf), Some(b)) = (&e.reactant_frequencies, &e.ts_frequencies, &e.barrier) else {
            self.error(
                field,
                &at,
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
                    self.error(
                        &format!("{field}.tunnelling"),
                        &span(t),
                        format!("\"{other}\" is not a tunnelling correction"),
                        Some("\"wigner\" (Wigner's factor for the imaginary frequency) or \"none\"".into()),
                    );
                    None
                }
            },
        };
        let transmission = match &e.transmission {
            Some(k) => {
                let v = *k.get_ref();
                if !(v > 0.0 && v <= 1.0) {
                    self.error(
                        &format!("{field}.transmission"),
                        &span(k),
                        format!("{v} must lie in (0, 1]"),
                        None,
                    );
                    None
                } else {
                    Some(v)
                }
            }
            None => Some(1.0),
        };
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
            self.error(
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
    /// (see `absorbed_photon_energy` in build.rs), used for `energy = "photon"`.
    pub(super) fn hot_yields(
        &mut self,
        field: &str,
        t: &Spanned<schema::Transient>,
        kind: TransientKind,
        specs: &[HotSpec],
        channels: &mut [(Channel, Origin)],
        photon: &super::build::AbsorbedEnergy,
        model: &mut Option<super::HotModel>,
    ) -> bool {
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
                    self.error(
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
            return true;
        }
        let mut ok = true;
        if kind != TransientKind::Hot {
            self.error(
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
            self.error(
                &format!("{field}.channels"),
                &origin,
                "a transient with hot channels needs exactly one other channel, fraction = \"rest\": the molecules \
                 that cool",
                Some("e.g. { to = \"A\", fraction = \"rest\" } back to the ground-state species".into()),
            );
            ok = false;
        }
        let missing = |k: &str| format!("is missing: a transient with hot channels needs {k}");
        let energy = match &e.energy {
            None => {
                self.error(
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
                    self.error(
                        &format!("{field}.energy"),
                        &span(t),
                        format!("\"photon\" is the mean energy of the photons absorbed on the way here, but {why}"),
                        Some("give the energy, e.g. \"85 kcal/mol\"".into()),
                    );
                }
                photon.energy
            }
            Some(t) => self.positive(
                &format!("{field}.energy"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                },
                Quantity::MolarEnergy,
            ),
        };
        let cooling = match &e.cooling_time {
            None => {
                self.error(
                    &format!("{field}.cooling_time"),
                    &at,
                    missing("cooling_time"),
                    Some("the time constant of exponential cooling, e.g. \"5 ps\"".into()),
                );
                None
            }
            Some(t) => self.positive(
                &format!("{field}.cooling_time"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                },
                Quantity::Time,
            ),
        };
        let grain = match &e.grain {
            None => crate::units::parse("10 cm-1", Quantity::MolarEnergy).ok(),
            Some(t) => self.positive(
                &format!("{field}.grain"),
                &Field {
                    value: t.get_ref().clone(),
                    origin: span(t),
                },
                Quantity::MolarEnergy,
            ),
        };
        let reactant = match &e.frequencies {
            None => {
                self.error(
                    &format!("{field}.frequencies"),
                    &at,
                    missing("frequencies (the hot molecule's own)"),
                    Some(LIST_HELP.into()),
                );
                None
            }
            Some(v) => self.frequency_modes(&format!("{field}.frequencies"), v, Role::Reactant),
        };
        let (Some(energy), Some(cooling), Some(grain), Some((reactant, _)), true) =
            (energy, cooling, grain, reactant, ok)
        else {
            return false;
        };
        for s in specs {
            let origin = channels[s.channel].1.clone();
            self.mode_count(
                &format!("{field}.channels[{}].hot.ts_frequencies", s.channel),
                &origin,
                &reactant,
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
        let y = match rrkm_yields(&reactant, &reactions, energy, Some(cooling), grain) {
            Ok(y) => y,
            Err(m) => {
                self.error(
                    &format!("{field}.grain"),
                    &at,
                    format!("the hot-molecule yields cannot be computed: {m}"),
                    None,
                );
                return false;
            }
        };
        *model = Some(super::HotModel {
            reactant: reactant.clone(),
            grain,
            cooling,
            photon_energy: e.energy.as_ref().is_some_and(|t| t.get_ref().trim() == "photon"),
            channels: specs
                .iter()
                .map(|s| super::HotChannel {
                    channel: s.channel,
                    ts: s.ts.clone(),
                    barrier: s.barrier,
                    degeneracy: s.degeneracy,
                })
                .collect(),
        });
        for (s, p) in specs.iter().zip(&y.probabilities) {
            let rate_at_start =
                crate::rates::rrkm::Rrkm::new(&reactant, &s.ts, s.barrier, s.degeneracy, grain, energy + grain)
                    .ok()
                    .and_then(|m| m.rate(energy))
                    .unwrap_or(0.0);
            if s.barrier >= energy {
                let origin = channels[s.channel].1.clone();
                self.warn(
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
