//! Integration tests of the library, area `sht`: Transforms: Legendre functions, quadrature, round trips, point synthesis and bad input.
//! One test binary per area; each module below was a test file of its own.

mod common;
mod errors;
mod legendre;
mod points;
mod quadrature;
mod roundtrip;
