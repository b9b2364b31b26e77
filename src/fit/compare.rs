//! Where two fitted mechanisms disagree most: the measurement that would best tell them apart.

use super::mechanism::Curve;
use crate::file::data::Experiment;
use crate::units::{format_concentration, format_time, sig};

/// The largest disagreement between two models' predictions.
#[derive(Debug, Clone, PartialEq)]
pub struct Disagreement {
    /// Experiment name.
    pub experiment: String,
    /// Species.
    pub species: String,
    /// Time, s.
    pub time: f64,
    /// The two predictions (mol/L, or fraction for yields).
    pub values: (f64, f64),
    /// True for yields.
    pub is_yield: bool,
    /// Difference in units of the typical (median) measurement sd of that species.
    pub in_sd: f64,
}

/// Scan every experiment and measured species on the models' common dense grids.
pub fn disagreement(experiments: &[Experiment], a: &[Curve], b: &[Curve]) -> Option<Disagreement> {
    let mut best: Option<Disagreement> = None;
    for (e, (ca, cb)) in experiments.iter().zip(a.iter().zip(b)) {
        for (s, va, y) in &ca.series {
            let Some((_, vb, _)) = cb.series.iter().find(|x| &x.0 == s) else {
                continue;
            };
            let mut sds: Vec<f64> = e.points.iter().filter(|p| &p.species == s).map(|p| p.sd).collect();
            sds.sort_by(f64::total_cmp);
            let sd = sds.get(sds.len() / 2).copied().unwrap_or(1.0);
            // The grids are the same output times when the run lengths are equal.
            for (k, t) in ca.times.iter().enumerate() {
                let j = cb.times.partition_point(|u| u < t).min(cb.times.len() - 1);
                let d = (va[k] - vb[j]).abs() / sd;
                if best.as_ref().is_none_or(|b| d > b.in_sd) {
                    best = Some(Disagreement {
                        experiment: e.name.clone(),
                        species: s.clone(),
                        time: *t,
                        values: (va[k], vb[j]),
                        is_yield: *y,
                        in_sd: d,
                    });
                }
            }
        }
    }
    best
}

/// The disagreement in words.
pub fn describe(d: &Disagreement, a: &str, b: &str) -> String {
    let v = |x: f64| if d.is_yield { sig(x, 4) } else { format_concentration(x) };
    format!(
        "largest disagreement between {a} and {b}: {} in experiment \"{}\" at {}: {} vs {} ({} typical sd apart); \
         a measurement there would best tell them apart",
        d.species,
        d.experiment,
        format_time(d.time),
        v(d.values.0),
        v(d.values.1),
        sig(d.in_sd, 3)
    )
}
