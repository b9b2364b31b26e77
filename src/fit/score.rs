//! Scoring a mechanism against data: −2 ln L from χ² (σ given, or estimated from the scatter),
//! AICc and BIC, Akaike weights; [`score`] for a network with nothing free (`levels` scores each
//! set of computed values this way), [`criteria`] and [`likelihood`] shared with `fit`.

use super::mechanism::Setup;
use crate::error::{Error, Result};

/// −2 ln L and the number of estimated quantities for χ² over `n` observations with `p` free
/// parameters: χ² and p when every σ is given (taken as known), n ln(χ²/n) and p + 1 when σ is
/// estimated from the scatter.
pub fn likelihood(chi2: f64, n: usize, p: usize, weighted: bool) -> (f64, usize) {
    if weighted {
        (chi2, p)
    } else {
        (n as f64 * (chi2 / n as f64).ln(), p + 1)
    }
}

/// How well a network with nothing free describes the data.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Score {
    /// χ² = Σ ((measured − predicted) / σ)².
    pub chi2: f64,
    /// Number of observations.
    pub n: usize,
    /// True when every observation had a standard deviation.
    pub weighted: bool,
    /// −2 ln L (χ² with given σ; n ln(χ²/n) when σ is estimated).
    pub minus_two_log_likelihood: f64,
    /// Estimated quantities: none, or σ when it is estimated.
    pub k: usize,
    /// AICc ([`criteria`]).
    pub aicc: f64,
    /// BIC.
    pub bic: f64,
}

/// Score `setup`'s network at `x` against its data without fitting: χ², −2 ln L and the
/// criteria with `k` the free parameters counted as estimated (`x.len()`, plus σ when some
/// observation has no sd). With `x` empty this is the network as it stands.
pub fn score(setup: &Setup, x: &[f64]) -> Result<Score> {
    let r = setup
        .residuals(x)
        .ok_or_else(|| Error::Numerical("the network cannot be evaluated against the data".into()))?;
    let chi2: f64 = r.iter().map(|v| v * v).sum();
    let n = r.len();
    let weighted = setup.observations().iter().all(|o| o.2);
    let (m2ll, k) = likelihood(chi2, n, x.len(), weighted);
    let (aicc, bic) = criteria(m2ll, k, n);
    Ok(Score {
        chi2,
        n,
        weighted,
        minus_two_log_likelihood: m2ll,
        k,
        aicc,
        bic,
    })
}

/// AICc and BIC from −2 ln L, the number of estimated quantities `k` and observations `n`
/// (Burnham & Anderson, Model Selection and Multimodel Inference, 2nd ed., 2002, `from memory`
/// for the section): AIC = −2 ln L + 2k, AICc = AIC + 2k(k+1)/(n−k−1), BIC = −2 ln L + k ln n.
pub fn criteria(m2ll: f64, k: usize, n: usize) -> (f64, f64) {
    let (kf, nf) = (k as f64, n as f64);
    let aic = m2ll + 2.0 * kf;
    let aicc = if n > k + 1 {
        aic + 2.0 * kf * (kf + 1.0) / (nf - kf - 1.0)
    } else {
        f64::INFINITY
    };
    (aicc, m2ll + kf * nf.ln())
}

/// Akaike weights from AICc values: exp(−Δᵢ/2) / Σ exp(−Δⱼ/2).
pub fn akaike_weights(aicc: &[f64]) -> Vec<f64> {
    let min = aicc.iter().copied().fold(f64::INFINITY, f64::min);
    let e: Vec<f64> = aicc.iter().map(|a| (-(a - min) / 2.0).exp()).collect();
    let s: f64 = e.iter().sum();
    e.iter().map(|v| v / s).collect()
}
