//! Frequency files: harmonic frequencies of a reactant and its transition state, in cm⁻¹.
//!
//! ```text
//! # comments start with '#'; blank lines are ignored
//! degeneracy 2            # optional: reaction-path degeneracy σ (default 1)
//! [reactant]
//! 3050, 1620 1210         # numbers in cm-1, separated by commas, semicolons or spaces
//! 845.5
//! rotor 0.35 1            # optional: external free 1-D rotor, B in cm-1, symmetry number
//! [transition state]      # or [ts]
//! 3040, 1580, 1190
//! -1250                   # the reaction-coordinate mode: negative, or written 1250i
//! ```
//!
//! A CSV column works too: a header line naming the unit (e.g. `frequency (cm-1)`) is skipped.
//! A file with no section header is a reactant list (enough for state counts, not for rates).
//! A transition state needs exactly one imaginary frequency; a reactant may have none.
//! Every problem is reported with file, line and column.

use crate::error::{Diagnostic, Error, Origin, Result};
use crate::rates::partition::{Modes, Rotor};
use crate::units::{Quantity, parse};
use std::path::Path;

/// What a frequency file holds, converted to molar energies (J/mol, h c ν̃ N_A).
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyFile {
    /// Reactant modes.
    pub reactant: Modes,
    /// Transition-state modes (with exactly one imaginary), if the file has that section.
    pub ts: Option<Modes>,
    /// Reaction-path degeneracy σ (1 unless given).
    pub degeneracy: f64,
}

/// Read and parse the frequency file at `path`.
pub fn read(path: &Path) -> Result<FrequencyFile> {
    let text = super::read_text(path)?;
    parse_text(path, &text)
}

#[derive(Clone, Copy, PartialEq)]
enum Section {
    None,
    Reactant,
    Ts,
}

fn wavenumber(x: f64) -> f64 {
    // Through units so that only units/ knows the conversion.
    parse(&format!("{x} cm-1"), Quantity::MolarEnergy).unwrap_or(f64::NAN)
}

/// Parse frequency-file text as if read from `path`.
pub fn parse_text(path: &Path, text: &str) -> Result<FrequencyFile> {
    let (f, mut errs) = parse_inner(path, text, Section::None);
    if f.reactant.vibrations.is_empty() && f.reactant.rotors.is_empty() {
        errs.push(
            Diagnostic::error("reactant", "no reactant frequencies")
                .in_file(path)
                .with_help("list them under [reactant], in cm-1"),
        );
    }
    if !errs.is_empty() {
        return Err(Error::Invalid(errs));
    }
    Ok(FrequencyFile {
        reactant: f.reactant,
        ts: f.ts,
        degeneracy: f.degeneracy.unwrap_or(1.0),
    })
}

/// Which species a frequency list named by a network file describes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The reacting molecule (no imaginary frequency).
    Reactant,
    /// The transition state (exactly one imaginary frequency, the reaction coordinate).
    TransitionState,
}

/// The modes of one species from a frequency file named by a network file, with the file's
/// `degeneracy` line if it has one.
///
/// A file without section headers is a list of that species' frequencies (a transition-state
/// list carries its reaction coordinate as a negative number or with `i`). A file with
/// `[reactant]` and `[transition state]` sections (the `barrier` command's format) gives the
/// section of `role`, so one file can serve both keys.
pub fn parse_role(path: &Path, text: &str, role: Role) -> Result<(Modes, Option<f64>)> {
    let start = match role {
        Role::Reactant => Section::Reactant,
        Role::TransitionState => Section::Ts,
    };
    let (f, mut errs) = parse_inner(path, text, start);
    let modes = match role {
        Role::Reactant => {
            if f.reactant.vibrations.is_empty() && f.reactant.rotors.is_empty() {
                errs.push(
                    Diagnostic::error("reactant", "no reactant frequencies")
                        .in_file(path)
                        .with_help("list them in cm-1 (or under [reactant] in a file with sections)"),
                );
            }
            f.reactant
        }
        Role::TransitionState => match f.ts {
            Some(ts) => {
                if ts.vibrations.is_empty() && ts.rotors.is_empty() && errs.is_empty() {
                    errs.push(
                        Diagnostic::error("transition state", "no real transition-state frequencies")
                            .in_file(path)
                            .with_help("list them in cm-1, with the reaction coordinate as a negative number"),
                    );
                }
                ts
            }
            None => {
                errs.push(
                    Diagnostic::error("transition state", "the file has no [transition state] section")
                        .in_file(path)
                        .with_help("add [transition state] with its frequencies in cm-1, or name a plain list"),
                );
                Modes::default()
            }
        },
    };
    if !errs.is_empty() {
        return Err(Error::Invalid(errs));
    }
    Ok((modes, f.degeneracy))
}

/// What [`parse_inner`] found: reactant, transition state (if its section was seen) and the
/// degeneracy line (if any).
struct Parsed {
    reactant: Modes,
    ts: Option<Modes>,
    degeneracy: Option<f64>,
}

fn parse_inner(path: &Path, text: &str, start: Section) -> (Parsed, Vec<Diagnostic>) {
    let mut errs: Vec<Diagnostic> = Vec::new();
    let mut reactant = Modes::default();
    let mut ts = Modes::default();
    let mut ts_seen = start == Section::Ts;
    // A transition-state list read without headers; a file that turns out to have sections
    // (before any number) is read by its sections instead.
    let mut implicit_ts = start == Section::Ts;
    let mut reactant_seen = false;
    let mut ts_imag: Vec<(f64, usize)> = Vec::new();
    let mut degeneracy = None;
    let mut section = start;
    let mut offset = 0usize;
    let mut err = |field: &str, msg: String, at: usize, help: &str| {
        let d = Diagnostic::error(field, msg).at(path, text, &Origin::Span(at..at + 1));
        errs.push(if help.is_empty() { d } else { d.with_help(help) });
    };
    const NUMBER_HELP: &str = "write frequencies in cm-1 as numbers, e.g. 1620.5; the imaginary one as -1250 or 1250i";
    for line in text.split_inclusive('\n') {
        let start = offset;
        offset += line.len();
        let body = line.split('#').next().unwrap_or("");
        let trimmed = body.trim();
        if trimmed.is_empty() {
            continue;
        }
        let lead = start + (body.len() - body.trim_start().len());
        if trimmed.starts_with('[') {
            if implicit_ts && ts.vibrations.is_empty() && ts.rotors.is_empty() && ts_imag.is_empty() {
                ts_seen = false;
            }
            implicit_ts = false;
            let name = trimmed
                .trim_start_matches('[')
                .trim_end_matches(']')
                .trim()
                .to_lowercase();
            if !trimmed.ends_with(']') {
                err(
                    "section",
                    format!("\"{trimmed}\" has no closing ]"),
                    lead,
                    "write [reactant] or [transition state]",
                );
                continue;
            }
            match name.as_str() {
                "reactant" => {
                    section = Section::Reactant;
                    reactant_seen = true;
                }
                "transition state" | "transition-state" | "transition_state" | "ts" => {
                    section = Section::Ts;
                    ts_seen = true;
                }
                _ => err(
                    "section",
                    format!("unknown section \"[{name}]\""),
                    lead,
                    "write [reactant] or [transition state] (or [ts])",
                ),
            }
            continue;
        }
        let first = trimmed.split([' ', '\t', ',', ';']).next().unwrap_or("").to_lowercase();
        if first == "degeneracy" {
            let rest = trimmed[first.len()..].trim().trim_start_matches(['=', ':']).trim();
            match rest.parse::<f64>() {
                Ok(v) if v.is_finite() && v > 0.0 => degeneracy = Some(v),
                _ => err(
                    "degeneracy",
                    format!("\"{rest}\" is not a positive number"),
                    lead,
                    "write e.g. degeneracy 2",
                ),
            }
            continue;
        }
        if first == "rotor" {
            let parts: Vec<&str> = trimmed[5..]
                .split([' ', '\t', ',', ';'])
                .filter(|p| !p.is_empty())
                .collect();
            let b = parts.first().and_then(|p| p.parse::<f64>().ok());
            let sym = match parts.get(1) {
                None => Some(1),
                Some(p) => p.parse::<u32>().ok().filter(|s| *s >= 1),
            };
            let field = if section == Section::Ts {
                "transition state rotor"
            } else {
                "reactant rotor"
            };
            match (b, sym, parts.len() <= 2) {
                (Some(b), Some(symmetry), true) if b.is_finite() && b > 0.0 => {
                    let r = Rotor {
                        constant: wavenumber(b),
                        symmetry,
                    };
                    if section == Section::Ts {
                        ts.rotors.push(r)
                    } else {
                        reactant.rotors.push(r)
                    }
                }
                _ => err(
                    field,
                    format!("\"{trimmed}\" is not a rotor"),
                    lead,
                    "write rotor B [symmetry], B the rotational constant in cm-1 (> 0), symmetry a whole number ≥ 1",
                ),
            }
            continue;
        }
        if first.chars().next().is_some_and(|c| c.is_alphabetic()) && trimmed.contains("cm") {
            continue; // a CSV header naming the unit
        }
        // A list of numbers; track each token's column.
        let mut pos = 0usize;
        for token in body.split_inclusive([' ', '\t', ',', ';', '\r', '\n']) {
            let at = start + pos;
            pos += token.len();
            let t = token.trim_end_matches([' ', '\t', ',', ';', '\r', '\n']);
            if t.is_empty() {
                continue;
            }
            let (num, imag_i) = match t.strip_suffix('i') {
                Some(n) => (n, true),
                None => (t, false),
            };
            let field = match section {
                Section::Ts => "transition state frequency",
                _ => "reactant frequency",
            };
            let Ok(v) = num.parse::<f64>() else {
                err(field, format!("\"{t}\" is not a number"), at, NUMBER_HELP);
                continue;
            };
            if !v.is_finite() || v == 0.0 || (imag_i && v < 0.0) {
                err(
                    field,
                    format!("\"{t}\" is not a usable frequency (finite, not zero)"),
                    at,
                    NUMBER_HELP,
                );
                continue;
            }
            let imaginary = imag_i || v < 0.0;
            match (section, imaginary) {
                (Section::Ts, true) => ts_imag.push((v.abs(), at)),
                (Section::Ts, false) => ts.vibrations.push(wavenumber(v)),
                (_, true) => err(
                    field,
                    format!("\"{t}\" is imaginary, but a reactant has only real frequencies"),
                    at,
                    "put the imaginary frequency under [transition state]",
                ),
                (_, false) => reactant.vibrations.push(wavenumber(v)),
            }
        }
    }
    let _ = reactant_seen;
    let ts = if ts_seen {
        match ts_imag.len() {
            1 => ts.imaginary = Some(wavenumber(ts_imag[0].0)),
            0 => errs.push(
                Diagnostic::error("transition state", "no imaginary frequency (the reaction coordinate)")
                    .in_file(path)
                    .with_help("give it as a negative number, e.g. -1250, or as 1250i"),
            ),
            n => {
                let d = Diagnostic::error(
                    "transition state frequency",
                    format!("{n} imaginary frequencies; a transition state has exactly one"),
                )
                .at(path, text, &Origin::Span(ts_imag[1].1..ts_imag[1].1 + 1));
                errs.push(d);
            }
        }
        Some(ts)
    } else {
        None
    };
    (
        Parsed {
            reactant,
            ts,
            degeneracy,
        },
        errs,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(text: &str) -> Result<FrequencyFile> {
        parse_text(Path::new("f.txt"), text)
    }

    #[test]
    fn sections_rotors_and_imaginary_forms() {
        let f = p("degeneracy 2\n[reactant]\n1000, 500 250 # c\nrotor 0.5 2\n[ts]\n1000 480\n1200i\n").unwrap();
        assert_eq!(f.degeneracy, 2.0);
        assert_eq!(f.reactant.vibrations.len(), 3);
        assert_eq!(f.reactant.rotors.len(), 1);
        let ts = f.ts.unwrap();
        assert_eq!(ts.vibrations.len(), 2);
        let one = wavenumber(1.0);
        assert!((ts.imaginary.unwrap() / one - 1200.0).abs() < 1e-9);
        let g = p("[reactant]\n1000\n[transition state]\n-900\n").unwrap();
        assert!((g.ts.unwrap().imaginary.unwrap() / one - 900.0).abs() < 1e-9);
    }

    #[test]
    fn lists_for_one_role_and_sections_shared_by_both() {
        let one = wavenumber(1.0);
        let (ts, d) = parse_role(Path::new("ts.txt"), "1000 480\n-1200\n", Role::TransitionState).unwrap();
        assert_eq!((ts.vibrations.len(), d), (2, None));
        assert!((ts.imaginary.unwrap() / one - 1200.0).abs() < 1e-9);
        let both = "degeneracy 2\n[reactant]\n1000 500 250\n[ts]\n1000 480\n1200i\n";
        let (r, d) = parse_role(Path::new("p.txt"), both, Role::Reactant).unwrap();
        assert_eq!((r.vibrations.len(), d), (3, Some(2.0)));
        let (t, _) = parse_role(Path::new("p.txt"), both, Role::TransitionState).unwrap();
        assert_eq!(t.vibrations.len(), 2);
        let e = parse_role(Path::new("r.txt"), "1000 -300\n", Role::Reactant)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("r.txt:1:6: reactant frequency: \"-300\" is imaginary"),
            "{e}"
        );
        let e = parse_role(Path::new("t.txt"), "1000 300\n", Role::TransitionState)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no imaginary frequency"), "{e}");
        let e = parse_role(Path::new("p.txt"), "[reactant]\n1000\n", Role::TransitionState)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no [transition state] section"), "{e}");
    }

    #[test]
    fn csv_column_with_header() {
        let f = p("frequency (cm-1)\n1000\n2000\n").unwrap();
        assert_eq!(f.reactant.vibrations.len(), 2);
        assert!(f.ts.is_none());
    }

    #[test]
    fn bad_lines_are_located() {
        let e = p("[reactant]\n1000 abc\n-5\n[ts]\n100\n").unwrap_err().to_string();
        assert!(
            e.contains("f.txt:2:6: reactant frequency: \"abc\" is not a number"),
            "{e}"
        );
        assert!(e.contains("f.txt:3:1: reactant frequency: \"-5\" is imaginary"), "{e}");
        assert!(e.contains("transition state: no imaginary frequency"), "{e}");
        let e = p("[reactant]\n1000\n[ts]\n-100 -200\n[products]\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("f.txt:4:6: transition state frequency: 2 imaginary"), "{e}");
        assert!(e.contains("f.txt:5:1: section: unknown section"), "{e}");
    }
}
