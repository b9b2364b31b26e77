//! The fit's Jacobian from forward sensitivities of the kinetics, checked against central
//! differences of the residuals (each column four full integrations, extrapolated) on every bundled network
//! and on the bundled fit data; and the three-parameter photoswitch fit reaching the same
//! optimum with at least four times fewer integrations than differences need.
//!
//! Reference: the variational equations of an ODE (Hairer, Nørsett and Wanner, Solving
//! Ordinary Differential Equations I, 2nd ed., 1993, §I.14); central differences as the
//! independent check (common practice).

use photoledger::file::data::{self, Experiment, Point};
use photoledger::fit::mechanism::{Accuracy, Derivatives, FitOptions, Setup, fit};
use photoledger::model::Model;
use photoledger::network::{self, Overrides, params};
use proptest::prelude::*;
use std::path::{Path, PathBuf};

mod common;

/// The reference's integration settings: a hundred times tighter than a fit's. Differences of
/// two runs carry each run's global error divided by the step; at the fit's own rtol 1e-10 a
/// random network's plain run was off by 3.4e-6 relative in one species (global error, not the
/// local tolerance), which moved one difference slope by 3 % while the sensitivities (whose
/// own error control forces shorter steps) matched the tight runs to 4e-6.
const REFERENCE: Accuracy = Accuracy {
    rtol: 1e-12,
    atol: 1e-18,
};

/// Central differences of the residuals in the natural parameters, Richardson-extrapolated
/// from relative steps 2e-3 and 1e-3 (error O(h⁴); smaller steps drown in the integrator's
/// own noise: at 1e-5 a slope of −163.07 came out as −163.25, at 1e-6 as −148.7), each run
/// at [`REFERENCE`] accuracy.
struct Differences {
    /// The extrapolated slopes, `slopes[j][i]` = ∂r_i/∂θ_j.
    slopes: Vec<Vec<f64>>,
    /// How far the two step sizes' slopes lie apart, entry by entry: the reference's own
    /// error. Where a parameter barely moves a residual, the difference of two runs is the
    /// runs' global error over the step (seen: slopes of 3.5e-8 and −3.7e-7 at the two steps
    /// for an exact 3.1e-9, in a column whose largest entry is 3.0e-4).
    spread: Vec<Vec<f64>>,
}

fn differences(fitted: &Setup, keys: &[String], x: &[f64]) -> Differences {
    let setup = Setup::new(&fitted.base, fitted.experiments, keys, REFERENCE).unwrap();
    let slope = |j: usize, h: f64| -> Vec<f64> {
        let (mut up, mut down) = (x.to_vec(), x.to_vec());
        up[j] += h;
        down[j] -= h;
        let (a, b) = (setup.residuals(&up).unwrap(), setup.residuals(&down).unwrap());
        a.iter().zip(&b).map(|(a, b)| (a - b) / (2.0 * h)).collect()
    };
    let (mut slopes, mut spread) = (Vec::new(), Vec::new());
    for (j, v) in x.iter().enumerate() {
        let h = 2e-3 * v.abs();
        let (wide, narrow) = (slope(j, h), slope(j, h / 2.0));
        slopes.push(narrow.iter().zip(&wide).map(|(n, w)| (4.0 * n - w) / 3.0).collect());
        spread.push(narrow.iter().zip(&wide).map(|(n, w)| (n - w).abs()).collect());
    }
    Differences { slopes, spread }
}

/// Each column of `exact` agrees with the differences within `rel` of the column's largest
/// entry, plus twice the differences' own spread for that entry (a real error in the
/// sensitivities moves both step sizes alike, so it is not hidden by this), plus what the
/// integrator's absolute tolerance allows the column: a sensitivity ∂c/∂θ is held to atol/|θ|
/// per step (the states' tolerance on θ·∂c/∂θ), so 100 of those over the data's sd.
fn agree(what: &str, keys: &[String], x: &[f64], exact: &[Vec<f64>], fd: &Differences, rel: f64) {
    let floor = 100.0 * Accuracy::default().atol / SD;
    for (j, ((e, f), s)) in exact.iter().zip(&fd.slopes).zip(&fd.spread).enumerate() {
        let scale = f.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let abs = floor / x[j].abs();
        for (i, ((a, b), s)) in e.iter().zip(f).zip(s).enumerate() {
            assert!(
                (a - b).abs() <= rel * scale + 2.0 * s + abs,
                "{what}: ∂r{i}/∂({}) = {a} by sensitivities, {b} by differences (column scale {scale}, spread {s})",
                keys[j]
            );
        }
    }
}

/// The sd of the invented time courses, mol/L.
const SD: f64 = 1e-6;

/// Up to `n` keys of `net` that a fit can free: nonzero values, one per written value, spread
/// over the file (conditions, initial values, lights, yields, rates).
fn free_keys(net: &network::Network, n: usize) -> Vec<String> {
    let mut seen = Vec::new();
    let mut keys = Vec::new();
    for k in params::addresses(net) {
        let p = params::get(net, k);
        // Two unnamed steps with one equation share a spelling; the key reaches the first only.
        let reaches = params::Key::parse(net, &k.spell(net)) == Ok(k);
        if p.value == 0.0 || !p.value.is_finite() || seen.contains(&k.target()) || !reaches {
            continue;
        }
        // A band's wavelength moves the photon bins across the kinks of piecewise-linear ε
        // tables: the absorbed light is only piecewise smooth in it, and no two difference steps
        // agree on its slope (the bins' quadrature, not the sensitivities; left out here).
        let key = k.spell(net);
        if key.ends_with(".centre") || key.ends_with(".fwhm") || key.ends_with(".wavelength") {
            continue;
        }
        seen.push(k.target());
        keys.push(k.spell(net));
    }
    let stride = keys.len().div_ceil(n).max(1);
    keys.into_iter().step_by(stride).collect()
}

/// One invented experiment: every species at five times up to `until`, sd 1 µM.
fn every_species(net: &network::Network, until: f64) -> Experiment {
    let points = (1..=5)
        .flat_map(|i| {
            net.species.iter().map(move |s| Point {
                time: until * i as f64 / 5.0,
                species: s.name.clone(),
                value: 0.0,
                sd: SD,
                is_yield: false,
                weighted: true,
                file: PathBuf::from("invented.csv"),
                line: 1,
            })
        })
        .collect();
    Experiment {
        name: "invented".into(),
        set: Vec::new(),
        until: Some(until),
        yield_of: None,
        points,
        endpoints: Vec::new(),
    }
}

#[test]
fn sensitivities_match_differences_on_every_bundled_network() {
    let mut checked = 0;
    for entry in std::fs::read_dir("networks").unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|e| e != "toml") {
            continue;
        }
        let net = network::load(&path, &Overrides::none()).unwrap();
        let model = Model::compile(&net);
        let until = photoledger::plan::horizon::automatic(&model, None).unwrap().time;
        let data = [every_species(&net, until)];
        let keys: Vec<String> = free_keys(&net, 6)
            .into_iter()
            .filter(|k| Setup::new(&net, &data, std::slice::from_ref(k), Accuracy::default()).is_ok())
            .collect();
        assert!(keys.len() >= 3, "{}: {keys:?}", path.display());
        let setup = Setup::new(&net, &data, &keys, Accuracy::default()).unwrap();
        let x = setup.start();
        let (r, exact) = setup.residuals_with_derivatives(&x).unwrap();
        let plain = setup.residuals(&x).unwrap();
        let rscale = plain.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        for (a, b) in r.iter().zip(&plain) {
            assert!(
                (a - b).abs() <= 1e-6 * rscale + 1e-9,
                "{}: residual {a} vs {b}",
                path.display()
            );
        }
        agree(
            &path.display().to_string(),
            &keys,
            &x,
            &exact,
            &differences(&setup, &keys, &x),
            1e-4,
        );
        checked += 1;
    }
    assert_eq!(checked, 5, "the five bundled networks");
}

const PHOTOSWITCH: &str = "networks/photoswitch.toml";
const EXPERIMENTS: &str = "demo-data/fit/experiments.toml";

fn three() -> Vec<String> {
    vec![
        "photo.E to Z.quantum_yield".into(),
        "photo.Z to E.quantum_yield".into(),
        "thermal.thermal Z to E.barrier".into(),
    ]
}

#[test]
fn sensitivities_match_differences_on_the_bundled_fit_data() {
    // The demo experiments carry time courses, yields, end points (quantum yields per photon
    // absorbed) and their own light settings.
    let net = network::load(Path::new(PHOTOSWITCH), &Overrides::none()).unwrap();
    let data = data::read(Path::new(EXPERIMENTS)).unwrap();
    let setup = Setup::new(&net, &data, &three(), Accuracy::default()).unwrap();
    let x = setup.start();
    let (_, exact) = setup.residuals_with_derivatives(&x).unwrap();
    agree(
        "photoswitch demo data",
        &three(),
        &x,
        &exact,
        &differences(&setup, &three(), &x),
        1e-4,
    );
}

#[test]
fn the_three_parameter_photoswitch_fit_needs_four_times_fewer_integrations_with_sensitivities() {
    let net = network::load(Path::new(PHOTOSWITCH), &Overrides::none()).unwrap();
    let data = data::read(Path::new(EXPERIMENTS)).unwrap();
    let run = |d: Derivatives| {
        let setup = Setup::new(&net, &data, &three(), Accuracy::default()).unwrap();
        let opts = FitOptions {
            derivatives: d,
            ..FitOptions::default()
        };
        fit(&setup, &opts, &|_| {}).unwrap()
    };
    let (s, f) = (run(Derivatives::Sensitivities), run(Derivatives::Differences));
    assert!(s.solution.converged && f.solution.converged);
    for (a, b) in s.solution.values.iter().zip(&f.solution.values) {
        assert!(
            (a - b).abs() <= 1e-4 * b.abs(),
            "{:?} vs {:?}",
            s.solution.values,
            f.solution.values
        );
    }
    assert!((s.solution.chi2 - f.solution.chi2).abs() <= 1e-6 * f.solution.chi2);
    // Each evaluation integrates every experiment once (with sensitivities, once with the
    // augmented system); central differences along the same search would need two more per
    // free parameter for every Jacobian it asked for. (The differences run's own count depends
    // on its path: 64 or 118 evaluations on builds whose right-hand sides differ in the last bit.)
    // Measured: 13 evaluations and 7 Jacobians, so 13 + 2·3·7 = 55 along the same path
    // (4.2×); the differences runs themselves took 64 and 118.
    let (se, p) = (s.solution.evaluations, three().len());
    let by_differences = se + 2 * p * s.solution.jacobians;
    assert!(
        4 * se <= by_differences,
        "{se} evaluations, {} Jacobians",
        s.solution.jacobians
    );
    assert!(se < f.solution.evaluations, "{se} against {}", f.solution.evaluations);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]
    /// Random invented networks (first- and second-order steps, an Eyring barrier, photo steps,
    /// an excited transient with quenching and a hot one with fixed fractions): the slopes of
    /// every species' time course agree with extrapolated central differences.
    #[test]
    fn random_networks_agree_with_central_differences(seed in any::<u64>()) {
        let text = common::random_network(seed);
        let l = photoledger::file::parse_text(Path::new("random.toml"), text.clone()).unwrap();
        let net = network::build(&l, &Overrides::none()).unwrap();
        let model = Model::compile(&net);
        let until = photoledger::plan::horizon::automatic(&model, None).unwrap().time;
        let data = [every_species(&net, until)];
        let keys: Vec<String> = free_keys(&net, 8)
            .into_iter()
            .filter(|k| Setup::new(&net, &data, std::slice::from_ref(k), Accuracy::default()).is_ok())
            .collect();
        prop_assert!(keys.len() >= 4, "{keys:?}");
        let setup = Setup::new(&net, &data, &keys, Accuracy::default()).unwrap();
        let x = setup.start();
        let (_, exact) = setup.residuals_with_derivatives(&x).unwrap();
        let fd = differences(&setup, &keys, &x);
        let r = std::panic::catch_unwind(|| agree("random", &keys, &x, &exact, &fd, 1e-4));
        prop_assert!(r.is_ok(), "--- network ---\n{}", text);
    }
}
