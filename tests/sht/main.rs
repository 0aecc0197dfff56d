//! Integration tests of the library, area `sht`: Transforms: Legendre functions, quadrature, round trips, every kernel path against the scalar reference, point synthesis and bad input.
//! One test binary per area; each module below was a test file of its own.

mod common;
mod errors;
mod gauss_legendre_fast;
mod kernel_accuracy;
mod legendre;
mod many_fields;
mod points;
mod quadrature;
mod rotation;
mod roundtrip;
