//! From the parsed file to a validated [`Network`]: units, names, numbers.
//!
//! Every problem is collected (not just the first), each located in the file, into a
//! [`Sink`]. One file per concern: `conditions.rs` (about, reactor), `spectra.rs` (spectrum-valued
//! fields), `light.rs` (light sources), `species.rs` (species, transient names, name
//! resolution), `rates.rs` (rate laws and their `--set` overrides, shares), `steps.rs` (thermal and
//! photochemical steps), `transients.rs` (channels), `unused.rs` (why a `--set` key matched
//! nothing). Checks that need the whole network are in `../checks.rs`; rates and yields derived
//! from frequencies in `../derived.rs`; both take the same sink.

mod command_line;
mod conditions;
mod evidence;
mod levels;
mod light;
mod rates;
mod species;
mod spectra;
mod steps;
mod transients;
mod unused;

use super::derived::{self, Derived};
use super::diagnostics::{Field, Places, Sink, span};
use super::overrides::Overrides;
use super::*;
use crate::error::{Error, Origin};
use crate::file::Loaded;
use crate::file::schema::Text;
use crate::light::Spectrum;
use crate::units::Quantity;
use std::collections::BTreeMap;

/// The wavelengths (m) where the spectra a source's photons meet have kinks: the points of
/// every ε table, quantum-yield table and the background table, sorted, without repeats.
pub(crate) fn spectral_breaks(species: &[Species], photo: &[PhotoStep], background: &Spectrum) -> Vec<f64> {
    let mut b: Vec<f64> = species
        .iter()
        .filter_map(|s| s.epsilon.as_ref())
        .chain(photo.iter().map(|p| &p.quantum_yield))
        .chain(std::iter::once(background))
        .flat_map(|s| s.knots())
        .filter(|x| x.is_finite() && *x > 0.0)
        .collect();
    b.sort_by(f64::total_cmp);
    b.dedup();
    b
}

/// Validate a loaded file with overrides into a [`Network`], or every problem found.
pub fn build(loaded: &Loaded, overrides: &Overrides) -> Result<Network> {
    let mut b = Builder {
        loaded,
        overrides,
        sink: Sink::new(&loaded.path, &loaded.text),
        at: Places::default(),
        evidence: Default::default(),
    };
    let net = b.network();
    let has_error = b.sink.has_error();
    let mut diags = b.sink.into_diagnostics();
    match net {
        Some(mut n) if !has_error => {
            n.warnings = diags;
            Ok(n)
        }
        _ => {
            diags.sort_by_key(|d| (std::cmp::Reverse(d.severity), d.line_col));
            Err(Error::Invalid(diags))
        }
    }
}

/// The state of one build: the file, the overrides, the diagnostics and where items were.
struct Builder<'a> {
    loaded: &'a Loaded,
    overrides: &'a Overrides,
    sink: Sink<'a>,
    /// Where each built species, thermal step and photo step was written.
    at: Places,
    /// Origins, spreads and trajectory counts found so far.
    evidence: super::evidence::Evidence,
}

/// The names known while resolving.
struct Names<'a> {
    species: &'a [Species],
    transients: &'a [(String, TransientKind)],
    /// Each species' index by name (first one of a name), so resolving stays linear in the
    /// number of steps.
    index: std::collections::HashMap<&'a str, usize>,
}

impl<'a> Builder<'a> {
    fn error(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        self.sink.error(field, origin, msg, help);
    }

    fn warn(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: Option<String>) {
        self.sink.warn(field, origin, msg, help);
    }

    fn quantity(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        self.sink.quantity(field, f, q)
    }

    fn positive(&mut self, field: &str, f: &Field, q: Quantity) -> Option<f64> {
        self.sink.positive(field, f, q)
    }

    fn required(&mut self, field: &str, f: Option<Field>, at: &Origin, q: Quantity) -> Option<f64> {
        self.sink.required(field, f, at, q)
    }

    /// The rates and yields derived from frequencies, reporting into this build's sink.
    fn derived(&mut self) -> Derived<'_, 'a> {
        let loaded: &'a Loaded = self.loaded;
        Derived {
            sink: &mut self.sink,
            frequency_files: &loaded.frequency_files,
        }
    }

    /// A string field from the file.
    fn field(&self, value: Option<&Text>) -> Option<Field> {
        value.map(|t| Field {
            value: t.get_ref().clone(),
            origin: span(t),
            key: None,
        })
    }

    fn network(&mut self) -> Option<Network> {
        let doc = &self.loaded.doc;
        let about = self.about(doc);
        let conditions = self.conditions(doc);
        let lights = self.lights(doc, conditions.as_ref());
        let mut names: BTreeMap<String, Origin> = BTreeMap::new();
        let species = self.species(doc, &mut names);
        let transient_heads = self.transient_heads(doc, &mut names);
        // With broken conditions, go on checking the rest at a stand-in temperature so every
        // problem is listed; the network is not returned (an error was recorded).
        let conditions = conditions.unwrap_or(Conditions {
            temperature: 298.15,
            volume: 1e-3,
            path_length: 0.01,
            irradiated_area: None,
            background: Spectrum::Constant { value: 0.0, at: None },
        });
        let t = conditions.temperature;
        let mut index = std::collections::HashMap::with_capacity(species.len());
        for (i, s) in species.iter().enumerate() {
            index.entry(s.name.as_str()).or_insert(i);
        }
        let resolver = Names {
            species: &species,
            transients: &transient_heads,
            index,
        };
        let thermal = self.thermal(doc, &resolver, t);
        let photo = self.photo(doc, &resolver);
        // The photons meet ε, quantum yields and the background: their kinks end a band's
        // quadrature panels, so every absorption integral over the band is exact.
        let breaks = spectral_breaks(&species, &photo, &conditions.background);
        let lights: Vec<_> = lights.iter().map(|l| l.resampled(breaks.clone())).collect();
        let photon = derived::absorbed_photon_energy(doc, &transient_heads, &lights, &species, &photo);
        let transients = self.transients(doc, &resolver, &transient_heads, t, &photon);
        let mut net = Network {
            source: Some(self.loaded.path.clone()),
            about,
            conditions,
            lights,
            species,
            thermal,
            photo,
            transients,
            evidence: Default::default(),
            levels: Vec::new(),
            graph: Default::default(),
            warnings: Vec::new(),
            energy_unit: Default::default(),
        };
        self.evidence(doc, &mut net);
        net.energy_unit = self.sink.energy_unit();
        // `--set` values as typed parameters, before the checks of the whole network.
        self.put_command_line(&mut net);
        super::checks::check_network(&mut self.sink, &self.at, &mut net);
        net.graph = super::checks::graph(&net);
        // A set's keys are read against the built network, so only once it is sound.
        if !self.sink.has_error() {
            net.levels = self.levels(doc, &net);
        }
        Some(net)
    }
}
