//! Degree-domain filters: weights W_l applied to every coefficient of degree l as
//! C_lm·W_l, S_lm·W_l (docs/conventions.md §7).
//!
//! Each filter kind lives in its own file and exposes `weights(lmax, …) -> Vec<f64>`;
//! [`Filter`] gathers them behind one enum, [`FilterChain`] multiplies several, and
//! `spec.rs` turns the command-line/config syntax (`gauss:300`, `lowpass:40-50`, …, chained
//! with `+`) into filters, naming the offending spec in every error.

pub mod butterworth;
pub mod chain;
pub mod gauss;
pub mod spec;
pub mod taper;
pub mod wiener;

pub use butterworth::Butterworth;
pub use chain::{Filter, FilterChain};
pub use gauss::GaussFilter;
pub use taper::{Bandpass, Highpass, Lowpass};
pub use wiener::{NoiseLevel, WienerFilter};
