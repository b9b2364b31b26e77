//! The little sparse linear algebra the chain needs: coordinate lists with a transposed
//! product, and faer's sparse LU with transposed solves.

use crate::error::{Error, Result};
use faer::Mat;
use faer::linalg::solvers::Solve;
use faer::sparse::{SparseColMat, Triplet};

/// A sparse matrix as (row, column, value) entries; repeated entries add up.
#[derive(Debug, Clone)]
pub(super) struct Triplets {
    rows: usize,
    cols: usize,
    entries: Vec<(usize, usize, f64)>,
}

impl Triplets {
    pub(super) fn new(rows: usize, cols: usize) -> Self {
        Triplets {
            rows,
            cols,
            entries: Vec::new(),
        }
    }

    pub(super) fn push(&mut self, i: usize, j: usize, v: f64) {
        self.entries.push((i, j, v));
    }

    pub(super) fn iter(&self) -> impl Iterator<Item = (usize, usize, f64)> + '_ {
        self.entries.iter().copied()
    }

    /// Mx.
    pub(super) fn mul(&self, x: &[f64]) -> Vec<f64> {
        let mut y = vec![0.0; self.rows];
        for &(i, j, v) in &self.entries {
            y[i] += v * x[j];
        }
        y
    }

    /// Mᵀx.
    pub(super) fn tmul(&self, x: &[f64]) -> Vec<f64> {
        let mut y = vec![0.0; self.cols];
        for &(i, j, v) in &self.entries {
            y[j] += v * x[i];
        }
        y
    }
}

/// A sparse LU factorisation of a square matrix.
pub(super) struct Lu {
    n: usize,
    lu: Option<faer::sparse::linalg::solvers::Lu<usize, f64>>,
}

impl Lu {
    pub(super) fn new(a: &Triplets) -> Result<Self> {
        let n = a.rows;
        if n == 0 {
            return Ok(Lu { n, lu: None });
        }
        let trips: Vec<Triplet<usize, usize, f64>> = a.entries.iter().map(|&(i, j, v)| Triplet::new(i, j, v)).collect();
        let mat = SparseColMat::<usize, f64>::try_new_from_triplets(n, n, &trips)
            .map_err(|e| Error::Numerical(format!("could not assemble I − Q: {e:?}")))?;
        let lu = mat
            .sp_lu()
            .map_err(|e| Error::Numerical(format!("I − Q could not be factorised: {e:?}")))?;
        Ok(Lu { n, lu: Some(lu) })
    }

    /// x with Ax = b.
    pub(super) fn solve(&self, b: &[f64]) -> Result<Vec<f64>> {
        self.solve_with(b, false)
    }

    /// x with Aᵀx = b.
    pub(super) fn solve_transpose(&self, b: &[f64]) -> Result<Vec<f64>> {
        self.solve_with(b, true)
    }

    fn solve_with(&self, b: &[f64], transpose: bool) -> Result<Vec<f64>> {
        let Some(lu) = &self.lu else {
            return Ok(Vec::new());
        };
        let mut rhs = Mat::<f64>::from_fn(self.n, 1, |i, _| b[i]);
        if transpose {
            lu.solve_transpose_in_place(rhs.as_mut());
        } else {
            lu.solve_in_place(rhs.as_mut());
        }
        let x: Vec<f64> = (0..self.n).map(|i| rhs[(i, 0)]).collect();
        if x.iter().any(|v| !v.is_finite()) {
            return Err(Error::Numerical(
                "I − Q is singular: some states cannot reach an absorbing state".into(),
            ));
        }
        Ok(x)
    }
}
