//! Actinometry checked against the standard ferrioxalate procedure and by round trips.
//!
//! The procedure (potassium ferrioxalate; Fe²⁺ complexed with 1,10-phenanthroline and read at
//! 510 nm): n(Fe²⁺) = ΔA · V_total / (ε₅₁₀ · l) · V_irradiated / V_aliquot, and the photon flux
//! q = n / (Φ · t · f). Source: Kuhn, Braslavsky & Schmidt, Chemical Actinometry (IUPAC
//! Technical Report), Pure Appl. Chem. 76 (2004) 2105–2146 (citation checked; the section
//! holding the ferrioxalate procedure `from memory`). Quantum yields: Lee & Seliger,
//! J. Chem. Phys. 40 (1964) 519, 1.26 ± 0.03 at 365/366 nm for 0.006 M (checked); Hatchard &
//! Parker, Proc. R. Soc. A 235 (1956) 518, 1.21 at 361–366 nm for 0.006 M (`from memory`).
//! ε(510 nm) of Fe(phen)₃²⁺ = 1.11e4 L mol⁻¹ cm⁻¹ (`from memory`).

use photoledger::kinetics::{self, Method, Options, ledger};
use photoledger::model::Model;
use photoledger::network::{self, Network, Overrides};
use photoledger::plan::actinometry::{self as act, Measured, Strength, YieldTable};
use std::path::Path;
use std::process::Command;

fn net(text: &str) -> Network {
    let loaded = photoledger::file::parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    network::build(&loaded, &Overrides::none()).expect("valid")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// An invented ferrioxalate actinometer network: the photo step gives Fe²⁺ and an oxalate
/// radical with Φ = 0.605; the radical reduces a second ferrioxalate fast, so 1.21 Fe²⁺ form per
/// photon absorbed (the Hatchard & Parker value at 365 nm, `from memory`). The cell absorbs only
/// part of the light (A ≈ 0.3), so the fraction absorbed matters.
const FERRIOXALATE_NETWORK: &str = r#"
[about]
name = "invented ferrioxalate actinometer"
description = "invented test network: ferrioxalate photoreduction with a fast secondary reduction"
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
photon_flux = "2.5e-9 einstein/s"
[[species]]
name = "ferrioxalate"
initial = "6 mM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 50], [400, 50]] }
[[species]]
name = "Fe2+"
[[species]]
name = "radical"
[[photo]]
name = "photoreduction"
equation = "ferrioxalate -> Fe2+ + radical"
quantum_yield = 0.605
[[thermal]]
equation = "radical + ferrioxalate -> Fe2+"
rate = { k = "1e9 /(M s)" }
"#;

#[test]
fn round_trip_simulated_actinometer_recovers_the_flux() {
    let n = net(FERRIOXALATE_NETWORK);
    let m = Model::compile(&n);
    let q = 2.5e-9;
    let t = 60.0;
    let mut o = Options::until(t);
    o.method = Method::Bdf;
    o.rtol = 1e-11;
    o.atol = 1e-18;
    let tr = kinetics::simulate(&m, &o, &mut |_| {}).unwrap();
    let y = tr.last();
    let fe = y[m.species_index("Fe2+").unwrap()] + y[m.species_index("radical").unwrap()];
    let led = ledger::read(&m, &tr.layout, t, y);
    let f = led.by_absorber[0].absorbed / led.incident;
    assert!(f > 0.3 && f < 0.6, "a partly absorbing cell: f = {f}");
    // The 510 nm reading: an aliquot of 0.5 mL made up to 10 mL, read in a 1 cm cuvette.
    let (v_irr, v_al, v_tot, l) = (3e-3, 0.5e-3, 10e-3, 0.01);
    let eps = act::EPSILON_510;
    let delta_a = eps * l * fe * v_al / v_tot;
    let (phi, _) = act::ferrioxalate_yield(YieldTable::HatchardParker1956, Strength::Dilute, 365e-9).unwrap();
    assert_eq!(
        phi.value, 1.21,
        "Hatchard & Parker 1956, 0.006 M, 361–366 nm (from memory)"
    );
    let r = act::ferrioxalate(&act::Ferrioxalate {
        delta_a: Measured::exact(delta_a),
        path: Measured::exact(l),
        v_irradiated: Measured::exact(v_irr),
        v_aliquot: Measured::exact(v_al),
        v_total: Measured::exact(v_tot),
        time: Measured::exact(t),
        wavelength: 365e-9,
        fraction_absorbed: Measured::exact(f),
        quantum_yield: phi,
        epsilon: Measured::exact(eps),
    })
    .unwrap();
    assert!(
        rel(r.photon_flux.value, q) < 1e-6,
        "recovered {} einstein/s, simulated at {q}",
        r.photon_flux.value
    );
}

#[test]
fn worked_example_from_the_standard_procedure() {
    // Built from the procedure's formula (Kuhn, Braslavsky & Schmidt 2004; section `from
    // memory`): 3.00 mL of 0.006 M actinometer irradiated 120 s at 365 nm, all light absorbed;
    // 0.500 mL taken, made up to 10.0 mL with phenanthroline and buffer; ΔA(510) = 0.600 in
    // 1 cm. Φ = 1.26 (Lee & Seliger 1964, checked), ε = 1.11e4 L mol⁻¹ cm⁻¹ (from memory).
    // By hand in the trade's units: c(Fe²⁺) in the flask = 0.600 / (11100 × 1) mol/L;
    // moles in the flask = c × 0.0100 L; moles irradiated = that × 3.00/0.500;
    // q = moles / (1.26 × 120 s).
    let c_flask = 0.600 / (11100.0 * 1.0);
    let moles = c_flask * 0.0100 * (3.00 / 0.500);
    let q_hand = moles / (1.26 * 120.0);
    let (phi, note) = act::ferrioxalate_yield(YieldTable::LeeSeliger1964, Strength::Dilute, 365e-9).unwrap();
    assert!(note.contains("Lee & Seliger"));
    let r = act::ferrioxalate(&act::Ferrioxalate {
        delta_a: Measured {
            value: 0.600,
            sigma: 0.006,
        },
        path: Measured::exact(0.01),
        v_irradiated: Measured::exact(3.00e-3),
        v_aliquot: Measured::exact(0.500e-3),
        v_total: Measured::exact(10.0e-3),
        time: Measured::exact(120.0),
        wavelength: 365e-9,
        fraction_absorbed: Measured::exact(1.0),
        quantum_yield: phi,
        epsilon: Measured::exact(act::EPSILON_510),
    })
    .unwrap();
    assert!(rel(r.moles.value, moles) < 1e-12);
    assert!(
        rel(r.photon_flux.value, q_hand) < 1e-12,
        "{} vs {q_hand}",
        r.photon_flux.value
    );
    // First-order propagation: 1 % on ΔA and 0.03/1.26 on Φ add in quadrature.
    let expect_rel = (0.01f64.powi(2) + (0.03f64 / 1.26).powi(2)).sqrt();
    assert!(rel(r.photon_flux.relative(), expect_rel) < 1e-12);
    // As power: q × N_A h c / λ (CODATA 2018 exact constants).
    let e = 6.02214076e23 * 6.62607015e-34 * 299792458.0 / 365e-9;
    assert!(rel(r.power.value, q_hand * e) < 1e-12);
}

#[test]
fn first_order_uncertainty_matches_finite_differences() {
    let base = act::Ferrioxalate {
        delta_a: Measured {
            value: 0.45,
            sigma: 0.005,
        },
        path: Measured {
            value: 0.01,
            sigma: 1e-5,
        },
        v_irradiated: Measured {
            value: 3e-3,
            sigma: 1e-5,
        },
        v_aliquot: Measured {
            value: 0.5e-3,
            sigma: 2e-6,
        },
        v_total: Measured {
            value: 10e-3,
            sigma: 2e-5,
        },
        time: Measured {
            value: 90.0,
            sigma: 0.5,
        },
        wavelength: 405e-9,
        fraction_absorbed: Measured {
            value: 0.97,
            sigma: 0.01,
        },
        quantum_yield: Measured {
            value: 1.14,
            sigma: 0.02,
        },
        epsilon: Measured {
            value: act::EPSILON_510,
            sigma: 1e4,
        },
    };
    let q = |m: &act::Ferrioxalate| act::ferrioxalate(m).unwrap().photon_flux.value;
    let q0 = q(&base);
    let mut var = 0.0;
    for i in 0..9 {
        let mut m = base;
        let field: &mut Measured = match i {
            0 => &mut m.delta_a,
            1 => &mut m.path,
            2 => &mut m.v_irradiated,
            3 => &mut m.v_aliquot,
            4 => &mut m.v_total,
            5 => &mut m.time,
            6 => &mut m.fraction_absorbed,
            7 => &mut m.quantum_yield,
            _ => &mut m.epsilon,
        };
        let (v, s) = (field.value, field.sigma);
        field.value = v * (1.0 + 1e-7);
        let d = (q(&m) - q0) / (v * 1e-7);
        var += (d * s).powi(2);
    }
    let r = act::ferrioxalate(&base).unwrap();
    assert!(
        rel(r.photon_flux.sigma, var.sqrt()) < 1e-5,
        "{} vs {}",
        r.photon_flux.sigma,
        var.sqrt()
    );
}

#[test]
fn network_route_recovers_a_known_flux_scale() {
    let n = net(FERRIOXALATE_NETWORK);
    let m = Model::compile(&n);
    let truth = 1.7;
    let times = [20.0, 60.0, 120.0, 240.0];
    let sp = m.species_index("ferrioxalate").unwrap();
    let conv = act::conversions(&m.with_light_scale(truth), sp, &times, 1e-11).unwrap();
    let data: Vec<(f64, f64)> = times.iter().cloned().zip(conv).collect();
    let fit = act::fit_flux(&m, sp, &data).unwrap();
    assert!(rel(fit.scale.value, truth) < 1e-6, "fitted {}", fit.scale.value);
    assert!(rel(fit.photon_flux.value, 2.5e-9 * truth) < 1e-6);
    assert!(fit.rss < 1e-20);
}

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_photoledger")
}

#[test]
fn light_block_pastes_into_a_network_file() {
    let dir = std::env::temp_dir().join(format!("photoledger-actinometry-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let out = Command::new(bin())
        .args([
            "actinometer",
            "ferrioxalate",
            "--delta-a",
            "0.600 ± 0.006",
            "--path",
            "1 cm",
            "--irradiated",
            "3.00 mL",
            "--aliquot",
            "0.500 ± 0.002 mL",
            "--total",
            "10.0 mL",
            "--time",
            "120 s",
            "--wavelength",
            "365 nm",
            "--yield-table",
            "lee-seliger",
            "--light-name",
            "UV lamp",
            "--out",
        ])
        .arg(&dir)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let block = std::fs::read_to_string(dir.join("light.toml")).unwrap();
    // Replace the network's [[light]] with the block and load it.
    let text = FERRIOXALATE_NETWORK.replace(
        "[[light]]\nname = \"line\"\nkind = \"line\"\nwavelength = \"365 nm\"\nphoton_flux = \"2.5e-9 einstein/s\"\n",
        &block,
    );
    assert!(text.contains("UV lamp"));
    let n = net(&text);
    let m = Model::compile(&n);
    let expect = 0.600 * 0.0100 / 11100.0 * 6.0 / (1.26 * 120.0);
    assert!(rel(m.total_flux(), expect) < 1e-6, "{} vs {expect}", m.total_flux());
    let js: serde_json::Value = serde_json::from_slice(&std::fs::read(dir.join("result.json")).unwrap()).unwrap();
    let sigma = js["result"]["photon_flux"]["sigma"].as_f64().unwrap();
    let expect_rel = (0.01f64.powi(2) + (0.002f64 / 0.5).powi(2) + (0.03f64 / 1.26).powi(2)).sqrt();
    assert!(rel(sigma / expect, expect_rel) < 1e-6);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn actinometer_bad_input_is_a_usage_error() {
    for (args, needle) in [
        (vec!["--wavelength", "600 nm"], "not 600 nm"),
        (
            vec!["--wavelength", "365 nm", "--yield-table", "other"],
            "--yield-table",
        ),
        (vec!["--wavelength", "365 mW"], "--wavelength"),
    ] {
        let out = Command::new(bin())
            .args([
                "actinometer",
                "ferrioxalate",
                "--delta-a",
                "0.5",
                "--irradiated",
                "3 mL",
                "--aliquot",
                "0.5 mL",
                "--total",
                "10 mL",
                "--time",
                "60 s",
            ])
            .args(&args)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert!(err.contains(needle), "{err}");
    }
}
