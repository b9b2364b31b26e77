//! A Gaussian band's photon bins against independent integrals: every absorption integral
//! over the band (absorbed photons per absorber, with the inner filter of another absorber and
//! piecewise-linear ε) must be within 1e-9 of a fine-grid reference, below any integrator
//! tolerance photoledger uses; and the optically thin, linear-ε case against its closed form.

use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::model::rhs::Rhs;
use photoledger::network::{Network, Overrides, build};
use std::f64::consts::{LN_2, LN_10, PI};
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    match build(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}"),
    }
}

/// Molar photon energy h c N_A / λ, J/einstein (CODATA 2018 exact constants).
fn photon_energy(wavelength: f64) -> f64 {
    6.626_070_15e-34 * 299_792_458.0 * 6.022_140_76e23 / wavelength
}

fn linear(points: &[(f64, f64)], x: f64) -> f64 {
    if x <= points[0].0 || x >= points[points.len() - 1].0 {
        return 0.0;
    }
    let i = points.partition_point(|p| p.0 <= x);
    let (a, b) = (points[i - 1], points[i]);
    a.1 + (b.1 - a.1) * (x - a.0) / (b.0 - a.0)
}

/// Invented: a 20 mW band at 450 nm (FWHM 20 nm) on A, whose ε is tabulated every 10 nm with
/// kinks inside the band, behind an inner filter F of ε constant over the band.
const TWO_ABSORBERS: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
irradiated_area = "1 cm2"
[[light]]
name = "blue"
kind = "band"
centre = "450 nm"
fwhm = "20 nm"
power = "20 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[400, 0], [425, 300], [433, 1900], [447, 2100], [458, 400], [471, 1200], [490, 0]] }
[[species]]
name = "F"
initial = "0.4 mM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 1500], [600, 1500]] }
[[species]]
name = "B"
[[photo]]
equation = "A -> B"
quantum_yield = 0.5
[[photo]]
equation = "F -> F"
quantum_yield = 0
"#;

/// ε of A in L mol⁻¹ cm⁻¹ at wavelength nm, as the file states it.
const A_POINTS: [(f64, f64); 7] = [
    (400.0, 0.0),
    (425.0, 300.0),
    (433.0, 1900.0),
    (447.0, 2100.0),
    (458.0, 400.0),
    (471.0, 1200.0),
    (490.0, 0.0),
];

#[test]
fn absorbed_photons_under_a_band_with_an_inner_filter_match_a_fine_grid() {
    let net = network(TWO_ABSORBERS);
    let model = Model::compile(&net);
    let rhs = Rhs::new(&model);
    let y = rhs.initial_state();
    let mut dy = vec![0.0; y.len()];
    rhs.eval(&y, &mut dy);
    let slot = |name: &str| {
        let i = model.species_index(name).unwrap();
        model.absorbers.iter().position(|&a| a == i).unwrap()
    };
    // einstein L⁻¹ s⁻¹ absorbed by A and by F.
    let got = [
        dy[rhs.layout.absorbed(0, slot("A"))],
        dy[rhs.layout.absorbed(0, slot("F"))],
    ];
    // The reference: the same integral by the trapezoid rule on 400,001 points over ±10σ,
    // from the Gaussian normalised analytically (common practice).
    let (centre, fwhm, power) = (450.0, 20.0, 0.02);
    let sigma = fwhm / (8.0 * LN_2).sqrt();
    let (ca, cf, path_cm, volume_l) = (1e-3, 0.4e-3, 1.0, 1e-3);
    let n = 400_000;
    let (lo, hi) = (centre - 10.0 * sigma, centre + 10.0 * sigma);
    let h = (hi - lo) / n as f64;
    let mut want = [0.0f64; 2];
    for k in 0..=n {
        let l = lo + k as f64 * h;
        let w = if k == 0 || k == n { 0.5 * h } else { h };
        let g = (-0.5 * ((l - centre) / sigma).powi(2)).exp() / (sigma * (2.0 * PI).sqrt());
        let q = power * g / photon_energy(l * 1e-9); // einstein s⁻¹ nm⁻¹
        let (aa, af) = (linear(&A_POINTS, l) * ca * path_cm, 1500.0 * cf * path_cm);
        let total = aa + af;
        let frac = if total > 0.0 {
            (1.0 - 10f64.powf(-total)) / total
        } else {
            LN_10
        };
        want[0] += w * q * frac * aa / volume_l;
        want[1] += w * q * frac * af / volume_l;
    }
    for (name, g, w) in [("A", got[0], want[0]), ("F", got[1], want[1])] {
        let rel = (g - w).abs() / w;
        eprintln!(
            "{name}: {g:e} vs {w:e} einstein/(L s), {rel:.2e} relative, {} bins",
            model.bins.len()
        );
        assert!(rel < 1e-9, "{name}: {g:e} vs fine grid {w:e} ({rel:e} relative)");
    }
}

#[test]
fn thin_absorber_with_linear_epsilon_under_a_band_has_its_closed_form() {
    // Optically thin (A ≈ 1e-9): absorbed = ln 10 · l c ∫ q(λ) ε(λ) dλ / V. With a Gaussian
    // power spectrum of centre μ and width σ, photon density q(λ) = P G(λ) λ/(h c N_A), and
    // ε(λ) = a + b λ: ∫ G λ (a + b λ) dλ = a μ + b (μ² + σ²) (moments of the normal
    // distribution; common practice), so absorbed = ln 10 · l c P (a μ + b (μ² + σ²)) / (h c N_A V).
    let net = network(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
irradiated_area = "1 cm2"
[[light]]
kind = "band"
centre = "405 nm"
fwhm = "16 nm"
power = "5 mW"
[[species]]
name = "A"
initial = "1 fM"
epsilon = { wavelength_unit = "nm", unit = "L/(mol cm)", points = [[300, 500], [500, 2500]] }
[[species]]
name = "B"
[[photo]]
equation = "A -> B"
quantum_yield = 1
"#,
    );
    let model = Model::compile(&net);
    let rhs = Rhs::new(&model);
    let y = rhs.initial_state();
    let mut dy = vec![0.0; y.len()];
    rhs.eval(&y, &mut dy);
    let got = dy[rhs.layout.absorbed(0, 0)];
    // SI: ε in L mol⁻¹ m⁻¹ = 100 × L mol⁻¹ cm⁻¹; λ in m.
    let (mu, sigma) = (405e-9, 16e-9 / (8.0 * LN_2).sqrt());
    let b = 100.0 * (2500.0 - 500.0) / 200e-9; // L mol⁻¹ m⁻¹ per m
    let a = 100.0 * 500.0 - b * 300e-9;
    let (p, c, l, v) = (5e-3, 1e-15, 0.01, 1e-3);
    let hcn = photon_energy(1.0);
    let want = LN_10 * l * c * p * (a * mu + b * (mu * mu + sigma * sigma)) / (hcn * v);
    // g(A) = (1 − 10^−A)/A differs from ln 10 by a relative ln 10·A/2 ≈ 1e-12 here (A ≈ 1e-12).
    let rel = (got - want).abs() / want;
    eprintln!("thin: {got:e} vs {want:e}, {rel:.2e} relative");
    assert!(rel < 1e-9, "{got:e} vs closed form {want:e} ({rel:e} relative)");
}
