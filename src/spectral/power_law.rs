//! Power-law fit of a spectrum: per-coefficient power P_l = S_l/(2l+1) ≈ A · l^(−p) over a
//! degree range, as used to compare against Kaula-type rules (Kaula 1966, *Theory of Satellite
//! Geodesy*: per-coefficient RMS ≈ 1e-5/l² for Earth's gravity, i.e. A = 1e-10, p = 4).
//!
//! Method: weighted least squares of y_l = ln P̂_l − b_l on x_l = ln l. For an isotropic
//! Gaussian field ν P̂_l / P_l ~ χ²(ν) with ν = 2l+1, so ln P̂_l has mean ln P_l + b_l with
//! b_l = ψ(ν/2) − ln(ν/2) and variance ψ'(ν/2) (moments of the log of a gamma variable,
//! e.g. Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions* vol. 1, ch. 17).
//! The bias b_l is removed and the weights are 1/ψ'(ν/2). Parameter covariance is (XᵀWX)⁻¹,
//! multiplied by the reduced χ² when that exceeds 1 (the field scatters about the law more than
//! sampling alone explains), never shrunk below the sampling-theory value.

use super::stats::special::{digamma, trigamma};
use crate::error::{Error, Result};

/// Result of a power-law fit P_l = amplitude · l^(−exponent) of per-coefficient power.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerLawFit {
    /// A, in the spectrum's squared units (per-coefficient power at degree 1).
    pub amplitude: f64,
    /// One-sigma uncertainty of A (delta method from σ of ln A).
    pub amplitude_sigma: f64,
    /// p, dimensionless (positive for power falling with degree).
    pub exponent: f64,
    pub exponent_sigma: f64,
    pub lmin: usize,
    pub lmax: usize,
    /// Number of degrees that entered the fit (degrees with zero power are left out).
    pub degrees_used: usize,
    /// Weighted residual sum of squares over (degrees_used − 2).
    pub reduced_chi2: f64,
    /// Correlation between the estimates of ln A and p.
    pub correlation: f64,
}

impl PowerLawFit {
    /// Fitted per-coefficient power at degree l.
    pub fn per_coefficient_power(&self, degree: usize) -> f64 {
        self.amplitude * (degree as f64).powf(-self.exponent)
    }
}

/// Expected bias and variance of ln(χ²(ν)/ν), ν = 2l+1.
pub fn log_chi2_moments(degree: usize) -> (f64, f64) {
    let half_nu = (2 * degree + 1) as f64 / 2.0;
    (digamma(half_nu) - half_nu.ln(), trigamma(half_nu))
}

/// Fits P_l = A l^(−p) to `per_coefficient_power[l]` for lmin ≤ l ≤ lmax.
pub fn fit_power_law(
    per_coefficient_power: &[f64],
    lmin: usize,
    lmax: usize,
) -> Result<PowerLawFit> {
    let top = per_coefficient_power.len().saturating_sub(1);
    if lmin < 1 || lmin >= lmax || lmax > top {
        return Err(Error::invalid(format!(
            "power-law fit range {lmin}-{lmax} is not valid: need 1 ≤ LMIN < LMAX ≤ {top} (the model's maximum degree)"
        )));
    }
    let (mut w_sum, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    let mut points = Vec::new();
    for (l, &p) in per_coefficient_power
        .iter()
        .enumerate()
        .take(lmax + 1)
        .skip(lmin)
    {
        if !(p > 0.0 && p.is_finite()) {
            continue;
        }
        let (bias, var) = log_chi2_moments(l);
        let (x, y, w) = ((l as f64).ln(), p.ln() - bias, 1.0 / var);
        w_sum += w;
        sx += w * x;
        sy += w * y;
        sxx += w * x * x;
        sxy += w * x * y;
        points.push((x, y, w));
    }
    let n = points.len();
    if n < 3 {
        return Err(Error::invalid(format!(
            "power-law fit over degrees {lmin}-{lmax} needs at least 3 degrees with positive power, found {n}"
        )));
    }
    let det = w_sum * sxx - sx * sx;
    let slope = (w_sum * sxy - sx * sy) / det;
    let intercept = (sxx * sy - sx * sxy) / det;
    let chi2: f64 = points
        .iter()
        .map(|&(x, y, w)| w * (y - intercept - slope * x).powi(2))
        .sum();
    let reduced_chi2 = chi2 / (n - 2) as f64;
    let scale = reduced_chi2.max(1.0);
    let var_intercept = scale * sxx / det;
    let var_slope = scale * w_sum / det;
    let covariance = scale * (-sx) / det;
    let amplitude = intercept.exp();
    Ok(PowerLawFit {
        amplitude,
        amplitude_sigma: amplitude * var_intercept.sqrt(),
        exponent: -slope,
        exponent_sigma: var_slope.sqrt(),
        lmin,
        lmax,
        degrees_used: n,
        reduced_chi2,
        // cov(ln A, p) = −cov(intercept, slope)
        correlation: -covariance / (var_intercept * var_slope).sqrt(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_power_law_after_bias_is_recovered() {
        // Feed the expected value of ln P̂ (law plus bias): the fit must return the law exactly.
        let (a, p) = (3e-9, 3.2);
        let spec: Vec<f64> = (0..=60)
            .map(|l| {
                if l == 0 {
                    0.0
                } else {
                    a * (l as f64).powf(-p) * log_chi2_moments(l).0.exp()
                }
            })
            .collect();
        let fit = fit_power_law(&spec, 2, 60).unwrap();
        assert!((fit.exponent - p).abs() < 1e-12);
        assert!((fit.amplitude / a - 1.0).abs() < 1e-12);
        assert!(fit.reduced_chi2 < 1e-20);
    }

    #[test]
    fn bad_range_is_refused() {
        let spec = vec![1.0; 11];
        assert!(fit_power_law(&spec, 0, 5).is_err());
        assert!(fit_power_law(&spec, 5, 5).is_err());
        let msg = fit_power_law(&spec, 2, 20).unwrap_err().to_string();
        assert!(msg.contains("2-20") && msg.contains("10"), "{msg}");
    }
}
