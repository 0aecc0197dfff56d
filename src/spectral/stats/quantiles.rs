//! Distribution functions and quantiles of the χ², Student-t and F distributions.
//!
//! χ²(ν): F(x) = P(ν/2, x/2) (DLMF 8.2.4 with 26.4.19 of Abramowitz & Stegun).
//! Student t(ν): P(T > t) = ½ I_{ν/(ν+t²)}(ν/2, ½) for t > 0 (A&S 26.7.1, DLMF 8.17 context).
//! F(d₁, d₂): F(f) = I_x(d₁/2, d₂/2) with x = d₁f/(d₁f + d₂) (A&S 26.6.2).
//!
//! Quantiles are found by safeguarded Newton iteration in a logarithmic variable: u = ln x
//! for χ² (dP/du = x^a e^{−x}/Γ(a)) and u = ln(x/(1−x)) for the beta-based laws
//! (dI/du = x^a (1−x)^b/B(a,b)). Each step either stays inside the current sign bracket or
//! falls back to bisection, so it converges for every ν from 1 to ~1e6; the lower or the upper
//! tail function is used, whichever is the smaller probability, so both tails keep their
//! relative accuracy (checked against scipy.stats to 1e-10 in `tests/spectral_quantiles.rs`).

use super::beta::{ln_beta_prefactor, regularized_beta};
use super::gamma::{ln_gamma_prefactor, regularized_gamma};
use super::special::normal_quantile_rough;
use crate::error::{Error, Result};

fn check_probability(p: f64) -> Result<()> {
    if p > 0.0 && p < 1.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "probability must lie strictly between 0 and 1, got {p}"
        )))
    }
}

fn check_dof(name: &str, dof: f64) -> Result<()> {
    if dof > 0.0 && dof.is_finite() {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "{name} degrees of freedom must be positive and finite, got {dof}"
        )))
    }
}

/// P(X ≤ x) for X ~ χ²(dof).
pub fn chi2_cdf(x: f64, dof: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    regularized_gamma(0.5 * dof, 0.5 * x).0
}

/// P(X > x) for X ~ χ²(dof), accurate in the far upper tail.
pub fn chi2_sf(x: f64, dof: f64) -> f64 {
    if x <= 0.0 {
        return 1.0;
    }
    regularized_gamma(0.5 * dof, 0.5 * x).1
}

/// The p-quantile of χ²(dof): the x with P(X ≤ x) = p.
pub fn chi2_quantile(p: f64, dof: f64) -> Result<f64> {
    check_probability(p)?;
    check_dof("chi-squared", dof)?;
    let a = 0.5 * dof;
    // Wilson–Hilferty start (A&S 26.4.17).
    let z = normal_quantile_rough(p);
    let h = 2.0 / (9.0 * dof);
    let wh = dof * (1.0 - h + z * h.sqrt()).powi(3);
    let start = if wh > 0.0 {
        (0.5 * wh).ln()
    } else {
        (0.5 * dof).ln() - 3.0
    };
    let u = solve_increasing(start, |u| {
        let x = u.exp();
        let (lower, upper) = regularized_gamma(a, x);
        let slope = ln_gamma_prefactor(a, x).exp();
        (tail_residual(p, lower, upper), slope)
    })?;
    Ok(2.0 * u.exp())
}

/// The p-quantile of Student's t with `dof` degrees of freedom.
pub fn student_t_quantile(p: f64, dof: f64) -> Result<f64> {
    check_probability(p)?;
    check_dof("Student-t", dof)?;
    if p == 0.5 {
        return Ok(0.0);
    }
    // For t > 0: P(T > t) = ½ I_x(ν/2, ½), x = ν/(ν + t²). Solve I_x = 2·min(p, 1−p).
    let upper_tail = if p > 0.5 { 1.0 - p } else { p };
    let target = 2.0 * upper_tail;
    let (x, y) = beta_quantile(0.5 * dof, 0.5, target)?;
    let t = (dof * y / x).sqrt();
    Ok(if p > 0.5 { t } else { -t })
}

/// The p-quantile of Snedecor's F with (d1, d2) degrees of freedom.
pub fn f_quantile(p: f64, d1: f64, d2: f64) -> Result<f64> {
    check_probability(p)?;
    check_dof("F numerator", d1)?;
    check_dof("F denominator", d2)?;
    let (x, y) = beta_quantile(0.5 * d1, 0.5 * d2, p)?;
    Ok(d2 * x / (d1 * y))
}

/// P(F ≤ f) for F ~ F(d1, d2).
pub fn f_cdf(f: f64, d1: f64, d2: f64) -> f64 {
    if f <= 0.0 {
        return 0.0;
    }
    let denom = d1 * f + d2;
    regularized_beta(0.5 * d1, 0.5 * d2, d1 * f / denom, d2 / denom).0
}

/// P(T ≤ t) for Student's t with `dof` degrees of freedom.
pub fn student_t_cdf(t: f64, dof: f64) -> f64 {
    let t2 = t * t;
    let denom = dof + t2;
    let half_tail = 0.5 * regularized_beta(0.5 * dof, 0.5, dof / denom, t2 / denom).0;
    if t > 0.0 {
        1.0 - half_tail
    } else {
        half_tail
    }
}

/// The x (with y = 1 − x) where I_x(a, b) = p, both returned with full relative accuracy.
pub fn beta_quantile(a: f64, b: f64, p: f64) -> Result<(f64, f64)> {
    check_probability(p)?;
    let n = a + b;
    let mean = a / n;
    let sd = (a * b / (n * n * (n + 1.0))).sqrt();
    let guess =
        (mean + normal_quantile_rough(p) * sd).clamp(1e-3 * mean, 1.0 - 1e-3 * (1.0 - mean));
    let start = (guess / (1.0 - guess)).ln();
    let u = solve_increasing(start, |u| {
        let (x, y) = logistic_pair(u);
        let (lower, upper) = regularized_beta(a, b, x, y);
        let slope = ln_beta_prefactor(a, b, x, y).exp();
        (tail_residual(p, lower, upper), slope)
    })?;
    Ok(logistic_pair(u))
}

/// (x, 1 − x) for x = 1/(1 + e^{−u}), each without cancellation.
fn logistic_pair(u: f64) -> (f64, f64) {
    if u >= 0.0 {
        let e = (-u).exp();
        (1.0 / (1.0 + e), e / (1.0 + e))
    } else {
        let e = u.exp();
        (e / (1.0 + e), 1.0 / (1.0 + e))
    }
}

/// F(u) − p, written with whichever tail probability is smaller so that it stays accurate.
fn tail_residual(p: f64, lower: f64, upper: f64) -> f64 {
    if p <= 0.5 {
        lower - p
    } else {
        (1.0 - p) - upper
    }
}

/// Root of an increasing function g(u) given as (g, g'), by Newton steps kept inside a sign
/// bracket (bisection when a step would leave it).
fn solve_increasing(start: f64, g: impl Fn(f64) -> (f64, f64)) -> Result<f64> {
    const LIMIT: f64 = 700.0;
    let (g0, _) = g(start);
    if g0 == 0.0 {
        return Ok(start);
    }
    // Bracket [lo, hi] with g(lo) < 0 < g(hi), grown geometrically from the start.
    let (mut lo, mut hi);
    let mut step = 1.0;
    if g0 < 0.0 {
        lo = start;
        hi = start + step;
        while g(hi).0 < 0.0 {
            lo = hi;
            step *= 2.0;
            hi += step;
            if hi > LIMIT {
                return Err(Error::invalid("quantile search ran out of range (upper)"));
            }
        }
    } else {
        hi = start;
        lo = start - step;
        while g(lo).0 > 0.0 {
            hi = lo;
            step *= 2.0;
            lo -= step;
            if lo < -LIMIT {
                return Err(Error::invalid("quantile search ran out of range (lower)"));
            }
        }
    }
    let mut u = if g0 < 0.0 { lo } else { hi };
    for _ in 0..400 {
        let (value, slope) = g(u);
        if value == 0.0 {
            return Ok(u);
        }
        if value < 0.0 {
            lo = u;
        } else {
            hi = u;
        }
        let newton = u - value / slope;
        let next = if slope > 0.0 && newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
        let tolerance = 2e-16 * next.abs().max(1.0);
        if (next - u).abs() <= tolerance || (hi - lo) <= tolerance {
            return Ok(next);
        }
        u = next;
    }
    Ok(u)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chi2_two_dof_is_exponential() {
        // χ²(2) is exponential with mean 2: quantile = −2 ln(1 − p) (closed form, common practice)
        for &p in &[1e-6, 0.025, 0.5, 0.95, 0.999_999] {
            let x = chi2_quantile(p, 2.0).unwrap();
            let expect = -2.0 * (-p).ln_1p();
            assert!(
                (x - expect).abs() <= 1e-13 * expect,
                "p = {p}: {x} vs {expect}"
            );
        }
    }

    #[test]
    fn t_one_dof_is_cauchy() {
        // t(1) is Cauchy: quantile = tan(π(p − ½)) (closed form, common practice)
        for &p in &[0.01, 0.3, 0.75, 0.975] {
            let t = student_t_quantile(p, 1.0).unwrap();
            let expect = (std::f64::consts::PI * (p - 0.5)).tan();
            assert!(
                (t - expect).abs() <= 1e-13 * expect.abs(),
                "p = {p}: {t} vs {expect}"
            );
        }
    }

    #[test]
    fn quantiles_invert_cdfs() {
        for &dof in &[1.0, 3.0, 41.0, 2001.0] {
            for &p in &[0.001, 0.2, 0.9, 0.999] {
                let x = chi2_quantile(p, dof).unwrap();
                assert!((chi2_cdf(x, dof) - p).abs() < 1e-13, "chi2 {dof} {p}");
                let f = f_quantile(p, dof, dof + 2.0).unwrap();
                assert!((f_cdf(f, dof, dof + 2.0) - p).abs() < 1e-13, "F {dof} {p}");
                let t = student_t_quantile(p, dof).unwrap();
                assert!((student_t_cdf(t, dof) - p).abs() < 1e-13, "t {dof} {p}");
            }
        }
    }

    #[test]
    fn bad_arguments_are_refused() {
        assert!(chi2_quantile(1.0, 3.0).is_err());
        assert!(chi2_quantile(0.5, 0.0).is_err());
        assert!(f_quantile(0.5, 1.0, -1.0).is_err());
    }
}
