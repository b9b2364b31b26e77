//! Tabulated functions of wavelength: molar absorption coefficients, quantum yields,
//! background absorbance, relative lamp power.

/// What a tabulated spectrum is outside its first and last wavelength.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outside {
    /// Zero (an absorption band that ends).
    Zero,
    /// The nearest tabulated value (a quantum yield measured over a range).
    Nearest,
}

/// A function of wavelength (m): a constant, or a table interpolated linearly.
#[derive(Debug, Clone, PartialEq)]
pub enum Spectrum {
    /// The same value at every wavelength; `at` is the wavelength where it was stated, if one was.
    Constant {
        /// The value.
        value: f64,
        /// Where it was stated (m), if at one wavelength.
        at: Option<f64>,
    },
    /// Points `(wavelength m, value)` sorted by wavelength, strictly increasing.
    Table {
        /// The points.
        points: Vec<(f64, f64)>,
        /// Behaviour outside the table.
        outside: Outside,
    },
}

impl Spectrum {
    /// The plain mean of its values: the constant, or the mean of the table's points (0 for an
    /// empty table). For labels and `--set` read-back, not for integrals over wavelength.
    pub fn mean(&self) -> f64 {
        match self {
            Spectrum::Constant { value, .. } => *value,
            Spectrum::Table { points, .. } => points.iter().map(|p| p.1).sum::<f64>() / points.len().max(1) as f64,
        }
    }

    /// The value at `wavelength` (m).
    pub fn at(&self, wavelength: f64) -> f64 {
        match self {
            Spectrum::Constant { value, .. } => *value,
            Spectrum::Table { points, outside } => interpolate(points, wavelength, *outside),
        }
    }

    /// Largest value anywhere.
    pub fn max(&self) -> f64 {
        match self {
            Spectrum::Constant { value, .. } => *value,
            Spectrum::Table { points, .. } => points.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max),
        }
    }

    /// Wavelengths (m) where the function has kinks: a table's points (none for a constant).
    pub fn knots(&self) -> Vec<f64> {
        match self {
            Spectrum::Constant { .. } => Vec::new(),
            Spectrum::Table { points, .. } => points.iter().map(|p| p.0).collect(),
        }
    }

    /// Wavelength span of a table (m), None for a constant.
    pub fn span(&self) -> Option<(f64, f64)> {
        match self {
            Spectrum::Constant { .. } => None,
            Spectrum::Table { points, .. } => Some((points[0].0, points[points.len() - 1].0)),
        }
    }
}

/// Linear interpolation in sorted `points`.
pub fn interpolate(points: &[(f64, f64)], x: f64, outside: Outside) -> f64 {
    let n = points.len();
    if n == 0 {
        return 0.0;
    }
    if x < points[0].0 || x > points[n - 1].0 {
        return match outside {
            Outside::Zero => 0.0,
            Outside::Nearest => {
                if x < points[0].0 {
                    points[0].1
                } else {
                    points[n - 1].1
                }
            }
        };
    }
    let i = points.partition_point(|p| p.0 <= x);
    if i == 0 {
        return points[0].1;
    }
    if i >= n {
        return points[n - 1].1;
    }
    let (x0, y0) = points[i - 1];
    let (x1, y1) = points[i];
    if x1 == x0 {
        return y0;
    }
    y0 + (y1 - y0) * (x - x0) / (x1 - x0)
}

/// Trapezoid integral of sorted `points` over their whole span.
pub fn trapezoid(points: &[(f64, f64)]) -> f64 {
    points
        .windows(2)
        .map(|w| 0.5 * (w[0].1 + w[1].1) * (w[1].0 - w[0].0))
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_and_extends() {
        let p = vec![(1.0, 10.0), (2.0, 20.0), (4.0, 0.0)];
        assert_eq!(interpolate(&p, 1.5, Outside::Zero), 15.0);
        assert_eq!(interpolate(&p, 3.0, Outside::Zero), 10.0);
        assert_eq!(interpolate(&p, 2.0, Outside::Zero), 20.0);
        assert_eq!(interpolate(&p, 0.5, Outside::Zero), 0.0);
        assert_eq!(interpolate(&p, 0.5, Outside::Nearest), 10.0);
        assert_eq!(interpolate(&p, 9.0, Outside::Nearest), 0.0);
        assert_eq!(trapezoid(&p), 15.0 + 20.0);
    }
}
