//! The chain's exact sensitivities (one factorisation, adjoint solves, ∂N = N ∂Q N) against
//! central finite differences through the chain construction (`finite_differences`, which
//! rebuilds and refactorises the chain at p(1 ± h)), on the bundled networks and on random
//! small networks. Central differences agree with the derivative to O(h²) (common practice),
//! so with h = 1e-4 they are a reference to about 1e-8 relative.

use photoledger::chain::build::{self, Settings, Values};
use photoledger::chain::sensitivity::{STEP, Sensitivity, finite_differences, sensitivities};
use photoledger::chain::{Options, analyse};
use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build as build_network};
use proptest::prelude::*;

mod common;
use common::random_network;
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build_network(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}\n--- network ---\n{text}"),
    }
}

/// Compare the exact sensitivities with the finite differences, parameter by parameter and end
/// by end, as dimensionless numbers (d yield / d ln p and d ln photons / d ln p): within `rel`
/// of the larger, or `abs` plus the rounding of the differences. That rounding is about
/// ε κ / h, κ the condition of I − Q, which grows with the expected visits V (a molecule going
/// round a cycle a thousand times makes each yield good to about 1000 ε): 20 ε V / h is allowed,
/// divided by the yield for the photons (M = m/B). Ends with a yield below 1e-6 are left out.
/// Parameters at an upper bound, where the reference is one-sided (O(h) from below), are held
/// to `rel_bound`.
fn agree(
    what: &str,
    model: &Model,
    net: &Network,
    start: &[f64],
    rel: f64,
    rel_bound: f64,
    abs: f64,
) -> Result<usize, String> {
    let settings = Settings::default();
    let exact = sensitivities(model, net, &settings, start).map_err(|e| e.to_string())?;
    let fd = finite_differences(model, net, &settings, start).map_err(|e| e.to_string())?;
    let params = build::parameters(model, net);
    let chain = build::build(model, net, &settings, &Values::of(model, net)).unwrap();
    let mut s = start.to_vec();
    s.resize(chain.states.len(), 0.0);
    let base = analyse(&chain, &s, &Options::default()).unwrap();
    if exact.len() != fd.len() {
        return Err(format!("{what}: {} exact vs {} differences", exact.len(), fd.len()));
    }
    let visits: f64 = base.visits.iter().sum::<f64>().max(1.0);
    let noise = 20.0 * f64::EPSILON * visits / STEP;
    let close = |a: f64, b: f64, rel: f64, floor: f64| (a - b).abs() <= rel * a.abs().max(b.abs()) + abs + floor;
    let mut checked = 0;
    for (x, y) in exact.iter().zip(&fd) {
        assert_eq!(x.parameter, y.parameter);
        let p = params.iter().find(|p| p.label == x.parameter).unwrap();
        let tol = if p.value * (1.0 + STEP) <= p.upper {
            rel
        } else {
            rel_bound
        };
        for k in 0..base.yields.len() {
            if base.yields[k] < 1e-6 {
                continue;
            }
            let (a, b) = (x.value * x.yield_derivative[k], y.value * y.yield_derivative[k]);
            if !close(a, b, tol, noise) {
                return Err(format!(
                    "{what}: d yield({}) / d ln [{}]: exact {a:e}, differences {b:e}",
                    chain.states[base.absorbing[k]].name, x.parameter
                ));
            }
            if let (Some(a), Some(b)) = (x.elasticity_photons[k], y.elasticity_photons[k]) {
                if !close(a, b, tol, noise / base.yields[k]) {
                    return Err(format!(
                        "{what}: d ln photons({}) / d ln [{}]: exact {a:e}, differences {b:e}",
                        chain.states[base.absorbing[k]].name, x.parameter
                    ));
                }
                checked += 1;
            } else if x.elasticity_photons[k].is_some() != y.elasticity_photons[k].is_some() {
                return Err(format!("{what}: photons defined for one only ({})", x.parameter));
            }
            barrier_agrees(what, x, y, k, tol, abs + 2.0 * noise)?; // per kcal/mol: × 1/RT ≈ 1.7
            checked += 1;
        }
    }
    Ok(checked)
}

fn barrier_agrees(what: &str, x: &Sensitivity, y: &Sensitivity, k: usize, rel: f64, abs: f64) -> Result<(), String> {
    let (Some(a), Some(b)) = (&x.yield_per_barrier, &y.yield_per_barrier) else {
        return if x.yield_per_barrier.is_some() == y.yield_per_barrier.is_some() {
            Ok(())
        } else {
            Err(format!("{what}: barrier for one only ({})", x.parameter))
        };
    };
    if (a[k] - b[k]).abs() <= rel * a[k].abs().max(b[k].abs()) + abs {
        Ok(())
    } else {
        Err(format!(
            "{what}: d yield / d barrier [{}]: {} vs {}",
            x.parameter, a[k], b[k]
        ))
    }
}

/// Every bundled network, from its initial mixture: exact = finite differences.
#[test]
fn bundled_networks_agree_with_finite_differences() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    files.sort();
    let mut done = 0;
    for f in files {
        let Ok(net) = photoledger::network::load(&f, &Overrides::none()) else {
            continue;
        };
        let model = Model::compile(&net);
        let Ok(chain) = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)) else {
            continue;
        };
        if !chain.stuck().is_empty() {
            continue; // no end: `ledger` refuses these
        }
        let Ok((start, _)) = build::start(&model, &chain, None) else {
            continue;
        };
        let n = agree(&f.display().to_string(), &model, &net, &start, 1e-6, 1e-3, 1e-9).unwrap();
        assert!(n > 0, "{}: nothing compared", f.display());
        done += 1;
    }
    assert!(done >= 3, "only {done} bundled networks have a chain");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]
    /// Random small networks: every exact sensitivity equals the central difference to 1e-6.
    #[test]
    fn random_networks_agree_with_central_differences(seed in any::<u64>(), from_s1 in any::<bool>()) {
        let text = random_network(seed);
        let net = network(&text);
        let model = Model::compile(&net);
        let chain = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
        prop_assert!(chain.stuck().is_empty(), "{}", text);
        let (start, _) = build::start(&model, &chain, Some(if from_s1 { "S1" } else { "S0" })).unwrap();
        let n = agree("random", &model, &net, &start, 1e-6, 1e-6, 1e-10);
        prop_assert!(n.is_ok(), "{}\n--- network ---\n{}", n.unwrap_err(), text);
        prop_assert!(n.unwrap() > 10);
    }
}

/// `bench --write` writes the generated network as a file `ledger` reads, and `ledger` on it
/// reports a sensitivity for every rate constant and quantum yield, found exactly (the method
/// note in `summary.json` says so; it named finite differences before).
#[test]
fn ledger_on_a_written_generated_network() {
    let bin = env!("CARGO_BIN_EXE_photoledger");
    let dir = std::env::temp_dir().join(format!("photoledger-chain-sens-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let run = |args: &[&str]| {
        let o = std::process::Command::new(bin)
            .args(args)
            .current_dir(&dir)
            .output()
            .unwrap();
        assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8_lossy(&o.stdout).into_owned()
    };
    let said = run(&[
        "bench",
        "--write",
        "gen.toml",
        "--species",
        "60",
        "--steps",
        "200",
        "--absorbers",
        "5",
    ]);
    assert!(said.contains("gen.toml"), "{said}");
    let net = photoledger::network::load(&dir.join("gen.toml"), &Overrides::none()).unwrap();
    assert_eq!((net.species.len(), net.thermal.len(), net.photo.len()), (60, 200, 5));
    run(&["ledger", "gen.toml", "--out", "out"]);
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("out/summary.json")).unwrap()).unwrap();
    let method = summary["sensitivity_method"].as_str().unwrap();
    assert!(method.starts_with("exact derivatives"), "{method}");
    assert_eq!(summary["sensitivities"].as_array().unwrap().len(), 205);
    let _ = std::fs::remove_dir_all(&dir);
}

/// Each number the chain's sensitivities are taken to names the network parameter it is: the
/// key `--set`, `--free` and `[[uncertain]]` take reads back the same value (a rate constant,
/// the rate constant a barrier gives, a fraction, the mean quantum yield of a scaled spectrum),
/// on every bundled network and on random ones; only a hot channel's computed share and a share
/// given by trajectory counts have none.
#[test]
fn every_sensitivity_parameter_names_its_network_key() {
    use photoledger::network::params::{self, Key, RateField};
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut texts: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .map(|p| std::fs::read_to_string(p).unwrap())
        .collect();
    texts.extend((0..8).map(random_network));
    let mut keyed = 0;
    for text in texts {
        let Ok(l) = parse_text(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/x.toml").as_path(),
            text,
        ) else {
            continue;
        };
        let Ok(net) = build_network(&l, &Overrides::none()) else {
            continue;
        };
        let model = Model::compile(&net);
        for p in build::parameters(&model, &net) {
            let Some(key) = p.key else {
                assert!(
                    matches!(p.slot, build::Slot::Channel(t, c)
                        if matches!(net.transients[t].channels[c].branching, photoledger::network::Branching::Hot { .. })
                            || net.evidence.counts_of(t).is_some()),
                    "{} has no key",
                    p.label
                );
                continue;
            };
            let read = match key {
                Key::Rate {
                    at,
                    field: RateField::Barrier,
                } => {
                    params::get(
                        &net,
                        Key::Rate {
                            at,
                            field: RateField::K,
                        },
                    )
                    .value
                }
                k => params::get(&net, k).value,
            };
            let want = match p.slot {
                build::Slot::YieldFactor(_) => p.shown_per_unit,
                _ => p.value,
            };
            assert!(
                (read - want).abs() <= 1e-12 * want.abs(),
                "{} ({}): key reads {read}, the chain uses {want}",
                p.label,
                key.spell(&net)
            );
            assert_eq!(Key::parse(&net, &key.spell(&net)), Ok(key));
            keyed += 1;
        }
    }
    assert!(keyed > 40, "only {keyed} keys checked");
}
