//! Gaussian (isotropic) smoothing on the sphere.
//!
//! Kernel of half-width r on a sphere of radius R (Jekeli 1981, "Alternative methods to smooth
//! the Earth's gravity field", OSU Report 327; Wahr, Molenaar & Bryan 1998, JGR 103:30205,
//! normalised so that its integral over the unit sphere is 1:
//!
//!   w(ψ) = b/(2π) · exp(−b(1 − cos ψ)) / (1 − e^{−2b}),   b = ln 2 / (1 − cos(r/R)),
//!
//! so that w(r/R) = w(0)/2. Its Legendre weights W_l = 2π ∫₀^π w(ψ) P_l(cos ψ) sin ψ dψ are
//! the factors applied to the coefficients of degree l (W_0 = 1).
//!
//! Jekeli's forward recursion W_{l+1} = −(2l+1)/b·W_l + W_{l−1} (W_1 = coth b − 1/b) is
//! exact in theory, but rounding errors excite the growing solution of the recurrence, which
//! swamps W_l once it is small: for r = 100 km on the Earth (b ≈ 5627) the relative error is
//! 2e-13 at degree 200, 2e-9 at 300, 5e-4 at 400 and 4e3 at 500 (measured against mpmath). It
//! is kept only as the scalar reference for the low degrees ([`weights_forward_recursion`]).
//!
//! The weights actually used come from the identity W_l = i_l(b)/i_0(b), with i_l the modified
//! spherical Bessel functions of the first kind (W_1 = coth b − 1/b = i_1(b)/i_0(b), and
//! i_{l−1} − i_{l+1} = (2l+1)/b·i_l is exactly Jekeli's recursion; DLMF §10.47 and §10.51).
//! The ratios ρ_l = W_l/W_{l−1} = i_l/i_{l−1} satisfy ρ_l = 1/((2l+1)/b + ρ_{l+1}): the
//! continued fraction of the minimal solution, evaluated backwards as in Miller's algorithm
//! (Gautschi 1967, "Computational aspects of three-term recurrence relations", SIAM Review
//! 9:24–82). Every ρ_l lies in (0, 1) and an error in ρ_{l+1} reaches ρ_l multiplied by
//! −ρ_l², so the backward pass never amplifies errors; W_l = Π_{k≤l} ρ_k is then accurate to a
//! few hundred ulps at every degree until it underflows double precision (~1e-308).
//!
//! This is deliberately not the forward (Lentz) evaluation of
//! `spectral::stats::continued_fraction`: that gives one ratio per evaluation, while one
//! backward pass gives every ρ_1..ρ_lmax at once.

use crate::error::{Error, Result};

/// Where the backward recurrence starts. Uniform asymptotics give ρ_k ≈ b/(k + √(k² + b²)),
/// i.e. ln ρ_k ≈ −asinh(k/b) (DLMF §10.41), so an error in the start value reaches degree lmax
/// damped by Π ρ_k² ≈ exp(−(N² − lmax²)/b) when N ≤ b, and faster beyond. Starting at
/// N = √(lmax² + 80 b) + 64 damps the arbitrary start ρ_{N+1} = 0 by ~e^{−80} ≈ 1e-35; the
/// extra 64 steps cover small b, where ρ_k < 1/2 for k > b and each step damps by ≥ 4.
fn start_degree(lmax: usize, b: f64) -> f64 {
    ((lmax as f64).powi(2) + 80.0 * b).sqrt().ceil() + 64.0
}

/// Backward steps allowed before refusing (the start grows like √(80 b) ≈ 12.6 R/r).
const MAX_STEPS: f64 = 1.0e8;

/// Gaussian smoothing of a given half-width (the distance at which the kernel falls to half).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GaussFilter {
    pub half_width_km: f64,
}

impl GaussFilter {
    pub fn new(half_width_km: f64) -> Result<Self> {
        if !(half_width_km.is_finite() && half_width_km > 0.0) {
            return Err(Error::invalid(format!(
                "gauss half-width must be a positive number of kilometres, got {half_width_km}"
            )));
        }
        Ok(GaussFilter { half_width_km })
    }

    /// W_0..=W_lmax on a sphere of radius `radius_m` (see [`gauss_weights`]).
    pub fn weights(&self, lmax: usize, radius_m: f64) -> Result<Vec<f64>> {
        gauss_weights(lmax, self.half_width_km * 1e3, radius_m)
    }
}

/// The kernel parameter b = ln 2 / (1 − cos(r/R)) (Jekeli 1981; Wahr et al. 1998). 1 − cos x is evaluated as 2 sin²(x/2) to keep its accuracy for small x.
pub fn kernel_parameter(half_width_m: f64, radius_m: f64) -> Result<f64> {
    if !(radius_m.is_finite() && radius_m > 0.0) {
        return Err(Error::invalid(format!(
            "gauss filter needs a positive reference radius, got {radius_m} m"
        )));
    }
    let angle = half_width_m / radius_m;
    if !(angle.is_finite() && angle > 0.0 && angle < std::f64::consts::PI) {
        return Err(Error::invalid(format!(
            "gauss half-width {:.3} km must be positive and below half the circumference \
             (π·R = {:.1} km) of the sphere of radius {:.1} km",
            half_width_m / 1e3,
            std::f64::consts::PI * radius_m / 1e3,
            radius_m / 1e3
        )));
    }
    let half = (0.5 * angle).sin();
    Ok(std::f64::consts::LN_2 / (2.0 * half * half))
}

/// Gaussian weights W_0..=W_lmax for half-width `half_width_m` on a sphere of radius
/// `radius_m`, accurate at every degree (backward ratio recurrence, see the module docs).
/// Values below the double-precision range come out as (subnormal or) zero.
pub fn gauss_weights(lmax: usize, half_width_m: f64, radius_m: f64) -> Result<Vec<f64>> {
    let b = kernel_parameter(half_width_m, radius_m)?;
    let start = start_degree(lmax, b);
    if start > MAX_STEPS {
        // W_l ≈ exp(−l(l+1)/(2b)) for l ≪ b: say how little such a kernel would change
        let change = (lmax * (lmax + 1)) as f64 / (2.0 * b);
        return Err(Error::invalid(format!(
            "gauss half-width {:.4} km is too narrow for a sphere of radius {:.1} km \
             (kernel parameter b = {b:.3e}): its weights differ from 1 by only about \
             {change:.1e} up to degree {lmax}; leave the filter out",
            half_width_m / 1e3,
            radius_m / 1e3
        )));
    }
    let ratios = ratios_backward(lmax, b, start as usize);
    let mut w = Vec::with_capacity(lmax + 1);
    let mut product = 1.0;
    w.push(1.0);
    for &rho in ratios.iter().skip(1) {
        product *= rho;
        w.push(product);
    }
    Ok(w)
}

/// ρ_l = i_l(b)/i_{l−1}(b) for l = 1..=lmax (index 0 unused, set to 1), from
/// ρ_l = 1/((2l+1)/b + ρ_{l+1}) run downwards from ρ_{start+1} = 0.
fn ratios_backward(lmax: usize, b: f64, start: usize) -> Vec<f64> {
    let mut ratios = vec![1.0; lmax + 1];
    let inv_b = 1.0 / b;
    let mut rho = 0.0;
    for l in (1..=start).rev() {
        rho = 1.0 / ((2 * l + 1) as f64 * inv_b + rho);
        if l <= lmax {
            ratios[l] = rho;
        }
    }
    ratios
}

/// Jekeli's forward recursion, W_{l+1} = −(2l+1)/b·W_l + W_{l−1}, W_1 = coth b − 1/b.
///
/// Scalar reference only: accurate while W_l is large (low degrees), useless once W_l is
/// small, because rounding errors excite the dominant (growing) solution of the recurrence.
pub fn weights_forward_recursion(
    lmax: usize,
    half_width_m: f64,
    radius_m: f64,
) -> Result<Vec<f64>> {
    let b = kernel_parameter(half_width_m, radius_m)?;
    let mut w = vec![1.0; lmax + 1];
    if lmax >= 1 {
        let e = (-2.0 * b).exp();
        w[1] = (1.0 + e) / (1.0 - e) - 1.0 / b;
    }
    for l in 1..lmax {
        w[l + 1] = -((2 * l + 1) as f64) / b * w[l] + w[l - 1];
    }
    Ok(w)
}

#[cfg(test)]
mod tests {
    use super::*;

    const EARTH_M: f64 = 6_371_000.0;

    #[test]
    fn first_weight_matches_closed_form() {
        // Jekeli (1981): W_1 = coth b − 1/b
        for r_km in [50.0, 300.0, 2000.0] {
            let b = kernel_parameter(r_km * 1e3, EARTH_M).unwrap();
            let w = gauss_weights(3, r_km * 1e3, EARTH_M).unwrap();
            let expect = 1.0 / b.tanh() - 1.0 / b;
            assert!(
                (w[1] - expect).abs() < 1e-14,
                "{r_km}: {} vs {expect}",
                w[1]
            );
        }
    }

    #[test]
    fn agrees_with_forward_recursion_while_weights_are_large() {
        // the two methods share nothing but the recurrence; forward is exact in the low degrees
        let w = gauss_weights(30, 500e3, EARTH_M).unwrap();
        let f = weights_forward_recursion(30, 500e3, EARTH_M).unwrap();
        for l in 0..=30 {
            assert!((w[l] - f[l]).abs() < 1e-11, "l={l}: {} vs {}", w[l], f[l]);
        }
    }

    #[test]
    fn forward_recursion_fails_where_backward_stays_put() {
        // the reason this module does not use the textbook recursion: at r = 100 km it
        // leaves [0, 1] long before degree 1000, while the stable weights keep decreasing.
        let f = weights_forward_recursion(1000, 100e3, EARTH_M).unwrap();
        assert!(f.iter().any(|v| !(0.0..=1.0).contains(v)));
        let w = gauss_weights(1000, 100e3, EARTH_M).unwrap();
        assert!(w.windows(2).all(|p| p[1] < p[0] && p[1] >= 0.0));
    }

    #[test]
    fn result_does_not_depend_on_the_start_of_the_backward_pass() {
        // Miller's algorithm: starting much higher must not change the weights
        for (r_km, lmax) in [(100.0, 2000), (1.0, 3000), (2000.0, 500), (30.0, 10)] {
            let b = kernel_parameter(r_km * 1e3, EARTH_M).unwrap();
            let n = start_degree(lmax, b) as usize;
            let a = ratios_backward(lmax, b, n);
            let far = ratios_backward(lmax, b, 4 * n + 1000);
            for l in 1..=lmax {
                assert!((a[l] / far[l] - 1.0).abs() < 1e-15, "r={r_km} l={l}");
            }
        }
    }

    #[test]
    fn rejects_bad_half_widths() {
        assert!(GaussFilter::new(0.0).is_err());
        assert!(GaussFilter::new(f64::NAN).is_err());
        let msg = gauss_weights(10, 3.0e7, EARTH_M).unwrap_err().to_string();
        assert!(msg.contains("half the circumference"), "{msg}");
        // 0.5 m on the Earth: b = 2.25e14, weights within 3e-7 of 1 up to degree 10 800
        let msg = gauss_weights(10_800, 0.5, EARTH_M).unwrap_err().to_string();
        assert!(
            msg.contains("too narrow") && msg.contains("2.6e-7"),
            "{msg}"
        );
    }
}
