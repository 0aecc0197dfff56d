//! Spherical polygons with great-circle edges: validation, area, membership of a point, and the
//! longitude intervals the region covers on a circle of latitude (what the concentration matrix
//! of [`super::concentration`] integrates over).
//!
//! Which side is the region. A simple closed curve splits the sphere in two; kugel takes the
//! smaller of the two (area at most 2π, a hemisphere), whatever the order of the vertices, so a
//! polygon can be listed clockwise or counter-clockwise. A region larger than a hemisphere is
//! given as a mask.
//!
//! Area and membership come from the fan of spherical triangles (R, A_i, A_{i+1}) over a
//! reference point R off the boundary: the signed area of each triangle is
//! E = 2 atan2(R·(A×B), 1 + R·A + A·B + B·R) (Van Oosterom & Strackee 1983, IEEE Trans.
//! Biomed. Eng. 30:125–126, the solid angle of a triangle), and Σ E = A_L − 4π [R ∈ L], where
//! L is the region on the left of the oriented boundary and A_L its area (the fan covers every
//! point P with multiplicity [P ∈ L] − [R ∈ L]; common practice). So the sign of Σ E says
//! whether R lies in L, and a point's membership is [R ∈ L] plus the signed count of fan
//! triangles that contain it. The tests check the area against Girard's theorem
//! (A = Σ interior angles − (n − 2)π).

use super::edge_bands::EdgeBands;
use crate::error::{Error, Result};

type Vec3 = [f64; 3];

/// Scalar product of two 3-vectors.
pub fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Vector product of two 3-vectors.
pub fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn norm(a: Vec3) -> f64 {
    dot(a, a).sqrt()
}

/// The vector scaled to length 1.
pub fn unit(a: Vec3) -> Vec3 {
    let n = norm(a);
    [a[0] / n, a[1] / n, a[2] / n]
}

/// The unit vector of (latitude, longitude) in degrees.
pub fn unit_vector(lat_deg: f64, lon_deg: f64) -> Vec3 {
    let (sp, cp) = lat_deg.to_radians().sin_cos();
    let (sl, cl) = lon_deg.to_radians().sin_cos();
    [cp * cl, cp * sl, sp]
}

/// One vertex as read: degrees north, degrees east, and where it came from (e.g. a file line)
/// for error messages.
#[derive(Debug, Clone, PartialEq)]
pub struct Vertex {
    pub lat_deg: f64,
    pub lon_deg: f64,
    /// "line 7 of ring.csv" or similar.
    pub origin: String,
}

/// A validated spherical polygon (module notes).
#[derive(Debug, Clone, PartialEq)]
pub struct SphericalPolygon {
    pub vertices: Vec<Vertex>,
    points: Vec<Vec3>,
    /// Unit normals A_i × A_{i+1} / |…| of the edges' great circles.
    normals: Vec<Vec3>,
    reference: Vec3,
    reference_in_left: bool,
    /// True when the region is the right side of the boundary as listed (the left is larger).
    complement: bool,
    area_sr: f64,
    /// The edges by the latitudes they span, for [`SphericalPolygon::intervals_at`].
    bands: EdgeBands,
    /// Name for messages, e.g. the file.
    pub source: String,
}

/// Arcs of a latitude circle shorter than this (radians) that cannot be classified are left
/// out (module notes of `intervals_at`).
const TINY_ARC_RAD: f64 = 1e-6;

/// Crossings of a latitude circle closer than this (radians along the circle) are not
/// trusted to classify the arc between them (see `intervals_at`).
const CLOSE_CUTS_RAD: f64 = 1e-9;

/// Smallest angular distance (radians, as a chord-free measure) below which two things count
/// as touching.
const TOUCH_RAD: f64 = 1e-10;

impl SphericalPolygon {
    /// Validates the ring (a closing vertex equal to the first is dropped): at least three
    /// vertices, latitudes in [−90, 90], finite numbers, no repeated or antipodal neighbours,
    /// no two edges crossing or touching. Errors name the vertices' origins.
    pub fn new(mut vertices: Vec<Vertex>, source: &str) -> Result<Self> {
        let bad =
            |v: &Vertex, what: String| Error::invalid(format!("{source}, {}: {what}", v.origin));
        for v in &vertices {
            if !v.lat_deg.is_finite() || !v.lon_deg.is_finite() {
                return Err(bad(
                    v,
                    format!(
                        "vertex ({}, {}) must be finite degrees",
                        v.lat_deg, v.lon_deg
                    ),
                ));
            }
            if !(-90.0..=90.0).contains(&v.lat_deg) {
                return Err(bad(
                    v,
                    format!("latitude {} is outside [-90, 90]", v.lat_deg),
                ));
            }
        }
        if vertices.len() > 1 {
            let (a, b) = (&vertices[0], &vertices[vertices.len() - 1]);
            if dot(
                unit_vector(a.lat_deg, a.lon_deg),
                unit_vector(b.lat_deg, b.lon_deg),
            ) > 1.0 - 1e-15
            {
                vertices.pop();
            }
        }
        if vertices.is_empty() {
            return Err(Error::invalid(format!(
                "{source}: the polygon has no vertices; expected at least 3 lines of lat, lon in degrees"
            )));
        }
        if vertices.len() < 3 {
            return Err(Error::invalid(format!(
                "{source}: the polygon has {} distinct vertices; at least 3 are needed",
                vertices.len()
            )));
        }
        let n = vertices.len();
        let points: Vec<Vec3> = vertices
            .iter()
            .map(|v| unit_vector(v.lat_deg, v.lon_deg))
            .collect();
        let mut normals = Vec::with_capacity(n);
        for i in 0..n {
            let (a, b) = (points[i], points[(i + 1) % n]);
            let c = cross(a, b);
            let s = norm(c);
            if s < TOUCH_RAD {
                let what = if dot(a, b) > 0.0 {
                    "repeats the previous vertex"
                } else {
                    "is antipodal to the previous vertex, so the edge between them is undefined"
                };
                return Err(bad(&vertices[(i + 1) % n], what.to_string()));
            }
            normals.push([c[0] / s, c[1] / s, c[2] / s]);
        }
        let mut polygon = SphericalPolygon {
            vertices,
            points,
            normals,
            reference: [0.0, 0.0, 1.0],
            reference_in_left: false,
            complement: false,
            area_sr: 0.0,
            bands: EdgeBands::new(&[]),
            source: source.to_string(),
        };
        polygon.bands = EdgeBands::new(&polygon.edge_z_spans());
        polygon.check_simple()?;
        polygon.choose_reference();
        let fan: f64 = (0..n)
            .map(|i| {
                triangle_signed_area(
                    polygon.reference,
                    polygon.points[i],
                    polygon.points[(i + 1) % n],
                )
            })
            .sum();
        polygon.reference_in_left = fan < 0.0;
        let left_area = if polygon.reference_in_left {
            fan + 4.0 * std::f64::consts::PI
        } else {
            fan
        };
        polygon.complement = left_area > 2.0 * std::f64::consts::PI;
        polygon.area_sr = if polygon.complement {
            4.0 * std::f64::consts::PI - left_area
        } else {
            left_area
        };
        Ok(polygon)
    }

    /// Area of the region in steradians (at most 2π).
    pub fn area_sr(&self) -> f64 {
        self.area_sr
    }

    /// Number of vertices (without a closing repeat).
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// Never true for a validated polygon.
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    fn edge(&self, i: usize) -> (Vec3, Vec3, Vec3) {
        let n = self.points.len();
        (self.points[i], self.points[(i + 1) % n], self.normals[i])
    }

    /// True when p (unit vector on the great circle of edge i) lies on the edge's minor arc,
    /// with a tolerance of `slack` (radians).
    fn on_arc(&self, i: usize, p: Vec3, slack: f64) -> bool {
        let (a, b, nrm) = self.edge(i);
        dot(cross(a, p), nrm) >= -slack && dot(cross(p, b), nrm) >= -slack
    }

    fn check_simple(&self) -> Result<()> {
        let n = self.points.len();
        for i in 0..n {
            for j in i + 1..n {
                let adjacent = j == i + 1 || (i == 0 && j == n - 1);
                let (ni, nj) = (self.normals[i], self.normals[j]);
                let line = cross(ni, nj);
                if norm(line) < TOUCH_RAD {
                    // the same great circle: overlapping arcs share an interior point
                    let (a, b, _) = self.edge(j);
                    let overlap = (self.on_arc(i, a, -TOUCH_RAD) || self.on_arc(i, b, -TOUCH_RAD))
                        || {
                            let (c, d, _) = self.edge(i);
                            self.on_arc(j, c, -TOUCH_RAD) || self.on_arc(j, d, -TOUCH_RAD)
                        };
                    if overlap {
                        return Err(self.crossing_error(i, j, "overlap"));
                    }
                    continue;
                }
                if adjacent {
                    continue;
                }
                let x = unit(line);
                for p in [x, [-x[0], -x[1], -x[2]]] {
                    if self.on_arc(i, p, TOUCH_RAD) && self.on_arc(j, p, TOUCH_RAD) {
                        return Err(self.crossing_error(i, j, "cross"));
                    }
                }
            }
        }
        Ok(())
    }

    fn crossing_error(&self, i: usize, j: usize, how: &str) -> Error {
        let n = self.points.len();
        let o = |k: usize| self.vertices[k % n].origin.clone();
        Error::invalid(format!(
            "{}: the polygon crosses itself: the edge from {} to {} and the edge from {} to {} {how}; \
             the vertices must trace a simple ring",
            self.source,
            o(i),
            o(i + 1),
            o(j),
            o(j + 1)
        ))
    }

    /// A reference point for the fan: the candidate farthest from every edge and from every
    /// vertex's antipode.
    fn choose_reference(&mut self) {
        let candidates: [Vec3; 8] = [
            unit([0.123, -0.345, 0.930]),
            unit([-0.611, 0.402, -0.682]),
            unit([0.781, 0.517, 0.350]),
            unit([-0.233, -0.871, 0.432]),
            unit([0.452, 0.198, -0.870]),
            unit([-0.905, -0.301, 0.300]),
            unit([0.015, 0.995, -0.099]),
            unit([0.640, -0.700, -0.317]),
        ];
        let clearance = |r: Vec3| -> f64 {
            let mut best = f64::INFINITY;
            for i in 0..self.points.len() {
                let (a, b, nrm) = self.edge(i);
                // distance to the arc: to the circle if the foot lies on the arc, else to an end
                let foot = {
                    let h = dot(r, nrm);
                    [r[0] - h * nrm[0], r[1] - h * nrm[1], r[2] - h * nrm[2]]
                };
                let d_arc = if norm(foot) > 1e-12 && self.on_arc(i, unit(foot), 0.0) {
                    dot(r, nrm).abs().asin()
                } else {
                    dot(r, a)
                        .clamp(-1.0, 1.0)
                        .acos()
                        .min(dot(r, b).clamp(-1.0, 1.0).acos())
                };
                let d_antipode = std::f64::consts::PI - dot(r, a).clamp(-1.0, 1.0).acos();
                best = best.min(d_arc).min(d_antipode);
            }
            best
        };
        self.reference = candidates
            .iter()
            .copied()
            .max_by(|a, b| clearance(*a).total_cmp(&clearance(*b)))
            .expect("candidates");
    }

    /// [P ∈ L] from the fan, or `None` when p lies too close to a fan edge to decide.
    fn in_left(&self, p: Vec3) -> Option<bool> {
        let r = self.reference;
        let n = self.points.len();
        let mut count = i64::from(self.reference_in_left);
        for i in 0..n {
            let (a, b) = (self.points[i], self.points[(i + 1) % n]);
            let orientation = dot(r, cross(a, b));
            if orientation.abs() < 1e-300 {
                continue;
            }
            let s = orientation.signum();
            let sides = [
                dot(p, cross(r, a)) * s,
                dot(p, cross(a, b)) * s,
                dot(p, cross(b, r)) * s,
            ];
            if sides.iter().any(|v| v.abs() < 1e-13) {
                return None;
            }
            if sides.iter().all(|v| *v > 0.0) {
                count += s as i64;
            }
        }
        match count {
            0 => Some(false),
            1 => Some(true),
            _ => None,
        }
    }

    /// Whether the point (latitude, longitude in degrees) lies in the region; `None` on the
    /// boundary (within about 1e-13 rad of an edge or a fan line).
    pub fn contains_deg(&self, lat_deg: f64, lon_deg: f64) -> Option<bool> {
        self.contains(unit_vector(lat_deg, lon_deg))
    }

    fn contains(&self, p: Vec3) -> Option<bool> {
        self.in_left(p).map(|inside| inside != self.complement)
    }

    /// Highest and lowest point of edge i's great circle that lie on the edge (none, one or
    /// both), as z = cos θ.
    fn edge_extremes(&self, i: usize) -> Vec<f64> {
        let (_, _, nrm) = self.edge(i);
        let top = [-nrm[2] * nrm[0], -nrm[2] * nrm[1], 1.0 - nrm[2] * nrm[2]];
        let mut out = Vec::new();
        if norm(top) > 1e-12 {
            let top = unit(top);
            for p in [top, [-top[0], -top[1], -top[2]]] {
                if self.on_arc(i, p, 0.0) {
                    out.push(p[2]);
                }
            }
        }
        out
    }

    /// [z_lo, z_hi] of every edge: its ends and any interior extreme.
    fn edge_z_spans(&self) -> Vec<(f64, f64)> {
        (0..self.points.len())
            .map(|i| {
                let (a, b, _) = self.edge(i);
                let mut lo = a[2].min(b[2]);
                let mut hi = a[2].max(b[2]);
                for z in self.edge_extremes(i) {
                    lo = lo.min(z);
                    hi = hi.max(z);
                }
                (lo, hi)
            })
            .collect()
    }

    /// z = cos θ values where the width of the region's latitude circles is not smooth: every
    /// vertex, every interior extreme latitude of an edge, and ±1.
    pub fn latitude_breaks(&self) -> Vec<f64> {
        let mut z = vec![-1.0, 1.0];
        for i in 0..self.points.len() {
            let (a, _, _) = self.edge(i);
            z.push(a[2]);
            z.extend(self.edge_extremes(i));
        }
        z.sort_by(f64::total_cmp);
        z.dedup_by(|a, b| (*a - *b).abs() < 1e-14);
        z
    }

    /// Longitude intervals (radians, each `start < end`, possibly reaching past 2π) that the
    /// region covers on the circle of latitude with cos(colatitude) = `z`.
    ///
    /// The circle meets the boundary where it crosses an edge; only the edges whose latitude
    /// range holds z are looked at ([`EdgeBands`]). Between two neighbouring crossings the
    /// circle is all inside or all outside, and which one follows from the crossing edge
    /// alone: along the circle n·P = ρ h cos(λ − δ) + n_z z (n the edge's unit normal A × B,
    /// h = |(n_x, n_y)|, δ = atan2(n_y, n_x)), which falls through zero at λ = δ + s and rises
    /// at λ = δ − s (s = arccos(−n_z z/(ρ h)) ∈ (0, π)), and the left side of an edge (n·P > 0)
    /// is the left region L of the oriented boundary (module notes). Each arc is classified
    /// from both of its ends; where the two disagree, or a crossing lies within 10⁻⁹ rad of
    /// another (a circle through a vertex or touching one), the arc is classified by the fan
    /// test as in [`SphericalPolygon::intervals_at_reference`]. So a row costs the edges
    /// near its latitude, not crossings × vertices, and gives the reference's intervals.
    pub fn intervals_at(&self, z: f64) -> Result<Vec<(f64, f64)>> {
        let rho = ((1.0 - z) * (1.0 + z)).max(0.0).sqrt();
        let two_pi = 2.0 * std::f64::consts::PI;
        // (longitude, the arc after it lies in L)
        let mut cuts: Vec<(f64, bool)> = Vec::new();
        if rho > 0.0 {
            for i in self.bands.meeting(z) {
                let (_, _, nrm) = self.edge(i);
                let h = nrm[0].hypot(nrm[1]);
                if h < 1e-15 {
                    continue;
                }
                let c = -nrm[2] * z / (rho * h);
                if c.abs() > 1.0 {
                    continue;
                }
                let delta = nrm[1].atan2(nrm[0]);
                let spread = c.acos();
                for (lam, left_after) in [(delta + spread, false), (delta - spread, true)] {
                    let p = [rho * lam.cos(), rho * lam.sin(), z];
                    if self.on_arc(i, p, 1e-9) {
                        cuts.push((lam.rem_euclid(two_pi), left_after));
                    }
                }
            }
        }
        cuts.sort_by(|a, b| a.0.total_cmp(&b.0));
        if cuts.is_empty() {
            return self.intervals_at_reference(z);
        }
        let n = cuts.len();
        let lam_at = |j: usize| cuts[j % n].0 + two_pi * (j / n) as f64;
        let crowded = |j: usize| {
            // j in n..2n so that j − 1 does not wrap below 0
            (lam_at(j) - lam_at(j - 1)) * rho < CLOSE_CUTS_RAD
                || (lam_at(j + 1) - lam_at(j)) * rho < CLOSE_CUTS_RAD
        };
        let at = |lam: f64| [rho * lam.cos(), rho * lam.sin(), z];
        let mut out: Vec<(f64, f64)> = Vec::new();
        for j in 0..n {
            let start = cuts[j].0;
            let end = cuts.get(j + 1).map(|c| c.0).unwrap_or(cuts[0].0 + two_pi);
            if end - start < 1e-15 {
                continue;
            }
            let from_start = cuts[j].1;
            let from_end = !cuts[(j + 1) % n].1;
            let inside = if from_start == from_end && !crowded(n + j) && !crowded(n + j + 1) {
                from_start != self.complement
            } else {
                self.classify_arc(&at, rho, z, start, end)?
            };
            if inside {
                match out.last_mut() {
                    Some(last) if (last.1 - start).abs() < 1e-15 => last.1 = end,
                    _ => out.push((start, end)),
                }
            }
        }
        Ok(out)
    }

    /// Whether the arc (start, end) of the latitude circle z lies in the region, by the fan
    /// test at a few interior points (costs O(vertices) each).
    fn classify_arc(
        &self,
        at: &dyn Fn(f64) -> Vec3,
        rho: f64,
        z: f64,
        start: f64,
        end: f64,
    ) -> Result<bool> {
        for f in [0.5, 0.37, 0.63, 0.21, 0.79] {
            if let Some(inside) = self.contains(at(start + f * (end - start))) {
                return Ok(inside);
            }
        }
        if (end - start) * rho < TINY_ARC_RAD {
            // a sliver beside a vertex, on a circle that nearly touches it: whichever side
            // it is on, it adds less than its width times the row's weight
            return Ok(false);
        }
        Err(Error::invalid(format!(
            "{}: cannot tell inside from outside near latitude {:.6}°, longitude {:.6}°; \
             the polygon is degenerate there (edges closer than about 1e-9 rad)",
            self.source,
            90.0 - z.acos().to_degrees(),
            (0.5 * (start + end)).to_degrees()
        )))
    }

    /// The reference for [`SphericalPolygon::intervals_at`]: every edge is tried for a
    /// crossing and every arc between crossings classified by the fan test, so a row costs
    /// crossings × vertices. Kept for the tests and for circles without crossings.
    pub fn intervals_at_reference(&self, z: f64) -> Result<Vec<(f64, f64)>> {
        let rho = ((1.0 - z) * (1.0 + z)).max(0.0).sqrt();
        let two_pi = 2.0 * std::f64::consts::PI;
        let mut cuts = Vec::new();
        for i in 0..self.points.len() {
            let (_, _, nrm) = self.edge(i);
            let h = nrm[0].hypot(nrm[1]);
            if h < 1e-15 || rho == 0.0 {
                continue;
            }
            // n·P = 0 with P = (ρ cos λ, ρ sin λ, z): cos(λ − δ) = −n_z z / (ρ h)
            let c = -nrm[2] * z / (rho * h);
            if c.abs() > 1.0 {
                continue;
            }
            let delta = nrm[1].atan2(nrm[0]);
            let spread = c.acos();
            for lam in [delta + spread, delta - spread] {
                let p = [rho * lam.cos(), rho * lam.sin(), z];
                if self.on_arc(i, p, 1e-9) {
                    cuts.push(lam.rem_euclid(two_pi));
                }
            }
        }
        cuts.sort_by(f64::total_cmp);
        let at = |lam: f64| [rho * lam.cos(), rho * lam.sin(), z];
        let classify = |start: f64, end: f64| self.classify_arc(&at, rho, z, start, end);
        if cuts.is_empty() {
            return Ok(if classify(0.0, two_pi)? {
                vec![(0.0, two_pi)]
            } else {
                Vec::new()
            });
        }
        let mut out: Vec<(f64, f64)> = Vec::new();
        for (j, &start) in cuts.iter().enumerate() {
            let end = cuts.get(j + 1).copied().unwrap_or(cuts[0] + two_pi);
            if end - start < 1e-15 {
                continue;
            }
            if classify(start, end)? {
                match out.last_mut() {
                    Some(last) if (last.1 - start).abs() < 1e-15 => last.1 = end,
                    _ => out.push((start, end)),
                }
            }
        }
        Ok(out)
    }
}

/// Signed solid angle of the spherical triangle (a, b, c) of unit vectors, positive when
/// a → b → c runs counter-clockwise seen from outside (Van Oosterom & Strackee 1983).
pub fn triangle_signed_area(a: Vec3, b: Vec3, c: Vec3) -> f64 {
    let num = dot(a, cross(b, c));
    let den = 1.0 + dot(a, b) + dot(b, c) + dot(c, a);
    2.0 * num.atan2(den)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ring(points: &[(f64, f64)]) -> Vec<Vertex> {
        points
            .iter()
            .enumerate()
            .map(|(i, &(lat, lon))| Vertex {
                lat_deg: lat,
                lon_deg: lon,
                origin: format!("line {}", i + 1),
            })
            .collect()
    }

    #[test]
    fn octant_area_and_either_orientation() {
        // the octant (90,0),(0,0),(0,90) has area 4π/8 (Girard: three right angles − π)
        for pts in [
            [(90.0, 0.0), (0.0, 0.0), (0.0, 90.0)],
            [(0.0, 90.0), (0.0, 0.0), (90.0, 0.0)],
        ] {
            let p = SphericalPolygon::new(ring(&pts), "t").unwrap();
            assert!((p.area_sr() - std::f64::consts::PI / 2.0).abs() < 1e-13);
            assert_eq!(p.contains_deg(30.0, 45.0), Some(true));
            assert_eq!(p.contains_deg(-30.0, 45.0), Some(false));
            assert_eq!(p.contains_deg(30.0, 135.0), Some(false));
        }
    }

    #[test]
    fn bad_rings_are_refused_with_their_lines() {
        let e = SphericalPolygon::new(ring(&[]), "r.csv")
            .unwrap_err()
            .to_string();
        assert!(e.contains("r.csv") && e.contains("no vertices"), "{e}");
        let e = SphericalPolygon::new(ring(&[(0.0, 0.0), (10.0, 0.0)]), "r.csv")
            .unwrap_err()
            .to_string();
        assert!(e.contains("2 distinct"), "{e}");
        // a bow tie: edges 1→2 and 3→4 cross
        let e = SphericalPolygon::new(
            ring(&[(0.0, 0.0), (10.0, 10.0), (10.0, 0.0), (0.0, 10.0)]),
            "r.csv",
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("crosses itself") && e.contains("line 1"), "{e}");
        let e = SphericalPolygon::new(ring(&[(0.0, 0.0), (0.0, 0.0), (10.0, 5.0)]), "r.csv")
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 2") && e.contains("repeats"), "{e}");
    }

    #[test]
    fn latitude_intervals_of_a_lune_piece() {
        // the quadrilateral between meridians 10°E and 50°E and the equator and 30°N: on the
        // circle at 20°N it covers 10°..50°E, less the bulge of the upper edge (common practice)
        let p = SphericalPolygon::new(
            ring(&[(0.0, 10.0), (0.0, 50.0), (30.0, 50.0), (30.0, 10.0)]),
            "t",
        )
        .unwrap();
        let iv = p.intervals_at(20f64.to_radians().sin()).unwrap();
        assert_eq!(iv.len(), 1);
        assert!((iv[0].0.to_degrees() - 10.0).abs() < 1e-9, "{iv:?}");
        assert!((iv[0].1.to_degrees() - 50.0).abs() < 1e-9, "{iv:?}");
        assert!(p.intervals_at(-0.1).unwrap().is_empty());
    }
}
