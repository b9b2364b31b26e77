//! A single ε value against the light it is used under, lights switched off (dark runs), and
//! the daily light schedule of `simulate`.
//!
//! Every network here is invented; the numbers only have to be plausible. The tests run the real
//! binary where the user's path is the command line, and the library where a value is checked.

use photoledger::file::parse_text;
use photoledger::network::{Network, Overrides, build};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A fresh folder under the system temp dir, removed when dropped.
struct Scratch {
    dir: PathBuf,
}

impl Scratch {
    fn new(tag: &str) -> Self {
        static COUNTER: AtomicUsize = AtomicUsize::new(0);
        let n = COUNTER.fetch_add(1, Ordering::SeqCst);
        let dir = std::env::temp_dir().join(format!("photoledger-light-{}-{n}-{tag}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("create scratch folder");
        Scratch { dir }
    }

    fn write(&self, name: &str, text: &str) -> PathBuf {
        let p = self.dir.join(name);
        std::fs::write(&p, text).expect("write scratch file");
        p
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

struct Run {
    code: i32,
    stdout: String,
    stderr: String,
}

impl Run {
    #[track_caller]
    fn code(&self, code: i32) -> &Self {
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

/// Run `photoledger COMMAND FILE ARGS...` on `text` written to a scratch file.
fn run_on(s: &Scratch, text: &str, command: &str, args: &[&str]) -> (PathBuf, Run) {
    let p = s.write("net.toml", text);
    let f = p.to_str().expect("utf-8 path").to_string();
    let mut all = vec![command, f.as_str()];
    all.extend_from_slice(args);
    let r = photoledger(&all);
    (p, r)
}

#[track_caller]
fn edit(text: &str, from: &str, to: &str) -> String {
    assert!(text.contains(from), "test setup: {from:?} is not in the network");
    text.replacen(from, to, 1)
}

/// 1-based line and column of the first `needle` in `text`.
#[track_caller]
fn loc(text: &str, needle: &str) -> (usize, usize) {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle:?} not in the network"));
    let before = &text[..at];
    (
        before.matches('\n').count() + 1,
        before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1,
    )
}

#[track_caller]
fn assert_contains(hay: &str, parts: &[&str]) {
    for p in parts {
        assert!(hay.contains(p), "expected {p:?} in:\n{hay}");
    }
}

/// The error line for `field` at `at` in `file`, and the help line under it.
#[track_caller]
fn error_at(stderr: &str, file: &Path, at: (usize, usize), field: &str) -> (String, String) {
    let head = format!("error: {}:{}:{}: {field}: ", file.display(), at.0, at.1);
    let lines: Vec<&str> = stderr.lines().collect();
    let i = lines
        .iter()
        .position(|l| l.starts_with(&head))
        .unwrap_or_else(|| panic!("no line starting with {head:?} in:\n{stderr}"));
    let help = lines
        .get(i + 1)
        .and_then(|l| l.strip_prefix("  help: "))
        .unwrap_or("")
        .to_string();
    (lines[i][head.len()..].to_string(), help)
}

fn network(text: &str) -> Result<Network, String> {
    let l = parse_text(Path::new("test.toml"), text.to_string()).map_err(|e| format!("{e:?}"))?;
    build(&l, &Overrides::none()).map_err(|e| format!("{e}"))
}

/// The issue's pond: a 5 µM absorber 10 cm deep under the sun, its ε given at 310 nm only.
const POND: &str = r#"# Invented: a sunlit pond.
[conditions]
temperature = "25 °C"
irradiated_area = "1 m2"
path_length = "10 cm"
volume = "100 L"

[[light]]
name = "sun"
kind = "sun"

[[species]]
name = "A"
initial = "5 µM"
epsilon = { at = "310 nm", value = "8000 L/(mol cm)" }

[[species]]
name = "B"

[[photo]]
equation = "A -> B"
quantum_yield = 0.1
"#;

/// One LED line at 365 nm on a photoswitch with a thermal way back.
const SWITCH: &str = r#"# Invented: a photoswitch under one LED line.
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
name = "E"
initial = "50 µM"
epsilon = { at = "365 nm", value = "21000 L/(mol cm)" }

[[species]]
name = "Z"
initial = "0 M"

[[photo]]
equation = "E -> Z"
quantum_yield = 0.12

[[thermal]]
equation = "Z -> E"
rate = { k = "1e-4 /s" }
"#;

// ---------------------------------------------------------------------------------------------
// Item 1: a single ε value
// ---------------------------------------------------------------------------------------------

// A value measured at 310 nm says nothing about the absorber at 280 or 4000 nm (common
// practice: ε follows the absorption band). Under sunlight it is an error at the ε itself that
// names the light and the two fixes, and no command answers with it.
#[test]
fn a_single_epsilon_under_sunlight_is_an_error_naming_the_light_and_the_fix() {
    let s = Scratch::new("pond");
    let (p, r) = run_on(&s, POND, "check", &[]);
    r.code(1);
    let (msg, help) = error_at(&r.stderr, &p, loc(POND, "{ at = \"310 nm\""), "species \"A\".epsilon");
    assert_contains(
        &msg,
        &["one value given at 310 nm", "the light \"sun\" spans 280–4000 nm"],
    );
    assert_contains(
        &help,
        &[
            "as a table",
            "epsilon = { at = \"310 nm\", value = \"8000 L/(mol cm)\", from = \"300 nm\", to = \"320 nm\" }",
        ],
    );
    for (cmd, extra) in [
        ("plan", &["--target", "A < 50 %", "--out"][..]),
        ("simulate", &["--until", "30 d", "--out"][..]),
    ] {
        let out = s.dir.join(cmd);
        let mut args = extra.to_vec();
        args.push(out.to_str().unwrap());
        let (_, r) = run_on(&s, POND, cmd, &args);
        r.code(1);
        assert!(
            !r.stdout.contains("reached after") && !r.stdout.contains("final concentrations"),
            "{}",
            r.stdout
        );
    }
    // The fix the help gives is valid, and ε is then zero outside 300–320 nm.
    let fixed = edit(
        POND,
        "value = \"8000 L/(mol cm)\" }",
        "value = \"8000 L/(mol cm)\", from = \"300 nm\", to = \"320 nm\" }",
    );
    let (_, r) = run_on(&s, &fixed, "check", &[]);
    r.code(0);
    assert!(!r.stderr.contains("warning"), "{}", r.stderr);
}

// A line at the stated wavelength, or within 1 nm of it, may use the single value; 1.5 nm away
// it may not, and neither may a second line elsewhere even when it is switched off (the check is
// on where the light is, not on how bright it is).
#[test]
fn a_single_epsilon_holds_for_lines_within_one_nanometre() {
    let s = Scratch::new("lines");
    let near = edit(SWITCH, "wavelength = \"365 nm\"", "wavelength = \"365.9 nm\"");
    run_on(&s, &near, "check", &[]).1.code(0);
    let far = edit(SWITCH, "wavelength = \"365 nm\"", "wavelength = \"366.5 nm\"");
    let (p, r) = run_on(&s, &far, "check", &[]);
    r.code(1);
    let (msg, _) = error_at(&r.stderr, &p, loc(&far, "{ at = \"365 nm\""), "species \"E\".epsilon");
    assert_contains(&msg, &["\"UV LED\" is a line at 366.5 nm"]);
    // the same through --set: a line moved away from `at`
    let (_, r) = run_on(&s, SWITCH, "check", &["--set", "light.UV LED.wavelength=405 nm"]);
    r.code(1);
    assert_contains(&r.stderr, &["\"UV LED\" is a line at 405 nm"]);
    let two =
        format!("{SWITCH}\n[[light]]\nname = \"blue\"\nkind = \"line\"\nwavelength = \"450 nm\"\npower = \"0 mW\"\n");
    let (_, r) = run_on(&s, &two, "check", &[]);
    r.code(1);
    assert_contains(&r.stderr, &["\"blue\" is a line at 450 nm"]);
    // a band is broader than a line: it needs a window
    let band = edit(
        SWITCH,
        "kind = \"line\"\nwavelength = \"365 nm\"",
        "kind = \"band\"\ncentre = \"365 nm\"\nfwhm = \"12 nm\"",
    );
    let (_, r) = run_on(&s, &band, "check", &[]);
    r.code(1);
    assert_contains(&r.stderr, &["\"UV LED\" spans 341–389 nm"]);
}

// A window states where the value holds: the value inside (edges included), zero outside.
#[test]
fn a_window_on_a_single_epsilon_is_the_value_inside_and_zero_outside() {
    let band = edit(
        SWITCH,
        "kind = \"line\"\nwavelength = \"365 nm\"",
        "kind = \"band\"\ncentre = \"365 nm\"\nfwhm = \"12 nm\"",
    );
    let text = edit(
        &band,
        "value = \"21000 L/(mol cm)\" }",
        "value = \"21000 L/(mol cm)\", from = \"355 nm\", to = \"375 nm\" }",
    );
    let net = network(&text).unwrap();
    assert!(net.warnings.is_empty(), "{:?}", net.warnings);
    let eps = net.species[0].epsilon.as_ref().unwrap();
    // 21000 L/(mol cm) is 2.1e6 L/(mol m) inside
    for wl in [355.01e-9, 360e-9, 365e-9, 374.99e-9] {
        assert!((eps.at(wl) - 2.1e6).abs() < 1e-6, "{wl}: {}", eps.at(wl));
    }
    for wl in [354.9e-9, 375.1e-9, 341e-9, 389e-9] {
        assert_eq!(eps.at(wl), 0.0, "{wl}");
    }
    // `at` may be left out when the window is given
    let no_at = edit(&text, "at = \"365 nm\", ", "");
    assert_eq!(network(&no_at).unwrap().species[0].epsilon, net.species[0].epsilon);
    // a window the light misses: valid, but the absorber takes no light (a warning says so)
    let missed = edit(
        &text,
        "from = \"355 nm\", to = \"375 nm\"",
        "from = \"300 nm\", to = \"320 nm\"",
    );
    let missed = edit(&missed, "at = \"365 nm\", ", "at = \"310 nm\", ");
    let w = network(&missed).unwrap().warnings;
    assert!(
        w.iter()
            .any(|d| d.message.contains("is zero at every wavelength of the light")),
        "{w:?}"
    );
    // and `check` says it takes no light, in its text and its JSON alike
    let s = Scratch::new("missed");
    for (text, absorbing, absorbs) in [(&text, "(1 absorbing)", true), (&missed, "(0 absorbing)", false)] {
        let (_, run) = run_on(&s, text, "check", &[]);
        assert!(run.code(0).stdout.contains(absorbing), "{}", run.stdout);
        let (_, run) = run_on(&s, text, "check", &["--json"]);
        let v: serde_json::Value = serde_json::from_str(&run.code(0).stdout).unwrap();
        assert_eq!(v["species"][0]["absorbs"], absorbs, "{}", run.stdout);
    }
}

#[test]
fn a_broken_window_is_an_error_naming_the_field() {
    let s = Scratch::new("windows");
    let base = "value = \"21000 L/(mol cm)\" }";
    for (to, field, says) in [
        (
            "value = \"21000 L/(mol cm)\", from = \"355 nm\" }",
            "species \"E\".epsilon",
            "`from` and `to` go together",
        ),
        (
            "value = \"21000 L/(mol cm)\", from = \"375 nm\", to = \"355 nm\" }",
            "species \"E\".epsilon.from",
            "`from` must be shorter than `to`",
        ),
        (
            "value = \"21000 L/(mol cm)\", from = \"370 nm\", to = \"380 nm\" }",
            "species \"E\".epsilon.at",
            "365 nm lies outside the window 370–380 nm",
        ),
        (
            "value = \"21000 L/(mol cm)\", from = \"-1 nm\", to = \"380 nm\" }",
            "species \"E\".epsilon.from",
            "must be positive",
        ),
    ] {
        let text = edit(SWITCH, base, to);
        let (p, r) = run_on(&s, &text, "check", &[]);
        r.code(1);
        let (msg, _) = error_at(&r.stderr, &p, loc(&text, "{ at = \"365 nm\""), field);
        assert_contains(&msg, &[says]);
    }
    // value without at or a window
    let text = edit(SWITCH, "at = \"365 nm\", ", "");
    let (p, r) = run_on(&s, &text, "check", &[]);
    r.code(1);
    let (msg, _) = error_at(&r.stderr, &p, loc(&text, "{ value"), "species \"E\".epsilon");
    assert_contains(&msg, &["`value` needs `at`"]);
    // windows are for ε: a quantum yield takes a number or a table
    let text = edit(
        SWITCH,
        "quantum_yield = 0.12",
        "quantum_yield = { at = \"365 nm\", value = 0.12, from = \"355 nm\", to = \"375 nm\" }",
    );
    let (p, r) = run_on(&s, &text, "check", &[]);
    r.code(1);
    let (msg, _) = error_at(
        &r.stderr,
        &p,
        loc(&text, "{ at = \"365 nm\", value = 0.12"),
        "photo \"E -> Z\".quantum_yield",
    );
    assert_contains(&msg, &["`from`/`to` bound a single ε value"]);
}

// Every ε example of README's Spectra section is valid under the README's own example light
// (a 365 nm band, FWHM 12 nm), except the one-value form, which is for lines at 365 nm only:
// valid under a 365 nm line, an error under the band.
#[test]
fn the_readme_spectra_examples_are_valid() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let spectra = &readme[readme.find("### Spectra").expect("a Spectra section")..];
    let block = &spectra[spectra.find("```toml").unwrap() + 7..];
    let block = &block[..block.find("```").unwrap()];
    let examples: Vec<&str> = block.lines().filter(|l| l.starts_with("epsilon = ")).collect();
    assert_eq!(examples.len(), 4, "{block}");
    let band = edit(
        SWITCH,
        "kind = \"line\"\nwavelength = \"365 nm\"",
        "kind = \"band\"\ncentre = \"365 nm\"\nfwhm = \"12 nm\"",
    );
    let s = Scratch::new("readme");
    for line in examples {
        // a file is named relative to networks/; the scratch network sits elsewhere
        let line = line.replace("../demo-data", &root.join("demo-data").display().to_string());
        let line = line.split(" # ").next().unwrap().trim();
        let swap = |t: &str| edit(t, "epsilon = { at = \"365 nm\", value = \"21000 L/(mol cm)\" }", line);
        let one_value = !line.contains("from") && line.contains("at = ");
        run_on(&s, &swap(SWITCH), "check", &[]).1.code(0);
        run_on(&s, &swap(&band), "check", &[])
            .1
            .code(if one_value { 1 } else { 0 });
    }
}

#[test]
fn every_bundled_network_is_valid() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut n = 0;
    for e in std::fs::read_dir(root.join("networks")).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "toml") {
            let r = photoledger(&["check", p.to_str().unwrap()]);
            r.code(0);
            n += 1;
        }
    }
    assert!(n >= 4);
}

// ---------------------------------------------------------------------------------------------
// Item 5: a light switched off; no night in simulate
// ---------------------------------------------------------------------------------------------

/// No "NaN" or "inf" passed off as a number anywhere in `text`.
#[track_caller]
fn finite_everywhere(what: &str, text: &str) {
    for bad in ["NaN", "nan", "inf", "Infinity"] {
        assert!(
            !text.split(|c: char| !c.is_alphanumeric()).any(|w| w == bad),
            "{what} holds {bad}:\n{text}"
        );
    }
}

// Zero is a valid power: the light switched off, a dark run. Through --set and in the file.
#[test]
fn a_light_at_zero_power_is_a_dark_run() {
    let s = Scratch::new("dark");
    run_on(&s, SWITCH, "check", &["--set", "light.UV LED.power=0 mW"])
        .1
        .code(0);
    run_on(&s, SWITCH, "check", &["--set", "light.UV LED.photon_flux=0 einstein/s"])
        .1
        .code(0);
    let dark = edit(SWITCH, "power = \"20 mW\"", "power = \"0 mW\"");
    let (_, r) = run_on(&s, &dark, "check", &[]);
    r.code(0);
    assert!(!r.stderr.contains("warning"), "{}", r.stderr);
    // Simulate in the dark with some Z to start: Z relaxes thermally, no photon is counted, and
    // no share, apparent Φ or photon cost divides by zero.
    let dark = edit(&dark, "initial = \"0 M\"", "initial = \"10 µM\"");
    let dark = edit(&dark, "initial = \"50 µM\"", "initial = \"50 µM\"\nproduct = true");
    let out = s.dir.join("sim");
    let (_, r) = run_on(
        &s,
        &dark,
        "simulate",
        &["--until", "1 h", "--out", out.to_str().unwrap()],
    );
    r.code(0);
    // The photons table aligns its columns, so the incident row is read with spaces collapsed.
    let collapsed: String = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        collapsed.contains("incident 0 (no light: every source is at zero)"),
        "{}",
        r.stdout
    );
    assert_contains(&r.stdout, &["  (no light)\n", "formed by thermal steps alone"]);
    finite_everywhere("stdout", &r.stdout);
    for f in ["summary.json", "photons.csv", "concentrations.csv"] {
        finite_everywhere(f, &std::fs::read_to_string(out.join(f)).unwrap());
    }
    // Z after 1 h in the dark: 10 µM · exp(−1e-4 /s · 3600 s) = 6.977 µM (first-order decay).
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let z = json["final_concentrations_mol_per_l"][1][1].as_f64().unwrap();
    assert!((z / (10e-6 * (-0.36f64).exp()) - 1.0).abs() < 1e-5, "{z}");
    assert_eq!(json["photons"]["incident"].as_f64(), Some(0.0));
    // plan: no light is why the target is out of reach; --in has nothing to scale
    let (_, r) = run_on(
        &s,
        &dark,
        "plan",
        &["--target", "E < 10 %", "--out", s.dir.join("plan").to_str().unwrap()],
    );
    // Exit 5: answered, the target is not reachable (README, "Exit codes").
    r.code(5);
    assert_contains(&r.stdout, &["NOT REACHABLE: no light"]);
    let (_, r) = run_on(
        &s,
        &dark,
        "plan",
        &[
            "--target",
            "E < 10 %",
            "--in",
            "1 h",
            "--out",
            s.dir.join("plan2").to_str().unwrap(),
        ],
    );
    r.code(2);
    assert_contains(&r.stderr, &["the light of the file is zero"]);
    // the HTML report's light table says "off" rather than a NaN mean wavelength
    let html = s.dir.join("r.html");
    let (_, r) = run_on(&s, &dark, "report", &["-o", html.to_str().unwrap()]);
    r.code(0);
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(
        page.contains("<td class=\"num\">off</td>"),
        "no 'off' in the light table"
    );
    assert!(!page.contains("NaN"));
}

// Negative and non-finite light values are errors that name the field (and "-0 mW" is zero).
#[test]
fn negative_and_non_finite_light_values_are_errors_naming_the_field() {
    let s = Scratch::new("bad-light");
    for (value, says) in [
        ("-1 mW", "\"-1 mW\" is negative"),
        ("inf mW", "is not a finite number"),
        ("nan mW", "is not a finite number"),
        ("1e400 mW", "is not a finite number"),
    ] {
        let text = edit(SWITCH, "power = \"20 mW\"", &format!("power = \"{value}\""));
        let (p, r) = run_on(&s, &text, "check", &[]);
        r.code(1);
        let (msg, _) = error_at(
            &r.stderr,
            &p,
            loc(&text, &format!("\"{value}\"")),
            "light \"UV LED\".power",
        );
        assert_contains(&msg, &[says]);
        // A value given with --set is named by the key as typed.
        let (_, r) = run_on(&s, SWITCH, "check", &["--set", &format!("light.UV LED.power={value}")]);
        r.code(1);
        assert_contains(&r.stderr, &["light.UV LED.power", says, "(value given with --set)"]);
    }
    for value in ["+inf nm", "-inf nm", "nan nm"] {
        let (_, r) = run_on(
            &s,
            SWITCH,
            "check",
            &["--set", &format!("light.UV LED.wavelength={value}")],
        );
        r.code(1);
        assert_contains(&r.stderr, &["light.UV LED.wavelength", "is not a finite number"]);
    }
    let neg = edit(SWITCH, "power = \"20 mW\"", "photon_flux = \"-2 µeinstein/s\"");
    let (_, r) = run_on(&s, &neg, "check", &[]);
    r.code(1);
    assert_contains(&r.stderr, &["light \"UV LED\".photon_flux", "is negative"]);
    run_on(&s, SWITCH, "check", &["--set", "light.UV LED.power=-0 mW"])
        .1
        .code(0);
    // sunlight's scale: zero is darkness, a negative or infinite factor an error
    let sun = edit(
        POND,
        "value = \"8000 L/(mol cm)\" }",
        "value = \"8000 L/(mol cm)\", from = \"300 nm\", to = \"320 nm\" }",
    );
    run_on(&s, &sun, "check", &["--set", "light.sun.scale=0"]).1.code(0);
    for (set, file) in [("inf", "inf"), ("-0.5", "-0.5"), ("nan", "nan")] {
        let (_, r) = run_on(&s, &sun, "check", &["--set", &format!("light.sun.scale={set}")]);
        r.code(1);
        let why = if set == "-0.5" {
            "is negative"
        } else {
            "is not a number"
        };
        assert_contains(&r.stderr, &["light.sun.scale", why, "(value given with --set)"]);
        let text = edit(&sun, "kind = \"sun\"", &format!("kind = \"sun\"\nscale = {file}"));
        let (_, r) = run_on(&s, &text, "check", &[]);
        r.code(1);
        assert_contains(&r.stderr, &["light \"sun\".scale", "a finite factor of zero or more"]);
    }
}

/// (time s, [species mol/L]) rows of a concentrations.csv.
fn rows(csv: &str) -> Vec<(f64, Vec<f64>)> {
    csv.lines()
        .skip(1)
        .map(|l| {
            let v: Vec<f64> = l.trim().split(',').map(|x| x.parse().unwrap()).collect();
            (v[0], v[1..].to_vec())
        })
        .collect()
}

// `simulate --sun-hours` lights the sample for the first hours of each day and integrates the
// night with the light off. With no thermal step, nothing changes at night, so 2 days at 12 h a
// day equal 1 day of continuous light (time invariance of the lit kinetics: exact, common
// practice); with a thermal step, the night runs it.
#[test]
fn simulate_follows_a_daily_light_schedule() {
    let s = Scratch::new("schedule");
    // a weak light so the conversion takes days
    let slow = edit(SWITCH, "power = \"20 mW\"", "power = \"0.001 mW\"");
    let photo_only = edit(
        &slow,
        "[[thermal]]\nequation = \"Z -> E\"\nrate = { k = \"1e-4 /s\" }\n",
        "",
    );
    let dir = |n: &str| s.dir.join(n).to_str().unwrap().to_string();
    let (_, day) = run_on(
        &s,
        &photo_only,
        "simulate",
        &["--until", "1 d", "--rtol", "1e-9", "--out", &dir("day")],
    );
    day.code(0);
    let (_, sched) = run_on(
        &s,
        &photo_only,
        "simulate",
        &[
            "--until",
            "2 d",
            "--sun-hours",
            "12",
            "--rtol",
            "1e-9",
            "--out",
            &dir("sched"),
        ],
    );
    sched.code(0);
    assert_contains(
        &sched.stdout,
        &["light on 12 h a day (all sources together): lit 1 d of 2 d; the dark hours integrated with the light off"],
    );
    let read = |d: &str| -> serde_json::Value {
        serde_json::from_str(&std::fs::read_to_string(Path::new(&dir(d)).join("summary.json")).unwrap()).unwrap()
    };
    let (a, b) = (read("day"), read("sched"));
    for k in 0..2 {
        let (x, y) = (
            a["final_concentrations_mol_per_l"][k][1].as_f64().unwrap(),
            b["final_concentrations_mol_per_l"][k][1].as_f64().unwrap(),
        );
        assert!((x - y).abs() <= 1e-6 * 50e-6, "species {k}: {x} vs {y}");
    }
    // incident photons count the lit time only: the same day of light
    let (x, y) = (
        a["photons"]["incident"].as_f64().unwrap(),
        b["photons"]["incident"].as_f64().unwrap(),
    );
    assert!((x / y - 1.0).abs() < 1e-12, "{x} vs {y}");
    assert_eq!(b["light_schedule"]["lit_time_s"].as_f64(), Some(86400.0));
    assert!(a["light_schedule"].is_null());
    // the nights are flat, and their ends are in the output (the switch times)
    let c = rows(&std::fs::read_to_string(Path::new(&dir("sched")).join("concentrations.csv")).unwrap());
    let at_dusk = c.iter().find(|r| r.0 == 43200.0).expect("dusk is an output").1.clone();
    assert!(c.iter().any(|r| r.0 == 86400.0), "dawn is an output");
    for (t, y) in c.iter().filter(|r| r.0 > 43200.0 && r.0 <= 86400.0) {
        assert!(
            (y[1] - at_dusk[1]).abs() <= 1e-12,
            "Z moved at night ({t} s): {} vs {}",
            y[1],
            at_dusk[1]
        );
    }
    // with the thermal step, Z relaxes through the night: exp(−1e-4 /s × 12 h) = 0.01333 of it
    let (_, r) = run_on(
        &s,
        &slow,
        "simulate",
        &[
            "--until",
            "2 d",
            "--sun-hours",
            "12",
            "--rtol",
            "1e-9",
            "--atol",
            "1e-16 M",
            "--out",
            &dir("thermal"),
        ],
    );
    r.code(0);
    let c = rows(&std::fs::read_to_string(Path::new(&dir("thermal")).join("concentrations.csv")).unwrap());
    let z = |t: f64| {
        c.iter()
            .find(|r| r.0 == t)
            .unwrap_or_else(|| panic!("no output at {t} s"))
            .1[1]
    };
    let want = z(43200.0) * (-4.32f64).exp();
    assert!((z(86400.0) / want - 1.0).abs() < 1e-5, "{} vs {want}", z(86400.0));
    // the schedule is checked like plan's
    for h in ["0", "25", "nan"] {
        let (_, r) = run_on(
            &s,
            &slow,
            "simulate",
            &["--until", "1 d", "--sun-hours", h, "--out", &dir("bad")],
        );
        r.code(2);
        assert_contains(&r.stderr, &["--sun-hours", "must be above 0 and at most 24"]);
    }
}

/// A transient whose energy is "photon" (the mean energy of the photons absorbed on the way
/// there) keeps it in the dark: the bundled flow network with its only LED at 0 mW was refused
/// ("its absorber(s) (product) take up none of the light", its hot channels "not a finite
/// number"). The energy is the one the light would bring shining, so the dark run and the lit
/// one show the same hot-molecule energy in `check`.
#[test]
fn a_photon_energy_transient_runs_in_the_dark() {
    let root = env!("CARGO_MANIFEST_DIR");
    let net = format!("{root}/networks/flow-cyclization.toml");
    let out = std::env::temp_dir().join(format!("photoledger-dark-flow-{}", std::process::id()));
    let off = ["--set", "light.UV-A LED.power=0 mW"];
    let r = photoledger(
        &[
            &[
                "simulate",
                net.as_str(),
                "--until",
                "1 h",
                "--out",
                out.to_str().unwrap(),
            ][..],
            &off[..],
        ]
        .concat(),
    );
    r.code(0);
    let collapsed: String = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(collapsed.contains("incident 0 (no light"), "{}", r.stdout);
    let lit = photoledger(&["check", net.as_str()]);
    let dark = photoledger(&[&["check", net.as_str()][..], &off[..]].concat());
    dark.code(0);
    let hot = |r: &Run| -> Vec<String> {
        r.stdout
            .lines()
            .filter(|l| l.contains("product-hot") || l.contains("hot yield"))
            .map(str::to_string)
            .collect()
    };
    assert!(
        hot(&lit).iter().any(|l| l.contains("from 73.8 kcal/mol")),
        "{}",
        lit.stdout
    );
    assert_eq!(hot(&lit), hot(&dark));
    let _ = std::fs::remove_dir_all(&out);
}
