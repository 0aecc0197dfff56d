//! Scattered observations: parsing and validation, spatial index, gridding onto Gauss grids
//! and regularised least-squares fits. Writes no files.
