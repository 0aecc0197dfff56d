//! Benchmarks behind `kugel bench`: each case in its own file, printing a table or one JSON line.

pub mod fma_peak;
pub mod nodes;
pub mod observe;
pub mod points;
pub mod rotation;
pub mod transform;
