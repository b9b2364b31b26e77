//! The fit's slopes: predictions with their derivatives with respect to every free parameter
//! from one integration of the kinetics with forward sensitivities, and the choice between
//! those and central differences ([`Derivatives`]).

use super::lsq;
use super::mechanism::{Prediction, Setup, read};
use crate::error::{Error, Result};
use crate::file::data::Experiment;
use crate::kinetics;
use crate::model::Model;
use crate::network::params;

impl Setup<'_> {
    /// Predict every measurement of experiment `e` at `x` with its derivatives with respect to
    /// each free parameter (natural units), `columns[j]` in [`Prediction`] order (points, then
    /// end points): one integration of the states with their forward sensitivities
    /// ([`kinetics::sensitivity`]), the models on either side of each parameter giving the
    /// parametric terms. Each reading of the states (a yield, a ratio, a quantum yield, a
    /// lifetime) is differentiated by the chain rule through a central difference of the
    /// reading alone, the states moved along their sensitivities.
    pub fn predict_with_derivatives(&self, e: &Experiment, x: &[f64]) -> Result<(Prediction, Vec<Vec<f64>>)> {
        let net = self.network(e, x)?;
        let model = Model::compile(&net);
        let mut sides = Vec::with_capacity(self.free.len());
        for (f, &v) in self.free.iter().zip(x) {
            let h = DERIVATIVE_STEP
                * if v != 0.0 {
                    v.abs()
                } else {
                    f.start.abs().max(f64::MIN_POSITIVE)
                };
            let (up, down, span) = params::around(&net, f.address, h).map_err(Error::Usage)?;
            let (mu, md) = (Model::compile(&up), Model::compile(&down));
            sides.push((up, down, mu, md, span, params::get(&net, f.address).value));
        }
        let perturbed: Vec<kinetics::sensitivity::Perturbed> = sides
            .iter()
            .map(|(_, _, mu, md, span, v)| kinetics::sensitivity::Perturbed {
                plus: mu,
                minus: md,
                span: *span,
                scale: if *v != 0.0 { *v } else { *span },
            })
            .collect();
        let run = kinetics::sensitivity::simulate(&model, &perturbed, &self.options(e))?;
        let until = Self::until(e);
        let at = read(e, &net, &model, &run.layout, until, &run.times, &run.states)?;
        let flat = |p: &Prediction| p.points.iter().chain(&p.endpoints).copied().collect::<Vec<f64>>();
        let mut columns = Vec::with_capacity(sides.len());
        for (j, (up, down, mu, md, span, v)) in sides.iter().enumerate() {
            // How far each side is from the value: central, or one-sided at an end of the range.
            let above = params::get(up, self.free[j].address).value - v;
            let below = v - params::get(down, self.free[j].address).value;
            let moved = |d: f64| -> Vec<Vec<f64>> {
                run.states
                    .iter()
                    .zip(&run.sensitivities)
                    .map(|(y, s)| y.iter().zip(&s[j]).map(|(y, s)| y + d * s).collect())
                    .collect()
            };
            let p = read(e, up, mu, &run.layout, until, &run.times, &moved(above))?;
            let m = read(e, down, md, &run.layout, until, &run.times, &moved(-below))?;
            columns.push(flat(&p).iter().zip(flat(&m)).map(|(a, b)| (a - b) / span).collect());
        }
        Ok((at, columns))
    }

    /// Weighted residuals and their derivatives `columns[j][i]` = ∂rᵢ/∂xⱼ (natural units) from
    /// one sensitivity integration per experiment, None when an evaluation fails.
    pub fn residuals_with_derivatives(&self, x: &[f64]) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
        let obs = self.observations();
        let mut pred = Vec::with_capacity(obs.len());
        let mut columns = vec![Vec::with_capacity(obs.len()); self.free.len()];
        for e in self.experiments {
            let (p, d) = self.predict_with_derivatives(e, x).ok()?;
            pred.extend(p.points);
            pred.extend(p.endpoints);
            for (c, dj) in columns.iter_mut().zip(d) {
                c.extend(dj);
            }
        }
        let r = obs.iter().zip(&pred).map(|((y, s, _), f)| (y - f) / s).collect();
        for c in &mut columns {
            c.iter_mut().zip(&obs).for_each(|(v, (_, s, _))| *v = -*v / s);
        }
        Some((r, columns))
    }
}

/// How the fit's Jacobian is found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Derivatives {
    /// Forward sensitivities of the kinetics: one integration per experiment gives the
    /// residuals and every column.
    #[default]
    Sensitivities,
    /// Central differences: two integrations per experiment and free parameter per column.
    Differences,
}

impl Derivatives {
    /// Parse "sensitivities" or "differences".
    pub fn parse(s: &str) -> std::result::Result<Self, String> {
        match s.trim() {
            "sensitivities" => Ok(Derivatives::Sensitivities),
            "differences" => Ok(Derivatives::Differences),
            other => Err(format!(
                "--derivatives \"{other}\": use \"sensitivities\" (forward sensitivities of the kinetics) or \"differences\" (central differences)"
            )),
        }
    }

    /// In words, for reports.
    pub fn describe(self) -> &'static str {
        match self {
            Derivatives::Sensitivities => "slopes from forward sensitivities of the kinetics",
            Derivatives::Differences => "slopes from central differences",
        }
    }

    /// The word used in `--derivatives` and in JSON.
    pub fn word(self) -> &'static str {
        match self {
            Derivatives::Sensitivities => "sensitivities",
            Derivatives::Differences => "differences",
        }
    }
}

/// A setup as the least-squares search sees it, with the way its Jacobian is found.
pub(super) struct Evaluate<'s, 'a> {
    pub(super) setup: &'s Setup<'a>,
    pub(super) derivatives: Derivatives,
}

impl lsq::Residuals for Evaluate<'_, '_> {
    fn residuals(&self, x: &[f64]) -> Option<Vec<f64>> {
        self.setup.residuals(x)
    }

    fn has_derivatives(&self) -> bool {
        self.derivatives == Derivatives::Sensitivities
    }

    fn derivatives(&self, x: &[f64]) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
        self.setup.residuals_with_derivatives(x)
    }
}

/// The relative step of the parameters for the models on either side of a value (the
/// parametric terms of the sensitivities, exact where the right-hand side is linear in the
/// parameter; through a barrier, O(step²): (1e-6 E/RT)² / 6 ≈ 2e-10 relative for E = 90 kJ/mol at 298 K).
const DERIVATIVE_STEP: f64 = 1e-6;
