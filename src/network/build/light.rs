//! `[[light]]` entries: names, kinds and the keys each kind takes, the intensity (power or
//! photon flux; zero is a dark run), the shape (line, band, lamp table, sunlight) and the
//! `from`/`to` window that cuts it.

use super::Builder;
use crate::error::Origin;
use crate::file::schema::{self, SpectrumTable, Valued};
use crate::light::{Intensity, LightKind, LightSource, Outside, Spectrum};
use crate::network::Conditions;
use crate::network::diagnostics::{Field, span};
use crate::units::{self, Quantity};
use std::collections::BTreeMap;
use toml::Spanned;

/// One `[[light]]` entry being read: its index field, name, kind word and position.
struct Entry<'e> {
    e: &'e schema::Light,
    field: String,
    name: String,
    kind: String,
    at: Origin,
}

impl Builder<'_> {
    pub(super) fn lights(&mut self, doc: &schema::NetworkFile, cond: Option<&Conditions>) -> Vec<LightSource> {
        let mut seen: BTreeMap<String, Origin> = BTreeMap::new();
        doc.light
            .iter()
            .enumerate()
            .filter_map(|(i, l)| self.light(i, l, cond, &mut seen))
            .collect()
    }

    /// One light source, or None when it has a problem (reported).
    fn light(
        &mut self,
        i: usize,
        l: &Spanned<schema::Light>,
        cond: Option<&Conditions>,
        seen: &mut BTreeMap<String, Origin>,
    ) -> Option<LightSource> {
        let entry = self.light_entry(i, l, seen)?;
        let (field, at) = (&entry.field, &entry.at);
        let e = entry.e;
        let window = {
            let lo = self
                .field(e.from.as_ref())
                .and_then(|f| self.positive(&format!("{field}.from"), &f, Quantity::Wavelength));
            let hi = self
                .field(e.to.as_ref())
                .and_then(|f| self.positive(&format!("{field}.to"), &f, Quantity::Wavelength));
            (lo.unwrap_or(0.0), hi.unwrap_or(f64::INFINITY))
        };
        if window.0 >= window.1 {
            self.error(&format!("{field}.from"), at, "`from` must be shorter than `to`", None);
            return None;
        }
        let sun = entry.kind == "sun";
        let intensity = if sun { None } else { self.intensity(&entry) };
        let lk = self.light_kind(&entry, cond);
        let (Some(lk), true) = (lk, sun || intensity.is_some()) else {
            return None;
        };
        let window = if sun && window == (0.0, f64::INFINITY) {
            (280e-9, 4000e-9)
        } else {
            window
        };
        let src = LightSource::new(entry.name.clone(), lk, intensity, window);
        if src.bins.is_empty() {
            self.no_photons(&entry, &src, intensity, window);
            return None;
        }
        self.at.lights.push(at.clone());
        Some(src)
    }

    /// The name (unique among lights), the kind and the keys that kind takes.
    fn light_entry<'e>(
        &mut self,
        i: usize,
        l: &'e Spanned<schema::Light>,
        seen: &mut BTreeMap<String, Origin>,
    ) -> Option<Entry<'e>> {
        let at = span(l);
        let e = l.get_ref();
        let name = e
            .name
            .as_ref()
            .map_or(format!("light{}", i + 1), |n| n.get_ref().trim().to_string());
        // Named as the file names it (`light "UV LED".power`); by position when unnamed.
        let field = match &e.name {
            Some(n) if !n.get_ref().trim().is_empty() => format!("light \"{}\"", n.get_ref().trim()),
            _ => format!("light[{i}]"),
        };
        if self.too_long(&format!("{field}.name"), &name, &at) {
            return None;
        }
        if name.is_empty() {
            self.error(&format!("{field}.name"), &at, "is empty", None);
            return None;
        }
        if let Some(prev) = seen.get(&name) {
            let l0 = self.sink.line(prev);
            self.error(
                &format!("{field}.name"),
                &at,
                format!("\"{name}\" is used by another light (line {l0})"),
                Some("give each light its own name".into()),
            );
            return None;
        }
        seen.insert(name.clone(), at.clone());
        let Some(kind) = &e.kind else {
            self.error(
                &format!("{field}.kind"),
                &at,
                "is missing",
                Some("one of \"line\", \"band\", \"lamp\", \"sun\"".into()),
            );
            return None;
        };
        let kind_word = kind.get_ref().trim().to_string();
        let allowed: &[&str] = match kind_word.as_str() {
            "line" => &["wavelength", "power", "photon_flux"],
            "band" => &["centre", "fwhm", "power", "photon_flux"],
            "lamp" => &["file", "power", "photon_flux"],
            "sun" => &["scale"],
            other => {
                self.error(
                    &format!("{field}.kind"),
                    &span(kind),
                    format!("\"{other}\" is not a kind of light"),
                    Some("one of \"line\", \"band\", \"lamp\", \"sun\"".into()),
                );
                return None;
            }
        };
        let present = [
            ("wavelength", e.wavelength.is_some()),
            ("centre", e.centre.is_some()),
            ("fwhm", e.fwhm.is_some()),
            ("power", e.power.is_some()),
            ("photon_flux", e.photon_flux.is_some()),
            ("file", e.file.is_some()),
            ("scale", e.scale.is_some()),
        ];
        let mut bad = false;
        for (k, p) in present {
            if p && !allowed.contains(&k) {
                self.error(
                    &format!("{field}.{k}"),
                    &at,
                    format!("does not apply to a light of kind \"{kind_word}\""),
                    Some(format!("a {kind_word} takes: {}", allowed.join(", "))),
                );
                bad = true;
            }
        }
        (!bad).then_some(Entry {
            e,
            field,
            name,
            kind: kind_word,
            at,
        })
    }

    /// The power or photon flux of a line, band or lamp.
    fn intensity(&mut self, entry: &Entry) -> Option<Intensity> {
        let (e, field, at) = (entry.e, &entry.field, &entry.at);
        let p = self.field(e.power.as_ref());
        let q = self.field(e.photon_flux.as_ref());
        // A value given with --set replaces the file's intensity, however the file gives it.
        let set = |f: &Option<Field>| f.as_ref().is_some_and(|f| f.origin == Origin::CommandLine);
        let (p, q) = match (set(&p), set(&q)) {
            (true, false) => (p, None),
            (false, true) => (None, q),
            _ => (p, q),
        };
        match (p, q) {
            // Zero is a light switched off (a dark run), not a mistake.
            (Some(p), None) => self
                .sink
                .non_negative(&format!("{field}.power"), &p, Quantity::Power)
                .map(Intensity::Power),
            (None, Some(q)) => self
                .sink
                .non_negative(&format!("{field}.photon_flux"), &q, Quantity::PhotonFlux)
                .map(Intensity::PhotonFlux),
            (Some(_), Some(_)) => {
                self.error(
                    field,
                    at,
                    "has both power and photon_flux",
                    Some("give one of them".into()),
                );
                None
            }
            (None, None) => {
                self.error(
                    field,
                    at,
                    "needs power or photon_flux",
                    Some("e.g. power = \"50 mW\" or photon_flux = \"2 µeinstein/s\"".into()),
                );
                None
            }
        }
    }

    /// The shape of the source: a line, a band, a lamp table or sunlight.
    fn light_kind(&mut self, entry: &Entry, cond: Option<&Conditions>) -> Option<LightKind> {
        let (e, field, at) = (entry.e, &entry.field, &entry.at);
        match entry.kind.as_str() {
            "line" => {
                let f = self.field(e.wavelength.as_ref());
                self.required(&format!("{field}.wavelength"), f, at, Quantity::Wavelength)
                    .map(|w| LightKind::Line { wavelength: w })
            }
            "band" => {
                let c = self.field(e.centre.as_ref());
                let c = self.required(&format!("{field}.centre"), c, at, Quantity::Wavelength);
                let w = self.field(e.fwhm.as_ref());
                let w = self.required(&format!("{field}.fwhm"), w, at, Quantity::Wavelength);
                match (c, w) {
                    (Some(centre), Some(fwhm)) if fwhm < centre => Some(LightKind::Band { centre, fwhm }),
                    (Some(_), Some(_)) => {
                        self.error(
                            &format!("{field}.fwhm"),
                            at,
                            "is wider than the centre wavelength",
                            None,
                        );
                        None
                    }
                    _ => None,
                }
            }
            "lamp" => self.lamp(entry),
            _ => self.sun(entry, cond),
        }
    }

    /// A lamp: its relative spectral power from a CSV table.
    fn lamp(&mut self, entry: &Entry) -> Option<LightKind> {
        let (e, field, at) = (entry.e, &entry.field, &entry.at);
        let Some(f) = &e.file else {
            self.error(
                &format!("{field}.file"),
                at,
                "is missing",
                Some("a CSV with header \"wavelength (nm), relative power\"".into()),
            );
            return None;
        };
        let v = Spanned::new(
            f.span(),
            Valued::Table(SpectrumTable {
                file: Some(f.get_ref().clone()),
                ..Default::default()
            }),
        );
        match self.spectrum(field, &v, None, Outside::Zero) {
            Some(Spectrum::Table { points, .. }) if points.iter().any(|p| p.1 > 0.0) => Some(LightKind::Lamp {
                file: f.get_ref().clone(),
                relative_power: points,
            }),
            Some(_) => {
                self.error(
                    &format!("{field}.file"),
                    &span(f),
                    "the lamp spectrum is zero everywhere",
                    None,
                );
                None
            }
            None => None,
        }
    }

    /// Sunlight: the reference spectrum times `scale` over the irradiated area.
    fn sun(&mut self, entry: &Entry, cond: Option<&Conditions>) -> Option<LightKind> {
        let (e, field, at) = (entry.e, &entry.field, &entry.at);
        let scale = e.scale.as_ref().map(|s| (*s.get_ref(), span(s)));
        let (scale, sat) = scale.unwrap_or((1.0, at.clone()));
        if !scale.is_finite() || scale < 0.0 {
            self.error(
                &format!("{field}.scale"),
                &sat,
                format!("{scale} must be a finite factor of zero or more"),
                Some("e.g. scale = 0.5 for half the reference sunlight, 0 for none".into()),
            );
            return None;
        }
        match cond.and_then(|c| c.irradiated_area) {
            Some(area) => Some(LightKind::Sun { scale, area }),
            None => {
                if cond.is_some() {
                    self.error(
                        "conditions.irradiated_area",
                        at,
                        format!(
                            "is needed for the sunlight \"{}\" (irradiance × area = power)",
                            entry.name
                        ),
                        Some("e.g. irradiated_area = \"100 cm2\"".into()),
                    );
                }
                None
            }
        }
    }

    /// The window is a filter on the emitted spectrum: one that keeps nothing is an error for
    /// every kind (a line outside it as much as a band).
    fn no_photons(&mut self, entry: &Entry, src: &LightSource, intensity: Option<Intensity>, window: (f64, f64)) {
        let (lo, hi) = LightSource::new(entry.name.clone(), src.kind.clone(), intensity, (0.0, f64::INFINITY))
            .extent()
            .unwrap_or((0.0, 0.0));
        let nm = |m: f64| format!("{} nm", units::sig(m * 1e9, 5));
        let (key, edge) = if hi < window.0 {
            ("from", nm(window.0))
        } else {
            ("to", nm(window.1))
        };
        let (emits, keep) = if lo == hi {
            (format!("at {}", nm(lo)), format!("includes {}", nm(lo)))
        } else {
            (
                format!("over {}–{}", nm(lo), nm(hi)),
                format!("overlaps {}–{}", nm(lo), nm(hi)),
            )
        };
        self.error(
            &format!("{}.{key}", entry.field),
            &entry.at,
            format!("\"{edge}\" leaves no photons: the source emits {emits}, all outside its from/to window"),
            Some(format!(
                "from/to is a filter that cuts the emitted spectrum: give a window that {keep}, or drop from/to"
            )),
        );
    }
}
