//! Planning checked against closed forms and against `simulate`.
//!
//! Source of the closed forms: the Beer–Lambert law (absorbance A = ε c l; fraction absorbed
//! 1 − 10^−A), which for one absorber A → P with quantum yield Φ under a photon flux q into a
//! volume V gives dc/dt = −(Φ q / V)(1 − 10^(−ε l c)). With k = ε l ln 10 this integrates to
//!
//!   t(c) = (V / (Φ q)) · [ (c₀ − c) + (ln(1 − e^(−k c₀)) − ln(1 − e^(−k c))) / k ].
//!
//! Two limits follow (textbook photokinetics, `common practice`): optically thin (k c ≪ 1),
//! first order, t = ln(c₀/c) V / (Φ q k); totally absorbing (k c ≫ 1), zero order,
//! t = (c₀ − c) V / (Φ q). In both, t ∝ 1/q exactly when every step is photochemical (the
//! right-hand side is q times a function of c). What is tested:
//! - the plan's time equals t(c) above (thin and thick cells), to 1e-6 relative;
//! - time ∝ 1/power: doubling the power halves the time, to 1e-6 relative (thin cell);
//! - totally absorbing cell: the time to a fixed *amount* formed does not depend on c₀, and the
//!   time to a fixed *fraction* is proportional to c₀;
//! - `plan` agrees with `simulate` run to the reported time (the target met to the tolerance);
//! - the inverse (light for a given time) against t ∝ 1/q;
//! - the daily light schedule against a closed-form piecewise solution with a dark step;
//! - unreachable targets: a photostationary state and a product lost to a side reaction.

use photoledger::kinetics::{self, Options, Schedule};
use photoledger::model::Model;
use photoledger::network::{self, Network, Overrides};
use photoledger::plan::{self, PlanOptions, Why};
use std::path::Path;

fn net(text: &str) -> Network {
    let loaded = photoledger::file::parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    network::build(&loaded, &Overrides::none()).expect("valid")
}

/// A -> P under a 365 nm line, no background; ε of A in L/(mol cm), c₀ in mol/L, q in einstein/s.
fn a_to_p(eps: f64, c0: f64, q: f64, phi: f64) -> Model {
    Model::compile(&net(&format!(
        r#"
[about]
name = "invented A -> P"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "line"
kind = "line"
wavelength = "365 nm"
photon_flux = "{q} einstein/s"
[[species]]
name = "A"
initial = "{c0} M"
epsilon = {{ wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, {eps}], [400, {eps}]] }}
[[species]]
name = "P"
[[photo]]
equation = "A -> P"
quantum_yield = {phi}
"#
    )))
}

/// t(c) from the Beer–Lambert closed form above (V in L, ε in L/(mol cm), l = 1 cm).
fn closed_form(eps: f64, c0: f64, c: f64, q: f64, phi: f64, v: f64) -> f64 {
    let k = eps * 1.0 * std::f64::consts::LN_10;
    v / (phi * q) * ((c0 - c) + ((-(-k * c0).exp_m1()).ln() - (-(-k * c).exp_m1()).ln()) / k)
}

fn plan_time(m: &Model, target: &str) -> f64 {
    let t = plan::target::parse(target, m).expect("target");
    plan::time_to_target(m, &t, &PlanOptions::default())
        .expect("plans")
        .time
        .expect("reached")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn time_matches_beer_lambert_closed_form_thin_and_thick() {
    // Thin: A₀ = 10 × 1e-4 = 1e-3. Thick: A₀ = 5000 × 0.02 = 100.
    for (eps, c0) in [(10.0, 1e-4), (5000.0, 0.02), (300.0, 1e-3)] {
        let (q, phi) = (2e-8, 0.4);
        let m = a_to_p(eps, c0, q, phi);
        let t = plan_time(&m, "P > 60 %");
        let expect = closed_form(eps, c0, 0.4 * c0, q, phi, 3e-3);
        assert!(
            rel(t, expect) < 1e-6,
            "ε {eps}, c₀ {c0}: plan {t} s, Beer–Lambert closed form {expect} s"
        );
    }
}

#[test]
fn time_scales_as_one_over_power_in_thin_cell() {
    let m = a_to_p(10.0, 1e-4, 1e-8, 0.3);
    let t1 = plan_time(&m, "A < 20 %");
    let t2 = plan_time(&m.with_light_scale(2.0), "A < 20 %");
    let t10 = plan_time(&m.with_light_scale(10.0), "A < 20 %");
    assert!(rel(t2, t1 / 2.0) < 1e-6, "{t1} {t2}");
    assert!(rel(t10, t1 / 10.0) < 1e-6, "{t1} {t10}");
    // And the thin limit itself: t = ln(5) V / (Φ q k) within the thin-cell error (A₀ = 1e-3).
    let k = 10.0 * std::f64::consts::LN_10;
    let thin = 5f64.ln() * 3e-3 / (0.3 * 1e-8 * k);
    assert!(rel(t1, thin) < 2e-3, "{t1} vs thin limit {thin}");
}

#[test]
fn totally_absorbing_time_to_amount_is_independent_of_concentration() {
    // A₀ = 1e4 × c₀ × 1 cm ≥ 100 throughout: zero order, rate Φ q / V.
    let (q, phi) = (3e-8, 0.5);
    let ta = plan_time(&a_to_p(1e4, 0.01, q, phi), "P > 1 mM");
    let tb = plan_time(&a_to_p(1e4, 0.02, q, phi), "P > 1 mM");
    let zero_order = 1e-3 * 3e-3 / (phi * q);
    assert!(rel(ta, tb) < 1e-6, "{ta} vs {tb}");
    assert!(rel(ta, zero_order) < 1e-6, "{ta} vs zero order {zero_order}");
    // Time to a fixed fraction scales with c₀.
    let fa = plan_time(&a_to_p(1e4, 0.01, q, phi), "P > 50 %");
    let fb = plan_time(&a_to_p(1e4, 0.02, q, phi), "P > 50 %");
    assert!(rel(fb, 2.0 * fa) < 1e-6, "{fa} vs {fb}");
}

#[test]
fn plan_agrees_with_simulate_at_the_reported_time() {
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml")).unwrap();
    let n = network::build(
        &photoledger::file::parse_text(
            Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml")),
            text,
        )
        .unwrap(),
        &Overrides::none(),
    )
    .unwrap();
    let m = Model::compile(&n);
    let target = plan::target::parse("Z-azo > 20 µM", &m).unwrap();
    let p = plan::time_to_target(&m, &target, &PlanOptions::default()).unwrap();
    let t = p.time.expect("reached");
    let mut o = Options::until(t);
    o.rtol = 1e-10;
    o.atol = 1e-16;
    o.method = kinetics::Method::Bdf;
    let tr = kinetics::simulate(&m, &o, &mut |_| {}).unwrap();
    let z = tr.last()[m.species_index("Z-azo").unwrap()];
    assert!(rel(z, 20e-6) < 1e-6, "simulate gives {z} M at {t} s");
}

#[test]
fn light_for_a_given_time_follows_one_over_power() {
    let m = a_to_p(10.0, 1e-4, 1e-8, 0.3);
    let target = plan::target::parse("P > 50 %", &m).unwrap();
    let t1 = plan_time(&m, "P > 50 %");
    let want = 600.0;
    let s = plan::power_for_time(&m, &target, want, &PlanOptions::default())
        .unwrap()
        .unwrap();
    assert!(rel(s.scale, t1 / want) < 2e-6, "scale {} vs {}", s.scale, t1 / want);
    assert!(rel(s.plan.time.unwrap(), want) < plan::POWER_TOLERANCE);
}

/// A -> I by light (totally absorbing, zero order, rate r while lit), I -> P thermal (k).
/// Closed form per piece: lit: I' = r − k I; dark: I' = −k I; P = r × lit time − I.
fn scheduled_closed_form(r: f64, k: f64, lit: f64, level: f64) -> f64 {
    let (mut t, mut i, mut p) = (0.0f64, 0.0f64, 0.0f64);
    loop {
        for (len, on) in [(lit, true), (86400.0 - lit, false)] {
            let at = |s: f64| -> (f64, f64) {
                if on {
                    let ii = r / k + (i - r / k) * (-k * s).exp();
                    (ii, p + r * s - (ii - i))
                } else {
                    let ii = i * (-k * s).exp();
                    (ii, p + (i - ii))
                }
            };
            let (_, p_end) = at(len);
            if p_end >= level {
                let (mut lo, mut hi) = (0.0, len);
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if at(mid).1 >= level { hi = mid } else { lo = mid }
                }
                return t + 0.5 * (lo + hi);
            }
            let (ie, pe) = at(len);
            i = ie;
            p = pe;
            t += len;
        }
    }
}

#[test]
fn daily_schedule_matches_piecewise_closed_form_with_a_dark_step() {
    let n = net(r#"
[about]
name = "invented two-step"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[light]]
name = "line"
kind = "line"
wavelength = "365 nm"
photon_flux = "1e-9 einstein/s"
[[species]]
name = "A"
initial = "0.5 M"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 1000], [400, 1000]] }
[[species]]
name = "I"
[[species]]
name = "P"
[[photo]]
equation = "A -> I"
quantum_yield = 1
[[thermal]]
equation = "I -> P"
rate = { k = "2e-5 /s" }
"#);
    let m = Model::compile(&n);
    let target = plan::target::parse("P > 50 µM", &m).unwrap();
    let opts = PlanOptions {
        schedule: Some(Schedule::daily(6.0)),
        ..PlanOptions::default()
    };
    let p = plan::time_to_target(&m, &target, &opts).unwrap();
    let t = p.time.expect("reached");
    let expect = scheduled_closed_form(1e-9, 2e-5, 6.0 * 3600.0, 50e-6);
    assert!(rel(t, expect) < 1e-5, "plan {t} s, closed form {expect} s");
    // The dark hours matter: continuous light would need a different (shorter) clock time,
    // and light alone (no dark conversion) would need more lit time.
    let lit = Schedule::daily(6.0).lit_time(t);
    let cont = plan::time_to_target(&m, &target, &PlanOptions::default())
        .unwrap()
        .time
        .unwrap();
    assert!(
        lit < cont,
        "lit time {lit} s should be below the continuous-light time {cont} s"
    );
    // The ledger counts incident photons over lit time only.
    assert!(rel(p.dose.incident, 1e-9 * lit) < 1e-9);
}

#[test]
fn photostationary_state_is_reported_unreachable_with_its_level() {
    let n = net(r#"
[about]
name = "invented switch"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "line"
kind = "line"
wavelength = "365 nm"
photon_flux = "1e-8 einstein/s"
[[species]]
name = "E"
initial = "50 µM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 20000], [400, 20000]] }
[[species]]
name = "Z"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 5000], [400, 5000]] }
[[photo]]
equation = "E -> Z"
quantum_yield = 0.2
[[photo]]
equation = "Z -> E"
quantum_yield = 0.4
"#);
    let m = Model::compile(&n);
    // Photostationary [Z]/[E] = ε_E Φ_EZ / (ε_Z Φ_ZE) = 20000·0.2/(5000·0.4) = 2: Z = 33.3 µM
    // (IUPAC Glossary of terms used in photochemistry, 3rd ed., Pure Appl. Chem. 79 (2007) 293).
    let target = plan::target::parse("Z > 40 µM", &m).unwrap();
    let p = plan::time_to_target(&m, &target, &PlanOptions::default()).unwrap();
    assert!(p.time.is_none());
    let u = p.unreachable.unwrap();
    assert_eq!(u.why, Why::Photostationary);
    assert!(rel(u.final_level, 50e-6 * 2.0 / 3.0) < 1e-5, "{}", u.final_level);
    // The closest approach is dated when the level is 99 % of the way to the photostationary
    // state (common practice), not at the last creep of the approach: the plan's own time to
    // that level by root finding agrees (linear reading between output times, so 5 %).
    let level = 0.99 * u.best_level;
    let t99 = plan_time(&m, &format!("Z > {level:e} M"));
    assert!(rel(u.best_time, t99) < 0.05, "{} vs {t99}", u.best_time);
    assert!(u.best_time < 0.5 * u.horizon, "{} of {}", u.best_time, u.horizon);
    // The same network reaches 30 µM.
    assert!(plan_time(&m, "Z > 30 µM") > 0.0);
}

#[test]
fn product_lost_to_a_side_reaction_is_reported_with_its_peak() {
    let n = net(r#"
[about]
name = "invented loss"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "line"
kind = "line"
wavelength = "365 nm"
photon_flux = "1e-8 einstein/s"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 100], [400, 100]] }
[[species]]
name = "P"
[[species]]
name = "X"
[[photo]]
equation = "A -> P"
quantum_yield = 0.5
[[thermal]]
name = "decay"
equation = "P -> X"
rate = { k = "1e-3 /s" }
"#);
    let m = Model::compile(&n);
    let target = plan::target::parse("P > 90 %", &m).unwrap();
    let p = plan::time_to_target(&m, &target, &PlanOptions::default()).unwrap();
    assert!(p.time.is_none());
    let u = p.unreachable.unwrap();
    assert_eq!(u.why, Why::Exhausted);
    assert!(u.best_level < 0.9e-3 && u.best_level > 0.0);
    assert!(u.final_level < 1e-3 * u.best_level);
    assert_eq!(u.consumers[0].step, "decay");
}

#[test]
fn flow_tube_gives_residence_time_and_flow_rate() {
    let m = a_to_p(300.0, 1e-3, 1e-7, 0.5);
    let tube = plan::Tube {
        inner_diameter: 1e-3,
        length: 2.0,
    };
    let mt = tube.apply(&m);
    let target = plan::target::parse("P > 90 %", &mt).unwrap();
    let p = plan::time_to_target(&mt, &target, &PlanOptions::default()).unwrap();
    let f = plan::flow(&tube, &p, &mt).unwrap();
    // Batch over τ with path = ID = 0.1 cm, volume π (0.05 cm)² 200 cm = 1.5708 mL.
    let k_path = 0.1;
    let v = std::f64::consts::PI * 0.05f64.powi(2) * 200.0 / 1000.0;
    let kk = 300.0 * k_path * std::f64::consts::LN_10;
    let (c0, c) = (1e-3, 1e-4);
    let tau = v / (0.5 * 1e-7) * ((c0 - c) + ((-(-kk * c0).exp_m1()).ln() - (-(-kk * c).exp_m1()).ln()) / kk);
    assert!(rel(f.residence_time, tau) < 1e-6, "{} vs {tau}", f.residence_time);
    assert!(rel(f.flow_rate, v / tau) < 1e-6);
    assert!(rel(f.throughput, v / tau * 0.9e-3) < 1e-6);
}

#[test]
fn sweep_runs_in_order_and_reports_selectivity() {
    let m = a_to_p(10.0, 1e-4, 1e-8, 0.3);
    let target = plan::target::parse("P > 50 %", &m).unwrap();
    let jobs: Vec<_> = [1.0, 2.0, 4.0, 8.0]
        .iter()
        .map(|&s| (s, m.with_light_scale(s), target.clone()))
        .collect();
    let pts = plan::sweep(jobs, &PlanOptions::default());
    let t: Vec<f64> = pts.iter().map(|p| p.plan.as_ref().unwrap().time.unwrap()).collect();
    for (i, s) in [1.0, 2.0, 4.0, 8.0].iter().enumerate() {
        assert_eq!(pts[i].value, *s);
        assert!(rel(t[i], t[0] / s) < 1e-6);
        // A -> P alone: one P per A consumed (mass balance, common practice)
        let sel = pts[i].plan.as_ref().unwrap().products[0].selectivity.unwrap();
        assert!((sel - 1.0).abs() < 1e-9, "{sel}");
    }
}

#[test]
fn periodic_state_under_a_daily_schedule_is_found_unreachable() {
    // The switch above with a thermal Z -> E: under 6 sun-hours a day the state becomes periodic
    // (Z rises by day, falls by night) and never reaches 40 µM (above the photostationary 33 µM).
    let n = net(r#"
[about]
name = "invented switch with a dark return"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "line"
kind = "line"
wavelength = "365 nm"
photon_flux = "1e-8 einstein/s"
[[species]]
name = "E"
initial = "50 µM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 20000], [400, 20000]] }
[[species]]
name = "Z"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 5000], [400, 5000]] }
[[photo]]
equation = "E -> Z"
quantum_yield = 0.2
[[photo]]
equation = "Z -> E"
quantum_yield = 0.4
[[thermal]]
equation = "Z -> E"
rate = { k = "1e-4 /s" }
"#);
    let m = Model::compile(&n);
    let target = plan::target::parse("Z > 40 µM", &m).unwrap();
    let opts = PlanOptions {
        schedule: Some(Schedule::daily(6.0)),
        ..PlanOptions::default()
    };
    let p = plan::time_to_target(&m, &target, &opts).unwrap();
    let u = p.unreachable.expect("unreachable");
    assert_eq!(
        u.why,
        Why::Photostationary,
        "a periodic light-driven state, not the horizon"
    );
    assert!(
        u.best_level < 50e-6 * 2.0 / 3.0 && u.best_level > 20e-6,
        "{}",
        u.best_level
    );
    assert!(
        u.horizon < 1e4 * 86400.0,
        "found long before the horizon: {} s",
        u.horizon
    );
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(24))]
    /// Purely photochemical A -> P: time ∝ 1/power at any optical density (the right-hand side
    /// is q times a function of c; Beer–Lambert for the absorbed fraction), and the plan's time
    /// equals the closed form.
    #[test]
    fn one_over_power_and_closed_form_hold_for_random_cells(
        log_eps in 0.0f64..4.0, log_c in -5.0f64..-2.0, phi in 0.05f64..1.0, s in 0.1f64..10.0, f in 0.05f64..0.95
    ) {
        let (eps, c0, q) = (10f64.powf(log_eps), 10f64.powf(log_c), 1e-8);
        let m = a_to_p(eps, c0, q, phi);
        let target = format!("P > {} %", f * 100.0);
        let t1 = plan_time(&m, &target);
        let ts = plan_time(&m.with_light_scale(s), &target);
        proptest::prop_assert!(rel(ts, t1 / s) < 1e-6, "{} {}", t1, ts);
        let expect = closed_form(eps, c0, (1.0 - f) * c0, q, phi, 3e-3);
        proptest::prop_assert!(rel(t1, expect) < 1e-6, "{} vs {}", t1, expect);
    }
}

// A tube of twice the file's path doubles the background absorbance (Beer–Lambert: absorbance
// ∝ path for the solvent, common practice) along with the path and takes the tube's volume.
#[test]
fn flow_tube_scales_the_background_with_the_path() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/networks/flow-cyclization.toml");
    let loaded = photoledger::file::load(Path::new(dir)).unwrap();
    let m = Model::compile(&network::build(&loaded, &Overrides::none()).unwrap());
    let tube = plan::Tube {
        inner_diameter: 2.0 * m.path,
        length: 3.0,
    };
    let t = tube.apply(&m);
    assert!((t.path - 2.0 * m.path).abs() < 1e-15);
    assert!((t.volume - tube.volume_litres()).abs() < 1e-15);
    for (a, b) in t.background.iter().zip(&m.background) {
        assert!((a - 2.0 * b).abs() <= 1e-15 * b.abs().max(1.0), "{a} vs {b}");
    }
    assert!(m.background.iter().any(|b| *b > 0.0));
}

fn numeric_leaves(v: &serde_json::Value, path: String, out: &mut Vec<String>) {
    match v {
        serde_json::Value::Number(_) => out.push(path),
        serde_json::Value::Array(a) => {
            // a tuple of plain values is described as a whole ("power.sources[]")
            for x in a {
                if x.is_array() {
                    out.push(format!("{path}[]"));
                } else {
                    numeric_leaves(x, format!("{path}[]"), out);
                }
            }
        }
        serde_json::Value::Object(m) => {
            for (k, x) in m {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                numeric_leaves(x, p, out);
            }
        }
        _ => {}
    }
}

// Units written out at the edges (common practice for this project's outputs): every number in
// plan's summary.json has its unit in the `units` table, for the plain, --in, --wall-plug,
// --flow-tube, --sun-hours and --sweep answers.
#[test]
fn every_number_in_the_plan_json_has_a_unit() {
    let root = env!("CARGO_MANIFEST_DIR");
    let runs: [&[&str]; 6] = [
        &[
            "networks/photoswitch.toml",
            "--target",
            "Z-azo > 30 %",
            "--in",
            "10 min",
            "--wall-plug",
            "30 %",
        ],
        &[
            "networks/flow-cyclization.toml",
            "--target",
            "product > 80 %",
            "--flow-tube",
            "ID=1.6 mm, length=10 m",
        ],
        &[
            "networks/prebiotic-pool.toml",
            "--target",
            "closed > 20 %",
            "--sun-hours",
            "8",
        ],
        &[
            "networks/prebiotic-pool.toml",
            "--target",
            "product > 10 %",
            "--sun-hours",
            "8",
        ],
        &[
            "networks/photoswitch.toml",
            "--target",
            "Z-azo > 45 %",
            "--sweep",
            "power=5mW..200mW:3",
        ],
        &[
            "networks/flow-cyclization.toml",
            "--target",
            "product > 50 %",
            "--sweep",
            "concentration.substrate=1mM..20mM:3",
        ],
    ];
    for args in runs {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_photoledger"))
            .current_dir(root)
            .arg("plan")
            .args(args)
            .arg("--json")
            .arg("--out")
            .arg(std::env::temp_dir().join(format!("photoledger-plan-units-{}", std::process::id())))
            .output()
            .unwrap();
        // 0, or 5 for a target not reached (an answer, with its JSON).
        assert!(
            matches!(out.status.code(), Some(0 | 5)),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let units = v["units"].as_object().expect("a units table");
        let mut leaves = Vec::new();
        numeric_leaves(&v, String::new(), &mut leaves);
        assert!(leaves.len() > 10, "{args:?}: {leaves:?}");
        for leaf in leaves {
            // enum variants sit one level down: target.basis.YieldOf.fraction
            let key = match leaf.strip_prefix("target.basis.") {
                Some(rest) => format!("target.basis.*.{}", rest.rsplit('.').next().unwrap()),
                None => leaf.clone(),
            };
            assert!(units.contains_key(&key), "{args:?}: no unit for {leaf}");
        }
    }
}
