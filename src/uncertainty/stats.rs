//! Statistics of the samples: quantiles, mean and standard deviation, Spearman rank
//! correlation, and first-order Sobol indices estimated from the same samples.

/// Quantile `p` (0..1) of sorted finite values by linear interpolation between order
/// statistics: h = (n − 1) p, Q = x⌊h⌋ + (h − ⌊h⌋)(x⌊h⌋+1 − x⌊h⌋). This is definition 7 of
/// Hyndman & Fan, "Sample quantiles in statistical packages", The American Statistician 50
/// (1996) 361 (NumPy's and R's default). None for no values.
pub fn quantile(sorted: &[f64], p: f64) -> Option<f64> {
    let n = sorted.len();
    if n == 0 {
        return None;
    }
    let h = (n - 1) as f64 * p.clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    Some(sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo]))
}

/// A quantile of right-censored values: a value, or beyond the censoring horizon.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Censored {
    /// The quantile, from the values observed.
    Value(f64),
    /// The quantile falls among the censored samples: above the horizon, not known.
    Beyond,
}

/// Quantile `p` of `sorted` finite observed values together with `censored` more that lie
/// beyond every observed one (right-censored at a horizon no smaller than the largest observed
/// value): definition 7 of Hyndman & Fan over all n = observed + censored samples, with
/// h = (n − 1) p; the quantile is a value when both order statistics it interpolates between
/// (only x⌊h⌋ when h is whole) are observed, and [`Censored::Beyond`] otherwise. With no
/// censored samples this is [`quantile`]. None for no samples.
pub fn quantile_censored(sorted: &[f64], censored: usize, p: f64) -> Option<Censored> {
    let seen = sorted.len();
    let n = seen + censored;
    if n == 0 {
        return None;
    }
    let h = (n - 1) as f64 * p.clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = if h > lo as f64 { (lo + 1).min(n - 1) } else { lo };
    if hi < seen {
        let hi = (lo + 1).min(seen - 1);
        Some(Censored::Value(
            sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo]),
        ))
    } else {
        Some(Censored::Beyond)
    }
}

/// Mean and sample standard deviation (n − 1 in the denominator; None for fewer than 2 values).
pub fn mean_sd(v: &[f64]) -> (Option<f64>, Option<f64>) {
    let n = v.len();
    if n == 0 {
        return (None, None);
    }
    let mean = v.iter().sum::<f64>() / n as f64;
    if n < 2 {
        return (Some(mean), None);
    }
    let ss: f64 = v.iter().map(|x| (x - mean) * (x - mean)).sum();
    (Some(mean), Some((ss / (n - 1) as f64).sqrt()))
}

/// Ranks 1..n, ties given the mean of the ranks they span.
pub fn ranks(v: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..v.len()).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]).then(a.cmp(&b)));
    let mut r = vec![0.0; v.len()];
    let mut i = 0;
    while i < idx.len() {
        let mut j = i;
        while j + 1 < idx.len() && v[idx[j + 1]] == v[idx[i]] {
            j += 1;
        }
        let mean_rank = (i + j) as f64 / 2.0 + 1.0;
        for &k in &idx[i..=j] {
            r[k] = mean_rank;
        }
        i = j + 1;
    }
    r
}

/// Pearson's correlation; None when either side has no spread or fewer than 3 pairs.
pub fn pearson(x: &[f64], y: &[f64]) -> Option<f64> {
    let n = x.len().min(y.len());
    if n < 3 {
        return None;
    }
    let mx = x[..n].iter().sum::<f64>() / n as f64;
    let my = y[..n].iter().sum::<f64>() / n as f64;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let (a, b) = (x[i] - mx, y[i] - my);
        sxy += a * b;
        sxx += a * a;
        syy += b * b;
    }
    (sxx > 0.0 && syy > 0.0).then(|| sxy / (sxx * syy).sqrt())
}

/// Spearman's rank correlation ρ: Pearson's correlation of the ranks (ties averaged), over the
/// pairs where both values are finite.
pub fn spearman(x: &[f64], y: &[f64]) -> Option<f64> {
    let (a, b): (Vec<f64>, Vec<f64>) = x
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .unzip();
    pearson(&ranks(&a), &ranks(&b))
}

/// First-order Sobol index S = Var(E[Y | X]) / Var(Y) estimated from given samples: sort the
/// pairs by x, cut them into m = ⌊√n⌋ classes of (nearly) equal count, and take the variance of
/// the class means of y (weighted by class size) over the variance of y. This is the
/// given-data estimator of Plischke, Borgonovo & Smith, "Global sensitivity measures from given
/// data", European Journal of Operational Research 226 (2013) 536 (`from memory` for the
/// citation); it is biased upwards by about (m − 1)/n for a parameter with no effect.
/// None for fewer than 16 finite pairs or no spread in y.
pub fn sobol_first_order(x: &[f64], y: &[f64]) -> Option<f64> {
    let mut pairs: Vec<(f64, f64)> = x
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .collect();
    let n = pairs.len();
    if n < 16 {
        return None;
    }
    pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mean = pairs.iter().map(|p| p.1).sum::<f64>() / n as f64;
    let var = pairs.iter().map(|p| (p.1 - mean).powi(2)).sum::<f64>() / n as f64;
    if var <= 0.0 {
        return None;
    }
    let m = (n as f64).sqrt().floor() as usize;
    let mut between = 0.0;
    for c in 0..m {
        let (a, b) = (c * n / m, (c + 1) * n / m);
        let cls = &pairs[a..b];
        let cm = cls.iter().map(|p| p.1).sum::<f64>() / cls.len() as f64;
        between += cls.len() as f64 * (cm - mean).powi(2);
    }
    Some(between / n as f64 / var)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_interpolate_between_order_statistics() {
        let v = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(quantile(&v, 0.5), Some(2.5));
        assert_eq!(quantile(&v, 0.0), Some(1.0));
        assert_eq!(quantile(&v, 1.0), Some(4.0));
        // h = 3 × 0.25 = 0.75
        assert_eq!(quantile(&v, 0.25), Some(1.75));
        assert_eq!(quantile(&[], 0.5), None);
    }

    #[test]
    fn ties_share_their_mean_rank() {
        assert_eq!(ranks(&[10.0, 20.0, 20.0, 5.0]), vec![2.0, 3.5, 3.5, 1.0]);
    }

    #[test]
    fn monotone_relations_have_rank_correlation_one() {
        let x: Vec<f64> = (0..20).map(|i| i as f64).collect();
        let y: Vec<f64> = x.iter().map(|v| v.powi(3) - 7.0).collect();
        assert!((spearman(&x, &y).unwrap() - 1.0).abs() < 1e-15);
        let z: Vec<f64> = x.iter().map(|v| -v.exp()).collect();
        assert!((spearman(&x, &z).unwrap() + 1.0).abs() < 1e-15);
    }

    // Right-censored quantiles: with no censoring they are definition 7 (Hyndman & Fan 1996);
    // with censored samples above every observed one, the order statistics of all n samples
    // (Klein & Moeschberger, Survival Analysis, 2003, ch. 4: with no censoring before the last
    // observation the Kaplan-Meier estimate is the empirical distribution, `from memory`).
    #[test]
    fn censored_quantiles_count_every_sample() {
        let v = [1.0, 2.0, 3.0, 4.0];
        for p in [0.0, 0.25, 0.5, 0.9, 1.0] {
            assert_eq!(quantile_censored(&v, 0, p), quantile(&v, p).map(Censored::Value));
        }
        // 4 observed + 4 censored: the median (h = 3.5) interpolates x4 and a censored one.
        assert_eq!(quantile_censored(&v, 4, 0.5), Some(Censored::Beyond));
        // 4 observed + 3 censored: the median (h = 3 exactly) is x4, observed.
        assert_eq!(quantile_censored(&v, 3, 0.5), Some(Censored::Value(4.0)));
        assert_eq!(quantile_censored(&v, 4, 0.25), Some(Censored::Value(2.75)));
        assert_eq!(quantile_censored(&[], 3, 0.025), Some(Censored::Beyond));
        assert_eq!(quantile_censored(&[], 0, 0.5), None);
    }
}
