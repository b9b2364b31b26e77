//! Exact collapse of the transients: from each transient, the probability of ending in each
//! species outcome ("end"), by solving the small absorbing chain (I − P_TT) X = P_TE.
//!
//! Channel shares are fixed fractions, or rates normalised by the transient's total rate;
//! a quenching channel's rate is k₂ [Q], so the shares (and X) change with the quencher's
//! concentration. [`Collapse::solve`] also returns ∂X/∂[Q] for the analytic Jacobian.

use crate::network::{Branching, Network, Target};
use nalgebra::{DMatrix, DVector};

/// A channel of a transient, with its end (a species outcome) or next transient.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelRef {
    /// Index of the transient it leaves.
    pub from: usize,
    /// Index of the channel in that transient.
    pub channel: usize,
    /// `Ok(end)` for an end (a species outcome), `Err(t)` for another transient.
    pub to: Result<usize, usize>,
}

/// A species outcome of the transients: one channel into ground-state species.
#[derive(Debug, Clone, PartialEq)]
pub struct End {
    /// The transient it leaves.
    pub from: usize,
    /// The channel index within that transient.
    pub channel: usize,
    /// Species produced, `(index, coefficient)`.
    pub products: Vec<(usize, f64)>,
    /// Marked as a return by the network.
    pub returns: bool,
}

/// The transients of a network, ready to collapse at any concentrations.
#[derive(Debug, Clone, Default)]
pub struct Collapse {
    /// Number of transients.
    pub n: usize,
    /// Every species outcome.
    pub ends: Vec<End>,
    /// Per transient: its channels `(target, share)`.
    shares: Vec<Vec<(Result<usize, usize>, Share)>>,
    /// Species that quench some transient.
    pub quenchers: Vec<usize>,
}

#[derive(Debug, Clone, Copy)]
enum Share {
    Fixed(f64),
    Rate(f64),
    Quench { partner: usize, k2: f64 },
}

/// The collapsed chain at one set of concentrations.
#[derive(Debug, Clone)]
pub struct Collapsed {
    /// X[t, e]: probability that a molecule entering transient t leaves through end e.
    pub x: DMatrix<f64>,
    /// ∂X/∂c_q for each quencher (same order as [`Collapse::quenchers`]).
    pub dx: Vec<DMatrix<f64>>,
}

impl Collapse {
    /// Prepare the collapse for `net`.
    pub fn new(net: &Network) -> Self {
        let n = net.transients.len();
        let mut ends = Vec::new();
        let mut shares = Vec::with_capacity(n);
        let mut quenchers = Vec::new();
        for (i, t) in net.transients.iter().enumerate() {
            let fixed: f64 = t
                .channels
                .iter()
                .map(|c| {
                    if let Branching::Fraction(x) = c.branching {
                        x
                    } else {
                        0.0
                    }
                })
                .sum();
            let mut row = Vec::new();
            for (j, c) in t.channels.iter().enumerate() {
                let target = match &c.target {
                    Target::Species(terms) => {
                        ends.push(End {
                            from: i,
                            channel: j,
                            products: terms.iter().map(|t| (t.species, t.coefficient)).collect(),
                            returns: c.returns,
                        });
                        Ok(ends.len() - 1)
                    }
                    Target::Transient(k) => Err(*k),
                };
                let share = match c.branching {
                    Branching::Fraction(x) => Share::Fixed(x),
                    Branching::Rest => Share::Fixed((1.0 - fixed).max(0.0)),
                    Branching::Rate { k, .. } => Share::Rate(k),
                    Branching::Quenching { partner, k2, .. } => {
                        if !quenchers.contains(&partner) {
                            quenchers.push(partner);
                        }
                        Share::Quench { partner, k2 }
                    }
                };
                row.push((target, share));
            }
            shares.push(row);
        }
        Collapse {
            n,
            ends,
            shares,
            quenchers,
        }
    }

    /// True when the collapse depends on concentrations.
    pub fn depends_on_concentrations(&self) -> bool {
        !self.quenchers.is_empty()
    }

    /// Solve the chain at concentrations `c` (mol/L); `with_derivatives` adds ∂X/∂[Q].
    pub fn solve(&self, c: &[f64], with_derivatives: bool) -> Collapsed {
        let n = self.n;
        let m = self.ends.len();
        let nq = self.quenchers.len();
        let mut ptt = DMatrix::<f64>::zeros(n, n);
        let mut pte = DMatrix::<f64>::zeros(n, m);
        let mut dptt = vec![DMatrix::<f64>::zeros(n, n); if with_derivatives { nq } else { 0 }];
        let mut dpte = vec![DMatrix::<f64>::zeros(n, m); if with_derivatives { nq } else { 0 }];
        for (i, row) in self.shares.iter().enumerate() {
            let rate_of = |s: &Share| match *s {
                Share::Fixed(_) => 0.0,
                Share::Rate(k) => k,
                Share::Quench { partner, k2 } => k2 * c[partner].max(0.0),
            };
            let total: f64 = row.iter().map(|(_, s)| rate_of(s)).sum();
            let fixed = row.iter().any(|(_, s)| matches!(s, Share::Fixed(_)));
            for (target, s) in row {
                let p = match *s {
                    Share::Fixed(x) => x,
                    _ if total > 0.0 => rate_of(s) / total,
                    _ => 0.0,
                };
                match target {
                    Ok(e) => pte[(i, *e)] += p,
                    Err(t) => ptt[(i, *t)] += p,
                }
                if with_derivatives && !fixed && total > 0.0 {
                    for (qi, &q) in self.quenchers.iter().enumerate() {
                        // dp/dc_q = (dk_j/dc_q · K − k_j · dK/dc_q) / K²
                        let dk_total: f64 = row
                            .iter()
                            .map(|(_, s)| {
                                if let Share::Quench { partner, k2 } = *s {
                                    if partner == q { k2 } else { 0.0 }
                                } else {
                                    0.0
                                }
                            })
                            .sum();
                        let dkj = if let Share::Quench { partner, k2 } = *s {
                            if partner == q { k2 } else { 0.0 }
                        } else {
                            0.0
                        };
                        let dp = (dkj * total - rate_of(s) * dk_total) / (total * total);
                        match target {
                            Ok(e) => dpte[qi][(i, *e)] += dp,
                            Err(t) => dptt[qi][(i, *t)] += dp,
                        }
                    }
                }
            }
        }
        let a = DMatrix::<f64>::identity(n, n) - &ptt;
        let lu = a.lu();
        let x = lu.solve(&pte).unwrap_or_else(|| DMatrix::zeros(n, m));
        let dx = if with_derivatives {
            (0..nq)
                .map(|qi| {
                    let rhs = &dptt[qi] * &x + &dpte[qi];
                    lu.solve(&rhs).unwrap_or_else(|| DMatrix::zeros(n, m))
                })
                .collect()
        } else {
            Vec::new()
        };
        Collapsed { x, dx }
    }
}

/// Probability vector over ends for a molecule entering transient `t`.
pub fn row(c: &Collapsed, t: usize) -> DVector<f64> {
    c.x.row(t).transpose()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::parse_text;
    use crate::network::{Overrides, build};
    use std::path::Path;

    fn net(text: &str) -> Network {
        let l = parse_text(Path::new("t.toml"), text.to_string()).unwrap();
        build(&l, &Overrides::none()).unwrap()
    }

    const BASE: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }
[[species]]
name = "B"
[[species]]
name = "Q"
initial = "1 mM"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 mW"
[[photo]]
absorber = "A"
excites = "S1"
"#;

    #[test]
    fn rates_normalise_and_cycles_through_transients_resolve() {
        // S1 -> B (1e9 /s), S1 -> T1 (3e9 /s); T1 -> B 0.5, T1 -> S1 0.5 (back up).
        // X_S1,B = 0.25 + 0.75·X_T1,B ; X_T1,B = 0.5 + 0.5·X_S1,B  =>  X_S1,B = 1.
        let n = net(&format!(
            "{BASE}{}",
            r#"
[[transient]]
name = "S1"
channels = [{ to = "B", rate = { k = "1e9 /s" } }, { to = "T1", rate = { k = "3e9 /s" } }]
[[transient]]
name = "T1"
channels = [{ to = "A", fraction = 0.5 }, { to = "S1", fraction = "rest" }]
"#
        ));
        let c = Collapse::new(&n);
        let x = c.solve(&[1e-3, 0.0, 1e-3], false).x;
        // Ends: S1->B (0), T1->A (1). From S1: P(B) = 0.25 / (1 − 0.75·0.5) = 0.4, P(A) = 0.6.
        assert!((x[(0, 0)] - 0.4).abs() < 1e-12);
        assert!((x[(0, 1)] - 0.6).abs() < 1e-12);
        assert!((x.row(1).sum() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn stern_volmer_share_and_its_derivative() {
        // Stern–Volmer: the unquenched share is k0 / (k0 + kq [Q]) (common practice).
        let n = net(&format!(
            "{BASE}{}",
            r#"
[[transient]]
name = "S1"
channels = [{ to = "B", rate = { k = "1e8 /s" } }, { to = "A", quencher = "Q", rate = { k = "1e10 /(M s)" } }]
"#
        ));
        let col = Collapse::new(&n);
        let q = 2e-3;
        let s = col.solve(&[1e-3, 0.0, q], true);
        let expect = 1e8 / (1e8 + 1e10 * q);
        assert!((s.x[(0, 0)] - expect).abs() < 1e-14);
        let h = 1e-9;
        let s2 = col.solve(&[1e-3, 0.0, q + h], false);
        let fd = (s2.x[(0, 0)] - s.x[(0, 0)]) / h;
        assert!(
            (s.dx[0][(0, 0)] - fd).abs() < 1e-4 * fd.abs(),
            "{} vs {fd}",
            s.dx[0][(0, 0)]
        );
    }
}
