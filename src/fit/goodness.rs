//! Does the fitted model describe the data? Two checks on the weighted residuals at the optimum:
//!
//! - χ² against its degrees of freedom, when every observation has a given sd: under the model
//!   and normal errors of those sd, χ² follows the χ² distribution with n − p degrees of
//!   freedom; the upper-tail probability says how often a χ² this large would arise by chance
//!   (Bevington & Robinson, Data Reduction and Error Analysis for the Physical Sciences, 3rd ed.,
//!   2003, ch. 11, `from memory` for the chapter).
//! - The runs of residual signs, per experiment (Wald & Wolfowitz, "On a test whether two
//!   samples are from the same population", Ann. Math. Statist. 11 (1940) 147–162): a model that
//!   misses the shape of a time course leaves residuals of one sign in long runs, so too *few*
//!   runs is the warning sign. The exact distribution of the number of runs given the counts of
//!   each sign is used (no normal approximation). The species of an experiment are taken one
//!   after another, each in time order (a species entirely above the fit and another entirely
//!   below is a misfit too; the joins can only add runs, so the test stays on the safe side).
//!
//! Both are judged at [`ALPHA`].

use statrs::distribution::{ChiSquared, ContinuousCDF};
use statrs::function::factorial::ln_binomial;

/// The significance level of the verdicts (common practice: 1 %, so a right model is flagged by
/// chance once in a hundred fits per check).
pub const ALPHA: f64 = 0.01;

/// Fewest residuals of each sign in an experiment for a runs test to say anything.
pub const MIN_EACH_SIGN: usize = 3;

/// χ² against its degrees of freedom.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Chi2Test {
    /// χ² = Σ rᵢ².
    pub chi2: f64,
    /// Degrees of freedom n − p.
    pub dof: usize,
    /// Probability of a χ² at least this large if the model and the sd are right.
    pub p_upper: f64,
}

impl Chi2Test {
    /// The test of `chi2` with `dof` degrees of freedom (None when dof is 0 or χ² not finite).
    pub fn new(chi2: f64, dof: usize) -> Option<Self> {
        if dof == 0 || !chi2.is_finite() {
            return None;
        }
        let d = ChiSquared::new(dof as f64).ok()?;
        Some(Chi2Test {
            chi2,
            dof,
            p_upper: d.sf(chi2),
        })
    }

    /// True when χ² is too large for the sd given: the model does not describe the data.
    pub fn fails(&self) -> bool {
        self.p_upper < ALPHA
    }

    /// True when χ² is too small for the sd given (they are likely overstated).
    pub fn too_small(&self) -> bool {
        self.p_upper > 1.0 - ALPHA
    }
}

/// The runs of residual signs in one experiment.
#[derive(Debug, Clone, PartialEq)]
pub struct RunsTest {
    /// Experiment name.
    pub experiment: String,
    /// Residuals above zero (measured above the fit).
    pub positive: usize,
    /// Residuals below zero.
    pub negative: usize,
    /// Runs counted (the experiment's species one after another).
    pub runs: usize,
    /// Runs expected if the signs were in random order.
    pub expected: f64,
    /// Probability of this few runs or fewer if the signs were in random order (None when there
    /// are too few residuals of a sign, [`MIN_EACH_SIGN`]).
    pub p_lower: Option<f64>,
}

impl RunsTest {
    /// The test on `sequences` of residuals (one per species, in time order, taken one after
    /// another); exact zeros are dropped (common practice).
    pub fn new(experiment: &str, sequences: &[Vec<f64>]) -> Self {
        let signs: Vec<bool> = sequences
            .iter()
            .flatten()
            .filter(|r| **r != 0.0 && r.is_finite())
            .map(|r| *r > 0.0)
            .collect();
        let positive = signs.iter().filter(|b| **b).count();
        let negative = signs.len() - positive;
        let runs = count_runs(&signs);
        let pmf = runs_distribution(positive, negative);
        let expected = pmf.iter().enumerate().map(|(r, p)| r as f64 * p).sum::<f64>();
        let p_lower = (positive >= MIN_EACH_SIGN && negative >= MIN_EACH_SIGN)
            .then(|| pmf.iter().take(runs + 1).sum::<f64>().min(1.0));
        RunsTest {
            experiment: experiment.to_string(),
            positive,
            negative,
            runs,
            expected,
            p_lower,
        }
    }

    /// True when there are too few runs: the residuals have a shape the model misses.
    pub fn fails(&self) -> bool {
        self.p_lower.is_some_and(|p| p < ALPHA)
    }
}

/// The number of runs (maximal blocks of one sign) in `signs`.
pub fn count_runs(signs: &[bool]) -> usize {
    if signs.is_empty() {
        return 0;
    }
    1 + signs.windows(2).filter(|w| w[0] != w[1]).count()
}

/// The exact distribution of the number of runs R in a random arrangement of `n1` of one sign and
/// `n2` of the other: element r is P(R = r). With C the binomial coefficient and N = C(n1+n2, n1),
/// P(R = 2k) = 2 C(n1−1, k−1) C(n2−1, k−1) / N and
/// P(R = 2k+1) = [C(n1−1, k) C(n2−1, k−1) + C(n1−1, k−1) C(n2−1, k)] / N
/// (Wald & Wolfowitz 1940; Swed & Eisenhart, Ann. Math. Statist. 14 (1943) 66–87).
pub fn runs_distribution(n1: usize, n2: usize) -> Vec<f64> {
    let n = n1 + n2;
    let mut p = vec![0.0; n + 1];
    if n1 == 0 || n2 == 0 {
        p[usize::from(n > 0)] = 1.0;
        return p;
    }
    // ln C(a, b), −∞ when b > a (no way).
    let lc = |a: usize, b: usize| {
        if b > a {
            f64::NEG_INFINITY
        } else {
            ln_binomial(a as u64, b as u64)
        }
    };
    let total = lc(n, n1);
    for (r, slot) in p.iter_mut().enumerate().skip(2) {
        let k = r / 2;
        *slot = if r % 2 == 0 {
            2.0 * (lc(n1 - 1, k - 1) + lc(n2 - 1, k - 1) - total).exp()
        } else {
            (lc(n1 - 1, k) + lc(n2 - 1, k - 1) - total).exp() + (lc(n1 - 1, k - 1) + lc(n2 - 1, k) - total).exp()
        };
    }
    p
}

/// The verdict on a fit: the χ² test (only when every observation has a given sd) and a runs
/// test per experiment.
#[derive(Debug, Clone, PartialEq)]
pub struct Goodness {
    /// χ² against its degrees of freedom (None when some sd are not given).
    pub chi2: Option<Chi2Test>,
    /// Runs of residual signs, per experiment with time-course points.
    pub runs: Vec<RunsTest>,
}

impl Goodness {
    /// True when a check says the model does not describe the data.
    pub fn fails(&self) -> bool {
        self.chi2.is_some_and(|c| c.fails()) || self.runs.iter().any(RunsTest::fails)
    }

    /// The verdict in one line.
    pub fn verdict(&self) -> String {
        let tested = self.chi2.is_some() || self.runs.iter().any(|r| r.p_lower.is_some());
        if self.fails() {
            "the model does not describe the data (see the checks below); its values and intervals describe the best misfit, not the chemistry".into()
        } else if !tested {
            "not judged: no sd given and too few residuals of each sign for a runs test".into()
        } else {
            format!(
                "no evidence against the model at the {} % level",
                crate::units::sig(100.0 * ALPHA, 2)
            )
        }
    }

    /// Each check in words, one line each.
    pub fn lines(&self) -> Vec<String> {
        let sig = crate::units::sig;
        let mut v = Vec::new();
        match &self.chi2 {
            Some(c) => v.push(format!(
                "χ² = {} on {} degrees of freedom (reduced {}): P(χ² this large by chance) = {}{}",
                sig(c.chi2, 5),
                c.dof,
                sig(c.chi2 / c.dof as f64, 4),
                p_text(c.p_upper),
                if c.fails() {
                    " — too large for the sd given: the model misses the data"
                } else if c.too_small() {
                    " — smaller than the sd given allow: they are likely overstated"
                } else {
                    ""
                }
            )),
            None => v.push("χ² test: not applicable (some observations have no sd)".into()),
        }
        for r in &self.runs {
            v.push(match r.p_lower {
                Some(p) => format!(
                    "runs of residual signs, \"{}\": {} runs ({} above, {} below the fit), {} expected at random: P(this few) = {}{}",
                    r.experiment,
                    r.runs,
                    r.positive,
                    r.negative,
                    sig(r.expected, 3),
                    p_text(p),
                    if r.fails() {
                        " — residuals in long runs: the model misses the shape"
                    } else {
                        ""
                    }
                ),
                None => format!(
                    "runs of residual signs, \"{}\": not judged ({} above, {} below the fit; at least {} of each needed)",
                    r.experiment, r.positive, r.negative, MIN_EACH_SIGN
                ),
            });
        }
        v
    }
}

/// A probability in words: 3 significant figures, "< 1e-12" below that.
pub fn p_text(p: f64) -> String {
    if p < 1e-12 {
        "< 1e-12".into()
    } else {
        crate::units::sig(p, 3)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chi2_tail_probabilities_match_the_tables() {
        // Upper 5 % and 1 % points of χ² from the tables: 18.307 (10 dof, 0.05), 23.209 (10 dof,
        // 0.01), 31.410 (20 dof, 0.05): NIST/SEMATECH e-Handbook of Statistical Methods,
        // §1.3.6.7.4 "Critical values of the chi-square distribution" (`from memory` for the
        // section). The tail probabilities at those points to 10 digits from SciPy 1.17.1,
        // `scipy.stats.chi2.sf(x, dof)`: 0.05000058909, 0.01000086581, 0.05000523920; and
        // chi2.sf(50, 50) = 0.4733984686.
        for (x, dof, want) in [
            (18.307, 10, 0.05000058909),
            (23.209, 10, 0.01000086581),
            (31.410, 20, 0.05000523920),
            (50.0, 50, 0.4733984686),
        ] {
            let t = Chi2Test::new(x, dof).unwrap();
            assert!((t.p_upper / want - 1.0).abs() < 1e-8, "{x} {dof}: {}", t.p_upper);
        }
        // A reduced χ² of 222.8 on 50 dof is hopeless; 1.0 on 50 dof is fine.
        assert!(Chi2Test::new(222.8 * 50.0, 50).unwrap().fails());
        assert!(!Chi2Test::new(50.0, 50).unwrap().fails());
        assert!(Chi2Test::new(1.0, 0).is_none());
    }

    #[test]
    fn runs_distribution_matches_enumeration() {
        // Every arrangement of n1 pluses and n2 minuses, counted: the exact distribution.
        for (n1, n2) in [(1, 1), (3, 3), (4, 2), (5, 7), (6, 6)] {
            let n = n1 + n2;
            let mut count = vec![0usize; n + 1];
            let mut total = 0;
            for mask in 0u32..(1 << n) {
                if mask.count_ones() as usize != n1 {
                    continue;
                }
                let s: Vec<bool> = (0..n).map(|i| mask >> i & 1 == 1).collect();
                count[count_runs(&s)] += 1;
                total += 1;
            }
            let d = runs_distribution(n1, n2);
            for r in 0..=n {
                let want = count[r] as f64 / total as f64;
                assert!((d[r] - want).abs() < 1e-12, "{n1},{n2} R={r}: {} vs {want}", d[r]);
            }
            // The mean is 1 + 2 n1 n2 / n (Wald & Wolfowitz 1940).
            let mean: f64 = d.iter().enumerate().map(|(r, p)| r as f64 * p).sum();
            assert!((mean - (1.0 + 2.0 * (n1 * n2) as f64 / n as f64)).abs() < 1e-12);
        }
    }

    #[test]
    fn runs_test_worked_example() {
        // Worked by hand: + + + + + − − − − − (10 residuals, 5 of each, 2 runs). The arrangements
        // with 2 runs are ++++ +−−−−− and its mirror: 2 of C(10, 5) = 252, so P(R ≤ 2) = 2/252.
        let r = RunsTest::new("e", &[vec![1.0, 2.0, 1.0, 0.5, 0.1, -0.1, -1.0, -2.0, -1.0, -0.5]]);
        assert_eq!((r.positive, r.negative, r.runs), (5, 5, 2));
        assert!((r.p_lower.unwrap() - 2.0 / 252.0).abs() < 1e-12);
        assert!((r.expected - 6.0).abs() < 1e-12);
        assert!(r.fails());
        // Swed & Eisenhart (1943), table of critical values (`from memory`): with 10 of each sign,
        // 6 runs or fewer has probability below 0.025 and 7 or fewer above it. Here by hand,
        // P(R ≤ 6) = 0.0185..., P(R ≤ 7) = 0.0513... from the closed form.
        let d = runs_distribution(10, 10);
        let cum = |k: usize| d.iter().take(k + 1).sum::<f64>();
        assert!(cum(6) < 0.025 && cum(7) > 0.025, "{} {}", cum(6), cum(7));
        // Alternating signs: the most runs there can be, nothing to flag.
        let alt: Vec<f64> = (0..12).map(|i| if i % 2 == 0 { 1.0 } else { -1.0 }).collect();
        let r = RunsTest::new("e", &[alt]);
        assert_eq!(r.runs, 12);
        assert!(!r.fails() && r.p_lower.unwrap() > 0.99);
        // Two species, one entirely above the fit and one entirely below: taken one after the
        // other, 2 runs of 12 residuals, 6 of each (expected 1 + 2·6·6/12 = 7), flagged.
        let r = RunsTest::new("e", &[vec![1.0; 6], vec![-1.0; 6]]);
        assert_eq!(r.runs, 2);
        assert!((r.expected - 7.0).abs() < 1e-12);
        assert!(r.fails(), "{r:?}");
        // Too few of a sign: not judged.
        let r = RunsTest::new("e", &[vec![1.0, 1.0, -1.0, 1.0]]);
        assert!(r.p_lower.is_none() && !r.fails());
    }
}
