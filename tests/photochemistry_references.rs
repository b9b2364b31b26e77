//! The photochemistry of the kinetics engine against outside references: closed forms of
//! photoreactions in a well-stirred cell, the photostationary state, the photon ledger's
//! balance, Stern–Volmer quenching, conservation laws on random networks, and an
//! independent SciPy solution of a bundled network.
//!
//! Units used in the reasoning below: concentrations mol/L, volume V in L, path l in cm,
//! ε in L mol⁻¹ cm⁻¹ (so ε l is in L/mol), photon flux q₀ in einstein/s.

use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, Options, Trajectory, ledger};
use photoledger::model::Model;
use photoledger::network::{self, Network, Overrides, build};
use proptest::prelude::*;
use std::f64::consts::LN_10;
use std::path::{Path, PathBuf};

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}\n--- network ---\n{text}"),
    }
}

/// How to integrate in these tests.
struct Run {
    until: f64,
    method: Method,
    rtol: f64,
    atol: f64,
    outputs: usize,
    log_time: bool,
}

impl Run {
    fn bdf(until: f64, atol: f64) -> Self {
        Run {
            until,
            method: Method::Bdf,
            rtol: 1e-10,
            atol,
            outputs: 12,
            log_time: false,
        }
    }
}

fn simulate(net: &Network, r: &Run) -> (Model, Trajectory) {
    let model = Model::compile(net);
    let mut opts = Options::until(r.until);
    opts.method = r.method;
    opts.rtol = r.rtol;
    opts.atol = r.atol;
    opts.outputs = r.outputs;
    opts.log_time = r.log_time;
    let tr = kinetics::simulate(&model, &opts, &mut |_| {}).expect("integrates");
    (model, tr)
}

fn rel(x: f64, want: f64) -> f64 {
    (x - want).abs() / want.abs()
}

// ---------------------------------------------------------------------------------------
// 1. A -> B, only A absorbs, one monochromatic line.
//
// With A = ε l c the decadic absorbance of A (no background), the cell absorbs
// q₀ (1 − 10^(−A)) einstein/s, all of it by A, and a fraction Φ of those photons converts A:
//
//     dc/dt = −(Φ q₀ / V) (1 − 10^(−ε l c)) = −K (1 − e^(−a c)),   K = Φ q₀ / V,  a = ε l ln 10.
//
// Separate the variables: dc / (1 − e^(−a c)) = e^(a c) dc / (e^(a c) − 1) = −K dt, and
// ∫ e^(a c) / (e^(a c) − 1) dc = (1/a) ln(e^(a c) − 1), so from c₀ at t = 0 to c at t:
//
//     (1/a) ln((e^(a c₀) − 1) / (e^(a c) − 1)) = Φ q₀ t / V.
//
// (Rearranged: c = (1/a) ln(1 + (e^(a c₀) − 1) e^(−a K t)); the test solves the implicit form
// by bisection and checks the rearrangement against it.) Limits: for a c ≪ 1,
// 1 − e^(−a c) ≈ a c and the decay is first order with k = a K = ln(10) Φ ε l q₀ / V; for
// ε l c ≫ 1 the cell absorbs everything, dc/dt = −K, zero order. The derivation is
// `common practice` (the Beer–Lambert law applied to a well-stirred cell).
// ---------------------------------------------------------------------------------------

const EPS_A: f64 = 5000.0; // L mol⁻¹ cm⁻¹
const PATH_CM: f64 = 1.0;
const PHI_AB: f64 = 0.3;
const Q0: f64 = 5e-8; // einstein/s
const V_L: f64 = 3e-3; // L

fn a_to_b(c0: f64) -> String {
    format!(
        r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "laser"
kind = "line"
wavelength = "365 nm"
photon_flux = "0.05 µeinstein/s"
[[species]]
name = "A"
initial = "{c0:e} M"
epsilon = {{ at = "365 nm", value = "5000 L/(mol cm)" }}
[[species]]
name = "B"
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
"#
    )
}

/// The implicit closed form solved for c by bisection: F(c) = (1/a) ln((e^(a c₀) − 1) /
/// (e^(a c) − 1)) − K t decreases in c from +∞ (c → 0) to −K t ≤ 0 (c = c₀).
fn closed_form_bisection(a: f64, k: f64, c0: f64, t: f64) -> f64 {
    if t == 0.0 {
        return c0;
    }
    let f = |c: f64| ((a * c0).exp_m1().ln() - (a * c).exp_m1().ln()) / a - k * t;
    let (mut lo, mut hi) = (0.0, c0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid == lo || mid == hi {
            break;
        }
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The same closed form rearranged for c.
fn closed_form_explicit(a: f64, k: f64, c0: f64, t: f64) -> f64 {
    ((a * c0).exp_m1() * (-a * k * t).exp()).ln_1p() / a
}

/// Runs A -> B from absorbance `a0` for `until` s; returns (times, c_A, a, K, c₀).
fn run_a_to_b(a0: f64, until: f64) -> (Vec<f64>, Vec<f64>, f64, f64, f64) {
    let c0 = a0 / (EPS_A * PATH_CM);
    let net = network(&a_to_b(c0));
    let (model, tr) = simulate(&net, &Run::bdf(until, c0 * 1e-13));
    // Sound at the first try: no retry for impossible numbers (`kinetics::check`).
    assert!(tr.retries.is_empty());
    // The compiled model holds what the test assumes.
    assert!((model.volume - V_L).abs() < 1e-15);
    assert!(rel(model.total_flux(), Q0) < 1e-12);
    let a = EPS_A * PATH_CM * LN_10;
    let k = PHI_AB * Q0 / V_L;
    (tr.times.clone(), tr.series(0), a, k, c0)
}

#[test]
fn a_to_b_closed_form_at_unit_absorbance() {
    let (times, c, a, k, c0) = run_a_to_b(1.0, 60.0);
    let mut worst = 0.0f64;
    for (t, c) in times.iter().zip(&c) {
        let want = closed_form_bisection(a, k, c0, *t);
        assert!(
            rel(closed_form_explicit(a, k, c0, *t), want) < 1e-12,
            "closed forms disagree at {t} s"
        );
        worst = worst.max(rel(*c, want));
        assert!(rel(*c, want) < 1e-6, "t = {t} s: c = {c:e} M, closed form {want:e} M");
    }
    // The run went far enough to matter: more than 80 % converted.
    assert!(c[c.len() - 1] < 0.2 * c0);
    eprintln!("A -> B, A0 = 1: max relative error {worst:.2e}");
}

#[test]
fn a_to_b_optically_thin_is_first_order() {
    // A0 = 1e-6. From dc/dt = −K(1 − e^(−a c)) ≥ −K a c the decay is slower than
    // exponential, and ln(c / c₀e^(−kt)) = ∫ (k − K(1 − e^(−ac))/c) dt ≤ ∫ K a² c/2 dt ≤ a c₀/2,
    // so c sits above the exponential by at most ln(10) A0 / 2 relative.
    let a0 = 1e-6;
    let (times, c, a, k, c0) = run_a_to_b(a0, 60.0);
    let k1 = LN_10 * PHI_AB * EPS_A * PATH_CM * Q0 / V_L;
    let bound = LN_10 * a0 / 2.0 + 1e-7;
    let (mut worst_exp, mut worst_closed) = (0.0f64, 0.0f64);
    for (t, c) in times.iter().zip(&c) {
        let first_order = c0 * (-k1 * t).exp();
        worst_exp = worst_exp.max(rel(*c, first_order));
        assert!(
            rel(*c, first_order) < bound,
            "t = {t} s: c = {c:e} M, c₀e^(−kt) = {first_order:e} M"
        );
        let want = closed_form_bisection(a, k, c0, *t);
        worst_closed = worst_closed.max(rel(*c, want));
        assert!(rel(*c, want) < 1e-6, "t = {t} s: c = {c:e} M, closed form {want:e} M");
        if *t > 0.0 {
            let k_fit = (c0 / c).ln() / t;
            assert!(rel(k_fit, k1) < bound, "fitted k = {k_fit:e} /s vs {k1:e} /s");
        }
    }
    assert!(c[c.len() - 1] < 0.05 * c0);
    eprintln!("A -> B thin: max rel. dev. from exponential {worst_exp:.2e}, from closed form {worst_closed:.2e}");
}

#[test]
fn a_to_b_optically_thick_is_zero_order() {
    // A0 = 10, run until A ≈ 6. The rearranged closed form gives
    // c = c₀ − K t + (1/a) ln(1 + (1 − e^(−aKt)) 10^(−ε l (c₀ − K t))), so c exceeds the
    // straight line by at most 10^(−A)/a.
    let a0 = 10.0;
    let k = PHI_AB * Q0 / V_L;
    let c0 = a0 / (EPS_A * PATH_CM);
    let c_end = 6.0 / (EPS_A * PATH_CM);
    let until = (c0 - c_end) / k;
    let (times, c, a, _, _) = run_a_to_b(a0, until);
    let bound = 10f64.powf(-6.0) / (a * c_end) + 1e-8;
    let mut worst = 0.0f64;
    for (t, c) in times.iter().zip(&c) {
        let line = c0 - k * t;
        worst = worst.max(rel(*c, line));
        assert!(rel(*c, line) < bound, "t = {t} s: c = {c:e} M, c₀ − K t = {line:e} M");
        let want = closed_form_bisection(a, k, c0, *t);
        assert!(rel(*c, want) < 1e-6, "t = {t} s: c = {c:e} M, closed form {want:e} M");
    }
    // Nearly constant rate: the slope between the first and last outputs is −K, up to the
    // curvature 10^(−A_end)/a spread over the interval.
    let n = times.len() - 1;
    let slope = (c[n] - c[1]) / (times[n] - times[1]);
    let slope_bound = 10f64.powf(-6.0) / (a * k * (times[n] - times[1])) * 1.1 + 1e-9;
    assert!(rel(-slope, k) < slope_bound, "slope {slope:e} M/s vs −{k:e} M/s");
    eprintln!("A -> B thick: max relative deviation from the zero-order line {worst:.2e}");
}

// ---------------------------------------------------------------------------------------
// 2. A ⇌ B photoreversible pair, one line, no thermal step.
//
// Both absorb; species i takes q₀ g(A) ε_i l c_i, so d[A]/dt = (q₀ g(A) l / V)
// (−ε_A Φ_AB [A] + ε_B Φ_BA [B]) and at the photostationary state
// [B]/[A] = ε_A Φ_AB / (ε_B Φ_BA), whatever the optical density or background absorbance.
// Source: "photostationary state" as defined in S. E. Braslavsky (prepared for publication),
// Glossary of terms used in photochemistry, 3rd edition (IUPAC Recommendations 2006), Pure
// Appl. Chem. 79 (2007) 293 (authorship checked against the glossary's title page); the derivation as in Klán & Wirz, Photochemistry of Organic Compounds: From Concepts to
// Practice (Wiley, 2009), the section on photostationary states (`from memory`).
// ---------------------------------------------------------------------------------------

#[test]
fn photostationary_ratio() {
    let (eps_a, eps_b, phi_ab, phi_ba) = (8000.0, 3000.0, 0.25, 0.4);
    let want = eps_a * phi_ab / (eps_b * phi_ba);
    // Thin-ish (A ≈ 0.4) and thick (A ≈ 8) start; 60 or more relaxation times each.
    for (c0, until) in [("50 µM", 400.0), ("1 mM", 4000.0)] {
        let net = network(&format!(
            r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
background = 0.05
[[light]]
name = "violet"
kind = "line"
wavelength = "405 nm"
photon_flux = "0.1 µeinstein/s"
[[species]]
name = "A"
initial = "{c0}"
epsilon = {{ at = "405 nm", value = "{eps_a} L/(mol cm)" }}
[[species]]
name = "B"
epsilon = {{ at = "405 nm", value = "{eps_b} L/(mol cm)" }}
[[photo]]
equation = "A -> B"
quantum_yield = {phi_ab}
[[photo]]
equation = "B -> A"
quantum_yield = {phi_ba}
"#
        ));
        let (model, tr) = simulate(&net, &Run::bdf(until, 1e-18));
        let y = tr.last();
        let ratio = y[1] / y[0];
        eprintln!(
            "PSS from {c0}: [B]/[A] = {ratio:.12} vs {want:.12}, rel. error {:.2e}",
            rel(ratio, want)
        );
        assert!(rel(ratio, want) < 1e-8, "from {c0}: [B]/[A] = {ratio} vs {want}");
        assert!(rel(y[0] + y[1], model.initial[0]) < 1e-12, "mass balance");
    }
}

// ---------------------------------------------------------------------------------------
// 3. The photon ledger: incident = absorbed + background + transmitted.
//
// Conservation of photons in the well-stirred cell (`common practice`): every photon that
// enters is absorbed by a species, absorbed by solvent and vessel, or passes through.
// ---------------------------------------------------------------------------------------

fn bundled_networks() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut v: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("networks/ exists")
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    v.sort();
    v
}

#[test]
fn ledger_balances_on_bundled_networks() {
    let files = bundled_networks();
    assert!(files.len() >= 3, "bundled networks: {files:?}");
    for f in &files {
        let net = match network::load(f, &Overrides::none()) {
            Ok(n) => n,
            Err(e) => panic!("{}: {e}", f.display()),
        };
        let run = Run {
            until: 600.0,
            method: Method::Auto,
            rtol: 1e-8,
            atol: 1e-14,
            outputs: 20,
            log_time: false,
        };
        let (model, tr) = simulate(&net, &run);
        let mut worst = 0.0f64;
        for (t, y) in tr.times.iter().zip(&tr.states).skip(1) {
            let l = ledger::read(&model, &tr.layout, *t, y);
            assert!(
                l.incident > 0.0 && l.absorbed > 0.0,
                "{}: no photons at {t} s",
                f.display()
            );
            assert!(rel(l.incident, model.total_flux() * t) < 1e-12);
            worst = worst.max(l.balance_error);
            assert!(
                l.balance_error < 1e-9,
                "{} at {t} s: balance error {:e}",
                f.display(),
                l.balance_error
            );
            // Per source, recomputed from the parts.
            for s in &l.sources {
                let parts = s.absorbed.iter().sum::<f64>() + s.background + s.transmitted;
                assert!(rel(parts, s.incident) < 1e-9, "{}: source {}", f.display(), s.source);
            }
            for p in &l.products {
                let i = model.species_index(&p.species).expect("product is a species");
                let formed = (y[i] - model.initial[i]) * model.volume;
                assert!((p.formed - formed).abs() <= 1e-12 * formed.abs());
                if let Some(ppm) = p.photons_per_molecule {
                    assert!(
                        rel(ppm, l.absorbed / formed) < 1e-12,
                        "{}: photons per {}",
                        f.display(),
                        p.species
                    );
                    assert!(rel(p.apparent_quantum_yield.expect("both or neither") * ppm, 1.0) < 1e-12);
                }
            }
        }
        eprintln!(
            "{}: max balance error {worst:.2e} ({:?})",
            f.file_name().unwrap().to_string_lossy(),
            tr.method
        );
    }
}

#[test]
fn ledger_with_an_inner_filter() {
    // A -> B with Φ = 0.5; B absorbs more strongly than A and does nothing with its photons.
    let phi = 0.5;
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
background = 0.02
[[light]]
name = "UV"
kind = "line"
wavelength = "365 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "100 µM"
epsilon = { at = "365 nm", value = "4000 L/(mol cm)" }
[[species]]
name = "B"
epsilon = { at = "365 nm", value = "6000 L/(mol cm)" }
[[photo]]
equation = "A -> B"
quantum_yield = 0.5
"#,
    );
    // 10 mW at 365 nm in einstein/s from the CODATA 2018 exact h, c, N_A.
    let q0 = 10e-3 * 365e-9 / (6.022_140_76e23 * 6.626_070_15e-34 * 299_792_458.0);
    let (model, tr) = simulate(
        &net,
        &Run {
            outputs: 20,
            ..Run::bdf(120.0, 1e-16)
        },
    );
    assert!(rel(model.total_flux(), q0) < 1e-12, "{} vs {q0}", model.total_flux());
    let b = model.species_index("B").unwrap();
    assert!(model.products.contains(&b));
    let (mut worst_balance, mut worst_yield) = (0.0f64, 0.0f64);
    for (t, y) in tr.times.iter().zip(&tr.states).skip(1) {
        let l = ledger::read(&model, &tr.layout, *t, y);
        worst_balance = worst_balance.max(l.balance_error);
        assert!(l.balance_error < 1e-9, "at {t} s: balance error {:e}", l.balance_error);
        assert!(rel(l.incident, q0 * t) < 1e-12);
        let (by_a, by_b) = (&l.by_absorber[0], &l.by_absorber[1]);
        assert_eq!((by_a.species.as_str(), by_b.species.as_str()), ("A", "B"));
        // Every B comes from a photon absorbed by A, with yield Φ.
        let formed = (y[b] - model.initial[b]) * model.volume;
        worst_yield = worst_yield.max(rel(formed, phi * by_a.absorbed));
        assert!(
            rel(formed, phi * by_a.absorbed) < 1e-8,
            "at {t} s: formed {formed:e} mol vs Φ × absorbed by A"
        );
        assert!(rel(by_a.productive, phi * by_a.absorbed) < 1e-8);
        assert!(rel(by_a.returned, (1.0 - phi) * by_a.absorbed) < 1e-8);
        // Photons per product count every absorbed photon, the inner filter's too.
        let cost = l.products.iter().find(|p| p.species == "B").expect("B is a product");
        let ppm = cost.photons_per_molecule.expect("B formed");
        assert!(rel(ppm, (by_a.absorbed + by_b.absorbed) / formed) < 1e-12);
        assert!(ppm > 1.0 / phi, "the inner filter must cost photons: {ppm}");
        let wasted = l.sources[0].background + by_b.absorbed;
        assert!(rel(l.inner_filter.fraction, wasted / l.incident) < 1e-12);
    }
    // By the end B takes most of the light.
    let l = ledger::read(&model, &tr.layout, tr.times[tr.times.len() - 1], tr.last());
    assert!(l.by_absorber[1].absorbed > 0.3 * l.absorbed, "{l:?}");
    eprintln!(
        "inner filter: max balance error {worst_balance:.2e}, max rel. error formed vs Φ·absorbed {worst_yield:.2e}"
    );
}

// ---------------------------------------------------------------------------------------
// 4. Stern–Volmer quenching of a transient.
//
// substrate → S1 on absorption; S1 → product (k_r), S1 → substrate (k_d), and
// S1 + Q → substrate + Q (k_q). The excited state's fate is decided by competing rates, so
// the quantum yield of product is Φ = k_r / (k_r + k_d + k_q [Q]) and
// Φ₀/Φ = 1 + k_q τ₀ [Q] with τ₀ = 1/(k_r + k_d): IUPAC Compendium of Chemical Terminology
// (Gold Book), "Stern–Volmer kinetic relationships", doi:10.1351/goldbook.S06004, equation (2)
// (checked); the original paper, Stern & Volmer, Phys. Z. 20 (1919) 183 (`from memory`). With [Q] constant (a quencher is not consumed) part 1's closed form holds
// with Φ in place of Φ_AB, and in the thin limit the substrate decays first order with
// k = ln(10) Φ ε l q₀ / V.
// ---------------------------------------------------------------------------------------

fn quenched(q_molar: f64) -> String {
    format!(
        r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "laser"
kind = "line"
wavelength = "365 nm"
photon_flux = "0.05 µeinstein/s"
[[species]]
name = "substrate"
initial = "2e-10 M"
epsilon = {{ at = "365 nm", value = "5000 L/(mol cm)" }}
[[species]]
name = "product"
[[species]]
name = "Q"
initial = "{q_molar:e} M"
[[photo]]
absorber = "substrate"
excites = "S1"
[[transient]]
name = "S1"
kind = "excited"
channels = [
  {{ to = "product", rate = {{ k = "2e8 /s" }} }},
  {{ to = "substrate", rate = {{ k = "6e8 /s" }} }},
  {{ to = "substrate", quencher = "Q", rate = {{ k = "1e10 /(M s)" }} }},
]
"#
    )
}

#[test]
fn stern_volmer_quenching_in_the_thin_limit() {
    let (k_r, k_d, k_q) = (2e8, 6e8, 1e10);
    let c0 = 2e-10; // A0 = ε l c₀ = 1e-6
    let a0 = EPS_A * PATH_CM * c0;
    let bound = LN_10 * a0 / 2.0 + 1e-7; // as in part 1
    let mut k_fits = Vec::new();
    let quenchers = [0.0, 5e-3, 2e-2];
    for q in quenchers {
        let phi = k_r / (k_r + k_d + k_q * q);
        let k1 = LN_10 * phi * EPS_A * PATH_CM * Q0 / V_L;
        let net = network(&quenched(q));
        let (model, tr) = simulate(&net, &Run::bdf(60.0, 1e-23));
        let s = tr.series(0);
        let (a, k) = (EPS_A * PATH_CM * LN_10, phi * Q0 / V_L);
        let mut worst = 0.0f64;
        for (t, c) in tr.times.iter().zip(&s).skip(1) {
            let k_fit = (c0 / c).ln() / t;
            worst = worst.max(rel(k_fit, k1));
            assert!(
                rel(k_fit, k1) < bound,
                "[Q] = {q} M, t = {t} s: k = {k_fit:e} /s vs {k1:e} /s"
            );
            let want = closed_form_bisection(a, k, c0, *t);
            assert!(
                rel(*c, want) < 1e-6,
                "[Q] = {q} M, t = {t} s: {c:e} vs closed form {want:e}"
            );
        }
        // The quencher is not used up, and every substrate lost became product.
        let y = tr.last();
        assert_eq!(y[2], model.initial[2]);
        assert!((y[0] + y[1] - c0).abs() < 1e-12 * c0);
        eprintln!("Stern–Volmer [Q] = {q} M: Φ = {phi:.6}, max rel. error of the fitted rate {worst:.2e}");
        let n = tr.times.len() - 1;
        k_fits.push((c0 / s[n]).ln() / tr.times[n]);
    }
    // Stern–Volmer plot: Φ₀/Φ − 1 = k_q τ₀ [Q], read off the fitted rates.
    let tau0 = 1.0 / (k_r + k_d);
    for (q, k) in quenchers.iter().zip(&k_fits).skip(1) {
        let slope = (k_fits[0] / k - 1.0) / q;
        assert!(rel(slope, k_q * tau0) < 1e-5, "K_SV = {slope} /M vs {} /M", k_q * tau0);
    }
}

// ---------------------------------------------------------------------------------------
// 5. Random networks conserve carbon, photons, and positivity.
//
// Species i has formula C{n_i}; thermal steps are isomerisations between species of equal
// carbon count, associations i + j -> k with n_i + n_j = n_k and the reverse dissociations;
// photo steps are isomerisations and fragmentations that conserve carbon likewise. Then
// Σ n_i c_i is a linear invariant of the kinetics (`common practice`), exactly preserved by
// linear multistep and Runge–Kutta methods up to round-off and solver tolerances.
// ---------------------------------------------------------------------------------------

#[derive(Debug, Clone)]
struct RandomCase {
    n: usize,
    carbons: Vec<u32>,
    initial_mm: Vec<f64>,
    eps: Vec<(bool, f64, f64)>,
    thermal: Vec<(usize, f64)>,
    photo: Vec<(usize, f64)>,
    lights: Vec<(bool, f64, f64)>,
    background: f64,
}

fn random_case() -> impl Strategy<Value = RandomCase> {
    (
        2usize..=5,
        prop::collection::vec(1u32..=3, 5),
        prop::collection::vec(0.0f64..2.0, 5),
        prop::collection::vec((any::<bool>(), 0.0f64..20000.0, 0.0f64..20000.0), 5),
        prop::collection::vec((0usize..1000, -4.0f64..-1.0), 0..6),
        prop::collection::vec((0usize..1000, 0.0f64..1.0), 1..4),
        prop::collection::vec((any::<bool>(), 250.0f64..600.0, -9.0f64..-7.0), 1..=2),
        0.0f64..0.1,
    )
        .prop_map(
            |(n, mut carbons, mut initial_mm, eps, thermal, photo, lights, background)| {
                carbons[1] = carbons[0]; // at least one isomer pair
                initial_mm[0] += 0.1; // something to start from
                RandomCase {
                    n,
                    carbons,
                    initial_mm,
                    eps,
                    thermal,
                    photo,
                    lights,
                    background,
                }
            },
        )
}

/// A carbon-conserving step: (reactants, products), species indices.
type Step = (Vec<usize>, Vec<usize>);

/// An equation side: "S0", "2 S1", "S0 + S2".
fn side(ix: &[usize]) -> String {
    if ix.len() == 2 && ix[0] == ix[1] {
        format!("2 S{}", ix[0])
    } else {
        ix.iter().map(|i| format!("S{i}")).collect::<Vec<_>>().join(" + ")
    }
}

/// The network text of a random case.
fn random_network(c: &RandomCase) -> String {
    let n = c.n;
    let nc = &c.carbons[..n];
    // Carbon-conserving steps: (reactants, products).
    let mut uni: Vec<Step> = Vec::new(); // one reactant (thermal or photo)
    let mut bi: Vec<Step> = Vec::new(); // two reactants (thermal)
    for i in 0..n {
        for j in 0..n {
            if i != j && nc[i] == nc[j] {
                uni.push((vec![i], vec![j]));
            }
            for k in 0..n {
                if i <= j && nc[i] + nc[j] == nc[k] {
                    bi.push((vec![i, j], vec![k]));
                    uni.push((vec![k], vec![i, j]));
                }
            }
        }
    }
    let mut s = format!(
        "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"2 mL\"\npath_length = \"1 cm\"\nbackground = {}\n",
        c.background
    );
    for (li, (band, wl, lq)) in c.lights.iter().enumerate() {
        let shape = if *band {
            format!("kind = \"band\"\ncentre = \"{wl} nm\"\nfwhm = \"15 nm\"")
        } else {
            format!("kind = \"line\"\nwavelength = \"{wl} nm\"")
        };
        s += &format!(
            "[[light]]\nname = \"L{li}\"\n{shape}\nphoton_flux = \"{:e} einstein/s\"\n",
            10f64.powf(*lq)
        );
    }
    // Photo steps (index into `uni`), with each absorber's yields summing to at most 1.
    let photo: Vec<(&Step, f64)> = c.photo.iter().map(|(p, qy)| (&uni[p % uni.len()], *qy)).collect();
    let mut absorbs: Vec<bool> = c.eps[..n].iter().map(|e| e.0).collect();
    for ((r, _), _) in &photo {
        absorbs[r[0]] = true;
    }
    for i in 0..n {
        s += &format!(
            "[[species]]\nname = \"S{i}\"\ninitial = \"{} mM\"\nformula = \"C{}\"\n",
            c.initial_mm[i], nc[i]
        );
        if absorbs[i] {
            let (_, e1, e2) = c.eps[i];
            s += &format!(
                "epsilon = {{ wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[240, {e1}], [620, {e2}]] }}\n"
            );
        }
    }
    for (ti, (pick, lk)) in c.thermal.iter().enumerate() {
        let all = uni.len() + bi.len();
        let p = pick % all;
        let (step, k) = if p < uni.len() {
            (&uni[p], format!("{:e} /s", 10f64.powf(*lk)))
        } else {
            (&bi[p - uni.len()], format!("{:e} /(M s)", 10f64.powf(lk + 3.0)))
        };
        s += &format!(
            "[[thermal]]\nname = \"t{ti}\"\nequation = \"{} -> {}\"\nrate = {{ k = \"{k}\" }}\n",
            side(&step.0),
            side(&step.1)
        );
    }
    for (pi, ((r, p), qy)) in photo.iter().enumerate() {
        let count = photo.iter().filter(|((r2, _), _)| r2[0] == r[0]).count() as f64;
        s += &format!(
            "[[photo]]\nname = \"p{pi}\"\nequation = \"{} -> {}\"\nquantum_yield = {}\n",
            side(r),
            side(p),
            qy / count
        );
    }
    s
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn random_networks_conserve_carbon_and_photons(case in random_case()) {
        let text = random_network(&case);
        let net = network(&text);
        let run = Run { until: 200.0, method: Method::Auto, rtol: 1e-9, atol: 1e-15, outputs: 20, log_time: false };
        let (model, tr) = simulate(&net, &run);
        let nc: Vec<f64> = case.carbons[..case.n].iter().map(|&x| x as f64).collect();
        let carbon = |y: &[f64]| nc.iter().zip(y).map(|(n, c)| n * c).sum::<f64>();
        let c0 = carbon(&model.initial);
        let scale = model.initial.iter().cloned().fold(0.0, f64::max);
        for (t, y) in tr.times.iter().zip(&tr.states) {
            let err = (carbon(y) - c0).abs() / c0;
            prop_assert!(err < 1e-8, "carbon drifts by {:e} at {} s ({:?})\n{}", err, t, tr.method, text);
            let l = ledger::read(&model, &tr.layout, *t, y);
            prop_assert!(l.balance_error < 1e-9, "photon balance {:e} at {} s ({:?})\n{}\n{:?}", l.balance_error, t, tr.method, text, y);
            for (i, c) in y[..case.n].iter().enumerate() {
                prop_assert!(*c >= -1e-12 * scale, "S{} = {:e} M at {} s ({:?})\n{}", i, c, t, tr.method, text);
            }
        }
    }
}

// ---------------------------------------------------------------------------------------
// 6. The bundled photoswitch against an independent SciPy solution.
//
// tests/data/scipy_photoswitch.csv was written by scripts/scipy_reference.py, which
// re-implements the light bins, absorption and rates of networks/photoswitch.toml in Python
// and integrates with scipy.integrate.solve_ivp (Radau, rtol 1e-10, atol 1e-16). Radau IIA
// of order 5: Hairer & Wanner, Solving Ordinary Differential Equations II (Springer, 2nd
// ed., 1996), sections IV.5 and IV.8 (`from memory`). Reading the file needs no Python.
// ---------------------------------------------------------------------------------------

#[test]
fn photoswitch_matches_scipy_radau() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("tests/data/scipy_photoswitch.csv")).expect("reference CSV");
    let mut rows: Vec<[f64; 3]> = Vec::new();
    let mut header = None;
    for line in text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty()) {
        if header.is_none() {
            header = Some(line.to_string());
            continue;
        }
        let v: Vec<f64> = line.split(',').map(|x| x.trim().parse().expect("a number")).collect();
        rows.push([v[0], v[1], v[2]]);
    }
    assert_eq!(header.as_deref(), Some("time (s),E-azo (mol/L),Z-azo (mol/L)"));
    assert_eq!(rows.len(), 22);

    let net = network::load(&root.join("networks/photoswitch.toml"), &Overrides::none()).expect("loads");
    let run = Run {
        until: 7200.0,
        method: Method::Bdf,
        rtol: 1e-10,
        atol: 1e-16,
        outputs: 20,
        log_time: true,
    };
    let (model, tr) = simulate(&net, &run);
    let (e, z) = (
        model.species_index("E-azo").unwrap(),
        model.species_index("Z-azo").unwrap(),
    );
    assert_eq!(tr.times.len(), rows.len());
    let total = model.initial[e] + model.initial[z];
    let mut worst = 0.0f64;
    for (row, (t, y)) in rows.iter().zip(tr.times.iter().zip(&tr.states)) {
        assert!((t - row[0]).abs() <= 1e-12 * row[0], "output time {t} vs {}", row[0]);
        for (got, want, name) in [(y[e], row[1], "E"), (y[z], row[2], "Z")] {
            let err = (got - want).abs();
            if want != 0.0 {
                worst = worst.max(err / want.abs());
            }
            assert!(
                err <= 1e-6 * want.abs() + 1e-15 * total,
                "{name} at {t} s: {got:e} vs SciPy {want:e}"
            );
        }
    }
    // The run crossed the interesting part: from all-E to a photostationary mixture.
    assert!(rows[0][2] == 0.0 && rows[rows.len() - 1][2] > 0.3 * total);
    eprintln!("photoswitch vs SciPy Radau: max relative difference {worst:.2e}");
}
