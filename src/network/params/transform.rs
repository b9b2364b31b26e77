//! The one map between a parameter's natural value and the unbounded scale on which fits search
//! and fit covariances are sampled.

use super::Range;
use serde::{Deserialize, Serialize};

/// How a parameter is kept in its range: fitted or sampled as itself, as ln x, or as
/// logit x = ln(x / (1 − x)).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum Transform {
    /// Unbounded: as itself (JSON "none"; "natural" is read too).
    #[default]
    #[serde(rename = "none", alias = "natural")]
    Identity,
    /// Positive: as ln x (JSON "log").
    #[serde(rename = "log")]
    Log,
    /// In [0, 1]: as logit x (JSON "logit").
    #[serde(rename = "logit")]
    Logit,
}

impl Transform {
    /// The transform that keeps a value of `range` in its range.
    pub fn for_range(range: Range) -> Self {
        match range {
            Range::Fraction => Transform::Logit,
            Range::Positive => Transform::Log,
            Range::Real => Transform::Identity,
        }
    }

    /// Natural value to the transformed scale, clamped inside the open range so that a start
    /// on a bound works (a fit starting at Φ = 1 starts at logit(1 − 10⁻¹²)).
    pub fn forward(self, x: f64) -> f64 {
        match self {
            Transform::Identity => x,
            Transform::Log => x.max(f64::MIN_POSITIVE).ln(),
            Transform::Logit => {
                let x = x.clamp(1e-12, 1.0 - 1e-12);
                (x / (1.0 - x)).ln()
            }
        }
    }

    /// Natural value to the transformed scale; None outside the open range.
    pub fn checked(self, v: f64) -> Option<f64> {
        match self {
            Transform::Identity => Some(v),
            Transform::Log => (v > 0.0).then(|| v.ln()),
            Transform::Logit => (v > 0.0 && v < 1.0).then(|| (v / (1.0 - v)).ln()),
        }
    }

    /// Transformed value to natural value.
    pub fn inverse(self, z: f64) -> f64 {
        match self {
            Transform::Identity => z,
            Transform::Log => z.exp(),
            Transform::Logit => 1.0 / (1.0 + (-z).exp()),
        }
    }

    /// dx/dz at z.
    pub fn slope(self, z: f64) -> f64 {
        match self {
            Transform::Identity => 1.0,
            Transform::Log => z.exp(),
            // x(1 − x) written so that it does not round to 0 far out on either side.
            Transform::Logit => {
                let e = (-z.abs()).exp();
                e / ((1.0 + e) * (1.0 + e))
            }
        }
    }

    /// The name of the scale: "natural", "log" or "logit".
    pub fn scale_name(self) -> &'static str {
        match self {
            Transform::Identity => "natural",
            Transform::Log => "log",
            Transform::Logit => "logit",
        }
    }

    /// The word in JSON: "none", "log" or "logit".
    pub fn word(self) -> &'static str {
        match self {
            Transform::Identity => "none",
            Transform::Log => "log",
            Transform::Logit => "logit",
        }
    }

    /// True when the transformed value sits at (numerically on) the edge of the range.
    pub fn at_bound(self, z: f64) -> bool {
        match self {
            Transform::Identity => false,
            Transform::Log => z < -600.0,
            Transform::Logit => z.abs() > 14.0,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_and_slopes() {
        for (t, x) in [
            (Transform::Identity, -3.5),
            (Transform::Log, 2.5e-7),
            (Transform::Logit, 0.3),
        ] {
            let z = t.forward(x);
            assert!((t.inverse(z) - x).abs() <= 1e-15 * x.abs().max(1.0));
            assert_eq!(t.checked(x), Some(z));
            let h = 1e-6;
            let fd = (t.inverse(z + h) - t.inverse(z - h)) / (2.0 * h);
            assert!((fd - t.slope(z)).abs() <= 1e-6 * t.slope(z).abs(), "{t:?}");
        }
        assert_eq!(Transform::Logit.checked(1.0), None);
        assert_eq!(Transform::Log.checked(0.0), None);
        let json: Vec<Transform> = serde_json::from_str(r#"["none", "natural", "log", "logit"]"#).unwrap();
        assert_eq!(
            json,
            [
                Transform::Identity,
                Transform::Identity,
                Transform::Log,
                Transform::Logit
            ]
        );
    }
}
