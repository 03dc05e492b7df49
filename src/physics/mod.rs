//! Clear-sky shortwave radiative transfer for one observation: pure functions, no I/O.
//!
//! One module per physical process (solar geometry, solar spectrum, Rayleigh scattering,
//! gas absorption, aerosol spectral model, two-stream layer solutions, adding of layers,
//! surface, diurnal means) and a driver (`forcing`) that turns an [`Observation`] and a
//! [`Settings`] into an [`ObservationResult`].
//!
//! Sibling modules refer to each other through `super::`, never `crate::`, so that this
//! directory also builds as a crate of its own.

pub mod aerosol;
pub mod column;
pub mod discrete_ordinates;
pub mod discrete_ordinates_fixed;
pub mod diurnal;
pub mod forcing;
pub mod gases;
pub mod rayleigh;
pub mod references;
pub mod solar;
pub mod spectral_flags;
pub mod spectrum;
pub mod surface;
pub mod two_stream;
mod types;
pub mod uncertainty;

pub use types::*;
