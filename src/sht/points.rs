//! Synthesis at arbitrary points: values and gradients of a coefficient set at (θ, λ).
//!
//! Per point, every column P̄_lm (l = m..L) comes from the stable recursion of
//! `legendre::column` (extended exponents near the poles), and ∂/∂θ from the non-singular
//! three-column relation, so the result holds at any degree and at the poles. At a pole,
//! (1/sin θ) ∂f/∂λ is the limit along the meridian λ (only order 1 contributes).
//! Points run in parallel; the cost is O(L²) per point.

use rayon::prelude::*;

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

use super::legendre::column::{column_with_coefficients, derivative_from_neighbours};
use super::legendre::recursion::{fill_coefficients, sectoral, sectoral_factors};

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
    coeffs.check_finite()?;
    if let Some((i, p)) = points.iter().enumerate().find(|(_, (t, l))| {
        !t.is_finite() || !l.is_finite() || *t < 0.0 || *t > std::f64::consts::PI
    }) {
        return Err(Error::invalid(format!(
            "point {i}: (colatitude {}, longitude {}) rad is not a valid position (colatitude in [0, π], both finite)",
            p.0, p.1
        )));
    }
    let g = coeffs.to_geodesy()?;
    let factors = sectoral_factors(g.lmax());
    Ok(points
        .par_iter()
        .map_init(
            || PointScratch::new(g.lmax()),
            |sc, &(theta, lambda)| evaluate_one(&g, &factors, sc, theta, lambda),
        )
        .collect())
}

struct PointScratch {
    a: Vec<f64>,
    b: Vec<f64>,
    below: Vec<f64>,
    here: Vec<f64>,
    above: Vec<f64>,
}

impl PointScratch {
    fn new(lmax: usize) -> Self {
        let n = lmax + 2;
        PointScratch {
            a: vec![0.0; n],
            b: vec![0.0; n],
            below: vec![0.0; n],
            here: vec![0.0; n],
            above: vec![0.0; n],
        }
    }

    fn column(&mut self, m: usize, lmax: usize, t: f64, u: f64, c_m: f64, into_above: bool) {
        fill_coefficients(m, lmax, &mut self.a, &mut self.b);
        let n = lmax - m + 1;
        let dst = if into_above {
            &mut self.above
        } else {
            &mut self.here
        };
        column_with_coefficients(
            m,
            lmax,
            t,
            sectoral(m, c_m, u),
            &self.a,
            &self.b,
            &mut dst[..n],
        );
    }
}

fn evaluate_one(
    g: &Coefficients,
    factors: &[f64],
    sc: &mut PointScratch,
    theta: f64,
    lambda: f64,
) -> PointValue {
    let lmax = g.lmax();
    let (t, u) = (theta.cos(), theta.sin().abs());
    let mut pv = PointValue::default();
    sc.column(0, lmax, t, u, factors[0], false);
    for m in 0..=lmax {
        if m < lmax {
            sc.column(m + 1, lmax, t, u, factors[m + 1], true);
        }
        let d = derivative_from_neighbours(m, lmax, &sc.below, &sc.above);
        let (sm, cm) = (m as f64 * lambda).sin_cos();
        let mf = m as f64;
        for l in m..=lmax {
            let (c, s) = (g.c(l, m), g.s(l, m));
            let p = sc.here[l - m];
            let trig = c * cm + s * sm;
            pv.value += p * trig;
            pv.d_theta += d[l - m] * trig;
            let p_over_u = if u > 0.0 {
                p / u
            } else if m == 1 {
                // lim P̄_l1 / sin θ = ±dP̄_l1/dθ (north / south pole)
                if theta < 1.0 {
                    d[l - m]
                } else {
                    -d[l - m]
                }
            } else {
                0.0
            };
            pv.d_lambda_over_sin += p_over_u * mf * (s * cm - c * sm);
        }
        // roll the columns: below ← here ← above
        std::mem::swap(&mut sc.below, &mut sc.here);
        std::mem::swap(&mut sc.here, &mut sc.above);
    }
    pv
}
