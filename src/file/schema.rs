//! Serde structures that mirror the network file exactly, with spans for messages.
//!
//! Nothing here checks meaning: units, names and numbers are checked in `network/`.
//! Every table denies unknown keys, so a misspelt key is reported with the keys accepted.

use serde::Deserialize;
use toml::Spanned;

/// A string value with its position in the file.
pub type Text = Spanned<String>;

/// The whole network file.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct NetworkFile {
    /// `[about]`: name, description, provenance.
    pub about: Option<Spanned<About>>,
    /// `[conditions]`: the reactor.
    pub conditions: Option<Spanned<Conditions>>,
    /// `[[light]]` entries.
    #[serde(default)]
    pub light: Vec<Spanned<Light>>,
    /// `[[species]]` entries.
    #[serde(default)]
    pub species: Vec<Spanned<Species>>,
    /// `[[thermal]]` steps.
    #[serde(default)]
    pub thermal: Vec<Spanned<Thermal>>,
    /// `[[photo]]` steps.
    #[serde(default)]
    pub photo: Vec<Spanned<Photo>>,
    /// `[[transient]]` nodes.
    #[serde(default)]
    pub transient: Vec<Spanned<Transient>>,
    /// `[[uncertain]]` distributions for `photoledger uncertainty` (layout in `file/uncertain.rs`).
    #[serde(default)]
    pub uncertain: Vec<Spanned<super::uncertain::Uncertain>>,
    /// `[spreads]`: the spread of a number by its `origin` (layout in `file/evidence.rs`).
    pub spreads: Option<Spanned<super::evidence::Spreads>>,
    /// `[fit]`: what `fit` and `compare` free by default.
    pub fit: Option<Spanned<FitSection>>,
    /// `[[level]]` sets of computed values, one per method or level of theory (layout in
    /// `file/levels.rs`).
    #[serde(default)]
    pub level: Vec<Spanned<super::levels::Level>>,
}

/// `[fit]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct FitSection {
    /// `--set` keys freed by default, e.g. `["photo.E to Z.quantum_yield"]`.
    #[serde(default)]
    pub free: Vec<String>,
}

/// `[about]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct About {
    /// Short name of the network.
    pub name: Option<Text>,
    /// What the network describes.
    pub description: Option<Text>,
    /// Where the numbers come from (measurements, computations, guesses).
    pub provenance: Option<Text>,
    /// True for a made-up scenario (every bundled network is one).
    pub invented: Option<Spanned<bool>>,
}

/// `[conditions]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Conditions {
    /// Temperature, e.g. "298.15 K" or "25 °C".
    pub temperature: Option<Text>,
    /// Irradiated solution volume, e.g. "3 mL".
    pub volume: Option<Text>,
    /// Optical path length, e.g. "1 cm".
    pub path_length: Option<Text>,
    /// Irradiated face area, e.g. "4 cm2" (needed for sunlight and irradiances).
    pub irradiated_area: Option<Text>,
    /// Solvent/vessel absorbance over the path: a number, or a spectrum table.
    pub background: Option<Spanned<Valued>>,
}

/// A value that may be a plain number, a quantity with unit, or a wavelength table.
#[derive(Debug, Deserialize, Clone)]
#[serde(untagged)]
pub enum Valued {
    /// A plain number (dimensionless: absorbance, quantum yield).
    Number(f64),
    /// A quantity with its unit, e.g. "5000 L/(mol cm)".
    Text(String),
    /// A table over wavelength, a single value at one wavelength, or a CSV file.
    Table(SpectrumTable),
}

/// A spectrum given inline, at one wavelength, or in a CSV file.
#[derive(Debug, Deserialize, Clone, Default)]
#[serde(deny_unknown_fields)]
pub struct SpectrumTable {
    /// Rows `[wavelength, value]`, numbers in the units named by `wavelength_unit` and `unit`.
    pub points: Option<Vec<Vec<f64>>>,
    /// Unit of the first column of `points`, e.g. "nm".
    pub wavelength_unit: Option<String>,
    /// Unit of the second column of `points`, e.g. "L/(mol cm)"; omitted for dimensionless values.
    pub unit: Option<String>,
    /// The single wavelength at which `value` holds, e.g. "365 nm".
    pub at: Option<String>,
    /// The value at `at`, e.g. "5000 L/(mol cm)".
    pub value: Option<toml::Value>,
    /// With `to`: the shortest wavelength at which a single ε `value` holds, e.g. "355 nm"
    /// (the value is zero outside the window).
    pub from: Option<String>,
    /// With `from`: the longest wavelength at which a single ε `value` holds, e.g. "375 nm".
    pub to: Option<String>,
    /// A CSV file relative to the network file, two columns with units in the header.
    pub file: Option<String>,
}

/// `[[light]]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Light {
    /// Name used in messages and ledgers.
    pub name: Option<Text>,
    /// "line", "band", "lamp" or "sun".
    pub kind: Option<Text>,
    /// Wavelength of a line, e.g. "365 nm".
    pub wavelength: Option<Text>,
    /// Centre of a band, e.g. "450 nm".
    pub centre: Option<Text>,
    /// Full width at half maximum of a band, e.g. "20 nm".
    pub fwhm: Option<Text>,
    /// Radiant power entering the sample, e.g. "50 mW".
    pub power: Option<Text>,
    /// Photon flux entering the sample, e.g. "2 µeinstein/s".
    pub photon_flux: Option<Text>,
    /// Lamp spectrum CSV (wavelength, relative spectral power), relative to the network file.
    pub file: Option<Text>,
    /// Scaling factor on the ASTM G173-03 global tilt spectrum (sun only).
    pub scale: Option<Spanned<f64>>,
    /// Shortest wavelength to keep, e.g. "280 nm".
    pub from: Option<Text>,
    /// Longest wavelength to keep, e.g. "800 nm".
    pub to: Option<Text>,
}

/// `[[species]]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Species {
    /// Unique name, used in equations.
    pub name: Option<Text>,
    /// Initial concentration, e.g. "10 mM" (default 0).
    pub initial: Option<Text>,
    /// Molecular formula for element balance, e.g. "C6H12O6" or "Fe(C2O4)3^3-".
    pub formula: Option<Text>,
    /// Molar absorption coefficient spectrum.
    pub epsilon: Option<Spanned<Valued>>,
    /// Named as a product: the single-molecule chain stops here.
    pub product: Option<Spanned<bool>>,
    /// Free text.
    pub note: Option<Text>,
}

/// A rate given one of four ways.
#[derive(Debug, Deserialize, Default, Clone)]
#[serde(deny_unknown_fields)]
pub struct Rate {
    /// Rate constant with order-consistent units, e.g. "0.04 /s".
    pub k: Option<Text>,
    /// Arrhenius pre-exponential factor, e.g. "1e13 /s".
    pub prefactor: Option<Text>,
    /// Arrhenius activation energy, e.g. "95 kJ/mol".
    pub activation: Option<Text>,
    /// Eyring free energy of activation ΔG‡, e.g. "22 kcal/mol".
    pub barrier: Option<Text>,
    /// Eyring enthalpy of activation ΔH‡.
    pub enthalpy: Option<Text>,
    /// Eyring entropy of activation ΔS‡, e.g. "-10 J/(mol K)".
    pub entropy: Option<Text>,
    /// Eyring transmission coefficient κ (default 1).
    pub transmission: Option<Spanned<f64>>,
    /// Transition-state theory from harmonic frequencies: the reactant's, in cm⁻¹, as an inline
    /// list of numbers or a frequency file (relative to the network file). With it, `barrier`
    /// is the zero-point-corrected barrier E₀, not ΔG‡.
    pub reactant_frequencies: Option<Spanned<toml::Value>>,
    /// The transition state's frequencies (the reaction coordinate as a negative number), as
    /// for `reactant_frequencies`.
    pub ts_frequencies: Option<Spanned<toml::Value>>,
    /// Tunnelling correction for a rate from frequencies: "wigner" or "none" (default).
    pub tunnelling: Option<Text>,
    /// Reaction-path degeneracy σ for a rate from frequencies (default 1, or the file's).
    pub degeneracy: Option<Spanned<f64>>,
    /// Where the rate's number comes from: one of `file::evidence::ORIGINS`.
    pub origin: Option<Text>,
}

/// `[[thermal]]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Thermal {
    /// Optional name.
    pub name: Option<Text>,
    /// Equation, e.g. "2 M -> D" or "A + B <=> C".
    pub equation: Option<Text>,
    /// Forward rate.
    pub rate: Option<Spanned<Rate>>,
    /// Reverse rate (for `<=>` only).
    pub reverse: Option<Spanned<Rate>>,
}

/// `[[photo]]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Photo {
    /// Optional name.
    pub name: Option<Text>,
    /// Short form: "A -> B"; the absorber is the single reactant.
    pub equation: Option<Text>,
    /// Quantum yield of the short form: a number or a wavelength table.
    pub quantum_yield: Option<Spanned<Valued>>,
    /// Long form: the absorbing species.
    pub absorber: Option<Text>,
    /// Long form: the transient reached on absorption.
    pub excites: Option<Text>,
    /// Long form: fraction of absorptions that reach the transient (default 1; the rest return).
    pub efficiency: Option<Spanned<toml::Value>>,
    /// Wavelength window `["300 nm", "400 nm"]` in which this step applies.
    pub range: Option<Spanned<Vec<String>>>,
    /// Where the quantum yield (or efficiency) comes from: one of `file::evidence::ORIGINS`.
    pub origin: Option<Text>,
}

/// `[[transient]]`.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Transient {
    /// Unique name (shares the namespace of species).
    pub name: Option<Text>,
    /// "excited", "intersection", "hot" or "other".
    pub kind: Option<Text>,
    /// Outgoing channels.
    #[serde(default)]
    pub channels: Vec<Spanned<Channel>>,
    /// Free text.
    pub note: Option<Text>,
    /// Hot ground state with `hot` channels: the excess vibrational energy it starts with above
    /// its zero-point level, e.g. "85 kcal/mol", or "photon" (the mean energy of the photons its absorbers take up, ε·Φ·q weighted).
    pub energy: Option<Text>,
    /// Hot ground state: time constant of the exponential cooling of the excess energy, e.g. "5 ps".
    pub cooling_time: Option<Text>,
    /// Hot ground state: its own harmonic frequencies (cm⁻¹), an inline list or a frequency file.
    pub frequencies: Option<Spanned<toml::Value>>,
    /// Hot ground state: energy grain of the state counts (default "10 cm-1").
    pub grain: Option<Text>,
    /// With `trajectories` on its channels: the runs that reached none of them (stopped before
    /// any, or failed); counted, left out of the shares.
    pub unfinished_trajectories: Option<Spanned<toml::Value>>,
    /// With `trajectories` on its channels: the Dirichlet prior added to each channel's count
    /// (default 0.5, Jeffreys).
    pub trajectory_prior: Option<Spanned<toml::Value>>,
}

/// A channel out of a transient.
#[derive(Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Channel {
    /// A transient name, or species products such as "B" or "B + C".
    pub to: Option<Text>,
    /// Fixed branching fraction (number in [0, 1]) or "rest".
    pub fraction: Option<Spanned<toml::Value>>,
    /// First-order rate (or the bimolecular rate constant with `quencher`).
    pub rate: Option<Spanned<Rate>>,
    /// Partner species of a bimolecular quenching channel (not consumed).
    pub quencher: Option<Text>,
    /// A reaction of a hot ground state before it cools: its yield follows from RRKM rates.
    pub hot: Option<Spanned<HotChannel>>,
    /// Dynamics runs that left the transient by this channel: the share is this count over the
    /// runs that reached any channel.
    pub trajectories: Option<Spanned<toml::Value>>,
    /// Where the fixed fraction comes from: one of `file::evidence::ORIGINS`.
    pub origin: Option<Text>,
}

/// `hot = { ... }` of a channel out of a hot ground state.
#[derive(Debug, Deserialize, Default, Clone)]
#[serde(deny_unknown_fields)]
pub struct HotChannel {
    /// Zero-point-corrected barrier E₀ above the hot molecule's zero-point level, e.g. "24 kcal/mol".
    pub barrier: Option<Text>,
    /// Transition-state frequencies (cm⁻¹, the reaction coordinate negative): an inline list or a
    /// frequency file.
    pub ts_frequencies: Option<Spanned<toml::Value>>,
    /// Reaction-path degeneracy σ (default 1, or the file's).
    pub degeneracy: Option<Spanned<f64>>,
}
