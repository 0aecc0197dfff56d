//! Choosing a band limit the data can support, from their spacing.
//!
//! A sampling interval Δ resolves half-wavelengths down to Δ, i.e. degree πR/Δ on a sphere of
//! radius R (Nyquist; common practice). Scattered data are not evenly spaced: the median
//! nearest-neighbour distance d of a uniform random (Poisson) pattern is ≈ 0.47 of its mean
//! spacing (d_med = sqrt(ln 2 / (π ρ)) for density ρ; Clark & Evans 1954, Ecology 35:445 give
//! the mean 0.5/√ρ). kugel therefore takes Δ = 2·d_med and L = ⌊πR / (2·d_med)⌋, which for
//! random data keeps (L+1)² near the number of observations.

use rayon::prelude::*;

use super::points::PointSet;
use super::spatial::SphereIndex;

/// Observations sampled for the median nearest-neighbour distance (all when fewer).
pub const SPACING_SAMPLE: usize = 200_000;

/// Lowest and highest degree the rule returns.
pub const MIN_DEFAULT_LMAX: usize = 2;
pub const MAX_DEFAULT_LMAX: usize = 2700;

/// Median distance from an observation to its nearest other observation, radians; `None`
/// with fewer than two points. Up to `SPACING_SAMPLE` evenly strided points are used.
pub fn median_nearest_neighbour_rad(points: &PointSet, index: &SphereIndex) -> Option<f64> {
    let n = points.len();
    if n < 2 {
        return None;
    }
    let stride = n.div_ceil(SPACING_SAMPLE).max(1);
    let mut d: Vec<f64> = (0..n)
        .into_par_iter()
        .step_by(stride)
        .map(|i| {
            let q = index.point(i);
            // the first neighbour is the point itself
            index
                .nearest_k(&q, 2)
                .get(1)
                .map_or(f64::NAN, |nb| nb.angle_rad)
        })
        .collect();
    d.retain(|v| v.is_finite());
    if d.is_empty() {
        return None;
    }
    d.sort_by(f64::total_cmp);
    Some(d[d.len() / 2])
}

/// The default band limit for the points and the reason, for printing.
pub fn default_lmax(points: &PointSet, body_radius_m: f64) -> (usize, String) {
    let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
    default_lmax_with_index(points, &index, body_radius_m)
}

/// As [`default_lmax`] with a ready index.
pub fn default_lmax_with_index(
    points: &PointSet,
    index: &SphereIndex,
    body_radius_m: f64,
) -> (usize, String) {
    match median_nearest_neighbour_rad(points, index) {
        None => (
            MIN_DEFAULT_LMAX,
            format!(
                "only {} observation(s): degree {MIN_DEFAULT_LMAX}",
                points.len()
            ),
        ),
        Some(d) if d <= 0.0 => (
            MIN_DEFAULT_LMAX,
            "nearest-neighbour distances are zero".to_string(),
        ),
        Some(d) => {
            let raw = (std::f64::consts::PI / (2.0 * d)).floor();
            let l = (raw as usize).clamp(MIN_DEFAULT_LMAX, MAX_DEFAULT_LMAX);
            let d_km = d * body_radius_m / 1000.0;
            let mut reason = format!(
                "median nearest-neighbour distance {d_km:.2} km → half-wavelength 2 × {d_km:.2} km → L = πR/(2d) = {}",
                raw as usize
            );
            if l != raw as usize {
                reason.push_str(&format!(", clamped to {l}"));
            }
            (l, reason)
        }
    }
}
