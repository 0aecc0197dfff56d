//! Latitude–longitude grid files (CF-1.8 NetCDF).
//!
//! - [`write`](mod@write): engine grids written as NetCDF-4 with the attributes that let kugel read them
//!   back as the exact grid they came from;
//! - [`read`]: users' global grids (NetCDF-3 or NetCDF-4) read into engine order;
//! - [`layout`]: recognising which engine grid and quadrature a user's coordinates make.

pub mod layout;
pub mod read;
pub mod write;
