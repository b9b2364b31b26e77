//! When the BDF integrator may answer a new iteration matrix with the factors of an older one.
//!
//! The BDF iteration matrix is I − γJ with γ = h·α. Between Jacobian evaluations diffsol asks
//! for a new factorisation whenever γ has moved by more than 30 % since its last request, every
//! 20 steps and after every rejected step, although J is the same. Production BDF codes keep
//! the factors of I − γ₀J while γ/γ₀ stays near 1 and scale each Newton correction by
//! 2/(1 + γ/γ₀), which balances the stiff and the non-stiff error modes of the modified Newton
//! iteration (Hindmarsh et al., "SUNDIALS: Suite of nonlinear and differential/algebraic
//! equation solvers", ACM TOMS 31 (2005) 363–396, section 2.1, from memory: CVODE refactors
//! when γ has moved by more than 30 %). A factorisation of a large network costs as much as
//! tens of Newton iterations, so a few more iterations are cheaper than a new one.
//!
//! The solver sees only matrices, so the rule is applied to what it is given: a new matrix is
//! answered with the kept factors when it equals I − rγ₀J for the kept factors' J (entry by
//! entry, to round-off) with r within [`RATIO`] of 1 either way. A matrix whose Jacobian differs
//! from the kept one is always factored; a freshly evaluated Jacobian equal to the kept one
//! (a linear network, or one evaluated again at an unchanged state) is a change of γ like any
//! other. A matrix asked for twice in a row after kept factors answered it (diffsol does that
//! after the Newton iteration failed with them, and by its 20-step age rule when h has not
//! changed) is factored. Measured on the generated
//! 1,000-species network (DEVELOPERS.md): 200 factorisations without reuse, 150 at CVODE's
//! 30 %, 96 at a ratio of 2, about 80 at 2.5 and beyond, with the Newton iterations within ±4 %;
//! once the solves had become cheaper (the coupled block alone), a ratio of 3 took 7 % less time
//! than 2 over four such networks, and was kept.
//!
//! What is bounded is the ratio between the factored matrix and the one requested. diffsol goes
//! on using a requested matrix while γ moves by up to 30 % (its own rule), so the ratio in force
//! during a Newton iteration can reach about 3 × 1.3 = 3.9 (or 0.7 / 3 ≈ 1/4.3), where the stiff modes
//! contract by up to about 0.95 per iteration instead of 1/2 (diffsol calls an iteration that
//! contracts by more than 0.9 divergent and asks again). That costs iterations, not
//! accuracy: the Newton test still decides convergence, and a failure makes diffsol ask again,
//! which is factored.

use faer::sparse::SymbolicSparseColMatRef;

/// The largest change of γ, as a ratio either way, answered with kept factors. With the
/// correction 2/(1 + r) a ratio r alone leaves a contraction of |1 − r|/(1 + r) per Newton
/// iteration, at most 1/2 here at the requested γ (see the module's note on γ in force).
pub const RATIO: f64 = 3.0;

/// The kept factors' matrix and the correction that goes with the latest request.
#[derive(Debug, Clone, Default)]
pub struct Reuse {
    /// 1 at diagonal entries, 0 elsewhere, in the order of the matrix's values.
    identity: Vec<f64>,
    /// The values of the factored matrix.
    factored: Vec<f64>,
    /// The entry of the factored matrix farthest from the identity, where γ ratios are read.
    pivot: Option<usize>,
    /// The ratio of the last request answered with kept factors, None after a factorisation.
    last_kept: Option<f64>,
    /// Scale of each solve: 2/(1 + r), 1 when the factors are the latest matrix's.
    scale: f64,
}

impl Reuse {
    /// For matrices of `pattern` (square, columns compressed), nothing factored yet.
    pub fn for_pattern(pattern: SymbolicSparseColMatRef<'_, usize>) -> Self {
        let mut identity = vec![0.0; pattern.compute_nnz()];
        let (ptr, rows) = (pattern.col_ptr(), pattern.row_idx());
        for c in 0..pattern.ncols() {
            for k in ptr[c]..ptr[c + 1] {
                if rows[k] == c {
                    identity[k] = 1.0;
                }
            }
        }
        Reuse {
            identity,
            scale: 1.0,
            ..Default::default()
        }
    }

    /// `values` were factored.
    pub fn factored(&mut self, values: &[f64]) {
        self.factored.clear();
        self.factored.extend_from_slice(values);
        self.pivot = farthest_from_identity(&self.factored, &self.identity);
        self.last_kept = None;
        self.scale = 1.0;
    }

    /// Whether a request for `values` is answered with the kept factors (and the correction
    /// [`Reuse::correction`] set for it); false means factor `values`.
    pub fn keep(&mut self, values: &[f64]) -> bool {
        if self.factored.len() != values.len() || values.len() != self.identity.len() {
            return false;
        }
        let Some(r) = gamma_ratio(&self.factored, values, &self.identity, self.pivot) else {
            return false;
        };
        if r == 1.0 {
            // the factored matrix itself
            self.scale = 1.0;
            self.last_kept = None;
            return true;
        }
        if self.last_kept == Some(r) || !(1.0 / RATIO..=RATIO).contains(&r) {
            // asked again after the kept factors were tried (the Newton iteration failed), or
            // too far
            return false;
        }
        self.last_kept = Some(r);
        self.scale = 2.0 / (1.0 + r);
        true
    }

    /// The factor each solve with the kept factors is multiplied by.
    pub fn correction(&self) -> f64 {
        self.scale
    }
}

/// The entry of `values` farthest from the identity (None when there is none off it).
fn farthest_from_identity(values: &[f64], identity: &[f64]) -> Option<usize> {
    let (mut big, mut at) = (0.0f64, None);
    for (k, (&o, &d)) in values.iter().zip(identity).enumerate() {
        let m = (o - d).abs();
        if m > big {
            (big, at) = (m, Some(k));
        }
    }
    at
}

/// r with `new` − I = r (`old` − I) entry by entry to round-off, when there is one: the ratio of
/// the γ of two iteration matrices I − γJ with the same J, read at `pivot` (the entry of `old`
/// farthest from the identity, [`farthest_from_identity`]). None when the Jacobians differ.
pub fn gamma_ratio(old: &[f64], new: &[f64], identity: &[f64], pivot: Option<usize>) -> Option<f64> {
    let Some(k) = pivot else {
        // J = 0 in both (or nothing but the identity): any γ gives the same matrix.
        return new.iter().zip(identity).all(|(n, d)| n == d).then_some(1.0);
    };
    let r = (new[k] - identity[k]) / (old[k] - identity[k]);
    if !(r.is_finite() && r > 0.0) {
        return None;
    }
    // Round-off of forming 1 − γJ and of the test itself: a few ε of each term's size
    // (common practice: a small multiple of ε for a handful of operations). A diagonal entry
    // carries the 1 it was formed with, so 1 − γJ near zero (γJ ≈ 1) is judged on the scale of
    // that 1, not of its small difference.
    let tol = 64.0 * f64::EPSILON;
    let same = old.iter().zip(new).zip(identity).all(|((&o, &n), &d)| {
        let off = (n - d) - r * (o - d);
        off.abs() <= tol * (n.abs() + r * o.abs() + (1.0 + r) * d)
    });
    same.then_some(r)
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::sparse::SymbolicSparseColMat;

    /// I − γJ for a 3×3 J with a full diagonal and two couplings.
    fn matrix(gamma: f64, j: &[f64; 5]) -> (SymbolicSparseColMat<usize>, Vec<f64>) {
        // columns: 0: (0,0) (1,0); 1: (1,1); 2: (0,2) (2,2)
        let p = SymbolicSparseColMat::new_checked(3, 3, vec![0, 2, 3, 5], None, vec![0, 1, 1, 0, 2]);
        let d = [1.0, 0.0, 1.0, 0.0, 1.0];
        let v = (0..5).map(|k| d[k] - gamma * j[k]).collect();
        (p, v)
    }

    const J: [f64; 5] = [-3.0e4, 3.0e4, -2.0e-20, 7.5, -1.0e2];

    #[test]
    fn the_ratio_of_two_gammas_is_found_to_round_off() {
        let (p, old) = matrix(0.01, &J);
        let (_, new) = matrix(0.0125, &J);
        let r = Reuse::for_pattern(p.as_ref());
        let got = gamma_ratio(&old, &new, &r.identity, farthest_from_identity(&old, &r.identity)).unwrap();
        assert!((got - 1.25).abs() < 1e-14, "{got}");
    }

    #[test]
    fn a_changed_jacobian_is_not_a_ratio() {
        let (p, old) = matrix(0.01, &J);
        let mut j2 = J;
        j2[3] *= 1.0 + 1e-9;
        let (_, new) = matrix(0.01, &j2);
        let r = Reuse::for_pattern(p.as_ref());
        assert_eq!(
            gamma_ratio(&old, &new, &r.identity, farthest_from_identity(&old, &r.identity)),
            None
        );
        // a tiny diagonal entry lost in 1 − γJ does not hide a real change elsewhere
        let mut j3 = J;
        j3[2] = 0.0;
        let (_, new) = matrix(0.011, &j3);
        assert!(
            gamma_ratio(&old, &new, &r.identity, farthest_from_identity(&old, &r.identity))
                .is_some_and(|x| (x - 1.1).abs() < 1e-12)
        );
    }

    /// A diagonal entry where γJᵢᵢ ≈ 1 (so 1 − γJᵢᵢ is a small difference carrying the round-off
    /// of the 1) still reads as the same Jacobian.
    #[test]
    fn a_diagonal_near_zero_keeps_its_ratio() {
        let j = [1.0 / 0.010_000_000_000_1, 3.0e4, -2.0e-20, 7.5, -1.0e2];
        let (p, old) = matrix(0.01, &j);
        let r = Reuse::for_pattern(p.as_ref());
        let pivot = farthest_from_identity(&old, &r.identity);
        for ratio in [1.25, 1.000_001, 0.999_999] {
            let (_, new) = matrix(0.01 * ratio, &j);
            let got = gamma_ratio(&old, &new, &r.identity, pivot);
            assert!(got.is_some_and(|g| (g - ratio).abs() < 1e-12), "{ratio}: {got:?}");
        }
    }

    #[test]
    fn kept_within_the_band_factored_outside_and_after_a_repeat() {
        let (p, old) = matrix(0.01, &J);
        let mut r = Reuse::for_pattern(p.as_ref());
        r.factored(&old);
        let (_, near) = matrix(0.0125, &J);
        assert!(r.keep(&near));
        assert!((r.correction() - 2.0 / 2.25).abs() < 1e-14);
        // the same request again: the Newton iteration failed with the kept factors
        assert!(!r.keep(&near));
        r.factored(&near);
        assert_eq!(r.correction(), 1.0);
        // the factored matrix itself: nothing to do, no correction, and again
        assert!(r.keep(&near) && r.keep(&near));
        assert_eq!(r.correction(), 1.0);
        let (_, far) = matrix(0.0125 * RATIO * 1.005, &J);
        assert!(!r.keep(&far));
        let (_, shrunk) = matrix(0.0125 / RATIO * 1.02, &J);
        assert!(r.keep(&shrunk));
        assert!((r.correction() - 2.0 / (1.0 + 1.02 / RATIO)).abs() < 1e-12);
        let (_, too_small) = matrix(0.0125 / RATIO * 0.98, &J);
        assert!(!r.keep(&too_small));
    }
}
