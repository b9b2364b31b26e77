//! The diagnostics sink every stage of building writes to: errors and warnings located in the
//! network file (file, line, column) or on the command line (values given with `--set`), and
//! the located readers of single values (a quantity, a positive quantity, a transmission
//! coefficient) that report into it.
//!
//! `build/`, `checks.rs` and `derived.rs` all take a [`Sink`]; none of them depends on another's
//! state, so the whole-network checks and the derived rates no longer reach into the builder.

use crate::error::{Diagnostic, Origin};
use crate::units::display::EnergyUnit;
use crate::units::{self, Quantity};
use std::path::Path;
use toml::Spanned;

/// Collects diagnostics about one network file; `text` is the file's text (spans refer to it).
pub(super) struct Sink<'a> {
    path: &'a Path,
    /// The file's lines, so thousands of diagnostics locate themselves in linear time.
    lines: crate::error::LineIndex<'a>,
    diags: Vec<Diagnostic>,
    /// The molar energies written in the file by family: (kJ/mol count, kcal/mol count, the
    /// family of the one written first in the file and its byte offset).
    energies: EnergyTally,
}

/// How many molar energies of the file were written in kJ/mol and in kcal/mol.
#[derive(Default)]
struct EnergyTally {
    kj: usize,
    kcal: usize,
    first: Option<(usize, EnergyUnit)>,
}

/// Where a file value was written.
pub(super) fn span<T>(s: &Spanned<T>) -> Origin {
    Origin::Span(s.span())
}

/// Where a value came from: the file, or the command line for values put in by `--set`
/// (which carry an empty span).
pub(super) fn origin<T>(s: &Spanned<T>) -> Origin {
    if s.span() == (0..0) {
        Origin::CommandLine
    } else {
        span(s)
    }
}

/// A string field: its value and where it came from.
pub(super) struct Field {
    pub(super) value: String,
    pub(super) origin: Origin,
    /// The `--set` key when the value came from the command line: errors about the value then
    /// name the key the user typed (`light.blue LED.power`), not the file position (`light[1]`).
    pub(super) key: Option<String>,
}

impl Field {
    /// A file field (or one put in by `--set`, which carries an empty span).
    pub(super) fn of(t: &Spanned<String>) -> Field {
        Field {
            value: t.get_ref().clone(),
            origin: origin(t),
            key: None,
        }
    }
}

/// File positions of built items, index-aligned with the network's vectors.
#[derive(Default)]
pub(super) struct Places {
    pub(super) species: Vec<Origin>,
    /// Where each species' `epsilon` was given (its table when it has none).
    pub(super) epsilon: Vec<Origin>,
    pub(super) thermal: Vec<Origin>,
    pub(super) photo: Vec<Origin>,
    pub(super) transients: Vec<Origin>,
    /// Where `conditions.irradiated_area` was given.
    pub(super) irradiated_area: Origin,
    /// Where `conditions.temperature` was given.
    pub(super) temperature: Origin,
    /// Each built light source's table, index-aligned with `Network::lights`.
    pub(super) lights: Vec<Origin>,
}

impl<'a> Sink<'a> {
    /// An empty sink for the file at `path` with text `text`.
    pub(super) fn new(path: &'a Path, text: &'a str) -> Self {
        Sink {
            path,
            lines: crate::error::LineIndex::new(text),
            diags: Vec::new(),
            energies: EnergyTally::default(),
        }
    }

    /// The energy family of the file: the one most of its molar energies were written in, on a
    /// tie the one written first; kJ/mol when it wrote none in either.
    pub(super) fn energy_unit(&self) -> EnergyUnit {
        let t = &self.energies;
        match t.kcal.cmp(&t.kj) {
            std::cmp::Ordering::Greater => EnergyUnit::KcalPerMol,
            std::cmp::Ordering::Less => EnergyUnit::KjPerMol,
            std::cmp::Ordering::Equal => t.first.map_or(EnergyUnit::KjPerMol, |f| f.1),
        }
    }

    /// Count a molar energy read from the file (values from the command line choose nothing).
    fn tally_energy(&mut self, f: &Field) {
        let (Origin::Span(r), Some(family)) = (&f.origin, EnergyUnit::of_text(&f.value)) else {
            return;
        };
        match family {
            EnergyUnit::KjPerMol => self.energies.kj += 1,
            EnergyUnit::KcalPerMol => self.energies.kcal += 1,
        }
        if self.energies.first.is_none_or(|(at, _)| r.start < at) {
            self.energies.first = Some((r.start, family));
        }
    }

    /// Record an error about `field` at `origin`.
    pub(super) fn error(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        let mut d = Diagnostic::error(field, msg).placed(self.path, &self.lines, origin);
        d.help = help;
        self.diags.push(d);
    }

    /// Record a warning about `field` at `origin`.
    pub(super) fn warn(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        let mut d = Diagnostic::warning(field, msg).placed(self.path, &self.lines, origin);
        d.help = help;
        self.diags.push(d);
    }

    /// Record a diagnostic made elsewhere (a frequency file's, located in that file).
    pub(super) fn push(&mut self, d: Diagnostic) {
        self.diags.push(d);
    }

    /// The 1-based line of `origin` in the file, 0 when it has none.
    pub(super) fn line(&self, origin: &Origin) -> usize {
        match origin {
            Origin::Span(r) => self.lines.line_col(r.start).0,
            _ => 0,
        }
    }

    /// True when an error (not only warnings) was recorded.
    pub(super) fn has_error(&self) -> bool {
        self.diags.iter().any(|d| d.severity == crate::error::Severity::Error)
    }

    /// Everything recorded, in the order found.
    pub(super) fn into_diagnostics(self) -> Vec<Diagnostic> {
        self.diags
    }

    /// Read a quantity; report a located error and return None when it cannot be read.
    pub(super) fn quantity(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        let field = f.key.as_deref().unwrap_or(field);
        match units::parse(&f.value, q) {
            Ok(v) => {
                if q == Quantity::MolarEnergy {
                    self.tally_energy(f);
                }
                Some(v)
            }
            Err(e) => {
                self.error(field, &f.origin, e.problem, Some(format!("expected {}", q.accepted())));
                None
            }
        }
    }

    /// A quantity that must be positive (and finite).
    pub(super) fn positive(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        let v = self.quantity(field, f, q)?;
        let field = f.key.as_deref().unwrap_or(field);
        if v <= 0.0 {
            self.error(
                field,
                &f.origin,
                format!("\"{}\" must be positive", f.value),
                Some(format!("expected {}", q.accepted())),
            );
            return None;
        }
        Some(v)
    }

    /// A quantity that may be zero but not negative (a light's intensity: zero is a dark run).
    pub(super) fn non_negative(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        let v = self.quantity(field, f, q)?;
        let field = f.key.as_deref().unwrap_or(field);
        if v < 0.0 {
            self.error(
                field,
                &f.origin,
                format!("\"{}\" is negative", f.value),
                Some(format!("expected zero or more: {}", q.accepted())),
            );
            return None;
        }
        // "-0 mW" is zero.
        Some(if v == 0.0 { 0.0 } else { v })
    }

    /// A positive quantity that must be given: a missing one is reported at `at`.
    pub(super) fn required(&mut self, field: &str, f: Option<Field>, at: &Origin, q: Quantity) -> Option<f64> {
        match f {
            Some(f) => self.positive(field, &f, q),
            None => {
                self.error(field, at, "is missing", Some(format!("expected {}", q.accepted())));
                None
            }
        }
    }

    /// The factor of one `unit` of `q` in the internal unit.
    pub(super) fn unit_factor(&mut self, field: &str, at: &Origin, unit: &str, q: Quantity) -> Option<f64> {
        match units::parse(&format!("1 {unit}"), q) {
            Ok(f) => Some(f),
            Err(e) => {
                self.error(
                    field,
                    at,
                    format!("the unit \"{unit}\" is not usable: {}", e.problem),
                    Some(format!("expected {}", q.accepted())),
                );
                None
            }
        }
    }

    /// A transmission coefficient κ in (0, 1] (Eyring rates and rates from frequencies; 1 when
    /// not given). A value put in by `--set` is reported as given on the command line.
    pub(super) fn transmission(&mut self, field: &str, k: &Option<Spanned<f64>>) -> Option<f64> {
        let Some(k) = k else {
            return Some(1.0);
        };
        let v = *k.get_ref();
        if v > 0.0 && v <= 1.0 {
            return Some(v);
        }
        self.error(
            &format!("{field}.transmission"),
            &origin(k),
            format!("{v} must lie in (0, 1]"),
            None,
        );
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_value_put_in_by_set_is_located_on_the_command_line() {
        let mut s = Sink::new(Path::new("n.toml"), "a = 1\nb = 2\n");
        assert_eq!(
            s.transmission("thermal[0].rate", &Some(Spanned::new(6..11, 0.5))),
            Some(0.5)
        );
        assert_eq!(s.transmission("thermal[0].rate", &None), Some(1.0));
        assert!(
            s.transmission("thermal[0].rate", &Some(Spanned::new(0..0, 2.0)))
                .is_none()
        );
        assert!(
            s.transmission("thermal[0].rate", &Some(Spanned::new(6..11, 0.0)))
                .is_none()
        );
        let d = s.into_diagnostics();
        assert_eq!(d.len(), 2);
        assert!(d[0].from_command_line && d[0].line_col.is_none(), "{:?}", d[0]);
        assert_eq!(d[0].field, "thermal[0].rate.transmission");
        assert!(!d[1].from_command_line && d[1].line_col == Some((2, 1)), "{:?}", d[1]);
    }

    #[test]
    fn a_bad_value_put_in_by_set_is_named_by_its_key() {
        let mut s = Sink::new(Path::new("n.toml"), "a = 1\n");
        let f = Field {
            value: "-5 mW".into(),
            origin: Origin::CommandLine,
            key: Some("light.blue LED.power".into()),
        };
        assert!(s.non_negative("light[1].power", &f, Quantity::Power).is_none());
        let d = s.into_diagnostics();
        assert_eq!(d[0].field, "light.blue LED.power");
        assert!(d[0].from_command_line);
    }
}
