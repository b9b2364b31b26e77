//! The fitting core and the photochemical fit against outside references.

use photoledger::fit::lsq::{Settings, Transform, fit};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// NIST Statistical Reference Datasets, nonlinear regression, Misra1a (lower difficulty):
/// y = b1 (1 − exp(−b2 x)); data, starts and certified values as given on the NIST StRD page.
const MISRA1A: [(f64, f64); 14] = [
    (10.07, 77.6),
    (14.73, 114.9),
    (17.94, 141.1),
    (23.93, 190.8),
    (29.61, 239.9),
    (35.18, 289.0),
    (40.02, 332.8),
    (44.82, 378.4),
    (50.76, 434.8),
    (55.05, 477.3),
    (61.01, 536.8),
    (66.40, 593.1),
    (75.47, 689.1),
    (81.78, 760.0),
];

#[test]
fn nist_misra1a_from_both_starts() {
    let model = |b: &[f64]| {
        Some(
            MISRA1A
                .iter()
                .map(|(y, x)| y - b[0] * (1.0 - (-b[1] * x).exp()))
                .collect(),
        )
    };
    for start in [[500.0, 1e-4], [250.0, 5e-4]] {
        let s = fit(&model, &start, &[Transform::Identity; 2], &Settings::default()).unwrap();
        // Certified values: NIST StRD Misra1a (Misra, D., NIST 1978, dental research monomolecular adsorption).
        assert!(rel(s.values[0], 2.3894212918e+02) < 1e-6, "b1 {}", s.values[0]);
        assert!(rel(s.values[1], 5.5015643181e-04) < 1e-6, "b2 {}", s.values[1]);
        assert!(
            rel(s.standard_errors[0], 2.7070075241e+00) < 1e-5,
            "sd b1 {}",
            s.standard_errors[0]
        );
        assert!(
            rel(s.standard_errors[1], 7.2668688436e-06) < 1e-5,
            "sd b2 {}",
            s.standard_errors[1]
        );
        assert!(rel(s.chi2, 1.2455138894e-01) < 1e-8, "RSS {}", s.chi2);
        assert!(rel(s.reduced_chi2.sqrt(), 1.0187876330e-01) < 1e-8);
        assert_eq!(s.dof, 12);
    }
}

/// NIST StRD Chwirut2 (lower difficulty; Chwirut, D., NIST, ultrasonic calibration):
/// y = exp(−b1 x) / (b2 + b3 x), 54 observations (x, y) as published on the NIST StRD page
/// (transcribed from two independent public copies of Chwirut2.dat that agree).
const CHWIRUT2: [(f64, f64); 54] = [
    (0.5, 92.9),
    (1.0, 57.1),
    (1.75, 31.05),
    (3.75, 11.5875),
    (5.75, 8.025),
    (0.875, 63.6),
    (2.25, 21.4),
    (3.25, 14.25),
    (5.25, 8.475),
    (0.75, 63.8),
    (1.75, 26.8),
    (2.75, 16.4625),
    (4.75, 7.125),
    (0.625, 67.3),
    (1.25, 41.0),
    (2.25, 21.15),
    (4.25, 8.175),
    (0.5, 81.5),
    (3.0, 13.12),
    (0.75, 59.9),
    (3.0, 14.62),
    (1.5, 32.9),
    (6.0, 5.44),
    (3.0, 12.56),
    (6.0, 5.44),
    (1.5, 32.0),
    (3.0, 13.95),
    (0.5, 75.8),
    (2.0, 20.0),
    (4.0, 10.42),
    (0.75, 59.5),
    (2.0, 21.67),
    (5.0, 8.55),
    (0.75, 62.0),
    (2.25, 20.2),
    (3.75, 7.76),
    (5.75, 3.75),
    (3.0, 11.81),
    (0.75, 54.7),
    (2.5, 23.7),
    (4.0, 11.55),
    (0.75, 61.3),
    (2.5, 17.7),
    (4.0, 8.74),
    (0.75, 59.2),
    (2.5, 16.3),
    (4.0, 8.62),
    (0.5, 81.0),
    (6.0, 4.87),
    (3.0, 14.62),
    (0.5, 81.7),
    (2.75, 17.17),
    (0.5, 81.3),
    (1.75, 28.9),
];

#[test]
fn nist_chwirut2_from_both_starts() {
    let model = |b: &[f64]| {
        Some(
            CHWIRUT2
                .iter()
                .map(|(x, y)| y - (-b[0] * x).exp() / (b[1] + b[2] * x))
                .collect(),
        )
    };
    // NIST starts 1 and 2.
    for start in [[0.1, 0.01, 0.02], [0.15, 0.008, 0.01]] {
        let s = fit(&model, &start, &[Transform::Identity; 3], &Settings::default()).unwrap();
        // Certified values: NIST StRD Chwirut2.
        let cert = [
            (1.6657666537e-01, 3.8303286810e-02),
            (5.1653291286e-03, 6.6621605126e-04),
            (1.2150007096e-02, 1.5304234767e-03),
        ];
        for (i, (v, sd)) in cert.iter().enumerate() {
            assert!(rel(s.values[i], *v) < 1e-6, "b{} {}", i + 1, s.values[i]);
            assert!(
                rel(s.standard_errors[i], *sd) < 1e-5,
                "sd b{} {}",
                i + 1,
                s.standard_errors[i]
            );
        }
        assert!(rel(s.chi2, 5.1304802941e+02) < 1e-8, "RSS {}", s.chi2);
        assert_eq!(s.dof, 51);
    }
}
