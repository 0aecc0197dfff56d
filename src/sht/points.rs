//! Synthesis at arbitrary points: values, or values and gradients, of a coefficient set at
//! (θ, λ).
//!
//! Points run in groups, one SIMD lane per point, through the block kernels of the transforms
//! (`kernel::point_group`: column starts with extended exponents near the poles, the W-lane
//! recursion into a level-1 row buffer, sum passes over it), compiled per instruction set
//! (`KernelPath`: AVX-512 32 points per group, AVX2 + FMA 16, portable 8; a last group of at
//! most 8 points runs 8 lanes wide) with the widest one this CPU has chosen at run time. ∂/∂θ comes from the non-singular three-column relation
//! and, at a pole, (1/sin θ) ∂f/∂λ is the limit along the meridian λ (only order 1
//! contributes), so the result holds at any degree and at the poles. Groups run in parallel;
//! the cost is O(L²) per point. The scalar reference is [`crate::sht::reference::points`]
//! (`tests/sht/points.rs` compares every compiled path with it).
//!
//! Callers that need only values ([`evaluate_point_values`]: scalar quantities, radial
//! components) skip the gradient sums, which add about half again to the time at L = 100.

use rayon::prelude::*;

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

use super::kernel::{KernelPath, KernelSet, PointScratch, PointTables};

/// A synthesised value with its horizontal gradient components.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PointValue {
    pub value: f64,
    /// ∂f/∂θ (per radian of colatitude).
    pub d_theta: f64,
    /// (1/sin θ) ∂f/∂λ (per radian of arc eastward).
    pub d_lambda_over_sin: f64,
}

/// Evaluates `coeffs` (any normalisation) and its gradient at points given as (colatitude,
/// longitude) in radians.
pub fn evaluate_points(coeffs: &Coefficients, points: &[(f64, f64)]) -> Result<Vec<PointValue>> {
    evaluate_points_with_path(coeffs, points, KernelPath::detect())
}

/// As [`evaluate_points`] on a given instruction-set path (refused when this CPU lacks it), for
/// testing each compiled copy against the reference.
pub fn evaluate_points_with_path(
    coeffs: &Coefficients,
    points: &[(f64, f64)],
    path: KernelPath,
) -> Result<Vec<PointValue>> {
    run(coeffs, points, path, true)
}

/// The values of `coeffs` (any normalisation) at points given as (colatitude, longitude) in
/// radians, without gradients. Each value is the same double as the `value` of
/// [`evaluate_points`] on the same path (the same recursion and sums; the gradient sums are
/// separate).
pub fn evaluate_point_values(coeffs: &Coefficients, points: &[(f64, f64)]) -> Result<Vec<f64>> {
    evaluate_point_values_with_path(coeffs, points, KernelPath::detect())
}

/// As [`evaluate_point_values`] on a given instruction-set path (refused when this CPU lacks
/// it).
pub fn evaluate_point_values_with_path(
    coeffs: &Coefficients,
    points: &[(f64, f64)],
    path: KernelPath,
) -> Result<Vec<f64>> {
    Ok(run(coeffs, points, path, false)?
        .into_iter()
        .map(|p| p.value)
        .collect())
}

/// Bytes a point synthesis of `points` points to degree `lmax` holds: the per-call tables
/// (four order-major arrays of the packed size, eight with gradients), the points sorted by
/// colatitude with their permutation, and the results in both orders, saturating.
pub fn point_synthesis_bytes(lmax: usize, points: usize, gradient: bool) -> u64 {
    PointTables::bytes(lmax, gradient).saturating_add((points as u64).saturating_mul(72))
}

/// Calls that need at most this much memory are not checked against the available memory.
const SMALL_CALL_BYTES: u64 = 16 << 20;

fn run(
    coeffs: &Coefficients,
    points: &[(f64, f64)],
    path: KernelPath,
    gradient: bool,
) -> Result<Vec<PointValue>> {
    let Some(kernels) = KernelSet::for_path(path) else {
        return Err(Error::invalid(format!(
            "this CPU cannot run the {} kernels",
            path.name()
        )));
    };
    coeffs.check_finite()?;
    if let Some((i, p)) = points.iter().enumerate().find(|(_, (t, l))| {
        !t.is_finite() || !l.is_finite() || *t < 0.0 || *t > std::f64::consts::PI
    }) {
        return Err(Error::invalid(format!(
            "point {i}: (colatitude {}, longitude {}) rad is not a valid position (colatitude in [0, π], both finite)",
            p.0, p.1
        )));
    }
    let bytes = point_synthesis_bytes(coeffs.lmax(), points.len(), gradient);
    // below this the check (a read of /proc/meminfo) would cost more than a small call, which
    // `field::synthesis` makes for every point at a radius of its own
    if bytes > SMALL_CALL_BYTES {
        crate::memory::check_fits(
            &format!(
                "point synthesis of {} points to degree {}",
                points.len(),
                coeffs.lmax()
            ),
            bytes,
        )?;
    }
    let g = coeffs.to_geodesy()?;
    let tables = PointTables::new(&g, gradient);
    debug_assert_eq!(tables.lmax(), g.lmax());
    // Groups of neighbouring colatitudes: their columns start alike (near the poles a whole
    // group skips the orders that are negligible there), and the groups inside the band
    // π/3 ≤ θ ≤ 2π/3 run the recursion step without the low part of cos θ. Every lane is
    // independent of the others in its group, so the grouping changes no result.
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_unstable_by(|&i, &j| points[i].0.total_cmp(&points[j].0));
    let sorted: Vec<(f64, f64)> = order.iter().map(|&i| points[i]).collect();
    let width = path.lanes();
    let mut results = vec![PointValue::default(); points.len()];
    // one task per group: a group at L = 100 is tens of microseconds of work
    sorted
        .par_chunks(width)
        .zip(results.par_chunks_mut(width))
        .for_each_init(PointScratch::new, |sc, (group, dst)| {
            kernels.points(gradient, &tables, sc, group, dst)
        });
    let mut out = vec![PointValue::default(); points.len()];
    for (&i, r) in order.iter().zip(&results) {
        out[i] = *r;
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coeffs::Normalization;
    use crate::sht::reference;

    /// Grouped evaluation (full groups and a padded last one) against the scalar reference
    /// (one-point columns of `legendre::column_with_derivative`, summed degree by degree), at
    /// degree 800 so that the near-pole points start their columns late (extended exponents),
    /// plus both poles. The longitudes have few significant bits, so that m λ is exact and the
    /// reference's `sin_cos(m λ)` is the trigonometric factor of the exact angle: with a
    /// general λ its own angle error, ½ ulp of m λ, moves the gradient sums at high order by
    /// as much as the kernels' rotation recurrence does (seen: 2e-12 of ∂f/∂θ at L = 800),
    /// and the comparison would measure the reference.
    #[test]
    fn grouped_points_match_the_reference() {
        let lmax = 800;
        let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
        // deterministic, non-trivial coefficients falling off like a potential field
        for l in 0..=lmax {
            for m in 0..=l {
                let v = ((l * 31 + m * 17) % 23) as f64 / 23.0 - 0.5;
                let w = if m > 0 {
                    ((l * 7 + m * 29) % 19) as f64 / 19.0 - 0.5
                } else {
                    0.0
                };
                c.set(l, m, v / (l + 1) as f64, w / (l + 1) as f64);
            }
        }
        let mut pts: Vec<(f64, f64)> = (0..19)
            .map(|i| {
                (
                    1e-3 + (std::f64::consts::PI - 1.6e-3) * (i as f64 / 18.0).powi(2),
                    0.375 * i as f64 - 2.0,
                )
            })
            .collect();
        pts.push((0.0, 0.5));
        pts.push((std::f64::consts::PI, -1.2));
        pts.push((2e-3, 1.0));
        let got = evaluate_points(&c, &pts).unwrap();
        let want = reference::points(&c, &pts);
        assert_eq!(got.len(), pts.len());
        for (k, (&(theta, _), (g, w))) in pts.iter().zip(got.iter().zip(&want)).enumerate() {
            // summation order differs (per order and parity first): a few hundred ulp of the
            // largest term. Near a pole (sin θ < 0.05) the recursion has a double
            // characteristic root at x = 1, so its own rounding grows about like l^1.5 ulp,
            // and the two sides round differently: 4 ε L^1.5 there.
            let near_pole = theta.sin() < 0.05;
            let rel = if near_pole {
                4.0 * f64::EPSILON * (lmax as f64).powf(1.5)
            } else {
                1e-12
            };
            let tol = |x: f64| rel * x.abs().max(1.0);
            for (name, x, y) in [
                ("value", g.value, w.value),
                ("dθ", g.d_theta, w.d_theta),
                ("dλ", g.d_lambda_over_sin, w.d_lambda_over_sin),
            ] {
                assert!((x - y).abs() < tol(y), "point {k} {name}: {x} vs {y}");
            }
        }
    }
}
