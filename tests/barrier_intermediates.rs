//! Barrier verdicts on steps whose reactants start at 0 M (intermediates formed during the run):
//! judged where the step runs fastest in a kinetics run, not given up on; factors print as
//! plain numbers.

use photoledger::barrier::{self, Outcome};
use photoledger::kinetics::{self, Trajectory};
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build};
use std::path::Path;
use std::process::Command;

fn flow() -> Network {
    let loaded = photoledger::file::load(Path::new("networks/flow-cyclization.toml")).expect("loads");
    build(&loaded, &Overrides::none()).expect("builds")
}

fn run(net: &Network, until: f64) -> Trajectory {
    let model = Model::compile(net);
    kinetics::simulate(&model, &kinetics::Options::until(until), &mut |_| {}).expect("integrates")
}

#[test]
fn an_intermediate_formed_during_the_run_gets_a_rate_and_a_time() {
    let net = flow();
    let window = 3600.0;
    // Without a run the oxidation of the dihydro intermediate (0 M at the start) has no rate.
    let alone = barrier::network_verdicts(&net, window, 0.5, None).unwrap();
    let ox = |rows: &[barrier::Verdict]| {
        rows.iter()
            .find(|r| r.name.starts_with("oxidation by iodine"))
            .cloned()
            .unwrap()
    };
    assert_eq!(ox(&alone).outcome(), Outcome::Undetermined);

    let tr = run(&net, window);
    let rows = barrier::network_verdicts(&net, window, 0.5, Some(&tr)).unwrap();
    let v = ox(&rows);
    let at = v.judged_at.clone().expect("judged at the concentrations reached");
    assert!(at.time > 0.0 && at.time <= window, "{at:?}");
    // The step's rate k [dihydro][I2] there is the largest over the run's output times.
    let (d, i2) = (
        net.species.iter().position(|s| s.name == "dihydro").unwrap(),
        net.species.iter().position(|s| s.name == "I2").unwrap(),
    );
    let k = 8.0; // the file's 8 /(M s)
    let largest = tr
        .states
        .iter()
        .map(|y| k * y[d].max(0.0) * y[i2].max(0.0))
        .fold(0.0, f64::max);
    assert!(
        (at.step_rate - largest).abs() <= 1e-12 * largest,
        "{} vs {largest}",
        at.step_rate
    );
    // Followed per dihydro (the limiting reactant there), the loss rate per molecule is the
    // pseudo-first-order k [I2] (mass action, IUPAC rate convention: `common practice`).
    let c_i2 = at.concentrations.iter().find(|(n, _)| n == "I2").unwrap().1;
    assert!(v.name.contains("[per dihydro]"), "{}", v.name);
    assert!((v.rate - k * c_i2).abs() < 1e-9 * v.rate, "{} vs {}", v.rate, k * c_i2);
    // 18 mM I2 or a little less: a half-life of seconds, well inside an hour.
    assert!(v.half_life > 4.0 && v.half_life < 10.0, "{}", v.half_life);
    assert_eq!(v.outcome(), Outcome::Crosses);
    let w = v.words();
    assert!(
        w.contains("judged where it runs fastest") && w.contains("dihydro") && w.contains("I2"),
        "{w}"
    );
    // Every step of the bundled network now has a verdict.
    assert!(rows.iter().all(|r| r.outcome() != Outcome::Undetermined));
}

#[test]
fn a_step_never_fed_stays_undetermined_and_says_why() {
    // B is never made, so A + B never runs: no rate over the whole run (invented network).
    let text = r#"
[about]
name = "never fed (invented)"
invented = true
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "10 mM"
[[species]]
name = "B"
[[species]]
name = "C"
[[thermal]]
name = "join"
equation = "A + B -> C"
rate = { k = "2 /(M s)" }
"#;
    let loaded = photoledger::file::parse_text(Path::new("net.toml"), text.into()).unwrap();
    let net = build(&loaded, &Overrides::none()).unwrap();
    let tr = run(&net, 60.0);
    let v = &barrier::network_verdicts(&net, 60.0, 0.5, Some(&tr)).unwrap()[0];
    assert_eq!(v.outcome(), Outcome::Undetermined);
    assert!(v.judged_at.is_none());
    assert!(
        v.words().contains("stays within the tolerance of zero"),
        "{}",
        v.words()
    );
}

#[test]
fn the_command_judges_intermediates_and_prints_factors_plainly() {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(["barrier", "networks/flow-cyclization.toml", "--window", "1 s"])
        .output()
        .expect("runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{text}");
    assert!(!text.contains("no rate at the start"), "{text}");
    let ox = text.lines().find(|l| l.starts_with("oxidation by iodine")).unwrap();
    assert!(
        ox.contains("too slow by a factor ") && ox.contains("judged where it runs fastest"),
        "{ox}"
    );
    // "too slow by a factor 4.869", never "4.869e0"
    let factor = ox
        .split("too slow by a factor ")
        .nth(1)
        .unwrap()
        .split(';')
        .next()
        .unwrap();
    assert!(!factor.contains('e') && factor.parse::<f64>().is_ok(), "{factor}");
    let ring = text.lines().find(|l| l.starts_with("dark ring opening")).unwrap();
    assert!(ring.ends_with("too slow by a factor 1211"), "{ring}");
}
