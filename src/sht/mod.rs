//! Spherical-harmonic transforms: Legendre functions, quadrature, grid types, transform plans
//! and their kernels. Knows nothing about files, physics or configuration.

pub mod equiangular;
pub mod gauss_legendre;
pub mod grid;
pub mod legendre;
pub mod plan;
pub mod points;

pub use grid::{GaussGrid, Grid, GridKind};
pub use plan::TransformPlan;
pub use points::{evaluate_points, PointValue};
