//! The absorbing-chain engine against outside references: the drunkard's walk of Grinstead &
//! Snell, the geometric law of a single photon cycle, the kinetics engine on the same network,
//! a seeded Monte Carlo of single molecules, and properties of random chains.

use photoledger::chain::build::{self, Light, Settings, Values};
use photoledger::chain::{self, Chain, Options, StateKind, analyse};
use photoledger::file::parse_text;
use photoledger::kinetics::{self, Method, ledger};
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build as build_network};
use proptest::prelude::*;
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build_network(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}\n--- network ---\n{text}"),
    }
}

fn rel(x: f64, want: f64) -> f64 {
    (x - want).abs() / want.abs()
}

fn from_state(chain: &Chain, i: usize) -> Vec<f64> {
    let mut s = vec![0.0; chain.states.len()];
    s[i] = 1.0;
    s
}

// ---------------------------------------------------------------------------------------
// 1. Grinstead & Snell, Introduction to Probability (AMS, 2nd rev. ed.), §11.2, Example 11.13:
// the drunkard's walk on 0..4, 0 and 4 absorbing, ±1 with probability 1/2.
// N = [[3/2, 1, 1/2], [1, 2, 1], [1/2, 1, 3/2]], t = (3, 4, 3), B = [[3/4, 1/4], [1/2, 1/2], [1/4, 3/4]].

#[test]
fn drunkards_walk_grinstead_snell_example_11_13() {
    let mut c = Chain::default();
    for i in 0..5 {
        // One time unit per step, so the mean time is the expected number of steps t.
        c.add_state(&i.to_string(), StateKind::Other, i == 0 || i == 4, 1.0);
    }
    for i in 1..4 {
        c.add_move(i, i - 1, 0.5, false);
        c.add_move(i, i + 1, 0.5, true); // steps to the right count as "photons"
    }
    let n_ref = [[1.5, 1.0, 0.5], [1.0, 2.0, 1.0], [0.5, 1.0, 1.5]];
    let t_ref = [3.0, 4.0, 3.0];
    let b_ref = [[0.75, 0.25], [0.5, 0.5], [0.25, 0.75]];
    for (row, start) in (1..4).enumerate() {
        let a = analyse(&c, &from_state(&c, start), &Options::default()).unwrap();
        for (col, want) in n_ref[row].iter().enumerate() {
            assert!((a.visits[col + 1] - want).abs() < 1e-12, "N[{row}][{col}]");
        }
        assert!((a.time_total - t_ref[row]).abs() < 1e-12, "t[{row}] = {}", a.time_total);
        assert_eq!(a.absorbing, vec![0, 4]);
        for (k, want) in b_ref[row].iter().enumerate() {
            assert!((a.yields[k] - want).abs() < 1e-12, "B[{row}][{k}]");
        }
        // Right steps taken before absorption, counted as photons: the mean over both ends is
        // Σ_j N_ij / 2 (half the moves are to the right) = t / 2.
        assert!((a.photons_total - t_ref[row] / 2.0).abs() < 1e-12);
        let d = a.distribution.as_ref().unwrap();
        let sum: f64 = d.p.iter().flatten().sum();
        assert!((1.0 - 1e-9..=1.0 + 1e-12).contains(&sum));
    }
}

// ---------------------------------------------------------------------------------------
// 2. A single cycle: each pass takes k photons and ends in product with probability p.
// Passes are geometric with mean 1/p (common practice), so photons N = k·passes:
// P(N = k j) = (1 − p)^(j−1) p, mean k/p, variance k²(1 − p)/p².

fn cycle(k: usize, p: f64) -> Chain {
    let mut c = Chain::default();
    for i in 0..k {
        c.add_state(&format!("S{i}"), StateKind::Other, false, 1.0);
    }
    let prod = c.add_state("P", StateKind::Other, true, 0.0);
    for i in 0..k - 1 {
        c.add_move(i, i + 1, 1.0, true);
    }
    c.add_move(k - 1, prod, p, true);
    c.add_move(k - 1, 0, 1.0 - p, true);
    c
}

#[test]
fn single_cycle_is_geometric() {
    for &(k, p) in &[(1usize, 0.3), (3, 0.05), (2, 0.9)] {
        let c = cycle(k, p);
        let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
        let kf = k as f64;
        assert!(rel(a.photons_mean[0].unwrap(), kf / p) < 1e-12);
        assert!(rel(a.photons_variance[0].unwrap(), kf * kf * (1.0 - p) / (p * p)) < 1e-10);
        // Passes: visits to S0 = 1/p.
        assert!(rel(a.visits[0], 1.0 / p) < 1e-12);
        let d = a.distribution.as_ref().unwrap();
        for (n, row) in d.p.iter().enumerate() {
            let want = if n > 0 && n % k == 0 {
                (1.0 - p).powi((n / k) as i32 - 1) * p
            } else {
                0.0
            };
            assert!((row[0] - want).abs() < 1e-14, "k={k} p={p} n={n}: {} vs {want}", row[0]);
        }
        assert!(d.tail <= 1e-9 && !d.truncated);
    }
}

const CELL: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 W"
"#;

/// The same cycle through the network file: A absorbs, A* gives B with fraction p, else A.
#[test]
fn single_cycle_through_a_network() {
    let p = 0.02;
    let net = network(&format!(
        "{CELL}{}",
        format_args!(
            r#"
[[species]]
name = "A"
initial = "10 µM"
epsilon = {{ at = "365 nm", value = "1000 L/(mol cm)" }}
[[species]]
name = "B"
[[photo]]
absorber = "A"
excites = "A*"
[[transient]]
name = "A*"
channels = [{{ to = "B", fraction = {p} }}, {{ to = "A", fraction = "rest" }}]
"#
        )
    ));
    let model = Model::compile(&net);
    let c = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
    let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
    let b = a.absorbing.iter().position(|&s| c.states[s].name == "B").unwrap();
    assert!(rel(a.photons_mean[b].unwrap(), 1.0 / p) < 1e-10);
    assert!(rel(a.photons_variance[b].unwrap(), (1.0 - p) / (p * p)) < 1e-8);
    assert!(rel(a.counted[0], (1.0 - p) / p) < 1e-10, "returns A* -> A: (1 − p)/p");
}

// ---------------------------------------------------------------------------------------
// 3. The kinetics engine on the same network (two independent methods). Unimolecular, no
// species with both a photochemical and a thermal exit, only chain species absorb, so the
// jump chain does not depend on the light intensity and the ensemble of the ODE is the chain's.

const TWO_STEP: &str = r#"
[[species]]
name = "A"
initial = "10 µM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }
[[species]]
name = "B"
epsilon = { at = "365 nm", value = "600 L/(mol cm)" }
[[species]]
name = "D"
[[species]]
name = "C"
[[species]]
name = "E"
[[photo]]
absorber = "A"
excites = "A*"
[[transient]]
name = "A*"
channels = [{ to = "B", fraction = 0.3 }, { to = "D", fraction = 0.1 }, { to = "A", fraction = "rest" }]
[[photo]]
equation = "B -> C"
quantum_yield = 0.2
[[thermal]]
equation = "D -> EXIT"
rate = { k = "0.5 /s" }
"#;

fn kinetics_vs_chain(d_goes_to: &str, products: &[&str]) {
    let text = format!("{CELL}{}", TWO_STEP.replace("EXIT", d_goes_to));
    let net = network(&text);
    let model = Model::compile(&net);
    let mut opts = kinetics::Options::until(3000.0);
    opts.method = Method::Bdf;
    opts.rtol = 1e-11;
    opts.atol = 1e-18;
    opts.outputs = 4;
    let tr = kinetics::simulate(&model, &opts, &mut |_| {}).expect("integrates");
    let y = tr.last();
    let led = ledger::read(&model, &tr.layout, *tr.times.last().unwrap(), y);
    let c = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
    let (start, _) = build::start(&model, &c, None).unwrap();
    let a = analyse(&c, &start, &Options::default()).unwrap();
    let a0 = model.initial[0];
    for name in products {
        let i = model.species_index(name).unwrap();
        let k = a.absorbing.iter().position(|&s| s == i).unwrap();
        assert!(
            rel(y[i] / a0, a.yields[k]) < 1e-6,
            "{name}: ODE {} chain {}",
            y[i] / a0,
            a.yields[k]
        );
        // Photons absorbed by everything per molecule of this product formed: the chain's
        // photons per molecule followed over its yield (= the conditional mean when one product).
        let cost = led.products.iter().find(|p| &p.species == name).unwrap();
        let ode = cost.photons_per_molecule.unwrap();
        let want = a.photons_total / a.yields[k];
        assert!(
            rel(ode, want) < 1e-6,
            "{name}: ODE {ode} chain {want} photons per molecule"
        );
        if products.len() == 1 {
            assert!(rel(ode, a.photons_mean[k].unwrap()) < 1e-6);
        }
    }
}

#[test]
fn kinetics_and_chain_agree_one_product() {
    // D -> B: every molecule ends as C. By hand (common practice for geometric passes):
    // from A, per photon P(leave) = 0.4, so 2.5 photons; from B, 1/0.2 = 5 photons; 7.5 in all.
    kinetics_vs_chain("B", &["C"]);
    let net = network(&format!("{CELL}{}", TWO_STEP.replace("EXIT", "B")));
    let model = Model::compile(&net);
    let c = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
    let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
    assert!(rel(a.photons_total, 7.5) < 1e-12, "{}", a.photons_total);
}

#[test]
fn kinetics_and_chain_agree_two_products() {
    // D -> E: ends C (3/4 of the molecules) and E (1/4).
    kinetics_vs_chain("E", &["C", "E"]);
}

// ---------------------------------------------------------------------------------------
// 4. Monte Carlo of single molecules (a third method): 10⁶ molecules through the same moves,
// seeded splitmix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number generators",
// OOPSLA 2014). Mean and variance of the photons per product within four standard errors.

mod common;
use common::SplitMix;

#[test]
fn monte_carlo_single_molecules() {
    let net = network(&format!("{CELL}{}", TWO_STEP.replace("EXIT", "E")));
    let model = Model::compile(&net);
    let c = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
    let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
    let mut out: Vec<Vec<(usize, f64, bool)>> = vec![Vec::new(); c.states.len()];
    for m in &c.moves {
        out[m.from].push((m.to, m.probability, m.photon));
    }
    let mut rng = SplitMix(20_260_401);
    let n = 1_000_000;
    let r = a.absorbing.len();
    let (mut cnt, mut s1, mut s2, mut s4) = (vec![0.0; r], vec![0.0; r], vec![0.0; r], vec![0.0; r]);
    let mut counts: Vec<Vec<f64>> = vec![Vec::new(); r];
    for _ in 0..n {
        let (mut s, mut photons) = (0usize, 0u64);
        while !c.states[s].absorbing {
            let u = rng.next();
            let mut acc = 0.0;
            let mut next = out[s].last().unwrap();
            for mv in &out[s] {
                acc += mv.1;
                if u < acc {
                    next = mv;
                    break;
                }
            }
            photons += u64::from(next.2);
            s = next.0;
        }
        let k = a.absorbing.iter().position(|&x| x == s).unwrap();
        let x = photons as f64;
        cnt[k] += 1.0;
        s1[k] += x;
        counts[k].push(x);
    }
    for k in 0..r {
        if cnt[k] == 0.0 {
            assert!(a.yields[k] < 1e-12);
            continue;
        }
        let mean = s1[k] / cnt[k];
        for x in &counts[k] {
            s2[k] += (x - mean).powi(2);
            s4[k] += (x - mean).powi(4);
        }
        let var = s2[k] / (cnt[k] - 1.0);
        let m4 = s4[k] / cnt[k];
        let se_mean = (var / cnt[k]).sqrt();
        let se_var = ((m4 - var * var) / cnt[k]).sqrt();
        let (want_m, want_v) = (a.photons_mean[k].unwrap(), a.photons_variance[k].unwrap());
        assert!(
            (mean - want_m).abs() < 4.0 * se_mean,
            "mean {mean} vs {want_m} ± {se_mean}"
        );
        assert!(
            (var - want_v).abs() < 4.0 * se_var,
            "variance {var} vs {want_v} ± {se_var}"
        );
        let y = cnt[k] / n as f64;
        let se_y = (a.yields[k] * (1.0 - a.yields[k]) / n as f64).sqrt();
        assert!((y - a.yields[k]).abs() < 4.0 * se_y, "yield {y} vs {}", a.yields[k]);
    }
}

// ---------------------------------------------------------------------------------------
// 5. Light models: in the optically thin limit the stirred cell's share of the light equals
// σ × photon irradiance when V = S l (common practice: Beer–Lambert to first order).

#[test]
fn thin_limit_matches_the_stirred_cell_at_low_absorbance() {
    let text = format!(
        "{}{}",
        CELL.replace(
            "path_length = \"1 cm\"",
            "path_length = \"1 cm\"\nirradiated_area = \"1 cm2\""
        ),
        TWO_STEP.replace("EXIT", "E").replace("10 µM", "1 nM")
    );
    let net = network(&text);
    let model = Model::compile(&net);
    let c = model.initial.clone();
    let st = build::absorption_rates(&model, &net, Light::Stirred, &c).unwrap();
    let th = build::absorption_rates(&model, &net, Light::Thin, &c).unwrap();
    for (x, y) in st.iter().flatten().zip(th.iter().flatten()) {
        assert!(rel(*x, *y) < 1e-4, "{x} vs {y}");
    }
    let no_area = network(&format!("{CELL}{}", TWO_STEP.replace("EXIT", "E")));
    let m2 = Model::compile(&no_area);
    assert!(build::absorption_rates(&m2, &no_area, Light::Thin, &m2.initial).is_err());
}

/// A molecule that can cycle forever is an error, not a panic or a wrong answer.
#[test]
fn a_closed_loop_without_an_end_is_reported() {
    let mut c = Chain::default();
    c.add_state("X", StateKind::Other, false, 1.0);
    c.add_state("Y", StateKind::Other, false, 1.0);
    c.add_state("P", StateKind::Other, true, 0.0);
    c.add_move(0, 1, 1.0, true);
    c.add_move(1, 0, 1.0, false);
    let e = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap_err();
    assert!(e.to_string().contains("cycle forever"), "{e}");
}

// ---------------------------------------------------------------------------------------
// 6. Properties of random chains: yields sum to one, visits are non-negative, the
// distribution sums to one minus at most the tail bound, and its mean is the exact mean.

fn random_chain(n: usize, r: usize, seed: u64) -> Chain {
    let mut rng = SplitMix(seed);
    let mut c = Chain::default();
    for i in 0..n + r {
        c.add_state(&format!("s{i}"), StateKind::Other, i >= n, 1.0 + rng.next());
    }
    for i in 0..n {
        // Always some way straight to an end, so every state reaches one.
        let w_end = 0.05 + 0.5 * rng.next();
        let mut ws = vec![(n + (rng.next() * r as f64) as usize % r, w_end, rng.next() < 0.5)];
        for _ in 0..1 + (rng.next() * 4.0) as usize {
            ws.push(((rng.next() * n as f64) as usize % n, rng.next(), rng.next() < 0.6));
        }
        let tot: f64 = ws.iter().map(|w| w.1).sum();
        for (to, w, ph) in ws {
            c.add_move(i, to, w / tot, ph);
        }
    }
    c
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn random_chains_are_consistent(n in 1usize..40, r in 1usize..5, seed in any::<u64>()) {
        let c = random_chain(n, r, seed);
        let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
        let ys: f64 = a.yields.iter().sum();
        prop_assert!((ys - 1.0).abs() < 1e-9, "yields sum {}", ys);
        prop_assert!(a.visits.iter().all(|&v| v >= 0.0));
        prop_assert!(a.photons_variance.iter().flatten().all(|&v| v >= 0.0));
        let d = a.distribution.as_ref().unwrap();
        let sum: f64 = d.p.iter().flatten().sum();
        prop_assert!(!d.truncated);
        prop_assert!((1.0 - 1e-9 - 1e-12..=1.0 + 1e-9).contains(&sum), "sum {}", sum);
        let mean: f64 = d.p.iter().enumerate().map(|(k, row)| k as f64 * row.iter().sum::<f64>()).sum();
        prop_assert!(mean <= a.photons_total * (1.0 + 1e-9) + 1e-12);
        prop_assert!((mean - a.photons_total).abs() < 1e-4 * a.photons_total.max(1.0), "{} vs {}", mean, a.photons_total);
    }
}

/// The bundled pool network: finite, sensible numbers end to end, including sensitivities.
#[test]
fn bundled_pool_network_runs() {
    let net = photoledger::network::load(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/prebiotic-pool.toml"),
        &Overrides::none(),
    )
    .unwrap();
    let model = Model::compile(&net);
    let settings = Settings::default();
    let c = build::build(&model, &net, &settings, &Values::of(&model, &net)).unwrap();
    let (start, _) = build::start(&model, &c, Some("adduct")).unwrap();
    let a = analyse(&c, &start, &Options::default()).unwrap();
    let ys: f64 = a.yields.iter().sum();
    assert!((ys - 1.0).abs() < 1e-9);
    let k = a.absorbing.iter().position(|&s| c.states[s].name == "product").unwrap();
    let m = a.photons_mean[k].unwrap();
    assert!(m > 2.0, "at least two photons per product: {m}");
    let d = a.distribution.as_ref().unwrap();
    let dm: f64 = d.p.iter().enumerate().map(|(n, row)| n as f64 * row[k]).sum::<f64>() / a.yields[k];
    assert!(rel(dm, m) < 1e-6, "distribution mean {dm} vs {m}");
    let s = chain::sensitivity::sensitivities(&model, &net, &settings, &start).unwrap();
    assert!(!s.is_empty());
    assert!(
        s.iter()
            .all(|x| x.elasticity_photons.iter().flatten().all(|e| e.is_finite()))
    );
}

/// At the bound: the photons per product of the single cycle are 1/(η p) for an efficiency η of
/// the excitation, so d ln(photons)/d ln η = −1 exactly (the geometric law of part 2). η = 1
/// cannot be stepped up, so the derivative is the one from below (a central difference clipped
/// at 1 would report half the value); the exact sensitivities give −1 to rounding, where the
/// one-sided difference of the reference was off by O(h). A bystander that absorbs with no photochemistry (an inner
/// filter) has no way out and must not stop the analysis.
#[test]
fn sensitivity_at_unit_efficiency_and_an_inert_absorber() {
    let p = 0.02;
    let net = network(&format!(
        "{CELL}{}",
        format_args!(
            r#"
[[species]]
name = "A"
initial = "10 µM"
epsilon = {{ at = "365 nm", value = "1000 L/(mol cm)" }}
[[species]]
name = "B"
[[species]]
name = "F"
initial = "10 µM"
epsilon = {{ at = "365 nm", value = "300 L/(mol cm)" }}
[[photo]]
name = "excitation"
absorber = "A"
excites = "A*"
[[transient]]
name = "A*"
channels = [{{ to = "B", fraction = {p} }}, {{ to = "A", fraction = "rest" }}]
"#
        )
    ));
    let model = Model::compile(&net);
    let settings = Settings::default();
    let c = build::build(&model, &net, &settings, &Values::of(&model, &net)).unwrap();
    let a = analyse(&c, &from_state(&c, 0), &Options::default()).unwrap();
    let b = a.absorbing.iter().position(|&s| c.states[s].name == "B").unwrap();
    assert!(rel(a.photons_mean[b].unwrap(), 1.0 / p) < 1e-10);
    let s = chain::sensitivity::sensitivities(&model, &net, &settings, &from_state(&c, 0)).unwrap();
    let eta = s.iter().find(|x| x.parameter.contains("\"excitation\"")).unwrap();
    let e = eta.elasticity_photons[b].unwrap();
    assert!((e + 1.0).abs() < 1e-10, "d ln photons / d ln η = {e}, want −1");
    // B is the only end reached: its yield is 1 whatever η is, and the derivative says 0, not
    // rounding.
    assert_eq!(eta.yield_derivative[b], 0.0);
    // The reference by differences agrees to O(h).
    let fd = chain::sensitivity::finite_differences(&model, &net, &settings, &from_state(&c, 0)).unwrap();
    let eta = fd.iter().find(|x| x.parameter.contains("\"excitation\"")).unwrap();
    assert!((eta.elasticity_photons[b].unwrap() + 1.0).abs() < 1e-3);
}

/// Two short-form photo steps of one absorber, A -> P1 with Φ₁ and A -> P2 with Φ₂ (the rest of
/// the photons return A): the molecule ends in P1 with probability Y₁ = Φ₁/(Φ₁ + Φ₂) (the
/// absorption probabilities of Grinstead & Snell §11.2 for this two-end chain), so
/// dY₁/dΦ₁ = Φ₂/(Φ₁ + Φ₂)². The sensitivity is shown per unit Φ₁ with the value Φ₁ itself, and
/// both returns of an excited state to the same species get their own labels.
#[test]
fn yield_sensitivity_is_per_unit_quantum_yield() {
    let (p1, p2) = (0.2, 0.3);
    let net = network(&format!(
        "{CELL}{}",
        format_args!(
            r#"
[[species]]
name = "A"
initial = "10 µM"
epsilon = {{ at = "365 nm", value = "1000 L/(mol cm)" }}
[[species]]
name = "P1"
[[species]]
name = "P2"
[[photo]]
name = "first"
equation = "A -> P1"
quantum_yield = {p1}
[[photo]]
name = "second"
equation = "A -> P2"
quantum_yield = {p2}
"#
        )
    ));
    let model = Model::compile(&net);
    let settings = Settings::default();
    let c = build::build(&model, &net, &settings, &Values::of(&model, &net)).unwrap();
    let start = from_state(&c, 0);
    let a = analyse(&c, &start, &Options::default()).unwrap();
    let e1 = a.absorbing.iter().position(|&s| c.states[s].name == "P1").unwrap();
    assert!(rel(a.yields[e1], p1 / (p1 + p2)) < 1e-12);
    let s = chain::sensitivity::sensitivities(&model, &net, &settings, &start).unwrap();
    let x = s.iter().find(|x| x.parameter.contains("\"first\"")).unwrap();
    assert!(x.parameter.starts_with("quantum yield"), "{}", x.parameter);
    assert!(rel(x.value, p1) < 1e-12, "shown {}", x.value);
    let want = p2 / ((p1 + p2) * (p1 + p2));
    // exact derivatives: to rounding (central differences were good to about 1e-8)
    assert!(
        rel(x.yield_derivative[e1], want) < 1e-12,
        "{} vs {want}",
        x.yield_derivative[e1]
    );
}

/// Every counted return of the bundled networks has its own label (an O₂-quenching return and
/// a decay return to the same species were both called "return S* -> S").
#[test]
fn counted_returns_have_distinct_labels() {
    for f in ["flow-cyclization", "prebiotic-pool", "photoswitch"] {
        let path = format!("{}/networks/{f}.toml", env!("CARGO_MANIFEST_DIR"));
        let loaded = photoledger::file::load(std::path::Path::new(&path)).unwrap();
        let net = photoledger::network::build(&loaded, &photoledger::network::Overrides::none()).unwrap();
        let model = Model::compile(&net);
        let c = build::build(&model, &net, &Settings::default(), &Values::of(&model, &net)).unwrap();
        let mut seen = std::collections::HashSet::new();
        for k in &c.counted {
            assert!(seen.insert(k.label.clone()), "{f}: {} twice", k.label);
        }
    }
}
