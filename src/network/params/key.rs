//! A parameter's address in a built [`Network`]: [`Key`], parsed once from the user's `--set`
//! spelling (`thermal.NAME.barrier`, `light.NAME.power`, …) and spelled back for display.
//!
//! Parsing resolves names to indices, so setting a value later touches no text. Every parse is
//! counted ([`parses`]) so a test can prove that an inverse problem parses nothing per evaluation.

use super::super::{Branching, Network, PhotoOutcome};
use crate::light::LightKind;
use crate::rates::RateLaw;
use std::sync::atomic::{AtomicUsize, Ordering};

static PARSES: AtomicUsize = AtomicUsize::new(0);

/// How many times [`Key::parse`] has run in this process (for tests that prove an evaluation
/// loop parses no text).
pub fn parses() -> usize {
    PARSES.load(Ordering::Relaxed)
}

/// A field of `[conditions]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ConditionField {
    /// Temperature, K.
    Temperature,
    /// Irradiated volume, m³.
    Volume,
    /// Optical path length, m.
    PathLength,
    /// Irradiated face area, m².
    IrradiatedArea,
    /// Background absorbance (one number replacing a table).
    Background,
}

/// A field of a light source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum LightField {
    /// Radiant power of the whole source, W (replaces a photon flux).
    Power,
    /// Photon flux of the whole source, einstein/s (replaces a power).
    PhotonFlux,
    /// Wavelength of a line, m.
    Wavelength,
    /// Centre of a band, m.
    Centre,
    /// Full width at half maximum of a band, m.
    Fwhm,
    /// Factor on sunlight.
    Scale,
}

/// Where a rate law sits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RateAt {
    /// A thermal step (index into [`Network::thermal`]; a reverse half has its own index).
    Thermal(usize),
    /// A rate or quenching channel of a transient.
    Channel {
        /// Index into [`Network::transients`].
        transient: usize,
        /// Index into its channels.
        channel: usize,
    },
}

/// A field of a rate law.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RateField {
    /// The rate constant itself (replaces the way the rate is given).
    K,
    /// Eyring ΔG‡ (replaces the way the rate is given, keeping κ); E₀ for a rate from frequencies.
    Barrier,
    /// Arrhenius A.
    Prefactor,
    /// Arrhenius Ea.
    Activation,
    /// Eyring ΔH‡.
    Enthalpy,
    /// Eyring ΔS‡.
    Entropy,
    /// Transmission coefficient κ.
    Transmission,
}

impl RateField {
    /// Every field, in the order of [`RATE_FIELDS`](super::RATE_FIELDS).
    pub const ALL: [RateField; 7] = [
        RateField::K,
        RateField::Barrier,
        RateField::Prefactor,
        RateField::Activation,
        RateField::Enthalpy,
        RateField::Entropy,
        RateField::Transmission,
    ];

    /// The word in a key.
    pub fn word(self) -> &'static str {
        match self {
            RateField::K => "k",
            RateField::Barrier => "barrier",
            RateField::Prefactor => "prefactor",
            RateField::Activation => "activation",
            RateField::Enthalpy => "enthalpy",
            RateField::Entropy => "entropy",
            RateField::Transmission => "transmission",
        }
    }

    fn from_word(w: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|f| f.word() == w)
    }

    /// The fields a law written this way answers to (`k` and `barrier` answer for every law).
    pub fn of_law(law: &RateLaw) -> &'static [RateField] {
        use RateField::*;
        match law {
            RateLaw::Constant(_) => &[K, Barrier],
            RateLaw::Arrhenius { .. } => &[K, Barrier, Prefactor, Activation],
            RateLaw::EyringFree { .. } => &[K, Barrier, Transmission],
            RateLaw::EyringEnthalpy { .. } => &[K, Barrier, Enthalpy, Entropy, Transmission],
            RateLaw::Frequencies { .. } => &[K, Barrier, Transmission],
        }
    }
}

/// The address of one settable number of a network.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Key {
    /// A reactor condition.
    Condition(ConditionField),
    /// Initial concentration of a species (index into [`Network::species`]).
    Initial(usize),
    /// A field of a light (index into [`Network::lights`]).
    Light {
        /// Index of the light.
        light: usize,
        /// Which field.
        field: LightField,
    },
    /// Quantum yield of a short-form photo step (one number replacing a table).
    QuantumYield(usize),
    /// Efficiency of a long-form photo step.
    Efficiency(usize),
    /// A field of a rate law.
    Rate {
        /// Where the law sits.
        at: RateAt,
        /// Which field.
        field: RateField,
    },
    /// A numeric fraction of a transient channel.
    Fraction {
        /// Index into [`Network::transients`].
        transient: usize,
        /// Index into its channels.
        channel: usize,
    },
}

/// Split `rest` ("NAME.FIELD") at the last dot, where FIELD is one of `fields`. A name may be
/// written in double quotes, as in a TOML dotted key (`light."blue LED".power`).
fn name_field<'a>(rest: &'a str, fields: &[&str]) -> Option<(&'a str, &'a str)> {
    let (name, field) = rest.rsplit_once('.')?;
    fields.contains(&field).then_some((unquote(name), field))
}

/// `name` without one pair of surrounding double quotes, if it has them.
fn unquote(name: &str) -> &str {
    name.strip_prefix('"').and_then(|n| n.strip_suffix('"')).unwrap_or(name)
}

impl Key {
    /// Parse the user's spelling against `net`, or say what is wrong (with the closest key and
    /// every key of this network when a name is unknown).
    pub fn parse(net: &Network, key: &str) -> Result<Key, String> {
        PARSES.fetch_add(1, Ordering::Relaxed);
        let unknown = |what: &str| {
            let keys = super::keys(net);
            let hint = super::super::suggest::closest(key, keys.iter().map(|s| s.as_str()))
                .map_or(String::new(), |c| format!("; did you mean {c}?"));
            Err(format!(
                "{key}: {what}{hint} (keys of this network: {})",
                keys.join(", ")
            ))
        };
        if let Some(f) = key.strip_prefix("conditions.") {
            let field = match f {
                "temperature" => ConditionField::Temperature,
                "volume" => ConditionField::Volume,
                "path_length" => ConditionField::PathLength,
                "irradiated_area" if net.conditions.irradiated_area.is_none() => {
                    return Err(format!("{key}: the network gives no irradiated area"));
                }
                "irradiated_area" => ConditionField::IrradiatedArea,
                "background" => ConditionField::Background,
                _ => return unknown("no such condition"),
            };
            return Ok(Key::Condition(field));
        }
        if let Some(rest) = key.strip_prefix("species.") {
            let Some((name, "initial")) = name_field(rest, &["initial"]) else {
                return unknown("a species takes only `initial`");
            };
            return match net.species_index(name) {
                Some(i) => Ok(Key::Initial(i)),
                None => unknown(&format!("no species called \"{name}\"")),
            };
        }
        if let Some(rest) = key.strip_prefix("light.") {
            let fields = ["power", "photon_flux", "wavelength", "centre", "fwhm", "scale"];
            let Some((name, field)) = name_field(rest, &fields) else {
                return unknown("a light takes power, photon_flux, wavelength, centre, fwhm or scale");
            };
            let Some(light) = net.lights.iter().position(|l| l.name == name) else {
                return unknown(&format!("no light called \"{name}\""));
            };
            let l = &net.lights[light];
            let field = match (field, &l.kind, l.intensity) {
                ("power", _, Some(_)) => LightField::Power,
                ("photon_flux", _, Some(_)) => LightField::PhotonFlux,
                ("wavelength", LightKind::Line { .. }, _) => LightField::Wavelength,
                ("centre", LightKind::Band { .. }, _) => LightField::Centre,
                ("fwhm", LightKind::Band { .. }, _) => LightField::Fwhm,
                ("scale", LightKind::Sun { .. }, _) => LightField::Scale,
                _ => return Err(format!("{key}: `{field}` does not apply to the light \"{name}\"")),
            };
            return Ok(Key::Light { light, field });
        }
        if let Some(rest) = key.strip_prefix("photo.") {
            let Some((name, field)) = name_field(rest, &["quantum_yield", "efficiency"]) else {
                return unknown("a photo step takes quantum_yield (short form) or efficiency (long form)");
            };
            let Some(i) = net.photo.iter().position(|s| s.name == name) else {
                return unknown(&format!("no photo step called \"{name}\""));
            };
            return match (field, &net.photo[i].outcome) {
                ("quantum_yield", PhotoOutcome::Products(_)) => Ok(Key::QuantumYield(i)),
                ("efficiency", PhotoOutcome::Transient(_)) => Ok(Key::Efficiency(i)),
                ("quantum_yield", _) => Err(format!(
                    "{key}: \"{name}\" is a long-form step; set photo.{name}.efficiency or the transient's channels"
                )),
                _ => Err(format!(
                    "{key}: \"{name}\" is a short-form step; set photo.{name}.quantum_yield"
                )),
            };
        }
        if let Some(rest) = key.strip_prefix("thermal.") {
            let words: Vec<&str> = RateField::ALL.iter().map(|f| f.word()).collect();
            let Some((head, field)) = name_field(rest, &words) else {
                return unknown(&format!("a thermal step takes a rate field: {}", words.join(", ")));
            };
            let field = RateField::from_word(field).expect("listed");
            let (name, reverse) = match head.strip_suffix(".reverse").map(unquote) {
                Some(n) if net.thermal.iter().any(|s| s.name == n && s.reverse_of.is_none()) => (n, true),
                _ => (unquote(head), false),
            };
            let Some(fwd) = net
                .thermal
                .iter()
                .position(|s| s.name == name && s.reverse_of.is_none())
            else {
                return unknown(&format!("no thermal step called \"{name}\""));
            };
            let i = if reverse {
                match net.thermal.iter().position(|s| s.reverse_of == Some(fwd)) {
                    Some(i) => i,
                    None => return Err(format!("{key}: \"{name}\" is one-way")),
                }
            } else {
                fwd
            };
            if !RateField::of_law(&net.thermal[i].rate).contains(&field) {
                return Err(format!(
                    "{key}: the rate of \"{}\" is not given with `{}`",
                    net.thermal[i].name,
                    field.word()
                ));
            }
            return Ok(Key::Rate {
                at: RateAt::Thermal(i),
                field,
            });
        }
        if let Some(rest) = key.strip_prefix("transient.") {
            let parsed = rest.rsplit_once(".channels[").and_then(|(name, tail)| {
                let (j, field) = tail.split_once("].")?;
                Some((unquote(name), j.parse::<usize>().ok()?, field))
            });
            let Some((name, channel, field)) = parsed else {
                return unknown("expected transient.NAME.channels[J].FIELD");
            };
            let Some(transient) = net.transient_index(name) else {
                return unknown(&format!("no transient called \"{name}\""));
            };
            let tr = &net.transients[transient];
            let Some(ch) = tr.channels.get(channel) else {
                return Err(format!(
                    "{key}: \"{name}\" has {} channels (counted from 0)",
                    tr.channels.len()
                ));
            };
            let at = RateAt::Channel { transient, channel };
            return match (field, &ch.branching) {
                ("fraction", Branching::Fraction(_)) => Ok(Key::Fraction { transient, channel }),
                ("fraction", Branching::Rest) => Err(format!(
                    "{key}: this channel takes the rest; set the fractions of the other channels"
                )),
                (f, Branching::Rate { law, .. } | Branching::Quenching { law, .. }) => {
                    match RateField::from_word(f).filter(|r| RateField::of_law(law).contains(r)) {
                        Some(field) => Ok(Key::Rate { at, field }),
                        None => Err(format!("{key}: this channel's rate is not given with `{f}`")),
                    }
                }
                (f, _) => Err(format!("{key}: this channel has a fixed fraction, not `{f}`")),
            };
        }
        unknown("unknown key")
    }

    /// The user's spelling of this key in `net` (what `--set`, `--free` and `[[uncertain]]` use).
    pub fn spell(&self, net: &Network) -> String {
        match *self {
            Key::Condition(f) => format!(
                "conditions.{}",
                match f {
                    ConditionField::Temperature => "temperature",
                    ConditionField::Volume => "volume",
                    ConditionField::PathLength => "path_length",
                    ConditionField::IrradiatedArea => "irradiated_area",
                    ConditionField::Background => "background",
                }
            ),
            Key::Initial(i) => format!("species.{}.initial", net.species[i].name),
            Key::Light { light, field } => format!(
                "light.{}.{}",
                net.lights[light].name,
                match field {
                    LightField::Power => "power",
                    LightField::PhotonFlux => "photon_flux",
                    LightField::Wavelength => "wavelength",
                    LightField::Centre => "centre",
                    LightField::Fwhm => "fwhm",
                    LightField::Scale => "scale",
                }
            ),
            Key::QuantumYield(i) => format!("photo.{}.quantum_yield", net.photo[i].name),
            Key::Efficiency(i) => format!("photo.{}.efficiency", net.photo[i].name),
            Key::Rate { at, field } => format!("{}.{}", rate_prefix(net, at), field.word()),
            Key::Fraction { transient, channel } => {
                format!(
                    "transient.{}.channels[{channel}].fraction",
                    net.transients[transient].name
                )
            }
        }
    }

    /// What the key changes, without the field: two keys with the same target write the same
    /// rate law or the same light intensity, so one replaces the other.
    pub fn target(&self) -> Key {
        match *self {
            Key::Rate { at, .. } => Key::Rate {
                at,
                field: RateField::K,
            },
            Key::Light {
                light,
                field: LightField::PhotonFlux,
            } => Key::Light {
                light,
                field: LightField::Power,
            },
            k => k,
        }
    }
}

/// `thermal.NAME`, `thermal.NAME.reverse` or `transient.NAME.channels[J]`.
pub(super) fn rate_prefix(net: &Network, at: RateAt) -> String {
    match at {
        RateAt::Thermal(i) => match net.thermal[i].reverse_of {
            Some(f) => format!("thermal.{}.reverse", net.thermal[f].name),
            None => format!("thermal.{}", net.thermal[i].name),
        },
        RateAt::Channel { transient, channel } => {
            format!("transient.{}.channels[{channel}]", net.transients[transient].name)
        }
    }
}
