//! The kinetics engine against outside references: stiff test problems with published
//! solutions, closed forms from textbooks, and the photostationary state.

// Reference values are copied digit for digit as published.
#![allow(clippy::excessive_precision)]
use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, Options};
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build};
use std::path::Path;

mod common;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}"),
    }
}

fn run(net: &Network, until: f64, method: Method, rtol: f64, atol: f64) -> kinetics::Trajectory {
    let model = Model::compile(net);
    let mut opts = Options::until(until);
    opts.method = method;
    opts.rtol = rtol;
    opts.atol = atol;
    opts.outputs = 10;
    kinetics::simulate(&model, &opts, &mut |_| {}).expect("integrates")
}

// Robertson's problem written as a thermal network. Note the IUPAC convention: for
// 2 y2 -> y2 + y3, d[y2]/dt = −k[y2]² (net coefficient −1) and d[y3]/dt = +k[y2]², which is
// exactly Robertson's −3e7 y2² and +3e7 y2².
#[test]
fn robertson_at_40_s() {
    // Enright & Pryce, ACM TOMS 13(1), 1987, stiff test set problem D2 (Robertson rescaled:
    // Y2 = 1e4 y2, Y3 = 100 y3): y(40) = (0.7158270687193941, 9.185534764557338e-6, 0.2841637457458413).
    let net = network(common::ROBERTSON);
    let tr = run(&net, 40.0, Method::Bdf, 1e-10, 1e-16);
    let y = tr.last();
    let want = common::ROBERTSON_40;
    for i in 0..3 {
        assert!(
            (y[i] - want[i]).abs() <= 1e-6 * want[i].abs(),
            "y{} = {} vs {}",
            i + 1,
            y[i],
            want[i]
        );
    }
}

#[test]
fn robertson_at_1e11_s() {
    // Mazzia & Magherini, Test Set for Initial Value Problem Solvers, release 2.4, University
    // of Bari, 2008, problem ROBER: y(1e11) = (2.083340149701255e-8, 8.333360770334713e-14,
    // 0.9999999791665050).
    let net = network(common::ROBERTSON);
    let mut opts = Options::until(1e11);
    opts.method = Method::Bdf;
    opts.rtol = 1e-10;
    opts.atol = 1e-20;
    opts.log_time = true;
    opts.outputs = 20;
    let model = Model::compile(&net);
    let tr = kinetics::simulate(&model, &opts, &mut |_| {}).unwrap();
    let y = tr.last();
    let want = [2.083340149701255e-8, 8.333360770334713e-14, 0.9999999791665050];
    for i in 0..3 {
        assert!(
            (y[i] - want[i]).abs() <= 1e-4 * want[i].abs(),
            "y{} = {:e} vs {:e}",
            i + 1,
            y[i],
            want[i]
        );
    }
}

#[test]
fn bateman_chain_and_both_integrators() {
    // A -> B -> C, first order: the Bateman closed form (Bateman, Proc. Cambridge Phil. Soc.
    // 15 (1910) 423): B(t) = A0 k1/(k2 − k1) (e^(−k1 t) − e^(−k2 t)).
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
[[species]]
name = "B"
[[species]]
name = "C"
[[thermal]]
equation = "A -> B"
rate = { k = "0.3 /s" }
[[thermal]]
equation = "B -> C"
rate = { k = "0.1 /s" }
"#,
    );
    let (k1, k2, a0) = (0.3f64, 0.1f64, 1e-3);
    // Global error allowance: BDF (order ≤ 5) at rtol 1e-9 keeps about 1e-7 of the scale;
    // Dop853 (order 8) much closer.
    for (method, tol) in [(Method::Bdf, 1e-7), (Method::Dop853, 1e-9)] {
        let tr = run(&net, 20.0, method, 1e-9, 1e-15);
        for (t, s) in tr.times.iter().zip(&tr.states) {
            let a = a0 * (-k1 * t).exp();
            let b = a0 * k1 / (k2 - k1) * ((-k1 * t).exp() - (-k2 * t).exp());
            assert!((s[0] - a).abs() < tol * a0, "{method:?} A at {t}: {} vs {a}", s[0]);
            assert!((s[1] - b).abs() < tol * a0, "{method:?} B at {t}: {} vs {b}", s[1]);
            assert!((s[0] + s[1] + s[2] - a0).abs() < 1e-12, "mass balance");
        }
    }
}

/// A femtosecond step beside a slow one (k1 = 1e15 /s, k2 = 1 /s), at the default tolerances:
/// diffsol's absolute smallest step (2.2e-16 s) stopped such a run at its start; the floor is
/// now relative to t. Against the Bateman closed form, as above.
#[test]
fn bateman_with_a_femtosecond_step_at_default_tolerances() {
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
[[species]]
name = "B"
[[species]]
name = "C"
[[thermal]]
equation = "A -> B"
rate = { k = "1e15 /s" }
[[thermal]]
equation = "B -> C"
rate = { k = "1 /s" }
"#,
    );
    let (k1, k2, a0) = (1e15f64, 1.0f64, 1e-3);
    let d = Options::until(1.0);
    let tr = run(&net, 5.0, Method::Bdf, d.rtol, d.atol);
    assert!(tr.times.last().is_some_and(|&t| t == 5.0), "stopped early");
    for (t, s) in tr.times.iter().zip(&tr.states).skip(1) {
        let b = a0 * k1 / (k2 - k1) * ((-k1 * t).exp() - (-k2 * t).exp());
        // rtol 1e-6 per step, a few hundred steps: 1e-4 of the scale
        assert!((s[1] - b).abs() < 1e-4 * a0, "B at {t}: {} vs {b}", s[1]);
        assert!(s[0].abs() < 1e-9, "A at {t}: {}", s[0]);
    }
}

#[test]
fn hires_at_321_8122() {
    // HIRES (Schäfer's plant photobiology model of light-induced growth responses, 8 species):
    // Mazzia & Magherini, Test Set for Initial Value Problem Solvers, release 2.4, University of
    // Bari, 2008, problem HIRES. Its linear terms are first-order steps here; the constant source
    // 0.0007 enters as S -> S + y1 with [S] = 1 M held constant; 280 y6 y8 is y6 + y8 -> y7.
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[species]]
name = "y1"
initial = "1 M"
[[species]]
name = "y2"
[[species]]
name = "y3"
[[species]]
name = "y4"
[[species]]
name = "y5"
[[species]]
name = "y6"
[[species]]
name = "y7"
[[species]]
name = "y8"
initial = "0.0057 M"
[[species]]
name = "S"
initial = "1 M"
[[thermal]]
equation = "S -> S + y1"
rate = { k = "0.0007 /s" }
[[thermal]]
equation = "y1 -> y2"
rate = { k = "1.71 /s" }
[[thermal]]
equation = "y2 -> y1"
rate = { k = "0.43 /s" }
[[thermal]]
equation = "y2 -> y4"
rate = { k = "8.32 /s" }
[[thermal]]
equation = "y3 -> y1"
rate = { k = "8.32 /s" }
[[thermal]]
equation = "y3 -> y4"
rate = { k = "1.71 /s" }
[[thermal]]
equation = "y4 -> y3"
rate = { k = "0.43 /s" }
[[thermal]]
equation = "y4 -> y6"
rate = { k = "0.69 /s" }
[[thermal]]
equation = "y5 -> y3"
rate = { k = "0.035 /s" }
[[thermal]]
equation = "y5 -> y6"
rate = { k = "1.71 /s" }
[[thermal]]
equation = "y6 -> y5"
rate = { k = "0.43 /s" }
[[thermal]]
equation = "y7 -> y5 + y8"
rate = { k = "0.43 /s" }
[[thermal]]
equation = "y7 -> y6 + y8"
rate = { k = "0.69 /s" }
[[thermal]]
equation = "y7 -> y8"
rate = { k = "0.69 /s" }
[[thermal]]
equation = "y6 + y8 -> y7"
rate = { k = "280 /(M s)" }
"#,
    );
    let tr = run(&net, 321.8122, Method::Bdf, 1e-11, 1e-15);
    let y = tr.last();
    let want = [
        0.7371312573325668e-3,
        0.1442485726316185e-3,
        0.5888729740967575e-4,
        0.1175651343283149e-2,
        0.2386356198831331e-2,
        0.6238968252742796e-2,
        0.2849998395185769e-2,
        0.2850001604814231e-2,
    ];
    for i in 0..8 {
        assert!(
            (y[i] - want[i]).abs() <= 1e-5 * want[i],
            "y{} = {:e} vs {:e}",
            i + 1,
            y[i],
            want[i]
        );
    }
}

#[test]
fn eyring_rate_and_photon_units_from_codata() {
    // CODATA 2018 exact constants: 1 W at 365 nm = 3.0512e-6 einstein/s; k_B T/h = 6.2124e12 /s
    // at 298.15 K (the Eyring rate at zero barrier).
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 W"
[[species]]
name = "A"
initial = "1 mM"
[[species]]
name = "B"
[[thermal]]
equation = "A -> B"
rate = { barrier = "0 kJ/mol" }
"#,
    );
    let q = net.lights[0].photon_flux();
    assert!((q - 3.0512e-6).abs() < 1e-4 * 3.0512e-6, "{q}");
    assert!(
        (net.thermal[0].k - 6.2124e12).abs() < 1e-4 * 6.2124e12,
        "{}",
        net.thermal[0].k
    );
}

#[test]
fn sparse_and_dense_linear_algebra_agree_on_a_generated_network() {
    // Same BDF method, two linear solvers (faer sparse LU on a coloured Jacobian, nalgebra
    // dense LU): the trajectories must agree to the tolerance (common practice).
    let text = photoledger::bench::large_network(
        photoledger::bench::Size {
            species: 80,
            steps: 300,
            absorbers: 8,
        },
        11,
    );
    let net = network(&text);
    let model = Model::compile(&net);
    let mut opts = Options::until(600.0);
    opts.method = Method::Bdf;
    opts.rtol = 1e-8;
    opts.atol = 1e-14;
    opts.outputs = 5;
    opts.sparse = Some(true);
    let a = kinetics::simulate(&model, &opts, &mut |_| {}).unwrap();
    opts.sparse = Some(false);
    let b = kinetics::simulate(&model, &opts, &mut |_| {}).unwrap();
    assert!(a.sparse && !b.sparse);
    let scale = model.initial.iter().cloned().fold(0.0, f64::max);
    for (x, y) in a.last().iter().zip(b.last()).take(model.n_species()) {
        assert!((x - y).abs() < 1e-6 * scale, "{x} vs {y}");
    }
}

#[test]
fn event_stops_at_the_half_life() {
    // First-order decay reaches half its start at t½ = ln 2 / k (common practice).
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[species]]
name = "A"
initial = "2 mM"
[[species]]
name = "B"
[[thermal]]
equation = "A -> B"
rate = { k = "0.01 /s" }
"#,
    );
    let model = Model::compile(&net);
    let mut opts = Options::until(1e4);
    opts.rtol = 1e-10;
    opts.atol = 1e-16;
    opts.event = Some(kinetics::Event {
        species: 0,
        level: 1e-3,
    });
    let tr = kinetics::simulate(&model, &opts, &mut |_| {}).unwrap();
    let kinetics::Stop::Event(t) = tr.stop else {
        panic!("no event: {:?}", tr.stop)
    };
    let want = std::f64::consts::LN_2 / 0.01;
    assert!((t - want).abs() < 1e-6 * want, "{t} vs {want}");
    assert!((tr.last()[0] - 1e-3).abs() < 1e-9, "{}", tr.last()[0]);
    assert_eq!(*tr.times.last().unwrap(), t);
}
