//! Runs that need many steps: an autocatalytic network followed over hours must reach its end
//! time (diffsol's own limit of 5,000 BDF steps stopped it at a quarter of the way), conserve
//! what its steps conserve, and agree with the explicit method along the run.

use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, Options, Trajectory};
use photoledger::model::Model;
use photoledger::network::{Overrides, build};
use std::path::Path;

/// A predator–prey oscillator in mass-action form (Lotka's autocatalytic scheme, A. J. Lotka,
/// "Analytical note on certain rhythmic relations in organic systems", PNAS 6, 410 (1920)):
/// A + X -> 2X, X + Y -> 2Y, Y -> P. Every step keeps the number of molecules, so
/// A + X + Y + P is constant. Started at the centre (X* = k₃/k₂ = 1 mM, Y* = k₁A/k₂ = 1 mM),
/// which moves as A is used up: X and Y follow it over hours, thousands of BDF steps.
/// (Started off the centre, BDF stops with "step size is too small" near 7,400 s: an open
/// problem, noted for the team.) Invented values.
const OSCILLATOR: &str = r#"
[about]
name = "oscillator"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 M"
[[species]]
name = "X"
initial = "1 mM"
[[species]]
name = "Y"
initial = "1 mM"
[[species]]
name = "P"
initial = "0 M"
[[thermal]]
equation = "A + X -> X + X"
rate = { k = "1 L/(mol s)" }
[[thermal]]
equation = "X + Y -> Y + Y"
rate = { k = "1000 L/(mol s)" }
[[thermal]]
equation = "Y -> P"
rate = { k = "1 /s" }
"#;

fn run(method: Method, rtol: f64) -> Trajectory {
    let l = parse_text(Path::new("oscillator.toml"), OSCILLATOR.to_string()).expect("parses");
    let model = Model::compile(&build(&l, &Overrides::none()).expect("builds"));
    let mut opts = Options::until(20_000.0);
    opts.method = method;
    opts.rtol = rtol;
    opts.atol = 1e-14;
    kinetics::simulate(&model, &opts, &mut |_| {}).expect("reaches the end time")
}

#[test]
fn an_autocatalytic_network_needing_thousands_of_steps_reaches_its_end_and_agrees_with_dop853() {
    let bdf = run(Method::Bdf, 1e-8);
    assert_eq!(*bdf.times.last().unwrap(), 20_000.0);
    assert!(
        bdf.counts.steps > 5_000,
        "{} steps: no longer a long run",
        bdf.counts.steps
    );
    let total0: f64 = bdf.states[0][..4].iter().sum();
    for y in &bdf.states {
        let total: f64 = y[..4].iter().sum();
        assert!(
            (total - total0).abs() <= 1e-9 * total0,
            "A + X + Y + P = {total} vs {total0}"
        );
    }
    // The explicit method on the same output times agrees along the whole run.
    let dop = run(Method::Dop853, 1e-10);
    assert_eq!(bdf.times, dop.times);
    for (k, (a, b)) in bdf.states.iter().zip(&dop.states).enumerate() {
        for (i, name) in ["A", "X", "Y", "P"].iter().enumerate() {
            let tol = (2e-3 * b[i].abs()).max(1e-9);
            assert!(
                (a[i] - b[i]).abs() <= tol,
                "{name} at {} s: BDF {} vs Dop853 {}",
                bdf.times[k],
                a[i],
                b[i]
            );
        }
    }
}
