//! Fitting mechanisms to measured data, and ranking rival mechanisms.
//!
//! `lsq.rs` is the least-squares core (Levenberg–Marquardt on transformed parameters, the
//! linearised statistics); the photochemical fit builds on it.

pub mod compare;
pub mod goodness;
pub mod lsq;
pub mod mechanism;
pub mod run;
pub mod score;
pub mod slopes;

pub use mechanism::{FitOptions, FitResult, Setup, fit};
pub use score::akaike_weights;
