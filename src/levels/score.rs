//! Each set of values scored against measurements: as it stands (χ², −2 ln L and AICc with no
//! parameter estimated, [`fit::score::score`]) and, with free keys, refitted under each set
//! and ranked as `compare` ranks rival networks ([`fit::run::Comparison`]). The data are
//! already read (`file::data`); no file I/O, no printing.

use super::networks;
use crate::error::Result;
use crate::file::data::Experiment;
use crate::fit::compare;
use crate::fit::mechanism::{self, Accuracy, FitOptions, Progress, Setup};
use crate::fit::run::{self as fit_run, Comparison};
use crate::fit::score::{self as scoring, Score};
use crate::network::Network;

/// One set as it stands against the data.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SetScore {
    /// The set's label.
    pub label: String,
    /// χ², −2 ln L, AICc.
    pub score: Score,
    /// Akaike weight among the sets (from AICc).
    pub weight: f64,
}

/// Every set scored, and refitted when free keys were given.
#[derive(Debug, Clone)]
pub struct Scores {
    /// The sets as they stand, in file order.
    pub fixed: Vec<SetScore>,
    /// Indices into `fixed`, lowest AICc first.
    pub order: Vec<usize>,
    /// Where the best two sets as they stand disagree most over the measured species and times,
    /// in words (None with fewer than two sets).
    pub disagreement: Option<String>,
    /// The keys refitted under every set (empty: no refit).
    pub free: Vec<String>,
    /// The refits, ranked as `compare` ranks rivals (None without free keys).
    pub refit: Option<Comparison>,
}

/// Score every set of `net` against `experiments`; refit `free` under each when not empty
/// (`progress` as `fit` reports it).
pub fn score(
    net: &Network,
    experiments: &[Experiment],
    free: &[String],
    opts: &FitOptions,
    progress: &(dyn Fn(&Progress) + Sync),
) -> Result<Scores> {
    let nets = networks(net)?;
    let labels: Vec<&str> = net.levels.iter().map(|l| l.label.as_str()).collect();
    let mut scores = Vec::new();
    let mut curves = Vec::new();
    for (lnet, label) in nets.iter().zip(&labels) {
        let setup = Setup::fixed(lnet, experiments, Accuracy::default()).map_err(|e| fit_run::named_error(label, e))?;
        scores.push(scoring::score(&setup, &[]).map_err(|e| fit_run::named_error(label, e))?);
        curves.push(mechanism::curves(&setup, &[], 300).map_err(|e| fit_run::named_error(label, e))?);
    }
    let weights = scoring::akaike_weights(&scores.iter().map(|s| s.aicc).collect::<Vec<_>>());
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_by(|&i, &j| scores[i].aicc.total_cmp(&scores[j].aicc));
    let disagreement = match order[..] {
        [a, b, ..] => compare::disagreement(experiments, &curves[a], &curves[b])
            .map(|d| compare::describe(&d, &format!("\"{}\"", labels[a]), &format!("\"{}\"", labels[b]))),
        _ => None,
    };
    let fixed = scores
        .into_iter()
        .zip(&weights)
        .zip(&labels)
        .map(|((score, &weight), label)| SetScore {
            label: label.to_string(),
            score,
            weight,
        })
        .collect();
    let refit = if free.is_empty() {
        None
    } else {
        let mut fits = Vec::new();
        for (lnet, label) in nets.iter().zip(&labels) {
            let f = fit_run::fit_network(lnet, free, experiments, opts, progress)
                .map_err(|e| fit_run::named_error(label, e))?;
            fits.push((label.to_string(), f));
        }
        Some(Comparison::new(fits, experiments))
    };
    Ok(Scores {
        fixed,
        order,
        disagreement,
        free: free.to_vec(),
        refit,
    })
}
