//! kugel: a spherical-field modelling engine.
//!
//! Data flow: observations or grids → spherical-harmonic coefficients (`sht`, `observe`) →
//! spectra, filters and physical quantities (`spectral`, `field`) → grids, points and files
//! (`sht`, `io`, `report`), orchestrated from a config by `pipeline`.

pub mod coeffs;
pub mod complex_coeffs;
pub mod error;
pub mod field;
pub mod io;
pub mod memory;
pub mod observe;
pub mod pipeline;
pub mod progress;
pub mod regional;
pub mod report;
pub mod retaining_alloc;
pub mod rotate;
pub mod sht;
pub mod spectral;

pub use coeffs::{Coefficients, Normalization};
pub use error::{Error, Result};
