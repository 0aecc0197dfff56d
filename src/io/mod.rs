//! File formats: NetCDF grids, coefficient models and spectra (CF-1.8), text tables, CSV, and
//! atomic writes. Reads and writes; computes nothing.
//!
//! - [`grid`]: latitude–longitude grids (writing, reading users' grids, recognising layouts);
//! - [`model`]: coefficient models (NetCDF-4 and plain text);
//! - [`csv_table`], [`degree_table`]: CSV tables and per-degree tables;
//! - [`netcdf_common`], [`provenance`], [`atomic`]: shared NetCDF helpers, provenance
//!   attributes and atomic writes.

pub mod atomic;
pub mod csv_sidecar;
pub mod csv_table;
pub mod degree_table;
pub mod filter_spectra;
pub mod grid;
pub mod model;
pub mod netcdf_common;
pub mod provenance;
pub mod region;
pub mod tapers;
