//! The absorbed fraction of a well-stirred cell lit through one face.
//!
//! With total decadic absorbance A, the fraction absorbed is 1 − 10^(−A), and species i takes
//! the share Aᵢ / A of it. Engines use g(A) = (1 − 10^(−A)) / A, so that the photons taken by
//! species i are q · g(A) · Aᵢ: g is smooth, g(0) = ln 10 (the optically thin, first-order
//! limit) and g(A) → 1/A for a thick sample (the zero-order limit). Both g and dg/dA are
//! evaluated without cancellation as A → 0.

use std::f64::consts::LN_10;

/// g(A) = (1 − 10^(−A)) / A, with g(0) = ln 10.
pub fn g(a: f64) -> f64 {
    let x = a * LN_10;
    LN_10 * phi(x)
}

/// dg/dA.
pub fn dg(a: f64) -> f64 {
    let x = a * LN_10;
    LN_10 * LN_10 * dphi(x)
}

/// g(A), dg/dA (only when `slope`) and the transmitted fraction 10^(−A) from one exponential.
pub fn g_dg_transmitted(a: f64, slope: bool) -> (f64, f64, f64) {
    let x = a * LN_10;
    let em = (-x).exp_m1();
    let t = 1.0 + em;
    let phi = if x.abs() < 1e-4 {
        1.0 - x / 2.0 + x * x / 6.0 - x * x * x / 24.0
    } else {
        -em / x
    };
    let dphi = if !slope {
        0.0
    } else if x.abs() < 1e-3 {
        -0.5 + x / 3.0 - x * x / 8.0 + x * x * x / 30.0
    } else {
        (t * (1.0 + x) - 1.0) / (x * x)
    };
    (LN_10 * phi, LN_10 * LN_10 * dphi, t)
}

/// φ(x) = (1 − e^(−x)) / x.
fn phi(x: f64) -> f64 {
    if x.abs() < 1e-4 {
        1.0 - x / 2.0 + x * x / 6.0 - x * x * x / 24.0
    } else {
        -(-x).exp_m1() / x
    }
}

/// φ'(x) = (e^(−x)(1 + x) − 1) / x².
fn dphi(x: f64) -> f64 {
    if x.abs() < 1e-3 {
        -0.5 + x / 3.0 - x * x / 8.0 + x * x * x / 30.0
    } else {
        ((-x).exp() * (1.0 + x) - 1.0) / (x * x)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limits_and_smoothness() {
        assert!((g(0.0) - LN_10).abs() < 1e-15);
        // thick: 1 − 10^−10 ≈ 1
        assert!((g(10.0) - (1.0 - 1e-10) / 10.0).abs() < 1e-15);
        for &a in &[1e-9, 1e-6, 4.3e-5, 4.4e-5, 1e-4, 4.3e-4, 4.4e-4, 0.01, 0.3, 1.0, 3.0] {
            let direct = (1.0 - 10f64.powf(-a)) / a;
            assert!((g(a) - direct).abs() < 1e-7 * direct, "g({a})");
            let h = 1e-6 * a.max(1e-3);
            let fd = (g(a + h) - g(a - h)) / (2.0 * h);
            assert!(
                (dg(a) - fd).abs() < 1e-5 * fd.abs().max(1e-3),
                "dg({a}) = {} vs {fd}",
                dg(a)
            );
        }
    }
}
