//! Sensitivities of the yields and photon costs to every quantum yield, fraction, rate and
//! barrier, exactly, from one factorisation of I − Q and two adjoint solves per end.
//!
//! With N = (I − Q)⁻¹, the start π, visits vᵀ = πᵀN and uᵀ = vᵀQ₁N (analyse's vectors), the
//! yield of end k is B_k = vᵀr_k + π_k and the photons towards it m_k = vᵀQ₁w_k + vᵀr₁_k, where
//! r_k, r₁_k are column k of R and of its photon part R₁, and w_k = N r_k. Since
//! ∂N = N ∂Q N, for a parameter θ moving Q and R by ∂Q, ∂R (and the photon parts ∂Q₁, ∂R₁):
//!
//! - ∂B_k = vᵀ ∂Q w_k + vᵀ ∂r_k;
//! - ∂m_k = vᵀ ∂Q s_k + uᵀ ∂Q w_k + vᵀ ∂Q₁ w_k + uᵀ ∂r_k + vᵀ ∂r₁_k, with s_k = N(Q₁w_k + r₁_k).
//!
//! So w_k and s_k (two solves with the one LU per end k) serve every parameter, and each
//! parameter costs a pass over its few nonzero ∂P entries ([`moves`]: exact derivatives of the
//! normalised rates and channel shares). The mean photons given end k are M_k = m_k/B_k, so
//! d ln M_k / d ln θ = θ (∂m_k/m_k − ∂B_k/B_k). For rate constants given by a barrier E
//! (Eyring ΔG‡ or ΔH‡, Arrhenius Ea), k ∝ exp(−E/RT) at fixed temperature, so
//! ∂/∂E = −(k/RT) ∂/∂k exactly; barriers are reported per kcal/mol. At an upper bound (a quantum
//! yield whose absorber's yields already sum to 1, fixed fractions that reach 1 beside a
//! "rest") the derivative is the one from below, the side the value can move to.
//! [`finite_differences`] is the slow reference the tests check this against.

mod differences;
mod moves;

pub use differences::{STEP, finite_differences};

use super::build::{self, Parameter, Settings, Values};
use super::{Chain, Solved, solve};
use crate::error::Result;
use crate::model::Model;
use crate::network::Network;
use crate::units::constants::{CALORIE, GAS_CONSTANT};
use moves::{DMove, Index};
use serde::Serialize;

/// How one parameter moves the answer, per absorbing state of the chain.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sensitivity {
    /// What the parameter is.
    pub parameter: String,
    /// Its key for `--set`, `--free` and `[[uncertain]]`, where it has one.
    pub key: Option<String>,
    /// Its value, in `unit`.
    pub value: f64,
    /// Unit of `value`, written out.
    pub unit: String,
    /// d ln(mean photons | end k) / d ln(parameter), per absorbing state (None where not defined).
    pub elasticity_photons: Vec<Option<f64>>,
    /// d(yield of k) / d(parameter), in 1/`unit`.
    pub yield_derivative: Vec<f64>,
    /// For a rate given by a barrier: d ln(mean photons | end k) / d(barrier), per kcal/mol.
    pub photons_per_barrier: Option<Vec<Option<f64>>>,
    /// For a rate given by a barrier: d(yield of k) / d(barrier), per kcal/mol.
    pub yield_per_barrier: Option<Vec<f64>>,
}

/// How the sensitivities are found, in words (for reports).
pub const METHOD: &str = "exact derivatives of the chain (one factorisation of I − Q, two adjoint solves per end, \
                          ∂N = N ∂Q N); barriers by ∂/∂E = −(k/RT) ∂/∂k";

/// Sensitivities for every parameter of [`build::parameters`], for a molecule started from
/// `start` (a distribution over the chain's states).
pub fn sensitivities(model: &Model, net: &Network, settings: &Settings, start: &[f64]) -> Result<Vec<Sensitivity>> {
    let values = Values::of(model, net);
    let (chain, parts) = build::build_parts(model, net, settings, &values)?;
    let mut s = start.to_vec();
    s.resize(chain.states.len(), 0.0);
    let solved = solve(&chain, &s)?;
    let adjoint = Adjoint::new(&solved)?;
    let index = Index::of(&parts, &chain, model.reactions.len(), net.photo.len());
    let rt_per_kcal = GAS_CONSTANT * model.temperature / (1000.0 * CALORIE);
    let mut out = Vec::new();
    for p in build::parameters(model, net) {
        if !(p.value > 0.0 && p.value.is_finite()) {
            continue;
        }
        let dp = moves::derivative(&p, model, net, &values, &chain, &parts, &index);
        let (db, dm) = adjoint.apply(&chain, &solved, &dp);
        let key = p.key.map(|k| k.spell(net));
        out.push(adjoint.sensitivity(p, key, &db, &dm, rt_per_kcal));
    }
    Ok(out)
}

/// The per-end vectors every parameter's derivative is read from.
struct Adjoint {
    /// Number of ends.
    r: usize,
    /// w_k = N r_k, stored by transient state then end: w[j·r + k].
    w: Vec<f64>,
    /// s_k = N(Q₁ w_k + r₁_k), stored the same way.
    s: Vec<f64>,
    /// Yields B_k.
    b: Vec<f64>,
    /// Photons towards each end, m_k = B_k · (mean photons | k).
    m: Vec<f64>,
    /// Condition estimate of I − Q: 2 ‖N‖∞ (‖I − Q‖∞ ≤ 2), ‖N‖∞ the largest expected number of
    /// moves before absorption from any transient state, max (N 1).
    kappa: f64,
}

impl Adjoint {
    fn new(x: &Solved) -> Result<Adjoint> {
        let (m, r) = (x.trans.len(), x.absorbing.len());
        let mut cols = vec![vec![0.0; m]; r];
        let mut cols1 = vec![vec![0.0; m]; r];
        for (i, k, p) in x.r0.iter() {
            cols[k][i] += p;
        }
        for (i, k, p) in x.r1.iter() {
            cols[k][i] += p;
            cols1[k][i] += p;
        }
        let (mut w, mut s) = (vec![0.0; m * r], vec![0.0; m * r]);
        for k in 0..r {
            let wk = x.lu.solve(&cols[k])?;
            let mut rhs = x.q1.mul(&wk);
            rhs.iter_mut().zip(&cols1[k]).for_each(|(a, b)| *a += b);
            let sk = x.lu.solve(&rhs)?;
            for j in 0..m {
                w[j * r + k] = wk[j];
                s[j * r + k] = sk[j];
            }
        }
        let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
        let b = (0..r).map(|k| dot(&x.v, &cols[k]) + x.pi_a[k]).collect();
        let mm = (0..r).map(|k| dot(&x.u, &cols[k]) + dot(&x.v, &cols1[k])).collect();
        let steps = x.lu.solve(&vec![1.0; m])?;
        let kappa = 2.0 * steps.iter().fold(1.0, |a: f64, &b| a.max(b));
        Ok(Adjoint {
            r,
            w,
            s,
            b,
            m: mm,
            kappa,
        })
    }

    /// (∂B_k, ∂m_k) for every end k, from the entries of ∂P. A result within the rounding
    /// bound of its sum is 0: (n + κ) ε Σ|term| for n terms, whose factors v, u, w_k, s_k carry
    /// relative errors up to κ ε from the solves (common practice: a floating-point sum, and
    /// the first-order error of a linear solve). What cancels there, such as the derivative of
    /// the yield of a chain's only end, is not a number but rounding.
    fn apply(&self, chain: &Chain, x: &Solved, dp: &[DMove]) -> (Vec<f64>, Vec<f64>) {
        let r = self.r;
        let (mut db, mut dm) = (vec![0.0; r], vec![0.0; r]);
        let (mut sb, mut sm) = (vec![0.0; r], vec![0.0; r]);
        let mut n = 0.0;
        for e in dp {
            if chain.states[e.from].absorbing {
                continue;
            }
            n += 3.0;
            let i = x.local[e.from];
            let (vi, ui) = (x.v[i], x.u[i]);
            let j = x.local[e.to];
            if chain.states[e.to].absorbing {
                // ∂r_k (and ∂r₁_k for a photon move) at end k = j.
                let (b, m) = (e.d * vi, e.d * (ui + if e.photon { vi } else { 0.0 }));
                db[j] += b;
                dm[j] += m;
                sb[j] += b.abs();
                sm[j] += m.abs();
            } else {
                let (w, s) = (&self.w[j * r..(j + 1) * r], &self.s[j * r..(j + 1) * r]);
                let wq = if e.photon { vi + ui } else { ui };
                for k in 0..r {
                    let (b, m1, m2) = (e.d * vi * w[k], e.d * vi * s[k], e.d * wq * w[k]);
                    db[k] += b;
                    dm[k] += m1 + m2;
                    sb[k] += b.abs();
                    sm[k] += m1.abs() + m2.abs();
                }
            }
        }
        for k in 0..r {
            let floor = (n + self.kappa) * f64::EPSILON;
            if db[k].abs() <= floor * sb[k] {
                db[k] = 0.0;
            }
            if dm[k].abs() <= floor * sm[k] {
                dm[k] = 0.0;
            }
        }
        (db, dm)
    }

    /// The reported sensitivity of parameter `p` from ∂B and ∂m per unit of it.
    fn sensitivity(&self, p: Parameter, key: Option<String>, db: &[f64], dm: &[f64], rt_per_kcal: f64) -> Sensitivity {
        let value = p.value;
        let elasticity_photons: Vec<Option<f64>> = (0..self.r)
            .map(|k| (self.m[k] > 0.0 && self.b[k] > 0.0).then(|| value * (dm[k] / self.m[k] - db[k] / self.b[k])))
            .collect();
        let (photons_per_barrier, yield_per_barrier) = if p.barrier {
            // ∂/∂E = −(k/RT) ∂/∂k, E in kcal/mol.
            (
                Some(elasticity_photons.iter().map(|e| e.map(|e| -e / rt_per_kcal)).collect()),
                Some(db.iter().map(|d| -d * value / rt_per_kcal).collect()),
            )
        } else {
            (None, None)
        };
        // show a yield factor as the quantum yield itself: d yield / dΦ = (d yield / d factor) / Φ
        let yield_derivative = db.iter().map(|d| d / p.shown_per_unit).collect();
        Sensitivity {
            key,
            parameter: p.label,
            value: value * p.shown_per_unit,
            unit: p.unit.to_string(),
            elasticity_photons,
            yield_derivative,
            photons_per_barrier,
            yield_per_barrier,
        }
    }
}
