//! How a grid's rings map onto SIMD lanes.
//!
//! With equatorial symmetry (θ_j + θ_{n−1−j} = π), one lane carries a north ring and its
//! mirror: P̄_lm(−x) = (−1)^{l−m} P̄_lm(x), so one recursion serves both and the sums split
//! into even and odd l − m. Without symmetry every ring is its own lane. Lanes are sorted by
//! sin θ descending (equator first): for a fixed order the column values shrink towards the
//! poles, so once a whole block of lanes is negligible every later block is too.

use super::super::grid::Grid;

/// One lane: a ring (and possibly its mirror ring in the southern hemisphere).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lane {
    /// cos θ of the `north` ring, rounded to double.
    pub t: f64,
    /// The rounding error cos θ − `t`, computed from sin²(θ/2) where it matters (θ < π/3).
    ///
    /// Near the poles fl(cos θ) is off by up to half an ulp of 1, which acts like a colatitude
    /// error of ε/θ and, through l·θ, costs low orders far more accuracy than the recursion
    /// itself; carrying this low part through the recursion step removes that error.
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
    let lane = |j: usize, south: Option<usize>| {
        let th = grid.colatitude_rad[j];
        let t = th.cos();
        Lane {
            t,
            t_lo: cos_low_part(th, t),
            u: th.sin().abs(),
            north: j,
            south,
        }
    };
    if symmetric {
        for j in 0..n.div_ceil(2) {
            let mirror = n - 1 - j;
            let mut l = lane(j, (mirror != j).then_some(mirror));
            if mirror == j {
                l.t = 0.0;
                l.t_lo = 0.0;
                l.u = 1.0;
            }
            lanes.push(l);
        }
    } else {
        for j in 0..n {
            lanes.push(lane(j, None));
        }
    }
    lanes.sort_by(|a, b| b.u.total_cmp(&a.u));
    lanes
}

/// cos θ − `t` for `t` = fl(cos θ): cos θ = 1 − 2 sin²(θ/2), with the product 2s² split exactly
/// by FMA, so the difference keeps relative accuracy in the small quantity 1 − cos θ
/// (common practice for arguments near the poles). Zero where fl(cos θ) is already accurate
/// relative to sin θ (θ ≥ π/3) or the colatitude lies in the southern half.
pub fn cos_low_part(theta: f64, t: f64) -> f64 {
    if !(0.0..std::f64::consts::FRAC_PI_3).contains(&theta) {
        return 0.0;
    }
    let s = (0.5 * theta).sin();
    let d_hi = 2.0 * s * s;
    let d_lo = (2.0 * s).mul_add(s, -d_hi);
    // 1 − t is exact (Sterbenz, t ∈ [1/2, 1]); so is its difference with d_hi (both ≈ θ²/2)
    ((1.0 - t) - d_hi) - d_lo
}

#[cfg(test)]
mod tests {
    use super::cos_low_part;

    #[test]
    fn low_part_restores_one_minus_cos_near_the_pole() {
        // Maclaurin series of 1 − cos θ (any calculus text), accurate to ~1e-19 relative for
        // θ ≤ 0.1 with five terms; without the low part the error would be up to ε/θ² ≈ 1e-8.
        for &theta in &[1e-4f64, 1e-3, 3.7e-3, 0.02, 0.1] {
            let t = theta.cos();
            let series = theta.powi(2) / 2.0 - theta.powi(4) / 24.0 + theta.powi(6) / 720.0
                - theta.powi(8) / 40320.0
                + theta.powi(10) / 3628800.0;
            let restored = (1.0 - t) - cos_low_part(theta, t);
            assert!(
                ((restored - series) / series).abs() < 4.0 * f64::EPSILON,
                "θ = {theta}: {restored:e} vs {series:e}"
            );
        }
        // beyond π/3 and in the southern half no correction is applied
        assert_eq!(cos_low_part(1.2, 1.2f64.cos()), 0.0);
        assert_eq!(cos_low_part(2.5, 2.5f64.cos()), 0.0);
    }
}
