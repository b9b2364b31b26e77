//! From the parsed file to a validated [`Network`]: units, names, numbers.
//!
//! Every problem is collected (not just the first), each located in the file. Structural
//! checks that need the whole network (ways out of transients, balances, warnings) are in
//! `checks.rs`.

use super::overrides::{ACCEPTED, Overrides};
use super::*;
use crate::error::{Diagnostic, Error, Origin};
use crate::file::Loaded;
use crate::file::schema::{self, SpectrumTable, Text, Valued};
use crate::light::{Intensity, LightKind, LightSource, Outside, Spectrum};
use crate::units::{self, Quantity};
use std::collections::BTreeMap;
use toml::Spanned;

/// Validate a loaded file with overrides into a [`Network`], or every problem found.
pub fn build(loaded: &Loaded, overrides: &Overrides) -> Result<Network> {
    let mut b = Builder {
        loaded,
        overrides,
        diags: Vec::new(),
        at: Places::default(),
    };
    let net = b.network();
    for key in overrides.unused() {
        let d = unused_override(loaded, &key);
        b.diags.push(d.in_file(&loaded.path));
    }
    let has_error = b.diags.iter().any(|d| d.severity == crate::error::Severity::Error);
    match net {
        Some(mut n) if !has_error => {
            n.warnings = b.diags;
            Ok(n)
        }
        _ => {
            b.diags.sort_by_key(|d| (std::cmp::Reverse(d.severity), d.line_col));
            Err(Error::Invalid(b.diags))
        }
    }
}

pub(super) struct Builder<'a> {
    pub(super) loaded: &'a Loaded,
    overrides: &'a Overrides,
    pub(super) diags: Vec<Diagnostic>,
    /// Where each built species, thermal step and photo step was written.
    pub(super) at: Places,
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
}

pub(super) fn span<T>(s: &Spanned<T>) -> Origin {
    Origin::Span(s.span())
}

/// Where a value came from: the file, or the command line for values put in by `--set`
/// (which carry an empty span).
fn origin<T>(s: &Spanned<T>) -> Origin {
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
}

impl<'a> Builder<'a> {
    pub(super) fn error(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        let mut d = Diagnostic::error(field, msg).at(&self.loaded.path, &self.loaded.text, origin);
        d.help = help;
        self.diags.push(d);
    }

    pub(super) fn warn(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        let mut d = Diagnostic::warning(field, msg).at(&self.loaded.path, &self.loaded.text, origin);
        d.help = help;
        self.diags.push(d);
    }

    fn field(&self, value: Option<&Text>, key: Option<&str>) -> Option<Field> {
        if let Some(k) = key
            && let Some(v) = self.overrides.get(k)
        {
            return Some(Field {
                value: v.to_string(),
                origin: Origin::CommandLine,
            });
        }
        value.map(|t| Field {
            value: t.get_ref().clone(),
            origin: span(t),
        })
    }

    /// Read a quantity; report a located error and return None when it cannot be read.
    pub(super) fn quantity(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        match units::parse(&f.value, q) {
            Ok(v) => Some(v),
            Err(e) => {
                self.error(field, &f.origin, e.problem, Some(format!("expected {}", q.accepted())));
                None
            }
        }
    }

    /// A quantity that must be positive (and finite).
    pub(super) fn positive(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        let v = self.quantity(field, f, q)?;
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
    fn non_negative(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        let v = self.quantity(field, f, q)?;
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

    fn required(&mut self, field: &str, f: Option<Field>, at: &Origin, q: Quantity) -> Option<f64> {
        match f {
            Some(f) => self.positive(field, &f, q),
            None => {
                self.error(field, at, "is missing", Some(format!("expected {}", q.accepted())));
                None
            }
        }
    }

    fn network(&mut self) -> Option<Network> {
        let doc = &self.loaded.doc;
        let about = self.about(doc);
        let conditions = self.conditions(doc);
        let lights = self.lights(doc, conditions.as_ref());
        let mut names: BTreeMap<String, Origin> = BTreeMap::new();
        let species = self.species(doc, &mut names);
        let transient_heads = self.transient_heads(doc, &mut names);
        // With broken conditions, go on checking the rest at a stand-in temperature so every
        // problem is listed; the network is not returned (an error was recorded).
        let conditions = conditions.unwrap_or(Conditions {
            temperature: 298.15,
            volume: 1e-3,
            path_length: 0.01,
            irradiated_area: None,
            background: Spectrum::Constant { value: 0.0, at: None },
        });
        let t = conditions.temperature;
        let resolver = Names {
            species: &species,
            transients: &transient_heads,
        };
        let thermal = self.thermal(doc, &resolver, t);
        let photo = self.photo(doc, &resolver);
        let photon = absorbed_photon_energy(doc, &transient_heads, &lights, &species, &photo);
        let transients = self.transients(doc, &resolver, &transient_heads, t, &photon);
        let mut net = Network {
            source: Some(self.loaded.path.clone()),
            about,
            conditions,
            lights,
            species,
            thermal,
            photo,
            transients,
            graph: Default::default(),
            warnings: Vec::new(),
        };
        self.check_network(&mut net);
        net.graph = super::checks::graph(&net);
        Some(net)
    }

    fn about(&mut self, doc: &schema::NetworkFile) -> About {
        let stem = self
            .loaded
            .path
            .file_stem()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_default();
        let Some(a) = &doc.about else {
            return About {
                name: stem,
                ..Default::default()
            };
        };
        let a = a.get_ref();
        let s = |t: &Option<Text>| t.as_ref().map(|t| t.get_ref().trim().to_string()).unwrap_or_default();
        let name = s(&a.name);
        About {
            name: if name.is_empty() { stem } else { name },
            description: s(&a.description),
            provenance: s(&a.provenance),
            invented: a.invented.as_ref().is_some_and(|b| *b.get_ref()),
        }
    }

    fn conditions(&mut self, doc: &schema::NetworkFile) -> Option<Conditions> {
        let empty = schema::Conditions::default();
        let (c, at) = match &doc.conditions {
            Some(c) => (c.get_ref(), span(c)),
            None => {
                self.error(
                    "conditions",
                    &Origin::Span(0..0),
                    "the [conditions] table is missing",
                    Some(
                        "add [conditions] with temperature, volume and path_length, e.g. temperature = \"298.15 K\""
                            .into(),
                    ),
                );
                (&empty, Origin::Span(0..0))
            }
        };
        let f = self.field(c.temperature.as_ref(), Some("conditions.temperature"));
        let temperature = self.required("conditions.temperature", f, &at, Quantity::Temperature);
        let f = self.field(c.volume.as_ref(), Some("conditions.volume"));
        let volume = self.required("conditions.volume", f, &at, Quantity::Volume);
        let f = self.field(c.path_length.as_ref(), Some("conditions.path_length"));
        let path_length = self.required("conditions.path_length", f, &at, Quantity::Length);
        let irradiated_area = match self.field(c.irradiated_area.as_ref(), Some("conditions.irradiated_area")) {
            Some(f) => {
                self.at.irradiated_area = f.origin.clone();
                Some(self.positive("conditions.irradiated_area", &f, Quantity::Area)?)
            }
            None => None,
        };
        let background = if let Some(v) = self.overrides.get("conditions.background") {
            match v.parse::<f64>() {
                Ok(x) if x.is_finite() && x >= 0.0 => Spectrum::Constant { value: x, at: None },
                _ => {
                    self.error(
                        "conditions.background",
                        &Origin::CommandLine,
                        format!("\"{v}\" is not a non-negative absorbance"),
                        Some("a number such as 0.05".into()),
                    );
                    return None;
                }
            }
        } else if let Some(b) = &c.background {
            self.spectrum("conditions.background", b, None, Outside::Nearest)?
        } else {
            Spectrum::Constant { value: 0.0, at: None }
        };
        Some(Conditions {
            temperature: temperature?,
            volume: volume?,
            path_length: path_length?,
            irradiated_area,
            background,
        })
    }

    /// A spectrum-valued field; `q` is the value's quantity (None: dimensionless).
    fn spectrum(
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

    fn unit_factor(&mut self, field: &str, at: &Origin, unit: &str, q: Quantity) -> Option<f64> {
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

    /// One value: `at` the wavelength it was measured at, optionally (for ε, and then `at` may
    /// be left out) `from`/`to`, the window in which the value holds: a box, zero outside. A
    /// value with no window is a constant whose `at` the whole-network check compares with the
    /// light (`checks::check_single_epsilon`).
    fn single_value(
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

    fn spectrum_table(
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
        // Inline points.
        let (raw, wl_unit, val_unit, where_) = if let Some(points) = &t.points {
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
            (rows, wu.clone(), t.unit.clone(), None)
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
            (rows, wu, table.units[1].clone(), Some(table.path.clone()))
        };
        let wf = self.unit_factor(&format!("{field}.wavelength_unit"), at, &wl_unit, Quantity::Wavelength)?;
        let vf = match (q, &val_unit) {
            (Some(q), Some(u)) => self.unit_factor(&format!("{field}.unit"), at, u, q)?,
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

    fn lights(&mut self, doc: &schema::NetworkFile, cond: Option<&Conditions>) -> Vec<LightSource> {
        let mut out = Vec::new();
        let mut seen: BTreeMap<String, Origin> = BTreeMap::new();
        for (i, l) in doc.light.iter().enumerate() {
            let at = span(l);
            let e = l.get_ref();
            let name = e
                .name
                .as_ref()
                .map_or(format!("light{}", i + 1), |n| n.get_ref().trim().to_string());
            let field = format!("light[{i}]");
            if name.is_empty() {
                self.error(&format!("{field}.name"), &at, "is empty", None);
                continue;
            }
            if let Some(prev) = seen.get(&name) {
                let (l0, _) = match prev {
                    Origin::Span(r) => crate::error::line_col(&self.loaded.text, r.start),
                    _ => (0, 0),
                };
                self.error(
                    &format!("{field}.name"),
                    &at,
                    format!("\"{name}\" is used by another light (line {l0})"),
                    Some("give each light its own name".into()),
                );
                continue;
            }
            seen.insert(name.clone(), at.clone());
            let key = |f: &str| format!("light.{name}.{f}");
            let Some(kind) = &e.kind else {
                self.error(
                    &format!("{field}.kind"),
                    &at,
                    "is missing",
                    Some("one of \"line\", \"band\", \"lamp\", \"sun\"".into()),
                );
                continue;
            };
            let kind_word = kind.get_ref().trim().to_string();
            let allowed: &[&str] = match kind_word.as_str() {
                "line" => &["wavelength", "power", "photon_flux"],
                "band" => &["centre", "fwhm", "power", "photon_flux"],
                "lamp" => &["file", "power", "photon_flux"],
                "sun" => &["scale"],
                other => {
                    self.error(
                        &format!("{field}.kind"),
                        &span(kind),
                        format!("\"{other}\" is not a kind of light"),
                        Some("one of \"line\", \"band\", \"lamp\", \"sun\"".into()),
                    );
                    continue;
                }
            };
            let present = [
                ("wavelength", e.wavelength.is_some()),
                ("centre", e.centre.is_some()),
                ("fwhm", e.fwhm.is_some()),
                ("power", e.power.is_some()),
                ("photon_flux", e.photon_flux.is_some()),
                ("file", e.file.is_some()),
                ("scale", e.scale.is_some()),
            ];
            let mut bad = false;
            for (k, p) in present {
                if p && !allowed.contains(&k) {
                    self.error(
                        &format!("{field}.{k}"),
                        &at,
                        format!("does not apply to a light of kind \"{kind_word}\""),
                        Some(format!("a {kind_word} takes: {}", allowed.join(", "))),
                    );
                    bad = true;
                }
            }
            if bad {
                continue;
            }
            let window = {
                let lo = self
                    .field(e.from.as_ref(), None)
                    .and_then(|f| self.positive(&format!("{field}.from"), &f, Quantity::Wavelength));
                let hi = self
                    .field(e.to.as_ref(), None)
                    .and_then(|f| self.positive(&format!("{field}.to"), &f, Quantity::Wavelength));
                (lo.unwrap_or(0.0), hi.unwrap_or(f64::INFINITY))
            };
            if window.0 >= window.1 {
                self.error(&format!("{field}.from"), &at, "`from` must be shorter than `to`", None);
                continue;
            }
            let intensity = if kind_word == "sun" {
                None
            } else {
                let p = self.field(e.power.as_ref(), Some(&key("power")));
                let q = self.field(e.photon_flux.as_ref(), Some(&key("photon_flux")));
                // A value given with --set replaces the file's intensity, however the file gives it.
                let set = |f: &Option<Field>| f.as_ref().is_some_and(|f| f.origin == Origin::CommandLine);
                let (p, q) = match (set(&p), set(&q)) {
                    (true, false) => (p, None),
                    (false, true) => (None, q),
                    _ => (p, q),
                };
                match (p, q) {
                    // Zero is a light switched off (a dark run), not a mistake.
                    (Some(p), None) => self
                        .non_negative(&format!("{field}.power"), &p, Quantity::Power)
                        .map(Intensity::Power),
                    (None, Some(q)) => self
                        .non_negative(&format!("{field}.photon_flux"), &q, Quantity::PhotonFlux)
                        .map(Intensity::PhotonFlux),
                    (Some(_), Some(_)) => {
                        self.error(
                            &field,
                            &at,
                            "has both power and photon_flux",
                            Some("give one of them".into()),
                        );
                        None
                    }
                    (None, None) => {
                        self.error(
                            &field,
                            &at,
                            "needs power or photon_flux",
                            Some("e.g. power = \"50 mW\" or photon_flux = \"2 µeinstein/s\"".into()),
                        );
                        None
                    }
                }
            };
            let lk = match kind_word.as_str() {
                "line" => {
                    let f = self.field(e.wavelength.as_ref(), Some(&key("wavelength")));
                    self.required(&format!("{field}.wavelength"), f, &at, Quantity::Wavelength)
                        .map(|w| LightKind::Line { wavelength: w })
                }
                "band" => {
                    let c = self.field(e.centre.as_ref(), Some(&key("centre")));
                    let c = self.required(&format!("{field}.centre"), c, &at, Quantity::Wavelength);
                    let w = self.field(e.fwhm.as_ref(), Some(&key("fwhm")));
                    let w = self.required(&format!("{field}.fwhm"), w, &at, Quantity::Wavelength);
                    match (c, w) {
                        (Some(centre), Some(fwhm)) if fwhm < centre => Some(LightKind::Band { centre, fwhm }),
                        (Some(_), Some(_)) => {
                            self.error(
                                &format!("{field}.fwhm"),
                                &at,
                                "is wider than the centre wavelength",
                                None,
                            );
                            None
                        }
                        _ => None,
                    }
                }
                "lamp" => {
                    let Some(f) = &e.file else {
                        self.error(
                            &format!("{field}.file"),
                            &at,
                            "is missing",
                            Some("a CSV with header \"wavelength (nm), relative power\"".into()),
                        );
                        continue;
                    };
                    let v = Spanned::new(
                        f.span(),
                        Valued::Table(SpectrumTable {
                            file: Some(f.get_ref().clone()),
                            ..Default::default()
                        }),
                    );
                    match self.spectrum(&field, &v, None, Outside::Zero) {
                        Some(Spectrum::Table { points, .. }) if points.iter().any(|p| p.1 > 0.0) => {
                            Some(LightKind::Lamp {
                                file: f.get_ref().clone(),
                                relative_power: points,
                            })
                        }
                        Some(_) => {
                            self.error(
                                &format!("{field}.file"),
                                &span(f),
                                "the lamp spectrum is zero everywhere",
                                None,
                            );
                            None
                        }
                        None => None,
                    }
                }
                _ => {
                    let scale = match self.overrides.get(&key("scale")) {
                        Some(s) => match s.parse::<f64>() {
                            Ok(x) => Some((x, Origin::CommandLine)),
                            Err(_) => {
                                self.error(
                                    &format!("{field}.scale"),
                                    &Origin::CommandLine,
                                    format!("\"{s}\" is not a number"),
                                    None,
                                );
                                continue;
                            }
                        },
                        None => e.scale.as_ref().map(|s| (*s.get_ref(), span(s))),
                    };
                    let (scale, sat) = scale.unwrap_or((1.0, at.clone()));
                    if !scale.is_finite() || scale < 0.0 {
                        self.error(
                            &format!("{field}.scale"),
                            &sat,
                            format!("{scale} must be a finite factor of zero or more"),
                            Some("e.g. scale = 0.5 for half the reference sunlight, 0 for none".into()),
                        );
                        continue;
                    }
                    match cond.and_then(|c| c.irradiated_area) {
                        Some(area) => Some(LightKind::Sun { scale, area }),
                        None => {
                            if cond.is_some() {
                                self.error(
                                    "conditions.irradiated_area",
                                    &at,
                                    format!("is needed for the sunlight \"{name}\" (irradiance × area = power)"),
                                    Some("e.g. irradiated_area = \"100 cm2\"".into()),
                                );
                            }
                            None
                        }
                    }
                }
            };
            let (Some(lk), true) = (lk, kind_word == "sun" || intensity.is_some()) else {
                continue;
            };
            let window = if kind_word == "sun" && window == (0.0, f64::INFINITY) {
                (280e-9, 4000e-9)
            } else {
                window
            };
            let src = LightSource::new(name.clone(), lk, intensity, window);
            if src.bins.is_empty() {
                // The window is a filter on the emitted spectrum: one that keeps nothing is an
                // error for every kind (a line outside it as much as a band).
                let (lo, hi) = LightSource::new(name.clone(), src.kind.clone(), intensity, (0.0, f64::INFINITY))
                    .extent()
                    .unwrap_or((0.0, 0.0));
                let nm = |m: f64| format!("{} nm", units::sig(m * 1e9, 5));
                let (key, edge) = if hi < window.0 {
                    ("from", nm(window.0))
                } else {
                    ("to", nm(window.1))
                };
                let (emits, keep) = if lo == hi {
                    (format!("at {}", nm(lo)), format!("includes {}", nm(lo)))
                } else {
                    (
                        format!("over {}–{}", nm(lo), nm(hi)),
                        format!("overlaps {}–{}", nm(lo), nm(hi)),
                    )
                };
                self.error(
                    &format!("{field}.{key}"),
                    &at,
                    format!("\"{edge}\" leaves no photons: the source emits {emits}, all outside its from/to window"),
                    Some(format!(
                        "from/to is a filter that cuts the emitted spectrum: give a window that {keep}, or drop from/to"
                    )),
                );
                continue;
            }
            out.push(src);
        }
        out
    }

    fn species(&mut self, doc: &schema::NetworkFile, names: &mut BTreeMap<String, Origin>) -> Vec<Species> {
        let mut out = Vec::new();
        for (i, s) in doc.species.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = format!("species[{i}]");
            let Some(name) = self.name(&field, e.name.as_ref(), &at, names) else {
                continue;
            };
            let field = format!("species \"{name}\"");
            let initial = match self.field(e.initial.as_ref(), Some(&format!("species.{name}.initial"))) {
                Some(f) => match self.quantity(&format!("{field}.initial"), &f, Quantity::Concentration) {
                    Some(v) if v < 0.0 => {
                        self.error(
                            &format!("{field}.initial"),
                            &f.origin,
                            format!("\"{}\" is negative", f.value),
                            Some(format!(
                                "a concentration of zero or more: {}",
                                Quantity::Concentration.accepted()
                            )),
                        );
                        0.0
                    }
                    Some(v) => v,
                    None => 0.0,
                },
                None => 0.0,
            };
            let (formula, composition) = match &e.formula {
                Some(f) => match formula::parse(f.get_ref()) {
                    Ok(c) => (Some(f.get_ref().clone()), Some(c)),
                    Err(m) => {
                        self.error(
                            &format!("{field}.formula"),
                            &span(f),
                            m,
                            Some("e.g. \"C6H12O6\", \"Fe(C2O4)3^3-\", \"H+\"".into()),
                        );
                        (None, None)
                    }
                },
                None => (None, None),
            };
            let epsilon = match &e.epsilon {
                Some(v) => self.spectrum(
                    &format!("{field}.epsilon"),
                    v,
                    Some(Quantity::MolarAbsorption),
                    Outside::Zero,
                ),
                None => None,
            };
            self.at.species.push(at.clone());
            self.at.epsilon.push(e.epsilon.as_ref().map_or(at.clone(), span));
            out.push(Species {
                name,
                initial,
                formula,
                composition,
                epsilon,
                product: e.product.as_ref().is_some_and(|b| *b.get_ref()),
            });
        }
        out
    }

    fn name(
        &mut self,
        field: &str,
        n: Option<&Text>,
        at: &Origin,
        names: &mut BTreeMap<String, Origin>,
    ) -> Option<String> {
        let Some(n) = n else {
            self.error(&format!("{field}.name"), at, "is missing", None);
            return None;
        };
        let name = n.get_ref().trim().to_string();
        let bad = name.is_empty()
            || name.chars().any(|c| c.is_whitespace() || c == '"' || c == ',')
            || name.parse::<f64>().is_ok()
            || name.contains("->")
            || name.contains("<=>");
        if bad {
            self.error(
                &format!("{field}.name"),
                &span(n),
                format!("\"{name}\" cannot be used as a name"),
                Some(
                    "a name has no spaces, commas or arrows and is not a number, e.g. \"Z-azo\", \"S1\", \"Fe3+\""
                        .into(),
                ),
            );
            return None;
        }
        if let Some(prev) = names.get(&name) {
            let line = match prev {
                Origin::Span(r) => crate::error::line_col(&self.loaded.text, r.start).0,
                _ => 0,
            };
            self.error(
                &format!("{field}.name"),
                &span(n),
                format!("\"{name}\" is already defined (line {line})"),
                Some("species and transients share one set of names".into()),
            );
            return None;
        }
        names.insert(name.clone(), span(n));
        Some(name)
    }

    fn transient_heads(
        &mut self,
        doc: &schema::NetworkFile,
        names: &mut BTreeMap<String, Origin>,
    ) -> Vec<(String, TransientKind)> {
        let mut out = Vec::new();
        for (i, t) in doc.transient.iter().enumerate() {
            let at = span(t);
            let e = t.get_ref();
            let field = format!("transient[{i}]");
            let Some(name) = self.name(&field, e.name.as_ref(), &at, names) else {
                // keep indices aligned with the file
                out.push((String::new(), TransientKind::Other));
                continue;
            };
            let kind = match e.kind.as_ref().map(|k| (k.get_ref().trim(), span(k))) {
                None => TransientKind::Other,
                Some(("excited", _)) => TransientKind::Excited,
                Some(("intersection", _)) => TransientKind::Intersection,
                Some(("hot", _)) => TransientKind::Hot,
                Some(("other", _)) => TransientKind::Other,
                Some((k, o)) => {
                    self.error(
                        &format!("transient \"{name}\".kind"),
                        &o,
                        format!("\"{k}\" is not a kind of transient"),
                        Some("one of \"excited\", \"intersection\", \"hot\", \"other\"".into()),
                    );
                    TransientKind::Other
                }
            };
            out.push((name, kind));
        }
        out
    }

    /// Resolve a species name, reporting an unknown one with the closest name.
    fn resolve_species(&mut self, field: &str, at: &Origin, name: &str, names: &Names) -> Option<usize> {
        if let Some(i) = names.species.iter().position(|s| s.name == name) {
            return Some(i);
        }
        if names.transients.iter().any(|t| t.0 == name) {
            self.error(
                field,
                at,
                format!("\"{name}\" is a transient, which is not followed as a concentration"),
                Some("reach transients with a [[photo]] step's `excites` or a channel's `to`".into()),
            );
            return None;
        }
        let all = names
            .species
            .iter()
            .map(|s| s.name.as_str())
            .chain(names.transients.iter().map(|t| t.0.as_str()));
        let help = match super::suggest::closest(name, all) {
            Some(c) => format!("did you mean \"{c}\"?"),
            None => "declare it in a [[species]] table".into(),
        };
        self.error(field, at, format!("unknown species \"{name}\""), Some(help));
        None
    }

    fn terms(&mut self, field: &str, at: &Origin, raw: &[equation::RawTerm], names: &Names) -> Option<Vec<Term>> {
        let mut out = Vec::new();
        let mut ok = true;
        for t in raw {
            match self.resolve_species(field, at, &t.name, names) {
                Some(species) => out.push(Term {
                    species,
                    coefficient: t.coefficient,
                }),
                None => ok = false,
            }
        }
        ok.then_some(out)
    }

    /// A rate law; `key` is the `--set` prefix of its fields (e.g. `thermal.NAME`).
    fn rate_law(&mut self, field: &str, r: &Spanned<schema::Rate>, order: u32, key: &str) -> Option<RateLaw> {
        let at = span(r);
        let e = &self.rate_with_overrides(r.get_ref(), key);
        let f = |t: &Option<Text>| {
            t.as_ref().map(|t| Field {
                value: t.get_ref().clone(),
                origin: origin(t),
            })
        };
        let ways = "one of: k = \"0.04 /s\"; prefactor + activation (Arrhenius); barrier = \"20 kcal/mol\" (Eyring ΔG‡); enthalpy + entropy (Eyring ΔH‡, ΔS‡); barrier + reactant_frequencies + ts_frequencies (transition-state theory)";
        if e.reactant_frequencies.is_some() || e.ts_frequencies.is_some() {
            return self.rate_from_frequencies(field, r, order);
        }
        for (key, given) in [
            ("tunnelling", e.tunnelling.is_some()),
            ("degeneracy", e.degeneracy.is_some()),
        ] {
            if given {
                self.error(
                    &format!("{field}.{key}"),
                    &at,
                    "applies only to a rate from frequencies",
                    Some("add reactant_frequencies and ts_frequencies (barrier is then E0), or remove the key".into()),
                );
                return None;
            }
        }
        let given = [
            e.k.is_some(),
            e.prefactor.is_some() || e.activation.is_some(),
            e.barrier.is_some(),
            e.enthalpy.is_some() || e.entropy.is_some(),
        ];
        if given.iter().filter(|g| **g).count() != 1 {
            self.error(field, &at, "give the rate exactly one way", Some(ways.into()));
            return None;
        }
        let transmission = match &e.transmission {
            Some(k) => {
                let v = *k.get_ref();
                if !(v > 0.0 && v <= 1.0) {
                    self.error(
                        &format!("{field}.transmission"),
                        &origin(k),
                        format!("{v} must lie in (0, 1]"),
                        None,
                    );
                    return None;
                }
                if e.k.is_some() || e.prefactor.is_some() {
                    self.error(
                        &format!("{field}.transmission"),
                        &origin(k),
                        "applies only to Eyring rates (barrier, or enthalpy + entropy)",
                        None,
                    );
                    return None;
                }
                v
            }
            None => 1.0,
        };
        if let Some(k) = f(&e.k) {
            return self
                .positive(&format!("{field}.k"), &k, Quantity::RateConstant(order))
                .map(RateLaw::Constant);
        }
        if given[1] {
            let (Some(a), Some(ea)) = (f(&e.prefactor), f(&e.activation)) else {
                self.error(
                    field,
                    &at,
                    "Arrhenius needs both prefactor and activation",
                    Some(ways.into()),
                );
                return None;
            };
            let a = self.positive(&format!("{field}.prefactor"), &a, Quantity::RateConstant(order));
            let ea = self.quantity(&format!("{field}.activation"), &ea, Quantity::MolarEnergy);
            return Some(RateLaw::Arrhenius {
                prefactor: a?,
                activation: ea?,
            });
        }
        if let Some(g) = f(&e.barrier) {
            let v = self.quantity(&format!("{field}.barrier"), &g, Quantity::MolarEnergy)?;
            if v < 0.0 {
                self.warn(
                    &format!("{field}.barrier"),
                    &g.origin,
                    format!("\"{}\" is a negative barrier", g.value),
                    None,
                );
            }
            return Some(RateLaw::EyringFree {
                barrier: v,
                transmission,
            });
        }
        let (Some(h), Some(s)) = (f(&e.enthalpy), f(&e.entropy)) else {
            self.error(
                field,
                &at,
                "Eyring from ΔH‡ needs both enthalpy and entropy",
                Some(ways.into()),
            );
            return None;
        };
        let h = self.quantity(&format!("{field}.enthalpy"), &h, Quantity::MolarEnergy);
        let s = self.quantity(&format!("{field}.entropy"), &s, Quantity::MolarEntropy);
        Some(RateLaw::EyringEnthalpy {
            enthalpy: h?,
            entropy: s?,
            transmission,
        })
    }

    /// The file's rate with `--set KEY.FIELD` values put in. `k` or `barrier` replace the way
    /// the rate is given (keeping `transmission` for a barrier); `prefactor`, `activation`,
    /// `enthalpy`, `entropy` and `transmission` replace a field of the form the file uses.
    /// Values from the command line carry an empty span.
    fn rate_with_overrides(&self, file: &schema::Rate, key: &str) -> schema::Rate {
        let cmd = |v: &str| Some(Spanned::new(0..0, v.to_string()));
        let get = |name: &str| self.overrides.get(&format!("{key}.{name}"));
        let transmission = |r: &schema::Rate| match get("transmission") {
            Some(v) => Some(Spanned::new(0..0, v.parse::<f64>().unwrap_or(f64::NAN))),
            None => r.transmission.clone(),
        };
        if let Some(k) = get("k") {
            return schema::Rate {
                k: cmd(k),
                ..Default::default()
            };
        }
        if file.reactant_frequencies.is_some() || file.ts_frequencies.is_some() {
            // A rate from frequencies keeps its modes: `barrier` is E₀ there.
            let mut r = file.clone();
            r.barrier = get("barrier").map_or(r.barrier, cmd);
            r.transmission = transmission(&r);
            return r;
        }
        if let Some(g) = get("barrier") {
            return schema::Rate {
                barrier: cmd(g),
                transmission: transmission(file),
                ..Default::default()
            };
        }
        let mut r = file.clone();
        if r.prefactor.is_some() || r.activation.is_some() {
            r.prefactor = get("prefactor").map_or(r.prefactor, cmd);
            r.activation = get("activation").map_or(r.activation, cmd);
        }
        if r.enthalpy.is_some() || r.entropy.is_some() {
            r.enthalpy = get("enthalpy").map_or(r.enthalpy, cmd);
            r.entropy = get("entropy").map_or(r.entropy, cmd);
        }
        if r.barrier.is_some() || r.enthalpy.is_some() || r.entropy.is_some() {
            r.transmission = transmission(&r);
        }
        r
    }

    /// A share from the file: a number, or a percentage string such as "12 %" (= 0.12); range
    /// checks are the caller's.
    fn share(&mut self, field: &str, at: &Origin, v: &toml::Value) -> Option<f64> {
        let r = match v {
            toml::Value::Float(x) => Ok(*x),
            toml::Value::Integer(x) => Ok(*x as f64),
            toml::Value::String(s) => units::fraction(s),
            other => Err(format!("{other} is not a number")),
        };
        match r {
            Ok(x) => Some(x),
            Err(m) => {
                self.error(
                    field,
                    at,
                    m,
                    Some("a number such as 0.3, or a percentage such as \"30 %\"".into()),
                );
                None
            }
        }
    }

    /// A number in [0, 1] given with `--set` (quantum yield, efficiency).
    fn fraction_given(&mut self, field: &str, v: &str) -> Option<f64> {
        match units::fraction(v) {
            Ok(x) if (0.0..=1.0).contains(&x) => Some(x),
            _ => {
                self.error(
                    field,
                    &Origin::CommandLine,
                    format!("\"{v}\" is not a number in [0, 1]"),
                    Some(
                        "a number such as 0.25 or a percentage such as \"25 %\" (it replaces a table by one value at \
                         every wavelength)"
                            .into(),
                    ),
                );
                None
            }
        }
    }

    fn thermal(&mut self, doc: &schema::NetworkFile, names: &Names, temperature: f64) -> Vec<ThermalStep> {
        let mut out = Vec::new();
        for (i, s) in doc.thermal.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = format!("thermal[{i}]");
            let Some(eq) = &e.equation else {
                self.error(
                    &format!("{field}.equation"),
                    &at,
                    "is missing",
                    Some("e.g. equation = \"A + B -> C\"".into()),
                );
                continue;
            };
            let eq_at = span(eq);
            let raw = match equation::parse(eq.get_ref()) {
                Ok(r) => r,
                Err(m) => {
                    self.error(
                        &format!("{field}.equation"),
                        &eq_at,
                        m,
                        Some("e.g. \"2 M -> D\", \"A + B <=> C\"".into()),
                    );
                    continue;
                }
            };
            let (Some(left), Some(right)) = (
                self.terms(&format!("{field}.equation"), &eq_at, &raw.left, names),
                self.terms(&format!("{field}.equation"), &eq_at, &raw.right, names),
            ) else {
                continue;
            };
            let name = e
                .name
                .as_ref()
                .map_or(eq.get_ref().trim().to_string(), |n| n.get_ref().clone());
            let order_of = |t: &[Term]| t.iter().map(|x| x.coefficient).sum::<f64>();
            let whole = |o: f64| (o.fract() == 0.0 && (1.0..=3.0).contains(&o)).then_some(o as u32);
            let Some(order) = whole(order_of(&left)) else {
                self.error(
                    &format!("{field}.equation"),
                    &eq_at,
                    format!(
                        "molecularity {} is not 1, 2 or 3 (mass action needs whole-number elementary steps)",
                        order_of(&left)
                    ),
                    None,
                );
                continue;
            };
            let reverse_order = whole(order_of(&right));
            let Some(rate) = &e.rate else {
                self.error(
                    &format!("{field}.rate"),
                    &at,
                    "is missing",
                    Some(format!("e.g. rate = {{ k = \"{}\" }}", example_k(order))),
                );
                continue;
            };
            let Some(law) = self.rate_law(&format!("{field}.rate"), rate, order, &format!("thermal.{name}")) else {
                continue;
            };
            let k = law.rate_constant(temperature, order);
            let forward = out.len();
            let reverse_law = match (&e.reverse, raw.reversible) {
                (Some(r), true) => match reverse_order {
                    Some(o2) => self
                        .rate_law(&format!("{field}.reverse"), r, o2, &format!("thermal.{name}.reverse"))
                        .map(|l| (l, o2)),
                    None => {
                        self.error(
                            &format!("{field}.equation"),
                            &eq_at,
                            "the reverse of a reversible step needs 1, 2 or 3 whole product molecules",
                            None,
                        );
                        None
                    }
                },
                (None, true) => {
                    self.error(
                        &format!("{field}.reverse"),
                        &at,
                        "is missing for a reversible (<=>) equation",
                        Some("e.g. reverse = { k = \"1e-3 /s\" }, or write -> for one direction".into()),
                    );
                    None
                }
                (Some(r), false) => {
                    self.error(
                        &format!("{field}.reverse"),
                        &span(r),
                        "is given but the equation is one-way (->)",
                        Some("write <=> for a reversible step".into()),
                    );
                    None
                }
                (None, false) => None,
            };
            if raw.reversible && reverse_law.is_none() {
                continue;
            }
            out.push(ThermalStep {
                name: name.clone(),
                reactants: left.clone(),
                products: right.clone(),
                rate: law,
                order,
                k,
                reverse_of: None,
            });
            self.at.thermal.push(at.clone());
            if let Some((law, o2)) = reverse_law {
                self.at.thermal.push(at.clone());
                let k = law.rate_constant(temperature, o2);
                out.push(ThermalStep {
                    name: format!("{name} (reverse)"),
                    reactants: right,
                    products: left,
                    rate: law,
                    order: o2,
                    k,
                    reverse_of: Some(forward),
                });
            }
        }
        out
    }

    fn window(&mut self, field: &str, r: &Spanned<Vec<String>>) -> Option<(f64, f64)> {
        let at = span(r);
        let v = r.get_ref();
        if v.len() != 2 {
            self.error(
                field,
                &at,
                "needs two wavelengths",
                Some("e.g. range = [\"300 nm\", \"400 nm\"]".into()),
            );
            return None;
        }
        let lo = self.positive(
            field,
            &Field {
                value: v[0].clone(),
                origin: at.clone(),
            },
            Quantity::Wavelength,
        )?;
        let hi = self.positive(
            field,
            &Field {
                value: v[1].clone(),
                origin: at.clone(),
            },
            Quantity::Wavelength,
        )?;
        if lo >= hi {
            self.error(field, &at, "the first wavelength must be the shorter", None);
            return None;
        }
        Some((lo, hi))
    }

    fn photo(&mut self, doc: &schema::NetworkFile, names: &Names) -> Vec<PhotoStep> {
        let mut out = Vec::new();
        for (i, s) in doc.photo.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = format!("photo[{i}]");
            let window = match &e.range {
                Some(r) => match self.window(&format!("{field}.range"), r) {
                    Some(w) => Some(w),
                    None => continue,
                },
                None => None,
            };
            let forms = "the short form: equation = \"A -> B\" with quantum_yield; or the long form: absorber = \"A\", excites = \"A*\" (a transient)";
            match (&e.equation, &e.absorber, &e.excites) {
                (Some(eq), None, None) => {
                    if let Some(x) = &e.efficiency {
                        self.error(
                            &format!("{field}.efficiency"),
                            &span(x),
                            "belongs to the long form (absorber + excites)",
                            Some("the short form takes quantum_yield".into()),
                        );
                        continue;
                    }
                    let eq_at = span(eq);
                    let raw = match equation::parse(eq.get_ref()) {
                        Ok(r) => r,
                        Err(m) => {
                            self.error(&format!("{field}.equation"), &eq_at, m, Some("e.g. \"A -> B\"".into()));
                            continue;
                        }
                    };
                    if raw.reversible {
                        self.error(
                            &format!("{field}.equation"),
                            &eq_at,
                            "a photochemical step runs one way",
                            Some("write two [[photo]] steps, A -> B and B -> A".into()),
                        );
                        continue;
                    }
                    if raw.left.len() != 1 || raw.left[0].coefficient != 1.0 {
                        self.error(
                            &format!("{field}.equation"),
                            &eq_at,
                            "one photon is absorbed by one molecule: the left side must be a single species",
                            Some("for a reaction of the excited molecule with a partner, use a transient with a `quencher` channel".into()),
                        );
                        continue;
                    }
                    let (Some(left), Some(right)) = (
                        self.terms(&format!("{field}.equation"), &eq_at, &raw.left, names),
                        self.terms(&format!("{field}.equation"), &eq_at, &raw.right, names),
                    ) else {
                        continue;
                    };
                    let Some(qy) = &e.quantum_yield else {
                        self.error(
                            &format!("{field}.quantum_yield"),
                            &at,
                            "is missing",
                            Some("a number in [0, 1], or a table over wavelength".into()),
                        );
                        continue;
                    };
                    let name = e
                        .name
                        .as_ref()
                        .map_or(format!("{} (hν)", eq.get_ref().trim()), |n| n.get_ref().clone());
                    let set = self.overrides.get(&format!("photo.{name}.quantum_yield"));
                    let qy = match set {
                        Some(v) => match self.fraction_given(&format!("{field}.quantum_yield"), v) {
                            Some(x) => Spectrum::Constant { value: x, at: None },
                            None => continue,
                        },
                        None => match self.spectrum(&format!("{field}.quantum_yield"), qy, None, Outside::Nearest) {
                            Some(q) => q,
                            None => continue,
                        },
                    };
                    if qy.max() > 1.0 + 1e-12 {
                        self.error(
                            &format!("{field}.quantum_yield"),
                            &span(e.quantum_yield.as_ref().unwrap()),
                            format!("{} is above 1", qy.max()),
                            Some("a quantum yield lies in [0, 1]; a chain reaction is written as thermal steps".into()),
                        );
                        continue;
                    }
                    self.at.photo.push(at.clone());
                    out.push(PhotoStep {
                        name,
                        absorber: left[0].species,
                        outcome: PhotoOutcome::Products(right),
                        quantum_yield: qy,
                        window,
                    });
                }
                (None, Some(a), Some(x)) => {
                    if let Some(q) = &e.quantum_yield {
                        self.error(&format!("{field}.quantum_yield"), &span(q), "belongs to the short form (equation)", Some("in the long form, set the transient's channels, and `efficiency` for the share reaching it".into()));
                        continue;
                    }
                    let Some(absorber) =
                        self.resolve_species(&format!("{field}.absorber"), &span(a), a.get_ref().trim(), names)
                    else {
                        continue;
                    };
                    let xn = x.get_ref().trim();
                    let Some(t) = names.transients.iter().position(|t| t.0 == xn) else {
                        let help = match super::suggest::closest(xn, names.transients.iter().map(|t| t.0.as_str())) {
                            Some(c) => format!("did you mean \"{c}\"?"),
                            None => "declare it in a [[transient]] table".into(),
                        };
                        self.error(
                            &format!("{field}.excites"),
                            &span(x),
                            format!("unknown transient \"{xn}\""),
                            Some(help),
                        );
                        continue;
                    };
                    let name = e
                        .name
                        .as_ref()
                        .map_or(format!("{} + hν -> {}", names.species[absorber].name, xn), |n| {
                            n.get_ref().clone()
                        });
                    let set = self.overrides.get(&format!("photo.{name}.efficiency"));
                    let eff = match (set, &e.efficiency) {
                        (Some(v), _) => match self.fraction_given(&format!("{field}.efficiency"), v) {
                            Some(x) if x > 0.0 => x,
                            Some(x) => {
                                self.error(
                                    &format!("{field}.efficiency"),
                                    &Origin::CommandLine,
                                    format!("{x} must lie in (0, 1]"),
                                    None,
                                );
                                continue;
                            }
                            None => continue,
                        },
                        (None, e) => match e {
                            Some(v) => {
                                let Some(x) = self.share(&format!("{field}.efficiency"), &span(v), v.get_ref()) else {
                                    continue;
                                };
                                if !(0.0..=1.0).contains(&x) || x == 0.0 {
                                    self.error(
                                        &format!("{field}.efficiency"),
                                        &span(v),
                                        format!("{x} must lie in (0, 1]"),
                                        None,
                                    );
                                    continue;
                                }
                                x
                            }
                            None => 1.0,
                        },
                    };
                    self.at.photo.push(at.clone());
                    out.push(PhotoStep {
                        name,
                        absorber,
                        outcome: PhotoOutcome::Transient(t),
                        quantum_yield: Spectrum::Constant { value: eff, at: None },
                        window,
                    });
                }
                (None, Some(_), None) => self.error(
                    &format!("{field}.excites"),
                    &at,
                    "is missing: the long form names the transient reached",
                    Some(forms.into()),
                ),
                (None, None, Some(_)) => self.error(
                    &format!("{field}.absorber"),
                    &at,
                    "is missing: the long form names the absorbing species",
                    Some(forms.into()),
                ),
                (None, None, None) => self.error(
                    &field,
                    &at,
                    "says neither what absorbs nor what happens",
                    Some(forms.into()),
                ),
                (Some(_), _, _) => self.error(&field, &at, "mixes the short and the long form", Some(forms.into())),
            }
        }
        out
    }

    fn transients(
        &mut self,
        doc: &schema::NetworkFile,
        names: &Names,
        heads: &[(String, TransientKind)],
        temperature: f64,
        photon: &[AbsorbedEnergy],
    ) -> Vec<Transient> {
        let mut out = Vec::new();
        for (i, t) in doc.transient.iter().enumerate() {
            let (name, kind) = heads[i].clone();
            let at = span(t);
            self.at.transients.push(at.clone());
            if name.is_empty() {
                out.push(Transient {
                    name,
                    kind,
                    channels: Vec::new(),
                    energy_from: None,
                    hot: None,
                });
                continue;
            }
            let field = format!("transient \"{name}\"");
            let mut channels = Vec::new();
            let mut hot = Vec::new();
            let mut hot_broken = false;
            for (j, c) in t.get_ref().channels.iter().enumerate() {
                let cat = span(c);
                let cf = format!("{field}.channels[{j}]");
                let e = c.get_ref();
                let Some(to) = &e.to else {
                    self.error(
                        &format!("{cf}.to"),
                        &cat,
                        "is missing",
                        Some("a transient name, or products such as \"B\" or \"B + C\"".into()),
                    );
                    continue;
                };
                let to_s = to.get_ref().trim();
                let target = if let Some(k) = heads.iter().position(|h| h.0 == to_s) {
                    Target::Transient(k)
                } else {
                    let raw = match equation::parse_side(to_s) {
                        Ok(r) => r,
                        Err(m) => {
                            self.error(&format!("{cf}.to"), &span(to), m, None);
                            continue;
                        }
                    };
                    if raw.is_empty() {
                        self.error(
                            &format!("{cf}.to"),
                            &span(to),
                            "leads nowhere",
                            Some("name a species or a transient".into()),
                        );
                        continue;
                    }
                    let Some(terms) = self.terms(&format!("{cf}.to"), &span(to), &raw, names) else {
                        continue;
                    };
                    Target::Species(terms)
                };
                if let Some(h) = &e.hot {
                    if e.fraction.is_some() || e.rate.is_some() || e.quencher.is_some() {
                        self.error(
                            &cf,
                            &cat,
                            "a hot channel takes no fraction, rate or quencher: its yield is computed",
                            Some("give hot = { barrier, ts_frequencies } alone".into()),
                        );
                        hot_broken = true;
                        continue;
                    }
                    match self.hot_spec(&format!("{cf}.hot"), h, channels.len()) {
                        Some(spec) => hot.push(spec),
                        None => {
                            hot_broken = true;
                            continue;
                        }
                    }
                    channels.push((
                        Channel {
                            target,
                            branching: Branching::Hot {
                                fraction: f64::NAN,
                                barrier: f64::NAN,
                                energy: f64::NAN,
                                cooling: f64::NAN,
                                rate_at_start: f64::NAN,
                            },
                            returns: false,
                        },
                        cat,
                    ));
                    continue;
                }
                let ck = format!("transient.{name}.channels[{j}]");
                let fraction = match (&e.fraction, &e.rate) {
                    // The channel taking the rest has no number of its own to set.
                    (Some(f), None) if !matches!(f.get_ref(), toml::Value::String(s) if s.trim() == "rest") => {
                        match self.overrides.get(&format!("{ck}.fraction")) {
                            Some(v) => Some(Spanned::new(
                                0..0,
                                v.parse::<f64>()
                                    .map_or(toml::Value::String(v.to_string()), toml::Value::Float),
                            )),
                            None => Some(f.clone()),
                        }
                    }
                    _ => e.fraction.clone(),
                };
                let branching = match (&fraction, &e.rate, &e.quencher) {
                    (Some(f), None, None) => match f.get_ref() {
                        toml::Value::String(s) if s.trim() == "rest" => Branching::Rest,
                        toml::Value::Float(_) | toml::Value::Integer(_) | toml::Value::String(_) => {
                            let Some(x) = self.share(&format!("{cf}.fraction"), &origin(f), f.get_ref()) else {
                                continue;
                            };
                            if !(0.0..=1.0).contains(&x) {
                                self.error(
                                    &format!("{cf}.fraction"),
                                    &origin(f),
                                    format!("{x} is outside [0, 1]"),
                                    Some("a fraction lies in [0, 1], or \"rest\"".into()),
                                );
                                continue;
                            }
                            Branching::Fraction(x)
                        }
                        other => {
                            self.error(
                                &format!("{cf}.fraction"),
                                &origin(f),
                                format!("{other} is not a fraction"),
                                Some("a number in [0, 1], or \"rest\"".into()),
                            );
                            continue;
                        }
                    },
                    (None, Some(r), None) => {
                        let Some(law) = self.rate_law(&format!("{cf}.rate"), r, 1, &ck) else {
                            continue;
                        };
                        let k = law.rate_constant(temperature, 1);
                        Branching::Rate { law, k }
                    }
                    (None, Some(r), Some(q)) => {
                        let Some(partner) =
                            self.resolve_species(&format!("{cf}.quencher"), &span(q), q.get_ref().trim(), names)
                        else {
                            continue;
                        };
                        let Some(law) = self.rate_law(&format!("{cf}.rate"), r, 2, &ck) else {
                            continue;
                        };
                        let k2 = law.rate_constant(temperature, 2);
                        Branching::Quenching { partner, law, k2 }
                    }
                    (None, None, Some(_)) => {
                        self.error(
                            &format!("{cf}.rate"),
                            &cat,
                            "a quenching channel needs its bimolecular rate constant",
                            Some("e.g. rate = { k = \"1e10 /(M s)\" }".into()),
                        );
                        continue;
                    }
                    (None, None, None) => {
                        self.error(&cf, &cat, "needs a fraction or a rate", Some("fraction = 0.3, fraction = \"rest\", rate = { k = \"1e9 /s\" }, rate = { barrier = \"5 kcal/mol\" }, or quencher + rate".into()));
                        continue;
                    }
                    (Some(_), Some(_), _) | (Some(_), None, Some(_)) => {
                        self.error(
                            &cf,
                            &cat,
                            "has both a fraction and a rate",
                            Some("give one: a channel's share is a fixed fraction or follows from its rate".into()),
                        );
                        continue;
                    }
                };
                channels.push((
                    Channel {
                        target,
                        branching,
                        returns: false,
                    },
                    cat,
                ));
            }
            // A channel already reported as broken would only add follow-on errors about sums.
            let complete = channels.len() == t.get_ref().channels.len() && !hot_broken;
            let mut hot_model = None;
            let hot_ok = complete && self.hot_yields(&field, t, kind, &hot, &mut channels, &photon[i], &mut hot_model);
            let photon_energy = t
                .get_ref()
                .energy
                .as_ref()
                .is_some_and(|e| e.get_ref().trim() == "photon");
            if complete && hot_ok {
                self.check_channels(&field, &at, &channels);
            }
            out.push(Transient {
                name,
                kind,
                channels: channels.into_iter().map(|c| c.0).collect(),
                energy_from: (photon_energy && !hot.is_empty()).then(|| photon[i].describe()),
                hot: hot_model,
            });
        }
        out
    }

    fn check_channels(&mut self, field: &str, at: &Origin, channels: &[(Channel, Origin)]) {
        if channels.is_empty() {
            self.error(
                &format!("{field}.channels"),
                at,
                "the transient has no channels, so no way out",
                Some("add channels, e.g. channels = [{ to = \"A\", fraction = \"rest\" }]".into()),
            );
            return;
        }
        let fixed = channels
            .iter()
            .filter(|c| c.0.branching.fixed_share().is_some() || c.0.branching == Branching::Rest)
            .count();
        if fixed != 0 && fixed != channels.len() {
            self.error(
                &format!("{field}.channels"),
                at,
                "mixes fixed fractions with rates",
                Some("give every channel a fraction (with one \"rest\"), or every channel a rate: the shares then follow from the rates".into()),
            );
            return;
        }
        if fixed == 0 {
            return;
        }
        let rests: Vec<&Origin> = channels
            .iter()
            .filter(|c| c.0.branching == Branching::Rest)
            .map(|c| &c.1)
            .collect();
        if rests.len() > 1 {
            self.error(
                &format!("{field}.channels"),
                rests[1],
                "more than one channel takes the rest",
                Some("only one channel can be \"rest\"".into()),
            );
            return;
        }
        let sum: f64 = channels
            .iter()
            .map(|c| c.0.branching.fixed_share().unwrap_or(0.0))
            .sum();
        if sum > 1.0 + 1e-9 {
            self.error(
                &format!("{field}.channels"),
                at,
                format!("the fractions sum to {}, above 1", units::sig(sum, 6)),
                Some("fractions out of one transient sum to at most 1".into()),
            );
        } else if sum < 1.0 - 1e-9 && rests.is_empty() {
            self.error(
                &format!("{field}.channels"),
                at,
                format!(
                    "the fractions sum to {} and no channel takes the rest",
                    units::sig(sum, 6)
                ),
                Some(
                    "add a return channel, e.g. { to = \"A\", fraction = \"rest\" }, or make the fractions sum to 1"
                        .into(),
                ),
            );
        }
    }
}

fn example_k(order: u32) -> &'static str {
    match order {
        1 => "0.04 /s",
        2 => "1e4 /(M s)",
        _ => "1e8 /(M2 s)",
    }
}

/// Explain why an override key matched nothing.
fn unused_override(loaded: &Loaded, key: &str) -> Diagnostic {
    let field = format!("--set {key}");
    let parts: Vec<&str> = key.splitn(3, '.').collect();
    let generic = || {
        Diagnostic::error(&field, "no such field in this network")
            .with_help(format!("keys that can be set: {ACCEPTED}"))
    };
    match parts.as_slice() {
        ["light", name, f] => {
            let lights: Vec<(String, String)> = loaded
                .doc
                .light
                .iter()
                .enumerate()
                .map(|(i, l)| {
                    let l = l.get_ref();
                    (
                        l.name
                            .as_ref()
                            .map_or(format!("light{}", i + 1), |n| n.get_ref().trim().to_string()),
                        l.kind
                            .as_ref()
                            .map_or(String::new(), |k| k.get_ref().trim().to_string()),
                    )
                })
                .collect();
            match lights.iter().find(|l| l.0 == *name) {
                Some((_, kind)) => Diagnostic::error(
                    &field,
                    format!("`{f}` does not apply to the light \"{name}\" of kind \"{kind}\""),
                )
                .with_help(match kind.as_str() {
                    "line" => "a line takes wavelength, power or photon_flux",
                    "band" => "a band takes centre, fwhm, power or photon_flux",
                    "lamp" => "a lamp takes power or photon_flux",
                    _ => "sunlight takes scale (and conditions.irradiated_area)",
                }),
                None => {
                    let hint = super::suggest::closest(name, lights.iter().map(|l| l.0.as_str()))
                        .map_or("no light has that name".to_string(), |c| {
                            format!("did you mean light.{c}.{f}?")
                        });
                    Diagnostic::error(&field, format!("no light called \"{name}\"")).with_help(hint)
                }
            }
        }
        ["species", name, _] => {
            let names: Vec<String> = loaded
                .doc
                .species
                .iter()
                .filter_map(|s| s.get_ref().name.as_ref().map(|n| n.get_ref().trim().to_string()))
                .collect();
            let hint = super::suggest::closest(name, names.iter().map(|s| s.as_str()))
                .map_or(format!("keys that can be set: {ACCEPTED}"), |c| {
                    format!("did you mean species.{c}.initial?")
                });
            Diagnostic::error(&field, format!("no species called \"{name}\", or no such field")).with_help(hint)
        }
        [section @ ("photo" | "thermal" | "transient"), ..] => {
            let doc = &loaded.doc;
            let text = |t: &Option<Text>| t.as_ref().map(|t| t.get_ref().trim().to_string());
            let names: Vec<String> = match *section {
                "photo" => doc
                    .photo
                    .iter()
                    .filter_map(|s| {
                        let s = s.get_ref();
                        text(&s.name).or_else(|| text(&s.equation).map(|e| format!("{e} (hν)")))
                    })
                    .collect(),
                "thermal" => doc
                    .thermal
                    .iter()
                    .filter_map(|s| text(&s.get_ref().name).or_else(|| text(&s.get_ref().equation)))
                    .collect(),
                _ => doc.transient.iter().filter_map(|s| text(&s.get_ref().name)).collect(),
            };
            let names = if names.is_empty() {
                format!("this network has no {section} entries")
            } else {
                format!("{section} names here: {}", names.join(", "))
            };
            Diagnostic::error(
                &field,
                "no such field in this network, or it does not apply to how the value is given",
            )
            .with_help(format!("{names}; keys that can be set: {ACCEPTED}"))
        }
        _ => generic(),
    }
}

/// The names known while resolving.
pub(super) struct Names<'a> {
    species: &'a [Species],
    transients: &'a [(String, TransientKind)],
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
fn absorbed_photon_energy(
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
            AbsorbedEnergy {
                energy: (w > 0.0 && we.is_finite()).then(|| we / w),
                absorbers,
            }
        })
        .collect()
}
