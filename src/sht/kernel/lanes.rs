//! How a grid's rings map onto SIMD lanes.
//!
//! With equatorial symmetry (θ_j + θ_{n−1−j} = π), one lane carries a north ring and its
//! mirror: P̄_lm(−x) = (−1)^{l−m} P̄_lm(x), so one recursion serves both and the sums split
//! into even and odd l − m. Without symmetry every ring is its own lane. Lanes are sorted by
//! sin θ descending (equator first): for a fixed order the column values shrink towards the
//! poles, so once a whole block of lanes is negligible every later block is too.

use crate::sht::grid::Grid;
use crate::sht::legendre::ColatitudeCos;

/// One lane: a ring (and possibly its mirror ring in the southern hemisphere).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lane {
    /// cos θ of the `north` ring, rounded to double.
    pub t: f64,
    /// The rounding error cos θ − `t` (see `legendre::colatitude`): carried through every
    /// recursion step, as in the scalar reference.
    pub t_lo: f64,
    /// sin θ (≥ 0).
    pub u: f64,
    /// Row index of the ring with colatitude θ.
    pub north: usize,
    /// Row index of the mirror ring (colatitude π − θ), if it is a different row.
    pub south: Option<usize>,
}

/// Whether the grid's latitudes are symmetric about the equator (to 8 ulp of π).
pub fn is_symmetric(grid: &Grid) -> bool {
    let n = grid.nlat();
    let tol = 8.0 * f64::EPSILON * std::f64::consts::PI;
    (0..n).all(|j| {
        (grid.colatitude_rad[j] + grid.colatitude_rad[n - 1 - j] - std::f64::consts::PI).abs()
            <= tol
    })
}

/// The lanes of a grid, equator first. `symmetric` pairs mirror rings.
pub fn build_lanes(grid: &Grid, symmetric: bool) -> Vec<Lane> {
    let n = grid.nlat();
    let mut lanes = Vec::with_capacity(n);
    if symmetric {
        for j in 0..n.div_ceil(2) {
            let mirror = n - 1 - j;
            let mut l = Lane::single(grid, j);
            l.south = (mirror != j).then_some(mirror);
            if mirror == j {
                l.t = 0.0;
                l.t_lo = 0.0;
                l.u = 1.0;
            }
            lanes.push(l);
        }
    } else {
        for j in 0..n {
            lanes.push(Lane::single(grid, j));
        }
    }
    lanes.sort_by(|a, b| b.u.total_cmp(&a.u));
    lanes
}

impl Lane {
    /// The lane of row `row` alone (no mirror ring).
    pub fn single(grid: &Grid, row: usize) -> Lane {
        let x = ColatitudeCos::new(grid.colatitude_rad[row]);
        Lane {
            t: x.t,
            t_lo: x.t_lo,
            u: x.u,
            north: row,
            south: None,
        }
    }
}
