//! Fitting one built network to data and ranking rivals: the glue the `fit`, `compare` and
//! `report` commands share (they read and build the files; this runs the engines on the networks).

use super::compare;
use super::mechanism::{self, Accuracy, Curve, FitOptions, FitResult, Progress, Setup};
use crate::error::{Error, Result};
use crate::file::data::Experiment;
use crate::network::Network;

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
    /// The family the network file wrote its molar energies in (the fitted file keeps it).
    pub energy_unit: crate::units::display::EnergyUnit,
}

/// Fit `net` (built with the command line's values) to `experiments`, freeing `free` keys (see
/// `file::Loaded::free_keys`); `progress` is called as the search goes ([`mechanism::fit`]).
pub fn fit_network(
    net: &Network,
    free: &[String],
    experiments: &[Experiment],
    opts: &FitOptions,
    progress: &(dyn Fn(&Progress) + Sync),
) -> Result<Fitted> {
    let setup = Setup::new(net, experiments, free, Accuracy::default())?;
    let result = mechanism::fit(&setup, opts, progress)?;
    let x = result.solution.values.clone();
    let curves = mechanism::curves(&setup, &x, 300)?;
    let predicted = experiments
        .iter()
        .map(|e| setup.predict(e, &x).map(|p| p.points))
        .collect::<Result<Vec<_>>>()?;
    Ok(Fitted {
        energy_unit: net.energy_unit,
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

/// `e` with the network's `name` in front of its message (usage and numerical errors; others,
/// which name their file already, as they are).
pub fn named_error(name: &str, e: Error) -> Error {
    match e {
        // A located diagnostic ("error: FILE:LINE: ...", a --set key refused) names its file.
        Error::Usage(m) if m.starts_with("error:") => Error::Usage(m),
        Error::Usage(m) => Error::Usage(format!("{name}: {m}")),
        Error::Numerical(m) => Error::Numerical(format!("{name}: {m}")),
        other => other,
    }
}

/// Rival networks fitted to the same data, and their ranking.
#[derive(Debug, Clone)]
pub struct Comparison {
    /// (name, fit), in input order.
    pub fits: Vec<(String, Fitted)>,
    /// Order by AICc, Akaike weights and the largest disagreement of the best two.
    pub ranking: Ranking,
}

impl Comparison {
    /// Rank `fits` (name, fit) against `experiments` ([`rank`]).
    pub fn new(fits: Vec<(String, Fitted)>, experiments: &[Experiment]) -> Comparison {
        let named: Vec<(String, &Fitted)> = fits.iter().map(|(n, f)| (n.clone(), f)).collect();
        let ranking = rank(&named, experiments);
        Comparison { fits, ranking }
    }

    /// (name, fit, Akaike weight), best (lowest AICc) first.
    pub fn ranked(&self) -> Vec<(&str, &Fitted, f64)> {
        self.ranking
            .order
            .iter()
            .map(|&i| (self.fits[i].0.as_str(), &self.fits[i].1, self.ranking.weights[i]))
            .collect()
    }

    /// The best fit (lowest AICc): (name, fit); None when there are no fits.
    pub fn best(&self) -> Option<(&str, &Fitted)> {
        self.ranking
            .order
            .first()
            .map(|&i| (self.fits[i].0.as_str(), &self.fits[i].1))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_go_in_front_of_usage_and_numerical_errors() {
        let e = named_error("a.toml", Error::Usage("no data".into()));
        assert_eq!(e.to_string(), Error::Usage("a.toml: no data".into()).to_string());
        let e = named_error("b.toml", Error::Numerical("singular".into()));
        assert!(e.to_string().contains("b.toml: singular"), "{e}");
    }
}
