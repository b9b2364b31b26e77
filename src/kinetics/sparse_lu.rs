//! Sparse LU of the BDF iteration matrix I − γJ (faer), with the fill-reducing ordering chosen
//! once per sparsity pattern and the factorisation and solve scratch made once. As the
//! integrator's linear solver it factors only the coupled block and finishes the columns that
//! hold just their diagonal (the photon ledger's) by block forward substitution
//! ([`super::lone_columns`]); `analyse`, `factor` and `solve` work on whatever matrix they are
//! given.
//!
//! faer offers, for a square unsymmetric matrix, COLAMD on the columns (its `factorize_symbolic_lu`,
//! with a simplicial or a supernodal numeric factorisation, chosen by a flop-per-entry estimate or
//! forced) and, through its simplicial factorisation with a given column order, any ordering we
//! compute, such as AMD on the pattern of A + Aᵀ (`amd::order`). [`ORDERING`] is the one kept:
//! measured on the generated 1,000-species network by the ignored test
//! `tests/lu_orderings.rs` (numbers in DEVELOPERS.md). A factorisation that fails (a singular
//! matrix) is reported by the next solve as an error, and so is a solve whose answer is not finite
//! (a numerically singular matrix, which faer factors with a zero pivot), so the integrator
//! shortens its step instead of the program stopping or iterating on NaN
//! (`tests/singular_iteration_matrix.rs`).

use super::lone_columns::{LoneColumns, Parts};
use super::lu_reuse;
use diffsol::{FaerSparseMat, FaerVec, Matrix, Vector};
use diffsol_la::{LaError, LinearOp, LinearSolver, MatrixCommon};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::perm::PermRef;
use faer::prelude::{Reborrow, ReborrowMut};
use faer::sparse::linalg::lu::{LuRef, LuSymbolicParams, NumericLu, SymbolicLu, factorize_symbolic_lu, simplicial};
use faer::sparse::linalg::{SupernodalThreshold, amd, colamd};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMat, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par};
use std::cell::RefCell;

/// A fill-reducing ordering and factorisation variant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ordering {
    /// COLAMD on the columns; faer picks simplicial or supernodal (faer's default).
    Colamd,
    /// COLAMD without aggressive absorption; faer picks the variant.
    ColamdGentle,
    /// COLAMD, simplicial factorisation forced.
    ColamdSimplicial,
    /// COLAMD, supernodal factorisation forced.
    ColamdSupernodal,
    /// AMD on the pattern of A + Aᵀ as the column order, simplicial factorisation.
    AmdSimplicial,
}

impl Ordering {
    /// Every variant, for comparisons.
    pub const ALL: [Ordering; 5] = [
        Ordering::Colamd,
        Ordering::ColamdGentle,
        Ordering::ColamdSimplicial,
        Ordering::ColamdSupernodal,
        Ordering::AmdSimplicial,
    ];
}

/// The ordering the BDF integrator uses.
pub const ORDERING: Ordering = Ordering::Colamd;

enum Factors {
    Faer {
        symbolic: SymbolicLu<usize>,
        numeric: NumericLu<usize, f64>,
    },
    Simplicial {
        col_fwd: Vec<usize>,
        col_inv: Vec<usize>,
        row_fwd: Vec<usize>,
        row_inv: Vec<usize>,
        lu: simplicial::SimplicialLu<usize, f64>,
    },
}

/// A sparse LU with its ordering fixed when the pattern is set.
pub struct SparseLu {
    ordering: Ordering,
    a: Option<FaerSparseMat<f64>>,
    factors: Option<Factors>,
    scratch: MemBuffer,
    solve_scratch: RefCell<MemBuffer>,
    ok: bool,
    /// Numeric factorisations done.
    pub factorisations: usize,
    /// Kept factors: see [`lu_reuse`].
    reuse: lu_reuse::Reuse,
    /// Factorisations and reuses, shared with whoever made this solver (the integrator's
    /// counts), since diffsol owns the solver once it is handed over.
    tally: std::rc::Rc<std::cell::Cell<Tally>>,
    /// For the integrator's matrices: the coupled block (what is factored) and the columns
    /// that hold only their diagonal ([`lone_columns`](super::lone_columns)).
    split: Option<LoneColumns>,
    /// The split's values from the last factored matrix.
    parts: Parts,
    /// The coupled part of a right-hand side, solved in place.
    coupled_x: RefCell<faer::Mat<f64>>,
}

/// What the iteration-matrix solver did with the matrices it was given.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Tally {
    /// Numeric factorisations.
    pub factorisations: usize,
    /// Matrices answered with kept factors and a scaled correction instead.
    pub kept: usize,
}

impl Default for SparseLu {
    fn default() -> Self {
        SparseLu::new(ORDERING)
    }
}

impl SparseLu {
    /// An LU that will order by `ordering`.
    pub fn new(ordering: Ordering) -> Self {
        SparseLu {
            ordering,
            a: None,
            factors: None,
            scratch: MemBuffer::new(faer::dyn_stack::StackReq::EMPTY),
            solve_scratch: RefCell::new(MemBuffer::new(faer::dyn_stack::StackReq::EMPTY)),
            ok: false,
            factorisations: 0,
            reuse: lu_reuse::Reuse::default(),
            tally: Default::default(),
            split: None,
            parts: Parts::default(),
            coupled_x: RefCell::new(faer::Mat::zeros(0, 1)),
        }
    }

    /// An LU with the integrator's ordering whose factorisations and reuses are also counted in
    /// `tally`.
    pub fn counted(tally: std::rc::Rc<std::cell::Cell<Tally>>) -> Self {
        SparseLu {
            tally,
            ..SparseLu::new(ORDERING)
        }
    }

    /// Order the columns of `pattern` and make the symbolic factorisation and the scratch.
    pub fn analyse(&mut self, pattern: SymbolicSparseColMatRef<'_, usize>) -> Result<(), String> {
        let n = pattern.ncols();
        let colamd_params = match self.ordering {
            Ordering::ColamdGentle => colamd::Control {
                aggressive: false,
                ..Default::default()
            },
            _ => colamd::Control::default(),
        };
        let threshold = match self.ordering {
            Ordering::ColamdSimplicial => SupernodalThreshold::FORCE_SIMPLICIAL,
            Ordering::ColamdSupernodal => SupernodalThreshold::FORCE_SUPERNODAL,
            _ => SupernodalThreshold::AUTO,
        };
        let err = |e: faer::sparse::FaerError| format!("sparse LU analysis: {e:?}");
        match self.ordering {
            Ordering::AmdSimplicial => {
                let (mut col_fwd, mut col_inv) = (vec![0usize; n], vec![0usize; n]);
                let nnz = pattern.compute_nnz();
                let mut mem = MemBuffer::new(amd::order_maybe_unsorted_scratch::<usize>(n, nnz));
                amd::order_maybe_unsorted(
                    &mut col_fwd,
                    &mut col_inv,
                    pattern,
                    amd::Control::default(),
                    MemStack::new(&mut mem),
                )
                .map_err(err)?;
                self.scratch = MemBuffer::new(simplicial::factorize_simplicial_numeric_lu_scratch::<usize, f64>(n, n));
                *self.solve_scratch.borrow_mut() =
                    MemBuffer::new(simplicial::solve_in_place_scratch::<usize, f64>(n, 1, Par::Seq));
                self.factors = Some(Factors::Simplicial {
                    col_fwd,
                    col_inv,
                    row_fwd: vec![0; n],
                    row_inv: vec![0; n],
                    lu: simplicial::SimplicialLu::new(),
                });
            }
            _ => {
                let symbolic = factorize_symbolic_lu(
                    pattern,
                    LuSymbolicParams {
                        colamd_params,
                        supernodal_flop_ratio_threshold: threshold,
                        ..Default::default()
                    },
                )
                .map_err(err)?;
                self.scratch =
                    MemBuffer::new(symbolic.factorize_numeric_lu_scratch::<f64>(Par::Seq, Default::default()));
                *self.solve_scratch.borrow_mut() = MemBuffer::new(symbolic.solve_in_place_scratch::<f64>(1, Par::Seq));
                self.factors = Some(Factors::Faer {
                    symbolic,
                    numeric: NumericLu::new(),
                });
            }
        }
        self.ok = false;
        Ok(())
    }

    /// Factorise `a` (the pattern given to [`SparseLu::analyse`]); false when it is singular.
    pub fn factor(&mut self, a: SparseColMatRef<'_, usize, f64>) -> bool {
        self.factorisations += 1;
        let stack = MemStack::new(&mut self.scratch);
        self.ok = match self.factors.as_mut() {
            None => false,
            Some(Factors::Faer { symbolic, numeric }) => symbolic
                .factorize_numeric_lu(numeric, a, Par::Seq, stack, Default::default())
                .is_ok(),
            Some(Factors::Simplicial {
                col_fwd,
                col_inv,
                row_fwd,
                row_inv,
                lu,
            }) => {
                let n = col_fwd.len();
                let col = PermRef::new_checked(col_fwd, col_inv, n);
                simplicial::factorize_simplicial_numeric_lu(row_fwd, row_inv, lu, a, col, stack).is_ok()
            }
        };
        self.ok
    }

    /// Factor the coupled block of the integrator's matrix whose values (in the pattern given
    /// to `set_sparsity`) are `values`; false when it is singular.
    fn factor_split(&mut self, values: &[f64]) -> bool {
        let Some(split) = self.split.take() else {
            self.ok = false;
            return false;
        };
        let mut parts = std::mem::take(&mut self.parts);
        split.take(values, &mut parts);
        let ok = if split.coupled.is_empty() {
            self.ok = true;
            true
        } else {
            self.factor(split.block_matrix(&parts))
        };
        self.parts = parts;
        self.split = Some(split);
        ok
    }

    /// Solve A x = b in place (`x` holds b on entry). An error when the factorisation failed or
    /// when the solution is not finite: faer reports a structurally singular matrix but factors a
    /// numerically singular one with a zero pivot, whose solve gives infinities or NaN.
    pub fn solve(&self, mut x: MatMut<'_, f64>) -> Result<(), String> {
        if !self.ok {
            return Err("the iteration matrix is singular".into());
        }
        let mut scratch = self.solve_scratch.borrow_mut();
        let stack = MemStack::new(&mut scratch);
        match self.factors.as_ref() {
            None => return Err("no factorisation".into()),
            Some(Factors::Faer { symbolic, numeric }) => {
                LuRef::new_unchecked(symbolic, numeric).solve_in_place_with_conj(Conj::No, x.rb_mut(), Par::Seq, stack)
            }
            Some(Factors::Simplicial {
                col_fwd,
                col_inv,
                row_fwd,
                row_inv,
                lu,
            }) => {
                let n = col_fwd.len();
                let row = PermRef::new_checked(row_fwd, row_inv, n);
                let col = PermRef::new_checked(col_fwd, col_inv, n);
                lu.solve_in_place_with_conj(row, col, Conj::No, x.rb_mut(), Par::Seq, stack)
            }
        }
        let finite = (0..x.ncols()).all(|j| x.rb().col(j).iter().all(|v| v.is_finite()));
        if finite {
            Ok(())
        } else {
            Err("the iteration matrix is singular".into())
        }
    }
}

impl LinearSolver<FaerSparseMat<f64>> for SparseLu {
    fn set_linearisation<C: LinearOp<T = f64, V = FaerVec<f64>, M = FaerSparseMat<f64>, C = diffsol::FaerContext>>(
        &mut self,
        op: &C,
    ) {
        let Some(mut a) = self.a.take() else {
            self.ok = false;
            return;
        };
        op.matrix_inplace(&mut a);
        let mut tally = self.tally.get();
        let values = a.inner()[0].val();
        if self.ok && self.reuse.keep(values) {
            tally.kept += 1;
        } else {
            tally.factorisations += 1;
            if self.factor_split(a.inner()[0].val()) {
                self.reuse.factored(a.inner()[0].val());
            }
        }
        self.tally.set(tally);
        self.a = Some(a);
    }

    fn set_sparsity<C: LinearOp<T = f64, V = FaerVec<f64>, M = FaerSparseMat<f64>, C = diffsol::FaerContext>>(
        &mut self,
        op: &C,
    ) {
        let n = op.ncols();
        let pattern: SymbolicSparseColMat<usize> = op.sparsity().expect("a sparse matrix has a pattern");
        let a = FaerSparseMat::new_from_sparsity(op.nrows(), n, Some(pattern), *op.context());
        self.reuse = lu_reuse::Reuse::for_pattern(a.inner()[0].symbolic());
        let split = LoneColumns::of(a.inner()[0].symbolic());
        let analysed = if split.coupled.is_empty() {
            Ok(())
        } else {
            self.analyse(split.block.as_ref())
        };
        *self.coupled_x.borrow_mut() = faer::Mat::zeros(split.coupled.len(), 1);
        self.ok = false;
        self.split = Some(split);
        self.a = Some(a);
        if analysed.is_err() {
            self.factors = None;
        }
    }

    fn solve_in_place(&self, x: &mut FaerVec<f64>) -> Result<(), LaError> {
        let singular = || LaError::Other("the iteration matrix is singular".into());
        let split = self.split.as_ref().ok_or_else(singular)?;
        let m = x.inner_mut();
        let scale = self.reuse.correction();
        let mut xc = self.coupled_x.borrow_mut();
        for j in 0..m.ncols() {
            let col = m
                .as_mut()
                .col_mut(j)
                .try_as_col_major_mut()
                .expect("a contiguous column")
                .as_slice_mut();
            if !split.coupled.is_empty() {
                split.gather(col, xc.col_as_slice_mut(0));
                self.solve(xc.as_mut()).map_err(LaError::Other)?;
            } else if !self.ok {
                return Err(singular());
            }
            split.finish(&self.parts, xc.col_as_slice(0), col);
            if !col.iter().all(|v| v.is_finite()) {
                return Err(singular());
            }
            if scale != 1.0 {
                col.iter_mut().for_each(|v| *v *= scale);
            }
        }
        Ok(())
    }

    fn solve_transpose_in_place(&self, _x: &mut FaerVec<f64>) -> Result<(), LaError> {
        Err(LaError::Other("transposed solves are not used".into()))
    }
}
