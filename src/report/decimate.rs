//! Fewer points for a plotted curve: at most four per pixel column.
//!
//! A run with a million output times would put a million vertices into every curve of its SVG.
//! A curve drawn `columns` px wide shows at most one vertical stroke per pixel column, so per
//! column the first, last, lowest and highest points (in the order they came) draw the same
//! picture: a one-sample spike survives, the point count stays within `4 × columns` (plus the
//! points off the axis that are dropped). `common practice` for plotting long time series
//! (min–max decimation per pixel).

/// Streaming decimation of one curve: push points in order of increasing x, take the kept
/// points with [`Decimator::finish`]. Memory stays bounded by the column count, not the input.
#[derive(Debug, Clone)]
pub struct Decimator {
    /// Where the axis starts and ends, in the drawn coordinate (log10 of x on a log axis).
    lo: f64,
    hi: f64,
    log: bool,
    columns: usize,
    kept: Vec<(f64, f64)>,
    /// The current column and its first, lowest, highest and last points.
    column: Option<(usize, [(f64, f64); 4])>,
}

impl Decimator {
    /// A decimator for an x axis over `x0..x1` drawn `columns` px wide, logarithmic when `log`
    /// (points with x ≤ 0 are then dropped; they have no place on the axis).
    pub fn new(x0: f64, x1: f64, columns: usize, log: bool) -> Decimator {
        let (lo, hi) = if log {
            (x0.max(f64::MIN_POSITIVE).log10(), x1.max(f64::MIN_POSITIVE).log10())
        } else {
            (x0, x1)
        };
        Decimator {
            lo,
            hi,
            log,
            columns: columns.max(1),
            kept: Vec::new(),
            column: None,
        }
    }

    fn column_of(&self, x: f64) -> Option<usize> {
        let u = if self.log {
            if x <= 0.0 {
                return None;
            }
            x.log10()
        } else {
            x
        };
        if !u.is_finite() {
            return None;
        }
        let span = self.hi - self.lo;
        let f = if span > 0.0 { (u - self.lo) / span } else { 0.0 };
        Some((f * self.columns as f64).floor().clamp(0.0, (self.columns - 1) as f64) as usize)
    }

    /// Add the next point (x not below the one before).
    pub fn push(&mut self, x: f64, y: f64) {
        let Some(c) = self.column_of(x) else {
            return;
        };
        if !y.is_finite() {
            return;
        }
        let p = (x, y);
        match &mut self.column {
            Some((cur, pts)) if *cur == c => {
                if y < pts[1].1 {
                    pts[1] = p;
                }
                if y > pts[2].1 {
                    pts[2] = p;
                }
                pts[3] = p;
            }
            _ => {
                self.flush();
                self.column = Some((c, [p; 4]));
            }
        }
    }

    /// Move the finished column's points into `kept`, in x order, without repeats.
    fn flush(&mut self) {
        if let Some((_, pts)) = self.column.take() {
            let (first, low, high, last) = (pts[0], pts[1], pts[2], pts[3]);
            let (a, b) = if low.0 <= high.0 { (low, high) } else { (high, low) };
            for q in [first, a, b, last] {
                if self.kept.last() != Some(&q) {
                    self.kept.push(q);
                }
            }
        }
    }

    /// The kept points, in x order.
    pub fn finish(mut self) -> Vec<(f64, f64)> {
        self.flush();
        self.kept
    }
}

/// The points of `xs`, `ys` kept for an axis over `x0..x1` drawn `columns` px wide.
pub fn decimate(xs: &[f64], ys: &[f64], x0: f64, x1: f64, columns: usize, log: bool) -> Vec<(f64, f64)> {
    let mut d = Decimator::new(x0, x1, columns, log);
    for (x, y) in xs.iter().zip(ys) {
        d.push(*x, *y);
    }
    d.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_million_points_become_at_most_four_per_column_and_a_spike_survives() {
        let n = 1_000_000;
        let xs: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let mut ys: Vec<f64> = xs.iter().map(|x| (x / 1e5).sin()).collect();
        ys[777_777] = 50.0; // one sample high
        ys[123_457] = -50.0; // one sample low
        let kept = decimate(&xs, &ys, 0.0, (n - 1) as f64, 700, false);
        assert!(kept.len() <= 4 * 700, "{} points kept", kept.len());
        assert!(kept.contains(&(777_777.0, 50.0)));
        assert!(kept.contains(&(123_457.0, -50.0)));
        assert_eq!(kept.first(), Some(&(0.0, 0.0)));
        assert_eq!(kept.last().map(|p| p.0), Some((n - 1) as f64));
        assert!(kept.windows(2).all(|w| w[0].0 <= w[1].0), "x order kept");
    }

    #[test]
    fn few_points_pass_unchanged_and_a_log_axis_drops_t_zero() {
        let xs = [0.0, 1.0, 10.0, 100.0];
        let ys = [5.0, 4.0, 3.0, 2.0];
        assert_eq!(decimate(&xs, &ys, 0.0, 100.0, 700, false).len(), 4);
        let log = decimate(&xs, &ys, 1.0, 100.0, 700, true);
        assert_eq!(log, vec![(1.0, 4.0), (10.0, 3.0), (100.0, 2.0)]);
    }
}
