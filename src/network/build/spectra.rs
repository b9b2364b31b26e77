//! Spectrum-valued fields (ε, quantum yields, background, lamp tables): one number, one value at
//! a wavelength (optionally with the window where it holds), inline points, or a CSV table.

use super::Builder;
use crate::error::Origin;
use crate::file::schema::{SpectrumTable, Valued};
use crate::light::{Outside, Spectrum};
use crate::network::diagnostics::{Field, span};
use crate::units::{self, Quantity};
use std::path::PathBuf;
use toml::Spanned;

/// A table's rows (wavelength, value, place), wavelength unit, value unit and CSV path.
type RawRows = (Vec<(f64, f64, String)>, String, Option<String>, Option<PathBuf>);

impl Builder<'_> {
    /// A spectrum-valued field; `q` is the value's quantity (None: dimensionless).
    pub(super) fn spectrum(
        &mut self,
        field: &str,
        v: &Spanned<Valued>,
        q: Option<Quantity>,
        outside: Outside,
    ) -> Option<Spectrum> {
        let at = span(v);
        let what = q.map_or("a number".to_string(), |q| q.describe());
        let table_help = match q {
            Some(_) => {
                "a table: { points = [[300, 1200], [365, 5000]], wavelength_unit = \"nm\", unit = \"L/(mol cm)\" }, \
                        one value: { at = \"365 nm\", value = \"5000 L/(mol cm)\" } (for a line at 365 nm; under a broader light \
                        add the window where it holds: from = \"355 nm\", to = \"375 nm\"), or a CSV: { file = \"spectra/x.csv\" }"
            }
            None => {
                "a number, a table: { points = [[300, 0.2], [365, 0.3]], wavelength_unit = \"nm\" }, or a CSV: { file = \"x.csv\" }"
            }
        };
        match v.get_ref() {
            Valued::Number(x) => match q {
                None => {
                    if !x.is_finite() || *x < 0.0 {
                        self.error(field, &at, format!("{x} must be a non-negative number"), None);
                        return None;
                    }
                    Some(Spectrum::Constant { value: *x, at: None })
                }
                Some(q) => {
                    self.error(
                        field,
                        &at,
                        format!("{x} has no unit and no wavelength"),
                        Some(format!("expected {table_help}; values are {}", q.accepted())),
                    );
                    None
                }
            },
            // A dimensionless value may be a percentage: "12 %" is 0.12.
            Valued::Text(s) if q.is_none() => match units::fraction(s) {
                Ok(x) if x >= 0.0 => Some(Spectrum::Constant { value: x, at: None }),
                Ok(x) => {
                    self.error(field, &at, format!("{x} must be a non-negative number"), None);
                    None
                }
                Err(m) => {
                    self.error(field, &at, m, Some(format!("expected {table_help}")));
                    None
                }
            },
            Valued::Text(s) => {
                self.error(
                    field,
                    &at,
                    format!("\"{s}\" gives {what} without the wavelength it holds at"),
                    Some(format!("expected {table_help}")),
                );
                None
            }
            Valued::Table(t) => self.spectrum_table(field, &at, t, q, outside, table_help),
        }
    }

    /// One value: `at` the wavelength it was measured at, optionally (for ε, and then `at` may
    /// be left out) `from`/`to`, the window in which the value holds: a box, zero outside. A
    /// value with no window is a constant whose `at` the whole-network check compares with the
    /// light (`checks::check_single_epsilon`).
    pub(super) fn single_value(
        &mut self,
        field: &str,
        at: &Origin,
        t: &SpectrumTable,
        q: Option<Quantity>,
        help: &str,
    ) -> Option<Spectrum> {
        let wl = |b: &mut Self, key: &str, text: &String| {
            b.positive(
                &format!("{field}.{key}"),
                &Field {
                    value: text.clone(),
                    origin: at.clone(),
                    key: None,
                },
                Quantity::Wavelength,
            )
        };
        let window = match (&t.from, &t.to) {
            (None, None) => None,
            _ if q != Some(Quantity::MolarAbsorption) => {
                self.error(
                    field,
                    at,
                    "`from`/`to` bound a single ε value; this field takes a table for values that change with wavelength",
                    Some(format!("expected {help}")),
                );
                return None;
            }
            (Some(f), Some(to)) => {
                let (lo, hi) = (wl(self, "from", f), wl(self, "to", to));
                let (lo, hi) = (lo?, hi?);
                if lo >= hi {
                    self.error(&format!("{field}.from"), at, "`from` must be shorter than `to`", None);
                    return None;
                }
                Some((lo, hi))
            }
            _ => {
                self.error(
                    field,
                    at,
                    "`from` and `to` go together: the window in which the value holds",
                    Some(
                        "e.g. epsilon = { at = \"365 nm\", value = \"5000 L/(mol cm)\", from = \"355 nm\", to = \"375 nm\" }"
                            .into(),
                    ),
                );
                return None;
            }
        };
        let Some(val) = &t.value else {
            self.error(field, at, "`at` needs a `value`", Some(format!("expected {help}")));
            return None;
        };
        let measured = match &t.at {
            Some(w) => Some(wl(self, "at", w)?),
            None if window.is_some() => None,
            None => {
                self.error(
                    field,
                    at,
                    "`value` needs `at`, the wavelength it holds at",
                    Some(format!("expected {help}")),
                );
                return None;
            }
        };
        let value = match (val, q) {
            (toml::Value::String(s), Some(q)) => self.quantity(
                &format!("{field}.value"),
                &Field {
                    value: s.clone(),
                    origin: at.clone(),
                    key: None,
                },
                q,
            )?,
            (toml::Value::Float(x), None) => *x,
            (toml::Value::Integer(x), None) => *x as f64,
            (other, Some(q)) => {
                self.error(
                    &format!("{field}.value"),
                    at,
                    format!("{other} has no unit"),
                    Some(format!("expected {}", q.accepted())),
                );
                return None;
            }
            (other, None) => {
                self.error(&format!("{field}.value"), at, format!("{other} is not a number"), None);
                return None;
            }
        };
        if !value.is_finite() || value < 0.0 {
            self.error(&format!("{field}.value"), at, "must be zero or positive", None);
            return None;
        }
        match (window, measured) {
            (Some((lo, hi)), Some(w)) if w < lo || w > hi => {
                let nm = |m: f64| units::sig(m * 1e9, 5);
                self.error(
                    &format!("{field}.at"),
                    at,
                    format!("{} nm lies outside the window {}–{} nm", nm(w), nm(lo), nm(hi)),
                    Some(
                        "the window is where the value holds, so it contains the wavelength it was measured at".into(),
                    ),
                );
                None
            }
            // The same value across the window, zero outside it: a two-point table.
            (Some((lo, hi)), _) => Some(Spectrum::Table {
                points: vec![(lo, value), (hi, value)],
                outside: Outside::Zero,
            }),
            (None, w) => Some(Spectrum::Constant { value, at: w }),
        }
    }

    pub(super) fn spectrum_table(
        &mut self,
        field: &str,
        at: &Origin,
        t: &SpectrumTable,
        q: Option<Quantity>,
        outside: Outside,
        help: &str,
    ) -> Option<Spectrum> {
        let single = t.at.is_some() || t.value.is_some() || t.from.is_some() || t.to.is_some();
        let forms = [t.points.is_some(), single, t.file.is_some()];
        if forms.iter().filter(|x| **x).count() != 1 {
            self.error(
                field,
                at,
                "give exactly one of points, at/value (with an optional from/to window) or file",
                Some(format!("expected {help}")),
            );
            return None;
        }
        if single {
            return self.single_value(field, at, t, q, help);
        }
        let (raw, wl_unit, val_unit, where_) = self.raw_rows(field, at, t)?;
        let wf = self
            .sink
            .unit_factor(&format!("{field}.wavelength_unit"), at, &wl_unit, Quantity::Wavelength)?;
        let vf = match (q, &val_unit) {
            (Some(q), Some(u)) => self.sink.unit_factor(&format!("{field}.unit"), at, u, q)?,
            (Some(q), None) => {
                let msg = match &where_ {
                    Some(p) => format!("{}: the second column's header names no unit", p.display()),
                    None => "`unit` is missing for the values".to_string(),
                };
                self.error(field, at, msg, Some(format!("values are {}", q.accepted())));
                return None;
            }
            // Dimensionless: a label such as "a.u." or "relative" in a CSV header is fine.
            (None, Some(u)) if where_.is_none() && !u.trim().is_empty() && u.trim() != "1" => {
                self.error(
                    &format!("{field}.unit"),
                    at,
                    format!("\"{u}\": these values are dimensionless"),
                    Some("leave `unit` out".into()),
                );
                return None;
            }
            (None, _) => 1.0,
        };
        let mut points = Vec::with_capacity(raw.len());
        for (x, y, place) in &raw {
            let wl = x * wf;
            let v = y * vf;
            if wl.is_nan() || wl <= 0.0 || !wl.is_finite() {
                self.error(place, at, format!("wavelength {x} must be positive"), None);
                return None;
            }
            if !v.is_finite() || v < 0.0 {
                self.error(place, at, format!("value {y} must be zero or positive"), None);
                return None;
            }
            points.push((wl, v));
        }
        if points.windows(2).any(|w| w[1].0 <= w[0].0) {
            self.error(field, at, "wavelengths must increase strictly from row to row", None);
            return None;
        }
        Some(Spectrum::Table { points, outside })
    }

    /// The rows of a table (inline points or a CSV), each with the place it was written, with the
    /// wavelength unit, the value unit (if named) and the CSV's path.
    fn raw_rows(&mut self, field: &str, at: &Origin, t: &SpectrumTable) -> Option<RawRows> {
        // Inline points.
        if let Some(points) = &t.points {
            let Some(wu) = &t.wavelength_unit else {
                self.error(
                    field,
                    at,
                    "`wavelength_unit` is missing for the points",
                    Some("e.g. wavelength_unit = \"nm\"".into()),
                );
                return None;
            };
            let mut rows = Vec::new();
            for (i, p) in points.iter().enumerate() {
                if p.len() != 2 {
                    self.error(
                        &format!("{field}.points[{i}]"),
                        at,
                        format!("has {} numbers; [wavelength, value] pairs are expected", p.len()),
                        None,
                    );
                    return None;
                }
                rows.push((p[0], p[1], format!("{field}.points[{i}]")));
            }
            Some((rows, wu.clone(), t.unit.clone(), None))
        } else {
            let name = t.file.clone().unwrap_or_default();
            let table = match self.loaded.tables.get(&name) {
                Some(Ok(tab)) => tab.clone(),
                Some(Err(e)) => {
                    self.error(
                        &format!("{field}.file"),
                        at,
                        e.clone(),
                        Some("a CSV with a header such as \"wavelength (nm), epsilon (L/(mol cm))\"".into()),
                    );
                    return None;
                }
                None => {
                    self.error(&format!("{field}.file"), at, format!("\"{name}\" was not read"), None);
                    return None;
                }
            };
            let Some(wu) = table.units[0].clone() else {
                self.error(
                    &format!("{field}.file"),
                    at,
                    format!("{}: the first column's header names no unit", table.path.display()),
                    Some("write the header as \"wavelength (nm), ...\"".into()),
                );
                return None;
            };
            let rows = table
                .rows
                .iter()
                .map(|(x, y, line)| (*x, *y, format!("{}:{line}", table.path.display())))
                .collect();
            Some((rows, wu, table.units[1].clone(), Some(table.path.clone())))
        }
    }
}
