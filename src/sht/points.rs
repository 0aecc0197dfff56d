//! Synthesis at arbitrary points: values and gradients of a coefficient set at (θ, λ).

use crate::coeffs::Coefficients;
use crate::error::Result;

/// A synthesised value with its horizontal gradient components.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PointValue {
    pub value: f64,
    /// ∂f/∂θ (per radian of colatitude).
    pub d_theta: f64,
    /// (1/sin θ) ∂f/∂λ (per radian of arc eastward).
    pub d_lambda_over_sin: f64,
}

/// Evaluates `coeffs` (any normalisation) at points given as (colatitude, longitude) in radians.
pub fn evaluate_points(coeffs: &Coefficients, points: &[(f64, f64)]) -> Result<Vec<PointValue>> {
    let g = coeffs.to_geodesy()?;
    g.check_finite()?;
    let lmax = g.lmax();
    let mut col = vec![0.0; lmax + 2];
    let mut col_d = vec![0.0; lmax + 2];
    let mut out = Vec::with_capacity(points.len());
    for &(theta, lambda) in points {
        let (t, u) = (theta.cos(), theta.sin());
        let mut pv = PointValue::default();
        for m in 0..=lmax {
            super::legendre::column(m, lmax, t, u, &mut col);
            derivative_column(m, lmax, t, u, &col, &mut col_d);
            let (sm, cm) = (m as f64 * lambda).sin_cos();
            for l in m..=lmax {
                let (c, s) = (g.c(l, m), g.s(l, m));
                let p = col[l - m];
                pv.value += p * (c * cm + s * sm);
                pv.d_theta += col_d[l - m] * (c * cm + s * sm);
                if u > 0.0 {
                    pv.d_lambda_over_sin += p / u * m as f64 * (s * cm - c * sm);
                }
            }
        }
        out.push(pv);
    }
    Ok(out)
}

/// dP̄_lm/dθ from P̄_lm and P̄_{l,m-1} relations; simple reference form
/// dP̄_lm/dθ = (l t P̄_lm − sqrt((2l+1)/(2l−1)) sqrt((l−m)(l+m)) P̄_{l−1,m}) / u.
pub(crate) fn derivative_column(m: usize, lmax: usize, t: f64, u: f64, col: &[f64], out: &mut [f64]) {
    for l in m..=lmax {
        let p = col[l - m];
        let prev = if l > m { col[l - m - 1] } else { 0.0 };
        let lf = l as f64;
        let f = if l > 0 {
            ((2.0 * lf + 1.0) / (2.0 * lf - 1.0) * (lf - m as f64) * (lf + m as f64)).sqrt()
        } else {
            0.0
        };
        out[l - m] = if u > 0.0 { (lf * t * p - f * prev) / u } else { 0.0 };
    }
}
