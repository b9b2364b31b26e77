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
/// Invented values.
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
    run_from(OSCILLATOR, method, rtol, 1e-14)
}

/// The oscillator started off its centre (X = 2 mM, Y = 0.5 mM): Y's troughs go far below any
/// tolerance (about 1e-16 M, under one molecule in the 3 mL), so each spike after them grows
/// from an unresolved value.
fn off_centre() -> String {
    OSCILLATOR
        .replace("name = \"X\"\ninitial = \"1 mM\"", "name = \"X\"\ninitial = \"2 mM\"")
        .replace("name = \"Y\"\ninitial = \"1 mM\"", "name = \"Y\"\ninitial = \"0.5 mM\"")
}

fn run_from(text: &str, method: Method, rtol: f64, atol: f64) -> Trajectory {
    let l = parse_text(Path::new("oscillator.toml"), text.to_string()).expect("parses");
    let model = Model::compile(&build(&l, &Overrides::none()).expect("builds"));
    let mut opts = Options::until(20_000.0);
    opts.method = method;
    opts.rtol = rtol;
    opts.atol = atol;
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

/// Off the centre, a negative undershoot of Y within the tolerance used to run X + Y -> 2Y
/// backwards, faster the further it went: BDF ran away to ±2.5e11 M near 7,410 s and stopped
/// with "step size is too small". With an autocatalyst's undershoot counted as zero in its own
/// formation (`model::Reaction::seen`) the run reaches its end, conserves A + X + Y + P, and as
/// the tolerances tighten its end state approaches the explicit method's (which keeps a small
/// decaying value positive); the run says that Y grew back from within its tolerance.
#[test]
fn an_autocatalyst_passing_within_the_tolerance_of_zero_does_not_run_away() {
    let text = off_centre();
    let dop = run_from(&text, Method::Dop853, 1e-10, 1e-18);
    let x_dop = dop.last()[1];
    let mut misses = Vec::new();
    for (rtol, atol) in [(1e-6, 1e-12), (1e-10, 1e-18)] {
        let bdf = run_from(&text, Method::Bdf, rtol, atol);
        assert_eq!(*bdf.times.last().unwrap(), 20_000.0, "rtol {rtol}: stopped early");
        let total0: f64 = bdf.states[0][..4].iter().sum();
        for y in &bdf.states {
            let total: f64 = y[..4].iter().sum();
            assert!(
                (total - total0).abs() <= 1e-9 * total0,
                "A + X + Y + P = {total} vs {total0}"
            );
            assert!(y[..4].iter().all(|&c| c > -1e3 * atol), "rtol {rtol}: {y:?}");
        }
        assert!(
            bdf.regrowth.iter().any(|r| r.species == "Y"),
            "rtol {rtol}: Y grew back from within its tolerance and the run did not say so"
        );
        misses.push((bdf.last()[1] - x_dop).abs() / x_dop);
    }
    // Measured: X at the end 995 µM at rtol 1e-6 (Dop853 at rtol 1e-10: 972 µM), 978 µM at
    // rtol 1e-10, atol 1e-18.
    assert!(
        misses[0] < 0.1 && misses[1] < 0.02,
        "X at the end vs Dop853: {misses:?}"
    );
    assert!(
        misses[1] < misses[0],
        "tighter tolerances did not come closer: {misses:?}"
    );
    // The centre start never comes near zero: nothing to say.
    assert!(run(Method::Bdf, 1e-8).regrowth.is_empty());
}

/// The same runaway through a photochemical step: prey X made from itself by light (X -> 2X,
/// Φ = 1), eaten by Y (X + Y -> 2Y), Y decaying. Without the floor on a photo-autocatalyst
/// BDF stopped at 47 s ("step size is too small"); now it reaches its end, keeps every
/// concentration above −1,000 × atol and says that X or Y grew back from within the tolerance.
/// Invented values.
#[test]
fn a_photo_autocatalyst_passing_within_the_tolerance_of_zero_does_not_run_away() {
    let text = r#"
[about]
name = "photo predator prey"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
name = "UV LED"
kind = "band"
centre = "365 nm"
fwhm = "12 nm"
power = "20 mW"
[[species]]
name = "X"
initial = "1 µM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[330, 10000], [400, 10000]] }
[[species]]
name = "Y"
initial = "100 µM"
[[species]]
name = "W"
initial = "0 M"
[[photo]]
name = "X grows in light"
equation = "X -> 2 X"
quantum_yield = 1
[[thermal]]
equation = "X + Y -> 2 Y"
rate = { k = "1e5 L/(mol s)" }
[[thermal]]
equation = "Y -> W"
rate = { k = "0.5 /s" }
"#;
    let l = parse_text(Path::new("photo.toml"), text.to_string()).expect("parses");
    let model = Model::compile(&build(&l, &Overrides::none()).expect("builds"));
    let mut opts = Options::until(300.0);
    opts.method = Method::Bdf;
    let tr = kinetics::simulate(&model, &opts, &mut |_| {}).expect("reaches the end time");
    assert_eq!(*tr.times.last().unwrap(), 300.0);
    for y in &tr.states {
        assert!(y[..3].iter().all(|&c| c > -1e3 * opts.atol), "{y:?}");
    }
    assert!(
        !tr.regrowth.is_empty(),
        "X or Y grew back from within the tolerance unsaid"
    );
}
