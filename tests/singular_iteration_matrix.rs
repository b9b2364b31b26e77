//! A singular BDF iteration matrix must come back as an error the integrator can act on (shorten
//! its step), never as a panic and never as a solution full of infinities or NaN. Checked for
//! every ordering `SparseLu` offers, on a matrix that is singular by a column of zeros
//! and on one that is singular by value (two equal columns). (`SparseLu::solve` is what its
//! diffsol `LinearSolver::solve_in_place` calls for the coupled block, the lone columns then
//! following by block forward substitution with the same finite check; an error there makes
//! diffsol count a failed Newton iteration and shorten the step.)

use faer::sparse::{SparseColMat, Triplet};
use photoledger::kinetics::sparse_lu::{Ordering, SparseLu};

fn matrix(n: usize, entries: &[(usize, usize, f64)]) -> SparseColMat<usize, f64> {
    let trip: Vec<_> = entries.iter().map(|&(r, c, v)| Triplet::new(r, c, v)).collect();
    SparseColMat::try_new_from_triplets(n, n, &trip).unwrap()
}

/// Factor `a` with every ordering and solve; each must refuse, not answer.
fn refuses(a: &SparseColMat<usize, f64>, what: &str) {
    let n = a.nrows();
    for o in Ordering::ALL {
        let mut lu = SparseLu::new(o);
        lu.analyse(a.symbolic()).unwrap();
        let _ = lu.factor(a.as_ref());
        // b = e₁ is outside the range of both matrices below, so no finite x solves A x = b.
        let mut x = faer::Mat::<f64>::from_fn(n, 1, |i, _| if i == 1 { 1.0 } else { 0.0 });
        match lu.solve(x.as_mut()) {
            Err(e) => assert!(e.contains("singular"), "{what}, {o:?}: unclear error {e}"),
            Ok(()) => panic!(
                "{what}, {o:?}: a singular matrix was solved: {:?}",
                (0..n).map(|i| x[(i, 0)]).collect::<Vec<_>>()
            ),
        }
    }
}

#[test]
fn a_column_of_zeros_is_an_error() {
    // Column 1 holds only a zero (on the diagonal, where the iteration matrix always has an entry).
    let a = matrix(3, &[(0, 0, 2.0), (1, 0, 1.0), (2, 2, 3.0), (0, 2, 1.0), (1, 1, 0.0)]);
    refuses(&a, "column of zeros");
}

#[test]
fn a_numerically_singular_matrix_is_an_error() {
    // Columns 0 and 1 are equal: the pattern is full, the values make it singular. Powers of two,
    // so that elimination is exact in every variant and the pivot is exactly zero. (A matrix only
    // close to singular gives a tiny pivot and a huge finite update, which diffsol's Newton
    // convergence test rejects; that is its job, not the LU's.)
    let a = matrix(
        3,
        &[
            (0, 0, 4.0),
            (1, 0, 2.0),
            (2, 0, 1.0),
            (0, 1, 4.0),
            (1, 1, 2.0),
            (2, 1, 1.0),
            (0, 2, 1.0),
            (1, 2, 0.0),
            (2, 2, 5.0),
        ],
    );
    refuses(&a, "equal columns");
}

#[test]
fn a_regular_matrix_is_still_solved() {
    // The same shape as above with the second column changed: solved to round-off.
    let a = matrix(
        3,
        &[
            (0, 0, 1.0),
            (1, 0, 2.0),
            (2, 0, 3.0),
            (0, 1, 1.0),
            (1, 1, 5.0),
            (2, 2, 5.0),
        ],
    );
    for o in Ordering::ALL {
        let mut lu = SparseLu::new(o);
        lu.analyse(a.symbolic()).unwrap();
        assert!(lu.factor(a.as_ref()), "{o:?}");
        let mut x = faer::Mat::<f64>::from_fn(3, 1, |i, _| [2.0, 7.0, 8.0][i]);
        lu.solve(x.as_mut()).unwrap();
        // x = (1, 1, 1): row sums of the matrix are (2, 7, 8).
        for i in 0..3 {
            assert!((x[(i, 0)] - 1.0).abs() < 1e-14, "{o:?}: x[{i}] = {}", x[(i, 0)]);
        }
    }
}
