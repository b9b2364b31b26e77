//! photoledger: photochemical reaction networks under light, with a ledger of every photon.
//!
//! The pipeline: a TOML file ([`file`]) becomes a validated [`network::Network`], which is
//! compiled into a [`model::Model`] shared by the engines; [`report`] writes what they find.
//! Support modules: [`units`] (quantities with units, CODATA 2018 constants), [`light`]
//! (sources and spectra), [`rates`] (Arrhenius, Eyring), [`error`] (located diagnostics).
//! See DEVELOPERS.md for the map.

pub mod barrier;
pub mod bench;
pub mod chain;
pub mod error;
pub mod file;
pub mod fit;
pub mod kinetics;
pub mod levels;
pub mod light;
pub mod model;
pub mod network;
pub mod plan;
pub mod rates;
pub mod report;
pub mod study;
pub mod uncertainty;
pub mod units;

pub use error::{Diagnostic, Error, Result};
pub use network::{Network, Overrides};
