//! The file's `[about]` and `[conditions]`: name and provenance, and the reactor (temperature,
//! volume, path length, irradiated area, background absorbance).

use super::Builder;
use crate::error::Origin;
use crate::file::schema::{self, Text};
use crate::light::{Outside, Spectrum};
use crate::network::diagnostics::span;
use crate::network::{About, Conditions};
use crate::units::Quantity;

impl Builder<'_> {
    pub(super) fn about(&mut self, doc: &schema::NetworkFile) -> About {
        let stem = self
            .loaded
            .path
            .file_stem()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_default();
        let Some(a) = &doc.about else {
            return About {
                name: stem,
                ..Default::default()
            };
        };
        let a = a.get_ref();
        let s = |t: &Option<Text>| t.as_ref().map(|t| t.get_ref().trim().to_string()).unwrap_or_default();
        let name = s(&a.name);
        About {
            name: if name.is_empty() { stem } else { name },
            description: s(&a.description),
            provenance: s(&a.provenance),
            invented: a.invented.as_ref().is_some_and(|b| *b.get_ref()),
        }
    }

    pub(super) fn conditions(&mut self, doc: &schema::NetworkFile) -> Option<Conditions> {
        let empty = schema::Conditions::default();
        let (c, at) = match &doc.conditions {
            Some(c) => (c.get_ref(), span(c)),
            None => {
                self.error(
                    "conditions",
                    &Origin::Span(0..0),
                    "the [conditions] table is missing",
                    Some(
                        "add [conditions] with temperature, volume and path_length, e.g. temperature = \"298.15 K\""
                            .into(),
                    ),
                );
                (&empty, Origin::Span(0..0))
            }
        };
        let f = self.field(c.temperature.as_ref());
        if let Some(f) = &f {
            self.at.temperature = f.origin.clone();
        }
        let temperature = self.required("conditions.temperature", f, &at, Quantity::Temperature);
        let f = self.field(c.volume.as_ref());
        let volume = self.required("conditions.volume", f, &at, Quantity::Volume);
        let f = self.field(c.path_length.as_ref());
        let path_length = self.required("conditions.path_length", f, &at, Quantity::Length);
        let irradiated_area = match self.field(c.irradiated_area.as_ref()) {
            Some(f) => {
                self.at.irradiated_area = f.origin.clone();
                Some(self.positive("conditions.irradiated_area", &f, Quantity::Area)?)
            }
            None => None,
        };
        let background = if let Some(b) = &c.background {
            self.spectrum("conditions.background", b, None, Outside::Nearest)?
        } else {
            Spectrum::Constant { value: 0.0, at: None }
        };
        Some(Conditions {
            temperature: temperature?,
            volume: volume?,
            path_length: path_length?,
            irradiated_area,
            background,
        })
    }
}
