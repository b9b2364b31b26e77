//! Every command answers `--json` with JSON that parses and names its units (issue 18, "one
//! convention"): run on the built binary with bundled networks and small, fast settings.
//! Numbers in the JSON are SI; a unit is named by a field's suffix (`end_time_s`,
//! `barrier_j_per_mol`, `initial_mol_per_l`), by a `unit`/`*_unit` field beside the numbers, or
//! by a `units` table.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_photoledger");

/// A scratch folder with the crate's `networks/` and `demo-data/` linked in, so default output
/// folders land there.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-json-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for d in ["networks", "demo-data"] {
        std::os::unix::fs::symlink(root.join(d), dir.join(d)).unwrap();
    }
    dir
}

/// Run `args` (with `--json` added) in `dir`; the JSON printed, after checking the exit code
/// is 0 and the text is one JSON document.
fn json(dir: &Path, args: &[&str]) -> Value {
    let mut all: Vec<&str> = args.to_vec();
    all.push("--json");
    let out = Command::new(BIN).args(&all).current_dir(dir).output().unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{all:?}: {}\n{stdout}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_str(&stdout).unwrap_or_else(|e| panic!("{all:?}: not JSON ({e}):\n{stdout}"))
}

/// The README's ferrioxalate example (ΔA 0.600 ± 0.006 read for a 3 mL irradiation of 120 s).
const FERRIOXALATE: [&str; 14] = [
    "actinometer",
    "ferrioxalate",
    "--delta-a",
    "0.600 ± 0.006",
    "--irradiated",
    "3 mL",
    "--aliquot",
    "0.5 mL",
    "--total",
    "10 mL",
    "--time",
    "120 s",
    "--wavelength",
    "365 nm",
];

/// Field-name endings that name an SI unit (or mol/L), as the JSON outputs spell them.
const UNIT_SUFFIXES: [&str; 16] = [
    "_s",
    "_k",
    "_m",
    "_m2",
    "_m3",
    "_l",
    "_w",
    "_j",
    "_j_per_mol",
    "_per_s",
    "_mol_per_l",
    "_mol",
    "_einstein",
    "_einstein_per_s",
    "_bytes",
    "_per_j_per_mol",
];

/// Every object key anywhere in `v`.
fn keys(v: &Value, out: &mut Vec<String>) {
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                out.push(k.clone());
                keys(x, out);
            }
        }
        Value::Array(a) => a.iter().for_each(|x| keys(x, out)),
        _ => {}
    }
}

/// True when `k` names a unit: a unit suffix, a `unit` or `*_unit` field, or a `units` table.
fn names_unit(k: &str) -> bool {
    let k = k.to_ascii_lowercase();
    k == "unit" || k == "units" || k.ends_with("_unit") || UNIT_SUFFIXES.iter().any(|s| k.ends_with(s))
}

/// The JSON of `what` parses (checked by [`json`]) and names at least one unit.
fn assert_names_units(what: &str, v: &Value) {
    let mut ks = Vec::new();
    keys(v, &mut ks);
    assert!(
        ks.iter().any(|k| names_unit(k)),
        "{what}: no field names a unit; keys {ks:?}"
    );
}

/// The number at `path` (a `/`-separated JSON pointer).
fn number(v: &Value, path: &str) -> f64 {
    v.pointer(path)
        .and_then(Value::as_f64)
        .unwrap_or_else(|| panic!("no number at {path} in {v}"))
}

#[test]
fn every_command_answers_json_that_names_its_units() {
    let dir = scratch("all");
    let switch = "networks/photoswitch.toml";
    std::fs::write(
        dir.join("conversion.csv"),
        // Starting at 0, 0 as conversion tables usually do (the row is passed over).
        "time (s), conversion\n0, 0\n10, 0.08\n20, 0.15\n40, 0.25\n",
    )
    .unwrap();

    // check: the validated network, every settable key with its value and unit.
    let v = json(&dir, &["check", switch]);
    assert_names_units("check", &v);
    let params = v["parameters"].as_array().expect("check lists its parameters");
    assert!(params.len() >= 10, "{params:?}");
    for p in params {
        assert!(
            p["key"].is_string() && p["value"].is_number() && p["unit"].is_string(),
            "{p}"
        );
    }
    let barrier = params
        .iter()
        .find(|p| p["key"] == "thermal.thermal Z to E.barrier")
        .expect("the barrier's key");
    assert_eq!(barrier["unit"], "J/mol");
    assert_eq!(number(&v, "/species/0/initial_mol_per_l"), 50e-6);
    assert!(v["warnings"].is_array());

    let commands: Vec<(&str, Vec<&str>)> = vec![
        (
            "simulate",
            vec!["simulate", switch, "--until", "10 min", "--points", "20"],
        ),
        (
            "ledger",
            vec!["ledger", "networks/prebiotic-pool.toml", "--max-photons", "50"],
        ),
        ("plan", vec!["plan", switch, "--target", "Z-azo > 30 %"]),
        (
            "levels",
            vec!["levels", "networks/diene-two-funnels.toml", "--until", "1 h"],
        ),
        (
            "uncertainty",
            vec![
                "uncertainty",
                "networks/prebiotic-pool.toml",
                "--samples",
                "3",
                "--no-chain",
                "--until",
                "1 h",
            ],
        ),
        ("actinometer ferrioxalate", FERRIOXALATE.to_vec()),
        (
            "actinometer network",
            vec![
                "actinometer",
                "network",
                switch,
                "--step",
                "E to Z",
                "--data",
                "conversion.csv",
            ],
        ),
        ("report", vec!["report", switch, "--until", "10 min"]),
        ("diagram", vec!["diagram", switch]),
        (
            "fit",
            vec![
                "fit",
                switch,
                "--data",
                "demo-data/fit/experiments.toml",
                "--max-evaluations",
                "3",
            ],
        ),
        (
            "compare",
            vec![
                "compare",
                switch,
                "networks/photoswitch-side-product.toml",
                "--data",
                "demo-data/fit/experiments.toml",
                "--max-evaluations",
                "3",
            ],
        ),
        (
            "barrier thermal",
            vec!["barrier", "--window", "1 h", "--temperature", "298.15 K"],
        ),
        ("barrier network", vec!["barrier", switch, "--window", "1 h"]),
        (
            "barrier hot",
            vec![
                "barrier",
                "--energy",
                "250 kJ/mol",
                "--frequencies",
                "demo-data/frequencies/flow-product.txt",
                "--cooling",
                "10 ps",
            ],
        ),
        (
            "barrier k(E)",
            vec![
                "barrier",
                "--frequencies",
                "demo-data/frequencies/flow-product.txt",
                "--barrier",
                "100 kJ/mol",
                "--energy-range",
                "0 kJ/mol..200 kJ/mol",
                "--points",
                "5",
            ],
        ),
        (
            "bench",
            vec![
                "bench",
                switch,
                "--until",
                "1 min",
                "--species",
                "12",
                "--steps",
                "20",
                "--absorbers",
                "2",
            ],
        ),
    ];
    let mut answers = std::collections::BTreeMap::new();
    for (what, args) in &commands {
        // fit and compare stop at the evaluation cap (exit 6); their JSON is checked below.
        if what.starts_with("fit") || what.starts_with("compare") {
            continue;
        }
        let v = json(&dir, args);
        assert_names_units(what, &v);
        answers.insert(*what, v);
    }
    for (what, args) in commands
        .iter()
        .filter(|(w, _)| w.starts_with("fit") || w.starts_with("compare"))
    {
        let mut all = args.clone();
        all.push("--json");
        let out = Command::new(BIN).args(&all).current_dir(&dir).output().unwrap();
        assert!(matches!(out.status.code(), Some(0 | 6)), "{what}: {out:?}");
        let v: Value = serde_json::from_slice(&out.stdout).unwrap_or_else(|e| panic!("{what}: not JSON: {e}"));
        assert_names_units(what, &v);
    }

    // The quantities each new JSON carries, with the unit in the name.
    let thermal = &answers["barrier thermal"];
    let g = number(thermal, "/barrier_j_per_mol");
    assert!((90e3..100e3).contains(&g), "{g}");
    // A barrier crossed with 50 % probability in 1 h has a half-life of 1 h.
    assert!((number(thermal, "/half_life_s") - 3600.0).abs() < 1e-6);
    let steps = &answers["barrier network"]["steps"];
    assert!(steps[0]["rate_per_s"].is_number() && steps[0]["barrier_j_per_mol"].is_number());
    assert!(answers["barrier k(E)"]["rows"].as_array().is_some_and(|r| r.len() == 5));
    let runs = answers["bench"]["runs"].as_array().expect("bench rows");
    assert_eq!(runs.len(), 2, "the file and the generated network");
    assert!(runs.iter().all(|r| r["wall_s"].as_f64().is_some_and(|t| t >= 0.0)));

    // The JSON printed is the summary the output folder holds, in the one default folder.
    for (what, file) in [
        ("simulate", "photoswitch-simulate/summary.json"),
        ("plan", "photoswitch-plan/summary.json"),
        ("ledger", "prebiotic-pool-ledger/summary.json"),
        ("uncertainty", "prebiotic-pool-uncertainty/summary.json"),
        ("levels", "diene-two-funnels-levels/summary.json"),
        ("actinometer ferrioxalate", "ferrioxalate-actinometer/result.json"),
        ("actinometer network", "photoswitch-actinometer/result.json"),
        ("barrier k(E)", "flow-product-barrier/summary.json"),
    ] {
        let held: Value = serde_json::from_str(&std::fs::read_to_string(dir.join(file)).unwrap()).unwrap();
        assert_eq!(held, answers[what], "{what}: printed JSON and {file} differ");
    }
    assert!(dir.join("photoswitch-diagram.svg").exists());
    assert!(dir.join("photoswitch-report.html").exists());
    assert!(dir.join("photoswitch-fit/fit.json").exists());
    assert!(dir.join("photoswitch-compare/ranking.json").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

/// `check` prints the key of every settable number beside its value, in the spelling `--set`
/// takes, and that spelling works as a `--set` key.
#[test]
fn check_prints_every_settable_key_beside_its_value() {
    let dir = scratch("keys");
    let out = Command::new(BIN)
        .args(["check", "networks/photoswitch.toml"])
        .current_dir(&dir)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    let v = json(&dir, &["check", "networks/photoswitch.toml"]);
    for p in v["parameters"].as_array().unwrap() {
        let key = p["key"].as_str().unwrap();
        let line = text
            .lines()
            .find(|l| l.trim_start().starts_with(key) && l[l.find(key).unwrap() + key.len()..].starts_with("  "))
            .unwrap_or_else(|| panic!("no line for {key} in:\n{text}"));
        // The value follows the key on its line.
        assert!(
            line[line.find(key).unwrap() + key.len()..]
                .trim()
                .chars()
                .next()
                .is_some_and(|c| c.is_ascii_digit()),
            "{line}"
        );
    }
    assert!(text.contains("thermal.thermal Z to E.barrier"), "{text}");
    // The printed key is what --set takes.
    let set = Command::new(BIN)
        .args([
            "check",
            "networks/photoswitch.toml",
            "--quiet",
            "--set",
            "thermal.thermal Z to E.barrier=24 kcal/mol",
        ])
        .current_dir(&dir)
        .output()
        .unwrap();
    assert_eq!(set.status.code(), Some(0), "{set:?}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// A share computed from trajectory counts is listed with its key, but marked: the counts set
/// it, and `--set` refuses the key (the bundled two-funnel diene, invented counts).
#[test]
fn check_marks_a_share_from_trajectory_counts() {
    let dir = scratch("counted");
    let out = Command::new(BIN)
        .args(["check", "networks/diene-two-funnels.toml"])
        .current_dir(&dir)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("transient.CI-ring.channels[0].fraction "))
        .unwrap_or_else(|| panic!("no line for the counted share in:\n{text}"));
    assert!(line.contains("from trajectory counts"), "{line}");
    let v = json(&dir, &["check", "networks/diene-two-funnels.toml"]);
    let p = v["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["key"] == "transient.CI-ring.channels[0].fraction")
        .expect("listed");
    assert_eq!(p["from_trajectory_counts"], true);
    let set = Command::new(BIN)
        .args([
            "check",
            "networks/diene-two-funnels.toml",
            "--quiet",
            "--set",
            "transient.CI-ring.channels[0].fraction=0.5",
        ])
        .current_dir(&dir)
        .output()
        .unwrap();
    assert_ne!(set.status.code(), Some(0), "refused");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Ferrioxalate actinometry says which quantum yield it used and which inputs it took as exact,
/// and its JSON names the unit of every input (ε in the internal L/(mol m), not the L/(mol cm)
/// it was given in). Worked example: Hatchard & Parker, Proc. R. Soc. A 235 (1956) 518, Φ = 1.21
/// at 361–366 nm for 0.006 M (from memory, as the program's own table says).
#[test]
fn ferrioxalate_names_its_quantum_yield_and_the_units_of_its_inputs() {
    let dir = scratch("ferrioxalate-units");
    let args = FERRIOXALATE;
    let out = Command::new(BIN).args(args).current_dir(&dir).output().unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Φ = 1.21 ("), "{text}");
    // n = ΔA V_total / (ε l) · V_irr / V_aliquot = 0.600 · 0.010 L / (1.11e4 L/(mol cm) · 1 cm) · 6
    // = 3.2432 µmol (hand check of the standard procedure), in µmol by the display rule.
    assert!(text.contains("= 3.2432 ± 0.032 µmol (1 %)"), "{text}");
    assert!(
        text.contains("taken as exact") && text.contains("quantum yield"),
        "{text}"
    );
    assert!(text.contains("wrote ferrioxalate-actinometer/"), "{text}");
    let v = json(&dir, &args);
    assert_eq!(v["units"]["inputs.epsilon"], "L/(mol m)", "{v}");
    // 1.11e4 L/(mol cm) is 1.11e6 L/(mol m).
    let eps = v["inputs"]["epsilon"]["value"].as_f64().unwrap();
    assert!((eps - 1.11e6).abs() < 1.0, "{eps}");
    for k in ["inputs.path", "inputs.v_total", "inputs.time", "result.photon_flux"] {
        assert!(v["units"][k].is_string(), "{k}: {v}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}
