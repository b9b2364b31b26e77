//! Exact collapse of the transients: from each transient, the probability of ending in each
//! species outcome ("end"), by solving the small absorbing chain (I − P_TT) X = P_TE.
//!
//! Channel shares are fixed fractions, or rates normalised by the transient's total rate;
//! a quenching channel's rate is k₂ [Q], so the shares (and X) change with the quencher's
//! concentration. [`Collapse::solve`] also returns ∂X/∂[Q] for the analytic Jacobian;
//! [`Collapse::solve_into`] does the same solve into reusable [`CollapseWork`] buffers,
//! without allocating.

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
    Rest,
    Rate(f64),
    Quench { partner: usize, k2: f64 },
}

impl Share {
    fn input(&self, c: &[f64]) -> ShareInput {
        match *self {
            Share::Fixed(x) => ShareInput::Fixed(x),
            Share::Rest => ShareInput::Rest,
            Share::Rate(k) => ShareInput::Rate(k),
            Share::Quench { partner, k2 } => ShareInput::Rate(k2 * c[partner].max(0.0)),
        }
    }
}

/// What one channel brings to its transient's shares: a fixed fraction (given, or a computed
/// hot yield), the rest, or a (pseudo-)first-order rate in s⁻¹ (k, or k₂ [quencher]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ShareInput {
    /// A fixed fraction.
    Fixed(f64),
    /// What the fixed fractions leave.
    Rest,
    /// A first-order or pseudo-first-order rate, s⁻¹.
    Rate(f64),
}

/// The one rule by which channel shares are formed from channel values, used by the model's
/// collapse and by the Markov chain (whose sensitivities move single values):
/// fixed fractions as given (negative values count as zero), scaled to sum to one when no
/// channel takes the rest, and squeezed when they exceed one; "rest" is what they leave; rates
/// are normalised by the transient's total rate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShareTotals {
    /// Sum of the fixed fractions (before scaling).
    pub fixed: f64,
    /// Factor on every fixed fraction.
    pub scale: f64,
    /// Sum of the rates, s⁻¹.
    pub rates: f64,
    /// True when the fixed fractions are scaled by 1/`fixed` (no "rest" channel, or fractions
    /// that exceed one); false when they stand as given and "rest" takes what they leave.
    pub normalised: bool,
}

impl ShareTotals {
    /// The totals of one transient's channels.
    pub fn of(inputs: impl Iterator<Item = ShareInput>) -> ShareTotals {
        let (mut fixed, mut rates, mut rest) = (0.0, 0.0, false);
        for s in inputs {
            match s {
                ShareInput::Fixed(x) => fixed += x.max(0.0),
                ShareInput::Rest => rest = true,
                ShareInput::Rate(k) => rates += k.max(0.0),
            }
        }
        let normalised = (!rest && fixed > 0.0) || fixed > 1.0;
        let scale = if normalised { 1.0 / fixed } else { 1.0 };
        ShareTotals {
            fixed,
            scale,
            rates,
            normalised,
        }
    }

    /// ∂(share of a channel with input `s`)/∂(input of channel c), where `moved` is channel c's
    /// input (a positive fraction or rate) and `own` is true when the channel is c itself, by
    /// differentiating [`ShareTotals::share`] exactly:
    /// - rates, share k_j/K with K = Σ k: ∂/∂k_c = (δ_jc K − k_j)/K²;
    /// - fixed fractions scaled by 1/F (F = Σ x): ∂(x_j/F)/∂x_c = (δ_jc F − x_j)/F², and "rest"
    ///   (then 1 − F/F = 0) does not move;
    /// - fixed fractions as given: ∂x_j/∂x_c = δ_jc and "rest" = 1 − F moves by −1. At F = 1
    ///   with a "rest" channel this is the derivative from below, the side the value can move to.
    ///
    /// Fractions and rates of one transient do not mix: moving one kind leaves the other's
    /// shares alone.
    pub fn share_derivative(&self, s: ShareInput, own: bool, moved: ShareInput) -> f64 {
        let kron = if own { 1.0 } else { 0.0 };
        match (moved, s) {
            (ShareInput::Rate(_), ShareInput::Rate(k)) if self.rates > 0.0 => {
                (kron * self.rates - k.max(0.0)) / (self.rates * self.rates)
            }
            (ShareInput::Fixed(_), ShareInput::Fixed(x)) if self.normalised => {
                (kron * self.fixed - x.max(0.0)) / (self.fixed * self.fixed)
            }
            (ShareInput::Fixed(_), ShareInput::Fixed(_)) => kron,
            (ShareInput::Fixed(_), ShareInput::Rest) if !self.normalised => -1.0,
            _ => 0.0,
        }
    }

    /// The share (probability) of a channel with input `s`.
    pub fn share(&self, s: ShareInput) -> f64 {
        match s {
            ShareInput::Fixed(x) => x.max(0.0) * self.scale,
            ShareInput::Rest => (1.0 - self.fixed * self.scale).max(0.0),
            ShareInput::Rate(k) if self.rates > 0.0 => k.max(0.0) / self.rates,
            ShareInput::Rate(_) => 0.0,
        }
    }
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
                    Branching::Fraction(x) | Branching::Hot { fraction: x, .. } => Share::Fixed(x),
                    Branching::Rest => Share::Rest,
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

    /// Buffers sized for this collapse, for [`Collapse::solve_into`] and
    /// [`Collapse::update`]; allocate them once and reuse them for every solve.
    pub fn work(&self) -> CollapseWork {
        let mut w = CollapseWork::default();
        w.fit(self);
        w
    }

    /// Solve the chain at concentrations `c` (mol/L); `with_derivatives` adds ∂X/∂[Q]
    /// (in L/mol). Allocates its result; [`Collapse::solve_into`] is the same solve into
    /// reusable buffers.
    pub fn solve(&self, c: &[f64], with_derivatives: bool) -> Collapsed {
        let mut w = self.work();
        self.solve_into(c, with_derivatives, &mut w);
        let (n, m) = (self.n, self.ends.len());
        let x = DMatrix::from_row_slice(n, m, &w.x);
        let dx = if with_derivatives {
            w.dx.chunks_exact(n * m)
                .map(|d| DMatrix::from_row_slice(n, m, d))
                .collect()
        } else {
            Vec::new()
        };
        Collapsed { x, dx }
    }

    /// Re-solve into `w` only when needed: when `w` holds no solution yet, or when a
    /// quencher concentration in `c` (mol/L) differs from the one `w` was solved at. The
    /// derivatives ∂X/∂[Q] are included whenever the collapse depends on concentrations.
    /// Returns true when it solved. Allocation-free once `w` fits this collapse.
    pub fn update(&self, c: &[f64], w: &mut CollapseWork) -> bool {
        let with_derivatives = self.depends_on_concentrations();
        let fresh = w.solved
            && w.has_dx == with_derivatives
            && w.key.len() == self.quenchers.len()
            && w.key.iter().zip(&self.quenchers).all(|(k, &q)| *k == c[q]);
        if !fresh {
            self.solve_into(c, with_derivatives, w);
        }
        !fresh
    }

    /// Solve the chain at concentrations `c` (mol/L) into the buffers of `w`;
    /// `with_derivatives` adds ∂X/∂[Q] (L/mol). Allocation-free when `w` came from
    /// [`Collapse::work`] of this collapse (otherwise its buffers are resized first).
    ///
    /// (I − P_TT) is factorised in place by Gaussian elimination with partial pivoting, and
    /// X and each ∂X/∂[Q] are found by forward and back substitution. A singular chain (a
    /// closed loop of transients that never reaches an end) gives X = 0.
    pub fn solve_into(&self, c: &[f64], with_derivatives: bool, w: &mut CollapseWork) {
        w.fit(self);
        let n = self.n;
        let m = self.ends.len();
        let nq = self.quenchers.len();
        // P_TT goes into `lu`, P_TE into `x`, ∂P_TT into `dptt` and ∂P_TE into `dx`.
        w.lu.fill(0.0);
        w.x.fill(0.0);
        w.dptt.fill(0.0);
        w.dx.fill(0.0);
        for (i, row) in self.shares.iter().enumerate() {
            let rate_of = |s: &Share| match s.input(c) {
                ShareInput::Rate(k) => k,
                _ => 0.0,
            };
            let totals = ShareTotals::of(row.iter().map(|(_, s)| s.input(c)));
            let total = totals.rates;
            let fixed = row.iter().any(|(_, s)| matches!(s, Share::Fixed(_) | Share::Rest));
            for (target, s) in row {
                let p = totals.share(s.input(c));
                match target {
                    Ok(e) => w.x[i * m + *e] += p,
                    Err(t) => w.lu[i * n + *t] += p,
                }
            }
            if !(with_derivatives && !fixed && total > 0.0) {
                continue;
            }
            for (qi, &q) in self.quenchers.iter().enumerate() {
                let dk = |s: &Share| match *s {
                    Share::Quench { partner, k2 } if partner == q => k2,
                    _ => 0.0,
                };
                let dk_total: f64 = row.iter().map(|(_, s)| dk(s)).sum();
                for (target, s) in row {
                    // dp/dc_q = (dk_j/dc_q · K − k_j · dK/dc_q) / K²
                    let dp = (dk(s) * total - rate_of(s) * dk_total) / (total * total);
                    match target {
                        Ok(e) => w.dx[(qi * n + i) * m + *e] += dp,
                        Err(t) => w.dptt[(qi * n + i) * n + *t] += dp,
                    }
                }
            }
        }
        for i in 0..n {
            for j in 0..n {
                let id = if i == j { 1.0 } else { 0.0 };
                w.lu[i * n + j] = id - w.lu[i * n + j];
            }
        }
        lu_in_place(&mut w.lu, &mut w.piv, n);
        let singular = (0..n).any(|i| w.lu[i * n + i] == 0.0);
        if singular {
            w.x.fill(0.0);
            w.dx.fill(0.0);
        } else {
            lu_solve_in_place(&w.lu, &w.piv, n, &mut w.x, m);
            if with_derivatives {
                for qi in 0..nq {
                    // (I − P_TT) ∂X = ∂P_TT · X + ∂P_TE
                    let dptt = &w.dptt[qi * n * n..(qi + 1) * n * n];
                    let dx = &mut w.dx[qi * n * m..(qi + 1) * n * m];
                    for i in 0..n {
                        for j in 0..m {
                            let mut s = 0.0;
                            for k in 0..n {
                                let term = dptt[i * n + k] * w.x[k * m + j];
                                s = if k == 0 { term } else { term + s };
                            }
                            dx[i * m + j] += s;
                        }
                    }
                    lu_solve_in_place(&w.lu, &w.piv, n, dx, m);
                }
            }
        }
        for (k, &q) in w.key.iter_mut().zip(&self.quenchers) {
            *k = c[q];
        }
        w.has_dx = with_derivatives;
        w.solved = true;
    }
}

/// Reusable buffers for solving one [`Collapse`] without allocating: the matrix I − P_TT and
/// its LU factors, the row pivots, X, the derivative matrices, and the quencher
/// concentrations of the last solve. Matrices are stored row by row.
#[derive(Debug, Clone, Default)]
pub struct CollapseWork {
    n: usize,
    m: usize,
    nq: usize,
    /// n×n: P_TT, then I − P_TT, then its LU factors (unit lower part below the diagonal).
    lu: Vec<f64>,
    /// Row exchanged with row i at elimination step i.
    piv: Vec<usize>,
    /// n×m: P_TE, then X.
    x: Vec<f64>,
    /// nq blocks of n×n: ∂P_TT/∂c_q.
    dptt: Vec<f64>,
    /// nq blocks of n×m: ∂P_TE/∂c_q, then ∂X/∂c_q.
    dx: Vec<f64>,
    /// Quencher concentrations (mol/L) of the last solve.
    key: Vec<f64>,
    has_dx: bool,
    solved: bool,
}

impl CollapseWork {
    /// Size the buffers for `col` (allocates only when the size changes).
    fn fit(&mut self, col: &Collapse) {
        let (n, m, nq) = (col.n, col.ends.len(), col.quenchers.len());
        if (self.n, self.m, self.nq) == (n, m, nq) && self.lu.len() == n * n {
            return;
        }
        *self = CollapseWork {
            n,
            m,
            nq,
            lu: vec![0.0; n * n],
            piv: vec![0; n],
            x: vec![0.0; n * m],
            dptt: vec![0.0; nq * n * n],
            dx: vec![0.0; nq * n * m],
            key: vec![0.0; nq],
            has_dx: false,
            solved: false,
        };
    }

    /// True once a solve has filled the buffers.
    pub fn is_solved(&self) -> bool {
        self.solved
    }

    /// X[t, e] of the last solve: the probability (dimensionless) that a molecule entering
    /// transient `t` leaves through end `e`; 0 for indices out of range.
    pub fn x(&self, t: usize, e: usize) -> f64 {
        if t < self.n && e < self.m {
            self.x[t * self.m + e]
        } else {
            0.0
        }
    }

    /// ∂X[t, e]/∂c_q (L/mol) of the last solve, for quencher number `q` (in the order of
    /// [`Collapse::quenchers`]); 0 when derivatives were not solved or indices are out of
    /// range.
    pub fn dx(&self, q: usize, t: usize, e: usize) -> f64 {
        if self.has_dx && q < self.nq && t < self.n && e < self.m {
            self.dx[(q * self.n + t) * self.m + e]
        } else {
            0.0
        }
    }
}

/// Factorise the n×n row-major matrix `a` in place as P·a = L·U (partial pivoting: at each
/// step the row with the largest magnitude in the column, the first one on ties). A column
/// with no non-zero entry is skipped, leaving a zero on U's diagonal.
fn lu_in_place(a: &mut [f64], piv: &mut [usize], n: usize) {
    for i in 0..n {
        let mut p = i;
        let mut best = a[i * n + i].abs();
        for r in i + 1..n {
            let v = a[r * n + i].abs();
            if v > best {
                best = v;
                p = r;
            }
        }
        piv[i] = i;
        let diag = a[p * n + i];
        if diag == 0.0 {
            continue;
        }
        if p != i {
            piv[i] = p;
            for k in 0..n {
                a.swap(i * n + k, p * n + k);
            }
        }
        let inv = 1.0 / diag;
        for r in i + 1..n {
            a[r * n + i] *= inv;
        }
        for k in i + 1..n {
            let u = a[i * n + k];
            for r in i + 1..n {
                a[r * n + k] += -u * a[r * n + i];
            }
        }
    }
}

/// Solve (L·U) X = P·B in place for the n×m row-major `b`, with the factors and pivots from
/// [`lu_in_place`] (whose U must have a non-zero diagonal).
fn lu_solve_in_place(lu: &[f64], piv: &[usize], n: usize, b: &mut [f64], m: usize) {
    for (i, &p) in piv.iter().enumerate().take(n) {
        if p != i {
            for j in 0..m {
                b.swap(i * m + j, p * m + j);
            }
        }
    }
    for j in 0..m {
        for i in 0..n {
            let coeff = b[i * m + j];
            for r in i + 1..n {
                b[r * m + j] += -coeff * lu[r * n + i];
            }
        }
        for i in (0..n).rev() {
            let coeff = b[i * m + j] / lu[i * n + i];
            b[i * m + j] = coeff;
            for r in 0..i {
                b[r * m + j] += -coeff * lu[r * n + i];
            }
        }
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

    /// `share_derivative` against central differences of `share` (common practice: O(h²)), in
    /// every regime of the rule: rates; fixed fractions scaled when there is no "rest" and when
    /// they exceed one; fractions as given beside a "rest".
    #[test]
    fn share_derivative_matches_differences_of_share() {
        use ShareInput::{Fixed, Rate, Rest};
        let cases: [&[ShareInput]; 4] = [
            &[Rate(3.0e8), Rate(1.0e9), Rate(2.5e7)],
            &[Fixed(0.3), Fixed(0.5), Fixed(0.1)],
            &[Fixed(0.7), Fixed(0.6), Rest],
            &[Fixed(0.2), Fixed(0.35), Rest],
        ];
        for inputs in cases {
            let totals = ShareTotals::of(inputs.iter().copied());
            for c in 0..inputs.len() {
                let (Fixed(x) | Rate(x)) = inputs[c] else { continue };
                let h = 1e-5 * x;
                let moved = |v: f64| -> Vec<ShareInput> {
                    let mut i = inputs.to_vec();
                    i[c] = match i[c] {
                        Fixed(_) => Fixed(v),
                        _ => Rate(v),
                    };
                    i
                };
                let (up, down) = (moved(x + h), moved(x - h));
                let (tu, td) = (
                    ShareTotals::of(up.iter().copied()),
                    ShareTotals::of(down.iter().copied()),
                );
                for j in 0..inputs.len() {
                    let fd = (tu.share(up[j]) - td.share(down[j])) / (2.0 * h);
                    let exact = totals.share_derivative(inputs[j], j == c, inputs[c]);
                    let scale = fd.abs().max(exact.abs()).max(1.0 / x.max(1.0));
                    assert!(
                        (fd - exact).abs() <= 1e-7 * scale,
                        "{inputs:?}: ∂share[{j}]/∂input[{c}] = {exact} vs {fd}"
                    );
                }
            }
        }
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

    /// The allocating nalgebra LU solve this module used before the in-place one, kept as
    /// an independent reference.
    fn reference(col: &Collapse, c: &[f64]) -> (DMatrix<f64>, Vec<DMatrix<f64>>) {
        let (n, m, nq) = (col.n, col.ends.len(), col.quenchers.len());
        let mut ptt = DMatrix::<f64>::zeros(n, n);
        let mut pte = DMatrix::<f64>::zeros(n, m);
        let mut dptt = vec![DMatrix::<f64>::zeros(n, n); nq];
        let mut dpte = vec![DMatrix::<f64>::zeros(n, m); nq];
        for (i, row) in col.shares.iter().enumerate() {
            let rate_of = |s: &Share| match *s {
                Share::Fixed(_) | Share::Rest => 0.0,
                Share::Rate(k) => k,
                Share::Quench { partner, k2 } => k2 * c[partner].max(0.0),
            };
            let total: f64 = row.iter().map(|(_, s)| rate_of(s)).sum();
            let fixed_sum: f64 = row
                .iter()
                .map(|(_, s)| if let Share::Fixed(x) = s { *x } else { 0.0 })
                .sum();
            let fixed = row.iter().any(|(_, s)| matches!(s, Share::Fixed(_) | Share::Rest));
            for (target, s) in row {
                let p = match *s {
                    Share::Fixed(x) => x,
                    Share::Rest => 1.0 - fixed_sum,
                    _ if total > 0.0 => rate_of(s) / total,
                    _ => 0.0,
                };
                match target {
                    Ok(e) => pte[(i, *e)] += p,
                    Err(t) => ptt[(i, *t)] += p,
                }
                if !fixed && total > 0.0 {
                    for (qi, &q) in col.quenchers.iter().enumerate() {
                        let dk = |s: &Share| match *s {
                            Share::Quench { partner, k2 } if partner == q => k2,
                            _ => 0.0,
                        };
                        let dk_total: f64 = row.iter().map(|(_, s)| dk(s)).sum();
                        let dp = (dk(s) * total - rate_of(s) * dk_total) / (total * total);
                        match target {
                            Ok(e) => dpte[qi][(i, *e)] += dp,
                            Err(t) => dptt[qi][(i, *t)] += dp,
                        }
                    }
                }
            }
        }
        let lu = (DMatrix::<f64>::identity(n, n) - &ptt).lu();
        let x = lu.solve(&pte).unwrap_or_else(|| DMatrix::zeros(n, m));
        let dx = (0..nq)
            .map(|qi| {
                lu.solve(&(&dptt[qi] * &x + &dpte[qi]))
                    .unwrap_or_else(|| DMatrix::zeros(n, m))
            })
            .collect();
        (x, dx)
    }

    #[test]
    fn in_place_solve_matches_the_nalgebra_lu_and_reuses_its_buffers() {
        // Two quenchers, a cycle S1 -> T1 -> S1, and a fraction-based transient after T1.
        let n = net(&format!(
            "{BASE}{}",
            r#"
[[species]]
name = "Q2"
initial = "1 mM"
[[transient]]
name = "S1"
channels = [{ to = "B", rate = { k = "1e8 /s" } }, { to = "A", rate = { k = "3e8 /s" } }, { to = "T1", quencher = "Q", rate = { k = "1e10 /(M s)" } }]
[[transient]]
name = "T1"
channels = [{ to = "CI", rate = { k = "1e5 /s" } }, { to = "S1", rate = { k = "4e4 /s" } }, { to = "A", quencher = "Q2", rate = { k = "2e9 /(M s)" } }]
[[transient]]
name = "CI"
channels = [{ to = "B", fraction = 0.3 }, { to = "A", fraction = "rest" }]
"#
        ));
        let col = Collapse::new(&n);
        assert_eq!((col.n, col.quenchers.len()), (3, 2));
        let mut w = col.work();
        for (q1, q2) in [(0.0, 0.0), (1e-3, 1e-3), (2e-2, 1e-5), (1e-6, 3e-1), (5.0, 5.0)] {
            let c = [1e-3, 0.0, q1, q2];
            let (x, dx) = reference(&col, &c);
            assert!(col.update(&c, &mut w), "new concentrations must be re-solved");
            assert!(
                !col.update(&c, &mut w),
                "unchanged concentrations must not be re-solved"
            );
            let s = col.solve(&c, true);
            for t in 0..col.n {
                for e in 0..col.ends.len() {
                    assert!((w.x(t, e) - x[(t, e)]).abs() <= 1e-14, "X[{t},{e}] at {c:?}");
                    assert_eq!(s.x[(t, e)].to_bits(), w.x(t, e).to_bits());
                    for (q, dxq) in dx.iter().enumerate() {
                        let (got, want) = (w.dx(q, t, e), dxq[(t, e)]);
                        assert!(
                            (got - want).abs() <= 1e-14 * want.abs().max(1.0),
                            "dX{q}[{t},{e}] at {c:?}"
                        );
                        assert_eq!(s.dx[q][(t, e)].to_bits(), got.to_bits());
                    }
                }
            }
            // Probabilities out of each transient add up to one.
            for t in 0..col.n {
                let total: f64 = (0..col.ends.len()).map(|e| w.x(t, e)).sum();
                assert!((total - 1.0).abs() < 1e-12, "row {t} sums to {total} at {c:?}");
            }
        }
    }

    #[test]
    fn a_chain_closed_when_the_quencher_is_gone_collapses_to_zero() {
        // S1 -> T1 always; T1 -> S1 or, quenched, -> B. Without quencher the two transients only
        // lead to each other, I − P_TT is singular, and X is 0 rather than garbage.
        let n = net(&format!(
            "{BASE}{}",
            r#"
[[transient]]
name = "S1"
channels = [{ to = "T1", rate = { k = "1e9 /s" } }]
[[transient]]
name = "T1"
channels = [{ to = "S1", rate = { k = "1e5 /s" } }, { to = "B", quencher = "Q", rate = { k = "1e10 /(M s)" } }]
"#
        ));
        let col = Collapse::new(&n);
        let none = [1e-3, 0.0, 0.0];
        let s = col.solve(&none, true);
        assert_eq!(s.x, reference(&col, &none).0);
        assert!(s.x.iter().chain(s.dx[0].iter()).all(|v| *v == 0.0), "{}", s.x);
        let some = col.solve(&[1e-3, 0.0, 1e-6], true);
        assert!((some.x[(0, 0)] - 1.0).abs() < 1e-12 && (some.x[(1, 0)] - 1.0).abs() < 1e-12);
    }
}
