//! Rotation of coefficient sets: Wigner d-functions by a stable recursion (`wigner_d`), Euler
//! angles and the pole-moving rotation (`euler`), and the rotation of real coefficient sets in
//! any normalisation (`coefficients`). Works on coefficients only; never touches grids or files.

pub mod coefficients;
pub mod euler;
pub mod wigner_3j;
pub mod wigner_d;
pub mod wigner_d_half;

pub use coefficients::{rotate, rotate_many, rotate_with_progress, rotation_memory_bytes};
pub use euler::{EulerAngles, ROTATION_ATTRIBUTE};
pub use wigner_3j::wigner_3j_all_j1;
pub use wigner_d::WignerSmallD;
pub use wigner_d_half::WignerSmallDHalf;
