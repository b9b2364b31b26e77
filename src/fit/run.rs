//! Fitting one network file's text to data and ranking rivals: the glue the `fit`, `compare` and
//! `report` commands share (they read the files; this runs the engines on what was read).

use super::compare;
use super::mechanism::{self, Accuracy, Curve, FitOptions, FitResult, Setup};
use crate::error::Result;
use crate::file::Loaded;
use crate::file::data::Experiment;

/// The free keys: `given` ones (trimmed, empty ones dropped), else the file's `[fit] free` list.
pub fn free_keys(loaded: &Loaded, given: &[String]) -> Vec<String> {
    let given: Vec<String> = given
        .iter()
        .map(|k| k.trim().to_string())
        .filter(|k| !k.is_empty())
        .collect();
    if !given.is_empty() {
        return given;
    }
    loaded.doc.fit.as_ref().map_or(Vec::new(), |f| f.get_ref().free.clone())
}

/// One fitted network: the fit, dense fitted curves per experiment and the predictions at the
/// data points (mol/L, or fractions for yields), in experiment order.
#[derive(Debug, Clone)]
pub struct Fitted {
    /// The fit.
    pub result: FitResult,
    /// Fitted curves (300 output times per experiment).
    pub curves: Vec<Curve>,
    /// Predictions at every time-course point of each experiment.
    pub predicted: Vec<Vec<f64>>,
}

/// Fit `loaded` (with `base` overrides for every experiment) to `experiments`, freeing `free`
/// keys (empty: the file's `[fit] free` list); `progress` is called once per start.
pub fn fit_loaded(
    loaded: &Loaded,
    base: Vec<(String, String)>,
    free: &[String],
    experiments: &[Experiment],
    opts: &FitOptions,
    progress: &(dyn Fn() + Sync),
) -> Result<Fitted> {
    let keys = free_keys(loaded, free);
    let setup = Setup::new(loaded, base, experiments, &keys, Accuracy::default())?;
    let result = mechanism::fit(&setup, opts, progress)?;
    let x = result.solution.values.clone();
    let curves = mechanism::curves(&setup, &x, 300)?;
    let predicted = experiments
        .iter()
        .map(|e| setup.predict(e, &x).map(|p| p.points))
        .collect::<Result<Vec<_>>>()?;
    Ok(Fitted {
        result,
        curves,
        predicted,
    })
}

/// Rival fits ranked: indices by increasing AICc, the Akaike weights (in input order) and where
/// the best two disagree most, in words (None with fewer than two).
#[derive(Debug, Clone, PartialEq)]
pub struct Ranking {
    /// Indices into the fits, best (lowest AICc) first.
    pub order: Vec<usize>,
    /// Akaike weight of each fit, in input order.
    pub weights: Vec<f64>,
    /// The largest disagreement between the best two, in words.
    pub disagreement: Option<String>,
}

/// Rank `fits` (name, fit) against `experiments`.
pub fn rank(fits: &[(String, &Fitted)], experiments: &[Experiment]) -> Ranking {
    let weights = super::akaike_weights(&fits.iter().map(|f| f.1.result.aicc).collect::<Vec<_>>());
    let mut order: Vec<usize> = (0..fits.len()).collect();
    order.sort_by(|&i, &j| fits[i].1.result.aicc.total_cmp(&fits[j].1.result.aicc));
    let disagreement = if order.len() >= 2 {
        let (a, b) = (&fits[order[0]], &fits[order[1]]);
        compare::disagreement(experiments, &a.1.curves, &b.1.curves).map(|d| compare::describe(&d, &a.0, &b.0))
    } else {
        None
    };
    Ranking {
        order,
        weights,
        disagreement,
    }
}
