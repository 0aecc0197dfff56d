//! kugel: a spherical-field modelling engine.
//!
//! Data flow: observations or grids → spherical-harmonic coefficients (`sht`, `observe`) →
//! spectra, filters and physical quantities (`spectral`, `field`) → grids, points and files
//! (`sht`, `io`, `report`), orchestrated from a config by `pipeline`.

pub mod bench;
pub mod coeffs;
pub mod commands;
pub mod error;
pub mod field;
pub mod io;
pub mod memory;
pub mod observe;
pub mod pipeline;
pub mod report;
pub mod sht;
pub mod spectral;

pub use coeffs::{Coefficients, Normalization};
pub use error::{Error, Result};

/// Process exit codes (documented in README.md):
/// 0 success, 1 other failure, 2 bad command line (clap), 3 invalid input or config,
/// 4 input/output failure, 5 not enough memory.
pub fn exit_code_for(err: &anyhow::Error) -> i32 {
    match err.downcast_ref::<Error>() {
        Some(Error::InvalidInput(_))
        | Some(Error::NonFiniteCoefficient { .. })
        | Some(Error::ShapeMismatch(_))
        | Some(Error::Format { .. })
        | Some(Error::Line { .. }) => 3,
        Some(Error::Io { .. }) => 4,
        Some(Error::InsufficientMemory { .. }) => 5,
        None => 1,
    }
}
