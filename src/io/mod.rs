//! File formats: NetCDF grids, coefficient models and spectra (CF-1.8), text tables, CSV, and
//! atomic writes. Reads and writes; computes nothing.

pub mod atomic;
pub mod csv_sidecar;
pub mod csv_table;
pub mod degree_table;
pub mod filter_spectra;
pub mod grid_file;
pub mod grid_layout;
pub mod grid_read;
pub mod model_file;
pub mod model_netcdf;
pub mod model_text;
pub mod netcdf_common;
pub mod provenance;
