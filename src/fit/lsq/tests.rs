use super::*;

#[test]
fn transforms_round_trip_and_slopes_match_differences() {
    for (t, x) in [
        (Transform::Identity, -3.5),
        (Transform::Log, 2.5e-7),
        (Transform::Logit, 0.3),
    ] {
        let z = t.forward(x);
        assert!((t.inverse(z) - x).abs() <= 1e-12 * x.abs());
        let h = 1e-6;
        let d = (t.inverse(z + h) - t.inverse(z - h)) / (2.0 * h);
        assert!((d - t.slope(z)).abs() <= 1e-6 * d.abs());
    }
    assert!(Transform::Logit.at_bound(Transform::Logit.forward(1.0)));
    assert!(!Transform::Logit.at_bound(Transform::Logit.forward(0.999)));
}

#[test]
fn t_quantiles() {
    // Student t 97.5 % points: 12.706 (1 dof), 2.228 (10 dof), 1.960 (normal limit);
    // common practice (any statistics table).
    assert!((t_quantile(0.975, 1) - 12.7062).abs() < 1e-3);
    assert!((t_quantile(0.975, 10) - 2.2281).abs() < 1e-3);
    assert!((t_quantile(0.975, 100_000) - 1.95997).abs() < 1e-3);
}

#[test]
fn a_straight_line_has_the_textbook_errors() {
    // y = a + b x with unit weights: se from the closed form of linear regression
    // (common practice): se(b)² = s² / Σ(x − x̄)², se(a)² = s² (1/n + x̄²/Σ(x − x̄)²).
    let x = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
    let y = [1.1, 2.9, 5.2, 7.1, 8.8, 11.2];
    let m = |p: &[f64]| Some(x.iter().zip(&y).map(|(x, y)| y - (p[0] + p[1] * x)).collect());
    let s = fit(&m, &[0.0, 1.0], &[Transform::Identity; 2], &Settings::default()).unwrap();
    let n = x.len() as f64;
    let xm = x.iter().sum::<f64>() / n;
    let sxx: f64 = x.iter().map(|v| (v - xm).powi(2)).sum();
    let s2 = s.chi2 / (n - 2.0);
    assert!((s.standard_errors[1] - (s2 / sxx).sqrt()).abs() < 1e-7);
    assert!((s.standard_errors[0] - (s2 * (1.0 / n + xm * xm / sxx)).sqrt()).abs() < 1e-7);
    assert!(s.warnings(&[Transform::Identity; 2]).is_empty());
}

#[test]
fn known_sigma_leaves_the_covariance_unscaled() {
    // y = a + b x with σ = 0.2 on every point taken as known: se(b)² = σ² / Σ(x − x̄)²
    // whatever the scatter (closed form of weighted linear regression, common practice),
    // and the interval uses the normal 97.5 % point 1.95996 (any statistics table).
    let x = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
    let y = [1.1, 2.9, 5.2, 7.1, 8.8, 11.2];
    let sigma = 0.2;
    let m = |p: &[f64]| Some(x.iter().zip(&y).map(|(x, y)| (y - (p[0] + p[1] * x)) / sigma).collect());
    let known = Settings {
        errors: ErrorScale::Unscaled,
        ..Settings::default()
    };
    let u = fit(&m, &[0.0, 1.0], &[Transform::Identity; 2], &known).unwrap();
    let s = fit(&m, &[0.0, 1.0], &[Transform::Identity; 2], &Settings::default()).unwrap();
    let n = x.len() as f64;
    let xm = x.iter().sum::<f64>() / n;
    let sxx: f64 = x.iter().map(|v| (v - xm).powi(2)).sum();
    assert_eq!(u.errors, ErrorScale::Unscaled);
    assert!(
        (u.standard_errors[1] - sigma / sxx.sqrt()).abs() < 1e-8,
        "{}",
        u.standard_errors[1]
    );
    assert!((u.quantile - 1.959964).abs() < 1e-5);
    // Scaled by the reduced χ²: the two differ by √(χ²/dof), and use Student t with 4 dof (2.776).
    assert!((s.standard_errors[1] / u.standard_errors[1] - s.reduced_chi2.sqrt()).abs() < 1e-8);
    assert!((s.quantile - 2.7764).abs() < 1e-3);
    // Untransformed: the interval is value ± q se, exactly.
    for j in 0..2 {
        let (v, q, se) = (u.values[j], u.quantile, u.standard_errors[j]);
        assert_eq!(u.intervals[j], (v - q * se, v + q * se));
    }
}

#[test]
fn a_fraction_near_one_keeps_its_interval_inside_the_range() {
    // Two readings of a quantum yield, 0.97 and 0.99 with σ = 0.02 known: the estimate is the
    // mean 0.98 with se = σ/√2 = 0.01414 (common practice), and value ± 1.96 se would reach
    // 1.0077. From the logit scale the interval stays inside (0, 1).
    let m = |p: &[f64]| Some(vec![(0.97 - p[0]) / 0.02, (0.99 - p[0]) / 0.02]);
    let known = Settings {
        errors: ErrorScale::Unscaled,
        ..Settings::default()
    };
    let s = fit(&m, &[0.5], &[Transform::Logit], &known).unwrap();
    let (v, se) = (s.values[0], s.standard_errors[0]);
    assert!((v - 0.98).abs() < 1e-9, "{v}");
    assert!((se - 0.02 / 2f64.sqrt()).abs() < 1e-6, "natural-scale se {se}");
    assert!(
        v + s.quantile * se > 1.0,
        "the natural-scale interval would leave [0, 1]"
    );
    let (lo, hi) = s.intervals[0];
    assert!(0.0 < lo && lo < v && v < hi && hi < 1.0, "[{lo}, {hi}]");
    let z = Transform::Logit.forward(v);
    let half = s.quantile * se / (v * (1.0 - v));
    let want = (Transform::Logit.inverse(z - half), Transform::Logit.inverse(z + half));
    assert!(
        (lo - want.0).abs() < 1e-9 && (hi - want.1).abs() < 1e-9,
        "[{lo}, {hi}] vs {want:?}"
    );
    // A positive value from the log scale: the interval is v·exp(∓q se/v), never below 0.
    let m = |p: &[f64]| Some(vec![(0.05 - p[0]) / 0.04, (0.01 - p[0]) / 0.04]);
    let s = fit(&m, &[0.1], &[Transform::Log], &known).unwrap();
    let (v, se) = (s.values[0], s.standard_errors[0]);
    assert!(v - s.quantile * se < 0.0, "the natural-scale interval would go below 0");
    let (lo, hi) = s.intervals[0];
    assert!(
        (lo - v * (-s.quantile * se / v).exp()).abs() < 1e-12 && lo > 0.0,
        "{lo}"
    );
    assert!((hi - v * (s.quantile * se / v).exp()).abs() < 1e-12, "{hi}");
}

#[test]
fn a_fraction_the_data_push_past_its_range_ends_on_the_edge() {
    // Readings 1.3 and 1.4 (σ = 0.02) of a quantity kept in [0, 1], and 2.0 and 2.2 (σ = 0.1)
    // of an unbounded one: the first ends on its edge, 1 (in floating point exactly, so
    // dx/dz of the logistic rounds to 0 there), the second at the mean 2.1 with se
    // 0.1/√2 (common practice). The fit must end (on the main branch of December 2026 the
    // covariance held 0/0 and the SVD never returned), with no error claimed for the first.
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        let m = |p: &[f64]| {
            Some(vec![
                (1.3 - p[0]) / 0.02,
                (1.4 - p[0]) / 0.02,
                (2.0 - p[1]) / 0.1,
                (2.2 - p[1]) / 0.1,
            ])
        };
        let known = Settings {
            errors: ErrorScale::Unscaled,
            ..Settings::default()
        };
        let t = [Transform::Logit, Transform::Identity];
        let _ = tx.send((fit(&m, &[0.5, 0.0], &t, &known), t));
    });
    let (s, t) = rx
        .recv_timeout(std::time::Duration::from_secs(60))
        .expect("the fit must end");
    let s = s.unwrap();
    assert!(s.converged, "{}", s.termination);
    assert!(s.values[0] > 1.0 - 1e-6, "{}", s.values[0]);
    assert!(s.standard_errors[0].is_nan() && s.intervals[0].0.is_nan());
    assert!((s.values[1] - 2.1).abs() < 1e-9);
    assert!(
        (s.standard_errors[1] - 0.1 / 2f64.sqrt()).abs() < 1e-6,
        "{}",
        s.standard_errors[1]
    );
    assert!(s.warnings(&t).contains(&Identifiability::AtBound(0)));
    // The logistic slope stays positive far out, where x(1 − x) rounds to 0.
    assert!(Transform::Logit.slope(40.0) > 0.0 && Transform::Logit.slope(-40.0) > 0.0);
    assert!((Transform::Logit.slope(40.0) / (-40f64).exp() - 1.0).abs() < 1e-12);
}

#[test]
fn a_parameter_the_data_cannot_see_is_flagged() {
    // y depends on a + b only: a and b are not separately identifiable.
    let x = [0.0, 1.0, 2.0, 3.0];
    let m = |p: &[f64]| Some(x.iter().map(|x| 2.0 * x + 1.0 - (p[0] + p[1]) * x - 1.0).collect());
    let s = fit(&m, &[0.5, 0.5], &[Transform::Identity; 2], &Settings::default()).unwrap();
    let w = s.warnings(&[Transform::Identity; 2]);
    assert!(w.iter().any(|w| matches!(w, Identifiability::NearSingular(_))), "{w:?}");
}

#[test]
fn a_trial_step_the_model_cannot_evaluate_is_shortened_not_fatal() {
    // r(x) = eˣ − e from x = −3: the Gauss–Newton step lands near x = 50, where this model
    // (like a barrier so low that its rate constant overflows) cannot be evaluated. The
    // search must reject that step, shorten it and reach x = 1.
    let m = |p: &[f64]| (p[0] < 5.0).then(|| vec![p[0].exp() - 1f64.exp()]);
    let s = fit(&m, &[-3.0], &[Transform::Identity], &Settings::default()).unwrap();
    assert!(s.converged && (s.values[0] - 1.0).abs() < 1e-6, "{:?}", s.values);
}
