//! The analytic Jacobian (`model::jacobian`) against the exact Jacobian-vector product column by
//! column (J eⱼ, to 1e-12 of the column's largest entry) and against central finite differences
//! of the right-hand side (O(h²), common practice), on every bundled network, on a generated
//! network with a sunlight spectrum, and on random networks (property test).

use photoledger::bench::{Size, large_network};
use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::model::jacobian::Jacobian;
use photoledger::model::rhs::Rhs;
use photoledger::network::{Overrides, build as build_network};
use proptest::prelude::*;
use std::path::Path;

mod common;
use common::{SplitMix, random_network};

fn model(text: &str) -> Model {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build_network(&l, &Overrides::none()) {
        Ok(n) => Model::compile(&n),
        Err(e) => panic!("{e}\n--- network ---\n{text}"),
    }
}

/// States to check at: the initial one, and mixtures with every species present (some at
/// trace levels, some concentrated, so the inner filter runs from thin to thick).
fn states(rhs: &Rhs, seed: u64) -> Vec<Vec<f64>> {
    let y0 = rhs.initial_state();
    let ns = rhs.layout.n_species;
    let mut r = SplitMix(seed);
    let mut out = vec![y0.clone()];
    for scale in [1e-6, 1e-3] {
        let mut y = y0.clone();
        for x in y.iter_mut().take(ns) {
            *x += scale * (0.01 + r.next());
        }
        out.push(y);
    }
    out
}

/// Compare the analytic Jacobian of `model` with J·eⱼ and with central differences; returns the
/// number of columns compared.
fn agree(what: &str, model: &Model, seed: u64) -> usize {
    let rhs = Rhs::new(model);
    let jac = Jacobian::new(model);
    let n = rhs.layout.len();
    assert_eq!(jac.dim(), n, "{what}: dimension");
    let mut values = vec![0.0; jac.nnz()];
    let mut e = vec![0.0; n];
    let mut col = vec![0.0; n];
    let (mut fp, mut fm) = (vec![0.0; n], vec![0.0; n]);
    let mut checked = 0;
    for (k, y) in states(&rhs, seed).iter().enumerate() {
        jac.eval(&rhs, y, &mut values);
        let dense = jac.dense(&values);
        for j in 0..n {
            e[j] = 1.0;
            rhs.jac_vec(y, &e, &mut col);
            e[j] = 0.0;
            let a = &dense[j * n..(j + 1) * n];
            let scale = col.iter().chain(a).fold(0.0f64, |m, x| m.max(x.abs()));
            for i in 0..n {
                assert!(
                    (a[i] - col[i]).abs() <= 1e-12 * scale,
                    "{what}, state {k}: J[{i}][{j}] = {:e} analytic, {:e} from J·e (column scale {scale:e})",
                    a[i],
                    col[i]
                );
            }
            // Central differences on the concentrations (the ledger never feeds back).
            if j < rhs.layout.n_species {
                let h = 1e-5 * y[j].abs().max(1e-9);
                let mut yp = y.clone();
                yp[j] += h;
                let mut ym = y.clone();
                ym[j] -= h;
                rhs.eval(&yp, &mut fp);
                rhs.eval(&ym, &mut fm);
                let fscale = fp.iter().chain(&fm).fold(0.0f64, |m, x| m.max(x.abs()));
                for i in 0..n {
                    let fd = (fp[i] - fm[i]) / (yp[j] - ym[j]);
                    // Truncation O(h²) relative, plus the rounding of the difference ε |f| / h.
                    let tol = 1e-6 * scale + 1e-14 * fscale / h;
                    assert!(
                        (a[i] - fd).abs() <= tol,
                        "{what}, state {k}: J[{i}][{j}] = {:e} analytic, {fd:e} by differences",
                        a[i]
                    );
                }
            } else {
                assert!(a.iter().all(|&x| x == 0.0), "{what}: the ledger fed back");
            }
            checked += 1;
        }
    }
    checked
}

#[test]
fn bundled_networks_agree() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    files.sort();
    assert!(files.len() >= 4);
    for f in files {
        let net = photoledger::network::load(&f, &Overrides::none()).expect("bundled networks load");
        let m = Model::compile(&net);
        let n = agree(&f.display().to_string(), &m, 7);
        assert!(n > 0);
    }
}

/// A generated network under sunlight (about 200 bins, 12 absorbers sharing the inner filter).
#[test]
fn generated_network_agrees() {
    let text = large_network(
        Size {
            species: 60,
            steps: 200,
            absorbers: 12,
        },
        2026,
    );
    agree("generated", &model(&text), 3);
}

/// Two sources, a background, a second-order step written with a coefficient (2 A) and a
/// catalyst that appears on both sides (its own column, no net row).
#[test]
fn two_sources_background_and_second_order() {
    let text = r#"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
background = 0.05
[[light]]
name = "uv"
kind = "line"
wavelength = "365 nm"
power = "20 mW"
[[light]]
name = "blue"
kind = "band"
centre = "450 nm"
fwhm = "20 nm"
power = "50 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 8000], [400, 3000], [500, 10]] }
[[species]]
name = "B"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 100], [400, 5000], [500, 900]] }
[[species]]
name = "C"
initial = "0.1 mM"
[[species]]
name = "D"
[[thermal]]
equation = "2 A -> D"
rate = { k = "3 /(M s)" }
[[thermal]]
equation = "B + C -> A + C"
rate = { k = "40 /(M s)" }
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[photo]]
equation = "B -> A"
quantum_yield = 0.2
"#;
    agree("two sources", &model(text), 5);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]
    #[test]
    fn random_networks_agree(seed in any::<u64>()) {
        let m = model(&random_network(seed));
        let what = format!("random network {seed}");
        prop_assert!(agree(&what, &m, seed) > 0);
    }
}
