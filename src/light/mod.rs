//! Light sources and their photons, as bins of (wavelength, photon flux).
//!
//! Every source, whatever its kind, is turned into a list of [`PhotonBin`]s whose fluxes sum
//! to the photon flux entering the sample (einstein/s). A line is one bin; a band, a tabulated
//! lamp and sunlight are quadratures of their spectral power, each bin carrying the photons of
//! its share of the spectrum at its own photon energy. Engines then only ever see bins, so
//! adding a source kind means writing one function that returns bins.
//!
//! The stated intensity (power or photon flux; for sunlight the scaled reference spectrum) is
//! always that of the whole source as emitted. A wavelength window (`from`/`to`) is a filter
//! that cuts: the bins keep only the part of the emitted spectrum inside it, so a long-pass
//! filter at the centre of a band keeps about half of the band's power. This holds for every
//! kind alike.

pub mod solar;
pub mod spectrum;

use crate::units::constants::molar_photon_energy;
pub use spectrum::{Outside, Spectrum};

/// Photons of one wavelength: `flux` einstein/s at `wavelength` m.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhotonBin {
    /// Vacuum wavelength, m.
    pub wavelength: f64,
    /// Photon flux entering the sample, einstein/s.
    pub flux: f64,
}

/// How bright a source is: a total radiant power or a total photon flux.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Intensity {
    /// Radiant power entering the sample, W.
    Power(f64),
    /// Photon flux entering the sample, einstein/s.
    PhotonFlux(f64),
}

/// What kind of source, with its defining numbers (SI).
#[derive(Debug, Clone, PartialEq)]
pub enum LightKind {
    /// A monochromatic line at `wavelength` m.
    Line {
        /// Wavelength, m.
        wavelength: f64,
    },
    /// A Gaussian LED band with centre and full width at half maximum, m.
    Band {
        /// Centre, m.
        centre: f64,
        /// Full width at half maximum, m.
        fwhm: f64,
    },
    /// A lamp with a tabulated relative spectral power.
    Lamp {
        /// The file it came from (for display).
        file: String,
        /// Points (wavelength m, relative spectral power per unit wavelength).
        relative_power: Vec<(f64, f64)>,
    },
    /// Sunlight: the ASTM G173-03 global tilt spectrum times `scale`, over the irradiated area.
    Sun {
        /// Factor on the reference spectrum (shade, depth, another atmosphere).
        scale: f64,
        /// Irradiated area, m².
        area: f64,
    },
}

/// A light source of the network.
#[derive(Debug, Clone, PartialEq)]
pub struct LightSource {
    /// Name used in ledgers and messages.
    pub name: String,
    /// Kind and shape.
    pub kind: LightKind,
    /// Total intensity of the whole source as emitted, before the window cuts (None for
    /// sunlight, whose intensity follows from the table).
    pub intensity: Option<Intensity>,
    /// Wavelength window (m), inclusive: a filter that cuts the emitted spectrum.
    pub window: (f64, f64),
    /// The photons inside the window, sorted by wavelength.
    pub bins: Vec<PhotonBin>,
    /// Radiant power of the whole source as emitted (before the window cuts), W.
    pub emitted_power: f64,
    /// Photon flux of the whole source as emitted (before the window cuts), einstein/s.
    pub emitted_photon_flux: f64,
    /// Wavelengths (m) where the spectra its photons meet (molar absorption coefficients,
    /// quantum yields, background) have kinks: a band's quadrature panels end there.
    pub breaks: Vec<f64>,
}

impl LightSource {
    /// Build a source and its photon bins: `intensity` is that of the whole source, `window`
    /// (m) cuts the emitted spectrum.
    pub fn new(name: String, kind: LightKind, intensity: Option<Intensity>, window: (f64, f64)) -> Self {
        Self::with_breaks(name, kind, intensity, window, Vec::new())
    }

    /// [`LightSource::new`] for photons that meet spectra with kinks at `breaks` (m): a band's
    /// quadrature is made exact on each smooth piece between them.
    pub fn with_breaks(
        name: String,
        kind: LightKind,
        intensity: Option<Intensity>,
        window: (f64, f64),
        mut breaks: Vec<f64>,
    ) -> Self {
        breaks.retain(|x| x.is_finite() && *x > 0.0);
        breaks.sort_by(f64::total_cmp);
        breaks.dedup();
        let (bins, emitted) = bins_for(&kind, intensity, window, &breaks);
        let emitted_power = emitted.iter().map(|b| b.flux * molar_photon_energy(b.wavelength)).sum();
        let emitted_photon_flux = emitted.iter().map(|b| b.flux).sum();
        LightSource {
            name,
            kind,
            intensity,
            window,
            bins,
            emitted_power,
            emitted_photon_flux,
            breaks,
        }
    }

    /// The same source for photons that meet spectra with kinks at `breaks` (m).
    pub fn resampled(&self, breaks: Vec<f64>) -> Self {
        Self::with_breaks(
            self.name.clone(),
            self.kind.clone(),
            self.intensity,
            self.window,
            breaks,
        )
    }

    /// The same source shining when it is switched off (zero power or photon flux: a unit one;
    /// the sun at scale 0: scale 1), for what depends only on the shape of its spectrum, such as
    /// the mean energy of the photons a step would take up; the source itself when it shines.
    pub fn shining(&self) -> LightSource {
        if self.bins.iter().any(|b| b.flux > 0.0) {
            return self.clone();
        }
        let intensity = match self.intensity {
            Some(Intensity::Power(_)) => Some(Intensity::Power(1.0)),
            Some(Intensity::PhotonFlux(_)) => Some(Intensity::PhotonFlux(1.0)),
            None => None,
        };
        let kind = match &self.kind {
            LightKind::Sun { area, .. } => LightKind::Sun {
                scale: 1.0,
                area: *area,
            },
            k => k.clone(),
        };
        Self::with_breaks(self.name.clone(), kind, intensity, self.window, self.breaks.clone())
    }

    /// Whether the window cuts away any of the emitted power (more than 1 part in 10⁹).
    pub fn window_cuts(&self) -> bool {
        self.power() < self.emitted_power * (1.0 - 1e-9)
    }

    /// Photon flux inside the window, einstein/s.
    pub fn photon_flux(&self) -> f64 {
        self.bins.iter().map(|b| b.flux).sum()
    }

    /// Radiant power inside the window, W.
    pub fn power(&self) -> f64 {
        self.bins
            .iter()
            .map(|b| b.flux * molar_photon_energy(b.wavelength))
            .sum()
    }

    /// Shortest and longest wavelength where the source emits (m), inside its window: a
    /// band's centre ± 2 FWHM (all but 1e-5 of its power; its quadrature reaches further, to
    /// ±7σ, for the last digits), otherwise the first and last bin.
    pub fn extent(&self) -> Option<(f64, f64)> {
        let bins = (self.bins.first()?.wavelength, self.bins.last()?.wavelength);
        match self.kind {
            LightKind::Band { centre, fwhm } => {
                let lo = (centre - 2.0 * fwhm).max(self.window.0).max(0.0);
                let hi = (centre + 2.0 * fwhm).min(self.window.1);
                Some(if lo < hi { (lo, hi) } else { bins })
            }
            _ => Some(bins),
        }
    }
}

/// Distribute a spectral power density `shape` (points of wavelength m, W per unit wavelength,
/// any scale) into photon bins by the trapezoid rule, each point taking half of each adjacent
/// interval. Returns bins and the total power of `shape`.
fn quadrature(shape: &[(f64, f64)]) -> (Vec<PhotonBin>, f64) {
    let n = shape.len();
    let mut bins = Vec::with_capacity(n);
    let mut total = 0.0;
    for i in 0..n {
        let left = if i > 0 { shape[i].0 - shape[i - 1].0 } else { 0.0 };
        let right = if i + 1 < n { shape[i + 1].0 - shape[i].0 } else { 0.0 };
        let p = shape[i].1 * 0.5 * (left + right);
        total += p;
        bins.push(PhotonBin {
            wavelength: shape[i].0,
            flux: p / molar_photon_energy(shape[i].0),
        });
    }
    (bins, total)
}

/// The factor that brings the whole (unclipped) shape, of power `shape_power` W and photon
/// flux `shape_flux` einstein/s, to the stated intensity.
fn scale_factor(shape_power: f64, shape_flux: f64, intensity: Option<Intensity>) -> f64 {
    match intensity {
        Some(Intensity::Power(p)) if shape_power > 0.0 => p / shape_power,
        Some(Intensity::PhotonFlux(q)) if shape_flux > 0.0 => q / shape_flux,
        Some(_) => 0.0,
        None => 1.0,
    }
}

/// The part of a sampled spectrum inside `window` (m), with the value interpolated at each
/// edge that falls between two samples, so the cut lies at the window's edge.
fn clip(shape: &[(f64, f64)], window: (f64, f64)) -> Vec<(f64, f64)> {
    let (lo, hi) = window;
    let mut out: Vec<(f64, f64)> = Vec::with_capacity(shape.len() + 2);
    let (first, last) = match (shape.first(), shape.last()) {
        (Some(f), Some(l)) => (f.0, l.0),
        _ => return out,
    };
    if lo > first && lo < last && !shape.iter().any(|p| p.0 == lo) {
        out.push((lo, spectrum::interpolate(shape, lo, Outside::Zero)));
    }
    out.extend(shape.iter().copied().filter(|p| p.0 >= lo && p.0 <= hi));
    if hi > first && hi < last && !shape.iter().any(|p| p.0 == hi) {
        out.push((hi, spectrum::interpolate(shape, hi, Outside::Zero)));
    }
    out
}

/// The emitted spectrum `shape` (any scale) brought to `intensity` as a whole and multiplied by
/// `factor`, then cut to `window`: (bins inside the window, bins of the whole source).
///
/// The bins are those where the shape emits, whatever the intensity: a source switched off
/// (zero power, photon flux or scale) keeps its wavelengths with zero photons in each.
fn cut(
    shape: &[(f64, f64)],
    intensity: Option<Intensity>,
    factor: f64,
    window: (f64, f64),
) -> (Vec<PhotonBin>, Vec<PhotonBin>) {
    let (mut whole, p) = quadrature(shape);
    let q: f64 = whole.iter().map(|b| b.flux).sum();
    let factor = scale_factor(p, q, intensity) * factor;
    let (mut inside, _) = quadrature(&clip(shape, window));
    whole.retain(|b| b.flux > 0.0);
    inside.retain(|b| b.flux > 0.0);
    for b in whole.iter_mut().chain(inside.iter_mut()) {
        b.flux *= factor;
    }
    (inside, whole)
}

/// How far a band's quadrature reaches on either side of its centre, in standard deviations:
/// beyond ±7σ lies 2.6e-12 of a Gaussian's power (common practice: the normal tail).
pub const BAND_REACH_SIGMA: f64 = 7.0;

/// The widest quadrature panel of a band, in standard deviations.
pub const BAND_PANEL_SIGMA: f64 = 0.5;

/// Four-point Gauss–Legendre nodes on [−1, 1] and their weights (Abramowitz & Stegun,
/// Handbook of Mathematical Functions, 1964, Table 25.4).
const GAUSS4: [(f64, f64); 4] = [
    (-0.861_136_311_594_052_6, 0.347_854_845_137_453_9),
    (-0.339_981_043_584_856_3, 0.652_145_154_862_546_1),
    (0.339_981_043_584_856_3, 0.652_145_154_862_546_1),
    (0.861_136_311_594_052_6, 0.347_854_845_137_453_9),
];

/// A Gaussian band's bins: Gauss–Legendre quadrature (four nodes a panel) over ±7σ, on panels
/// at most σ/2 wide that end at the window's edges and at every break, so that each panel's
/// integrand (the band times piecewise-linear ε, yields and background, through the smooth
/// g(A)) is smooth and its integral is exact to far below any integrator tolerance.
/// Returns (bins inside the window, bins of the whole source), fluxes at the stated intensity.
fn band_bins(
    centre: f64,
    fwhm: f64,
    intensity: Option<Intensity>,
    window: (f64, f64),
    breaks: &[f64],
) -> (Vec<PhotonBin>, Vec<PhotonBin>) {
    let sigma = fwhm / (8.0 * std::f64::consts::LN_2).sqrt();
    let lo = (centre - BAND_REACH_SIGMA * sigma).max(0.0);
    let hi = centre + BAND_REACH_SIGMA * sigma;
    let mut edges: Vec<f64> = vec![lo, hi];
    edges.extend(
        breaks
            .iter()
            .chain([window.0, window.1].iter())
            .copied()
            .filter(|&x| x > lo && x < hi),
    );
    edges.sort_by(f64::total_cmp);
    edges.dedup();
    let power = |x: f64| {
        let z = (x - centre) / sigma;
        (-0.5 * z * z).exp()
    };
    // (wavelength, power share, inside the window) at every node.
    let mut nodes: Vec<(f64, f64, bool)> = Vec::new();
    for w in edges.windows(2) {
        let (a, b) = (w[0], w[1]);
        if b <= a {
            continue;
        }
        let inside = a >= window.0 && b <= window.1;
        let n = ((b - a) / (BAND_PANEL_SIGMA * sigma)).ceil().max(1.0) as usize;
        let h = (b - a) / n as f64;
        for k in 0..n {
            let mid = a + (k as f64 + 0.5) * h;
            for &(x, wt) in &GAUSS4 {
                let l = mid + 0.5 * h * x;
                nodes.push((l, 0.5 * h * wt * power(l), inside));
            }
        }
    }
    let to_bin = |&(l, p, _): &(f64, f64, bool)| PhotonBin {
        wavelength: l,
        flux: p / molar_photon_energy(l),
    };
    let mut whole: Vec<PhotonBin> = nodes.iter().map(to_bin).collect();
    let p: f64 = nodes.iter().map(|n| n.1).sum();
    let q: f64 = whole.iter().map(|b| b.flux).sum();
    let factor = scale_factor(p, q, intensity);
    let mut inside: Vec<PhotonBin> = nodes.iter().filter(|n| n.2).map(to_bin).collect();
    for b in whole.iter_mut().chain(inside.iter_mut()) {
        b.flux *= factor;
    }
    (inside, whole)
}

fn bins_for(
    kind: &LightKind,
    intensity: Option<Intensity>,
    window: (f64, f64),
    breaks: &[f64],
) -> (Vec<PhotonBin>, Vec<PhotonBin>) {
    match kind {
        LightKind::Line { wavelength } => {
            let flux = match intensity {
                Some(Intensity::Power(p)) => p / molar_photon_energy(*wavelength),
                Some(Intensity::PhotonFlux(q)) => q,
                None => 0.0,
            };
            let whole = vec![PhotonBin {
                wavelength: *wavelength,
                flux,
            }];
            let inside = whole
                .iter()
                .copied()
                .filter(|b| b.wavelength >= window.0 && b.wavelength <= window.1)
                .collect();
            (inside, whole)
        }
        LightKind::Band { centre, fwhm } => band_bins(*centre, *fwhm, intensity, window, breaks),
        LightKind::Lamp { relative_power, .. } => cut(relative_power, intensity, 1.0, window),
        LightKind::Sun { scale, area } => {
            // W m⁻² nm⁻¹ -> W per m of wavelength over the area: × 1e9 nm/m × area.
            let shape: Vec<(f64, f64)> = solar::global_tilt()
                .iter()
                .map(|&(wl_nm, e)| (wl_nm * 1e-9, e * 1e9 * area))
                .collect();
            cut(&shape, None, *scale, window)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_power_to_photon_flux() {
        // 1 W at 365 nm = 3.0512e-6 einstein/s (CODATA 2018 exact h, c, N_A).
        let s = LightSource::new(
            "uv".into(),
            LightKind::Line { wavelength: 365e-9 },
            Some(Intensity::Power(1.0)),
            (0.0, f64::INFINITY),
        );
        assert!((s.photon_flux() - 3.0512e-6).abs() / 3.0512e-6 < 1e-4);
        assert!((s.power() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn band_keeps_its_power_and_centre() {
        let s = LightSource::new(
            "blue".into(),
            LightKind::Band {
                centre: 450e-9,
                fwhm: 20e-9,
            },
            Some(Intensity::Power(0.1)),
            (0.0, f64::INFINITY),
        );
        assert!((s.power() - 0.1).abs() < 1e-12, "{}", s.power());
        // Mean photon wavelength sits slightly red of the centre (red photons are cheaper).
        let q = s.photon_flux();
        let mean: f64 = s.bins.iter().map(|b| b.wavelength * b.flux).sum::<f64>() / q;
        assert!(mean > 450e-9 && mean < 451e-9, "{mean}");
        // FWHM check: within centre ± FWHM/2 lies erf(√(ln 2)) = 0.760968... of a Gaussian's
        // power (common practice), here with the window cutting there.
        let inner = LightSource::new(
            "blue".into(),
            LightKind::Band {
                centre: 450e-9,
                fwhm: 20e-9,
            },
            Some(Intensity::Power(0.1)),
            (440e-9, 460e-9),
        );
        let want = 0.1 * statrs::function::erf::erf(std::f64::consts::LN_2.sqrt());
        // (The band is normalised over ±7σ, and the quadrature errs by ~1e-11.)
        assert!(
            (inner.power() - want).abs() < 1e-10 * want,
            "{} vs {want}",
            inner.power()
        );
    }

    #[test]
    fn photon_flux_intensity_is_kept() {
        let s = LightSource::new(
            "b".into(),
            LightKind::Band {
                centre: 530e-9,
                fwhm: 30e-9,
            },
            Some(Intensity::PhotonFlux(2e-6)),
            (0.0, f64::INFINITY),
        );
        assert!((s.photon_flux() - 2e-6).abs() < 1e-18);
    }

    fn band(power: Intensity, window: (f64, f64)) -> LightSource {
        LightSource::new(
            "uva".into(),
            LightKind::Band {
                centre: 390e-9,
                fwhm: 14e-9,
            },
            Some(power),
            window,
        )
    }

    #[test]
    fn a_window_cuts_a_band_and_keeps_the_stated_power_as_emitted() {
        // 3 W band at 390 nm, FWHM 14 nm, long-pass from 390 nm: a Gaussian is symmetric about
        // its centre, so half its power lies above it (common practice): 1.5 W in the window.
        let s = band(Intensity::Power(3.0), (390e-9, f64::INFINITY));
        assert!((s.emitted_power - 3.0).abs() < 1e-12, "{}", s.emitted_power);
        assert!((s.power() - 1.5).abs() < 1e-3, "{}", s.power());
        assert!(s.window_cuts());
        // The emission range shown: from the window's edge to centre + 2 FWHM.
        let (lo, hi) = s.extent().unwrap();
        assert!((lo - 390e-9).abs() < 1e-15 && (hi - 418e-9).abs() < 1e-15, "{lo} {hi}");
        // Quadrature nodes lie inside their panels: the first within half a panel (σ/4) of
        // the window's edge, the last within σ/4 of the band's reach, centre + 7σ.
        let (lo, hi) = (s.bins[0].wavelength, s.bins[s.bins.len() - 1].wavelength);
        let sigma = 14e-9 / (8.0 * std::f64::consts::LN_2).sqrt();
        assert!(lo > 390e-9 && lo < 390e-9 + sigma / 4.0, "{lo}");
        assert!(hi < 390e-9 + 7.0 * sigma && hi > 390e-9 + 6.75 * sigma, "{hi}");
        // An edge between samples is cut at the edge: above 395 nm lies
        // ½ erfc((395 − 390)/(σ √2)) of a Gaussian's power, σ = FWHM / √(8 ln 2) (common practice).
        let s = band(Intensity::Power(3.0), (395e-9, f64::INFINITY));
        let sigma = 14.0 / (8.0 * std::f64::consts::LN_2).sqrt();
        let want = 3.0 * 0.5 * statrs::function::erf::erfc(5.0 / (sigma * std::f64::consts::SQRT_2));
        // The window's edge ends a quadrature panel, so the cut is exact to round-off.
        assert!((s.power() - want).abs() / want < 1e-10, "{} vs {want}", s.power());
        // A photon flux is also the whole source's.
        let s = band(Intensity::PhotonFlux(2e-6), (0.0, 390e-9));
        assert!((s.emitted_photon_flux - 2e-6).abs() < 1e-18);
        assert!(
            s.photon_flux() > 0.9e-6 && s.photon_flux() < 1.1e-6,
            "{}",
            s.photon_flux()
        );
        // No window: nothing is cut.
        let s = band(Intensity::Power(3.0), (0.0, f64::INFINITY));
        assert!(!s.window_cuts() && (s.power() - 3.0).abs() < 1e-12);
    }

    #[test]
    fn a_window_cuts_a_lamp_table_the_same_way() {
        // A triangular lamp spectrum 380-400-420 nm: symmetric, so a window from 400 nm keeps half.
        let lamp = LightKind::Lamp {
            file: "tri.csv".into(),
            relative_power: vec![(380e-9, 0.0), (400e-9, 1.0), (420e-9, 0.0)],
        };
        let s = LightSource::new("lamp".into(), lamp.clone(), Some(Intensity::Power(2.0)), (400e-9, 1.0));
        assert!((s.emitted_power - 2.0).abs() < 1e-12);
        assert!((s.power() - 1.0).abs() < 1e-12, "{}", s.power());
        // 410 nm falls between samples: above it lies (½ · 10 · 0.5)/(½ · 40 · 1) = 1/8 of the power.
        let s = LightSource::new("lamp".into(), lamp, Some(Intensity::Power(2.0)), (410e-9, 1.0));
        assert!((s.power() - 0.25).abs() < 1e-12, "{}", s.power());
    }

    #[test]
    fn a_line_outside_its_window_carries_no_photons() {
        let s = LightSource::new(
            "uv".into(),
            LightKind::Line { wavelength: 365e-9 },
            Some(Intensity::Power(1.0)),
            (400e-9, f64::INFINITY),
        );
        assert!(s.bins.is_empty());
        assert!((s.emitted_power - 1.0).abs() < 1e-12);
    }

    #[test]
    fn a_source_switched_off_keeps_its_wavelengths_with_no_photons() {
        // Zero power is a dark run, not an empty source: the bins stay where the source emits
        // (so a window and the single-wavelength ε check still see them), each with zero flux.
        let off = band(Intensity::Power(0.0), (0.0, f64::INFINITY));
        let on = band(Intensity::Power(3.0), (0.0, f64::INFINITY));
        assert_eq!(off.bins.len(), on.bins.len());
        assert_eq!(off.extent(), on.extent());
        assert!(off.bins.iter().all(|b| b.flux == 0.0));
        assert_eq!((off.power(), off.photon_flux(), off.emitted_power), (0.0, 0.0, 0.0));
        let line = LightSource::new(
            "uv".into(),
            LightKind::Line { wavelength: 365e-9 },
            Some(Intensity::PhotonFlux(0.0)),
            (0.0, f64::INFINITY),
        );
        assert_eq!(line.extent(), Some((365e-9, 365e-9)));
        let sun = LightSource::new(
            "sun".into(),
            LightKind::Sun { scale: 0.0, area: 1.0 },
            None,
            (280e-9, 4000e-9),
        );
        assert_eq!(sun.extent(), Some((280e-9, 4000e-9)));
        assert_eq!(sun.power(), 0.0);
    }

    #[test]
    fn a_window_cuts_sunlight_to_its_uv_part() {
        // ASTM G173-03 global tilt, trapezoid over the table: 1000.37 W/m² in all, 46.10 W/m² over
        // 280-400 nm (ASTM G173-03, Standard Tables for Reference Solar Spectral Irradiances, 2003).
        let sun = LightKind::Sun { scale: 1.0, area: 1.0 };
        let s = LightSource::new("sun".into(), sun, None, (280e-9, 400e-9));
        assert!((s.power() - 46.10).abs() < 0.01, "{}", s.power());
        assert!((s.emitted_power - 1000.37).abs() < 0.01, "{}", s.emitted_power);
    }
}
