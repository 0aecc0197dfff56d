//! Legendre polynomials and associated Legendre functions, stable to very high degree.
//!
//! - [`polynomial`]: P_l(x).
//! - [`recursion`]: the fully normalised recursions of Holmes & Featherstone (2002) and the
//!   extended-exponent column start (Fukushima 2012) that keeps them stable near the poles.
//! - [`column`]: columns l = m..L at one point, with θ-derivatives.
//! - [`normalized`]: every normalisation of CONVENTIONS.md §2, both phase conventions.

pub mod column;
pub mod normalized;
pub mod polynomial;
pub mod recursion;
pub mod xnumber;

pub use column::{column, column_with_derivative, geodesy_value};
pub use normalized::{
    associated, associated_all, associated_column, associated_with_derivative, LegendreValue,
};
pub use polynomial::{legendre_polynomial, legendre_polynomials};
pub use recursion::{a_lm, b_lm, f_lm};
