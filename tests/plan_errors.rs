//! Bad targets and plan options through the binary: exit code 2 (usage) and a message that
//! names the problem and what is accepted. Runs on the bundled (invented) networks.

use std::process::Command;

fn plan(args: &[&str]) -> (i32, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .arg("plan")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
        .args(args)
        .args([
            "--out",
            &std::env::temp_dir().join("photoledger-plan-errors").to_string_lossy(),
        ])
        .output()
        .expect("runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

#[track_caller]
fn expect_usage(args: &[&str], needles: &[&str]) {
    let (code, err) = plan(args);
    assert_eq!(code, 2, "exit code for {args:?}: {err}");
    for n in needles {
        assert!(err.contains(n), "{args:?}: \"{n}\" not in: {err}");
    }
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn unknown_species_names_the_species_and_suggests() {
    expect_usage(
        &["--target", "Z-az > 10 µM"],
        &["unknown species \"Z-az\"", "did you mean \"Z-azo\"", "E-azo"],
    );
}

#[test]
fn impossible_levels_are_refused() {
    expect_usage(&["--target", "Z-azo > 150 %"], &["150 %", "can never be reached"]);
    expect_usage(&["--target", "E-azo < 0 M"], &["never cross"]);
    expect_usage(&["--target", "E-azo > 10 µM"], &["already met at the start"]);
    expect_usage(&["--target", "Z-azo > -5 %"], &["not a percentage"]);
}

#[test]
fn wrong_units_name_what_is_accepted() {
    expect_usage(&["--target", "Z-azo > 10 mW"], &["wrong dimension", "a concentration"]);
    expect_usage(&["--target", "Z-azo > 10"], &["has no unit"]);
    expect_usage(&["--target", "Z-azo = 10 µM"], &["no < or >"]);
    expect_usage(&["--target", "Z-azo > 50 % from E-azo"], &["only \"of NAME\""]);
}

#[test]
fn bad_options_are_usage_errors() {
    expect_usage(&["--target", "Z-azo > 10 µM", "--in", "2 W"], &["--in"]);
    expect_usage(&["--target", "Z-azo > 10 µM", "--flow-tube", "ID=1 mm"], &["no length"]);
    expect_usage(&["--target", "Z-azo > 10 µM", "--sweep", "power=1W..2W"], &["no :N"]);
    expect_usage(
        &["--target", "Z-azo > 10 µM", "--sweep", "colour=1..2:3"],
        &["unknown key"],
    );
    expect_usage(&["--target", "Z-azo > 10 µM", "--sun-hours", "30"], &["at most 24"]);
    expect_usage(
        &["--target", "Z-azo > 10 µM", "--wall-plug", "130 %"],
        &["at most 100 %"],
    );
}

#[test]
fn unreachable_target_says_why_with_the_level_reached() {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .arg("plan")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
        .args(["--target", "Z-azo > 49 µM", "--json"])
        .args([
            "--out",
            &std::env::temp_dir().join("photoledger-plan-unreach").to_string_lossy(),
        ])
        .output()
        .expect("runs");
    // Answered, not failed: the documented code 5 (README, "Exit codes"), with the JSON.
    assert_eq!(out.status.code(), Some(5), "{}", String::from_utf8_lossy(&out.stderr));
    let js: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(js["reached"], false);
    assert_eq!(js["unreachable"]["why"], "Photostationary");
    let best = js["unreachable"]["best_level"].as_f64().unwrap();
    assert!(best > 0.0 && best < 49e-6, "{best}");
}

#[test]
fn sweep_writes_csv_and_well_formed_svg() {
    let dir = std::env::temp_dir().join(format!("photoledger-plan-sweep-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .arg("plan")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/flow-cyclization.toml"))
        .args([
            "--target",
            "product > 50 %",
            "--sweep",
            "power=0.1W..3W:4",
            "--products",
            "product,degradate",
        ])
        .arg("--out")
        .arg(&dir)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let csv = std::fs::read_to_string(dir.join("sweep.csv")).unwrap();
    let rows: Vec<&str> = csv.lines().collect();
    assert_eq!(rows.len(), 5, "{csv}");
    assert!(rows[0].starts_with("total power emitted (W),time to target (s)"));
    // Times fall as the power rises.
    let t: Vec<f64> = rows[1..]
        .iter()
        .map(|r| r.split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    assert!(t.windows(2).all(|w| w[1] < w[0]), "{t:?}");
    for f in ["sweep.svg", "selectivity.svg"] {
        let svg = std::fs::read_to_string(dir.join(f)).unwrap();
        roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{f}: {e}"));
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn simulate_stop_when_shares_the_target_syntax() {
    let dir = std::env::temp_dir().join(format!("photoledger-plan-stop-{}", std::process::id()));
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .arg("simulate")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
        .args(["--until", "1 h", "--stop-when", "E-azo < 80 %", "--json"])
        .arg("--out")
        .arg(&dir)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let bad = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .arg("simulate")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml"))
        .args(["--until", "1 h", "--stop-when", "nothing < 80 %"])
        .arg("--out")
        .arg(&dir)
        .output()
        .expect("runs");
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("--stop-when"));
    let _ = std::fs::remove_dir_all(&dir);
}
