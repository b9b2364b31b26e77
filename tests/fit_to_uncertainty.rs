//! The hand-over from `fit` to `uncertainty`: the JSON that `fit` writes is the JSON that
//! `uncertainty --from-fit` reads, and draws from it have the fitted means, standard errors and
//! correlation. The reference is the definition of a multivariate normal draw x = μ + L z with
//! L Lᵀ = Σ (JCGM 101:2008, Supplement 1 to the GUM, §6.4.8, `from memory` for the section):
//! the sample mean of n draws lies within a few standard errors σ/√n of μ, and the sample
//! standard deviation within a few per cent of σ for n in the hundreds.

use std::path::{Path, PathBuf};
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("photoledger-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(args: &[&str], cwd: &Path) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "photoledger {args:?} failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
fn fit_json_feeds_uncertainty_draws() {
    let dir = scratch("fit-unc");
    let net = root().join("networks/photoswitch.toml");
    let data = root().join("demo-data/fit/experiments.toml");
    let fit_dir = dir.join("fit");
    run(
        &[
            "fit",
            net.to_str().unwrap(),
            "--data",
            data.to_str().unwrap(),
            "--out",
            fit_dir.to_str().unwrap(),
        ],
        &dir,
    );
    let fit: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(fit_dir.join("fit.json")).unwrap()).unwrap();
    let params = fit["parameters"].as_array().unwrap();
    assert_eq!(params.len(), 2);
    let n = 400;
    let unc_dir = dir.join("unc");
    run(
        &[
            "uncertainty",
            net.to_str().unwrap(),
            "--from-fit",
            fit_dir.join("fit.json").to_str().unwrap(),
            "--samples",
            &n.to_string(),
            "--seed",
            "11",
            "--until",
            "10 min",
            "--no-chain",
            "--out",
            unc_dir.to_str().unwrap(),
        ],
        &dir,
    );
    let csv = std::fs::read_to_string(unc_dir.join("samples.csv")).unwrap();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|x| x.parse::<f64>().unwrap_or(f64::NAN)).collect())
        .collect();
    assert_eq!(rows.len(), n);
    let cov = fit["covariance"].as_array().unwrap();
    for (i, p) in params.iter().enumerate() {
        let key = p["key"].as_str().unwrap();
        let col = header
            .iter()
            .position(|h| h.starts_with(key))
            .expect("a column per parameter");
        let x: Vec<f64> = rows.iter().map(|r| r[col]).collect();
        let mean = x.iter().sum::<f64>() / n as f64;
        let sd = (x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n as f64 - 1.0)).sqrt();
        let mu = p["value"].as_f64().unwrap();
        let sigma = cov[i][i].as_f64().unwrap().sqrt();
        // The covariance's diagonal is the squared standard error the fit reports.
        let se = p["standard_error"].as_f64().unwrap();
        assert!((sigma - se).abs() <= 1e-9 * se, "{key}: covariance {sigma} vs se {se}");
        assert!(
            (mean - mu).abs() < 4.0 * sigma / (n as f64).sqrt(),
            "{key}: mean {mean} vs fitted {mu} (σ {sigma})"
        );
        assert!((sd / sigma - 1.0).abs() < 0.2, "{key}: sd {sd} vs σ {sigma}");
    }
    std::fs::remove_dir_all(&dir).ok();
}
