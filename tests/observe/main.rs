//! Integration tests of the library, area `observe`: Scattered observations: point input, spatial index, gridding and least-squares fits.
//! One test binary per area; each module below was a test file of its own.

mod fit;
mod fitting;
mod functionals;
mod gridding;
mod lanes;
mod points;
mod solvers;
mod spatial;
