//! A concentration or photon count below zero beyond the tolerance is no result
//! (`kinetics::check`): the kinetics retry with tighter tolerances, say so, and give either
//! sound numbers or exit 4 (README, *Exit codes*: a numerical engine could not finish).
//!
//! The case: one table point of ε = 1e18 L/(mol cm) in the bundled pool network (invented),
//! an absorber no molecule could be; at the default tolerances the first hour gave
//! −3.4e-5 einstein absorbed and −5.7e-8 M with exit 0. Concentrations and photon counts are
//! never negative (common practice).

use std::path::PathBuf;
use std::process::Command;

fn numbers(csv: &str) -> Vec<(String, f64)> {
    let mut lines = csv.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<String> = lines
        .next()
        .unwrap()
        .split(',')
        .map(|h| h.trim().trim_matches('"').to_string())
        .collect();
    let mut out = Vec::new();
    for l in lines {
        for (h, v) in header.iter().zip(l.split(',')) {
            if let Ok(x) = v.trim().parse::<f64>() {
                out.push((h.clone(), x));
            }
        }
    }
    out
}

#[test]
fn a_huge_epsilon_gives_sound_numbers_after_a_retry_or_exit_4() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = std::env::temp_dir().join(format!("photoledger-impossible-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let text = std::fs::read_to_string(root.join("networks/prebiotic-pool.toml")).unwrap();
    assert!(text.contains("[305, 9000]"));
    std::fs::write(dir.join("pool.toml"), text.replace("[305, 9000]", "[305, 1e18]")).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(&dir)
        .args(["simulate", "pool.toml", "--until", "1 h", "--out", "run"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    match out.status.code() {
        Some(4) => assert!(err.contains("impossible numbers"), "{err}"),
        Some(0) => {
            // Sound after a retry that is said.
            assert!(err.contains("note: the kinetics were retried at rtol"), "{err}");
            // The default tolerances: rtol 1e-6, atol 1e-12 M; photon counts within rtol of
            // the largest count.
            for (h, v) in numbers(&std::fs::read_to_string(dir.join("run/concentrations.csv")).unwrap()) {
                assert!(v >= -1e-12, "{h} = {v}");
            }
            let photons = numbers(&std::fs::read_to_string(dir.join("run/photons.csv")).unwrap());
            let largest = photons.iter().fold(0.0f64, |m, (_, v)| m.max(v.abs()));
            for (h, v) in photons {
                assert!(v >= -1e-6 * largest, "{h} = {v}");
            }
            let json = std::fs::read_to_string(dir.join("run/summary.json")).unwrap();
            assert!(json.contains("\"retries\"") && json.contains("\"because\""), "{json}");
        }
        c => panic!("exit {c:?}: {err}"),
    }
}

#[test]
fn numbers_that_stay_impossible_after_both_retries_are_exit_4_and_no_output() {
    // The same ε = 1e18 pool with the absolute tolerance loosened to 10 nM: the photons counted
    // as absorbed by the adduct stay about −4e-6 einstein/L at 18 s however tight the retries.
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = std::env::temp_dir().join(format!("photoledger-give-up-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("run")).unwrap();
    std::fs::write(dir.join("run/summary.json"), "an earlier run").unwrap();
    let text = std::fs::read_to_string(root.join("networks/prebiotic-pool.toml")).unwrap();
    std::fs::write(dir.join("pool.toml"), text.replace("[305, 9000]", "[305, 1e18]")).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(&dir)
        .args([
            "simulate",
            "pool.toml",
            "--until",
            "1 h",
            "--atol",
            "1e-8 M",
            "--out",
            "run",
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(4), "{err}");
    // Three runs, each 100 times tighter than the last (kinetics::check: RETRIES, TIGHTEN).
    assert!(
        err.contains("impossible numbers")
            && err.contains("tried rtol 1e-6, atol 10 nM; then rtol 1e-8, atol 100 pM; then rtol 1e-10, atol 1 pM")
            && err.contains("no result is given"),
        "{err}"
    );
    assert!(out.stdout.is_empty(), "no result printed");
    assert_eq!(
        std::fs::read_to_string(dir.join("run/summary.json")).unwrap(),
        "an earlier run",
        "the folder of the run before is left as it was"
    );
    assert_eq!(std::fs::read_dir(&dir).unwrap().count(), 2, "no temporary folder");
}

/// Found by `scripts/fuzz_inputs.py` (seed 17, case 139): a network cut short after its
/// conditions, with no species and no light, made `simulate` panic inside the linear algebra
/// (exit 101). It is refused as a usage error instead.
#[test]
fn a_network_with_no_species_is_refused_not_a_panic() {
    let dir = std::env::temp_dir().join(format!("photoledger-empty-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("net.toml"),
        "# invented\n[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\n",
    )
    .unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(&dir)
        .args(["simulate", "net.toml", "--until", "1 h", "--out", "run"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_ne!(out.status.code(), Some(101), "{err}");
    assert!(matches!(out.status.code(), Some(1 | 2)), "{err}");
    assert!(err.contains("no species"), "{err}");
}

/// Found by the wider `scripts/fuzz_inputs.py` pass (seed 17, case 867): with E-azo at 1e300 µM
/// the cell absorbs 2e298 over its path, each molecule gets about 1e-302 /s of light, and the
/// chain's move-probability derivatives divided by total² (which underflows to zero): `ledger`
/// printed "NaN NaN" for two quantum-yield sensitivities. The side product takes one photon
/// with probability φ each time E absorbs, so the photons per side product are 1/φ and
/// d ln photons / d ln φ = −1 (geometric trials, common practice).
#[test]
fn ledger_sensitivities_stay_finite_when_light_per_molecule_is_tiny() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = std::env::temp_dir().join(format!("photoledger-tiny-light-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(&dir)
        .args([
            "ledger",
            root.join("networks/photoswitch-side-product.toml").to_str().unwrap(),
            "--set",
            "species.E-azo.initial=1e300 µM",
            "--out",
            "led",
        ])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(!text.contains("NaN") && !text.contains("inf"), "{text}");
    let line = text
        .lines()
        .find(|l| l.contains("quantum yield of \"E to side-product\""))
        .unwrap_or_else(|| panic!("{text}"));
    assert!(line.trim_start().starts_with("-1.0000"), "{line}");
}
