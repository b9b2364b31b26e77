//! Issue 18, "one unit rule": every command run on the bundled networks (and on a small network
//! of the test's own, written in kcal/mol) prints units only by `units::display`'s rule. The
//! scan looks for what the rule forbids:
//! - a rate constant written "/s", "1/s" or "/(M s)" (the rule writes s⁻¹ and M⁻¹ s⁻¹);
//! - "meinstein" (photon amounts are einstein, µeinstein, neinstein, peinstein);
//! - a unit on a dimensionless number ("unit 1", "(1)", a number followed by the unit "1");
//! - an energy in kJ/mol from a file written in kcal/mol, unless beside its kcal/mol value;
//! - a duration, power or photon amount below 1 in a unit that has a smaller one, or at or
//!   above the next unit up (the largest unit in which the value is ≥ 1).

use std::path::{Path, PathBuf};
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_photoledger");

/// A small network written in kcal/mol (invented for this test): a dye whose excited state
/// crosses a 3 kcal/mol barrier in tens of ps, is quenched, and whose product returns over
/// 22 kcal/mol.
const TINY: &str = r#"
[about]
name = "tiny kcal test"
description = "A made-up dye and its photoproduct, written in kcal/mol."
provenance = "Invented for a test."
invented = true

[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "400 nm"
power = "5 mW"

[[species]]
name = "A"
initial = "100 µM"
epsilon = { at = "400 nm", value = "5000 L/(mol cm)" }

[[species]]
name = "B"
initial = "0 M"
product = true

[[species]]
name = "Q"
initial = "1 mM"

[[photo]]
name = "excite"
absorber = "A"
excites = "A*"

[[transient]]
name = "A*"
kind = "excited"
channels = [
  { to = "B", rate = { barrier = "3 kcal/mol" } },
  { to = "A", rate = { k = "2e9 /s" } },
  { to = "A", quencher = "Q", rate = { k = "5e9 /(M s)" } },
]

[[thermal]]
name = "back"
equation = "B -> A"
rate = { barrier = "22 kcal/mol" }
"#;

/// The ladders of the rule, largest unit first.
const LADDERS: [&[&str]; 5] = [
    &["yr", "d", "h", "min", "s", "ms", "µs", "ns", "ps", "fs"],
    &["kW", "W", "mW", "µW", "nW"],
    &["einstein", "µeinstein", "neinstein", "peinstein"],
    &["einstein/s", "µeinstein/s", "neinstein/s", "peinstein/s"],
    &["einstein/L", "µeinstein/L", "neinstein/L", "peinstein/L"],
];

/// How many of each unit make the next one up (index-aligned with [`LADDERS`]).
fn step_up(ladder: usize, i: usize) -> f64 {
    match ladder {
        0 => [365.25, 24.0, 60.0, 60.0, 1000.0, 1000.0, 1000.0, 1000.0, 1000.0][i - 1],
        1 => 1000.0,
        _ => {
            if i == 1 {
                1e6
            } else {
                1000.0
            }
        }
    }
}

fn number(word: &str) -> Option<f64> {
    let w = word
        .trim_start_matches(['(', '[', '=', '~'])
        .trim_end_matches([',', ';', ':']);
    if w.is_empty() || !w.chars().next().is_some_and(|c| c.is_ascii_digit() || c == '-') {
        return None;
    }
    w.parse::<f64>().ok()
}

fn unit_word(word: &str) -> &str {
    word.trim_end_matches([',', ';', ':', ')', ']', '.'])
}

/// Every place in `text` where a unit breaks the display rule, as "line: why".
fn violations(text: &str, kcal_file: bool) -> Vec<String> {
    let mut out = Vec::new();
    for line in text.lines() {
        let mut bad = |why: &str| out.push(format!("{why}: {line}"));
        for token in [" /s", "1/s", "/(M s)", "meinstein", "unit 1", "(1)", "/(M"] {
            if line.contains(token) {
                bad(&format!("\"{token}\""));
            }
        }
        // A table's unit column ("... 96.17  kJ/mol").
        if kcal_file && line.trim_end().ends_with(" kJ/mol") && !line.contains("kcal/mol") {
            bad("a kJ/mol column for a file written in kcal/mol");
        }
        let words: Vec<&str> = line.split_whitespace().collect();
        for pair in words.windows(2) {
            let Some(v) = number(pair[0]) else { continue };
            let u = unit_word(pair[1]);
            if u == "1" && pair[0].contains('e') {
                bad("a unit on a plain number");
            }
            if kcal_file && u == "kJ/mol" {
                let at = line.find(pair[0]).unwrap_or(0);
                if !line[..at].contains("kcal/mol") {
                    bad("kJ/mol for a file written in kcal/mol");
                }
            }
            for (l, ladder) in LADDERS.iter().enumerate() {
                let Some(i) = ladder.iter().position(|x| *x == u) else {
                    continue;
                };
                let a = v.abs();
                if a == 0.0 || !a.is_finite() {
                    continue;
                }
                if a < 1.0 && i + 1 < ladder.len() {
                    bad(&format!("{v} {u} is below 1 in a unit with a smaller one"));
                }
                if i > 0 && a >= step_up(l, i) * (1.0 + 1e-3) {
                    bad(&format!("{v} {u} belongs in {}", ladder[i - 1]));
                }
            }
        }
    }
    out
}

fn run(dir: &Path, args: &[&str]) -> String {
    let o = Command::new(BIN)
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run photoledger");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(
        o.status.code().is_some_and(|c| c != 101),
        "photoledger {args:?} panicked:\n{text}"
    );
    text
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("photoledger-unit-rule-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// (network file, a target for `plan`).
fn networks(dir: &Path) -> Vec<(PathBuf, &'static str)> {
    let tiny = dir.join("tiny.toml");
    std::fs::write(&tiny, TINY).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    vec![
        (root.join("photoswitch.toml"), "Z-azo > 30 %"),
        (root.join("photoswitch-side-product.toml"), "Z-azo > 30 %"),
        (root.join("diene-two-funnels.toml"), "ring > 50 %"),
        (root.join("flow-cyclization.toml"), "product > 50 %"),
        (root.join("prebiotic-pool.toml"), "product > 1 %"),
        (tiny, "B > 50 %"),
    ]
}

#[test]
fn no_text_output_prints_a_unit_outside_the_display_rule() {
    let dir = scratch("all");
    let mut found = Vec::new();
    let mut outputs = 0;
    for (file, target) in networks(&dir) {
        let f = file.to_str().unwrap();
        let stem = file.file_stem().unwrap().to_string_lossy().to_string();
        let out = |c: &str| dir.join(format!("{stem}-{c}")).to_string_lossy().to_string();
        let runs: Vec<Vec<String>> = vec![
            vec!["check".into(), f.into()],
            vec![
                "ledger".into(),
                f.into(),
                "--out".into(),
                out("ledger"),
                "--window".into(),
                "1 h".into(),
            ],
            vec![
                "barrier".into(),
                f.into(),
                "--window".into(),
                "1 h".into(),
                "--out".into(),
                out("barrier"),
            ],
            vec![
                "simulate".into(),
                f.into(),
                "--until".into(),
                "10 min".into(),
                "--points".into(),
                "20".into(),
                "--out".into(),
                out("simulate"),
            ],
            vec![
                "plan".into(),
                f.into(),
                "--target".into(),
                target.into(),
                "--out".into(),
                out("plan"),
            ],
            vec!["levels".into(), f.into(), "--out".into(), out("levels")],
            vec![
                "uncertainty".into(),
                f.into(),
                "--samples".into(),
                "8".into(),
                "--until".into(),
                "10 min".into(),
                "--out".into(),
                out("uncertainty"),
            ],
            vec!["diagram".into(), f.into(), "-o".into(), out("diagram.svg")],
        ];
        for args in runs {
            let args: Vec<&str> = args.iter().map(String::as_str).collect();
            let text = run(&dir, &args);
            outputs += 1;
            // Every network here writes its energies in kcal/mol.
            for v in violations(&text, true) {
                found.push(format!("photoledger {} {stem}: {v}", args[0]));
            }
        }
    }
    // fit: the fitted barrier of a kcal/mol file, in the table and the start values.
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let net = root.join("networks/photoswitch.toml");
    let data = root.join("demo-data/fit/experiments.toml");
    let fit_out = dir.join("photoswitch-fit").to_string_lossy().to_string();
    let text = run(
        &dir,
        &[
            "fit",
            net.to_str().unwrap(),
            "--data",
            data.to_str().unwrap(),
            "--out",
            &fit_out,
        ],
    );
    assert!(text.contains("kcal/mol"), "{text}");
    for v in violations(&text, true) {
        found.push(format!("photoledger fit photoswitch: {v}"));
    }
    // The barrier command without a network: the thermal window.
    let text = run(&dir, &["barrier", "--window", "10 ps", "--temperature", "298.15 K"]);
    for v in violations(&text, false) {
        found.push(format!("photoledger barrier --window 10 ps: {v}"));
    }
    assert!(outputs >= 48, "{outputs}");
    assert!(
        found.is_empty(),
        "{} unit(s) outside the display rule:\n{}",
        found.len(),
        found.join("\n")
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_scan_catches_what_the_rule_forbids() {
    // What today's main printed (issue 18), one line each: every one must be caught.
    for line in [
        "  Z-azo -> E-azo                           k = 3.695e-5 /s",
        "    -> CI-ring                        k = 8.197e11 /s, share 88.3% at the start",
        "      -1.0000           0  efficiency of \"excite\" = 1.0000e0 1",
        "      +0.5134   -7.515e-2  rate S1 -> CI-ring = 8.1970e11 1/s",
        "  UV-A LED       band 390 nm, FWHM 14 nm   3000 mW = 9.78 µeinstein/s",
        "  sun   175065 mW emitted",
        "  half-life 3.50e-15 h",
        "  incident  0.0006259 einstein",
        "  photons 2.5 meinstein",
        "  transient.S1.channels[0].barrier         5.021 kJ/mol",
        "  photon flux 0.02591 µeinstein/s",
    ] {
        assert!(!violations(line, true).is_empty(), "not caught: {line}");
    }
    for line in [
        "  Z-azo -> E-azo                           k = 3.695e-5 s⁻¹",
        "  half-life 845 fs, 24.9 min, 1.5 h",
        "  sd 1.5 kcal/mol (6.276 kJ/mol), default",
        "  20 mW = 61 neinstein/s (341–389 nm; 120 wavelength bins)",
        "  incident  626 µeinstein (0 s)",
        "  photons absorbed per molecule: 0.3259 per s",
    ] {
        assert!(
            violations(line, true).is_empty(),
            "caught wrongly: {line}: {:?}",
            violations(line, true)
        );
    }
}

#[test]
fn the_network_remembers_the_energy_family_its_file_used() {
    use photoledger::units::display::EnergyUnit;
    let family = |text: &str, set: &[&str]| {
        let l = photoledger::file::parse_text(Path::new("n.toml"), text.to_string()).unwrap();
        let o = photoledger::network::Overrides::parse(set).unwrap();
        photoledger::network::build(&l, &o).unwrap().energy_unit
    };
    assert_eq!(family(TINY, &[]), EnergyUnit::KcalPerMol);
    let kj = TINY
        .replace("3 kcal/mol", "12.5 kJ/mol")
        .replace("22 kcal/mol", "92 kJ/mol");
    assert_eq!(family(&kj, &[]), EnergyUnit::KjPerMol);
    // A value given on the command line chooses nothing: the file's family stays.
    assert_eq!(
        family(TINY, &["thermal.back.barrier=90 kJ/mol"]),
        EnergyUnit::KcalPerMol
    );
    // Most of the file's energies decide (the text is read once, by the builder); on a tie the
    // one written first (here the transient's 12.5 kJ/mol, above the thermal step's kcal/mol).
    let mixed = TINY.replace("3 kcal/mol", "12.5 kJ/mol");
    assert_eq!(family(&mixed, &[]), EnergyUnit::KjPerMol);
    // The kJ/mol file's check output carries no kcal/mol as its main unit.
    let dir = scratch("kj");
    std::fs::write(dir.join("kj.toml"), &kj).unwrap();
    let text = run(&dir, &["barrier", "kj.toml", "--window", "1 h", "--out", "b"]);
    assert!(text.contains("ΔG‡ kJ/mol"), "{text}");
    assert!(text.contains("(kcal/mol)"), "{text}");
    let _ = std::fs::remove_dir_all(&dir);
}
