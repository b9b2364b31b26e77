//! Round-off is never shown as a result: concentrations within the integrator's absolute
//! tolerance of zero print as 0 in `simulate`'s summary, while summary.json keeps the raw
//! numbers and names the tolerance; the same in `plan`, in the plots, and in `ledger`'s
//! sensitivities (round-off reads 0).

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

fn photoledger(args: &[&str], out: &std::path::Path) -> (String, std::process::Output) {
    let run = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .arg("--out")
        .arg(out)
        .output()
        .expect("runs");
    (String::from_utf8_lossy(&run.stdout).into_owned(), run)
}

#[test]
fn plan_prints_round_off_as_zero_and_json_keeps_it_with_the_tolerance() {
    // Z-azo of the side-product switch peaks at ~22 µM and then drains to the side product: at
    // the end of the run it is round-off of the plan's atol (1e-15 mol/L), which printed as
    // "2.31e-6 pM".
    let out = std::env::temp_dir().join(format!("photoledger-roundoff-plan-{}", std::process::id()));
    let (text, run) = photoledger(
        &[
            "plan",
            "networks/photoswitch-side-product.toml",
            "--target",
            "Z-azo > 100 µM",
        ],
        &out,
    );
    assert_eq!(run.status.code(), Some(5), "{text}");
    let line = text.lines().find(|l| l.contains("reaches at best")).expect(&text);
    assert!(line.contains("; 0 M after"), "{line}");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let atol = json["atol"].as_f64().expect("the tolerance is named");
    assert_eq!(json["units"]["atol"], "mol/L");
    let raw = json["unreachable"]["final_level"].as_f64().unwrap();
    assert!(raw != 0.0 && raw.abs() <= atol, "raw {raw}, atol {atol}");
    let _ = std::fs::remove_dir_all(&out);
}

/// Two photoproducts from one absorber (invented): yield of B = Φ_B / (Φ_B + Φ_C) = 0.75, so
/// d yield_B / dΦ_B = Φ_C / (Φ_B + Φ_C)² = 0.625 and d yield_B / dΦ_C = −1.875 (exact
/// branching of an absorbing chain, `common practice`).
const BRANCH: &str = r#"
[about]
name = "two photoproducts"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "LED"
kind = "line"
wavelength = "365 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "50 µM"
epsilon = { at = "365 nm", value = "5000 L/(mol cm)" }
[[species]]
name = "B"
product = true
[[species]]
name = "C"
product = true
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[photo]]
equation = "A -> C"
quantum_yield = 0.1
"#;

/// The "d yield / d p" column of `ledger`'s sensitivities, in order.
fn yield_derivatives(text: &str) -> Vec<String> {
    text.lines()
        .skip_while(|l| !l.contains("top sensitivities"))
        .skip(1)
        .take_while(|l| l.starts_with("    "))
        // each parameter's key follows on its own line
        .filter(|l| !l.trim_start().starts_with("key "))
        .map(|l| l.split_whitespace().nth(1).unwrap().to_string())
        .collect()
}

#[test]
fn ledger_prints_round_off_derivatives_as_zero_and_keeps_real_sensitivities() {
    // The side-product switch has one end: its yield is 1 whatever any parameter is, so every
    // d yield / d p is round-off (finite differences printed -1.448e-6 and 5.787e-9; exact
    // derivatives leave at most machine-precision residue).
    let out = std::env::temp_dir().join(format!("photoledger-roundoff-ledger-{}", std::process::id()));
    let (text, run) = photoledger(&["ledger", "networks/photoswitch-side-product.toml"], &out);
    assert!(run.status.success(), "{text}");
    let d = yield_derivatives(&text);
    assert!(!d.is_empty(), "{text}");
    assert!(d.iter().all(|x| x == "0"), "{d:?}\n{text}");
    // summary.json keeps the raw derivatives.
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let raw: Vec<f64> = json["sensitivities"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["yield_derivative"][0].as_f64().unwrap())
        .collect();
    assert!(!raw.is_empty() && raw.iter().all(|x| x.abs() < 1e-9), "{raw:?}");
    // A real dependence is shown.
    std::fs::create_dir_all(&out).unwrap();
    let file = out.join("branch.toml");
    std::fs::write(&file, BRANCH).unwrap();
    let out2 = out.join("branch");
    let (text, run) = photoledger(&["ledger", file.to_str().unwrap()], &out2);
    assert!(run.status.success(), "{text}");
    let d: Vec<f64> = yield_derivatives(&text).iter().map(|x| x.parse().unwrap()).collect();
    assert_eq!(d.len(), 2, "{text}");
    assert!((d[0] - 0.625).abs() < 1e-3 && (d[1] + 1.875).abs() < 1e-3, "{d:?}");
    let _ = std::fs::remove_dir_all(&out);
}

/// An invented network with a photochemical step and no light source at all.
const NO_LIGHT: &str = r#"
[about]
name = "no lamp"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }
[[species]]
name = "B"
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
equation = "A -> B"
rate = { k = "1e-4 /s" }
"#;

/// Every field of `json` that is a number with its sign bit set and equal to zero.
fn negative_zeros(json: &serde_json::Value, at: &str, found: &mut Vec<String>) {
    match json {
        serde_json::Value::Number(n) if n.as_f64().is_some_and(|x| x == 0.0 && x.is_sign_negative()) => {
            found.push(at.to_string());
        }
        serde_json::Value::Array(a) => {
            for (i, v) in a.iter().enumerate() {
                negative_zeros(v, &format!("{at}[{i}]"), found);
            }
        }
        serde_json::Value::Object(o) => {
            for (k, v) in o {
                negative_zeros(v, &format!("{at}.{k}"), found);
            }
        }
        _ => {}
    }
}

/// A "-0" standing alone in text (not -0.5, not 1e-05).
fn has_negative_zero(text: &str) -> bool {
    let b = text.as_bytes();
    text.match_indices("-0").any(|(i, _)| {
        let before = i.checked_sub(1).map(|j| b[j]);
        let after = b.get(i + 2).copied();
        !before.is_some_and(|c| c.is_ascii_alphanumeric() || c == b'.')
            && !after.is_some_and(|c| c.is_ascii_digit() || c == b'.' || c == b'e')
    })
}

#[test]
fn no_light_counts_zero_photons_never_minus_zero() {
    // With no [[light]] the ledger's sums run over no source; the float sum of nothing is −0,
    // which printed "incident -0", "absorbed by A -0", "incident -0 einstein" in plan and
    // "-0.0" in summary.json and "-0e0" in photons.csv.
    let dir = std::env::temp_dir().join(format!("photoledger-nolight-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("nolight.toml");
    std::fs::write(&file, NO_LIGHT).unwrap();
    let f = file.to_str().unwrap();
    let (text, run) = photoledger(&["simulate", f, "--until", "1 h"], &dir.join("sim"));
    assert!(run.status.success(), "{text}");
    let incident = text
        .lines()
        .find(|l| l.trim_start().starts_with("incident"))
        .expect(&text);
    let collapsed: String = incident.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(collapsed.starts_with("incident 0 (no light"), "{incident}");
    assert!(!has_negative_zero(&text), "{text}");
    let photons = std::fs::read_to_string(dir.join("sim/photons.csv")).unwrap();
    assert!(!photons.contains("-0e0"), "{photons}");
    let (text, run) = photoledger(&["plan", f, "--target", "B > 90 %"], &dir.join("plan"));
    assert!(run.status.success() || run.status.code() == Some(5), "{text}");
    assert!(!has_negative_zero(&text), "{text}");
    for sub in ["sim", "plan"] {
        let json: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(dir.join(sub).join("summary.json")).unwrap()).unwrap();
        let mut found = Vec::new();
        negative_zeros(&json, sub, &mut found);
        assert!(found.is_empty(), "{found:?}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// An invented intermediate: A → B by light; B absorbs without reacting and goes on by heat to
/// C or back to A.
const INTERMEDIATE: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
power = "5 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }
[[species]]
name = "B"
epsilon = { at = "365 nm", value = "100 L/(mol cm)" }
[[species]]
name = "C"
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
equation = "B -> C"
rate = { k = "1e-3 /s" }
[[thermal]]
equation = "B -> A"
rate = { k = "2e-4 /s" }
"#;

#[test]
fn a_dark_ledger_has_no_photon_tail_made_of_round_off() {
    // With the light at zero a molecule of B absorbs no photon on its way to C or A: the
    // photon-count distribution is all at 0 and its tail 1 − P(0) is round-off of the chain
    // solve (it printed "tail beyond 1.1e-16").
    let dir = std::env::temp_dir().join(format!("photoledger-darktail-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("intermediate.toml");
    std::fs::write(&file, INTERMEDIATE).unwrap();
    let f = file.to_str().unwrap();
    let (text, run) = photoledger(
        &["ledger", f, "--set", "light.lamp.power=0 mW", "--from", "B"],
        &dir.join("out"),
    );
    assert!(run.status.success(), "{text}");
    let line = text
        .lines()
        .find(|l| l.contains("photon-count distribution"))
        .expect(&text);
    assert!(line.ends_with("no photon is absorbed on any way to an end"), "{line}");
    // A lit run keeps its real tail (the recursion stops below 1e-9).
    let (text, run) = photoledger(&["ledger", f], &dir.join("lit"));
    assert!(run.status.success(), "{text}");
    let line = text
        .lines()
        .find(|l| l.contains("photon-count distribution"))
        .expect(&text);
    assert!(line.contains("tail beyond ") && line.contains("e-"), "{line}");
    let _ = std::fs::remove_dir_all(&dir);
}
