//! The fill-reducing orderings faer offers for the BDF iteration matrix I − γJ, compared on the
//! generated 1,000-species network (a measurement, not a check of values: ignored by default;
//! run with `cargo test --release --test lu_orderings -- --ignored --nocapture`). Every ordering
//! must also solve the system to round-off, which the test asserts.

use photoledger::bench::{Size, large_network};
use photoledger::file::parse_text;
use photoledger::kinetics::sparse_lu::{ORDERING, Ordering, SparseLu};
use photoledger::model::Model;
use photoledger::model::jacobian::Jacobian;
use photoledger::model::rhs::Rhs;
use photoledger::network::{Overrides, build};
use std::path::Path;
use std::time::Instant;

fn best_of(k: usize, mut f: impl FnMut()) -> f64 {
    (0..k)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

#[test]
#[ignore]
fn compare_orderings_on_the_generated_network() {
    let size = Size {
        species: 1000,
        steps: 5000,
        absorbers: 100,
    };
    let text = large_network(size, 2026);
    let l = parse_text(Path::new("generated.toml"), text).unwrap();
    let model = Model::compile(&build(&l, &Overrides::none()).unwrap());
    let rhs = Rhs::new(&model);
    let jac = Jacobian::new(&model);
    let n = jac.dim();
    // A state with every species present and a step where the stiff part matters.
    let mut y = rhs.initial_state();
    for (i, x) in y.iter_mut().take(model.n_species()).enumerate() {
        *x += 1e-5 * (1.0 + (i % 7) as f64);
    }
    let mut values = vec![0.0; jac.nnz()];
    jac.eval(&rhs, &y, &mut values);
    let gamma = 10.0;
    for (c, k) in (0..n).flat_map(|c| (jac.col_ptr()[c]..jac.col_ptr()[c + 1]).map(move |k| (c, k))) {
        values[k] *= -gamma;
        if jac.row_idx()[k] == c {
            values[k] += 1.0;
        }
    }
    let pattern =
        faer::sparse::SymbolicSparseColMat::new_checked(n, n, jac.col_ptr().to_vec(), None, jac.row_idx().to_vec());
    let a = faer::sparse::SparseColMat::new(pattern, values.clone());
    // The species block alone (the ledger rows and columns left out), for comparison.
    {
        let ns = model.n_species();
        let mut trip = Vec::new();
        for (k, (r, c)) in jac.entries().into_iter().enumerate() {
            if r < ns && c < ns {
                trip.push(faer::sparse::Triplet::new(r, c, values[k]));
            }
        }
        let sub = faer::sparse::SparseColMat::<usize, f64>::try_new_from_triplets(ns, ns, &trip).unwrap();
        let mut lu = SparseLu::new(Ordering::Colamd);
        lu.analyse(sub.symbolic()).unwrap();
        let f1 = best_of(10, || assert!(lu.factor(sub.as_ref())));
        let f2 = best_of(10, || assert!(lu.factor(sub.as_ref())));
        let dense = sub.to_dense();
        let fd = best_of(10, || {
            let _ = dense.partial_piv_lu();
        });
        println!("species block as a dense matrix: faer dense LU {:.3} ms", fd * 1e3);
        println!(
            "species block alone ({ns}, nnz {}): factor {:.3} ms",
            sub.compute_nnz(),
            f1.min(f2) * 1e3
        );
    }
    let b: Vec<f64> = (0..n).map(|i| 1.0 + (i % 3) as f64).collect();
    println!("n = {n}, nnz = {}; kept: {ORDERING:?}", jac.nnz());
    println!(
        "{:<18} {:>12} {:>12} {:>12} {:>10}",
        "ordering", "analyse (ms)", "factor (ms)", "solve (ms)", "residual"
    );
    // Twice round, so that no ordering is timed cold; the second round is printed.
    for o in Ordering::ALL.iter().chain(Ordering::ALL.iter()).copied() {
        let mut lu = SparseLu::new(o);
        let analyse = best_of(1, || lu.analyse(a.symbolic()).unwrap());
        let factor = best_of(10, || assert!(lu.factor(a.as_ref())));
        let mut x = faer::Mat::<f64>::zeros(n, 1);
        let solve = best_of(20, || {
            for i in 0..n {
                x[(i, 0)] = b[i];
            }
            lu.solve(x.as_mut()).unwrap();
        });
        // Residual ‖A x − b‖∞ / ‖b‖∞.
        let mut r = b.iter().map(|v| -v).collect::<Vec<_>>();
        for c in 0..n {
            for k in jac.col_ptr()[c]..jac.col_ptr()[c + 1] {
                r[jac.row_idx()[k]] += a.val()[k] * x[(c, 0)];
            }
        }
        let res = r.iter().fold(0.0f64, |m, v| m.max(v.abs())) / 3.0;
        println!(
            "{:<18} {:>12.3} {:>12.3} {:>12.3} {:>10.1e}",
            format!("{o:?}"),
            analyse * 1e3,
            factor * 1e3,
            solve * 1e3,
            res
        );
        assert!(res < 1e-9, "{o:?}: residual {res:e}");
    }
}
