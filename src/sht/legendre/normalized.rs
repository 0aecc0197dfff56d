//! Associated Legendre functions in every normalisation of docs/conventions.md §2, with the
//! Condon–Shortley phase as a separate switch.
//!
//! All values derive from the fully normalised P̄_lm (`geodesy`) through
//! N_lm / N̄_lm = exp(`Normalization::ln_factor_relative_to_geodesy`). The `geodesy`,
//! `schmidt` and `orthonormal` values stay representable to any degree; `unnormalized`
//! values P_lm grow like (l+m)!/(l−m)! and overflow doubles (to ±inf) or underflow (to 0)
//! by nature once l reaches about 150 for large m: that is the function, not a defect.

use crate::coeffs::{packed_index, packed_len, Normalization};

use super::column::{column_at_colatitude, column_with_derivative, derivative_from_neighbours};

/// Multiplies a `geodesy` value by N/N̄ and the phase, in logarithms where the factor is large.
#[inline]
fn rescale(v: f64, l: usize, m: usize, norm: Normalization, condon_shortley: bool) -> f64 {
    let sign = if condon_shortley && m % 2 == 1 {
        -1.0
    } else {
        1.0
    };
    if norm == Normalization::Geodesy || v == 0.0 {
        return sign * v;
    }
    let ln_f = norm.ln_factor_relative_to_geodesy(l, m);
    if ln_f.abs() < 600.0 {
        sign * v * ln_f.exp()
    } else {
        sign * v.signum() * (v.abs().ln() + ln_f).exp()
    }
}

/// Value and θ-derivative of one associated function at colatitude θ (radians).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LegendreValue {
    pub value: f64,
    /// d/dθ of the value.
    pub d_theta: f64,
}

/// P_lm(cos θ) in normalisation `norm`, with (−1)^m when `condon_shortley` is set.
pub fn associated(
    l: usize,
    m: usize,
    theta_rad: f64,
    norm: Normalization,
    condon_shortley: bool,
) -> f64 {
    assert!(m <= l, "order m = {m} exceeds degree l = {l}");
    let mut col = vec![0.0; l - m + 1];
    column_at_colatitude(m, l, theta_rad, &mut col);
    rescale(col[l - m], l, m, norm, condon_shortley)
}

/// Value and θ-derivative of one associated function.
pub fn associated_with_derivative(
    l: usize,
    m: usize,
    theta_rad: f64,
    norm: Normalization,
    condon_shortley: bool,
) -> LegendreValue {
    assert!(m <= l, "order m = {m} exceeds degree l = {l}");
    let (p, d) = column_with_derivative(m, l, theta_rad);
    LegendreValue {
        value: rescale(p[l - m], l, m, norm, condon_shortley),
        d_theta: rescale(d[l - m], l, m, norm, condon_shortley),
    }
}

/// The column l = m..=lmax of values and θ-derivatives (`out[l − m]`).
pub fn associated_column(
    m: usize,
    lmax: usize,
    theta_rad: f64,
    norm: Normalization,
    condon_shortley: bool,
) -> Vec<LegendreValue> {
    let (p, d) = column_with_derivative(m, lmax, theta_rad);
    (m..=lmax)
        .map(|l| LegendreValue {
            value: rescale(p[l - m], l, m, norm, condon_shortley),
            d_theta: rescale(d[l - m], l, m, norm, condon_shortley),
        })
        .collect()
}

/// Every (l, m), 0 ≤ m ≤ l ≤ lmax, in packed order (`coeffs::packed_index`): values and
/// θ-derivatives. Costs one column per order.
pub fn associated_all(
    lmax: usize,
    theta_rad: f64,
    norm: Normalization,
    condon_shortley: bool,
) -> (Vec<f64>, Vec<f64>) {
    let mut values = vec![0.0; packed_len(lmax)];
    let mut derivs = vec![0.0; packed_len(lmax)];
    let col = |m: usize| {
        let mut c = vec![0.0; lmax + 1 - m];
        column_at_colatitude(m, lmax, theta_rad, &mut c);
        c
    };
    let mut below: Vec<f64> = Vec::new();
    let mut here = col(0);
    for m in 0..=lmax {
        let above = if m < lmax { col(m + 1) } else { Vec::new() };
        let d = derivative_from_neighbours(m, lmax, &below, &above);
        for l in m..=lmax {
            let i = packed_index(l, m);
            values[i] = rescale(here[l - m], l, m, norm, condon_shortley);
            derivs[i] = rescale(d[l - m], l, m, norm, condon_shortley);
        }
        below = std::mem::replace(&mut here, above);
    }
    (values, derivs)
}
