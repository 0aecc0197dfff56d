//! File formats: NetCDF grids, coefficient models and spectra (CF-1.8), text tables, CSV, and
//! atomic writes. Reads and writes; computes nothing.
