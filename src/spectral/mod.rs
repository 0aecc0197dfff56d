//! Degree-domain analysis: spectra, cross-spectra and their statistics, filters and
//! continuation. Works on coefficient sets only; never touches grids.

// Spectra, comparisons and statistics (helper C).
pub mod stats;
