//! `photoledger check` on broken networks: for every class of problem the validator knows,
//! the exit code and the message — file, line and column, field, what was found, and what is
//! accepted (or the name suggested).
//!
//! Each test writes its network into a fresh scratch folder and runs the real binary on it.
//! Every network here is invented; the numbers only have to be plausible.
//!
//! Exit codes (src/cli/mod.rs): 0 valid, 1 invalid network, 2 usage error, 3 I/O.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::{AtomicUsize, Ordering};

// ---------------------------------------------------------------------------------------------
// Scratch folders, running the binary, finding diagnostics
// ---------------------------------------------------------------------------------------------

/// A fresh folder under the system temp dir, removed when dropped.
struct Scratch {
    dir: PathBuf,
}

impl Scratch {
    fn new(tag: &str) -> Self {
        static COUNTER: AtomicUsize = AtomicUsize::new(0);
        let n = COUNTER.fetch_add(1, Ordering::SeqCst);
        let dir = std::env::temp_dir().join(format!("photoledger-check-errors-{}-{n}-{tag}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("create scratch folder");
        Scratch { dir }
    }

    /// Write `text` to `name` (which may hold sub-folders) and return the full path.
    fn write(&self, name: &str, text: &str) -> PathBuf {
        let p = self.dir.join(name);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).expect("create sub-folder");
        }
        std::fs::write(&p, text).expect("write scratch file");
        p
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// What one run of the binary printed.
struct Run {
    code: i32,
    stdout: String,
    stderr: String,
}

impl Run {
    #[track_caller]
    fn expect_code(&self, code: i32) -> &Self {
        assert_eq!(
            self.code, code,
            "exit code {} (expected {code})\n--- stdout\n{}\n--- stderr\n{}",
            self.code, self.stdout, self.stderr
        );
        self
    }
}

fn photoledger(args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .output()
        .expect("run photoledger");
    Run {
        code: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

/// `photoledger check FILE EXTRA...`
fn check(file: &Path, extra: &[&str]) -> Run {
    let f = file.to_str().expect("utf-8 path");
    let mut args = vec!["check", f];
    args.extend_from_slice(extra);
    photoledger(&args)
}

/// Write `text` as `name` in a fresh scratch folder and check it.
fn check_text(tag: &str, text: &str, extra: &[&str]) -> (Scratch, PathBuf, Run) {
    let s = Scratch::new(tag);
    let p = s.write(&format!("{tag}.toml"), text);
    let r = check(&p, extra);
    (s, p, r)
}

/// `text` with the first `from` replaced by `to`; `from` must be there.
#[track_caller]
fn edit(text: &str, from: &str, to: &str) -> String {
    assert!(text.contains(from), "test setup: {from:?} is not in the network");
    text.replacen(from, to, 1)
}

/// 1-based line and column (in characters) of byte offset `at` in `text`.
fn position(text: &str, at: usize) -> (usize, usize) {
    let before = &text[..at];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

/// Where `needle` first starts in `text`.
#[track_caller]
fn loc(text: &str, needle: &str) -> (usize, usize) {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("test setup: {needle:?} is not in the network"));
    position(text, at)
}

/// Where `needle` last starts in `text`.
#[track_caller]
fn loc_last(text: &str, needle: &str) -> (usize, usize) {
    let at = text
        .rfind(needle)
        .unwrap_or_else(|| panic!("test setup: {needle:?} is not in the network"));
    position(text, at)
}

/// Line and column of the `[[...]]`/`[...]` header of the table that holds `needle`.
#[track_caller]
fn table_of(text: &str, needle: &str) -> (usize, usize) {
    let (line, _) = loc(text, needle);
    let header = text
        .lines()
        .take(line)
        .enumerate()
        .filter(|(_, l)| l.trim_start().starts_with('['))
        .map(|(i, _)| i + 1)
        .last()
        .expect("test setup: no table header above the needle");
    (header, 1)
}

/// One diagnostic as printed: `KIND: FILE:LINE:COL: FIELD: MESSAGE` and an optional
/// `  help: HELP` below it, perhaps continued on further indented lines (src/error.rs).
struct Diag {
    message: String,
    help: Option<String>,
}

/// Find the diagnostic of `kind` ("error"/"warning") for `file` at `at` about `field` in `out`.
#[track_caller]
fn diag(out: &str, kind: &str, file: &Path, at: Option<(usize, usize)>, field: &str) -> Diag {
    let mut head = format!("{kind}: {}", file.display());
    if let Some((l, c)) = at {
        head.push_str(&format!(":{l}:{c}"));
    }
    head.push_str(": ");
    if !field.is_empty() {
        head.push_str(field);
        head.push_str(": ");
    }
    let lines: Vec<&str> = out.lines().collect();
    let i = lines
        .iter()
        .position(|l| l.starts_with(&head))
        .unwrap_or_else(|| panic!("no line starting with {head:?} in:\n{out}"));
    // The help line, with any indented lines that continue it.
    let help = lines.get(i + 1).and_then(|l| l.strip_prefix("  help: ")).map(|first| {
        let mut h = first.to_string();
        for l in lines[i + 2..]
            .iter()
            .take_while(|l| l.starts_with("  ") && !l.starts_with("  help: "))
        {
            h.push('\n');
            h.push_str(l.trim_start());
        }
        h
    });
    Diag {
        message: lines[i][head.len()..].to_string(),
        help,
    }
}

impl Diag {
    /// The message holds every one of `parts`.
    #[track_caller]
    fn says(&self, parts: &[&str]) -> &Self {
        for p in parts {
            assert!(
                self.message.contains(p),
                "expected {p:?} in the message {:?}",
                self.message
            );
        }
        self
    }

    /// The help line exists and holds every one of `parts`.
    #[track_caller]
    fn helps(&self, parts: &[&str]) -> &Self {
        let h = self
            .help
            .as_deref()
            .unwrap_or_else(|| panic!("no help line under {:?}", self.message));
        for p in parts {
            assert!(h.contains(p), "expected {p:?} in the help {h:?}");
        }
        self
    }
}

#[track_caller]
fn assert_contains(hay: &str, parts: &[&str]) {
    for p in parts {
        assert!(hay.contains(p), "expected {p:?} in:\n{hay}");
    }
}

/// An invalid network ends with this line on stderr (src/cli/mod.rs).
#[track_caller]
fn assert_invalid(r: &Run) {
    r.expect_code(1);
    assert_contains(&r.stderr, &["invalid: see the problems above"]);
    assert!(
        !r.stdout.contains("valid:"),
        "an invalid network printed a verdict:\n{}",
        r.stdout
    );
}

// ---------------------------------------------------------------------------------------------
// The networks the tests break
// ---------------------------------------------------------------------------------------------

/// A valid photoswitch with no warnings: one LED line, a short-form photo step, a thermal
/// back-reaction, formulas on both isomers.
const SWITCH: &str = r#"# An invented photoswitch: every number is made up.
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "UV LED"
kind = "line"
wavelength = "365 nm"
power = "20 mW"

[[species]]
name = "E-azo"
initial = "50 µM"
formula = "C12H10N2"
epsilon = { at = "365 nm", value = "21000 L/(mol cm)" }

[[species]]
name = "Z-azo"
initial = "0 M"
formula = "C12H10N2"

[[photo]]
equation = "E-azo -> Z-azo"
quantum_yield = 0.12

[[thermal]]
equation = "Z-azo -> E-azo"
rate = { barrier = "23.5 kcal/mol" }
"#;

/// A valid ring opening through an excited state and a conical intersection, with returns.
const RING: &str = r#"# An invented ring opening: every number is made up.
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "UV LED"
kind = "line"
wavelength = "365 nm"
power = "20 mW"

[[species]]
name = "closed"
initial = "1 mM"
formula = "C10H8O"
epsilon = { at = "365 nm", value = "5000 L/(mol cm)" }

[[species]]
name = "open"
formula = "C10H8O"

[[photo]]
absorber = "closed"
excites = "S1"

[[transient]]
name = "S1"
kind = "excited"
channels = [{ to = "CI", fraction = 0.9 }, { to = "closed", fraction = "rest" }]

[[transient]]
name = "CI"
kind = "intersection"
channels = [{ to = "open", fraction = 0.4 }, { to = "closed", fraction = 0.6 }]
"#;

#[test]
fn the_base_networks_are_valid_and_quiet() {
    for (tag, text) in [("switch", SWITCH), ("ring", RING)] {
        let (_s, p, r) = check_text(tag, text, &[]);
        r.expect_code(0);
        assert_contains(&r.stdout, &[&format!("valid: {}", p.display())]);
        assert!(!r.stdout.contains("warning"), "{}", r.stdout);
        assert!(!r.stderr.contains("warning"), "{}", r.stderr);
    }
}

// ---------------------------------------------------------------------------------------------
// Reading the file
// ---------------------------------------------------------------------------------------------

#[test]
fn toml_syntax_error_gives_line_and_column() {
    let text = edit(SWITCH, "path_length = \"1 cm\"", "path_length = = \"1 cm\"");
    let (_s, p, r) = check_text("syntax", &text, &[]);
    assert_invalid(&r);
    // The second '=' is where reading stops.
    let at = loc(&text, "= \"1 cm\"");
    assert_eq!(at, (5, 15));
    diag(&r.stderr, "error", &p, Some(at), "")
        .says(&["`=`"])
        .helps(&["README.md"]);
}

#[test]
fn unclosed_string_is_a_syntax_error_on_its_line() {
    let text = edit(SWITCH, "volume = \"3 mL\"", "volume = \"3 mL");
    let (_s, p, r) = check_text("unclosed", &text, &[]);
    assert_invalid(&r);
    let line = loc(&text, "volume = ").0;
    assert_contains(&r.stderr, &[&format!("error: {}:{line}:", p.display()), "README.md"]);
}

#[test]
fn misspelt_key_is_named_with_the_keys_accepted() {
    let text = edit(SWITCH, "initial = \"50 µM\"", "intial = \"50 µM\"");
    let (_s, p, r) = check_text("misspelt", &text, &[]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, Some(loc(&text, "intial")), "").says(&[
        "species \"E-azo\".intial: no key \"intial\" here: did you mean initial?",
        "accepted here: name, initial",
        "epsilon",
    ]);
}

#[test]
fn misspelt_key_inside_an_inline_rate_table_is_named() {
    let text = edit(SWITCH, "{ barrier = ", "{ barier = ");
    let (_s, p, r) = check_text("misspelt-rate", &text, &[]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, Some(loc(&text, "barier")), "").says(&[
        ".rate.barier: no key \"barier\" here: did you mean barrier?",
        "accepted here: k, prefactor",
    ]);
}

// ---------------------------------------------------------------------------------------------
// Names
// ---------------------------------------------------------------------------------------------

#[test]
fn unknown_species_in_an_equation_suggests_the_closest_name() {
    let text = edit(SWITCH, "equation = \"E-azo -> Z-azo\"", "equation = \"E-azo -> Z-azp\"");
    let (_s, p, r) = check_text("unknown-species", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"E-azo -> Z-azp\"")),
        "photo \"E-azo -> Z-azp\".equation",
    )
    .says(&["unknown species \"Z-azp\""])
    .helps(&["did you mean \"Z-azo\"?"]);
}

#[test]
fn unknown_species_in_a_channel_suggests_the_closest_name() {
    let text = edit(
        RING,
        "{ to = \"open\", fraction = 0.4 }",
        "{ to = \"opne\", fraction = 0.4 }",
    );
    let (_s, p, r) = check_text("unknown-channel", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"opne\"")),
        "transient \"CI\".channels[0].to",
    )
    .says(&["unknown species \"opne\""])
    .helps(&["did you mean \"open\"?"]);
}

#[test]
fn two_species_with_one_name() {
    let text = edit(SWITCH, "name = \"Z-azo\"", "name = \"E-azo\"");
    let text = edit(&text, "equation = \"E-azo -> Z-azo\"", "equation = \"E-azo -> E-azo\"");
    let text = edit(&text, "equation = \"Z-azo -> E-azo\"", "equation = \"E-azo -> E-azo\"");
    let (_s, p, r) = check_text("duplicate", &text, &[]);
    assert_invalid(&r);
    let first = loc(&text, "name = \"E-azo\"").0;
    // The second declaration is the one reported, at its value.
    let (second, col) = loc_last(&text, "name = \"E-azo\"");
    diag(&r.stderr, "error", &p, Some((second, col + 7)), "species[1].name")
        .says(&["\"E-azo\" is already defined", &format!("(line {first})")])
        .helps(&["one set of names"]);
}

#[test]
fn a_transient_may_not_take_a_species_name() {
    let text = edit(RING, "name = \"CI\"", "name = \"open\"");
    let (_s, p, r) = check_text("species-vs-transient", &text, &[]);
    assert_invalid(&r);
    let first = loc(&text, "name = \"open\"").0;
    let (second, col) = loc_last(&text, "name = \"open\"");
    diag(&r.stderr, "error", &p, Some((second, col + 7)), "transient[1].name")
        .says(&["\"open\" is already defined", &format!("(line {first})")])
        .helps(&["species and transients share one set of names"]);
}

#[test]
fn two_lights_with_one_name() {
    let text = edit(
        SWITCH,
        "[[species]]\nname = \"E-azo\"",
        "[[light]]\nname = \"UV LED\"\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"5 mW\"\n\n[[species]]\nname = \"E-azo\"",
    );
    let (_s, p, r) = check_text("duplicate-light", &text, &[]);
    assert_invalid(&r);
    let first = table_of(&text, "name = \"UV LED\"").0;
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc_last(&text, "[[light]]")),
        "light \"UV LED\".name",
    )
    .says(&["\"UV LED\" is used by another light", &format!("(line {first})")])
    .helps(&["its own name"]);
}

// ---------------------------------------------------------------------------------------------
// Units and numbers
// ---------------------------------------------------------------------------------------------

#[test]
fn a_number_without_its_unit() {
    let text = edit(SWITCH, "initial = \"50 µM\"", "initial = \"10\"");
    let (_s, p, r) = check_text("no-unit", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"10\"")),
        "species \"E-azo\".initial",
    )
    .says(&["\"10\" has no unit"])
    .helps(&["expected a number with M, mM, µM", "e.g. \"10 mM\""]);
}

#[test]
fn a_bare_toml_number_for_a_dimensional_field_is_rejected() {
    // An unquoted number where a quantity with unit belongs is a type error of the file.
    let text = edit(SWITCH, "initial = \"50 µM\"", "initial = 10");
    let (_s, p, r) = check_text("bare-number", &text, &[]);
    assert_invalid(&r);
    assert_contains(
        &r.stderr,
        &[&format!("error: {}:{}:", p.display(), loc(&text, "initial = 10").0)],
    );
}

#[test]
fn a_power_given_for_a_wavelength() {
    let text = edit(SWITCH, "wavelength = \"365 nm\"", "wavelength = \"20 mW\"");
    let (_s, p, r) = check_text("wrong-unit", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"20 mW\"")),
        "light \"UV LED\".wavelength",
    )
    .says(&["\"20 mW\" is not a wavelength", "\"mW\" has the wrong dimension"])
    .helps(&["expected a number with nm", "e.g. \"365 nm\""]);
}

#[test]
fn an_unknown_unit_symbol_is_named() {
    let text = edit(SWITCH, "power = \"20 mW\"", "power = \"20 mWatt\"");
    let (_s, p, r) = check_text("unknown-unit", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"20 mWatt\"")),
        "light \"UV LED\".power",
    )
    .says(&["mWatt"])
    .helps(&["expected a number with W, mW"]);
}

#[test]
fn a_barrier_in_kcal_without_per_mol_is_rejected() {
    // README "Units accepted": energies are kJ/mol, kcal/mol, J/mol, eV (per molecule), cm-1.
    let text = edit(SWITCH, "{ barrier = \"23.5 kcal/mol\" }", "{ barrier = \"23.5 kcal\" }");
    let (_s, p, r) = check_text("kcal", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"23.5 kcal\"")),
        "thermal \"Z-azo -> E-azo\".rate.barrier",
    )
    .says(&["\"23.5 kcal\""])
    .helps(&["kcal/mol"]);
}

#[test]
fn a_negative_initial_concentration() {
    let text = edit(SWITCH, "initial = \"50 µM\"", "initial = \"-1 mM\"");
    let (_s, p, r) = check_text("negative", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"-1 mM\"")),
        "species \"E-azo\".initial",
    )
    .says(&["\"-1 mM\" is negative"]);
}

#[test]
fn a_negative_initial_concentration_says_what_is_accepted() {
    let text = edit(SWITCH, "initial = \"50 µM\"", "initial = \"-1 mM\"");
    let (_s, p, r) = check_text("negative-help", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"-1 mM\"")),
        "species \"E-azo\".initial",
    )
    .says(&["\"-1 mM\" is negative"])
    .helps(&["M"]);
}

#[test]
fn a_zero_volume() {
    let text = edit(SWITCH, "volume = \"3 mL\"", "volume = \"0 mL\"");
    let (_s, p, r) = check_text("zero-volume", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"0 mL\"")),
        "conditions.volume",
    )
    .says(&["\"0 mL\" must be positive"])
    .helps(&["expected a number with L, mL", "e.g. \"3 mL\""]);
}

#[test]
fn a_temperature_below_absolute_zero() {
    let text = edit(SWITCH, "temperature = \"298.15 K\"", "temperature = \"-300 °C\"");
    let (_s, p, r) = check_text("cold", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"-300 °C\"")),
        "conditions.temperature",
    )
    .says(&["\"-300 °C\" must be positive"])
    .helps(&["K or °C"]);
}

#[test]
fn a_zero_rate_constant() {
    let text = edit(
        SWITCH,
        "rate = { barrier = \"23.5 kcal/mol\" }",
        "rate = { k = \"0 /s\" }",
    );
    let (_s, p, r) = check_text("zero-k", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"0 /s\"")),
        "thermal \"Z-azo -> E-azo\".rate.k",
    )
    .says(&["\"0 /s\" must be positive"])
    .helps(&["/s"]);
}

#[test]
fn an_overflowing_number_is_not_finite() {
    let text = edit(SWITCH, "wavelength = \"365 nm\"", "wavelength = \"1e400 nm\"");
    let (_s, p, r) = check_text("overflow", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"1e400 nm\"")),
        "light \"UV LED\".wavelength",
    )
    .says(&["\"1e400 nm\" is not a finite number"])
    .helps(&["expected a number with nm"]);
}

#[test]
fn inf_and_nan_in_quantities_are_rejected() {
    let text = edit(SWITCH, "wavelength = \"365 nm\"", "wavelength = \"inf nm\"");
    let (_s, p, r) = check_text("inf", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"inf nm\"")),
        "light \"UV LED\".wavelength",
    )
    .says(&["\"inf nm\""])
    .helps(&["expected a number with nm"]);

    let text = edit(SWITCH, "power = \"20 mW\"", "power = \"nan mW\"");
    let (_s, p, r) = check_text("nan", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"nan mW\"")),
        "light \"UV LED\".power",
    )
    .says(&["\"nan mW\""])
    .helps(&["expected a number with W, mW"]);
}

#[test]
fn inf_and_nan_in_quantities_are_called_non_finite() {
    for (from, to, field) in [
        (
            "wavelength = \"365 nm\"",
            "wavelength = \"inf nm\"",
            "light \"UV LED\".wavelength",
        ),
        ("power = \"20 mW\"", "power = \"nan mW\"", "light \"UV LED\".power"),
    ] {
        let text = edit(SWITCH, from, to);
        let (_s, p, r) = check_text("inf-wording", &text, &[]);
        assert_invalid(&r);
        let value = &to[to.find('"').unwrap()..];
        diag(&r.stderr, "error", &p, Some(loc(&text, value)), field).says(&["finite"]);
    }
}

#[test]
fn toml_nan_and_inf_numbers_are_rejected() {
    // TOML itself has nan and inf floats (TOML v1.0.0 specification, "Float"); they are no
    // quantum yield and no fraction.
    let text = edit(SWITCH, "quantum_yield = 0.12", "quantum_yield = nan");
    let (_s, p, r) = check_text("toml-nan", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "nan")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    )
    .says(&["NaN"]);

    let text = edit(
        RING,
        "{ to = \"open\", fraction = 0.4 }",
        "{ to = \"open\", fraction = inf }",
    );
    let (_s, p, r) = check_text("toml-inf", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "inf }")),
        "transient \"CI\".channels[0].fraction",
    )
    .says(&["inf is outside [0, 1]"])
    .helps(&["a fraction lies in [0, 1], or \"rest\""]);
}

// ---------------------------------------------------------------------------------------------
// Yields and branching
// ---------------------------------------------------------------------------------------------

#[test]
fn a_fraction_outside_zero_to_one() {
    let text = edit(
        RING,
        "{ to = \"open\", fraction = 0.4 }",
        "{ to = \"open\", fraction = 1.5 }",
    );
    let (_s, p, r) = check_text("fraction", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "1.5")),
        "transient \"CI\".channels[0].fraction",
    )
    .says(&["1.5 is outside [0, 1]"])
    .helps(&["a fraction lies in [0, 1], or \"rest\""]);

    let text = edit(
        RING,
        "{ to = \"open\", fraction = 0.4 }",
        "{ to = \"open\", fraction = -0.2 }",
    );
    let (_s, p, r) = check_text("fraction-negative", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "-0.2")),
        "transient \"CI\".channels[0].fraction",
    )
    .says(&["-0.2 is outside [0, 1]"]);
}

#[test]
fn a_quantum_yield_above_one() {
    // A quantum yield of one photochemical step is at most 1 (common practice; chains are
    // written as thermal steps).
    let text = edit(SWITCH, "quantum_yield = 0.12", "quantum_yield = 1.2");
    let (_s, p, r) = check_text("qy", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "1.2")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    )
    .says(&["1.2 is above 1"])
    .helps(&["a quantum yield lies in [0, 1]"]);
}

#[test]
fn a_quantum_yield_table_above_one_somewhere() {
    let text = edit(
        SWITCH,
        "quantum_yield = 0.12",
        "quantum_yield = { wavelength_unit = \"nm\", points = [[300, 0.2], [400, 1.05]] }",
    );
    let (_s, p, r) = check_text("qy-table", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ wavelength_unit")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    )
    .says(&["1.05 is above 1"])
    .helps(&["[0, 1]"]);
}

#[test]
fn quantum_yields_of_one_absorber_sum_above_one() {
    let text = format!(
        "{SWITCH}\n[[species]]\nname = \"photoproduct\"\n\n[[photo]]\nequation = \"E-azo -> photoproduct\"\nquantum_yield = 0.95\n"
    );
    let (_s, p, r) = check_text("qy-sum", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"E-azo -> Z-azo\"")),
        "photo steps of \"E-azo\"",
    )
    .says(&["sum to 1.07 at 365 nm, above 1"])
    .helps(&["sum to at most 1"]);
}

#[test]
fn channel_fractions_summing_above_one() {
    let text = edit(
        RING,
        "{ to = \"closed\", fraction = 0.6 }",
        "{ to = \"closed\", fraction = 0.7 }",
    );
    let (_s, p, r) = check_text("sum-above", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"CI\"")),
        "transient \"CI\".channels",
    )
    .says(&["the fractions sum to 1.1, above 1"])
    .helps(&["sum to at most 1"]);
}

#[test]
fn channel_fractions_below_one_with_no_rest() {
    let text = edit(
        RING,
        "{ to = \"closed\", fraction = 0.6 }",
        "{ to = \"closed\", fraction = 0.5 }",
    );
    let (_s, p, r) = check_text("sum-below", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"CI\"")),
        "transient \"CI\".channels",
    )
    .says(&["the fractions sum to 0.9 and no channel takes the rest"])
    .helps(&["fraction = \"rest\"", "sum to 1"]);
}

#[test]
fn two_channels_taking_the_rest() {
    let text = edit(
        RING,
        "{ to = \"closed\", fraction = 0.6 }",
        "{ to = \"closed\", fraction = \"rest\" }",
    );
    let text = edit(
        &text,
        "{ to = \"open\", fraction = 0.4 }",
        "{ to = \"open\", fraction = \"rest\" }",
    );
    let (_s, p, r) = check_text("two-rests", &text, &[]);
    assert_invalid(&r);
    let second = loc_last(&text, "{ to = \"closed\", fraction = \"rest\" }");
    diag(&r.stderr, "error", &p, Some(second), "transient \"CI\".channels")
        .says(&["more than one channel takes the rest"])
        .helps(&["only one"]);
}

#[test]
fn transients_that_only_lead_to_each_other() {
    // S1 goes to CI, CI only back to S1: the molecule never reaches a species again.
    let text = edit(
        RING,
        "channels = [{ to = \"open\", fraction = 0.4 }, { to = \"closed\", fraction = 0.6 }]",
        "channels = [{ to = \"S1\", fraction = 1 }]",
    );
    let text = edit(
        &text,
        "channels = [{ to = \"CI\", fraction = 0.9 }, { to = \"closed\", fraction = \"rest\" }]",
        "channels = [{ to = \"CI\", fraction = 1 }]",
    );
    let text = edit(&text, "[[species]]\nname = \"open\"\nformula = \"C10H8O\"\n", "");
    let (_s, p, r) = check_text("no-way-out", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"S1\"")),
        "transient \"S1\"",
    )
    .says(&["no way out to a species", "\"S1\", \"CI\" only lead to each other"])
    .helps(&["a channel to a ground-state species"]);
}

#[test]
fn a_transient_with_no_channels() {
    let text = edit(
        RING,
        "channels = [{ to = \"open\", fraction = 0.4 }, { to = \"closed\", fraction = 0.6 }]",
        "channels = []",
    );
    let (_s, p, r) = check_text("no-channels", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"CI\"")),
        "transient \"CI\".channels",
    )
    .says(&["no channels, so no way out"])
    .helps(&["fraction = \"rest\""]);
}

// ---------------------------------------------------------------------------------------------
// Warnings: the network is valid, the user should look
// ---------------------------------------------------------------------------------------------

/// A valid run with exactly `n` warnings.
#[track_caller]
fn assert_valid_with_warnings(r: &Run, p: &Path, n: usize) {
    r.expect_code(0);
    let plural = if n == 1 { "" } else { "s" };
    assert_contains(&r.stdout, &[&format!("valid: {} ({n} warning{plural})", p.display())]);
    assert_eq!(r.stderr.matches("warning: ").count(), n, "{}", r.stderr);
}

#[test]
fn an_absorber_with_no_epsilon_warns() {
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }\n",
        "",
    );
    let (_s, p, r) = check_text("no-epsilon", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(table_of(&text, "name = \"E-azo\"")),
        "species \"E-azo\".epsilon",
    )
    .says(&[
        "absorbs in a photochemical step but has no molar absorption coefficient",
        "takes no light",
    ])
    .helps(&["epsilon over the light's wavelengths", "points = [["]);
}

#[test]
fn epsilon_zero_at_the_light_wavelength_warns() {
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[250, 9000], [300, 0]] }",
    );
    let (_s, p, r) = check_text("epsilon-zero", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(table_of(&text, "name = \"E-azo\"")),
        "species \"E-azo\".epsilon",
    )
    .says(&["is zero at every wavelength of the light", "takes no light"]);
}

#[test]
fn a_species_nothing_produces_or_consumes_warns() {
    let text = format!("{SWITCH}\n[[species]]\nname = \"acetonitrile\"\ninitial = \"19 M\"\n");
    let (_s, p, r) = check_text("unused", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(table_of(&text, "name = \"acetonitrile\"")),
        "species \"acetonitrile\"",
    )
    .says(&["nothing produces or consumes it"]);
}

#[test]
fn an_unused_species_that_absorbs_is_called_an_inner_filter() {
    let text = format!(
        "{SWITCH}\n[[species]]\nname = \"dye\"\ninitial = \"1 µM\"\nepsilon = {{ at = \"365 nm\", value = \"1000 L/(mol cm)\" }}\n"
    );
    let (_s, p, r) = check_text("inner-filter", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(table_of(&text, "name = \"dye\"")),
        "species \"dye\"",
    )
    .says(&["nothing produces or consumes it", "inner filter"]);
}

// One ε measured at 330 nm says nothing about the absorber at the 365 nm of the LED line: an
// error at the ε itself naming the light, with the two ways out (common practice: ε changes
// across a band, so a value holds at the wavelength it was measured at).
#[test]
fn a_single_wavelength_epsilon_away_from_a_line_is_an_error() {
    let text = edit(SWITCH, "at = \"365 nm\", value", "at = \"330 nm\", value");
    let (_s, p, r) = check_text("epsilon-far", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ at = \"330 nm\"")),
        "species \"E-azo\".epsilon",
    )
    .says(&["one value given at 330 nm", "the light \"UV LED\" is a line at 365 nm"])
    .helps(&[
        "as a table",
        "from = \"320 nm\", to = \"340 nm\"",
        "value = \"21000 L/(mol cm)\"",
    ]);
}

#[test]
fn a_transient_nothing_reaches_warns() {
    let text = format!(
        "{RING}\n[[transient]]\nname = \"T1\"\nkind = \"excited\"\nchannels = [{{ to = \"closed\", fraction = 1 }}]\n"
    );
    let (_s, p, r) = check_text("unreached", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(table_of(&text, "name = \"T1\"")),
        "transient \"T1\"",
    )
    .says(&["no photochemical step or channel leads to it"]);
}

// ---------------------------------------------------------------------------------------------
// Balances (formulas given)
// ---------------------------------------------------------------------------------------------

#[test]
fn element_imbalance_shows_the_difference() {
    // An oxygen too many on E: the photo step loses it, the thermal step gains it.
    let text = edit(SWITCH, "formula = \"C12H10N2\"", "formula = \"C12H10N2O\"");
    let (_s, p, r) = check_text("elements", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"E-azo -> Z-azo\"")),
        "photo \"E-azo -> Z-azo (hν)\"",
    )
    .says(&["E-azo -> Z-azo", "is not balanced", "products − absorber = −1 O"])
    .helps(&["keep the absorber's atoms"]);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"Z-azo -> E-azo\"")),
        "thermal \"Z-azo -> E-azo\"",
    )
    .says(&["Z-azo -> E-azo is not balanced", "products − reactants = +1 O"])
    .helps(&["formulas"]);
    assert_contains(&r.stderr, &["2 errors"]);
}

#[test]
fn element_imbalance_is_followed_through_transients() {
    let text = edit(
        RING,
        "name = \"open\"\nformula = \"C10H8O\"",
        "name = \"open\"\nformula = \"C10H10O\"",
    );
    let (_s, p, r) = check_text("elements-via", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "absorber = \"closed\"")),
        "photo \"closed + hν -> S1\"",
    )
    .says(&["closed -> open (via CI) is not balanced", "+2 H"]);
}

#[test]
fn charge_imbalance() {
    // A reduction written without its electron donor.
    let text = r#"# An invented iron reduction: every number is made up.
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[species]]
name = "Fe3+"
initial = "1 mM"
formula = "Fe^3+"

[[species]]
name = "Fe2+"
formula = "Fe^2+"

[[thermal]]
equation = "Fe3+ -> Fe2+"
rate = { k = "1e-3 /s" }
"#;
    let (_s, p, r) = check_text("charge", text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(text, "equation = \"Fe3+ -> Fe2+\"")),
        "thermal \"Fe3+ -> Fe2+\"",
    )
    .says(&["is not balanced", "−1 charge"]);
    assert!(!r.stderr.contains(" Fe,"), "iron itself is balanced:\n{}", r.stderr);
}

#[test]
fn a_formula_that_cannot_be_read() {
    let text = edit(SWITCH, "formula = \"C12H10N2\"", "formula = \"C12H10Xx2\"");
    let (_s, p, r) = check_text("bad-formula", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"C12H10Xx2\"")),
        "species \"E-azo\".formula",
    )
    .says(&["\"Xx\"", "not an element"])
    .helps(&["C6H12O6"]);
}

// ---------------------------------------------------------------------------------------------
// Missing pieces
// ---------------------------------------------------------------------------------------------

#[test]
fn missing_conditions_table() {
    let text = edit(
        SWITCH,
        "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\n",
        "",
    );
    let (_s, p, r) = check_text("no-conditions", &text, &[]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, Some((1, 1)), "conditions")
        .says(&["the [conditions] table is missing"])
        .helps(&["add [conditions]", "temperature = \"298.15 K\""]);
}

#[test]
fn a_missing_condition_names_the_key() {
    let text = edit(SWITCH, "path_length = \"1 cm\"\n", "");
    let (_s, p, r) = check_text("no-path", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "volume = ")),
        "conditions.path_length",
    )
    .says(&["is missing"])
    .helps(&["e.g. \"1 cm\""]);
}

#[test]
fn sunlight_without_irradiated_area() {
    let text = edit(
        SWITCH,
        "name = \"UV LED\"\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"20 mW\"",
        "name = \"noon sun\"\nkind = \"sun\"",
    );
    let (_s, p, r) = check_text("sun", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"noon sun\"")),
        "conditions.irradiated_area",
    )
    .says(&["is needed for the sunlight \"noon sun\""])
    .helps(&["irradiated_area = \"100 cm2\""]);
}

#[test]
fn sunlight_with_irradiated_area_is_valid() {
    let text = edit(
        SWITCH,
        "name = \"UV LED\"\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"20 mW\"",
        "name = \"noon sun\"\nkind = \"sun\"",
    );
    let text = edit(
        &text,
        "path_length = \"1 cm\"",
        "path_length = \"1 cm\"\nirradiated_area = \"10 cm2\"",
    );
    let text = edit(
        &text,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[300, 9000], [400, 20000], [500, 0]] }",
    );
    let (_s, p, r) = check_text("sun-ok", &text, &[]);
    r.expect_code(0);
    assert_contains(&r.stdout, &[&format!("valid: {}", p.display())]);
}

#[test]
fn a_light_without_power_or_photon_flux() {
    let text = edit(SWITCH, "power = \"20 mW\"\n", "");
    let (_s, p, r) = check_text("no-power", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"UV LED\"")),
        "light \"UV LED\"",
    )
    .says(&["needs power or photon_flux"])
    .helps(&["power = \"50 mW\""]);
}

#[test]
fn a_thermal_step_without_a_rate() {
    let text = edit(SWITCH, "rate = { barrier = \"23.5 kcal/mol\" }\n", "");
    let (_s, p, r) = check_text("no-rate", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"Z-azo -> E-azo\"")),
        "thermal \"Z-azo -> E-azo\".rate",
    )
    .says(&["is missing"])
    .helps(&["rate = { k = \"0.04 /s\" }"]);
}

#[test]
fn a_bimolecular_step_without_a_rate_gets_a_second_order_example() {
    let text = edit(
        SWITCH,
        "equation = \"Z-azo -> E-azo\"\nrate = { barrier = \"23.5 kcal/mol\" }",
        "equation = \"2 Z-azo -> 2 E-azo\"",
    );
    let (_s, p, r) = check_text("no-rate-2", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"2 Z-azo")),
        "thermal \"2 Z-azo -> 2 E-azo\".rate",
    )
    .says(&["is missing"])
    .helps(&["/(M s)"]);
}

#[test]
fn a_reversible_step_without_its_reverse_rate() {
    let text = edit(
        SWITCH,
        "equation = \"Z-azo -> E-azo\"",
        "equation = \"Z-azo <=> E-azo\"",
    );
    let (_s, p, r) = check_text("no-reverse", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "equation = \"Z-azo <=> E-azo\"")),
        "thermal \"Z-azo <=> E-azo\".reverse",
    )
    .says(&["is missing for a reversible (<=>) equation"])
    .helps(&["reverse = { k =", "->"]);
}

#[test]
fn a_reverse_rate_on_a_one_way_step() {
    let text = edit(
        SWITCH,
        "rate = { barrier = \"23.5 kcal/mol\" }",
        "rate = { barrier = \"23.5 kcal/mol\" }\nreverse = { k = \"1e-6 /s\" }",
    );
    let (_s, p, r) = check_text("reverse-one-way", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ k = \"1e-6 /s\" }")),
        "thermal \"Z-azo -> E-azo\".reverse",
    )
    .says(&["one-way"])
    .helps(&["<=>"]);
}

#[test]
fn a_channel_without_fraction_or_rate() {
    let text = edit(RING, "{ to = \"open\", fraction = 0.4 }", "{ to = \"open\" }");
    let (_s, p, r) = check_text("no-share", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ to = \"open\" }")),
        "transient \"CI\".channels[0]",
    )
    .says(&["needs a fraction or a rate"])
    .helps(&["fraction = \"rest\"", "rate = { k = \"1e9 /s\" }"]);
}

#[test]
fn an_unknown_transient_in_excites() {
    let text = edit(RING, "excites = \"S1\"", "excites = \"s1\"");
    let (_s, p, r) = check_text("unknown-excites", &text, &[]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, Some(loc(&text, "\"s1\"")), "photo[0].excites")
        .says(&["unknown transient \"s1\""])
        .helps(&["did you mean \"S1\"?"]);
}

#[test]
fn a_one_character_slip_in_a_short_name_is_suggested() {
    let text = edit(RING, "excites = \"S1\"", "excites = \"S_1\"");
    let (_s, p, r) = check_text("unknown-excites-short", &text, &[]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, Some(loc(&text, "\"S_1\"")), "photo[0].excites")
        .says(&["unknown transient \"S_1\""])
        .helps(&["did you mean \"S1\"?"]);
}

// ---------------------------------------------------------------------------------------------
// CSV files named by `file`
// ---------------------------------------------------------------------------------------------

#[test]
fn a_bad_csv_row_names_the_csv_and_its_line() {
    let s = Scratch::new("csv");
    let csv = s.write(
        "spectra/E-azo.csv",
        "# invented spectrum\nwavelength (nm), epsilon (L/(mol cm))\n330, 18000\n365, abc\n",
    );
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { file = \"spectra/E-azo.csv\" }",
    );
    let p = s.write("csv.toml", &text);
    let r = check(&p, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ file")),
        "species \"E-azo\".epsilon.file",
    )
    .says(&[
        &format!("{}:4:", csv.display()),
        "the second column holds \"abc\"",
        "not a finite number",
    ])
    .helps(&["wavelength (nm), epsilon (L/(mol cm))"]);
}

#[test]
fn a_csv_header_without_units() {
    let s = Scratch::new("csv-header");
    let csv = s.write(
        "E-azo.csv",
        "wavelength, epsilon (L/(mol cm))\n330, 18000\n365, 21000\n",
    );
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { file = \"E-azo.csv\" }",
    );
    let p = s.write("csv-header.toml", &text);
    let r = check(&p, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ file")),
        "species \"E-azo\".epsilon.file",
    )
    .says(&[&csv.display().to_string(), "the first column's header names no unit"])
    .helps(&["wavelength (nm)"]);
}

#[test]
fn a_missing_csv_names_its_path() {
    let s = Scratch::new("csv-missing");
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { file = \"spectra/none.csv\" }",
    );
    let p = s.write("csv-missing.toml", &text);
    let r = check(&p, &[]);
    // Reported at the `file` key, as a problem of the network (src/file/mod.rs).
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "{ file")),
        "species \"E-azo\".epsilon.file",
    )
    .says(&[&s.dir.join("spectra/none.csv").display().to_string(), "cannot read"]);
}

#[test]
fn a_good_csv_is_read() {
    let s = Scratch::new("csv-good");
    s.write(
        "E-azo.csv",
        "# invented spectrum\nwavelength (nm), epsilon (L/(mol cm))\n330, 18000\n365, 21000\n400, 5000\n",
    );
    let text = edit(
        SWITCH,
        "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }",
        "epsilon = { file = \"E-azo.csv\" }",
    );
    let p = s.write("csv-good.toml", &text);
    check(&p, &[]).expect_code(0);
}

// ---------------------------------------------------------------------------------------------
// --set overrides
// ---------------------------------------------------------------------------------------------

#[test]
fn set_with_an_unknown_key_is_a_usage_error() {
    let (_s, _p, r) = check_text("set-unknown", SWITCH, &["--set", "conditions.temprature=310 K"]);
    r.expect_code(2);
    assert_contains(
        &r.stderr,
        &[
            "--set conditions.temprature",
            "no such condition",
            "did you mean conditions.temperature?",
            "keys that can be set",
        ],
    );
    assert!(!r.stderr.contains("invalid: see the problems above"), "{}", r.stderr);
}

#[test]
fn set_with_an_unknown_species_is_a_usage_error() {
    let (_s, _p, r) = check_text("set-unknown-species", SWITCH, &["--set", "species.E_azo.initial=1 mM"]);
    r.expect_code(2);
    assert_contains(
        &r.stderr,
        &["--set species.E_azo.initial", "\"E_azo\"", "species.E-azo.initial"],
    );
}

#[test]
fn set_without_an_equals_sign_is_a_usage_error() {
    let (_s, _p, r) = check_text("set-no-equals", SWITCH, &["--set", "conditions.temperature"]);
    r.expect_code(2);
    assert_contains(&r.stderr, &["expected KEY=VALUE"]);
}

#[test]
fn set_temperature_overrides_the_file() {
    let (_s, p, r) = check_text(
        "set-temperature",
        SWITCH,
        &["--set", "conditions.temperature=\"310 K\""],
    );
    r.expect_code(0);
    assert_contains(&r.stdout, &["310 K", &format!("valid: {}", p.display())]);
    assert!(
        !r.stdout.contains("298.15 K"),
        "the file's temperature is still shown:\n{}",
        r.stdout
    );
}

#[test]
fn set_temperature_in_celsius() {
    // 37 °C = 310.15 K (the kelvin is defined with 0 °C = 273.15 K, SI Brochure 9th ed.).
    let (_s, _p, r) = check_text("set-celsius", SWITCH, &["--set", "conditions.temperature=37 °C"]);
    r.expect_code(0);
    assert_contains(&r.stdout, &["310.15 K"]);
}

#[test]
fn set_a_light_whose_name_has_a_space() {
    let (_s, _p, r) = check_text("set-light", SWITCH, &["--set", "light.UV LED.power=40 mW"]);
    r.expect_code(0);
    assert_contains(&r.stdout, &["40 mW"]);
    assert!(!r.stdout.contains("20 mW"), "{}", r.stdout);
}

#[test]
fn a_bad_set_value_is_located_on_the_command_line() {
    let (_s, p, r) = check_text("set-bad", SWITCH, &["--set", "conditions.temperature=hot"]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, None, "conditions.temperature")
        .says(&["\"hot\"", "(value given with --set)"])
        .helps(&["K or °C"]);

    let (_s, p, r) = check_text("set-negative", SWITCH, &["--set", "species.E-azo.initial=-2 mM"]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, None, "species.E-azo.initial")
        .says(&["\"-2 mM\" is negative", "(value given with --set)"]);

    let (_s, p, r) = check_text("set-zero", SWITCH, &["--set", "conditions.volume=0 mL"]);
    assert_invalid(&r);
    diag(&r.stderr, "error", &p, None, "conditions.volume")
        .says(&["\"0 mL\" must be positive", "(value given with --set)"])
        .helps(&["mL"]);
}

// ---------------------------------------------------------------------------------------------
// The command line itself
// ---------------------------------------------------------------------------------------------

#[test]
fn check_without_a_file_is_a_usage_error() {
    let r = photoledger(&["check"]);
    r.expect_code(2);
    assert_contains(&r.stderr, &["<FILE>", "Usage"]);
}

#[test]
fn an_unknown_option_is_a_usage_error() {
    let (_s, _p, r) = check_text("unknown-option", SWITCH, &["--bogus"]);
    r.expect_code(2);
    assert_contains(&r.stderr, &["--bogus"]);
}

#[test]
fn an_unknown_command_is_a_usage_error() {
    let r = photoledger(&["chek", "x.toml"]);
    r.expect_code(2);
    assert_contains(&r.stderr, &["chek"]);
}

#[test]
fn help_exits_zero() {
    let r = photoledger(&["check", "--help"]);
    r.expect_code(0);
    assert_contains(&r.stdout, &["--set"]);
}

#[test]
fn a_file_that_does_not_exist_is_an_io_error() {
    let s = Scratch::new("missing");
    let p = s.dir.join("nowhere.toml");
    let r = check(&p, &[]);
    r.expect_code(3);
    assert_contains(&r.stderr, &[&p.display().to_string()]);
}

#[test]
fn a_folder_given_as_the_file_is_an_io_error() {
    let s = Scratch::new("folder");
    let r = check(&s.dir, &[]);
    r.expect_code(3);
    assert_contains(&r.stderr, &[&s.dir.display().to_string()]);
}

#[test]
fn every_problem_is_listed_at_once() {
    let text = edit(SWITCH, "initial = \"50 µM\"", "initial = \"10\"");
    let text = edit(&text, "quantum_yield = 0.12", "quantum_yield = 1.2");
    let text = edit(&text, "{ barrier = \"23.5 kcal/mol\" }", "{ barrier = \"23.5 mW\" }");
    let (_s, p, r) = check_text("many", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"10\"")),
        "species \"E-azo\".initial",
    );
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "1.2")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    );
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"23.5 mW\"")),
        "thermal \"Z-azo -> E-azo\".rate.barrier",
    );
    assert_contains(&r.stderr, &["3 errors"]);
}

#[test]
fn a_conditions_error_does_not_hide_the_others() {
    let text = edit(SWITCH, "volume = \"3 mL\"", "volume = \"0 mL\"");
    let text = edit(&text, "quantum_yield = 0.12", "quantum_yield = 1.2");
    let (_s, p, r) = check_text("many-conditions", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"0 mL\"")),
        "conditions.volume",
    );
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "1.2")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    );
    assert_contains(&r.stderr, &["2 errors"]);
}

// ---------------------------------------------------------------------------------------------
// Light windows, lit geometry, percentages
// ---------------------------------------------------------------------------------------------

/// `check`'s stdout with the scratch path taken out, so two runs can be compared.
fn summary_of(tag: &str, text: &str, extra: &[&str]) -> String {
    let (_s, p, r) = check_text(tag, text, extra);
    r.expect_code(0);
    r.stdout.replace(&p.display().to_string(), "NET").replace(tag, "NAME")
}

// from/to is a filter that cuts: a 3 W band at 390 nm (FWHM 14 nm) behind a long-pass filter at
// its centre keeps half its power, as a Gaussian is symmetric about its centre (common practice).
#[test]
fn a_window_cuts_a_band_and_check_says_so() {
    let text = edit(
        SWITCH,
        "kind = \"line\"\nwavelength = \"365 nm\"\npower = \"20 mW\"",
        "kind = \"band\"\ncentre = \"390 nm\"\nfwhm = \"14 nm\"\npower = \"3 W\"\nfrom = \"390 nm\"",
    );
    // under a band, a single ε needs the window where it holds
    let text = edit(
        &text,
        "value = \"21000 L/(mol cm)\" }",
        "value = \"21000 L/(mol cm)\", from = \"340 nm\", to = \"440 nm\" }",
    );
    let (_s, _p, r) = check_text("band-window", &text, &[]);
    r.expect_code(0);
    assert_contains(
        &r.stdout,
        &["3 W emitted, 1.5 W", "in 390–418 nm", "from/to cuts the emitted light"],
    );
    // without the window nothing is cut and nothing is said about it
    let (_s, _p, r) = check_text("band-open", &edit(&text, "from = \"390 nm\"\n", ""), &[]);
    r.expect_code(0);
    assert_contains(&r.stdout, &["3 W = "]);
    assert!(!r.stdout.contains("emitted"), "{}", r.stdout);
}

#[test]
fn a_line_outside_its_window_is_an_error() {
    let text = edit(SWITCH, "power = \"20 mW\"", "power = \"20 mW\"\nfrom = \"400 nm\"");
    let (_s, p, r) = check_text("line-window", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&text, "name = \"UV LED\"")),
        "light \"UV LED\".from",
    )
    .says(&["\"400 nm\" leaves no photons", "emits at 365 nm"])
    .helps(&["a window that includes 365 nm", "or drop from/to"]);
    // and a band wholly outside its window, the same way (here beyond `to`)
    let band = edit(
        SWITCH,
        "kind = \"line\"\nwavelength = \"365 nm\"\npower = \"20 mW\"",
        "kind = \"band\"\ncentre = \"450 nm\"\nfwhm = \"10 nm\"\npower = \"20 mW\"\nto = \"400 nm\"",
    );
    let (_s, p, r) = check_text("band-window-out", &band, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(table_of(&band, "name = \"UV LED\"")),
        "light \"UV LED\".to",
    )
    .says(&["\"400 nm\" leaves no photons", "emits over 430 nm–470 nm"])
    .helps(&["overlaps 430 nm–470 nm"]);
}

// The lit column (area × path length) cannot exceed the volume: 4 cm² × 1 cm = 4 mL > 3 mL.
#[test]
fn a_lit_column_larger_than_the_volume_warns() {
    let with_area = |a: &str| {
        edit(
            SWITCH,
            "path_length = \"1 cm\"",
            &format!("path_length = \"1 cm\"\nirradiated_area = \"{a}\""),
        )
    };
    let text = with_area("4 cm2");
    let (_s, p, r) = check_text("lit-column", &text, &[]);
    assert_valid_with_warnings(&r, &p, 1);
    diag(
        &r.stderr,
        "warning",
        &p,
        Some(loc(&text, "\"4 cm2\"")),
        "conditions.irradiated_area",
    )
    .says(&[
        "4 cm2 × 1 cm = 4 mL",
        "conditions.volume = 3 mL",
        "1.33×",
        "impossible geometry",
    ])
    .helps(&["make volume at least irradiated_area × path_length (4 mL)"]);
    // equal (within 1 %) and smaller columns are fine: a stirred vessel partly lit
    for a in ["3 cm2", "3.02 cm2", "1 cm2"] {
        let (_s, _p, r) = check_text("lit-column-ok", &with_area(a), &[]);
        r.expect_code(0);
        assert!(!r.stderr.contains("warning"), "{a}: {}", r.stderr);
    }
    // the reviewer's case: the pool's 0.25 m² × 3 cm = 7.5 L put into 1 L
    let pool = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/prebiotic-pool.toml");
    let r = check(&pool, &["--set", "conditions.volume=1 L"]);
    r.expect_code(0);
    assert_contains(
        &r.stderr,
        &["conditions.irradiated_area", "0.25 m2 × 3 cm = 7.5 L", "= 1 L (7.5×)"],
    );
    let r = check(&pool, &[]);
    r.expect_code(0);
    assert!(!r.stderr.contains("lit solution"), "{}", r.stderr);
}

// A percentage is accepted wherever a share is: 12 % = 0.12 (common practice).
#[test]
fn percentages_are_accepted_for_shares() {
    let qy = |v: &str| edit(SWITCH, "quantum_yield = 0.12", &format!("quantum_yield = {v}"));
    let percent = summary_of("qy-pc", &qy("\"12 %\""), &[]);
    assert_eq!(percent, summary_of("qy-num", &qy("0.12"), &[]));
    let small = summary_of("qy-small-pc", &qy("\"0.12 %\""), &[]);
    assert_eq!(small, summary_of("qy-small", &qy("0.0012"), &[]));
    assert_ne!(percent, small);
    // on the command line too
    assert_eq!(
        summary_of(
            "qy-set",
            &qy("0.5"),
            &["--set", "photo.E-azo -> Z-azo (hν).quantum_yield=12 %"]
        ),
        percent
    );
    // efficiency and channel fractions
    let ring = |eff: &str, f: &str| {
        let t = edit(
            RING,
            "excites = \"S1\"",
            &format!("excites = \"S1\"\nefficiency = {eff}"),
        );
        edit(
            &t,
            "{ to = \"open\", fraction = 0.4 }",
            &format!("{{ to = \"open\", fraction = {f} }}"),
        )
    };
    assert_eq!(
        summary_of("ring-pc", &ring("\"95 %\"", "\"40 %\""), &[]),
        summary_of("ring-num", &ring("0.95", "0.4"), &[])
    );
    // a misspelt percentage names the field and what is accepted
    let (_s, p, r) = check_text("qy-bad", &qy("\"12 percent\""), &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&qy("\"12 percent\""), "\"12 percent\"")),
        "photo \"E-azo -> Z-azo\".quantum_yield",
    )
    .says(&["\"12 percent\" is not a number or a percentage", "\"12 %\""]);
    let (_s, _p, r) = check_text("eff-bad", &ring("\"95 percent\"", "0.4"), &[]);
    assert_invalid(&r);
    assert_contains(
        &r.stderr,
        &["photo[0].efficiency", "not a number or a percentage", "\"30 %\""],
    );
    let (_s, _p, r) = check_text("qy-over", &qy("\"120 %\""), &[]);
    assert_invalid(&r);
    assert_contains(&r.stderr, &["photo \"E-azo -> Z-azo\".quantum_yield", "1.2 is above 1"]);
}

// A file with a misspelt key, a bare number where a unit belongs and a value without its unit
// is reported in one run, each problem at its own line: the reader goes on past the first
// (its line taken out, every other line where it was) and validation reads the rest.
#[test]
fn a_misspelt_key_a_bare_number_and_a_missing_unit_are_reported_together() {
    let text = edit(
        &edit(
            &edit(SWITCH, "volume = \"3 mL\"", "volumes = \"3 mL\""),
            "power = \"20 mW\"",
            "power = 20",
        ),
        "initial = \"50 µM\"",
        "initial = \"50\"",
    );
    let (_s, p, r) = check_text("three-at-once", &text, &[]);
    assert_invalid(&r);
    let at = |needle: &str| loc(&text, needle);
    let (vl, _) = at("volumes");
    let (pl, _) = at("power = 20");
    let (il, _) = at("initial = \"50\"");
    let f = p.display().to_string();
    assert_contains(
        &r.stderr,
        &[&format!(
            "{f}:{vl}:1: conditions.volumes: no key \"volumes\" here: did you mean volume?"
        )],
    );
    assert_contains(
        &r.stderr,
        &[
            &format!("{f}:{pl}:"),
            "light \"UV LED\".power: 20 is a number without a unit",
            "e.g. power = \"20 mW\"",
        ],
    );
    assert_contains(
        &r.stderr,
        &[&format!("{f}:{il}:"), "species \"E-azo\".initial: \"50\" has no unit"],
    );
    // What taking the two broken lines out leaves behind (no volume, no power) is not reported
    // again, and the problems come in the order of their lines.
    assert!(
        !r.stderr.contains("is missing") && !r.stderr.contains("needs power"),
        "{}",
        r.stderr
    );
    let lines: Vec<usize> = r
        .stderr
        .lines()
        .filter_map(|l| l.strip_prefix(&format!("error: {f}:")))
        .filter_map(|l| l.split(':').next()?.parse().ok())
        .collect();
    assert_eq!(lines, vec![vl, pl, il], "{}", r.stderr);
}

// A misspelt species in a step's equation does not hide that step's quantum yield above 1.
#[test]
fn a_misspelt_species_does_not_hide_a_quantum_yield_above_one_in_the_same_step() {
    let text = edit(
        &edit(
            SWITCH,
            "equation = \"E-azo -> Z-azo\"",
            "equation = \"E-azo -> Z-azzo\"",
        ),
        "quantum_yield = 0.12",
        "quantum_yield = 1.2",
    );
    let (_s, p, r) = check_text("species-and-qy", &text, &[]);
    assert_invalid(&r);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "\"E-azo -> Z-azzo\"")),
        "photo \"E-azo -> Z-azzo\".equation",
    )
    .says(&["unknown species \"Z-azzo\""]);
    diag(
        &r.stderr,
        "error",
        &p,
        Some(loc(&text, "1.2")),
        "photo \"E-azo -> Z-azzo\".quantum_yield",
    )
    .says(&["1.2 is above 1"]);
}
