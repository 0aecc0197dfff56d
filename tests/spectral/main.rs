//! Integration tests of the library, area `spectral`: Spectra, comparisons, statistics, plots, degree-domain filters and continuation.
//! One test binary per area; each module below was a test file of its own.

mod compare;
mod csv_outputs;
mod filter_chain_order;
mod filter_continuation;
mod filter_gauss_weights;
mod filter_wiener;
mod lowes;
mod plots;
mod quantiles;
mod regional;
mod regional_areas;
mod spectrum;
mod support;
