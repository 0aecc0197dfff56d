//! Scattered observations: parsing and validation, spatial index, gridding onto Gauss grids
//! and regularised least-squares fits. Writes no files.
//!
//! - [`points`]: the point set, its CSV and NetCDF readers and the validation rules;
//! - [`spatial`]: the index of points on the sphere;
//! - [`gridding`] with its [`averaging_kernel`]: points onto an engine grid;
//! - [`gaps`]: what to do with grid cells no observation reaches;
//! - [`fit`](mod@fit): the regularised least-squares fit of coefficients to points;
//! - [`degree_choice`]: the default maximum degree for a point set.

pub mod averaging_kernel;
pub mod degree_choice;
pub mod fit;
pub mod gaps;
pub mod gridding;
pub mod kd_tree;
pub mod points;
pub mod spatial;

pub use degree_choice::default_lmax;
pub use fit::{fit, FitOptions, FitResult, Regularization};
pub use gaps::GapPolicy;
pub use gridding::{grid_points, GriddedField, GriddingMethod, GriddingOptions};
pub use points::{read_points, BadRowPolicy, PointReadOptions, PointReadReport, PointSet};
