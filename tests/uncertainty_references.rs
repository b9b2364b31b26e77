//! Uncertainty propagation against named references: the law of propagation of uncertainty
//! for linear models, SciPy's Spearman ρ, and the run's own invariants (seed determinism,
//! thread-count independence, shards merged = the single run, located errors for bad specs).

use photoledger::Error;
use photoledger::file::{Loaded, parse_text};
use photoledger::uncertainty::fitcov::FitBlock;
use photoledger::uncertainty::spec::{Distribution, Parameter};
use photoledger::uncertainty::{self, Problem, Record, Settings, Space, stats};
use std::path::Path;

const LINEAR: &str = r#"
[about]
name = "first-order conversion (test)"
invented = true

[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
power = "10 mW"

[[species]]
name = "A"
initial = "1 mM"

[[species]]
name = "B"
initial = "0 M"
product = true

[[thermal]]
name = "A to B"
equation = "A -> B"
rate = { k = "1e-3 /s" }
"#;

fn loaded(text: &str) -> Loaded {
    parse_text(Path::new("test.toml"), text.to_string()).expect("parses")
}

fn param(key: &str, d: Distribution) -> Parameter {
    Parameter {
        key: key.into(),
        unit: String::new(),
        distribution: d,
        line: None,
        written: String::new(),
    }
}

/// Mean and variance (n − 1) of a slice.
fn moments(v: &[f64]) -> (f64, f64) {
    let (m, sd) = stats::mean_sd(v);
    (m.unwrap(), sd.unwrap().powi(2))
}

// The law of propagation of uncertainty, JCGM 100:2008 (GUM) §5.1.2, eq. (10): for
// Y = Σ cᵢ Xᵢ with independent Xᵢ, E[Y] = Σ cᵢ E[Xᵢ] and u²(Y) = Σ cᵢ² u²(Xᵢ) (exact for a linear
// model); a uniform on [a, b] has u² = (b − a)²/12 (GUM §4.3.7). Monte Carlo estimates must
// agree within 4 standard errors: σ/√n for the mean, σ² √(2/(n − 1)) for a normal's variance
// (the uniform term has lighter tails, so this bound is conservative for it).
#[test]
fn linear_model_reproduces_the_gum_mean_and_variance() {
    let space = Space {
        independent: vec![
            param("x1", Distribution::Normal { mean: 2.0, sd: 0.3 }),
            param("x2", Distribution::Uniform { low: -1.0, high: 3.0 }),
            param("x3", Distribution::Normal { mean: -5.0, sd: 1.5 }),
        ],
        fit: None,
    };
    let c = [4.0, -2.0, 0.5];
    let b = 7.0;
    let n = 200_000;
    let y: Vec<f64> = (0..n)
        .map(|i| {
            let x = space.draw(42, i);
            b + c.iter().zip(&x).map(|(c, x)| c * x).sum::<f64>()
        })
        .collect();
    let mean = b + 4.0 * 2.0 - 2.0 * 1.0 + 0.5 * -5.0;
    let var = 16.0 * 0.09 + 4.0 * (16.0 / 12.0) + 0.25 * 2.25;
    let (m, v) = moments(&y);
    let se_m = (var / n as f64).sqrt();
    let se_v = var * (2.0 / (n as f64 - 1.0)).sqrt();
    assert!((m - mean).abs() < 4.0 * se_m, "mean {m} vs {mean} (se {se_m})");
    assert!((v - var).abs() < 4.0 * se_v, "variance {v} vs {var} (se {se_v})");
}

// Correlated inputs, GUM §5.2.2 eq. (13): u²(Y) = Σᵢ Σⱼ cᵢ cⱼ u(xᵢ, xⱼ) = cᵀ Σ c, drawn through
// the fit-covariance path (Cholesky factor) on the natural scale.
#[test]
fn correlated_linear_model_reproduces_c_sigma_c() {
    let json = r#"{"parameters": [{"key": "p", "value": 1.0}, {"key": "q", "value": 3.0}],
        "covariance": [[0.04, -0.03], [-0.03, 0.09]]}"#;
    let space = Space::default()
        .with_fit(FitBlock::from_json("fit.json", json).unwrap())
        .unwrap();
    let n = 200_000;
    let (y, z): (Vec<f64>, Vec<f64>) = (0..n)
        .map(|i| {
            let x = space.draw(7, i);
            (2.0 * x[0] + 1.0 * x[1], x[0])
        })
        .unzip();
    let var = 4.0 * 0.04 + 2.0 * 2.0 * 1.0 * -0.03 + 0.09;
    let (m, v) = moments(&y);
    assert!((m - 5.0).abs() < 4.0 * (var / n as f64).sqrt(), "mean {m}");
    assert!(
        (v - var).abs() < 4.0 * var * (2.0 / n as f64).sqrt(),
        "variance {v} vs {var}"
    );
    let (mz, vz) = moments(&z);
    assert!(
        (mz - 1.0).abs() < 4.0 * (0.04 / n as f64).sqrt() && (vz - 0.04).abs() < 4.0 * 0.04 * (2.0 / n as f64).sqrt()
    );
}

// Through the whole pipeline (file text -> network -> model -> kinetics): for A -> B, first
// order, [B](t) = [A]₀ (1 − e^(−kt)) is linear in [A]₀, so by GUM §5.1.2 its mean and sd are
// (1 − e^(−kt)) times those of [A]₀. The sample mean must equal (1 − e^(−kt)) × the mean of the
// drawn [A]₀ to the integrator's tolerance, and the analytic mean within 4 standard errors.
#[test]
fn linear_output_of_the_kinetics_propagates_mean_and_sd() {
    let text = format!("{LINEAR}\n[[uncertain]]\nkey = \"species.A.initial\"\nnormal = \"1 mM ± 0.1 mM\"\n");
    let l = loaded(&text);
    let space = Space {
        independent: photoledger::network::uncertain::read(&l).unwrap(),
        fit: None,
    };
    let settings = Settings {
        chain: false,
        until: Some(1000.0),
        target: None,
    };
    let p = Problem::new(&net_of(&l), space, settings).unwrap();
    let n = 2000;
    let r = p.record(3, n, 0..n, &|| {});
    let col = r.header.outputs.iter().position(|c| c.name == "final[B]").unwrap();
    let a0: Vec<f64> = r.samples.iter().map(|s| s.values[0]).collect();
    let bt: Vec<f64> = r.samples.iter().map(|s| s.outputs[col].unwrap()).collect();
    let f = 1.0 - (-1.0f64).exp();
    let (ma, va) = moments(&a0);
    let (mb, vb) = moments(&bt);
    assert!((mb - f * ma).abs() < 1e-5 * mb, "sample mean {mb} vs {}", f * ma);
    assert!((vb.sqrt() - f * va.sqrt()).abs() < 1e-4 * vb.sqrt());
    let se = f * 1e-4 / (n as f64).sqrt();
    assert!((mb - f * 1e-3).abs() < 4.0 * se, "mean {mb} vs analytic {}", f * 1e-3);
    let sd_se = f * 1e-4 / (2.0 * (n as f64 - 1.0)).sqrt();
    assert!(
        (vb.sqrt() - f * 1e-4).abs() < 4.0 * sd_se,
        "sd {} vs analytic {}",
        vb.sqrt(),
        f * 1e-4
    );
}

// SciPy 1.17.1, scipy.stats.spearmanr on twelve pairs with ties (scripts/spearman_reference.py
// wrote tests/data/spearman_scipy.json).
#[test]
fn spearman_matches_scipy() {
    let j: serde_json::Value = serde_json::from_str(include_str!("data/spearman_scipy.json")).expect("reference file");
    let v = |k: &str| -> Vec<f64> { j[k].as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect() };
    let rho = stats::spearman(&v("x"), &v("y")).unwrap();
    let want = j["rho"].as_f64().unwrap();
    assert!((rho - want).abs() < 1e-14, "{rho} vs SciPy {want}");
}

// Without ties ρ = 1 − 6 Σ d² / (n (n² − 1)) (Spearman 1904; textbook form, `common practice`).
#[test]
fn spearman_without_ties_equals_the_rank_difference_formula() {
    let x = [3.1, 0.2, 7.7, 5.0, 1.9, 4.4, 9.3, 6.6];
    let y = [2.0, 1.0, 8.0, 3.5, 0.5, 6.0, 7.0, 9.0];
    let (rx, ry) = (stats::ranks(&x), stats::ranks(&y));
    let d2: f64 = rx.iter().zip(&ry).map(|(a, b)| (a - b) * (a - b)).sum();
    let n = x.len() as f64;
    let want = 1.0 - 6.0 * d2 / (n * (n * n - 1.0));
    assert!((stats::spearman(&x, &y).unwrap() - want).abs() < 1e-14);
}

// First-order Sobol indices of a linear model with independent inputs are Sᵢ = cᵢ² σᵢ² / Var(Y)
// (Saltelli et al., Global Sensitivity Analysis: The Primer, Wiley 2008, §4.1, `from memory` for
// the section). The given-data estimate must be within 0.02 of them at n = 40 000.
#[test]
fn given_data_sobol_indices_of_a_linear_model() {
    let space = Space {
        independent: vec![
            param("a", Distribution::Normal { mean: 0.0, sd: 1.0 }),
            param("b", Distribution::Normal { mean: 0.0, sd: 2.0 }),
            param("c", Distribution::Uniform { low: 0.0, high: 1.0 }),
        ],
        fit: None,
    };
    let n = 40_000;
    let xs: Vec<Vec<f64>> = (0..n).map(|i| space.draw(11, i)).collect();
    let y: Vec<f64> = xs.iter().map(|x| x[0] + x[1]).collect();
    let col = |j: usize| -> Vec<f64> { xs.iter().map(|x| x[j]).collect() };
    let s = [0.2, 0.8, 0.0];
    for (j, want) in s.iter().enumerate() {
        let got = stats::sobol_first_order(&col(j), &y).unwrap();
        assert!((got - want).abs() < 0.02, "S{j} = {got}, want {want}");
    }
}

const POOL: &str = include_str!("../networks/prebiotic-pool.toml");

fn pool_problem(l: &Loaded) -> Problem {
    let space = Space {
        independent: photoledger::network::uncertain::read(l).unwrap(),
        fit: None,
    };
    let settings = Settings {
        chain: true,
        until: Some(86400.0 * 10.0),
        target: Some("product > 10 % of aldehyde".into()),
    };
    Problem::new(&net_of(l), space, settings).unwrap()
}

#[test]
fn same_seed_same_samples_and_thread_count_does_not_matter() {
    let l = parse_text(Path::new("networks/prebiotic-pool.toml"), POOL.to_string()).unwrap();
    let p = pool_problem(&l);
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().unwrap();
    let two = rayon::ThreadPoolBuilder::new().num_threads(2).build().unwrap();
    let a = one.install(|| p.record(5, 24, 0..24, &|| {}));
    let b = two.install(|| p.record(5, 24, 0..24, &|| {}));
    let c = two.install(|| p.record(5, 24, 0..24, &|| {}));
    assert_eq!(a, b);
    assert_eq!(b, c);
    assert!(a.samples.iter().all(|s| s.error.is_none()), "{:?}", a.samples[0].error);
    let d = p.record(6, 24, 0..24, &|| {});
    assert_ne!(a.samples[0].values, d.samples[0].values);
    assert_eq!(uncertainty::summarise(&a), uncertainty::summarise(&b));
}

#[test]
fn shards_merged_equal_the_single_run_exactly() {
    let l = parse_text(Path::new("networks/prebiotic-pool.toml"), POOL.to_string()).unwrap();
    let p = pool_problem(&l);
    let total = 29;
    let whole = p.record(9, total, 0..total, &|| {});
    // Shards go through their JSON form, as between jobs of a cluster array.
    let shard = |k: usize, n: usize| -> Record {
        let r = p.record(9, total, uncertainty::shard_range(total, k, n).unwrap(), &|| {});
        serde_json::from_str(&serde_json::to_string(&r).unwrap()).unwrap()
    };
    let parts = vec![shard(3, 4), shard(1, 4), shard(4, 4), shard(2, 4)];
    assert_eq!(parts.iter().map(|r| r.samples.len()).sum::<usize>(), total);
    let merged = uncertainty::merge(parts.clone()).unwrap();
    assert_eq!(merged, whole);
    let (sm, sw) = (uncertainty::summarise(&merged), uncertainty::summarise(&whole));
    assert_eq!(sm, sw);
    for (a, b) in sm.outputs.iter().zip(&sw.outputs) {
        for ((_, x), (_, y)) in a.quantiles.iter().zip(&b.quantiles) {
            assert_eq!(x.map(f64::to_bits), y.map(f64::to_bits));
        }
    }
    // A missing shard, a shard twice, and a shard of another run are refused.
    let missing = uncertainty::merge(parts[..3].to_vec()).unwrap_err().to_string();
    assert!(missing.contains("missing"), "{missing}");
    let mut twice = parts.clone();
    twice.push(parts[0].clone());
    assert!(uncertainty::merge(twice).unwrap_err().to_string().contains("twice"));
    let mut other = parts.clone();
    other[0] = p.record(10, total, uncertainty::shard_range(total, 3, 4).unwrap(), &|| {});
    assert!(
        uncertainty::merge(other)
            .unwrap_err()
            .to_string()
            .contains("different run")
    );
}

/// The first error's (line, field, message) for a [[uncertain]] block appended to LINEAR.
fn spec_error(block: &str) -> (usize, String, String) {
    let text = format!("{LINEAR}\n{block}\n");
    let l = loaded(&text);
    let err = match photoledger::network::uncertain::read(&l) {
        Err(e) => e,
        Ok(ps) => {
            let space = Space {
                independent: ps,
                fit: None,
            };
            let settings = Settings {
                chain: false,
                until: Some(10.0),
                target: None,
            };
            match Problem::new(&net_of(&l), space, settings) {
                Err(e) => e,
                Ok(_) => panic!("accepted: {block}"),
            }
        }
    };
    let Error::Invalid(ds) = err else {
        panic!("not located: {err}")
    };
    let d = &ds[0];
    (
        d.line_col.expect("a line").0,
        d.field.clone(),
        format!("{} {}", d.message, d.help.clone().unwrap_or_default()),
    )
}

#[test]
fn bad_distribution_specs_are_located_errors() {
    let first = LINEAR.lines().count() + 2; // the [[uncertain]] line
    let cases: &[(&str, &str, &str)] = &[
        (
            "key = \"species.A.initial\"\nnormal = \"1 mM 0.1 mM\"",
            "normal",
            "no ±",
        ),
        (
            "key = \"species.A.initial\"\nnormal = \"1 mM ± -0.1 mM\"",
            "normal",
            "positive",
        ),
        (
            "key = \"species.A.initial\"\nnormal = \"1 mM ± 2 K\"",
            "normal",
            "disagree",
        ),
        (
            "key = \"species.A.initial\"\nnormal = \"1 furlong ± 2 furlong\"",
            "normal",
            "furlong",
        ),
        (
            "key = \"species.A.initial\"\nuniform = [\"2 mM\", \"1 mM\"]",
            "uniform",
            "below",
        ),
        (
            "key = \"species.A.initial\"\nuniform = [\"2 mM\"]",
            "uniform",
            "1 values",
        ),
        (
            "key = \"species.A.initial\"\nuniform = [\"1 mM\", 3]",
            "uniform",
            "disagree",
        ),
        (
            "key = \"species.A.initial\"\nbeta = { alpha = -1, beta = 2 }",
            "beta",
            "positive",
        ),
        (
            "key = \"species.A.initial\"\nlognormal = { median = \"1 mM\", factor = 0.5 }",
            "lognormal",
            "not above 1",
        ),
        (
            "key = \"species.A.initial\"\nlognormal = { median = \"-1 mM\", factor = 2 }",
            "lognormal",
            "positive",
        ),
        (
            "key = \"species.A.initial\"\nnormal = \"1 mM ± 0.1 mM\"\nuniform = [1, 2]",
            "",
            "exactly one",
        ),
        ("normal = \"1 mM ± 0.1 mM\"", "uncertain[0]", "no `key`"),
        (
            "key = \"species.Q.initial\"\nnormal = \"1 mM ± 0.1 mM\"",
            "species.Q.initial",
            "no species called \"Q\"",
        ),
        (
            "key = \"light.lamp.power\"\nnormal = \"1 mM ± 0.1 mM\"",
            "light.lamp.power",
            "power",
        ),
    ];
    for (block, field, words) in cases {
        let (line, f, msg) = spec_error(&format!("[[uncertain]]\n{block}"));
        assert!(
            line >= first && line <= first + 3,
            "{block}: line {line}, want about {first}"
        );
        assert!(f.contains(field), "{block}: field {f}");
        assert!(msg.contains(words), "{block}: message {msg}");
    }
    // A key given twice.
    let (_, f, msg) = spec_error(
        "[[uncertain]]\nkey = \"species.A.initial\"\nuniform = [\"1 mM\", \"2 mM\"]\n\n[[uncertain]]\nkey = \"species.A.initial\"\nuniform = [\"1 mM\", \"2 mM\"]",
    );
    assert!(f.contains("uncertain[1]") && msg.contains("already"), "{f}: {msg}");
    // An unknown distribution name is refused by the file layout itself.
    let text = format!("{LINEAR}\n[[uncertain]]\nkey = \"species.A.initial\"\ntriangular = [1, 2, 3]\n");
    let e = parse_text(Path::new("test.toml"), text).unwrap_err().to_string();
    assert!(e.contains("triangular"), "{e}");
}

#[test]
fn accepted_specs_read_in_internal_units() {
    let text = format!(
        "{LINEAR}\n[[uncertain]]\nkey = \"conditions.temperature\"\nnormal = \"25 °C ± 2 °C\"\n\n\
[[uncertain]]\nkey = \"light.lamp.power\"\nnormal = \"10 mW ± 10 %\"\n\n\
[[uncertain]]\nkey = \"species.A.initial\"\nlognormal = {{ median = \"1 mM\", factor = 2 }}\n"
    );
    let ps = photoledger::network::uncertain::read(&loaded(&text)).unwrap();
    let d: Vec<&Distribution> = ps.iter().map(|p| &p.distribution).collect();
    // 25 °C = 298.15 K; a spread of 2 °C is 2 K.
    assert!(
        matches!(d[0], Distribution::Normal { mean, sd } if (mean - 298.15).abs() < 1e-12 && (sd - 2.0).abs() < 1e-12)
    );
    assert!(
        matches!(d[1], Distribution::Normal { mean, sd } if (mean - 0.01).abs() < 1e-15 && (sd - 0.001).abs() < 1e-15)
    );
    assert!(
        matches!(d[2], Distribution::LogNormal { median, factor } if (median - 1e-3).abs() < 1e-18 && *factor == 2.0)
    );
    assert_eq!(
        (ps[0].unit.as_str(), ps[1].unit.as_str(), ps[2].unit.as_str()),
        ("K", "W", "M")
    );
    assert_eq!(ps[1].written, "normal = \"10 mW ± 10 %\"");
}

/// The network built from `l` with no `--set`.
fn net_of(l: &photoledger::file::Loaded) -> photoledger::network::Network {
    photoledger::network::build(l, &photoledger::network::Overrides::none()).expect("builds")
}
