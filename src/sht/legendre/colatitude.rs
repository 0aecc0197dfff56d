//! cos θ and sin θ of a colatitude, with cos θ carried as an unevaluated sum `t + t_lo`.
//!
//! Near the poles fl(cos θ) is off by up to half an ulp of 1, which acts like a colatitude
//! error of about ε/θ and, through l·θ, costs low orders far more accuracy than the
//! recursion's own arithmetic. The low part `t_lo` = cos θ − fl(cos θ) is recovered from
//! 1 − cos θ = 2 sin²(θ/2), which keeps relative accuracy in the small quantity 1 − cos θ
//! (common practice for arguments near the poles); every column recursion in `sht` (the scalar
//! reference, the block kernels, point synthesis) adds a_lm · t_lo · P̄_{l−1,m} to its step.

use std::f64::consts::{FRAC_PI_3, PI};

/// The part of π beyond fl(π): π − fl(π) ≈ 1.2246e-16 (common practice; the test checks it
/// against sin(fl(π)), which equals π − fl(π) to within 1e-48).
const PI_LO: f64 = 1.2246467991473532e-16;

/// cos θ = `t` + `t_lo` and sin θ = `u` ≥ 0 for a colatitude θ in [0, π].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColatitudeCos {
    /// fl(cos θ).
    pub t: f64,
    /// cos θ − `t`: zero where fl(cos θ) is already accurate relative to sin θ
    /// (π/3 ≤ θ ≤ 2π/3), otherwise the rounding error of `t` to about ε² relative.
    pub t_lo: f64,
    /// |sin θ|.
    pub u: f64,
}

impl ColatitudeCos {
    /// The split of cos θ for colatitude `theta_rad` (a double taken as exact).
    pub fn new(theta_rad: f64) -> Self {
        let t = theta_rad.cos();
        ColatitudeCos {
            t,
            t_lo: cos_low_part(theta_rad, t),
            u: theta_rad.sin().abs(),
        }
    }
}

/// cos θ − `t` for `t` = fl(cos θ).
///
/// Northern cap (θ < π/3): cos θ = 1 − 2s², s = sin(θ/2), with the product 2s² split exactly
/// by a fused multiply–add; 1 − t is exact (Sterbenz, t ∈ [½, 1]) and so is its difference with
/// the high part of 2s² (both ≈ θ²/2). Southern cap (θ > 2π/3): the same with θ' = π − θ,
/// formed as (fl(π) − θ) + (π − fl(π)) (the first difference is exact by Sterbenz), and
/// cos θ = −cos θ'. Zero elsewhere, and outside [0, π].
pub fn cos_low_part(theta_rad: f64, t: f64) -> f64 {
    if (0.0..FRAC_PI_3).contains(&theta_rad) {
        // cos θ − t = (1 − t) − 2s²
        let (d_hi, d_lo) = twice_sin_half_squared(theta_rad);
        ((1.0 - t) - d_hi) - d_lo
    } else if theta_rad > PI - FRAC_PI_3 && theta_rad <= PI {
        // cos θ − t = −(1 − 2s'²) − t = 2s'² − (1 + t)
        let mirror = (PI - theta_rad) + PI_LO;
        let (d_hi, d_lo) = twice_sin_half_squared(mirror);
        -(((1.0 + t) - d_hi) - d_lo)
    } else {
        0.0
    }
}

/// 2 sin²(θ/2) as an exact sum of two doubles (the second by FMA). `mul_add` is exact on every
/// target (a software call where the CPU lacks FMA, which is rare here: once per ring).
fn twice_sin_half_squared(theta_rad: f64) -> (f64, f64) {
    let s = (0.5 * theta_rad).sin();
    let d_hi = 2.0 * s * s;
    let d_lo = (2.0 * s).mul_add(s, -d_hi);
    (d_hi, d_lo)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Maclaurin series of 1 − cos θ (any calculus text), accurate to ~1e-19 relative for
    /// θ ≤ 0.1 with five terms; without the low part the error would be up to ε/θ² ≈ 1e-8.
    fn one_minus_cos_series(theta: f64) -> f64 {
        theta.powi(2) / 2.0 - theta.powi(4) / 24.0 + theta.powi(6) / 720.0 - theta.powi(8) / 40320.0
            + theta.powi(10) / 3628800.0
    }

    #[test]
    fn low_part_restores_one_minus_cos_near_the_north_pole() {
        for &theta in &[1e-4f64, 1e-3, 3.7e-3, 0.02, 0.1] {
            let c = ColatitudeCos::new(theta);
            let restored = (1.0 - c.t) - c.t_lo;
            let series = one_minus_cos_series(theta);
            assert!(
                ((restored - series) / series).abs() < 4.0 * f64::EPSILON,
                "θ = {theta}: {restored:e} vs {series:e}"
            );
        }
    }

    #[test]
    fn low_part_restores_one_plus_cos_near_the_south_pole() {
        // θ = fl(π) − δ for small δ: the mirror colatitude is exactly δ + (π − fl(π)),
        // and 1 + cos θ = 1 − cos(mirror), from the same series (common practice).
        for &delta in &[1e-4f64, 1e-3, 3.7e-3, 0.02, 0.1] {
            let theta = PI - delta;
            let mirror = (PI - theta) + PI_LO;
            let c = ColatitudeCos::new(theta);
            let restored = (1.0 + c.t) + c.t_lo;
            let series = one_minus_cos_series(mirror);
            assert!(
                ((restored - series) / series).abs() < 4.0 * f64::EPSILON,
                "θ = π − {delta}: {restored:e} vs {series:e}"
            );
            // the correction is really needed: fl(cos θ) alone is off by far more
            assert!(c.t_lo != 0.0, "θ = π − {delta}");
        }
    }

    #[test]
    fn pi_low_part_is_the_sine_of_rounded_pi() {
        // sin(fl(π)) = sin(π − fl(π)) = (π − fl(π)) (1 − O(1e-32)) (common practice)
        assert_eq!(PI.sin(), PI_LO);
    }

    #[test]
    fn no_correction_in_the_middle_band() {
        assert_eq!(cos_low_part(1.2, 1.2f64.cos()), 0.0);
        assert_eq!(cos_low_part(1.9, 1.9f64.cos()), 0.0);
        // the poles themselves: cos 0 = 1 and cos(fl(π)) rounds to −1 with a tiny low part
        assert_eq!(ColatitudeCos::new(0.0).t_lo, 0.0);
        let south = ColatitudeCos::new(PI);
        assert_eq!(south.t, -1.0);
        assert!(south.t_lo > 0.0 && south.t_lo < 1e-31);
    }
}
