//! Spatial index of points on the sphere: a k-d tree over unit vectors.
//!
//! Working in 3-D Cartesian unit vectors removes every special case of latitude–longitude
//! indexing: the poles and the ±180° meridian are ordinary places. The tree measures the chord
//! c = |p − q| between unit vectors, which is monotone in the central angle ψ:
//! c = 2 sin(ψ/2), ψ = 2 asin(c/2) (common practice; any spherical-geometry text).
//! Also 1 − cos ψ = c²/2, so kernels of the form exp(−b(1 − cos ψ)) need no trigonometry.

use super::kd_tree::{Found, KdTree3};

/// Unit vector of a geocentric latitude/longitude in degrees.
#[inline]
pub fn unit_vector(lat_deg: f64, lon_deg: f64) -> [f64; 3] {
    let (sl, cl) = lat_deg.to_radians().sin_cos();
    let (so, co) = lon_deg.to_radians().sin_cos();
    [cl * co, cl * so, sl]
}

/// Chord length between unit vectors separated by the central angle `psi_rad`.
#[inline]
pub fn chord_from_angle(psi_rad: f64) -> f64 {
    2.0 * (0.5 * psi_rad.min(std::f64::consts::PI)).sin()
}

/// Central angle (radians) of a chord between unit vectors.
#[inline]
pub fn angle_from_chord(chord: f64) -> f64 {
    2.0 * (0.5 * chord).clamp(0.0, 1.0).asin()
}

/// Central angle between two unit vectors, accurate at all separations
/// (atan2 of |p × q| and p·q; common practice).
#[inline]
pub fn angle_between(p: &[f64; 3], q: &[f64; 3]) -> f64 {
    let cross = [
        p[1] * q[2] - p[2] * q[1],
        p[2] * q[0] - p[0] * q[2],
        p[0] * q[1] - p[1] * q[0],
    ];
    let s = (cross[0] * cross[0] + cross[1] * cross[1] + cross[2] * cross[2]).sqrt();
    let c = p[0] * q[0] + p[1] * q[1] + p[2] * q[2];
    s.atan2(c)
}

/// A neighbour found by a query: point index and central angle to the query (radians).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Neighbour {
    pub index: usize,
    pub angle_rad: f64,
    /// Squared chord (unit sphere), the tree's own distance; 1 − cos ψ = chord²/2.
    pub chord_squared: f64,
}

impl Neighbour {
    fn from_tree(found: Found) -> Self {
        let chord_squared = found.distance_squared.max(0.0);
        Neighbour {
            index: found.index,
            angle_rad: angle_from_chord(chord_squared.sqrt()),
            chord_squared,
        }
    }
}

/// A k-d tree over the unit vectors of a point set. Immutable, `Send + Sync`.
pub struct SphereIndex {
    tree: KdTree3,
    points: Vec<[f64; 3]>,
}

impl SphereIndex {
    /// Builds the index of points given in degrees (either longitude convention).
    pub fn new(lat_deg: &[f64], lon_deg: &[f64]) -> SphereIndex {
        let points: Vec<[f64; 3]> = lat_deg
            .iter()
            .zip(lon_deg)
            .map(|(&a, &o)| unit_vector(a, o))
            .collect();
        SphereIndex {
            tree: KdTree3::new(&points),
            points,
        }
    }

    pub fn len(&self) -> usize {
        self.points.len()
    }

    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// Unit vector of point i.
    pub fn point(&self, i: usize) -> [f64; 3] {
        self.points[i]
    }

    /// The nearest point to `query` (a unit vector). Panics on an empty index.
    pub fn nearest(&self, query: &[f64; 3]) -> Neighbour {
        let found = self.tree.nearest_k(query, 1);
        Neighbour::from_tree(found[0])
    }

    /// The `k` nearest points, nearest first.
    pub fn nearest_k(&self, query: &[f64; 3], k: usize) -> Vec<Neighbour> {
        self.tree
            .nearest_k(query, k)
            .into_iter()
            .map(Neighbour::from_tree)
            .collect()
    }

    /// All points within the central angle `radius_rad` of `query`, in no particular order.
    pub fn within(&self, query: &[f64; 3], radius_rad: f64) -> Vec<Neighbour> {
        let c = chord_from_angle(radius_rad);
        self.tree
            .within(query, c * c)
            .into_iter()
            .map(Neighbour::from_tree)
            .collect()
    }
}

/// Reference implementation: all points within `radius_rad`, by exhaustive search on central
/// angles. The tree is tested against it.
pub fn brute_force_within(points: &[[f64; 3]], query: &[f64; 3], radius_rad: f64) -> Vec<usize> {
    (0..points.len())
        .filter(|&i| angle_between(&points[i], query) <= radius_rad)
        .collect()
}

/// Reference implementation: the `k` nearest points by exhaustive search, nearest first.
pub fn brute_force_nearest_k(points: &[[f64; 3]], query: &[f64; 3], k: usize) -> Vec<(usize, f64)> {
    let mut all: Vec<(usize, f64)> = points
        .iter()
        .enumerate()
        .map(|(i, p)| (i, angle_between(p, query)))
        .collect();
    all.sort_by(|a, b| a.1.total_cmp(&b.1));
    all.truncate(k);
    all
}
