//! `plan --sweep` against single plans.
//!
//! Source: a sweep is defined as the single plan repeated at each swept value, everything else
//! as given (`common practice` for parameter studies). So each point of `plan::sweep::run`
//! must give the time to target of a separate `plan` of the network file with that value set
//! by `--set` (the network read from its file again, as a separate command run would). What is
//! tested, on the bundled photoswitch (`networks/photoswitch.toml`, invented):
//! - a temperature sweep at two points against `--set conditions.temperature=...`;
//! - a concentration sweep at two points against `--set species.E-azo.initial=...`
//!   (the target's level moves with the start, so it is re-read per point);
//! - a power sweep (all sources scaled together) at two points against `--set` of each LED's
//!   power in the file's 20 : 30 ratio;
//! - the points come back in the order of the values, with the values as parsed.
//!
//! Times are compared to 1e-9 relative: the same model integrated with the same options gives
//! the same numbers up to floating-point reassociation in the build.

use photoledger::model::Model;
use photoledger::network::{self, Overrides};
use photoledger::plan::{self, PlanOptions};
use std::path::{Path, PathBuf};

const TARGET: &str = "E-azo < 60 %";

fn file() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/photoswitch.toml")
}

/// The time to target of one separate plan with `set` overrides.
fn single(set: &[(&str, String)]) -> f64 {
    let items: Vec<String> = set.iter().map(|(k, v)| format!("{k}={v}")).collect();
    let ov = Overrides::parse(&items).expect("overrides");
    let net = network::load(&file(), &ov).expect("valid");
    let model = Model::compile(&net);
    let t = plan::target::parse(TARGET, &model).expect("target");
    plan::time_to_target(&model, &t, &PlanOptions::default())
        .expect("plan")
        .time
        .expect("reached")
}

/// The times of a sweep of `spec`, and its values.
fn sweep(spec: &str) -> Vec<(f64, f64)> {
    let loaded = photoledger::file::load(&file()).expect("reads");
    let net = network::build(&loaded, &Overrides::none()).expect("valid");
    let model = Model::compile(&net);
    let spec = plan::sweep::parse(spec, &net).expect("spec");
    let base = plan::sweep::Base {
        network: &net,
        model: &model,
    };
    let sw = plan::sweep::run(&base, &spec, TARGET, &|m| m, &PlanOptions::default()).expect("sweep");
    assert_eq!(sw.points.len(), spec.values.len());
    sw.points
        .iter()
        .zip(&spec.values)
        .map(|(p, v)| {
            assert_eq!(p.value, *v, "points keep the order of the values");
            let time = p.plan.as_ref().expect("plan").time.expect("reached");
            (p.value, time)
        })
        .collect()
}

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= 1e-9 * b.abs(),
        "{what}: sweep {a} s vs single plan {b} s"
    );
}

#[test]
fn temperature_sweep_matches_single_plans() {
    let pts = sweep("temperature=10°C..60°C:6");
    for &k in &[1usize, 4] {
        let (v, t) = pts[k];
        close(
            t,
            single(&[("conditions.temperature", format!("{v} K"))]),
            "temperature",
        );
    }
    // The thermal back reaction speeds up with temperature: the times differ along the sweep.
    assert!(pts[0].1 != pts[5].1);
}

#[test]
fn concentration_sweep_matches_single_plans() {
    let pts = sweep("concentration.E-azo=10µM..60µM:5");
    for &k in &[0usize, 3] {
        let (v, t) = pts[k];
        close(
            t,
            single(&[("species.E-azo.initial", format!("{v} M"))]),
            "concentration",
        );
    }
    // More absorber in the cell takes longer to convert the same fraction.
    assert!(pts[4].1 > pts[0].1);
}

#[test]
fn power_sweep_matches_single_plans_with_each_source_set() {
    // The file: UV LED 20 mW + blue LED 30 mW = 50 mW in all.
    let pts = sweep("power=50mW..500mW:3");
    for &k in &[0usize, 2] {
        let (v, t) = pts[k];
        let f = v / 0.05;
        let set = [
            ("light.UV LED.power", format!("{} mW", 20.0 * f)),
            ("light.blue LED.power", format!("{} mW", 30.0 * f)),
        ];
        close(t, single(&set), "power");
    }
}
