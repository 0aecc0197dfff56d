//! The Gaussian averaging kernel used by kernel gridding, and its degree response. (Not to be
//! confused with `sht::kernel`, the inner loops of the transforms.)
//!
//! Kernel (Jekeli 1981, OSU Report 327, the isotropic Gaussian on the sphere; also Wahr et al.
//! 1998, JGR 103:30205): w(ψ) = exp(−b (1 − cos ψ)), b = ln 2 / (1 − cos(r½/R)), so the weight
//! is exactly ½ at the half-width r½ (distance along the surface). kugel truncates it at the
//! search radius: w = 0 for ψ > ψ_cut.
//!
//! **Half-width convention:** `kugel grid --radius-km R` searches within R and uses the
//! half-width r½ = R/2, so the weight at the edge of the search cap is 2^(−4cos²(r½/2R)) ≈ 1/16.
//!
//! For dense, even sampling the normalised weighted mean is the convolution of the field with
//! the normalised kernel, which multiplies degree l by (Funk–Hecke theorem; common practice)
//! W_l = ∫₀^ψcut w(ψ) P_l(cos ψ) sin ψ dψ / ∫₀^ψcut w(ψ) sin ψ dψ.

use crate::sht::legendre::polynomial::legendre_polynomials;

/// The search-radius to half-width ratio of kernel gridding (see the module doc).
pub const RADIUS_PER_HALF_WIDTH: f64 = 2.0;

/// A truncated Gaussian kernel on the unit sphere.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GaussianKernel {
    /// Half-width r½/R (weight ½), radians.
    pub half_width_rad: f64,
    /// Truncation angle ψ_cut, radians.
    pub cutoff_rad: f64,
    /// b = ln 2 / (1 − cos(half-width)).
    pub b: f64,
}

impl GaussianKernel {
    /// The kernel of `kugel grid --radius-km`: cut-off at the radius, half-width radius/2.
    pub fn for_search_radius(radius_km: f64, body_radius_m: f64) -> GaussianKernel {
        let cutoff_rad = radius_km * 1000.0 / body_radius_m;
        Self::new(cutoff_rad / RADIUS_PER_HALF_WIDTH, cutoff_rad)
    }

    pub fn new(half_width_rad: f64, cutoff_rad: f64) -> GaussianKernel {
        // 1 − cos h = 2 sin²(h/2) keeps precision for small h.
        let one_minus_cos = 2.0 * (0.5 * half_width_rad).sin().powi(2);
        GaussianKernel {
            half_width_rad,
            cutoff_rad,
            b: std::f64::consts::LN_2 / one_minus_cos,
        }
    }

    /// Weight at the central angle ψ (radians), zero beyond the cut-off.
    pub fn weight(&self, psi_rad: f64) -> f64 {
        if psi_rad > self.cutoff_rad {
            return 0.0;
        }
        let one_minus_cos = 2.0 * (0.5 * psi_rad).sin().powi(2);
        (-self.b * one_minus_cos).exp()
    }

    /// Weight from the squared chord between unit vectors (1 − cos ψ = chord²/2); the caller
    /// has already restricted the search to the cut-off.
    #[inline]
    pub fn weight_from_chord_squared(&self, chord_squared: f64) -> f64 {
        (-0.5 * self.b * chord_squared).exp()
    }

    /// Degree response W_0..=W_lmax of the normalised truncated kernel, by Gauss–Legendre
    /// quadrature in x = cos ψ over [cos ψ_cut, 1] with the Legendre polynomials of
    /// [`crate::sht::legendre::polynomial`] (Bonnet's recursion, A&S 8.5.3). W_0 = 1.
    pub fn degree_response(&self, lmax: usize) -> Vec<f64> {
        let n = 64 + 2 * lmax + (4.0 * self.b.sqrt()) as usize;
        let (nodes, weights) = crate::sht::gauss_legendre::nodes_and_weights(n.min(20_000));
        let x0 = self.cutoff_rad.min(std::f64::consts::PI).cos();
        let half = 0.5 * (1.0 - x0);
        let mut num = vec![0.0; lmax + 1];
        for (&t, &wq) in nodes.iter().zip(&weights) {
            let x = x0 + half * (t + 1.0);
            let w = wq * half * (-self.b * (1.0 - x)).exp();
            let p = legendre_polynomials(lmax, x);
            for (acc, pl) in num.iter_mut().zip(&p) {
                *acc += w * pl;
            }
        }
        let norm = num[0];
        num.iter().map(|v| v / norm).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weight_is_half_at_half_width() {
        let k = GaussianKernel::for_search_radius(200.0, 6_371_000.0);
        let h = 100_000.0 / 6_371_000.0;
        assert!((k.weight(h) - 0.5).abs() < 1e-12);
        // at the edge 1 − cos 2h = 4 cos²(h/2)(1 − cos h), so w = 2^(−4cos²(h/2)) ≈ 1/16
        let edge = 2f64.powf(-4.0 * (0.5 * h).cos().powi(2));
        assert!((k.weight(2.0 * h * 0.999_999_9) - edge).abs() < 1e-6);
        assert!((edge - 1.0 / 16.0).abs() < 1e-4);
        assert_eq!(k.weight(2.0 * h * 1.0001), 0.0);
        // chord form agrees with the angle form (1 − cos ψ = c²/2)
        let c = crate::observe::spatial::chord_from_angle(0.7 * h);
        assert!((k.weight_from_chord_squared(c * c) - k.weight(0.7 * h)).abs() < 1e-14);
    }

    #[test]
    fn response_matches_planar_gaussian_limit() {
        // For a narrow kernel the sphere is locally flat: an untruncated Gaussian of
        // half-width h has W_l ≈ exp(−l(l+1)/(2b)) (the 2-D Fourier transform of a Gaussian of variance 1/b;
        // exp(−b(1−cosψ)) ≈ exp(−bψ²/2)). Truncation at 2h keeps 1 − 1/16 of the mass
        // profile, so compare a kernel cut at 6h where the tail is negligible.
        let h = 0.01;
        let k = GaussianKernel::new(h, 6.0 * h);
        let w = k.degree_response(200);
        for l in [0usize, 10, 50, 100, 200] {
            let expected = (-((l * (l + 1)) as f64) / (2.0 * k.b)).exp();
            assert!(
                (w[l] - expected).abs() < 2e-3,
                "l={l}: {} vs {expected}",
                w[l]
            );
        }
    }
}
