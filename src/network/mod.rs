//! The validated network: species, thermal steps, photochemical steps, transients, light
//! and conditions, in SI units (concentrations in mol/L), with a petgraph graph over them.
//!
//! A [`Network`] only exists once every check has passed: names resolve, units are right,
//! fractions are fractions and every transient has a way out to a species. Build one with
//! [`load`] (a file on disk) or [`build`] (text already read); both return every problem
//! found at once, each with its file, line, field and what is accepted.

mod build;
mod checks;
mod derived;
mod diagnostics;
pub mod equation;
pub mod evidence;
pub mod formula;
pub mod levels;
pub mod overrides;
pub mod params;
pub(crate) mod ranges;
mod suggest;
pub mod uncertain;

pub use build::build;
pub use overrides::Overrides;
pub use suggest::closest as suggest_name;

use crate::error::{Diagnostic, Result};
use crate::light::{LightSource, Spectrum};
use crate::rates::RateLaw;
use petgraph::graph::{DiGraph, NodeIndex};
use std::path::{Path, PathBuf};

/// Read, parse and validate the network file at `path`, with command-line overrides.
pub fn load(path: &Path, overrides: &Overrides) -> Result<Network> {
    let text = crate::file::read_text(path)?;
    let (loaded, problems) = crate::file::parse_all(path, text);
    build_reporting_all(loaded, problems, &|l| build(l, overrides)).map(|(_, net)| net)
}

/// The file as read and the network `build` makes of it, from [`crate::file::parse_all`]'s
/// result: when the file had structural problems, they and the problems validation finds in
/// the rest of the file (when it reads), together in one [`crate::Error::Invalid`].
pub fn build_reporting_all(
    loaded: Option<crate::file::Loaded>,
    problems: Vec<crate::error::Diagnostic>,
    build: &dyn Fn(&crate::file::Loaded) -> Result<Network>,
) -> Result<(crate::file::Loaded, Network)> {
    match loaded {
        Some(l) if problems.is_empty() => {
            let net = build(&l)?;
            Ok((l, net))
        }
        loaded => {
            let mut all = problems;
            if let Some(l) = loaded
                && let Err(crate::Error::Invalid(more)) = build(&l)
            {
                // A table whose line was taken out is reported by validation at its header
                // ("is missing", "needs power or photon_flux"): the structural problem already
                // says what is wrong there.
                let headers: Vec<usize> = all
                    .iter()
                    .filter_map(|d| {
                        d.line_col
                            .map(|(line, _)| crate::file::structure::table_header(&l.text, line).unwrap_or(line))
                    })
                    .collect();
                all.extend(
                    more.into_iter()
                        .filter(|d| !d.line_col.is_some_and(|(line, _)| headers.contains(&line))),
                );
            }
            all.sort_by_key(|d| d.line_col.map_or(usize::MAX, |(line, _)| line));
            Err(crate::Error::Invalid(all))
        }
    }
}

/// A 64-bit hash (FNV-1a) of every number and name of `net` that a computation uses: equal for
/// the same network however it was written, different when any value differs (for telling
/// whether two runs, such as shards of one sampling run, used the same network).
pub fn fingerprint(net: &Network) -> u64 {
    let text = format!(
        "{:?}{:?}{:?}{:?}{:?}{:?}{:?}",
        net.about, net.conditions, net.lights, net.species, net.thermal, net.photo, net.transients
    );
    text.bytes()
        .fold(0xcbf29ce484222325, |h, b| (h ^ b as u64).wrapping_mul(0x100000001b3))
}

/// Name, description and provenance of a network.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct About {
    /// Short name.
    pub name: String,
    /// What it describes.
    pub description: String,
    /// Where the numbers come from.
    pub provenance: String,
    /// True for an invented scenario.
    pub invented: bool,
}

/// The reactor.
#[derive(Debug, Clone, PartialEq)]
pub struct Conditions {
    /// Temperature, K.
    pub temperature: f64,
    /// Irradiated solution volume, m³.
    pub volume: f64,
    /// Optical path length, m.
    pub path_length: f64,
    /// Irradiated face area, m², if given.
    pub irradiated_area: Option<f64>,
    /// Solvent/vessel absorbance over the whole path (dimensionless, decadic).
    pub background: Spectrum,
}

impl Conditions {
    /// Volume in litres (for concentrations in mol/L).
    pub fn volume_litres(&self) -> f64 {
        self.volume * 1000.0
    }
}

/// A species whose concentration is followed.
#[derive(Debug, Clone, PartialEq)]
pub struct Species {
    /// Unique name.
    pub name: String,
    /// Initial concentration, mol/L.
    pub initial: f64,
    /// Molecular formula as written, if given.
    pub formula: Option<String>,
    /// Element counts (and charge under the key "charge") from the formula.
    pub composition: Option<formula::Composition>,
    /// Molar absorption coefficient, L mol⁻¹ m⁻¹ (internal unit; 100 × L mol⁻¹ cm⁻¹).
    pub epsilon: Option<Spectrum>,
    /// Named as a product by the user.
    pub product: bool,
}

/// A species with its stoichiometric coefficient.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Term {
    /// Index into [`Network::species`].
    pub species: usize,
    /// Stoichiometric coefficient (positive).
    pub coefficient: f64,
}

/// An elementary thermal step, one direction (a reversible equation gives two).
#[derive(Debug, Clone, PartialEq)]
pub struct ThermalStep {
    /// Display name ("back-isomerisation", or the equation).
    pub name: String,
    /// Reactants with coefficients; the rate is r = k Π cᵢ^νᵢ (IUPAC convention).
    pub reactants: Vec<Term>,
    /// Products with coefficients.
    pub products: Vec<Term>,
    /// How the rate constant is given.
    pub rate: RateLaw,
    /// Molecularity Σ νᵢ of the reactants (order of the rate law).
    pub order: u32,
    /// Rate constant at the network temperature, (L/mol)^(order−1) s⁻¹.
    pub k: f64,
    /// For the reverse half of a `<=>` equation: the index of the forward step.
    pub reverse_of: Option<usize>,
}

/// What an absorbed photon leads to.
#[derive(Debug, Clone, PartialEq)]
pub enum PhotoOutcome {
    /// Short form: the absorber becomes these products with the quantum yield.
    Products(Vec<Term>),
    /// Long form: the absorber is promoted to this transient.
    Transient(usize),
}

/// A photochemical step.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotoStep {
    /// Display name.
    pub name: String,
    /// Index of the absorbing species.
    pub absorber: usize,
    /// Where the photon takes it.
    pub outcome: PhotoOutcome,
    /// Quantum yield (short form) or efficiency of reaching the transient (long form),
    /// as a function of wavelength; the remainder returns the absorber to itself.
    pub quantum_yield: Spectrum,
    /// Wavelength window (m) in which the step applies, inclusive.
    pub window: Option<(f64, f64)>,
}

impl PhotoStep {
    /// The quantum yield at `wavelength` (m), zero outside the step's window.
    pub fn yield_at(&self, wavelength: f64) -> f64 {
        match self.window {
            Some((lo, hi)) if wavelength < lo || wavelength > hi => 0.0,
            _ => self.quantum_yield.at(wavelength),
        }
    }
}

/// Where a transient channel leads.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    /// Ground-state species (with coefficients).
    Species(Vec<Term>),
    /// Another transient.
    Transient(usize),
}

/// How a channel's share is set.
#[derive(Debug, Clone, PartialEq)]
pub enum Branching {
    /// A fixed fraction of the transient's population.
    Fraction(f64),
    /// Whatever the fixed fractions leave.
    Rest,
    /// A first-order rate, s⁻¹ (from k, Arrhenius or Eyring at the network temperature).
    Rate {
        /// How the rate was given.
        law: RateLaw,
        /// Value at the network temperature, s⁻¹.
        k: f64,
    },
    /// Bimolecular quenching by `partner` (not consumed), pseudo-first-order k₂ [partner].
    Quenching {
        /// Index of the partner species.
        partner: usize,
        /// How the rate constant was given.
        law: RateLaw,
        /// Value at the network temperature, L mol⁻¹ s⁻¹.
        k2: f64,
    },
    /// A reaction of a hot ground state before it cools: the yield over all hot channels of the
    /// transient competing with exponential cooling (RRKM k(E), `rates::hot::rrkm_yields`),
    /// computed when the network is built. It counts as a fixed fraction; the transient's
    /// `rest` channel takes what cools.
    Hot {
        /// The computed yield (dimensionless).
        fraction: f64,
        /// Zero-point-corrected barrier E₀, J/mol.
        barrier: f64,
        /// Excess energy the hot molecule starts with, J/mol.
        energy: f64,
        /// Cooling time constant, s.
        cooling: f64,
        /// k(E) at the starting energy, s⁻¹.
        rate_at_start: f64,
    },
}

impl Branching {
    /// The share of a fixed-share channel (a fraction or a computed hot yield); `None` for
    /// "rest" and for rate-based channels.
    pub fn fixed_share(&self) -> Option<f64> {
        match *self {
            Branching::Fraction(x) | Branching::Hot { fraction: x, .. } => Some(x),
            _ => None,
        }
    }
}

/// A channel out of a transient.
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    /// Where it leads.
    pub target: Target,
    /// Its share.
    pub branching: Branching,
    /// True when it sends the molecule back to a species that was excited into this transient
    /// (directly or through other transients): a return path that closes a photon cycle.
    pub returns: bool,
}

/// The kind of short-lived node, for display.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TransientKind {
    /// An electronically excited state.
    Excited,
    /// A conical intersection or other funnel.
    Intersection,
    /// A vibrationally hot ground state.
    Hot,
    /// Anything else short-lived.
    Other,
}

impl TransientKind {
    /// The word used in files and output.
    pub fn word(self) -> &'static str {
        match self {
            TransientKind::Excited => "excited",
            TransientKind::Intersection => "intersection",
            TransientKind::Hot => "hot",
            TransientKind::Other => "other",
        }
    }
}

/// A short-lived node that is not integrated as a concentration.
#[derive(Debug, Clone, PartialEq)]
pub struct Transient {
    /// Unique name.
    pub name: String,
    /// Kind, for display.
    pub kind: TransientKind,
    /// Outgoing channels.
    pub channels: Vec<Channel>,
    /// For a hot ground state with `energy = "photon"`: how its starting energy was found (for
    /// display), e.g. the absorbers whose absorbed photons it is the mean energy of.
    pub energy_from: Option<String>,
    /// For a hot ground state with hot channels: what its yields are computed from, kept so
    /// that a parameter change can compute them again ([`params`]).
    pub hot: Option<HotModel>,
}

/// The RRKM-with-cooling model of a hot ground state (`rates::hot::rrkm_yields`).
#[derive(Debug, Clone, PartialEq)]
pub struct HotModel {
    /// The hot molecule's own modes.
    pub reactant: crate::rates::partition::Modes,
    /// Energy grain of the state counts, J/mol.
    pub grain: f64,
    /// Cooling time constant, s.
    pub cooling: f64,
    /// True when the starting energy is that of the absorbed photons (`energy = "photon"`):
    /// it follows the lights and the photo steps' yields.
    pub photon_energy: bool,
    /// The hot channels.
    pub channels: Vec<HotChannel>,
}

/// One hot channel of a [`HotModel`].
#[derive(Debug, Clone, PartialEq)]
pub struct HotChannel {
    /// Index of the channel in its transient.
    pub channel: usize,
    /// Transition-state modes.
    pub ts: crate::rates::partition::Modes,
    /// Zero-point-corrected barrier E₀, J/mol.
    pub barrier: f64,
    /// Reaction-path degeneracy σ.
    pub degeneracy: f64,
}

/// A node of the network graph.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Node {
    /// Index into [`Network::species`].
    Species(usize),
    /// Index into [`Network::transients`].
    Transient(usize),
    /// Index into [`Network::thermal`].
    Thermal(usize),
    /// Index into [`Network::photo`].
    Photo(usize),
}

/// An edge of the network graph.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Edge {
    /// A species enters a step with this coefficient.
    Reactant(f64),
    /// A step (or a channel) yields a species with this coefficient.
    Product(f64),
    /// A species absorbs the photon of a photochemical step.
    Absorbs,
    /// A photochemical step excites a transient.
    Excites,
    /// Channel `n` of a transient.
    Channel(usize),
    /// A species quenches a transient through channel `n`.
    Quenches(usize),
}

/// A validated reaction network.
#[derive(Debug, Clone)]
pub struct Network {
    /// The file it came from, if any.
    pub source: Option<PathBuf>,
    /// Name, description, provenance.
    pub about: About,
    /// The reactor.
    pub conditions: Conditions,
    /// Light sources.
    pub lights: Vec<LightSource>,
    /// Species followed as concentrations.
    pub species: Vec<Species>,
    /// Thermal elementary steps (reversible equations appear as two).
    pub thermal: Vec<ThermalStep>,
    /// Photochemical steps.
    pub photo: Vec<PhotoStep>,
    /// Transients.
    pub transients: Vec<Transient>,
    /// Where numbers come from: stated origins, their spreads, trajectory counts.
    pub evidence: evidence::Evidence,
    /// Labelled sets of computed values, one per method or level of theory, in file order.
    pub levels: Vec<levels::Level>,
    /// Bipartite graph: species and transients on one side, steps on the other.
    pub graph: DiGraph<Node, Edge>,
    /// Warnings found while validating.
    pub warnings: Vec<Diagnostic>,
    /// The family the file wrote its molar energies in (most of them; kJ/mol when none): every
    /// report and the fitted network written back show energies in it.
    pub energy_unit: crate::units::display::EnergyUnit,
}

impl Network {
    /// Index of the species called `name`.
    pub fn species_index(&self, name: &str) -> Option<usize> {
        self.species.iter().position(|s| s.name == name)
    }

    /// Index of the transient called `name`.
    pub fn transient_index(&self, name: &str) -> Option<usize> {
        self.transients.iter().position(|t| t.name == name)
    }

    /// The graph node of `node`.
    pub fn node_index(&self, node: Node) -> Option<NodeIndex> {
        self.graph.node_indices().find(|&i| self.graph[i] == node)
    }

    /// Display label of a graph node.
    pub fn label(&self, node: Node) -> String {
        match node {
            Node::Species(i) => self.species[i].name.clone(),
            Node::Transient(i) => self.transients[i].name.clone(),
            Node::Thermal(i) => self.thermal[i].name.clone(),
            Node::Photo(i) => self.photo[i].name.clone(),
        }
    }

    /// The equation of a list of terms, e.g. "2 A + B".
    /// Where a channel leads, for labels: the species side ("2 B + C") or the transient's name.
    pub fn target_name(&self, t: &Target) -> String {
        match t {
            Target::Species(terms) => self.side(terms),
            Target::Transient(j) => self.transients[*j].name.clone(),
        }
    }

    /// "TRANSIENT channel N -> TARGET" for channel `ci` (0-based) of transient `t`.
    pub fn channel_name(&self, t: usize, ci: usize) -> String {
        let tr = &self.transients[t];
        format!(
            "{} channel {} -> {}",
            tr.name,
            ci + 1,
            self.target_name(&tr.channels[ci].target)
        )
    }

    /// Whether species `sp` takes up light here: it has an ε above zero at a wavelength where a
    /// source sends photons (a photoreactive absorber or an inner filter alike). What `check`
    /// counts as absorbing, in its text and its JSON.
    pub fn takes_light(&self, sp: &Species) -> bool {
        sp.epsilon.as_ref().is_some_and(|e| {
            self.lights
                .iter()
                .any(|l| l.bins.iter().any(|b| b.flux > 0.0 && e.at(b.wavelength) > 0.0))
        })
    }

    pub fn side(&self, terms: &[Term]) -> String {
        terms
            .iter()
            .map(|t| {
                if t.coefficient == 1.0 {
                    self.species[t.species].name.clone()
                } else {
                    format!("{} {}", t.coefficient, self.species[t.species].name)
                }
            })
            .collect::<Vec<_>>()
            .join(" + ")
    }

    /// Indices of the species that absorb in some photochemical step, sorted.
    pub fn species_absorbing(&self) -> Vec<usize> {
        let mut v: Vec<usize> = self.photo.iter().map(|p| p.absorber).collect();
        v.sort_unstable();
        v.dedup();
        v
    }
}
