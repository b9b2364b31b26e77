//! Numbers flow down as typed values: once a fit or an uncertainty run is set up (keys parsed
//! once), its evaluations write values into the network without parsing a single key. Alone in
//! its test binary because the parse counter is global to the process.

use photoledger::file::{data, parse_text};
use photoledger::fit::mechanism::{Accuracy, FitOptions, Setup, fit};
use photoledger::network::{self, Overrides, params};
use photoledger::uncertainty::{Problem, Settings, Space};
use std::path::Path;

#[test]
fn fits_and_samples_parse_no_keys_per_evaluation() {
    // The three-parameter photoswitch fit on the bundled demo data.
    let net = network::load(Path::new("networks/photoswitch.toml"), &Overrides::none()).unwrap();
    let experiments = data::read(Path::new("demo-data/fit/experiments.toml")).unwrap();
    let free: Vec<String> = [
        "photo.E to Z.quantum_yield",
        "photo.Z to E.quantum_yield",
        "thermal.thermal Z to E.barrier",
    ]
    .map(String::from)
    .to_vec();
    let setup = Setup::new(&net, &experiments, &free, Accuracy::default()).unwrap();
    let before = params::parses();
    let r = fit(&setup, &FitOptions::default(), &|_| {}).unwrap();
    assert!(r.solution.evaluations > 5, "{}", r.solution.evaluations);
    assert_eq!(params::parses(), before, "a fit evaluation parsed a key");

    // Sampling the pool network's [[uncertain]] entries.
    let text = std::fs::read_to_string("networks/prebiotic-pool.toml").unwrap();
    let l = parse_text(Path::new("networks/prebiotic-pool.toml"), text).unwrap();
    let net = network::build(&l, &Overrides::none()).unwrap();
    let space = Space {
        independent: photoledger::network::uncertain::read(&l).unwrap(),
        fit: None,
    };
    let settings = Settings {
        chain: true,
        until: Some(86400.0),
        target: None,
    };
    let p = Problem::new(&net, space, settings).unwrap();
    let before = params::parses();
    let rec = p.record(7, 6, 0..6, &|| {});
    assert_eq!(rec.samples.len(), 6);
    assert_eq!(params::parses(), before, "an uncertainty sample parsed a key");
}
