//! Degree-domain analysis: spectra, cross-spectra and their statistics, filters and
//! continuation. Works on coefficient sets only; never touches grids.

// Spectra, comparisons and statistics.
pub mod comparable;
pub mod compare;
pub mod degree_power;
pub mod power_law;
pub mod spectrum;
pub mod stats;
pub mod table;
pub mod units;

pub use compare::{CompareOptions, Comparison};
pub use power_law::PowerLawFit;
pub use spectrum::{degree_variance, Spectrum, SpectrumOptions};
pub use table::{SpectralColumn, SpectralTable};

// Degree-domain filters and radial continuation.
pub mod continuation;
pub mod filter;
