//! Round-off is never shown as a result: concentrations within the integrator's absolute
//! tolerance of zero print as 0 in `simulate`'s summary, while summary.json keeps the raw
//! numbers and names the tolerance.

use std::process::Command;

#[test]
fn simulate_prints_round_off_as_zero_and_json_keeps_it() {
    let out = std::env::temp_dir().join(format!("photoledger-roundoff-{}", std::process::id()));
    let run = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args([
            "simulate",
            "networks/photoswitch-side-product.toml",
            "--until",
            "1 d",
            "--out",
        ])
        .arg(&out)
        .output()
        .expect("runs");
    let text = String::from_utf8_lossy(&run.stdout);
    assert!(run.status.success(), "{text}");
    let finals: Vec<&str> = text
        .lines()
        .skip_while(|l| !l.starts_with("final concentrations"))
        .skip(1)
        .take_while(|l| !l.trim().is_empty())
        .collect();
    assert!(!finals.is_empty(), "{text}");
    for l in &finals {
        let value = l.split_whitespace().rev().nth(1).unwrap();
        assert!(
            !value.starts_with('-'),
            "a negative concentration reached the user: {l}"
        );
    }
    // The run leaves E- and Z-azo at round-off (a few hundredths of a pM below zero in the raw
    // state, well inside the default atol of 1e-12 mol/L): they read 0.
    let e = finals.iter().find(|l| l.trim_start().starts_with("E-azo")).unwrap();
    assert!(e.trim_end().ends_with(" 0 M"), "{e}");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(json["method"]["atol"].as_f64(), Some(1e-12), "the tolerance is named");
    // the raw value is kept: E-azo's computed final concentration, round-off and all
    let raw = json["final_concentrations_mol_per_l"][0][1].as_f64().unwrap();
    assert!(raw.abs() <= 1e-12, "{raw}");
    let _ = std::fs::remove_dir_all(&out);
}
