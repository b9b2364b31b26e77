//! Every structural problem of a network file at once: a misspelt key, a number written without
//! its unit. The TOML reader stops at the first; here each problem found is taken out of a
//! working copy of the text (its line blanked, so every byte offset and line number stays that
//! of the file) and the copy read again, up to [`MOST`] problems. What remains, when it reads,
//! is handed on so validation can report its own problems in the same run.

use crate::error::{Diagnostic, Origin};
use std::path::Path;

/// Most structural problems reported from one file.
pub const MOST: usize = 20;

/// The problems of `text` (read as if from `path`) and, when the text with those problems
/// taken out reads, that text (same length and lines) and its structure.
pub fn read_all(path: &Path, text: &str) -> (Option<(String, super::NetworkFile)>, Vec<Diagnostic>) {
    let mut work = text.to_string();
    let mut problems = Vec::new();
    let mut last: Option<usize> = None;
    loop {
        let e = match toml::from_str::<super::NetworkFile>(&work) {
            Ok(doc) => return (Some((work, doc)), problems),
            Err(e) => e,
        };
        problems.push(diagnostic(path, text, &e));
        // Take the problem's line out and read again, only where that cannot shift the
        // meaning of what follows: a span on one line, not a table header, past the last one.
        let Some(r) = e.span() else { break };
        let line_start = work[..r.start].rfind('\n').map_or(0, |k| k + 1);
        let line_end = work[r.start..].find('\n').map_or(work.len(), |k| r.start + k);
        let header = work[line_start..line_end].trim_start().starts_with('[');
        if problems.len() >= MOST || r.end > line_end || header || last.is_some_and(|l| r.start <= l) {
            break;
        }
        let blank = " ".repeat(line_end - line_start);
        work.replace_range(line_start..line_end, &blank);
        last = Some(r.start);
    }
    (None, problems)
}

/// The diagnostic for one TOML reading error: its message (a bare number where text with a
/// unit is expected said so, with an example), the line it is on.
fn diagnostic(path: &Path, text: &str, e: &toml::de::Error) -> Diagnostic {
    let origin = e.span().map_or(Origin::Unknown, Origin::Span);
    let msg = e.message().trim().to_string();
    let line = match &origin {
        Origin::Span(r) => {
            let (l, _) = crate::error::line_col(text, r.start);
            text.lines().nth(l - 1).map(|s| (l, s.trim().to_string()))
        }
        _ => None,
    };
    let bare = msg.starts_with("invalid type: integer") || msg.starts_with("invalid type: floating point");
    let (field, message) = match (&line, bare && msg.contains("expected a string")) {
        (Some((n, l)), true) => {
            // The key is the word before the `=` that precedes the number (also inside an
            // inline table: `epsilon = { at = "365 nm", value = 5000 }`), the value the number.
            let (key, value) = match e.span() {
                Some(_) => key_and_value(text, e.span()),
                None => l
                    .split_once('=')
                    .map_or((l.as_str(), ""), |(k, v)| (k.trim(), v.trim())),
            };
            (
                format!("{}{key}", entry(text, *n)),
                format!(
                    "{value} is a number without a unit: write it as text with its unit, e.g. {key} = \"{value} {}\"",
                    example_unit(key)
                ),
            )
        }
        (Some((n, _)), false) if msg.starts_with("unknown field") => {
            let names: Vec<&str> = msg.split('`').skip(1).step_by(2).collect();
            match (names.split_first(), e.span()) {
                (Some((unknown, accepted)), Some(r)) => {
                    // Inside an inline table (`rate = { Ea = ..., A = ... }`) the whole line is
                    // set aside, so every key of that table the table does not take is named.
                    let (table, keys) = inline_table(text, r.start);
                    let unknown: Vec<&str> = keys
                        .iter()
                        .copied()
                        .filter(|k| !accepted.contains(k))
                        .chain(keys.is_empty().then_some(*unknown))
                        .collect();
                    let field = format!("{}{table}{}", entry(text, *n), unknown.join(", "));
                    let said: Vec<String> = unknown.iter().map(|u| unknown_key(u, accepted)).collect();
                    (field, format!("{}{}", said.join("; "), accepted_here(accepted)))
                }
                _ => (String::new(), format!("not a valid network file here: {msg}")),
            }
        }
        (Some((n, _)), false) if msg.ends_with("expected struct Rate") => {
            // The value is the error's span; the key is the word before the `=` that precedes
            // it (`rate`, `reverse`, a channel's `rate` inside its inline table).
            let (key, value) = key_and_value(text, e.span());
            let (table, _) = e
                .span()
                .map_or((String::new(), Vec::new()), |r| inline_table(text, r.start));
            (format!("{}{table}{key}", entry(text, *n)), rate_is_a_table(key, value))
        }
        _ => (String::new(), format!("not a valid network file here: {msg}")),
    };
    let help = match &line {
        Some((l, s)) => format!("line {l}: {s}\n  (the format reference is in README.md)"),
        None => "see the format reference in README.md".to_string(),
    };
    Diagnostic::error(field, message)
        .with_help(help)
        .at(path, text, &origin)
}

/// The line (from 1) of the table header (`[conditions]`, `[[light]]`) at or above line `line`
/// (from 1) of `text`, or None when the line is in no table.
pub fn table_header(text: &str, line: usize) -> Option<usize> {
    text.lines()
        .take(line)
        .enumerate()
        .filter(|(_, l)| l.trim_start().starts_with('['))
        .map(|(i, _)| i + 1)
        .last()
}

/// How validation names the table entry line `line` (from 1) of `text` sits in, as a prefix of
/// a key: `light "UV LED".`, `species "A".`, `conditions.`; empty when it cannot tell.
fn entry(text: &str, line: usize) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let Some(h) = table_header(text, line).map(|h| h - 1) else {
        return String::new();
    };
    let table = lines[h].trim().trim_matches(|c| c == '[' || c == ']').trim();
    let value_of = |key: &str| {
        lines[h + 1..]
            .iter()
            .take_while(|l| !l.trim_start().starts_with('['))
            .filter_map(|l| l.split_once('='))
            .find(|(k, _)| k.trim() == key)
            .map(|(_, v)| v.split('#').next().unwrap_or("").trim().trim_matches('"').to_string())
    };
    // Steps without a name are named by their equation, as validation names them.
    let name = value_of("name").or_else(|| match table {
        "thermal" | "photo" => value_of("equation"),
        _ => None,
    });
    match name {
        Some(n) if !n.is_empty() => format!("{table} \"{n}\"."),
        _ if !table.contains('.') && !table.is_empty() => format!("{table}."),
        _ => String::new(),
    }
}

/// The key and the value of the span `at` of `text`: the value is the span's text, the key the
/// word before the `=` that precedes it (also inside an inline table: `{ to = "B", rate = 5 }`).
fn key_and_value(text: &str, at: Option<std::ops::Range<usize>>) -> (&str, &str) {
    match at {
        Some(r) if r.end <= text.len() && text.is_char_boundary(r.start) && text.is_char_boundary(r.end) => {
            let before = &text[..r.start];
            let eq = before.rfind('=').unwrap_or(0);
            let key = before[..eq].rsplit(['{', ',', '\n']).next().unwrap_or("").trim();
            (key, text[r].trim())
        }
        _ => ("", ""),
    }
}

/// For an offset inside an inline table (`rate = { Ea = "80 kJ/mol", A = "1e10 /s" }`): the
/// table's key with a dot (`rate.`) and the keys written in it; empty when the offset is in none.
fn inline_table(text: &str, at: usize) -> (String, Vec<&str>) {
    let line_start = text[..at].rfind('\n').map_or(0, |i| i + 1);
    let line_end = text[at..].find('\n').map_or(text.len(), |i| at + i);
    let before = &text[line_start..at];
    let (Some(open), Some(close)) = (before.rfind('{'), text[at..line_end].find('}')) else {
        return (String::new(), Vec::new());
    };
    let table = before[..open].trim_end().trim_end_matches('=').trim();
    let table = table.rsplit(['{', ',', '[']).next().unwrap_or("").trim();
    let inside = &text[line_start + open + 1..at + close];
    let keys = inside
        .split(',')
        .filter_map(|kv| kv.split_once('='))
        .map(|(k, _)| k.trim())
        .filter(|k| !k.is_empty() && !k.contains(['{', '[', '"']))
        .collect();
    // a table in an array (`channels = [ { ... } ]` over several lines) has no key of its own
    let prefix = if table.is_empty() {
        String::new()
    } else {
        format!("{table}.")
    };
    (prefix, keys)
}

/// What chemists often write for a key, and the key the file uses (`common practice` names).
const ALIASES: [(&str, &str); 27] = [
    ("δg", "barrier"),
    ("δg‡", "barrier"),
    ("e0", "barrier"),
    ("e₀", "barrier"),
    ("δh", "enthalpy"),
    ("δs", "entropy"),
    ("κ", "transmission"),
    ("kappa", "transmission"),
    ("σ", "degeneracy"),
    ("sigma", "degeneracy"),
    ("ε", "epsilon"),
    ("ea", "activation"),
    ("a", "prefactor"),
    ("preexponential", "prefactor"),
    ("pre_exponential", "prefactor"),
    ("dg", "barrier"),
    ("delta_g", "barrier"),
    ("dh", "enthalpy"),
    ("ds", "entropy"),
    ("phi", "quantum_yield"),
    ("qy", "quantum_yield"),
    ("eps", "epsilon"),
    ("extinction", "epsilon"),
    ("conc", "initial"),
    ("concentration", "initial"),
    ("t", "temperature"),
    ("temp", "temperature"),
];

/// The message for a key the table does not take: the accepted key it most likely means (a
/// usual alias, or the closest spelling), then every key accepted there.
fn unknown_key(unknown: &str, accepted: &[&str]) -> String {
    let lower = unknown.to_lowercase();
    let alias = ALIASES
        .iter()
        .find(|(a, k)| *a == lower && accepted.contains(k))
        .map(|(_, k)| *k);
    let close = alias.or_else(|| {
        accepted
            .iter()
            .map(|c| (*c, strsim::jaro_winkler(&lower, &c.to_lowercase())))
            // a short key is one letter from many (`k`): only a long one is matched by edits
            .filter(|(c, score)| {
                *score >= 0.85 || (lower.chars().count() > 3 && strsim::levenshtein(&lower, &c.to_lowercase()) <= 2)
            })
            .max_by(|a, b| a.1.total_cmp(&b.1))
            .map(|(c, _)| c)
    });
    match close {
        Some(c) => format!("no key \"{unknown}\" here: did you mean {c}?"),
        None => format!("no key \"{unknown}\" here"),
    }
}

/// What a table accepts, said once after its unknown keys.
fn accepted_here(accepted: &[&str]) -> String {
    if accepted.is_empty() {
        " (this table takes no keys)".to_string()
    } else {
        format!(" (accepted here: {})", accepted.join(", "))
    }
}

/// The message for a rate written as a single value (`rate = "1 /s"`): a rate is a table that
/// says how it is given, with the user's value placed where it most likely belongs.
fn rate_is_a_table(key: &str, value: &str) -> String {
    let inner = value.trim_matches('"').trim();
    let key = if key.is_empty() { "rate" } else { key };
    let example = if inner.contains("/mol") || inner.ends_with("mol") || inner.ends_with("eV") {
        format!("{key} = {{ barrier = \"{inner}\" }}")
    } else if !inner.is_empty() && value.starts_with('"') {
        format!("{key} = {{ k = \"{inner}\" }}")
    } else {
        format!("{key} = {{ k = \"0.04 /s\" }}")
    };
    format!(
        "a rate is a table saying how it is given, e.g. {example}; accepted: k (a rate constant, \
         \"0.04 /s\", \"1e3 L/(mol s)\"), barrier (Eyring ΔG‡, \"22 kcal/mol\"), prefactor with \
         activation (Arrhenius), enthalpy with entropy (Eyring ΔH‡ and ΔS‡), or frequencies \
         (reactant_frequencies, ts_frequencies with barrier as E₀)"
    )
}

/// A unit to show in the example for a key written as a bare number (`common practice` units
/// of the trade; the format reference lists every accepted one).
fn example_unit(key: &str) -> &'static str {
    match key.rsplit('.').next().unwrap_or(key) {
        "power" => "mW",
        "photon_flux" => "µeinstein/s",
        "wavelength" | "centre" | "fwhm" | "from" | "to" => "nm",
        "temperature" => "K",
        "volume" => "mL",
        "path_length" => "cm",
        "irradiated_area" => "cm2",
        "initial" => "mM",
        "barrier" => "kcal/mol",
        "k" => "/s",
        _ => "<unit>",
    }
}

#[cfg(test)]
mod tests {
    use super::read_all;
    use std::path::Path;

    const BASE: &str = "[about]\nname = \"t\"\n[conditions]\ntemperatur = \"298 K\"\nvolume = \"3 mL\"\n\
                        path_length = \"1 cm\"\n[[light]]\nname = \"LED\"\nkind = \"line\"\n\
                        wavelength = \"365 nm\"\npower = 10\n[[species]]\nname = \"A\"\n";

    #[test]
    fn a_misspelt_key_and_a_bare_number_are_both_reported_and_the_rest_reads() {
        let (rest, problems) = read_all(Path::new("t.toml"), BASE);
        assert_eq!(problems.len(), 2, "{problems:?}");
        let first = problems[0].to_string();
        assert!(
            first.contains("t.toml:4:1") && first.contains("no key \"temperatur\" here: did you mean temperature?"),
            "{first}"
        );
        let second = problems[1].to_string();
        assert!(second.contains("t.toml:11:"), "{second}");
        assert!(
            second.contains("light \"LED\".power: 10 is a number without a unit")
                && second.contains("power = \"10 mW\""),
            "{second}"
        );
        let (text, doc) = rest.expect("the rest reads");
        assert_eq!(text.len(), BASE.len(), "offsets kept");
        assert_eq!(text.lines().count(), BASE.lines().count(), "lines kept");
        assert_eq!(doc.species.len(), 1);
    }

    #[test]
    fn an_unknown_key_is_matched_to_what_was_meant() {
        let accepted = ["k", "prefactor", "activation", "barrier", "enthalpy", "entropy"];
        assert!(super::unknown_key("Ea", &accepted).contains("did you mean activation?"));
        assert!(super::unknown_key("A", &accepted).contains("did you mean prefactor?"));
        assert!(super::unknown_key("barier", &accepted).contains("did you mean barrier?"));
        assert_eq!(super::unknown_key("colour", &accepted), "no key \"colour\" here");
        let with_kappa = ["k", "barrier", "transmission"];
        assert!(super::unknown_key("κ", &with_kappa).contains("did you mean transmission?"));
        assert_eq!(super::unknown_key("ΔX", &with_kappa), "no key \"ΔX\" here");
        let text = "[about]\nname = \"t\"\n[[thermal]]\nequation = \"A -> B\"\nrate = { Ea = \"80 kJ/mol\", A = \"1e10 /s\" }\n";
        let (_, problems) = read_all(Path::new("t.toml"), text);
        let shown = problems[0].to_string();
        assert!(shown.contains("thermal \"A -> B\".rate.Ea, A: no key \"Ea\" here: did you mean activation?; no key \"A\" here: did you mean prefactor? (accepted here: k, prefactor"), "{shown}");
        let text = "[about]\nname = \"t\"\n[conditions]\ntemperatur = \"298 K\"\n";
        let (_, problems) = read_all(Path::new("t.toml"), text);
        let shown = problems[0].to_string();
        assert!(
            shown.contains("conditions.temperatur: no key \"temperatur\" here: did you mean temperature?"),
            "{shown}"
        );
    }

    #[test]
    fn a_rate_written_as_one_value_is_shown_as_the_table_it_should_be() {
        let text = "[about]\nname = \"t\"\n[[species]]\nname = \"A\"\n[[species]]\nname = \"B\"\n\
                    [[thermal]]\nequation = \"A -> B\"\nrate = \"1 /s\"\n\
                    [[thermal]]\nname = \"back\"\nequation = \"B -> A\"\nrate = \"22 kcal/mol\"\n";
        let (_, problems) = read_all(Path::new("t.toml"), text);
        let shown: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
        assert_eq!(shown.len(), 2, "{shown:?}");
        assert!(shown[0].contains("thermal \"A -> B\".rate"), "{}", shown[0]);
        assert!(shown[0].contains("rate = { k = \"1 /s\" }"), "{}", shown[0]);
        assert!(shown[1].contains("thermal \"back\".rate"), "{}", shown[1]);
        assert!(
            shown[1].contains("rate = { barrier = \"22 kcal/mol\" }"),
            "{}",
            shown[1]
        );
        assert!(!shown[0].contains("struct Rate"), "{}", shown[0]);
    }

    #[test]
    fn a_rate_as_one_value_in_a_channel_or_a_reverse_names_its_own_key() {
        let text = "[about]\nname = \"t\"\n[[thermal]]\nequation = \"A <=> B\"\nrate = { k = \"1 /s\" }\n\
                    reverse = \"2 /s\"\n[[transient]]\nname = \"S1\"\nchannels = [ { to = \"B\", rate = \"2.4e8 /s\" } ]\n";
        let (_, problems) = read_all(Path::new("t.toml"), text);
        let shown: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
        assert!(
            shown
                .iter()
                .any(|s| s.contains(".reverse: ") && s.contains("reverse = { k = \"2 /s\" }")),
            "{shown:?}"
        );
        assert!(
            shown.iter().any(|s| s.contains("rate = { k = \"2.4e8 /s\" }")),
            "{shown:?}"
        );
        assert!(!shown.iter().any(|s| s.contains("k = \"B\"")), "{shown:?}");
    }

    #[test]
    fn a_problem_in_a_table_header_stops_the_search_there() {
        let text = "[about]\nname = \"t\"\n[[lights]]\nname = \"x\"\n[conditionz]\n";
        let (rest, problems) = read_all(Path::new("t.toml"), text);
        assert_eq!(problems.len(), 1, "{problems:?}");
        assert!(rest.is_none());
    }
}
