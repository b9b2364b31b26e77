//! The barrier engine and its rate physics against the outside world: counting identities,
//! limits of unimolecular rate theory, the Whitten–Rabinovitch approximation, the canonical
//! identity between RRKM and transition-state theory, and the Eyring prefactor. Then the
//! `barrier` command through the binary, for each form and for bad input.
//!
//! Energies inside are molar (J/mol); a mode of ν̃ cm⁻¹ is h c ν̃ N_A.

use photoledger::barrier::{self, HotLimit};
use photoledger::rates::partition::{Modes, tst_rate};
use photoledger::rates::rrkm::{Rrkm, count_states, whitten_rabinovitch};
use photoledger::units::constants::{BOLTZMANN, CALORIE, GAS_CONSTANT, PLANCK, SPEED_OF_LIGHT};
use photoledger::units::{Quantity, parse};
use std::path::PathBuf;
use std::process::Command;

/// One cm⁻¹ as J/mol.
fn wn() -> f64 {
    parse("1 cm-1", Quantity::MolarEnergy).unwrap()
}

fn modes(cm: &[f64]) -> Modes {
    Modes {
        vibrations: cm.iter().map(|v| v * wn()).collect(),
        ..Default::default()
    }
}

/// C(n, k) as f64 (exact for the sizes used here).
fn binomial(n: u64, k: u64) -> f64 {
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}

// Beyer & Swinehart, Algorithm 448, Commun. ACM 16 (1973) 379: the direct count. For s identical
// oscillators of m grains each, the number of states at energy n m grains is the number of ways
// to put n quanta in s modes, C(n + s − 1, s − 1), and zero between (a counting identity).
#[test]
fn beyer_swinehart_equals_the_combinatorial_count() {
    for (s, m) in [(4usize, 1usize), (5, 3), (1, 2)] {
        let f = vec![m as f64; s];
        let c = count_states(&modes(&f), wn(), 300.0 * wn()).unwrap();
        for (j, &count) in c.counts.iter().enumerate() {
            let want = if j % m == 0 {
                binomial((j / m + s - 1) as u64, (s - 1) as u64)
            } else {
                0.0
            };
            assert_eq!(count, want, "s = {s}, m = {m}, bin {j}");
        }
        // and the sum of states at n quanta is C(n + s, s) (hockey-stick identity)
        let n = 300 / m;
        assert_eq!(c.sums[n * m], binomial((n + s) as u64, s as u64));
    }
}

// The classical RRK limit (Holbrook, Pilling & Robertson, Unimolecular Reactions, 2nd ed.,
// Wiley 1996, ch. 3; from memory for the chapter): s identical oscillators of frequency ν in
// the reactant and s − 1 in the transition state give k(E) → ν ((E − E₀)/E)^(s − 1) at high E.
#[test]
fn rrkm_tends_to_classical_rrk_at_high_energy() {
    let s = 4;
    let nu_cm = 100.0;
    let nu = SPEED_OF_LIGHT * 100.0 * nu_cm; // s⁻¹
    let e0 = 5000.0 * wn();
    let r = modes(&vec![nu_cm; s]);
    let ts = modes(&vec![nu_cm; s - 1]);
    let model = Rrkm::new(&r, &ts, e0, 1.0, wn(), 200_000.0 * wn()).unwrap();
    let mut last = f64::INFINITY;
    for e_cm in [20_000.0, 60_000.0, 200_000.0] {
        let e = e_cm * wn();
        let k = model.rate(e).unwrap();
        let rrk = nu * ((e - e0) / e).powi(s as i32 - 1);
        let dev = (k / rrk - 1.0).abs();
        assert!(dev < last, "approaches the limit: {dev} at {e_cm} cm-1 after {last}");
        last = dev;
    }
    assert!(last < 5e-3, "within 0.5 % at 200000 cm-1: {last}");
}

// Whitten & Rabinovitch, J. Chem. Phys. 38 (1963) 2466 (citation from memory; formula as in
// the shared reference notes): their sum of states is quoted as good to about 1 % at energies
// above the zero-point energy (accuracy claim from memory). Checked against the direct count
// for an invented 15-mode molecule at E′ = E/E_z from 1 to 6, on a 1 cm⁻¹ grain: W within 1 %,
// and ρ (with the full derivative factor, against the count averaged over ±250 cm⁻¹) within 2 %.
// For small molecules with large quanta the exact W is lumpy and deviates by several per cent
// at these energies, so the molecule is chosen large enough for the approximation's regime.
#[test]
fn whitten_rabinovitch_agrees_with_the_direct_count_at_high_energy() {
    let f = [
        3050.0, 3000.0, 2950.0, 1650.0, 1450.0, 1400.0, 1250.0, 1100.0, 1000.0, 900.0, 800.0, 650.0, 500.0, 400.0,
        250.0,
    ];
    let m = modes(&f);
    let ez = m.zero_point();
    let c = count_states(&m, wn(), 7.0 * ez).unwrap();
    for ep in [1.0, 1.5, 2.0, 3.0, 4.0, 6.0] {
        let e = ep * ez;
        let (w, rho) = whitten_rabinovitch(&m.vibrations, e).unwrap();
        let exact = c.sum_at(e).unwrap();
        assert!((w / exact - 1.0).abs() < 0.01, "W at E′ = {ep}: {w} vs {exact}");
        let h = 250.0 * wn();
        let exact_rho = c.density_between(e - h, e + h).unwrap();
        assert!(
            (rho / exact_rho - 1.0).abs() < 0.02,
            "ρ at E′ = {ep}: {rho} vs {exact_rho}"
        );
    }
    assert!(
        whitten_rabinovitch(&m.vibrations, 9.0 * ez).is_none(),
        "outside the fit"
    );
}

// The canonical average of k(E) over ρ(E) e^(−E/k_B T)/Q is the transition-state-theory rate
// (common practice: the Laplace transform of W‡ is Q‡ k_B T); exact for frequencies that are
// whole multiples of a common grain, here 1 cm⁻¹, at two temperatures and with σ = 2.
#[test]
fn canonical_average_of_rrkm_is_tst() {
    let r = modes(&[3000.0, 1500.0, 1200.0, 900.0, 650.0, 420.0, 300.0, 150.0]);
    let ts = Modes {
        imaginary: Some(900.0 * wn()),
        ..modes(&[3000.0, 1450.0, 1150.0, 880.0, 600.0, 380.0, 210.0])
    };
    let e0 = 8000.0 * wn();
    let model = Rrkm::new(&r, &ts, e0, 2.0, wn(), e0 + 80_000.0 * wn()).unwrap();
    for t in [298.15, 1000.0] {
        let canonical = model.canonical_rate(t);
        let tst = tst_rate(&r, &ts, e0, t, 2.0, 1.0);
        assert!((canonical / tst - 1.0).abs() < 1e-6, "T = {t}: {canonical} vs {tst}");
    }
}

// With an external free rotor in reactant and transition state (Stein & Rabinovitch,
// J. Chem. Phys. 58 (1973) 2438: the count starts from the rotor states and the vibrations are
// convolved in), the canonical average matches TST with classical rotor partition functions
// (1/σ) √(π k_B T / B) (common practice). The grain places rotor states at bin edges, a bias
// that depends only on Δ/k_B T and the number of rotors, so it cancels between reactant and
// transition state with the same number of rotors: 1e-6.
#[test]
fn canonical_average_with_free_rotors_is_tst() {
    use photoledger::rates::partition::Rotor;
    let rotor = |b: f64, symmetry: u32| Rotor {
        constant: b * wn(),
        symmetry,
    };
    let r = Modes {
        rotors: vec![rotor(2.0, 1)],
        ..modes(&[1500.0, 900.0, 420.0, 150.0])
    };
    let ts = Modes {
        rotors: vec![rotor(1.2, 2)],
        imaginary: Some(800.0 * wn()),
        ..modes(&[1450.0, 880.0, 210.0])
    };
    let e0 = 6000.0 * wn();
    let model = Rrkm::new(&r, &ts, e0, 1.0, wn(), e0 + 60_000.0 * wn()).unwrap();
    let t = 500.0;
    let canonical = model.canonical_rate(t);
    let tst = tst_rate(&r, &ts, e0, t, 1.0, 1.0);
    assert!((canonical / tst - 1.0).abs() < 1e-6, "{canonical} vs {tst}");
}

// Eyring at 298.15 K: k_B T / h = 6.2124e12 s⁻¹ (CODATA 2018 exact k_B and h; Eyring,
// J. Chem. Phys. 3 (1935) 107). A half-life of about an hour for ΔG‡ ≈ 22.5 kcal/mol is the
// trade's rule of thumb (common practice); recomputed here from the prefactor, and the window
// engine inverts it.
#[test]
fn eyring_prefactor_and_the_one_hour_barrier() {
    let pre = BOLTZMANN * 298.15 / PLANCK;
    assert!((pre / 6.2124e12 - 1.0).abs() < 1e-4, "{pre}");
    let g = 22.5 * 1000.0 * CALORIE;
    let k = pre * (-g / (GAS_CONSTANT * 298.15)).exp();
    let half = std::f64::consts::LN_2 / k;
    assert!(half > 0.9 * 3600.0 && half < 1.1 * 3600.0, "half-life {half} s");
    let found = barrier::thermal_window(3600.0, 298.15, 0.5, 1.0).unwrap();
    assert!((found / (1000.0 * CALORIE) - 22.5).abs() < 0.1, "{found}");
}

// At constant energy (no cooling) the largest barrier for probability p in a window t is the
// one with k(E) = −ln(1 − p)/t (definition of a first-order probability).
#[test]
fn hot_window_without_cooling_meets_the_first_order_rate() {
    let r = modes(&[3000.0, 1500.0, 1000.0, 800.0, 500.0, 300.0, 200.0]);
    let ts = Modes {
        imaginary: Some(700.0 * wn()),
        ..modes(&[3000.0, 1500.0, 1000.0, 800.0, 300.0, 200.0])
    };
    let e = 150e3;
    let w = barrier::hot_window(&r, &ts, 1.0, e, HotLimit::Window(1e-9), 0.5, 10.0 * wn()).unwrap();
    let k = w.rate_at_barrier.unwrap();
    let want = std::f64::consts::LN_2 / 1e-9;
    // bisection to 1e-4 of E moves k by the local slope d ln k / dE times 15 J/mol
    assert!((k / want - 1.0).abs() < 0.02, "{k} vs {want}");
}

// ---------------------------------------------------------------------------------------------
// The command line
// ---------------------------------------------------------------------------------------------

fn scratch(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("photoledger-barrier-{}-{tag}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .output()
        .expect("run photoledger");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into(),
        String::from_utf8_lossy(&out.stderr).into(),
    )
}

const FREQ: &str = "# invented molecule, cm-1\n[reactant]\n3000, 1500 1000\n800 500 300 200\n[transition state]\n3000 1500 1000 800 300 200\n700i\n";

#[test]
fn cli_thermal_window() {
    let (code, out, err) = run(&["barrier", "--window", "1 h", "--temperature", "298.15 K"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("22.52 kcal/mol"), "{out}");
    assert!(out.contains("half-life 1 h"), "{out}");
}

#[test]
fn cli_hot_molecule_and_k_of_e() {
    let d = scratch("hot");
    let f = d.join("f.txt");
    std::fs::write(&f, FREQ).unwrap();
    let fs = f.to_str().unwrap();
    let (code, out, err) = run(&[
        "barrier",
        "--energy",
        "150 kJ/mol",
        "--frequencies",
        fs,
        "--cooling",
        "10 ps",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("largest zero-point-corrected barrier E0 ="), "{out}");
    let outdir = d.join("out");
    let (code, out, err) = run(&[
        "barrier",
        "--frequencies",
        fs,
        "--barrier",
        "60 kJ/mol",
        "--energy-range",
        "0 kJ/mol..200 kJ/mol",
        "--points",
        "101",
        "--out",
        outdir.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("wrote"), "{out}");
    let csv = std::fs::read_to_string(outdir.join("k_of_e.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert!(lines[0].starts_with("energy (kJ/mol),energy (cm-1),k (1/s)"));
    assert_eq!(lines.len(), 102);
    // k is zero below the barrier and grows above it
    let k_at = |i: usize| lines[i].split(',').nth(2).unwrap().parse::<f64>().unwrap();
    assert_eq!(k_at(20), 0.0);
    assert!(k_at(60) > 0.0 && k_at(100) > k_at(60));
    let svg = std::fs::read_to_string(outdir.join("k_of_e.svg")).unwrap();
    roxmltree::Document::parse(&svg).expect("well-formed SVG");
    let _ = std::fs::remove_dir_all(d);
}

#[test]
fn cli_network_verdicts() {
    let net = concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml");
    let (code, out, err) = run(&["barrier", net, "--window", "1 h"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("too slow by a factor") || out.contains("crosses within the window"),
        "{out}"
    );
    assert!(out.contains("pseudo-first-order"), "{out}");
    let (code, _, err) = run(&["barrier", net]);
    assert_eq!(code, 2);
    assert!(err.contains("--window"), "{err}");
}

#[test]
fn cli_bad_input_is_named() {
    let d = scratch("bad");
    let f = d.join("bad.txt");
    std::fs::write(&f, "[reactant]\n1000 12O0\n[ts]\n900\n").unwrap();
    let fs = f.to_str().unwrap();
    let (code, _, err) = run(&[
        "barrier",
        "--energy",
        "100 kJ/mol",
        "--frequencies",
        fs,
        "--cooling",
        "1 ps",
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(
        err.contains("bad.txt:2:6: reactant frequency: \"12O0\" is not a number"),
        "{err}"
    );
    assert!(err.contains("transition state: no imaginary frequency"), "{err}");
    let (code, _, err) = run(&["barrier", "--window", "1 parsec", "--temperature", "300 K"]);
    assert_eq!(code, 2);
    assert!(err.contains("--window"), "{err}");
    let (code, _, err) = run(&["barrier", "--window", "1 h"]);
    assert_eq!(code, 2);
    assert!(err.contains("--temperature"), "{err}");
    let (code, _, err) = run(&[
        "barrier",
        "--window",
        "1 h",
        "--temperature",
        "300 K",
        "--probability",
        "150 %",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("--probability"), "{err}");
    let (code, _, err) = run(&["barrier", "--energy", "25", "--frequencies", fs, "--cooling", "1 ps"]);
    assert_eq!(code, 2);
    assert!(err.contains("--energy") && err.contains("no unit"), "{err}");
    let (code, _, err) = run(&[
        "barrier",
        "--frequencies",
        fs,
        "--barrier",
        "10 kJ/mol",
        "--energy-range",
        "5 kJ/mol",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("--energy-range"), "{err}");
    let (code, _, err) = run(&[
        "barrier",
        "--energy",
        "100 kJ/mol",
        "--frequencies",
        "/nonexistent/f.txt",
        "--cooling",
        "1 ps",
    ]);
    assert_eq!(code, 3);
    assert!(err.contains("f.txt"), "{err}");
    let _ = std::fs::remove_dir_all(d);
}
