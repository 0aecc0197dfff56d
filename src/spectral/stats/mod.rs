//! Statistics for spectra: special functions, regularised incomplete gamma and beta
//! functions, and the χ², Student-t and F distributions with their quantiles.
//!
//! Used for confidence bands on degree variances ((2l+1)Ŝ_l/S_l ~ χ²(2l+1)), intervals on
//! power ratios (F(2l+1, 2l+1)) and significance thresholds of degree correlations (Student t).

pub mod beta;
pub mod continued_fraction;
pub mod gamma;
pub mod quantiles;
pub mod special;

pub use quantiles::{
    beta_quantile, chi2_cdf, chi2_quantile, chi2_sf, f_cdf, f_quantile, student_t_cdf,
    student_t_quantile,
};
