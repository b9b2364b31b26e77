//! The library never panics on bad input: whatever text arrives, reading and validating it
//! returns `Ok` or `Err`.
//!
//! * random bytes, random UTF-8 and random TOML-shaped documents through
//!   `file::parse_text` and `network::build`;
//! * valid networks (the bundled `networks/*.toml` found at test time, and a few written
//!   here) mutated line by line, value by value, with overrides on top;
//! * the unit parser for every quantity, and the equation, formula and CSV readers.
//!
//! Case counts keep the file under half a minute with `cargo test --release`; debug builds
//! run a fifth of the cases.

use photoledger::Overrides;
use photoledger::file;
use photoledger::network::{self, equation, formula};
use photoledger::units::{self, Quantity};
use proptest::prelude::*;
use proptest::test_runner::Config;
use std::path::{Path, PathBuf};

/// `cases` in release builds, a fifth of them in debug builds; `PROPTEST_CASES` in the
/// environment sets the count for a longer hunt. No failure files are written: a failure
/// found is kept below as a named regression test.
fn config(cases: u32) -> Config {
    let cases = match std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()) {
        Some(n) => n,
        None if cfg!(debug_assertions) => (cases / 5).max(10),
        None => cases,
    };
    Config {
        cases,
        failure_persistence: None,
        ..Config::default()
    }
}

/// Read `text` as if it were the file at `path`, validate it with `overrides`, and on
/// success summarise it; render any error. Only a panic fails.
fn read_and_build(path: &Path, text: String, overrides: &Overrides) -> Option<photoledger::Network> {
    match file::parse_text(path, text) {
        Ok(loaded) => match network::build(&loaded, overrides) {
            Ok(net) => {
                let _ = photoledger::report::summary::network_summary(&net);
                for w in &net.warnings {
                    let _ = w.to_string();
                }
                Some(net)
            }
            Err(e) => {
                let _ = e.to_string();
                None
            }
        },
        Err(e) => {
            let _ = e.to_string();
            None
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Pieces of network files
// ---------------------------------------------------------------------------------------------

/// Numbers as written, including the awkward ones.
fn number_text() -> BoxedStrategy<String> {
    prop_oneof![
        4 => prop::sample::select(vec![
            "-1", "0", "-0", "1", "2", "0.5", "1.0", "365", "1e308", "-1e308", "1e-308", "5e-324",
            "1e400", "-1e400", "nan", "NaN", "inf", "-inf", "+inf", "1e", "e5", ".", "1..2", "0x10",
            "18446744073709551616", "-9223372036854775809", "1_000", "3.", ".5",
        ])
        .prop_map(str::to_string),
        2 => any::<f64>().prop_map(|x| format!("{x}")),
        1 => any::<i64>().prop_map(|x| format!("{x}")),
    ]
    .boxed()
}

/// Units as written, right and wrong.
fn unit_text() -> BoxedStrategy<String> {
    prop_oneof![
        6 => prop::sample::select(vec![
            "", "nm", "µm", "um", "mm", "cm", "m", "cm2", "cm^2", "cm²", "mm2", "m2", "µL", "mL", "L", "m3",
            "fs", "ps", "ns", "µs", "ms", "s", "min", "h", "d", "day", "K", "°C", "degC", "℃", "°F", "M", "mM",
            "µM", "nM", "mol/L", "µW", "mW", "W", "einstein/s", "µeinstein/s", "neinstein/s", "photons/s",
            "kJ/mol", "kcal/mol", "J/mol", "eV", "cm-1", "cm⁻¹", "J/(mol K)", "cal/(mol K)", "J/mol K", "/s",
            "s-1", "s⁻¹", "/min", "/(M s)", "L/(mol s)", "M-1 s-1", "M/s", "/(M2 s)", "L/(mol cm)",
            "M-1 cm-1", "W/m2", "m^99", "m^-13", "m^", "(((", ")", "(", "^", "/", "//", "°", "kg", "1/s",
            "1", "*", "s**2", "mol^-1", "M^-2 s^-1", "(L/mol)^2/s", "·", "×", "µ", "u",
        ])
        .prop_map(str::to_string),
        1 => "[a-zA-Zµ°/()^*·²³⁻¹0-9 +-]{0,10}",
    ]
    .boxed()
}

/// A quantity as written: number, optional space, unit.
fn quantity_text() -> BoxedStrategy<String> {
    (
        number_text(),
        prop::sample::select(vec!["", " ", "  ", "\t"]),
        unit_text(),
    )
        .prop_map(|(n, sep, u)| format!("{n}{sep}{u}"))
        .boxed()
}

/// Names, including ones that collide with syntax.
fn name_text() -> BoxedStrategy<String> {
    prop_oneof![
        3 => prop::sample::select(vec![
            "A", "B", "C", "S1", "T1", "CI", "E-azo", "Z-azo", "Fe3+", "H+", "H2O", "closed", "open",
            "adduct", "adduct*", "product", "substrate", "UV LED", "sun", "", " ", "0", "nothing", "->",
            "A + B", "2 A", "1e3", "a,b", "\\\"", "ü", "A\u{0}",
        ])
        .prop_map(str::to_string),
        1 => "[A-Za-z0-9+*_ -]{1,8}",
    ]
    .boxed()
}

/// One side of an equation.
fn side_text() -> BoxedStrategy<String> {
    prop::collection::vec(
        (
            prop::sample::select(vec!["", "2 ", "0.5 ", "-1 ", "0 ", "nan ", "1e400 ", "3"]),
            name_text(),
        ),
        0..4,
    )
    .prop_map(|terms| {
        terms
            .into_iter()
            .map(|(c, n)| format!("{c}{n}"))
            .collect::<Vec<_>>()
            .join(" + ")
    })
    .boxed()
}

/// An equation as written, with good and bad arrows.
fn equation_text() -> BoxedStrategy<String> {
    (
        side_text(),
        prop::sample::select(vec![" -> ", " <=> ", "->", " => ", " = ", " -> -> ", " <=> -> ", ""]),
        side_text(),
    )
        .prop_map(|(l, a, r)| format!("{l}{a}{r}"))
        .boxed()
}

/// A formula as written.
fn formula_text() -> BoxedStrategy<String> {
    prop_oneof![
        2 => prop::collection::vec(
            prop::sample::select(vec![
                "C", "H", "O", "N", "Fe", "Cl", "D", "Xx", "c", "(", ")", "2", "12", "0", "99999999999999999999",
                "^", "^2+", "^3-", "^-", "+", "-", "^+", "^99999999999+", " ", "·",
            ]),
            0..12,
        )
        .prop_map(|v| v.concat()),
        1 => "(?s).{0,20}",
    ]
    .boxed()
}

/// A TOML string literal holding `s` (escaped, so the document stays readable TOML).
fn quoted(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// A bare TOML number (some are not valid TOML, which is fine).
fn bare_number() -> BoxedStrategy<String> {
    prop_oneof![
        3 => prop::sample::select(vec![
            "0", "1", "-1", "0.5", "1.5", "-0.2", "1e308", "-1e308", "5e-324", "nan", "inf", "-inf", "1e400",
            "0.12", "2", "9223372036854775807",
        ])
        .prop_map(str::to_string),
        1 => any::<f64>().prop_map(|x| if x.is_finite() { format!("{x:?}") } else { "nan".to_string() }),
    ]
    .boxed()
}

/// A spectrum-valued field: number, string, table, single value or file.
fn spectrum_value() -> BoxedStrategy<String> {
    let points = || {
        prop::collection::vec(
            (bare_number(), bare_number()).prop_map(|(a, b)| format!("[{a}, {b}]")),
            0..6,
        )
        .prop_map(|v| v.join(", "))
    };
    prop_oneof![
        bare_number(),
        quantity_text().prop_map(|q| quoted(&q)),
        (unit_text(), unit_text(), points()).prop_map(|(wu, u, p)| format!(
            "{{ wavelength_unit = {}, unit = {}, points = [{p}] }}",
            quoted(&wu),
            quoted(&u)
        )),
        (unit_text(), points()).prop_map(|(wu, p)| format!("{{ wavelength_unit = {}, points = [{p}] }}", quoted(&wu))),
        (quantity_text(), quantity_text()).prop_map(|(a, v)| format!(
            "{{ at = {}, value = {} }}",
            quoted(&a),
            quoted(&v)
        )),
        (quantity_text(), bare_number()).prop_map(|(a, v)| format!("{{ at = {}, value = {v} }}", quoted(&a))),
        prop::sample::select(vec!["x.csv", "", "/", "../", "no/such/file.csv", "\u{0}"])
            .prop_map(|f| format!("{{ file = {} }}", quoted(f))),
        Just("{}".to_string()),
        Just("{ points = [], file = \"x.csv\" }".to_string()),
    ]
    .boxed()
}

/// A rate table.
fn rate_value() -> BoxedStrategy<String> {
    prop_oneof![
        quantity_text().prop_map(|q| format!("{{ k = {} }}", quoted(&q))),
        quantity_text().prop_map(|q| format!("{{ barrier = {} }}", quoted(&q))),
        (quantity_text(), bare_number())
            .prop_map(|(q, t)| format!("{{ barrier = {}, transmission = {t} }}", quoted(&q))),
        (quantity_text(), quantity_text()).prop_map(|(a, e)| format!(
            "{{ prefactor = {}, activation = {} }}",
            quoted(&a),
            quoted(&e)
        )),
        (quantity_text(), quantity_text()).prop_map(|(h, s)| format!(
            "{{ enthalpy = {}, entropy = {} }}",
            quoted(&h),
            quoted(&s)
        )),
        (quantity_text(), quantity_text()).prop_map(|(k, g)| format!(
            "{{ k = {}, barrier = {} }}",
            quoted(&k),
            quoted(&g)
        )),
        Just("{}".to_string()),
    ]
    .boxed()
}

/// A transient's channel list.
fn channels_value() -> BoxedStrategy<String> {
    let channel = prop_oneof![
        (name_text(), bare_number()).prop_map(|(t, f)| format!("{{ to = {}, fraction = {f} }}", quoted(&t))),
        name_text().prop_map(|t| format!("{{ to = {}, fraction = \"rest\" }}", quoted(&t))),
        (name_text(), rate_value()).prop_map(|(t, r)| format!("{{ to = {}, rate = {r} }}", quoted(&t))),
        (name_text(), name_text(), rate_value()).prop_map(|(t, q, r)| format!(
            "{{ to = {}, quencher = {}, rate = {r} }}",
            quoted(&t),
            quoted(&q)
        )),
        name_text().prop_map(|t| format!("{{ to = {} }}", quoted(&t))),
        (name_text(), bare_number(), rate_value())
            .prop_map(|(t, f, r)| format!("{{ to = {}, fraction = {f}, rate = {r} }}", quoted(&t))),
    ];
    prop::collection::vec(channel, 0..5)
        .prop_map(|v| format!("[{}]", v.join(", ")))
        .boxed()
}

/// A value for `key`, mostly of the kind the key expects.
fn value_for(key: &'static str) -> BoxedStrategy<String> {
    let typical: BoxedStrategy<String> = match key {
        "name" | "absorber" | "excites" => name_text().prop_map(|n| quoted(&n)).boxed(),
        "kind" => prop::sample::select(vec![
            "line",
            "band",
            "lamp",
            "sun",
            "excited",
            "intersection",
            "hot",
            "other",
            "laser",
            "",
        ])
        .prop_map(quoted)
        .boxed(),
        "formula" => formula_text().prop_map(|f| quoted(&f)).boxed(),
        "equation" => equation_text().prop_map(|e| quoted(&e)).boxed(),
        "epsilon" | "background" | "quantum_yield" => spectrum_value().boxed(),
        "rate" | "reverse" => rate_value().boxed(),
        "channels" => channels_value().boxed(),
        "product" | "invented" => prop::sample::select(vec!["true", "false"])
            .prop_map(str::to_string)
            .boxed(),
        "efficiency" | "scale" => bare_number().boxed(),
        "range" => (quantity_text(), quantity_text())
            .prop_map(|(a, b)| format!("[{}, {}]", quoted(&a), quoted(&b)))
            .boxed(),
        "file" => prop::sample::select(vec!["x.csv", "", "lamp.csv"])
            .prop_map(quoted)
            .boxed(),
        "description" | "provenance" | "note" => "(?s).{0,20}".prop_map(|s| quoted(&s)).boxed(),
        _ => quantity_text().prop_map(|q| quoted(&q)).boxed(),
    };
    prop_oneof![
        30 => typical,
        1 => quantity_text().prop_map(|q| quoted(&q)),
        1 => bare_number(),
    ]
    .boxed()
}

/// The keys each table takes (and a few it does not).
fn keys_of(section: &str) -> &'static [&'static str] {
    match section {
        "[about]" => &["name", "description", "provenance", "invented"],
        "[conditions]" => &["temperature", "volume", "path_length", "irradiated_area", "background"],
        "[[light]]" => &[
            "name",
            "kind",
            "wavelength",
            "centre",
            "fwhm",
            "power",
            "photon_flux",
            "file",
            "scale",
            "from",
            "to",
        ],
        "[[species]]" => &["name", "initial", "formula", "epsilon", "product", "note"],
        "[[thermal]]" => &["name", "equation", "rate", "reverse"],
        "[[photo]]" => &[
            "name",
            "equation",
            "quantum_yield",
            "absorber",
            "excites",
            "efficiency",
            "range",
        ],
        "[[transient]]" => &["name", "kind", "channels", "note"],
        _ => &["name", "value", "intial", "temprature"],
    }
}

const SECTIONS: &[&str] = &[
    "[about]",
    "[conditions]",
    "[[light]]",
    "[[species]]",
    "[[species]]",
    "[[thermal]]",
    "[[photo]]",
    "[[transient]]",
    "[[transient]]",
];

/// One table: its header and some of its keys with values.
fn section() -> BoxedStrategy<String> {
    prop::sample::select(SECTIONS)
        .prop_flat_map(|header| {
            let keys = keys_of(header);
            let entry = prop::sample::select(keys).prop_flat_map(|k| value_for(k).prop_map(move |v| (k, v)));
            prop::collection::vec(entry, 0..7).prop_map(move |entries| {
                let mut seen = Vec::new();
                let mut out = format!("{header}\n");
                for (k, v) in entries {
                    // A key twice in one table is a TOML error; keep the first.
                    if !seen.contains(&k) {
                        seen.push(k);
                        out.push_str(&format!("{k} = {v}\n"));
                    }
                }
                out
            })
        })
        .boxed()
}

/// A TOML-shaped network: a [conditions] table most of the time, then tables in any order.
fn toml_document() -> BoxedStrategy<String> {
    (
        prop::option::weighted(0.8, Just(
            "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\nirradiated_area = \"4 cm2\"\n",
        )),
        prop::collection::vec(section(), 0..10),
    )
        .prop_map(|(conditions, tables)| {
            let mut text = String::new();
            let mut tables = tables;
            if let Some(c) = conditions {
                tables.retain(|t| !t.starts_with("[conditions]"));
                text.push_str(c);
            }
            // [about] and [conditions] may appear once.
            let mut about = false;
            for t in tables {
                if t.starts_with("[about]") {
                    if about {
                        continue;
                    }
                    about = true;
                }
                if t.starts_with("[conditions]") && text.contains("[conditions]") {
                    continue;
                }
                text.push('\n');
                text.push_str(&t);
            }
            text
        })
    .boxed()
}

// ---------------------------------------------------------------------------------------------
// (a) random input
// ---------------------------------------------------------------------------------------------

proptest! {
    #![proptest_config(config(3000))]

    #[test]
    fn random_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..600)) {
        let text = String::from_utf8_lossy(&bytes).into_owned();
        read_and_build(Path::new("fuzz.toml"), text, &Overrides::none());
    }

    #[test]
    fn random_utf8_never_panics(text in "(?s).{0,400}") {
        read_and_build(Path::new("fuzz.toml"), text, &Overrides::none());
    }

    #[test]
    fn random_toml_lines_never_panic(
        lines in prop::collection::vec(
            prop_oneof![
                prop::sample::select(SECTIONS).prop_map(str::to_string),
                Just("[extra]".to_string()),
                (prop::sample::select(keys_of("[[light]]")), quantity_text())
                    .prop_map(|(k, v)| format!("{k} = {}", quoted(&v))),
                "(?s).{0,30}",
            ],
            0..30,
        )
    ) {
        read_and_build(Path::new("fuzz.toml"), lines.join("\n"), &Overrides::none());
    }
}

proptest! {
    #![proptest_config(config(8000))]

    #[test]
    fn random_toml_documents_never_panic(text in toml_document()) {
        read_and_build(Path::new("fuzz.toml"), text, &Overrides::none());
    }
}

// ---------------------------------------------------------------------------------------------
// (b) mutated valid networks
// ---------------------------------------------------------------------------------------------

/// Valid networks written here, so transients, sunlight and every rate form are covered even
/// if the bundled ones change.
const OWN_SEEDS: &[(&str, &str)] = &[
    (
        "seed-switch.toml",
        r#"# An invented photoswitch: every number is made up.
[about]
name = "switch"
invented = true

[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
background = 0.01

[[light]]
name = "UV LED"
kind = "band"
centre = "365 nm"
fwhm = "12 nm"
power = "20 mW"

[[light]]
name = "laser"
kind = "line"
wavelength = "450 nm"
photon_flux = "0.05 µeinstein/s"

[[species]]
name = "E-azo"
initial = "50 µM"
formula = "C12H10N2"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[330, 18000], [365, 21000], [450, 900]] }

[[species]]
name = "Z-azo"
formula = "C12H10N2"
epsilon = { at = "450 nm", value = "1500 L/(mol cm)", from = "330 nm", to = "500 nm" }

[[photo]]
equation = "E-azo -> Z-azo"
quantum_yield = 0.12
range = ["300 nm", "400 nm"]

[[photo]]
equation = "Z-azo -> E-azo"
quantum_yield = { wavelength_unit = "nm", points = [[330, 0.4], [500, 0.5]] }

[[thermal]]
equation = "Z-azo <=> E-azo"
rate = { enthalpy = "22 kcal/mol", entropy = "-10 J/(mol K)", transmission = 0.9 }
reverse = { prefactor = "1e13 /s", activation = "140 kJ/mol" }
"#,
    ),
    (
        "seed-ring.toml",
        r#"# An invented ring opening in sunlight: every number is made up.
[conditions]
temperature = "25 °C"
volume = "10 mL"
path_length = "2 mm"
irradiated_area = "5 cm2"
background = { wavelength_unit = "nm", points = [[280, 0.2], [400, 0.01]] }

[[light]]
name = "sun"
kind = "sun"
scale = 0.8
from = "290 nm"
to = "500 nm"

[[species]]
name = "closed"
initial = "1 mM"
formula = "C10H8O"
epsilon = { wavelength_unit = "nm", unit = "M-1 cm-1", points = [[280, 9000], [350, 4000], [420, 0]] }

[[species]]
name = "open"
formula = "C10H8O"
product = true

[[species]]
name = "O2"
initial = "0.25 mM"
formula = "O2"

[[photo]]
absorber = "closed"
excites = "S1"
efficiency = 0.95

[[transient]]
name = "S1"
kind = "excited"
channels = [
  { to = "CI", rate = { barrier = "3 kcal/mol" } },
  { to = "closed", rate = { k = "1e9 /s" } },
  { to = "T1", quencher = "O2", rate = { k = "1e10 /(M s)" } },
]

[[transient]]
name = "T1"
kind = "other"
channels = [{ to = "closed", rate = { k = "1e5 /s" } }]

[[transient]]
name = "CI"
kind = "intersection"
channels = [{ to = "open", fraction = 0.3 }, { to = "hot", fraction = "rest" }]

[[transient]]
name = "hot"
kind = "hot"
channels = [{ to = "closed", fraction = 1 }]

[[thermal]]
equation = "open -> closed"
rate = { k = "1e-4 /s" }

[[thermal]]
equation = "2 open -> closed + open"
rate = { k = "1e2 /(M s)" }
"#,
    ),
];

/// Every seed: ours, and the bundled networks present when the test runs (read from disk,
/// with their real paths so the CSV files they name are read too).
fn seeds() -> Vec<(PathBuf, String)> {
    let mut out: Vec<(PathBuf, String)> = OWN_SEEDS
        .iter()
        .map(|(name, text)| (PathBuf::from(name), text.to_string()))
        .collect();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    if let Ok(entries) = std::fs::read_dir(&dir) {
        let mut paths: Vec<PathBuf> = entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "toml"))
            .collect();
        paths.sort();
        for p in paths {
            if let Ok(text) = std::fs::read_to_string(&p) {
                out.push((p, text));
            }
        }
    }
    out
}

/// The seeds, read once.
fn seed_list() -> &'static [(PathBuf, String)] {
    static SEEDS: std::sync::OnceLock<Vec<(PathBuf, String)>> = std::sync::OnceLock::new();
    SEEDS.get_or_init(seeds)
}

/// A choice among however many candidates there turn out to be (shrinks to the first).
#[derive(Debug, Clone, Copy)]
struct Pick(usize);

impl Pick {
    /// An index below `n` (`n` > 0).
    fn of(self, n: usize) -> usize {
        self.0 % n
    }
    fn get<T>(self, items: &[T]) -> &T {
        &items[self.of(items.len())]
    }
}

fn pick() -> impl Strategy<Value = Pick> {
    any::<usize>().prop_map(Pick)
}

/// One change to a network file's text.
#[derive(Debug, Clone)]
enum Mutation {
    DeleteLine(Pick),
    DuplicateLine(Pick),
    SwapLines(Pick, Pick),
    MoveLine(Pick, Pick),
    /// Delete a whole table, from its header to the next.
    DeleteTable(Pick),
    /// Duplicate a whole table.
    DuplicateTable(Pick),
    /// Replace what follows ` = ` on a line.
    ReplaceValue(Pick, String),
    /// Replace the inside of the n-th "..." on a line.
    ReplaceQuoted(Pick, Pick, String),
    /// Replace the n-th number on a line.
    ReplaceNumber(Pick, Pick, String),
    InsertLine(Pick, String),
    /// Remove a leading `#` (the bundled files hold commented-out alternatives).
    Uncomment(Pick),
    Truncate(Pick),
    InsertChar(Pick, char),
    /// Give a declared name (`name = "..."`) another declared name or a new one.
    Rename(Pick, Option<Pick>, String),
    /// Swap the names of two declarations.
    SwapNames(Pick, Pick),
    /// Rename a declared name everywhere it occurs.
    RenameEverywhere(Pick, String),
}

fn mutation() -> BoxedStrategy<Mutation> {
    let key = prop::sample::select(vec![
        "name",
        "kind",
        "initial",
        "formula",
        "epsilon",
        "temperature",
        "volume",
        "path_length",
        "irradiated_area",
        "background",
        "wavelength",
        "centre",
        "fwhm",
        "power",
        "photon_flux",
        "file",
        "scale",
        "from",
        "to",
        "equation",
        "quantum_yield",
        "rate",
        "reverse",
        "absorber",
        "excites",
        "efficiency",
        "range",
        "channels",
        "product",
        "note",
        "intial",
        "zzz",
    ]);
    let any_value = || -> BoxedStrategy<String> {
        prop_oneof![
            quantity_text().prop_map(|q| quoted(&q)),
            bare_number(),
            spectrum_value(),
            rate_value(),
            channels_value(),
            name_text().prop_map(|n| quoted(&n)),
            equation_text().prop_map(|e| quoted(&e)),
            "(?s).{0,12}",
        ]
        .boxed()
    };
    let inner_text = prop_oneof![
        4 => quantity_text(),
        2 => name_text(),
        1 => equation_text(),
        1 => formula_text(),
        1 => "[^\"\\\\\n]{0,12}",
    ];
    let line = prop_oneof![
        (key, any_value()).prop_map(|(k, v)| format!("{k} = {v}")),
        prop::sample::select(SECTIONS).prop_map(str::to_string),
        "(?s).{0,20}",
    ];
    prop_oneof![
        1 => pick().prop_map(Mutation::DeleteLine),
        1 => pick().prop_map(Mutation::DuplicateLine),
        1 => (pick(), pick()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        1 => (pick(), pick()).prop_map(|(a, b)| Mutation::MoveLine(a, b)),
        1 => pick().prop_map(Mutation::DeleteTable),
        1 => pick().prop_map(Mutation::DuplicateTable),
        3 => (pick(), any_value()).prop_map(|(i, v)| Mutation::ReplaceValue(i, v)),
        8 => (pick(), pick(), inner_text).prop_map(|(i, n, s)| Mutation::ReplaceQuoted(i, n, s)),
        6 => (pick(), pick(), number_text()).prop_map(|(i, n, s)| Mutation::ReplaceNumber(i, n, s)),
        1 => (pick(), line).prop_map(|(i, l)| Mutation::InsertLine(i, l)),
        1 => pick().prop_map(Mutation::Uncomment),
        1 => pick().prop_map(Mutation::Truncate),
        1 => (pick(), any::<char>()).prop_map(|(i, c)| Mutation::InsertChar(i, c)),
        2 => (pick(), prop::option::of(pick()), name_text())
            .prop_map(|(i, o, n)| Mutation::Rename(i, o, n)),
        3 => (pick(), pick()).prop_map(|(a, b)| Mutation::SwapNames(a, b)),
        1 => (pick(), name_text()).prop_map(|(i, n)| Mutation::RenameEverywhere(i, n)),
    ]
    .boxed()
}

/// Byte ranges of the insides of "..." on a line (naive: escapes are not followed).
fn quoted_ranges(line: &str) -> Vec<(usize, usize)> {
    let q: Vec<usize> = line.match_indices('"').map(|(i, _)| i).collect();
    q.chunks(2).filter(|c| c.len() == 2).map(|c| (c[0] + 1, c[1])).collect()
}

/// Byte ranges of numbers on a line: runs of digits, '.', 'e', 'E', '+', '-' holding a digit.
fn number_ranges(line: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    let is_num = |c: char| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-');
    for (i, c) in line.char_indices().chain(std::iter::once((line.len(), ' '))) {
        match (start, is_num(c)) {
            (None, true) => start = Some(i),
            (Some(s), false) => {
                if line[s..i].chars().any(|c| c.is_ascii_digit()) {
                    out.push((s, i));
                }
                start = None;
            }
            _ => {}
        }
    }
    out
}

/// Lines that declare a name, and the name.
fn declarations(lines: &[String]) -> Vec<(usize, String)> {
    lines
        .iter()
        .enumerate()
        .filter_map(|(i, l)| {
            let rest = l.trim_start().strip_prefix("name")?.trim_start().strip_prefix('=')?;
            let r = quoted_ranges(rest).into_iter().next()?;
            Some((i, rest[r.0..r.1].to_string()))
        })
        .collect()
}

/// Lines that start a table.
fn headers(lines: &[String]) -> Vec<usize> {
    lines
        .iter()
        .enumerate()
        .filter(|(_, l)| l.trim_start().starts_with('['))
        .map(|(i, _)| i)
        .collect()
}

fn apply(text: &str, m: &Mutation) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    if lines.is_empty() {
        lines.push(String::new());
    }
    let n = lines.len();
    match m {
        Mutation::DeleteLine(i) => {
            lines.remove(i.of(n));
        }
        Mutation::DuplicateLine(i) => {
            let k = i.of(n);
            lines.insert(k, lines[k].clone());
        }
        Mutation::SwapLines(a, b) => lines.swap(a.of(n), b.of(n)),
        Mutation::MoveLine(a, b) => {
            let l = lines.remove(a.of(n));
            lines.insert(b.of(n), l);
        }
        Mutation::DeleteTable(i) | Mutation::DuplicateTable(i) => {
            let hs = headers(&lines);
            if !hs.is_empty() {
                let k = i.of(hs.len());
                let start = hs[k];
                let end = hs.get(k + 1).copied().unwrap_or(n);
                if matches!(m, Mutation::DeleteTable(_)) {
                    lines.drain(start..end);
                } else {
                    let block: Vec<String> = lines[start..end].to_vec();
                    lines.extend(block);
                }
            }
        }
        Mutation::ReplaceValue(i, v) => {
            let k = i.of(n);
            if let Some(eq) = lines[k].find(" = ") {
                lines[k] = format!("{} = {v}", &lines[k][..eq]);
            }
        }
        Mutation::ReplaceQuoted(i, j, s) => {
            let k = i.of(n);
            let rs = quoted_ranges(&lines[k]);
            if !rs.is_empty() {
                let (a, b) = rs[j.of(rs.len())];
                lines[k].replace_range(a..b, &s.replace(['"', '\\'], ""));
            }
        }
        Mutation::ReplaceNumber(i, j, s) => {
            let k = i.of(n);
            let rs = number_ranges(&lines[k]);
            if !rs.is_empty() {
                let (a, b) = rs[j.of(rs.len())];
                lines[k].replace_range(a..b, s);
            }
        }
        Mutation::InsertLine(i, l) => lines.insert(i.of(n + 1), l.clone()),
        Mutation::Uncomment(i) => {
            let commented: Vec<usize> = (0..n).filter(|&k| lines[k].trim_start().starts_with('#')).collect();
            if !commented.is_empty() {
                let k = commented[i.of(commented.len())];
                let l = lines[k].trim_start().trim_start_matches('#').trim_start().to_string();
                lines[k] = l;
            }
        }
        Mutation::Truncate(i) => {
            let mut cut = i.of(text.len() + 1);
            while !text.is_char_boundary(cut) {
                cut -= 1;
            }
            return text[..cut].to_string();
        }
        Mutation::InsertChar(i, c) => {
            let mut at = i.of(text.len() + 1);
            while !text.is_char_boundary(at) {
                at -= 1;
            }
            let mut t = text.to_string();
            t.insert(at, *c);
            return t;
        }
        Mutation::Rename(i, other, fresh) => {
            let ds = declarations(&lines);
            if !ds.is_empty() {
                let (k, old) = &ds[i.of(ds.len())];
                let new = match other {
                    Some(o) => ds[o.of(ds.len())].1.clone(),
                    None => fresh.replace(['"', '\\'], ""),
                };
                lines[*k] = lines[*k].replacen(&format!("\"{old}\""), &format!("\"{new}\""), 1);
            }
        }
        Mutation::SwapNames(a, b) => {
            let ds = declarations(&lines);
            if !ds.is_empty() {
                let (ka, na) = ds[a.of(ds.len())].clone();
                let (kb, nb) = ds[b.of(ds.len())].clone();
                lines[ka] = lines[ka].replacen(&format!("\"{na}\""), &format!("\"{nb}\""), 1);
                lines[kb] = lines[kb].replacen(&format!("\"{nb}\""), &format!("\"{na}\""), 1);
            }
        }
        Mutation::RenameEverywhere(i, fresh) => {
            let ds = declarations(&lines);
            if !ds.is_empty() {
                let (_, old) = &ds[i.of(ds.len())];
                if !old.is_empty() {
                    let new = fresh.replace(['"', '\\'], "");
                    for l in &mut lines {
                        *l = l.replace(old.as_str(), &new);
                    }
                }
            }
        }
    }
    let mut out = lines.join("\n");
    out.push('\n');
    out
}

/// A `--set` override: a key the network may or may not have, and a value.
#[derive(Debug, Clone)]
struct Set {
    kind: u8,
    name: Pick,
    value: String,
}

fn set() -> BoxedStrategy<Set> {
    (
        0u8..16,
        pick(),
        prop_oneof![3 => quantity_text(), 1 => bare_number(), 1 => "(?s).{0,10}"],
    )
        .prop_map(|(kind, name, value)| Set { kind, name, value })
        .boxed()
}

fn overrides_for(text: &str, sets: &[Set]) -> Overrides {
    let lines: Vec<String> = text.lines().map(str::to_string).collect();
    let names: Vec<String> = declarations(&lines).into_iter().map(|d| d.1).collect();
    let mut o = Overrides::none();
    for s in sets {
        let name = if names.is_empty() {
            "A".to_string()
        } else {
            s.name.get(&names).clone()
        };
        let key = match s.kind {
            0 => "conditions.temperature".to_string(),
            1 => "conditions.volume".to_string(),
            2 => "conditions.path_length".to_string(),
            3 => "conditions.irradiated_area".to_string(),
            4 => "conditions.background".to_string(),
            5 | 6 => format!("species.{name}.initial"),
            7 => format!("light.{name}.power"),
            8 => format!("light.{name}.photon_flux"),
            9 => format!("light.{name}.wavelength"),
            10 => format!("light.{name}.centre"),
            11 => format!("light.{name}.fwhm"),
            12 => format!("light.{name}.scale"),
            13 => format!("transient.{name}.kind"),
            _ => "nonsense".to_string(),
        };
        o = o.with(&key, &s.value);
    }
    o
}

proptest! {
    #![proptest_config(config(12000))]

    #[test]
    fn mutated_networks_never_panic(
        seed in pick(),
        mutations in prop::collection::vec(mutation(), 1..5),
        sets in prop::collection::vec(set(), 0..3),
    ) {
        let seeds = seed_list();
        let (path, original) = seed.get(seeds);
        let mut text = original.clone();
        for m in &mutations {
            text = apply(&text, m);
        }
        let overrides = overrides_for(&text, &sets);
        read_and_build(path, text, &overrides);
    }
}

proptest! {
    #![proptest_config(config(1500))]

    /// Networks that survive a mutation still draw: DOT and SVG.
    #[test]
    fn mutated_valid_networks_draw_without_panic(
        seed in pick(),
        mutations in prop::collection::vec(mutation(), 1..3),
    ) {
        let seeds = seed_list();
        let (path, original) = seed.get(seeds);
        let mut text = original.clone();
        for m in &mutations {
            text = apply(&text, m);
        }
        if let Some(net) = read_and_build(path, text, &Overrides::none()) {
            let _ = photoledger::report::diagram::dot(&net);
            let _ = photoledger::report::diagram::svg(&net);
        }
    }
}

#[test]
fn every_seed_is_valid() {
    // The mutations start from valid networks; a broken seed would test much less.
    let seeds = seed_list();
    assert!(seeds.len() >= 3, "found {} seeds", seeds.len());
    for (path, text) in seeds {
        let loaded = file::parse_text(path, text.clone()).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        if let Err(e) = network::build(&loaded, &Overrides::none()) {
            panic!("{}: {e}", path.display());
        }
    }
}

#[test]
fn mutations_change_the_text() {
    // The mutation helpers find what they look for in a seed.
    let text = OWN_SEEDS[1].1;
    let lines: Vec<String> = text.lines().map(str::to_string).collect();
    let names: Vec<String> = declarations(&lines).into_iter().map(|d| d.1).collect();
    assert_eq!(names, ["sun", "closed", "open", "O2", "S1", "T1", "CI", "hot"]);
    assert_eq!(number_ranges("temperature = \"25 °C\""), vec![(15, 17)]);
    assert_eq!(quoted_ranges("a = \"x\", b = \"yz\""), vec![(5, 6), (14, 16)]);
    let swapped = apply(text, &Mutation::SwapNames(Pick(1), Pick(7)));
    assert!(swapped.contains("name = \"hot\"\ninitial = \"1 mM\""), "{swapped}");
}

// ---------------------------------------------------------------------------------------------
// (c) the small parsers
// ---------------------------------------------------------------------------------------------

/// Every quantity a field can hold, with rate constants of order 0 to 4.
const QUANTITIES: &[Quantity] = &[
    Quantity::Wavelength,
    Quantity::Length,
    Quantity::Area,
    Quantity::Volume,
    Quantity::Time,
    Quantity::Temperature,
    Quantity::Concentration,
    Quantity::Power,
    Quantity::PhotonFlux,
    Quantity::Irradiance,
    Quantity::MolarEnergy,
    Quantity::MolarEntropy,
    Quantity::RateConstant(0),
    Quantity::RateConstant(1),
    Quantity::RateConstant(2),
    Quantity::RateConstant(3),
    Quantity::RateConstant(4),
    Quantity::MolarAbsorption,
];

fn check_units(text: &str) {
    for &q in QUANTITIES {
        let _ = q.describe();
        let _ = q.accepted();
        match units::parse(text, q) {
            Ok(v) => assert!(!v.is_nan(), "{text:?} as {q:?} gave NaN"),
            Err(e) => {
                let _ = e.to_string();
            }
        }
    }
}

proptest! {
    #![proptest_config(config(8000))]

    #[test]
    fn unit_parser_never_panics_on_random_text(text in "(?s).{0,40}") {
        check_units(&text);
    }

    #[test]
    fn unit_parser_never_panics_on_quantity_like_text(
        text in prop::collection::vec(
            prop_oneof![quantity_text(), unit_text(), prop::sample::select(vec![" ", "/", "*", "^", "(", ")", "-", "²", "⁻"]).prop_map(str::to_string)],
            1..5,
        ).prop_map(|v| v.concat())
    ) {
        check_units(&text);
    }

    #[test]
    fn equation_parser_never_panics(text in prop_oneof![equation_text(), "(?s).{0,40}".boxed()]) {
        if let Ok(e) = equation::parse(&text) {
            prop_assert!(!e.left.is_empty());
            for t in e.left.iter().chain(&e.right) {
                prop_assert!(t.coefficient.is_finite() && t.coefficient > 0.0, "{text:?}: {t:?}");
            }
        }
        let _ = equation::parse_side(&text);
    }

    #[test]
    fn formula_parser_never_panics(text in formula_text()) {
        if let Ok(c) = formula::parse(&text) {
            let _ = formula::imbalance(&c, &formula::total([(&c, 2.0)]));
        }
    }

    #[test]
    fn csv_reader_never_panics(
        rows in prop::collection::vec(
            prop_oneof![
                prop::sample::select(vec![
                    "wavelength (nm), epsilon (L/(mol cm))", "wavelength [nm]; relative power", "# comment",
                    "", "300, 1200", "310,\t1850", "1e400, 1", "nan, 2", "a, b", "1, 2, 3", "(,)", "[]",
                ]).prop_map(str::to_string),
                (bare_number(), bare_number()).prop_map(|(a, b)| format!("{a}, {b}")),
                "(?s).{0,20}",
            ],
            0..8,
        )
    ) {
        let text = rows.join("\n");
        if let Err(e) = file::csv::parse(Path::new("fuzz.csv"), &text) {
            let _ = e.to_string();
        }
    }
}

/// Found by hand while writing the unit property above: the order of a rate constant is a
/// `u32`, and a huge order overflows the exponent arithmetic (a panic in debug builds).
#[test]
fn rate_constant_of_a_huge_order_does_not_panic() {
    for order in [715_827_884, 1 << 31, u32::MAX] {
        let _ = units::parse("1 /s", Quantity::RateConstant(order));
        let _ = Quantity::RateConstant(order).accepted();
    }
}

/// A network of `n` transients, each branching to the next two, the last two to species:
/// the number of routes through them grows like the Fibonacci numbers.
fn transient_ladder(n: usize) -> String {
    let mut s = String::from(
        "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\n\n\
         [[light]]\nname = \"UV LED\"\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"20 mW\"\n\n\
         [[species]]\nname = \"A\"\ninitial = \"1 mM\"\nformula = \"C2H4\"\n\
         epsilon = { at = \"365 nm\", value = \"5000 L/(mol cm)\" }\n\n\
         [[species]]\nname = \"B\"\nformula = \"C2H4\"\n\n\
         [[photo]]\nabsorber = \"A\"\nexcites = \"T0\"\n",
    );
    for i in 0..n {
        let channels = if i + 2 < n {
            format!(
                "[{{ to = \"T{}\", fraction = 0.5 }}, {{ to = \"T{}\", fraction = \"rest\" }}]",
                i + 1,
                i + 2
            )
        } else {
            "[{ to = \"B\", fraction = 0.5 }, { to = \"A\", fraction = \"rest\" }]".to_string()
        };
        s.push_str(&format!("\n[[transient]]\nname = \"T{i}\"\nchannels = {channels}\n"));
    }
    s
}

#[test]
fn a_short_ladder_of_transients_is_valid() {
    let net = read_and_build(Path::new("ladder.toml"), transient_ladder(12), &Overrides::none());
    assert!(net.is_some_and(|n| n.transients.len() == 12));
}

/// Not a panic but the same family: the element balance follows every route through the
/// transients one by one, so time and memory grow exponentially with their number.
#[test]
fn a_long_ladder_of_transients_is_checked_quickly() {
    let start = std::time::Instant::now();
    let net = read_and_build(Path::new("ladder.toml"), transient_ladder(32), &Overrides::none());
    assert!(net.is_some());
    let t = start.elapsed();
    assert!(t < std::time::Duration::from_secs(1), "took {t:?}");
}
