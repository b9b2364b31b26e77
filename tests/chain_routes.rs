//! Loop-erased routes, transient lifetimes and the time in the excited manifold, against
//! hand-worked chains and the yields they must add up to.

mod common;

use common::SplitMix;
use photoledger::barrier;
use photoledger::chain::routes::{self, RouteOptions};
use photoledger::chain::{self, Chain, ChainOptions, Options, StateKind, lifetimes};
use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build as build_network};
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    build_network(&l, &Overrides::none()).expect("valid")
}

fn bundled(name: &str) -> Network {
    let path = format!("{}/networks/{name}", env!("CARGO_MANIFEST_DIR"));
    network(&std::fs::read_to_string(path).expect("bundled network"))
}

fn every_route() -> RouteOptions {
    RouteOptions {
        cover: 2.0,
        max_routes: usize::MAX,
        budget: 1_000_000,
        min_yield: 0.0,
    }
}

/// A ⇄ B with both leaking to the end E, each move 1/2, from A. The loop-erased routes are
/// [A, E] and [A, B, E]: every path A → B → E erases to the second and the walk restarts at A
/// on B → A, so P([A, B, E]) = (1/4) / (1 − 1/4) = 1/3 and P([A, E]) = 2/3 (worked by hand;
/// loop erasure as in Lawler, Intersections of Random Walks, 1991, ch. 7).
#[test]
fn two_state_loop_erased_routes_by_hand() {
    let mut c = Chain::default();
    let a = c.add_state("A", StateKind::Other, false, 1.0);
    let b = c.add_state("B", StateKind::Other, false, 1.0);
    let e = c.add_state("E", StateKind::Other, true, 0.0);
    c.add_move(a, b, 0.5, false);
    c.add_move(a, e, 0.5, false);
    c.add_move(b, a, 0.5, false);
    c.add_move(b, e, 0.5, false);
    let r = routes::routes(&c, &[1.0, 0.0, 0.0], &[e], &[1.0], &every_route()).expect("routes");
    let found = &r[0].routes;
    assert_eq!(found.len(), 2);
    assert_eq!(found[0].moves, vec![1]);
    assert!((found[0].probability - 2.0 / 3.0).abs() < 1e-14);
    assert_eq!(found[1].moves, vec![0, 3]);
    assert!((found[1].probability - 1.0 / 3.0).abs() < 1e-14);
    assert_eq!(r[0].stopped, "all");
}

/// Random chains (invented): every loop-erased route listed, their probabilities add up to
/// each end's yield from the absorbing analysis (the routes partition the molecules ending
/// there, `common practice` for a partition of events).
#[test]
fn every_route_listed_adds_up_to_each_yield_on_random_chains() {
    for seed in 0..40u64 {
        let mut g = SplitMix(seed);
        let n = 2 + (g.next() * 5.0) as usize;
        let mut c = Chain::default();
        for i in 0..n {
            c.add_state(&format!("s{i}"), StateKind::Other, false, 1.0);
        }
        let ends: Vec<usize> = (0..2)
            .map(|k| c.add_state(&format!("end{k}"), StateKind::Other, true, 0.0))
            .collect();
        for i in 0..n {
            let mut targets: Vec<usize> = (0..n + 2).filter(|_| g.next() < 0.5).collect();
            if !targets.iter().any(|&t| t >= n) {
                targets.push(n + (g.next() * 2.0) as usize % 2);
            }
            let w: Vec<f64> = targets.iter().map(|_| 0.1 + g.next()).collect();
            let sum: f64 = w.iter().sum();
            for (t, x) in targets.iter().zip(&w) {
                c.add_move(i, *t, x / sum, g.next() < 0.3);
            }
        }
        let mut start = vec![0.0; n + 2];
        start[0] = 1.0;
        start[n - 1] += 0.5;
        let a = chain::analyse(&c, &start, &Options::default()).expect("analysis");
        let r = routes::routes(&c, &start, &ends, &a.yields, &every_route()).expect("routes");
        for e in &r {
            let sum: f64 = e.routes.iter().map(|x| x.probability).sum();
            assert_eq!(e.stopped, "all");
            assert!(
                (sum - e.yield_fraction).abs() < 1e-10,
                "seed {seed}: routes {sum} against yield {}",
                e.yield_fraction
            );
            // most probable first
            assert!(e.routes.windows(2).all(|w| w[0].probability >= w[1].probability));
        }
    }
}

/// The bundled pool (invented): the top routes cover at least 99 % of the product's yield or
/// are ten, and what is left out is the yield less their sum; every route needs light, and a
/// window judges the condensation, the only thermal step on them.
#[test]
fn pool_routes_cover_the_yield_and_are_judged_against_a_window() {
    let net = bundled("prebiotic-pool.toml");
    let model = Model::compile(&net);
    let run = chain::run(&model, &net, &ChainOptions::default()).expect("chain");
    let an = &run.analysis;
    let r = routes::routes(
        &run.chain,
        &run.start,
        &an.absorbing,
        &an.yields,
        &RouteOptions::default(),
    )
    .expect("routes");
    let product = r
        .iter()
        .find(|e| run.chain.states[e.end].name == "product")
        .expect("product");
    assert!(product.covered >= 0.99 * product.yield_fraction || product.routes.len() == 10);
    assert!(product.covered <= product.yield_fraction + 1e-12);
    let all = routes::routes(&run.chain, &run.start, &an.absorbing, &an.yields, &every_route()).expect("all");
    let all = all.iter().find(|e| e.end == product.end).unwrap();
    let sum: f64 = all.routes.iter().map(|x| x.probability).sum();
    assert!((sum - product.yield_fraction).abs() < 1e-9, "{sum}");
    // the listed routes are the most probable of all of them, in order
    for (x, y) in product.routes.iter().zip(&all.routes) {
        assert!((x.probability - y.probability).abs() < 1e-12);
    }
    let verdicts = barrier::network_verdicts(&net, 3600.0, 0.5, None).expect("verdicts");
    for route in &product.routes {
        let j = routes::judge(&run.chain, &net, route, &verdicts);
        assert_eq!(j.verdict, "light");
        assert_eq!(j.photons, 2);
        assert!(j.excited.contains(&"adduct*".to_string()));
        assert_eq!(j.thermal.len(), 1);
        assert_eq!(j.thermal[0].0, "condensation");
    }
}

/// A product formed in the dark as well as by light (invented): A → P thermally over a barrier
/// and A → A* → P by light. Within a long window the dark route "could run on the ground
/// state"; within a short one it is "too slow"; the light route needs a photon whatever the
/// window.
const DARK_AND_LIGHT: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "100 L/(mol cm)" }
[[species]]
name = "P"
product = true
[[photo]]
name = "excite"
absorber = "A"
excites = "A*"
[[transient]]
name = "A*"
kind = "excited"
channels = [
  { to = "P", rate = { k = "1e9 /s" } },
  { to = "A", rate = { k = "3e9 /s" } },
]
[[thermal]]
name = "dark"
equation = "A -> P"
rate = { barrier = "22 kcal/mol" }
"#;

#[test]
fn a_dark_route_runs_on_the_ground_state_only_in_a_long_enough_window() {
    let net = network(DARK_AND_LIGHT);
    let model = Model::compile(&net);
    let run = chain::run(&model, &net, &ChainOptions::default()).expect("chain");
    let an = &run.analysis;
    let r = routes::routes(
        &run.chain,
        &run.start,
        &an.absorbing,
        &an.yields,
        &RouteOptions::default(),
    )
    .expect("routes");
    let end = &r[0];
    assert_eq!(end.routes.len(), 2);
    let judge = |window: f64| -> Vec<&'static str> {
        let v = barrier::network_verdicts(&net, window, 0.5, None).expect("verdicts");
        end.routes
            .iter()
            .map(|x| routes::judge(&run.chain, &net, x, &v).verdict)
            .collect()
    };
    // k = (k_B T / h) exp(−ΔG‡/RT) at 22 kcal/mol: 4.7e-4 /s, half-life about 25 min (Eyring,
    // `common practice`): within a day, not within a second
    let mut long = judge(86400.0);
    long.sort_unstable();
    assert_eq!(long, vec!["ground", "light"]);
    let mut short = judge(1.0);
    short.sort_unstable();
    assert_eq!(short, vec!["light", "too slow"]);

    // Lifetime of A*: 1/(1e9 + 3e9) s = 250 ps; every photon goes through A* once, so the time
    // in the excited manifold per photon absorbed is that lifetime.
    let l = lifetimes::lifetimes(&run.chain, &net, &an.visits);
    assert_eq!(l.transients.len(), 1);
    assert!((l.transients[0].lifetime.unwrap() - 2.5e-10).abs() < 1e-22);
    assert!((l.excited_time_per_photon.unwrap() - 2.5e-10).abs() < 1e-20);
    assert!((l.photons_into_transients.unwrap() - 1.0).abs() < 1e-12);
}

/// The pool's S1 (invented): lifetime 1/Σk over its three rate channels, as the file gives them.
#[test]
fn pool_excited_state_lifetime_is_one_over_the_sum_of_its_rates() {
    let net = bundled("prebiotic-pool.toml");
    let model = Model::compile(&net);
    let run = chain::run(&model, &net, &ChainOptions::default()).expect("chain");
    let l = lifetimes::lifetimes(&run.chain, &net, &run.analysis.visits);
    let t = net.transients.iter().position(|t| t.name == "adduct*").unwrap();
    let sum: f64 = net.transients[t]
        .channels
        .iter()
        .map(|c| match c.branching {
            photoledger::network::Branching::Rate { k, .. } => k,
            _ => 0.0,
        })
        .sum();
    let s = l.transients.iter().find(|x| x.name == "adduct*").unwrap();
    assert!((s.lifetime.unwrap() * sum - 1.0).abs() < 1e-12);
    assert!(s.excited);
    let hot = l.transients.iter().find(|x| x.name == "adduct-hot").unwrap();
    assert!(hot.lifetime.is_none() && !hot.excited);
    assert!(matches!(run.chain.states[s.state].kind, StateKind::Transient(_)));
}
