//! The iteration matrix split into its coupled block and the columns that hold only their
//! diagonal entry, solved by block elimination.
//!
//! Nothing in the equations depends on the photon ledger's counters (absorbed, background,
//! transmitted and outcome photons), so in I − γJ their columns hold the diagonal 1 and nothing
//! else, while their rows hold the absorbers' and the light-dependent species' entries. Ordered
//! coupled first, the matrix is block lower triangular:
//!
//! ```text
//! [ A_cc   0  ] [x_c]   [b_c]        x_c = A_cc⁻¹ b_c
//! [ A_lc   D  ] [x_l] = [b_l]   ->   x_l = (b_l − A_lc x_c) / D
//! ```
//!
//! which is exact, not an approximation (common practice: block forward substitution). Only
//! A_cc is factored. Factoring the whole matrix instead put the ledger rows into L as nearly
//! dense rows (Jₗ U⁻¹) and fed them to the ordering: on the generated 1,000-species network
//! (276 ledger rows, 27,000 of the 66,000 entries) the ordering took 110 ms against 23 ms for
//! the coupled block, and a solve 0.41 ms against 0.31 ms (DEVELOPERS.md, measurements). Any
//! column that holds only its diagonal is treated so, a species that nothing depends on
//! included.

use faer::sparse::{SparseColMatRef, SymbolicSparseColMat, SymbolicSparseColMatRef};

/// Where each part of the full matrix goes.
#[derive(Debug, Clone)]
pub struct LoneColumns {
    /// Full index of each coupled row and column, ascending.
    pub coupled: Vec<usize>,
    /// The pattern of the coupled block A_cc (columns compressed, in `coupled` order).
    pub block: SymbolicSparseColMat<usize>,
    /// For each entry of `block`, its index in the full matrix's values.
    block_from: Vec<usize>,
    /// Each lone column: its full index and the index of its diagonal value.
    lone: Vec<(usize, usize)>,
    /// Entries in lone rows and coupled columns, row by row: those of lone row l are at
    /// `lower_start[l]..lower_start[l + 1]` of `lower_col` (position in `coupled`) and
    /// `lower_from` (index in the full values).
    lower_start: Vec<usize>,
    lower_col: Vec<u32>,
    lower_from: Vec<usize>,
}

/// The values of the parts, taken from one full matrix.
#[derive(Debug, Clone, Default)]
pub struct Parts {
    /// Values of A_cc, in `block`'s order.
    pub block: Vec<f64>,
    /// D, one per lone column.
    diagonal: Vec<f64>,
    /// A_lc, one per entry of `lower`.
    lower: Vec<f64>,
}

impl LoneColumns {
    /// The split of a square `pattern` (columns compressed, rows sorted or not).
    pub fn of(pattern: SymbolicSparseColMatRef<'_, usize>) -> Self {
        let n = pattern.ncols();
        let (ptr, rows) = (pattern.col_ptr(), pattern.row_idx());
        let diagonal_only = |c: usize| ptr[c + 1] - ptr[c] == 1 && rows[ptr[c]] == c;
        let mut position = vec![usize::MAX; n];
        let mut coupled = Vec::new();
        let mut lone = Vec::new();
        let mut lone_position = vec![usize::MAX; n];
        for c in 0..n {
            if diagonal_only(c) {
                lone_position[c] = lone.len();
                lone.push((c, ptr[c]));
            } else {
                position[c] = coupled.len();
                coupled.push(c);
            }
        }
        let mut col_ptr = vec![0usize];
        let mut row_idx = Vec::new();
        let mut block_from = Vec::new();
        let mut lower = Vec::new();
        for (cp, &c) in coupled.iter().enumerate() {
            let mut entries: Vec<(usize, usize)> = Vec::new();
            for (k, &r) in rows.iter().enumerate().take(ptr[c + 1]).skip(ptr[c]) {
                if position[r] != usize::MAX {
                    entries.push((position[r], k));
                } else {
                    lower.push((lone_position[r], cp, k));
                }
            }
            entries.sort_unstable();
            for (r, k) in entries {
                row_idx.push(r);
                block_from.push(k);
            }
            col_ptr.push(row_idx.len());
        }
        lower.sort_unstable();
        let mut lower_start = vec![0usize; lone.len() + 1];
        for &(l, _, _) in &lower {
            lower_start[l + 1] += 1;
        }
        for l in 0..lone.len() {
            lower_start[l + 1] += lower_start[l];
        }
        let m = coupled.len();
        let block = SymbolicSparseColMat::new_checked(m, m, col_ptr, None, row_idx);
        LoneColumns {
            coupled,
            block,
            block_from,
            lone,
            lower_start,
            lower_col: lower.iter().map(|&(_, cp, _)| cp as u32).collect(),
            lower_from: lower.iter().map(|&(_, _, k)| k).collect(),
        }
    }

    /// Number of lone columns.
    pub fn n_lone(&self) -> usize {
        self.lone.len()
    }

    /// The parts of the full matrix whose values are `values` (in the pattern's order).
    pub fn take(&self, values: &[f64], parts: &mut Parts) {
        parts.block.clear();
        parts.block.extend(self.block_from.iter().map(|&k| values[k]));
        parts.diagonal.clear();
        parts.diagonal.extend(self.lone.iter().map(|&(_, k)| values[k]));
        parts.lower.clear();
        parts.lower.extend(self.lower_from.iter().map(|&k| values[k]));
    }

    /// A_cc as a matrix over `parts`' values.
    pub fn block_matrix<'a>(&'a self, parts: &'a Parts) -> SparseColMatRef<'a, usize, f64> {
        SparseColMatRef::new(self.block.as_ref(), &parts.block)
    }

    /// Gather the coupled part of `x` into `xc`.
    pub fn gather(&self, x: &[f64], xc: &mut [f64]) {
        for (v, &c) in xc.iter_mut().zip(&self.coupled) {
            *v = x[c];
        }
    }

    /// With `xc` = A_cc⁻¹ b_c, finish the solve in `x` (which holds b): the coupled part from
    /// `xc`, the lone part by x_l = (b_l − A_lc x_c) / D.
    pub fn finish(&self, parts: &Parts, xc: &[f64], x: &mut [f64]) {
        for (&v, &c) in xc.iter().zip(&self.coupled) {
            x[c] = v;
        }
        for (l, (&(c, _), &d)) in self.lone.iter().zip(&parts.diagonal).enumerate() {
            let (s, e) = (self.lower_start[l], self.lower_start[l + 1]);
            // four partial sums in a fixed order: independent additions in flight, same result
            // every run
            let mut acc = [0.0f64; 4];
            let (cols, vals) = (&self.lower_col[s..e], &parts.lower[s..e]);
            let (cc, vc) = (cols.chunks_exact(4), vals.chunks_exact(4));
            let (cr, vr) = (cc.remainder(), vc.remainder());
            for (c4, v4) in cc.zip(vc) {
                for k in 0..4 {
                    acc[k] += v4[k] * xc[c4[k] as usize];
                }
            }
            let mut tail = 0.0;
            for (&cp, &a) in cr.iter().zip(vr) {
                tail += a * xc[cp as usize];
            }
            x[c] = (x[c] - ((acc[0] + acc[1]) + (acc[2] + acc[3]) + tail)) / d;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::{LoneColumns, Parts};
    use faer::sparse::{SparseColMat, Triplet};

    /// A 5×5 matrix with columns 1 and 4 holding only their diagonal: the split solve equals
    /// the dense solve of the whole matrix.
    #[test]
    fn block_elimination_equals_the_whole_solve() {
        let t = [
            (0, 0, 2.0),
            (2, 0, -0.5),
            (1, 0, 0.7),
            (4, 0, -1.3),
            (1, 1, 1.0),
            (0, 2, 0.25),
            (2, 2, 3.0),
            (3, 2, 0.1),
            (4, 2, 0.6),
            (3, 3, 1.5),
            (2, 3, -0.4),
            (4, 4, 0.8),
        ];
        let trip: Vec<_> = t.iter().map(|&(r, c, v)| Triplet::new(r, c, v)).collect();
        let a = SparseColMat::<usize, f64>::try_new_from_triplets(5, 5, &trip).unwrap();
        let split = LoneColumns::of(a.symbolic());
        assert_eq!(split.coupled, vec![0, 2, 3]);
        assert_eq!(split.n_lone(), 2);
        let mut parts = Parts::default();
        split.take(a.val(), &mut parts);
        let b = [1.0, -2.0, 0.5, 3.0, 0.25];
        let block = split.block_matrix(&parts).to_dense();
        let mut xc = vec![0.0; 3];
        split.gather(&b, &mut xc);
        let lu = block.partial_piv_lu();
        let sol = faer::linalg::solvers::Solve::solve(&lu, faer::Mat::from_fn(3, 1, |i, _| xc[i]));
        let xc: Vec<f64> = (0..3).map(|i| sol[(i, 0)]).collect();
        let mut x = b.to_vec();
        split.finish(&parts, &xc, &mut x);
        let whole = a.to_dense().partial_piv_lu();
        let want = faer::linalg::solvers::Solve::solve(&whole, faer::Mat::from_fn(5, 1, |i, _| b[i]));
        for i in 0..5 {
            assert!((x[i] - want[(i, 0)]).abs() < 1e-14, "{i}: {} vs {}", x[i], want[(i, 0)]);
        }
    }
}
