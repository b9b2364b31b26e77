use super::*;
use crate::network::{self, Overrides, params};

// Invented: A -> B over a barrier, first order, and nothing else.
const NET: &str = r#"
[about]
name = "one first-order step (invented)"
invented = true

[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"

[[species]]
name = "A"
initial = "2 mM"

[[species]]
name = "B"
initial = "0 M"
product = true

[[thermal]]
name = "A to B"
equation = "A -> B"
rate = { barrier = "90 kJ/mol" }
"#;

fn net() -> network::Network {
    let l = crate::file::parse_text(std::path::Path::new("t.toml"), NET.to_string()).unwrap();
    network::build(&l, &Overrides::none()).unwrap()
}

#[test]
fn first_order_decay_has_the_closed_form_sensitivities() {
    // A(t) = A₀ e^(−kt), k = (k_B T / h) e^(−ΔG‡/RT): ∂A/∂A₀ = e^(−kt),
    // ∂A/∂ΔG‡ = A₀ t e^(−kt) k / RT, ∂B = −∂A (closed form of the first-order rate law and of
    // Eyring's equation; Atkins and de Paula, Physical Chemistry, 9th ed., 2010, §21.3, §22.4).
    let n = net();
    let keys = [
        params::Key::parse(&n, "species.A.initial").unwrap(),
        params::Key::parse(&n, "thermal.A to B.barrier").unwrap(),
    ];
    let sides: Vec<_> = keys
        .iter()
        .map(|&k| params::around(&n, k, 1e-6 * params::get(&n, k).value).unwrap())
        .collect();
    let models: Vec<(Model, Model)> = sides
        .iter()
        .map(|(p, m, _)| (Model::compile(p), Model::compile(m)))
        .collect();
    let perturbed: Vec<Perturbed> = models
        .iter()
        .zip(&sides)
        .zip(&keys)
        .map(|(((p, m), s), &k)| Perturbed {
            plus: p,
            minus: m,
            span: s.2,
            scale: params::get(&n, k).value,
        })
        .collect();
    let model = Model::compile(&n);
    let k = model_rate(&n);
    let mut opts = Options::until(3.0 / k);
    opts.rtol = 1e-9;
    opts.atol = 1e-15;
    opts.outputs = 6;
    let run = simulate(&model, &perturbed, &opts).unwrap();
    let a0 = 2e-3;
    let rt = crate::units::constants::GAS_CONSTANT * 298.15;
    assert_eq!(run.times.len(), 7);
    for (i, &t) in run.times.iter().enumerate() {
        let e = (-k * t).exp();
        let (da0, dg) = (e, a0 * t * e * k / rt);
        let s = &run.sensitivities[i];
        assert!((run.states[i][0] - a0 * e).abs() < 1e-8 * a0, "A at {t}");
        assert!((s[0][0] - da0).abs() < 1e-7, "dA/dA0 at {t}: {} vs {da0}", s[0][0]);
        assert!((s[0][1] + da0 - 1.0).abs() < 1e-7, "dB/dA0 at {t}");
        let tol = 1e-6 * (a0 * k * t / rt).max(1e-30) + 1e-22;
        assert!((s[1][0] - dg).abs() < tol, "dA/dG at {t}: {} vs {dg}", s[1][0]);
        assert!((s[1][1] + dg).abs() < tol, "dB/dG at {t}");
    }
}

fn model_rate(n: &network::Network) -> f64 {
    let m = Model::compile(n);
    let rhs = Rhs::new(&m);
    let y = rhs.initial_state();
    let mut dy = vec![0.0; y.len()];
    rhs.eval(&y, &mut dy);
    -dy[0] / y[0]
}
