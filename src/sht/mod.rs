//! Spherical-harmonic transforms: Legendre functions, quadrature, grid types, transform plans
//! and their kernels. Knows nothing about files, physics or configuration.

pub mod equiangular;
pub mod gauss_legendre;
pub mod grid;
pub mod kernel;
pub mod legendre;
pub mod plan;
pub mod points;
pub mod reference;

pub use grid::{GaussGrid, Grid, GridKind};
pub use kernel::KernelPath;
pub use plan::TransformPlan;
pub use points::{evaluate_points, PointValue};
