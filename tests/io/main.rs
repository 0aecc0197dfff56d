//! Integration tests of the library, area `io`: File formats: NetCDF grids and models, text tables, equiangular layouts.
//! One test binary per area; each module below was a test file of its own.

mod complex_netcdf;
mod equiangular;
mod files_as_written;
mod grid_read;
mod mutated_files;
mod netcdf_files;
mod text_parser_props;
