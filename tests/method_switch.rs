//! Which integrator runs where: the automatic choice on a problem that turns stiff after the
//! start, and the explicit method handing over to BDF mid-run without a jump in the
//! concentrations or the photon ledger.

// Reference values are copied digit for digit as published.
#![allow(clippy::excessive_precision)]
use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, Options, Trajectory, ledger};
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

fn run(model: &Model, until: f64, method: Method, rtol: f64, atol: f64, outputs: usize) -> Trajectory {
    let mut opts = Options::until(until);
    opts.method = method;
    opts.rtol = rtol;
    opts.atol = atol;
    opts.outputs = outputs;
    kinetics::simulate(model, &opts, &mut |_| {}).expect("integrates")
}

#[test]
fn automatic_choice_on_robertson_costs_at_most_twice_a_bdf_run() {
    // Default tolerances and output count, as `simulate` runs it.
    let model = Model::compile(&network(common::ROBERTSON));
    let auto = run(&model, 40.0, Method::Auto, 1e-6, 1e-12, 200);
    let bdf = run(&model, 40.0, Method::Bdf, 1e-6, 1e-12, 200);
    assert!(
        auto.counts.rhs <= 2 * bdf.counts.rhs,
        "automatic: {} right-hand sides, BDF alone: {} ({})",
        auto.counts.rhs,
        bdf.counts.rhs,
        auto.method_reason
    );
    // One stretch, the whole run, by BDF.
    assert_eq!(auto.segments.len(), 1, "{:?}", auto.segments);
    assert_eq!(auto.segments[0].method, Method::Bdf);
    assert_eq!((auto.segments[0].from, auto.segments[0].to), (0.0, 40.0));
    // rtol 1e-6 keeps the global error within about 1e-4 relative on this problem.
    let y = auto.last();
    for (i, (got, want)) in y.iter().zip(common::ROBERTSON_40).enumerate() {
        assert!((got - want).abs() <= 1e-4 * want, "y{} = {got} vs {want}", i + 1);
    }
}

#[test]
fn explicit_method_hands_over_to_bdf_where_robertson_turns_stiff() {
    let model = Model::compile(&network(common::ROBERTSON));
    // Default tolerances and output count, as `simulate --method dop853` runs it.
    let tr = run(&model, 40.0, Method::Dop853, 1e-6, 1e-12, 200);
    // Dop853 from 0 to where it found the problem stiff, BDF from there to the end.
    assert_eq!(tr.segments.len(), 2, "{:?}", tr.segments);
    let (a, b) = (tr.segments[0], tr.segments[1]);
    assert_eq!((a.method, b.method), (Method::Dop853, Method::Bdf));
    assert!(a.from == 0.0 && a.to > 0.0 && a.to < 40.0 && b.from == a.to && b.to == 40.0);
    assert_eq!(tr.method, Method::Bdf);
    assert!(tr.method_reason.contains("stiff at"), "{}", tr.method_reason);
    // Never restarted from t = 0, and handed over early: the explicit stretch and BDF's rest
    // cost a few hundred right-hand sides each, where Dop853 over the whole span costs
    // 17,918 steps and 228,882 right-hand sides.
    assert!(
        tr.counts.rhs < 2_000,
        "{} right-hand sides ({:?})",
        tr.counts.rhs,
        tr.segments
    );
    assert_eq!(a.rhs + b.rhs, tr.counts.rhs);
    let y = tr.last();
    for (i, (got, want)) in y.iter().zip(common::ROBERTSON_40).enumerate() {
        assert!((got - want).abs() <= 1e-4 * want, "y{} = {got} vs {want}", i + 1);
    }
}

/// Robertson's problem with its first step driven by light: y1 absorbs at 365 nm (ε 0.1
/// L mol⁻¹ cm⁻¹, so A = 0.1 at the start) and reacts with Φ = 1. Invented for this test.
const LIT_ROBERTSON: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
irradiated_area = "1 cm2"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "60 W"
[[species]]
name = "y1"
initial = "1 M"
epsilon = { at = "365 nm", value = "0.1 L/(mol cm)" }
[[species]]
name = "y2"
[[species]]
name = "y3"
[[photo]]
equation = "y1 -> y2"
quantum_yield = 1
[[thermal]]
equation = "2 y2 -> y2 + y3"
rate = { k = "3e7 /(M s)" }
[[thermal]]
equation = "y2 + y3 -> y1 + y3"
rate = { k = "1e4 /(M s)" }
"#;

#[test]
fn concentrations_and_photon_ledger_are_continuous_across_a_hand_over() {
    let model = Model::compile(&network(LIT_ROBERTSON));
    let until = 20.0;
    let tr = run(&model, until, Method::Dop853, 1e-9, 1e-15, 200);
    assert_eq!(tr.segments.len(), 2, "{:?}", tr.segments);
    let switch = tr.segments[0].to;
    assert!(switch > 0.0 && switch < until, "switch at {switch} s");
    // The reference: BDF alone at tighter tolerances, on the same output times.
    let reference = run(&model, until, Method::Bdf, 1e-12, 1e-18, 200);
    assert_eq!(tr.times, reference.times);
    let n = model.n_species();
    let mut before = false;
    let mut after = false;
    for k in 1..tr.times.len() {
        let t = tr.times[k];
        before |= t < switch;
        after |= t > switch;
        let (y, r) = (&tr.states[k], &reference.states[k]);
        for i in 0..n {
            assert!(
                (y[i] - r[i]).abs() <= 1e-6 * r[i].abs() + 1e-13,
                "{} at {t} s (switch at {switch} s): {} vs {}",
                model.species[i],
                y[i],
                r[i]
            );
        }
        // The ledger: the same photons as the reference at every output, before and after
        // the hand-over, and the balance incident = absorbed + background + transmitted.
        let l = ledger::read(&model, &tr.layout, t, y);
        let lr = ledger::read(&model, &reference.layout, t, r);
        assert!(l.balance_error < 1e-9, "balance {:e} at {t} s", l.balance_error);
        assert!(l.absorbed > 0.0);
        for (name, x, want) in [
            ("absorbed", l.absorbed, lr.absorbed),
            ("incident", l.incident, lr.incident),
            ("transmitted", l.sources[0].transmitted, lr.sources[0].transmitted),
        ] {
            assert!(
                (x - want).abs() <= 1e-7 * want.abs(),
                "{name} at {t} s (switch at {switch} s): {x:e} vs {want:e}"
            );
        }
    }
    assert!(before && after, "outputs on both sides of the switch at {switch} s");
}
