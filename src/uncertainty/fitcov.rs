//! Parameters drawn jointly from a fit's covariance: the JSON shape read, and the
//! multivariate normal draw (Cholesky factor by nalgebra).
//!
//! The shape (other fields of the object are ignored, so a whole `fit --json` output can be
//! given as long as it carries these):
//!
//! ```json
//! {
//!   "parameters": [
//!     { "key": "photo.E to Z.quantum_yield", "value": 0.118, "unit": "", "transform": "logit" },
//!     { "key": "thermal.thermal Z to E.barrier", "value": 23.4, "unit": "kcal/mol", "transform": "none" }
//!   ],
//!   "covariance_scale": "transformed",
//!   "covariance": [[0.0021, -0.0004], [-0.0004, 0.0900]]
//! }
//! ```
//!
//! - `key`: the `--set` key of the value; `value`: the best value in `unit` (natural scale);
//!   `unit`: how the value is written back (`""` or absent for plain numbers).
//! - `transform`: `"none"`, `"log"` (positive values) or `"logit"` (values in (0, 1)); default
//!   `"none"`.
//! - `covariance_scale`: `"natural"` (default): the covariance of the values in their units, and
//!   draws are value + L z; `"transformed"`: the covariance of t(value) (ln v, ln(v/(1 − v)) or
//!   v), and draws are t⁻¹(t(value) + L z), which keeps log and logit parameters in range.
//! - `covariance`: symmetric, n × n, in the order of `parameters`.

use super::spec::{Distribution, Parameter};
use crate::error::{Error, Result};
use nalgebra::{DMatrix, DVector};
use serde::Deserialize;

pub use crate::network::params::Transform;

#[derive(Deserialize)]
struct JsonParameter {
    key: String,
    value: f64,
    #[serde(default)]
    unit: String,
    #[serde(default)]
    transform: Transform,
}

#[derive(Deserialize, Default, PartialEq, Eq, Clone, Copy)]
#[serde(rename_all = "lowercase")]
enum Scale {
    #[default]
    Natural,
    Transformed,
}

#[derive(Deserialize)]
struct JsonFit {
    parameters: Vec<JsonParameter>,
    #[serde(default)]
    covariance_scale: Scale,
    covariance: Vec<Vec<f64>>,
}

/// A joint normal block: parameters, centre on the sampling scale, and a factor L with
/// L Lᵀ = covariance.
#[derive(Debug, Clone, PartialEq)]
pub struct FitBlock {
    /// The parameters, with [`Distribution::FromFit`].
    pub parameters: Vec<Parameter>,
    /// Centre on the sampling scale.
    pub centre: Vec<f64>,
    /// Lower-triangular factor of the covariance.
    pub factor: DMatrix<f64>,
    /// True when the covariance is on the transformed scale.
    pub transformed: bool,
}

impl FitBlock {
    /// Read the JSON text (see the module docs); `name` names the file in messages.
    pub fn from_json(name: &str, text: &str) -> Result<FitBlock> {
        let bad = |m: String| Error::Usage(format!("{name}: {m}"));
        let j: JsonFit = serde_json::from_str(text).map_err(|e| {
            bad(format!(
                "not a fit covariance file: {e} (expected {{\"parameters\": [{{\"key\", \"value\", \"unit\", \"transform\"}}], \"covariance_scale\", \"covariance\"}}; see README, Uncertainty)"
            ))
        })?;
        let n = j.parameters.len();
        if n == 0 {
            return Err(bad("no parameters".into()));
        }
        if j.covariance.len() != n || j.covariance.iter().any(|r| r.len() != n) {
            return Err(bad(format!(
                "covariance must be {n} × {n}, one row and column per parameter"
            )));
        }
        let transformed = j.covariance_scale == Scale::Transformed;
        let mut centre = Vec::with_capacity(n);
        let mut parameters = Vec::with_capacity(n);
        for p in &j.parameters {
            if !p.value.is_finite() {
                return Err(bad(format!("\"{}\": value is not finite", p.key)));
            }
            let t = if transformed { p.transform } else { Transform::Identity };
            let c = t.checked(p.value).ok_or_else(|| {
                bad(format!(
                    "\"{}\": value {} is outside the domain of the {} transform",
                    p.key,
                    p.value,
                    t.word()
                ))
            })?;
            if parameters.iter().any(|q: &Parameter| q.key == p.key) {
                return Err(bad(format!("\"{}\" appears twice", p.key)));
            }
            centre.push(c);
            parameters.push(Parameter {
                key: p.key.clone(),
                unit: p.unit.trim().to_string(),
                distribution: Distribution::FromFit {
                    value: p.value,
                    transform: t,
                },
                line: None,
                written: String::new(),
            });
        }
        let cov = DMatrix::from_fn(n, n, |i, k| j.covariance[i][k]);
        let factor = factor(&cov).map_err(bad)?;
        Ok(FitBlock {
            parameters,
            centre,
            factor,
            transformed,
        })
    }

    /// Values (natural scale, in each parameter's unit) for standard normal draws `z`.
    pub fn values(&self, z: &[f64]) -> Vec<f64> {
        let x = &self.factor * DVector::from_column_slice(z);
        self.parameters
            .iter()
            .zip(self.centre.iter().zip(x.iter()))
            .map(|(p, (c, dx))| match p.distribution {
                Distribution::FromFit { transform, .. } => transform.inverse(c + dx),
                _ => c + dx,
            })
            .collect()
    }
}

/// L with L Lᵀ = cov: Cholesky when positive definite; for a positive semi-definite matrix
/// (a parameter fixed, an exact correlation) L = V √max(λ, 0) from the symmetric eigen
/// decomposition. An asymmetric matrix, a non-finite entry or a clearly negative eigenvalue
/// is an error.
pub fn factor(cov: &DMatrix<f64>) -> std::result::Result<DMatrix<f64>, String> {
    let n = cov.nrows();
    let scale = cov.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if cov.iter().any(|v| !v.is_finite()) {
        return Err("covariance has a non-finite entry".into());
    }
    for i in 0..n {
        if cov[(i, i)] < 0.0 {
            return Err(format!("covariance has a negative variance in row {}", i + 1));
        }
        for k in 0..i {
            if (cov[(i, k)] - cov[(k, i)]).abs() > 1e-12 * scale {
                return Err(format!("covariance is not symmetric at rows {} and {}", k + 1, i + 1));
            }
        }
    }
    if let Some(c) = cov.clone().cholesky() {
        return Ok(c.l());
    }
    let eig = cov.clone().symmetric_eigen();
    let min = eig.eigenvalues.iter().fold(f64::INFINITY, |m, v| m.min(*v));
    if min < -1e-10 * scale {
        return Err(format!(
            "covariance is not positive semi-definite (an eigenvalue is {min:e})"
        ));
    }
    let mut l = eig.eigenvectors.clone();
    for (j, lam) in eig.eigenvalues.iter().enumerate() {
        let s = lam.max(0.0).sqrt();
        for i in 0..n {
            l[(i, j)] *= s;
        }
    }
    Ok(l)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cholesky_factor_reproduces_the_covariance() {
        let c = DMatrix::from_row_slice(2, 2, &[4.0, 1.2, 1.2, 1.0]);
        let l = factor(&c).unwrap();
        assert!((&l * l.transpose() - &c).abs().max() < 1e-14);
        let s = DMatrix::from_row_slice(2, 2, &[1.0, 1.0, 1.0, 1.0]);
        let l = factor(&s).unwrap();
        assert!((&l * l.transpose() - &s).abs().max() < 1e-12);
        assert!(factor(&DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 2.0, 1.0])).is_err());
    }

    #[test]
    fn reads_the_documented_shape_and_rejects_bad_ones() {
        let ok = r#"{"parameters": [{"key": "a.b", "value": 0.3, "transform": "logit"},
            {"key": "c.d", "value": 23.4, "unit": "kcal/mol"}],
            "covariance_scale": "transformed", "covariance": [[0.01, 0.0], [0.0, 0.25]], "chi2": 3.1}"#;
        let b = FitBlock::from_json("fit.json", ok).unwrap();
        assert_eq!(b.parameters[1].override_text(23.5), "2.35e1 kcal/mol");
        let v = b.values(&[0.0, 2.0]);
        assert!((v[0] - 0.3).abs() < 1e-15 && (v[1] - 24.4).abs() < 1e-12);
        let bad = r#"{"parameters": [{"key": "a.b", "value": 1.3, "transform": "logit"}],
            "covariance_scale": "transformed", "covariance": [[0.01]]}"#;
        assert!(
            FitBlock::from_json("f", bad)
                .unwrap_err()
                .to_string()
                .contains("domain")
        );
        let bad = r#"{"parameters": [{"key": "a.b", "value": 1.3}], "covariance": [[0.01, 0.0]]}"#;
        assert!(FitBlock::from_json("f", bad).unwrap_err().to_string().contains("1 × 1"));
    }
}
