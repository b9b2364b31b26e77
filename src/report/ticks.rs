//! Tick marks for the logarithmic axes of the report's x–y plots.
//!
//! A plotting library's own log ticks label only powers of ten (none at all when the data span
//! less than a decade) and write each tick as the float it computed (0.30000000000000004). Here
//! the labelled values are round numbers in the axis unit, the sparsest of 1, 1-2-5 and
//! 1-2-3-…-9 per decade that labels at least [`WANTED_LABELS`] of them (evenly spaced round
//! values when the axis spans too little for [`MIN_LABELS`]), and a label that would overlap the one before it on
//! the drawn axis is left out (`common practice` for axis design: labels never collide).

use crate::units::sig;

/// Fewest labelled values an axis should carry.
pub const MIN_LABELS: usize = 3;

/// Labelled values a set of round values per decade should give to be chosen.
pub const WANTED_LABELS: usize = 4;

/// Most labelled values before whole decades are skipped.
const MAX_LABELS: usize = 12;

/// Approximate advance of one character of the plots' tick labels (12 px sans-serif), px.
pub const CHAR_WIDTH: f64 = 7.5;

/// Clear space kept between two neighbouring labels, px.
const GAP: f64 = 6.0;

/// The text of a tick label: 4 significant figures, no float noise, no trailing zeros ("0.3",
/// "10", "2.5e-5").
pub fn label(v: f64) -> String {
    let s = sig(v, 4);
    // Exponent form keeps no trailing zeros either: "1e-5", not "1.000e-5".
    match s.split_once('e') {
        Some((m, e)) if m.contains('.') => format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.')),
        _ => s,
    }
}

/// Whole powers of ten within `lo..hi` (both > 0), every one or every second, third, … so that
/// at most `most` remain (`common practice`: a log axis spanning many decades labels decades).
pub fn decades(lo: f64, hi: f64, most: usize) -> Vec<f64> {
    if !(lo > 0.0 && hi > lo && hi.is_finite()) {
        return Vec::new();
    }
    let (k0, k1) = (lo.log10().ceil() as i32, hi.log10().floor() as i32);
    let n = (k1 - k0 + 1).max(0) as usize;
    let step = n.div_ceil(most.max(1)).max(1) as i32;
    let first = k0 + (k0.rem_euclid(step) != 0) as i32 * (step - k0.rem_euclid(step));
    (first..=k1).step_by(step as usize).map(|k| decimal(1.0, k)).collect()
}

/// A power of ten as it is printed: "10⁻⁶", "10³⁸", "1", "10".
pub fn power_label(v: f64) -> String {
    let k = v.log10().round() as i32;
    match k {
        0 => "1".into(),
        1 => "10".into(),
        _ => {
            let sup: String = k
                .to_string()
                .chars()
                .map(|c| match c {
                    '-' => '⁻',
                    '0' => '⁰',
                    '1' => '¹',
                    '2' => '²',
                    '3' => '³',
                    '4' => '⁴',
                    '5' => '⁵',
                    '6' => '⁶',
                    '7' => '⁷',
                    '8' => '⁸',
                    _ => '⁹',
                })
                .collect();
            format!("10{sup}")
        }
    }
}

/// The value `m`·10^`k` as the double nearest to its decimal spelling (3e-1 is 0.3, not
/// 0.30000000000000004).
fn decimal(m: f64, k: i32) -> f64 {
    format!("{m}e{k}").parse().unwrap_or(m * 10f64.powi(k))
}

/// Labelled and light (grid only) values for a log axis over `lo..hi` (both > 0) drawn over
/// `pixels` px: labels along the axis (`vertical` false: an x axis, labels side by side and as
/// wide as their text; true: a y axis, labels stacked one text line high) never overlap.
pub fn log_ticks(lo: f64, hi: f64, pixels: f64, vertical: bool) -> (Vec<f64>, Vec<f64>) {
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if !(lo > 0.0 && hi.is_finite()) {
        return (Vec::new(), Vec::new());
    }
    let inside = |v: &f64| *v >= lo * (1.0 - 1e-9) && *v <= hi * (1.0 + 1e-9);
    let (k0, k1) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    let at = |ms: &[f64]| -> Vec<f64> {
        (k0..=k1)
            .flat_map(|k| ms.iter().map(move |&m| decimal(m, k)))
            .filter(inside)
            .collect()
    };
    let nine: Vec<f64> = (1..=9).map(f64::from).collect();
    let light = if k1 - k0 <= 8 { at(&nine) } else { at(&[1.0]) };
    let mut bold = Vec::new();
    for ms in [&[1.0][..], &[1.0, 2.0, 5.0], &nine] {
        bold = at(ms);
        if bold.len() >= WANTED_LABELS {
            break;
        }
    }
    if bold.len() < MIN_LABELS {
        bold = linear_ticks(lo, hi);
    } else if bold.len() > MAX_LABELS {
        let step = bold.len().div_ceil(MAX_LABELS);
        bold = bold.into_iter().step_by(step).collect();
    }
    let span = (hi / lo).log10();
    let position = |v: f64| {
        if span > 0.0 {
            pixels * (v / lo).log10() / span
        } else {
            0.0
        }
    };
    (thin(bold, position, vertical), light)
}

/// Round values evenly spaced over `lo..hi`: a step of 1, 2 or 5 × 10ⁿ giving three to eight.
pub fn linear_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let range = hi - lo;
    if !(range > 0.0 && range.is_finite()) {
        return vec![lo];
    }
    let raw = range / 4.0;
    let k = raw.log10().floor() as i32;
    let m = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .find(|&m| decimal(m, k) >= raw)
        .unwrap_or(10.0);
    let step = decimal(m, k);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last)
        .map(|i| {
            let v = i as f64 * step;
            sig(v, 12).parse().unwrap_or(v)
        })
        .collect()
}

/// Drop each label that would overlap the last one kept; `position` maps a value to px along
/// the axis.
fn thin(values: Vec<f64>, position: impl Fn(f64) -> f64, vertical: bool) -> Vec<f64> {
    let extent = |v: f64| {
        if vertical {
            2.0 * CHAR_WIDTH
        } else {
            label(v).chars().count() as f64 * CHAR_WIDTH
        }
    };
    let mut kept: Vec<f64> = Vec::new();
    for v in values {
        let clear = kept
            .last()
            .is_none_or(|&p| (position(v) - position(p)).abs() >= (extent(v) + extent(p)) / 2.0 + GAP);
        if clear {
            kept.push(v);
        }
    }
    kept
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decades_are_labelled_as_powers_of_ten_and_thinned() {
        assert_eq!(label(1e-5), "1e-5");
        assert_eq!(power_label(1e-6), "10⁻⁶");
        assert_eq!(power_label(1e38), "10³⁸");
        assert_eq!(decades(0.5e-6, 2e11, 20).len(), 18);
        let few = decades(1e-3, 1e38, 8);
        assert!(few.len() <= 8 && few.len() >= 5, "{few:?}");
        assert!(
            few.iter()
                .all(|v| power_label(*v) == "1" || power_label(*v).starts_with("10"))
        );
    }

    #[test]
    fn labels_are_round_numbers_within_a_decade_and_across_decades() {
        // Less than a decade: 1-2-…-9 values, not one label.
        let (b, _) = log_ticks(0.001, 0.01, 787.0, false);
        assert!(b.len() >= MIN_LABELS, "{b:?}");
        assert!(b.iter().all(|v| label(*v).len() <= 5), "{b:?}");
        // Several decades: powers of ten.
        let (b, l) = log_ticks(0.01, 1.0, 787.0, false);
        assert_eq!(
            b.iter().map(|v| label(*v)).collect::<Vec<_>>(),
            ["0.01", "0.02", "0.05", "0.1", "0.2", "0.5", "1"]
        );
        assert!(l.len() > b.len());
        // Half a decade: evenly spaced round values.
        let (b, _) = log_ticks(19.5, 60.0, 450.0, true);
        assert_eq!(
            b.iter().map(|v| label(*v)).collect::<Vec<_>>(),
            ["20", "30", "40", "50", "60"]
        );
        let (b, _) = log_ticks(1.02, 1.3, 787.0, false);
        assert!(b.len() >= MIN_LABELS, "{b:?}");
    }

    #[test]
    fn neighbouring_labels_do_not_overlap() {
        for (lo, hi) in [(0.0021, 0.019), (2.1, 19.0), (9.0, 10.5), (1e-7, 1e7), (3.3e-5, 2.2e-4)] {
            let (b, _) = log_ticks(lo, hi, 787.0, false);
            let pos = |v: f64| 787.0 * (v / lo).log10() / (hi / lo).log10();
            for w in b.windows(2) {
                let need = (label(w[0]).len() + label(w[1]).len()) as f64 * CHAR_WIDTH / 2.0;
                assert!(pos(w[1]) - pos(w[0]) >= need, "{lo}..{hi}: {w:?}");
            }
        }
    }
}
