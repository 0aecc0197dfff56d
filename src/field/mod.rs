//! Physical quantities from potential coefficients (gravity and magnetic functionals) and
//! reference ellipsoids with their normal fields. No I/O.
//!
//! - [`quantity`]: the quantities kugel derives, their units and CF names.
//! - [`model_kind`]: what a coefficient model describes (gravity potential, magnetic, generic).
//! - [`ellipsoid`]: level ellipsoids (GRS80, WGS84, custom), their even zonals, Somigliana's
//!   normal gravity and geodetic ↔ geocentric coordinates.
//! - [`normal_field`]: removal of an ellipsoid's normal potential from a model.
//! - [`degree_factors`]: the per-degree factors k_l that turn potential coefficients into each
//!   quantity (docs/conventions.md §6).
//! - [`magnetic`]: field components, declination and inclination from B_r, B_θ, B_λ.
//! - [`synthesis`]: the whole chain on a grid or at points.
//! - [`cautions`]: the safety texts printed with declination and geoid output.

pub mod cautions;
pub mod degree_factors;
pub mod ellipsoid;
pub mod magnetic;
pub mod model_kind;
pub mod normal_field;
pub mod quantity;
pub mod synthesis;

pub use ellipsoid::Ellipsoid;
pub use model_kind::ModelKind;
pub use normal_field::NormalField;
pub use quantity::Quantity;
pub use synthesis::{
    evaluate_at_points, synthesize_on_grid, GeocentricPoint, SynthesisRequest, TargetSurface,
};
