//! Scattered observations: parsing and validation, spatial index, gridding onto Gauss grids
//! and regularised least-squares fits. Writes no files.

pub mod degree_choice;
pub mod gaps;
pub mod gridding;
pub mod kernel;
pub mod points;
pub mod points_csv;
pub mod points_netcdf;
pub mod spatial;
pub mod validate;

pub use degree_choice::default_lmax;
pub use gaps::GapPolicy;
pub use gridding::{grid_points, GriddedField, GriddingMethod, GriddingOptions};
pub use points::{read_points, BadRowPolicy, PointReadOptions, PointReadReport, PointSet};
pub mod lsq;
pub mod lsq_design;
pub mod lsq_gcv;
pub mod lsq_normal;
pub mod lsq_solve;

pub use lsq::{fit, FitOptions, FitResult, Regularization};
