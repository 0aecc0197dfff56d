//! Physical quantities from potential coefficients (gravity and magnetic functionals) and
//! reference ellipsoids with their normal fields. No I/O.
