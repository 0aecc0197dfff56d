//! Spherical-harmonic transforms: Legendre functions, quadrature, grid types, transform plans
//! and their kernels. Knows nothing about files, physics or configuration.
//!
//! - [`legendre`] — P_l, associated functions in every normalisation (both phases), columns,
//!   all (l, m), θ-derivatives; stable to any degree (extended exponents near the poles).
//! - [`gauss_legendre`] — nodes and weights in O(n) (Bogaert's expansion polished on the
//!   Stieltjes series), with the O(n²) Newton rule kept as its reference.
//! - [`budget`] — memory needs of a transform job from its shapes alone, checked before
//!   anything is built.
//! - [`grid`] — grid descriptions; [`plan`] — the reusable [`TransformPlan`], which runs blocked
//!   SIMD kernels (private to this module) chosen once per plan from runtime CPU detection
//!   ([`KernelPath`] names them and lets tests and benchmarks force one); [`reference`](mod@reference) — the
//!   scalar reference transforms the kernels are tested against; [`points`] — synthesis at
//!   arbitrary points.
//!
//! Measured accuracy and speed (round-trip error per degree, times, memory) are kept in one
//! place: the performance table of the project README, produced with `kugel bench`.

// All unsafe code of the transforms sits in one module, `kernel::unsafe_parts`, which allows it
// explicitly; everything else here is checked to be free of it.
#![deny(unsafe_code)]

pub mod budget;
pub mod equiangular;
mod filled;
pub mod gauss_legendre;
pub mod grid;
mod kept_buffers;
mod kernel;
pub mod legendre;
pub mod plan;
pub mod points;
pub mod reference;

pub use grid::{GaussGrid, Grid, GridKind};
pub use kernel::KernelPath;
pub use plan::TransformPlan;
pub use points::{
    evaluate_point_values, evaluate_point_values_with_path, evaluate_points,
    evaluate_points_with_path, PointValue,
};
