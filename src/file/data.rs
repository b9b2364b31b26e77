//! Measured data for fitting: time-course CSV files and experiments files.
//!
//! A time-course CSV (long format, one measurement a row):
//! ```text
//! # comment lines start with '#'
//! time (min), species, value (µM), sd (µM)
//! 0, Z-azo, 0.4, 0.5
//! 5, Z-azo, 12.1, 0.5
//! ```
//! Cells are split as in RFC 4180 (`file::csv::records`): a cell holding a comma or a quote
//! is quoted, `"a, b"`, with inner quotes doubled.
//! The time column has a time unit; the value column a concentration unit, or none for a yield
//! (a fraction of the initial concentration of the experiment's `yield_of` species); the
//! optional sd column the value's unit. Without sd every row weighs the same (σ = 1 in the
//! value column's unit).
//!
//! An experiments file (TOML) ties data to conditions:
//! ```toml
//! [[experiment]]
//! name = "20 mW"
//! data = "run-20mW.csv"                       # optional time course, relative to this file
//! set = { "light.UV LED.power" = "20 mW" }    # --set overrides for this experiment
//! until = "2 h"                               # optional: run at least this long
//! yield_of = "E-azo"                          # optional: the 100 % of a yield
//! endpoints = [                               # optional end-point data at `until`
//!   { kind = "final", species = "Z-azo", value = "30 µM", sd = "1 µM" },
//!   { kind = "yield", species = "Z-azo", value = 0.6, sd = 0.02 },
//!   { kind = "ratio", species = "Z-azo", over = "E-azo", value = 1.5, sd = 0.1 },
//!   { kind = "quantum_yield", species = "Z-azo", value = 0.12, sd = 0.01 },
//!   { kind = "reactant_quantum_yield", species = "Z-azo", absorber = "E-azo", value = 0.15, sd = 0.01 },
//!   { kind = "lifetime", transient = "S1", value = "1.5 ns", sd = "0.1 ns" },
//! ]
//! ```
//! Every problem is a [`Diagnostic`] naming the file, the line and what is accepted.

use super::csv::{records, split_header};
use crate::error::{Diagnostic, Error, Origin, Result};
use crate::units::{self, Quantity};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use toml::Spanned;

/// One measurement of a time course.
#[derive(Debug, Clone, PartialEq)]
pub struct Point {
    /// Time, s.
    pub time: f64,
    /// Species measured.
    pub species: String,
    /// Measured value: mol/L, or a fraction when `is_yield`.
    pub value: f64,
    /// Standard deviation in the value's unit (mol/L or fraction).
    pub sd: f64,
    /// True for a yield (fraction of the `yield_of` species' initial concentration).
    pub is_yield: bool,
    /// True when the file gave the standard deviation (else σ = 1 in the value column's unit).
    pub weighted: bool,
    /// The CSV file.
    pub file: PathBuf,
    /// 1-based line in `file`.
    pub line: usize,
}

/// What an end point measures.
#[derive(Debug, Clone, PartialEq)]
pub enum EndpointKind {
    /// Concentration of a species at the end, mol/L.
    Final(String),
    /// End concentration of a species over the initial concentration of `yield_of`.
    Yield(String),
    /// End concentration of the first species over the second.
    Ratio(String, String),
    /// Net molecules of a species formed over the run (final − initial) per photon absorbed by
    /// the whole sample: every absorbing species, inner filters included (the solvent and vessel
    /// background not counted).
    QuantumYield(String),
    /// Net molecules of the first species formed over the run per photon absorbed by the second
    /// (the reactant) alone: the quantum yield as usually measured, per photon absorbed by the
    /// reactant (IUPAC Glossary of terms used in photochemistry, 3rd ed., Pure Appl. Chem. 79
    /// (2007) 293, "quantum yield").
    ReactantQuantumYield(String, String),
    /// Lifetime of a transient, s: 1 / (sum of its decay rates at the initial concentrations).
    Lifetime(String),
}

/// An end-point measurement.
#[derive(Debug, Clone, PartialEq)]
pub struct Endpoint {
    /// What it measures.
    pub kind: EndpointKind,
    /// Value (SI, mol/L for concentrations).
    pub value: f64,
    /// Standard deviation in the same unit (1 in SI when not given).
    pub sd: f64,
    /// True when the file gave the standard deviation.
    pub weighted: bool,
    /// The experiments file.
    pub file: PathBuf,
    /// 1-based line in `file`.
    pub line: usize,
}

/// One experiment: conditions (as `--set` overrides) and what was measured.
#[derive(Debug, Clone, PartialEq)]
pub struct Experiment {
    /// Name for tables and plots.
    pub name: String,
    /// `--set` overrides, in file order.
    pub set: Vec<(String, String)>,
    /// Shortest run, s (the last data time is used when larger).
    pub until: Option<f64>,
    /// Species whose initial concentration is 100 % for yields.
    pub yield_of: Option<String>,
    /// Time-course measurements.
    pub points: Vec<Point>,
    /// End points.
    pub endpoints: Vec<Endpoint>,
}

/// Read a data argument: a time-course CSV (one experiment, no overrides) or an experiments
/// TOML file.
pub fn read(path: &Path) -> Result<Vec<Experiment>> {
    let text = super::read_text(path)?;
    if path.extension().is_some_and(|e| e == "toml") {
        parse_experiments(path, &text)
    } else {
        let name = path
            .file_stem()
            .map_or("data".into(), |s| s.to_string_lossy().to_string());
        Ok(vec![Experiment {
            name,
            set: Vec::new(),
            until: None,
            yield_of: None,
            points: parse_points(path, &text)?,
            endpoints: Vec::new(),
        }])
    }
}

fn bad(path: &Path, line: usize, field: &str, msg: impl Into<String>, help: impl Into<String>) -> Error {
    let mut d = Diagnostic::error(field, msg).with_help(help).in_file(path);
    d.line_col = Some((line, 1));
    Error::invalid(d)
}

/// The header of a time-course CSV: seconds per time unit, (mol/L per value unit, unit) or
/// None for yields, and whether an sd column is present.
type Header = (f64, Option<(f64, String)>, bool);

/// Parse a time-course CSV.
pub fn parse_points(path: &Path, text: &str) -> Result<Vec<Point>> {
    let layout = "a header \"time (UNIT), species, value (UNIT), sd (UNIT)\" (sd optional; value without a unit is a yield fraction)";
    let mut header: Option<Header> = None;
    let mut out = Vec::new();
    let records = records(text).map_err(|(line, message)| bad(path, line, "row", message, layout))?;
    for r in &records {
        let line = r.line;
        let cells: Vec<&str> = r.cells.iter().map(String::as_str).collect();
        let Some((tf, vf, has_sd)) = &header else {
            if !(3..=4).contains(&cells.len()) {
                return Err(bad(path, line, "header", format!("{} columns", cells.len()), layout));
            }
            let (tn, tu) = split_header(cells[0]);
            if tn.parse::<f64>().is_ok() {
                return Err(bad(
                    path,
                    line,
                    "header",
                    "the first line is data, not a header",
                    layout,
                ));
            }
            let Some(tu) = tu else {
                return Err(bad(
                    path,
                    line,
                    "header",
                    format!("the time column \"{tn}\" has no unit"),
                    layout,
                ));
            };
            let tf = units::parse(&format!("1 {tu}"), Quantity::Time)
                .map_err(|e| bad(path, line, "header time unit", e.problem, Quantity::Time.accepted()))?;
            let (_, vu) = split_header(cells[2]);
            let vf = match vu {
                Some(u) => Some((
                    units::parse(&format!("1 {u}"), Quantity::Concentration).map_err(|e| {
                        bad(
                            path,
                            line,
                            "header value unit",
                            e.problem,
                            format!("{}, or no unit for a yield", Quantity::Concentration.accepted()),
                        )
                    })?,
                    u,
                )),
                None => None,
            };
            if cells.len() == 4 {
                let (_, su) = split_header(cells[3]);
                let same = match (&vf, &su) {
                    (Some((_, a)), Some(b)) => a == b,
                    (None, None) => true,
                    _ => false,
                };
                if !same {
                    return Err(bad(
                        path,
                        line,
                        "header sd unit",
                        "the sd column must have the value column's unit",
                        layout,
                    ));
                }
            }
            header = Some((tf, vf, cells.len() == 4));
            continue;
        };
        let want = if *has_sd { 4 } else { 3 };
        if cells.len() != want {
            return Err(bad(
                path,
                line,
                "row",
                format!("{} columns found; {want} expected", cells.len()),
                layout,
            ));
        }
        let num = |s: &str, col: &str| {
            s.parse::<f64>().ok().filter(|v| v.is_finite()).ok_or_else(|| {
                bad(
                    path,
                    line,
                    col,
                    format!("\"{s}\" is not a finite number"),
                    "a plain number",
                )
            })
        };
        let t = num(cells[0], "time")? * tf;
        if t < 0.0 {
            return Err(bad(
                path,
                line,
                "time",
                format!("{t} s is negative"),
                "times of zero or more",
            ));
        }
        if cells[1].is_empty() {
            return Err(bad(path, line, "species", "is empty", "a species name of the network"));
        }
        let factor = vf.as_ref().map_or(1.0, |v| v.0);
        let value = num(cells[2], "value")? * factor;
        let sd = if *has_sd {
            let s = num(cells[3], "sd")? * factor;
            if s <= 0.0 {
                return Err(bad(
                    path,
                    line,
                    "sd",
                    format!("\"{}\" is not positive", cells[3]),
                    "a standard deviation above zero",
                ));
            }
            s
        } else {
            factor
        };
        out.push(Point {
            time: t,
            species: cells[1].to_string(),
            value,
            sd,
            is_yield: vf.is_none(),
            weighted: *has_sd,
            file: path.to_path_buf(),
            line,
        });
    }
    if header.is_none() || out.is_empty() {
        return Err(Error::invalid(
            Diagnostic::error("rows", "no data rows")
                .with_help(layout)
                .in_file(path),
        ));
    }
    Ok(out)
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ExperimentsFile {
    #[serde(default)]
    experiment: Vec<Spanned<RawExperiment>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawExperiment {
    name: Option<String>,
    data: Option<String>,
    #[serde(default)]
    set: BTreeMap<String, Spanned<String>>,
    until: Option<String>,
    yield_of: Option<String>,
    #[serde(default)]
    endpoints: Vec<Spanned<RawEndpoint>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEndpoint {
    kind: String,
    species: Option<String>,
    over: Option<String>,
    transient: Option<String>,
    absorber: Option<String>,
    value: toml::Value,
    sd: Option<toml::Value>,
}

/// Parse an experiments file.
pub fn parse_experiments(path: &Path, text: &str) -> Result<Vec<Experiment>> {
    let line_of = |r: std::ops::Range<usize>| crate::error::line_col(text, r.start).0;
    let doc: ExperimentsFile = toml::from_str(text).map_err(|e| {
        let mut d = Diagnostic::error("experiments file", e.message().trim().to_string())
            .with_help("[[experiment]] tables with name, data, set, until, yield_of, endpoints")
            .in_file(path);
        if let Some(r) = e.span() {
            d = d.at(path, text, &Origin::Span(r));
        }
        Error::invalid(d)
    })?;
    if doc.experiment.is_empty() {
        return Err(Error::invalid(
            Diagnostic::error("experiment", "no [[experiment]] tables")
                .with_help("add [[experiment]] with data = \"file.csv\" or endpoints")
                .in_file(path),
        ));
    }
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut out = Vec::new();
    for (i, e) in doc.experiment.into_iter().enumerate() {
        let line = line_of(e.span());
        let e = e.into_inner();
        let name = e.name.unwrap_or(format!("experiment {}", i + 1));
        let field = format!("experiment \"{name}\"");
        let until = match &e.until {
            Some(u) => Some(units::parse(u, Quantity::Time).map_err(|err| {
                bad(
                    path,
                    line,
                    &format!("{field}.until"),
                    err.problem,
                    Quantity::Time.accepted(),
                )
            })?),
            None => None,
        };
        let points = match &e.data {
            Some(d) => {
                let p = dir.join(d);
                let t = super::read_text(&p)?;
                parse_points(&p, &t)?
            }
            None => Vec::new(),
        };
        let mut endpoints = Vec::new();
        for ep in e.endpoints {
            let eline = line_of(ep.span());
            let ep = ep.into_inner();
            let ef = format!("{field}.endpoints");
            let need = |v: &Option<String>, what: &str| {
                v.clone().ok_or_else(|| {
                    bad(
                        path,
                        eline,
                        &ef,
                        format!("`{}` needs `{what}`", ep.kind),
                        "see the endpoint kinds in the README",
                    )
                })
            };
            let (kind, q) = match ep.kind.as_str() {
                "final" => (
                    EndpointKind::Final(need(&ep.species, "species")?),
                    Some(Quantity::Concentration),
                ),
                "yield" => (EndpointKind::Yield(need(&ep.species, "species")?), None),
                "ratio" => (
                    EndpointKind::Ratio(need(&ep.species, "species")?, need(&ep.over, "over")?),
                    None,
                ),
                "quantum_yield" => (EndpointKind::QuantumYield(need(&ep.species, "species")?), None),
                "reactant_quantum_yield" => (
                    EndpointKind::ReactantQuantumYield(need(&ep.species, "species")?, need(&ep.absorber, "absorber")?),
                    None,
                ),
                "lifetime" => (
                    EndpointKind::Lifetime(need(&ep.transient, "transient")?),
                    Some(Quantity::Time),
                ),
                k => {
                    return Err(bad(
                        path,
                        eline,
                        &format!("{ef}.kind"),
                        format!("unknown kind \"{k}\""),
                        "final, yield, ratio, quantum_yield, reactant_quantum_yield or lifetime",
                    ));
                }
            };
            let read = |v: &toml::Value, what: &str| -> Result<f64> {
                let f = format!("{ef}.{what}");
                match (v, q) {
                    (toml::Value::Float(x), None) => Ok(*x),
                    (toml::Value::Integer(x), None) => Ok(*x as f64),
                    (toml::Value::String(s), Some(q)) => {
                        units::parse(s, q).map_err(|e| bad(path, eline, &f, e.problem, q.accepted()))
                    }
                    (other, Some(q)) => Err(bad(path, eline, &f, format!("{other} has no unit"), q.accepted())),
                    (other, None) => Err(bad(
                        path,
                        eline,
                        &f,
                        format!("{other} is not a plain number"),
                        "a plain number, e.g. 0.42",
                    )),
                }
            };
            let value = read(&ep.value, "value")?;
            let sd = match &ep.sd {
                Some(s) => read(s, "sd")?,
                None => 1.0,
            };
            if !(sd > 0.0 && value.is_finite()) {
                return Err(bad(
                    path,
                    eline,
                    &format!("{ef}.sd"),
                    "must be positive",
                    "a standard deviation above zero",
                ));
            }
            endpoints.push(Endpoint {
                kind,
                value,
                sd,
                weighted: ep.sd.is_some(),
                file: path.to_path_buf(),
                line: eline,
            });
        }
        if points.is_empty() && endpoints.is_empty() {
            return Err(bad(
                path,
                line,
                &field,
                "has neither data nor endpoints",
                "add data = \"file.csv\" or endpoints = [...]",
            ));
        }
        if !endpoints.is_empty() && until.is_none() && points.is_empty() {
            return Err(bad(
                path,
                line,
                &format!("{field}.until"),
                "is needed for end points without a time course",
                Quantity::Time.accepted(),
            ));
        }
        out.push(Experiment {
            name,
            set: e.set.into_iter().map(|(k, v)| (k, v.into_inner())).collect(),
            until,
            yield_of: e.yield_of,
            points,
            endpoints,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(text: &str) -> String {
        match parse_points(Path::new("d.csv"), text) {
            Err(Error::Invalid(d)) => d[0].to_string(),
            other => panic!("expected an error, got {other:?}"),
        }
    }

    #[test]
    fn reads_units_yields_and_sd() {
        let p = parse_points(
            Path::new("d.csv"),
            "# x\ntime (min), species, value (µM), sd (µM)\n1, A, 2, 0.5\n",
        )
        .unwrap();
        assert_eq!(p[0].time, 60.0);
        assert!((p[0].value - 2e-6).abs() < 1e-18 && (p[0].sd - 5e-7).abs() < 1e-18);
        assert_eq!(p[0].line, 3);
        let p = parse_points(Path::new("d.csv"), "time (s), species, yield\n1, A, 0.5\n").unwrap();
        assert!(p[0].is_yield && p[0].sd == 1.0);
    }

    #[test]
    fn bad_rows_name_file_and_line() {
        let e = err("time (s), species, value (M)\n1, A, 2\n2, A, x\n");
        assert!(
            e.contains("d.csv:3") && e.contains("\"x\" is not a finite number"),
            "{e}"
        );
        let e = err("time, species, value (M)\n1, A, 2\n");
        assert!(e.contains("d.csv:1") && e.contains("no unit"), "{e}");
        let e = err("time (s), species, value (M), sd (M)\n1, A, 2, 0\n");
        assert!(e.contains("d.csv:2") && e.contains("not positive"), "{e}");
        let e = err("time (s), species, value (M)\n1, A\n");
        assert!(e.contains("d.csv:2") && e.contains("2 columns"), "{e}");
        let e = err("time (parsec), species, value (M)\n1, A, 2\n");
        assert!(e.contains("d.csv:1"), "{e}");
        let e = err("time (s), species, value (M)\n-1, A, 2\n");
        assert!(e.contains("negative"), "{e}");
        let e = err("time (s), species, value (M)\n# c\n\n1, \"A, 2\n");
        assert!(e.contains("d.csv:4") && e.contains("never closed"), "{e}");
    }

    #[test]
    fn quoted_cells_keep_commas_and_quotes() {
        // RFC 4180 §2 rules 6 and 7: a quoted field may hold commas; an inner quote is doubled.
        let p = parse_points(
            Path::new("d.csv"),
            "# x, \"y\"\n\"time (min)\",species,\"value (µM)\"\r\n1,\"1,2-diol\",2\r\n\n2, \"say \"\"hi\"\"\" , 3\n",
        )
        .unwrap();
        assert_eq!(p.len(), 2);
        assert_eq!((p[0].species.as_str(), p[0].line), ("1,2-diol", 3));
        assert_eq!((p[1].species.as_str(), p[1].line), ("say \"hi\"", 5));
        assert_eq!(p[1].time, 120.0);
        assert!((p[1].value - 3e-6).abs() < 1e-18);
    }

    #[test]
    fn experiments_with_endpoints_and_errors() {
        let t = r#"
[[experiment]]
name = "dark"
until = "1 h"
set = { "conditions.temperature" = "310 K" }
endpoints = [
  { kind = "final", species = "B", value = "2 mM", sd = "0.1 mM" },
  { kind = "lifetime", transient = "S1", value = "2 ns", sd = "0.1 ns" },
]
"#;
        let e = parse_experiments(Path::new("e.toml"), t).unwrap();
        assert_eq!(
            e[0].set,
            vec![("conditions.temperature".to_string(), "310 K".to_string())]
        );
        assert_eq!(e[0].endpoints[1].kind, EndpointKind::Lifetime("S1".into()));
        assert!((e[0].endpoints[1].value - 2e-9).abs() < 1e-20);
        let rq = t.replace(
            "{ kind = \"final\", species = \"B\", value = \"2 mM\", sd = \"0.1 mM\" }",
            "{ kind = \"reactant_quantum_yield\", species = \"B\", absorber = \"A\", value = 0.3, sd = 0.02 }",
        );
        let r = parse_experiments(Path::new("e.toml"), &rq).unwrap();
        assert_eq!(
            r[0].endpoints[0].kind,
            EndpointKind::ReactantQuantumYield("B".into(), "A".into())
        );
        let m = parse_experiments(Path::new("e.toml"), &rq.replace(", absorber = \"A\"", ""))
            .unwrap_err()
            .to_string();
        assert!(m.contains("e.toml:7") && m.contains("needs `absorber`"), "{m}");
        let bad = t.replace("\"2 ns\"", "2");
        let m = parse_experiments(Path::new("e.toml"), &bad).unwrap_err().to_string();
        assert!(m.contains("e.toml:8") && m.contains("has no unit"), "{m}");
        let bad = t.replace("kind = \"final\"", "kind = \"finale\"");
        let m = parse_experiments(Path::new("e.toml"), &bad).unwrap_err().to_string();
        assert!(m.contains("e.toml:7") && m.contains("unknown kind"), "{m}");
    }
}
