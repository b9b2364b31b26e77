//! Targets: a condition on one species, written plainly.
//!
//! ```text
//! product > 90 %          yield of product relative to the limiting reagent (1:1)
//! product > 90 % of A     yield relative to A's initial concentration
//! A < 10 %                A falls to 10 % of its own initial concentration
//! A < 10 µM               an absolute level (any concentration unit)
//! product >= 5 mM
//! ```
//! `<` and `<=` (and `>` and `>=`) mean the same thing: the level is crossed at one instant,
//! found by root finding in the integrator. The same reader serves `simulate --stop-when`.

use crate::error::{Error, Result};
use crate::kinetics::Event;
use crate::model::Model;
use crate::units::{self, Quantity};

/// Which way the species must cross its level.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Direction {
    /// Rise to the level (`>`).
    Above,
    /// Fall to the level (`<`).
    Below,
}

/// How the level was given.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub enum Basis {
    /// A concentration.
    Absolute,
    /// A percentage of another species' initial concentration (a yield, 1:1 stoichiometry).
    YieldOf {
        /// The reference species.
        reference: String,
        /// Fraction (0.9 for 90 %).
        fraction: f64,
        /// True when the reference was chosen as the limiting reagent (not named).
        chosen: bool,
    },
    /// A percentage of the species' own initial concentration.
    OfInitial {
        /// Fraction (0.1 for 10 %).
        fraction: f64,
    },
}

/// A parsed target on a model.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Target {
    /// As written.
    pub text: String,
    /// Species index.
    #[serde(skip)]
    pub species: usize,
    /// Species name.
    pub species_name: String,
    /// Rise or fall.
    pub direction: Direction,
    /// Level, mol/L.
    pub level: f64,
    /// How the level was given.
    pub basis: Basis,
}

impl Target {
    /// The integrator event that stops at this target.
    pub fn event(&self) -> Event {
        Event {
            species: self.species,
            level: self.level,
        }
    }

    /// True when concentration `c` (mol/L) meets the target.
    pub fn met_by(&self, c: f64) -> bool {
        match self.direction {
            Direction::Above => c >= self.level,
            Direction::Below => c <= self.level,
        }
    }

    /// Concentration `c` (mol/L) of the target species as the target's percentage counts it
    /// (a fraction: 0.442 for 44.2 %), given its start `x0` (mol/L): the yield on the
    /// reference, or the share of its own start; None for a target given as a concentration.
    /// The reference's start is read back from the level (level = x0 + fraction × r0).
    pub fn as_fraction(&self, c: f64, x0: f64) -> Option<f64> {
        match self.basis {
            Basis::Absolute => None,
            Basis::YieldOf { fraction, .. } => {
                let r0 = (self.level - x0) / fraction;
                (r0 > 0.0 && r0.is_finite()).then(|| (c - x0) / r0)
            }
            Basis::OfInitial { .. } => (x0 > 0.0).then(|| c / x0),
        }
    }
}

/// The limiting reagent: the species with the smallest positive initial concentration below
/// 1 mol/L (solvents excluded) among those some step consumes, or None.
pub fn limiting_reagent(model: &Model) -> Option<usize> {
    let consumed = consumed(model);
    (0..model.n_species())
        .filter(|&i| model.initial[i] > 0.0 && model.initial[i] < 1.0 && consumed[i])
        .min_by(|&a, &b| model.initial[a].total_cmp(&model.initial[b]))
}

/// For each species, whether some reaction or photochemical outcome consumes it (a negative net
/// coefficient).
pub fn consumed(model: &Model) -> Vec<bool> {
    let mut c = vec![false; model.n_species()];
    for net in model
        .reactions
        .iter()
        .map(|r| &r.net)
        .chain(model.outcomes.iter().map(|o| &o.net))
    {
        for &(s, v) in net {
            if v < 0.0 {
                c[s] = true;
            }
        }
    }
    c
}

/// Read a target such as "product > 90 %" or "A < 10 µM" on `model`; a target the start
/// already meets is an error (use [`read`] where that is an answer, time zero).
pub fn parse(text: &str, model: &Model) -> Result<Target> {
    let t = read(text, model)?;
    let x0 = model.initial[t.species];
    if t.met_by(x0) {
        return Err(Error::Usage(format!(
            "target \"{text}\": already met at the start ({} starts at {}, the level is {})",
            t.species_name,
            units::format_concentration(x0),
            units::format_concentration(t.level)
        )));
    }
    Ok(t)
}

/// Read a target on `model` as [`parse`] does, but accept one the start already meets.
pub fn read(text: &str, model: &Model) -> Result<Target> {
    let usage = |m: String| {
        Error::Usage(format!(
            "target \"{text}\": {m}; write a species, < or >, and a level with % or a concentration unit, \
             e.g. \"product > 90 %\", \"product > 90 % of substrate\", \"substrate < 10 µM\""
        ))
    };
    let at = text.find(['<', '>']).ok_or_else(|| usage("no < or >".into()))?;
    let direction = if text[at..].starts_with('<') {
        Direction::Below
    } else {
        Direction::Above
    };
    let name = text[..at].trim();
    let rest = text[at + 1..].trim_start_matches('=').trim();
    if name.is_empty() {
        return Err(usage("no species before the comparison".into()));
    }
    let species = model.species_index(name).ok_or_else(|| {
        let hint = crate::network::suggest_name(name, model.species.iter().map(|s| s.as_str()))
            .map(|s| format!(" (did you mean \"{s}\"?)"))
            .unwrap_or_default();
        usage(format!(
            "unknown species \"{name}\"{hint}; the network has {}",
            model.species.join(", ")
        ))
    })?;
    let x0 = model.initial[species];
    let (level, basis) = if let Some(i) = rest.find('%') {
        let number = rest[..i].trim();
        let fraction: f64 = number
            .parse()
            .map_err(|_| usage(format!("\"{number}\" is not a number")))?;
        if !fraction.is_finite() || fraction < 0.0 {
            return Err(usage(format!("{number} % is not a percentage")));
        }
        let fraction = fraction / 100.0;
        let after = rest[i + 1..].trim();
        let reference = if after.is_empty() {
            None
        } else {
            let r = after
                .strip_prefix("of ")
                .ok_or_else(|| usage(format!("\"{after}\" after the % (only \"of NAME\" may follow)")))?
                .trim();
            Some(
                model
                    .species_index(r)
                    .ok_or_else(|| usage(format!("unknown reference species \"{r}\"")))?,
            )
        };
        match reference {
            None if x0 > 0.0 => (fraction * x0, Basis::OfInitial { fraction }),
            r => {
                let (reference, chosen) = match r {
                    Some(r) => (r, false),
                    None => (
                        limiting_reagent(model).ok_or_else(|| {
                            usage(format!(
                                "{name} starts at zero and no species is consumed from a non-zero start, so there is \
                                 no limiting reagent; give a concentration instead"
                            ))
                        })?,
                        true,
                    ),
                };
                if reference == species {
                    return Err(usage(format!("{name} cannot be its own reference for a yield")));
                }
                if fraction > 1.0 {
                    return Err(usage(format!(
                        "a yield of {} % can never be reached (at most 100 % of {} at 1:1); for another \
                         stoichiometry give a concentration",
                        units::sig(fraction * 100.0, 4),
                        model.species[reference]
                    )));
                }
                let r0 = model.initial[reference];
                if r0 <= 0.0 {
                    return Err(usage(format!("{} starts at zero", model.species[reference])));
                }
                (
                    x0 + fraction * r0,
                    Basis::YieldOf {
                        reference: model.species[reference].clone(),
                        fraction,
                        chosen,
                    },
                )
            }
        }
    } else {
        let level = units::parse(rest, Quantity::Concentration).map_err(|e| {
            usage(format!(
                "{}; expected {}",
                e.problem,
                Quantity::Concentration.accepted()
            ))
        })?;
        (level, Basis::Absolute)
    };
    if level < 0.0 {
        return Err(usage("a concentration cannot be negative".into()));
    }
    if direction == Direction::Below && level <= 0.0 {
        return Err(usage(format!(
            "{name} can approach zero but never cross it; give a small positive level"
        )));
    }
    let t = Target {
        text: text.trim().to_string(),
        species,
        species_name: name.to_string(),
        direction,
        level,
        basis,
    };
    Ok(t)
}
