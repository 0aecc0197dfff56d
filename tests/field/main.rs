//! Integration tests of the library, area `field`: Potential-field quantities, coordinates, normal gravity and magnetic fields.
//! One test binary per area; each module below was a test file of its own.

mod bad_input;
mod coordinates;
mod magnetic_dipole;
mod normal_gravity;
mod quantities;
