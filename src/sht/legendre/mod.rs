//! Legendre polynomials and associated Legendre functions, stable to very high degree.
//!
//! - [`polynomial`] — P_l(x).
//! - [`recursion`] — the fully normalised recursions of Holmes & Featherstone (2002) and the
//!   extended-exponent column start (Fukushima 2012) that keeps them stable near the poles.
//! - [`colatitude`] — cos θ as fl(cos θ) plus its rounding error, for every column recursion.
//! - [`column`](mod@column) — columns l = m..L at one point, with θ-derivatives.
//! - [`pole_limit`] — lim P̄_l1/sin θ at the poles (gradients there).
//! - [`normalized`] — every normalisation of docs/conventions.md §2, both phase conventions.

pub mod colatitude;
pub mod column;
pub mod normalized;
pub mod pole_limit;
pub mod polynomial;
pub mod recursion;
pub mod xnumber;

pub use colatitude::ColatitudeCos;
pub use column::{column, column_at_colatitude, column_with_derivative, geodesy_value};
pub use normalized::{
    associated, associated_all, associated_column, associated_with_derivative, LegendreValue,
};
pub use pole_limit::{order_one_over_sin_at_pole, Pole};
pub use polynomial::{legendre_polynomial, legendre_polynomials};
pub use recursion::{a_lm, b_lm, column_step, f_lm};
