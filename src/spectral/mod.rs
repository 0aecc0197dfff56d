//! Degree-domain analysis: spectra, cross-spectra and their statistics, filters and
//! continuation. Works on coefficient sets only; never touches grids.

// Degree-domain filters and radial continuation (helper G).
pub mod continuation;
pub mod filter;
