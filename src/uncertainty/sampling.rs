//! Draws: every sample's random numbers come from its own ChaCha12 stream, seeded by the run's
//! seed and selected by the sample's index (`set_stream`), so a sample's values depend on
//! (seed, index) alone: not on the thread that draws it, the shard it is in, or the order.

use super::fitcov::FitBlock;
use super::spec::{Distribution, Parameter};
use crate::error::{Error, Result};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha12Rng;
use rand_distr::{Beta, Distribution as _, Gamma, StandardNormal};

/// The uncertain parameters of a run: independent ones (from the file) then a joint block
/// (from a fit), drawn in that order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Space {
    /// Independent parameters.
    pub independent: Vec<Parameter>,
    /// Jointly normal parameters from a fit's covariance.
    pub fit: Option<FitBlock>,
}

impl Space {
    /// All parameters in draw (and column) order.
    pub fn parameters(&self) -> Vec<&Parameter> {
        let mut v: Vec<&Parameter> = self.independent.iter().collect();
        if let Some(f) = &self.fit {
            v.extend(f.parameters.iter());
        }
        v
    }

    /// Number of parameters.
    pub fn len(&self) -> usize {
        self.independent.len() + self.fit.as_ref().map_or(0, |f| f.parameters.len())
    }

    /// True when nothing is uncertain.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Join a fit block; a key in both is a usage error.
    pub fn with_fit(mut self, fit: FitBlock) -> Result<Space> {
        for p in &fit.parameters {
            if self.independent.iter().any(|q| q.key == p.key) {
                return Err(Error::Usage(format!(
                    "\"{}\" has a distribution in the network file and in the fit covariance: keep one",
                    p.key
                )));
            }
        }
        self.fit = Some(fit);
        Ok(self)
    }

    /// The values of sample `index` for `seed`, in [`Space::parameters`] order.
    pub fn draw(&self, seed: u64, index: u64) -> Vec<f64> {
        let mut rng = ChaCha12Rng::seed_from_u64(seed);
        rng.set_stream(index);
        let mut out = Vec::with_capacity(self.len());
        // Dirichlet draws of the transients with trajectory counts, by block, drawn once at
        // their first channel.
        let mut blocks: Vec<(usize, Vec<f64>)> = Vec::new();
        for p in &self.independent {
            match &p.distribution {
                Distribution::Counts {
                    alphas, channel, block, ..
                } => {
                    let at = match blocks.iter().position(|b| b.0 == *block) {
                        Some(i) => i,
                        None => {
                            blocks.push((*block, dirichlet(alphas, &mut rng)));
                            blocks.len() - 1
                        }
                    };
                    out.push(blocks[at].1[*channel]);
                }
                d => out.push(draw_one(d, &mut rng)),
            }
        }
        if let Some(f) = &self.fit {
            let z: Vec<f64> = (0..f.parameters.len()).map(|_| rng.sample(StandardNormal)).collect();
            out.extend(f.values(&z));
        }
        out
    }
}

fn draw_one(d: &Distribution, rng: &mut ChaCha12Rng) -> f64 {
    match *d {
        Distribution::Normal { mean, sd } => {
            let z: f64 = rng.sample(StandardNormal);
            mean + sd * z
        }
        Distribution::NormalAtLeast { mean, sd, low } => {
            let z: f64 = rng.sample(StandardNormal);
            (mean + sd * z).max(low)
        }
        Distribution::Uniform { low, high } => low + (high - low) * rng.random::<f64>(),
        Distribution::Beta { alpha, beta, low, high } => {
            // alpha, beta > 0 were checked when read.
            let x = Beta::new(alpha, beta).map_or(0.5, |b| b.sample(rng));
            low + (high - low) * x
        }
        Distribution::LogNormal { median, factor } => {
            let z: f64 = rng.sample(StandardNormal);
            median * (factor.ln() * z).exp()
        }
        Distribution::FromFit { value, .. } => value,
        Distribution::Counts { share, .. } => share,
    }
}

/// A draw from Dirichlet(`alphas`) (every α > 0): independent Gamma(αᵢ, 1) draws divided by their
/// sum (Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, Appendix A). `rand_distr`'s own
/// `Dirichlet` fixes the number of channels at compile time, so its `Gamma` is used directly.
pub fn dirichlet<R: Rng + ?Sized>(alphas: &[f64], rng: &mut R) -> Vec<f64> {
    let g: Vec<f64> = alphas
        .iter()
        .map(|&a| Gamma::new(a, 1.0).map_or(0.0, |d| d.sample(rng)))
        .collect();
    let sum: f64 = g.iter().sum();
    if sum > 0.0 {
        g.iter().map(|x| x / sum).collect()
    } else {
        // Every gamma underflowed (all α tiny): the mean, not a division by zero.
        let a0: f64 = alphas.iter().sum();
        alphas.iter().map(|a| a / a0).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(d: Distribution) -> Parameter {
        Parameter {
            key: "k".into(),
            unit: String::new(),
            distribution: d,
            line: None,
            written: String::new(),
        }
    }

    #[test]
    fn a_sample_depends_on_seed_and_index_only() {
        let s = Space {
            independent: vec![
                p(Distribution::Normal { mean: 1.0, sd: 0.1 }),
                p(Distribution::Uniform { low: 0.0, high: 1.0 }),
            ],
            fit: None,
        };
        assert_eq!(s.draw(7, 3), s.draw(7, 3));
        assert_ne!(s.draw(7, 3), s.draw(7, 4));
        assert_ne!(s.draw(7, 3), s.draw(8, 3));
    }

    #[test]
    fn bounded_distributions_stay_in_their_ranges() {
        let s = Space {
            independent: vec![
                p(Distribution::Uniform { low: 0.1, high: 0.3 }),
                p(Distribution::Beta {
                    alpha: 0.5,
                    beta: 0.7,
                    low: 0.2,
                    high: 0.4,
                }),
                p(Distribution::LogNormal {
                    median: 1e6,
                    factor: 3.0,
                }),
            ],
            fit: None,
        };
        for i in 0..2000 {
            let v = s.draw(1, i);
            assert!(
                (0.1..0.3).contains(&v[0]) && (0.2..=0.4).contains(&v[1]) && v[2] > 0.0,
                "{v:?}"
            );
        }
    }
}
