//! Regularised incomplete beta function I_x(a, b) and its complement.
//!
//! Continued fraction DLMF 8.17.22 (Numerical Recipes 3rd ed. §6.4 `betacf`, by the modified
//! Lentz method of [`super::continued_fraction`]), used where it converges fast,
//! x < (a+1)/(a+b+2); otherwise the symmetry I_x(a, b) = 1 − I_{1−x}(b, a) (DLMF 8.17.4). The factor x^a (1−x)^b / B(a, b) is formed
//! from Stirling remainders so that no large logarithms cancel (Temme 1996, §11.3.3):
//! ln of it = a·L(x/x₀) + b·L(y/y₀) + ½ ln(ab/(2π(a+b))) − se(a) − se(b) + se(a+b), with
//! x₀ = a/(a+b), y = 1 − x, y₀ = b/(a+b), L(r) = ln r − (r − 1); the linear parts cancel exactly.

use super::continued_fraction::modified_lentz;
use super::special::{half_ln_2pi, scaled_log_deviation, stirling_error};

const MAX_ITERATIONS: usize = 1_000_000;

/// ln(x^a y^b / B(a, b)) with y = 1 − x supplied by the caller (keeps digits near x = 1).
pub fn ln_beta_prefactor(a: f64, b: f64, x: f64, y: f64) -> f64 {
    let n = a + b;
    let tx = x.mul_add(n, -a) / a;
    let ty = y.mul_add(n, -b) / b;
    scaled_log_deviation(a, tx, x * n / a)
        + scaled_log_deviation(b, ty, y * n / b)
        + 0.5 * (a * b / n).ln()
        - half_ln_2pi()
        - stirling_error(a)
        - stirling_error(b)
        + stirling_error(n)
}

/// The pair (I_x(a, b), 1 − I_x(a, b)) for a, b > 0 and 0 ≤ x ≤ 1, with y = 1 − x given
/// separately so that both tails keep full relative accuracy.
pub fn regularized_beta(a: f64, b: f64, x: f64, y: f64) -> (f64, f64) {
    assert!(
        a > 0.0 && b > 0.0 && (0.0..=1.0).contains(&x) && (0.0..=1.0).contains(&y),
        "regularized_beta needs a, b > 0 and 0 ≤ x ≤ 1 (a = {a}, b = {b}, x = {x})"
    );
    if x == 0.0 {
        return (0.0, 1.0);
    }
    if y == 0.0 {
        return (1.0, 0.0);
    }
    if x < (a + 1.0) / (a + b + 2.0) {
        let p = ln_beta_prefactor(a, b, x, y).exp() * continued_fraction(a, b, x) / a;
        (p, 1.0 - p)
    } else {
        let q = ln_beta_prefactor(b, a, y, x).exp() * continued_fraction(b, a, y) / b;
        (1.0 - q, q)
    }
}

/// I_x(a, b) with y = 1 − x computed here.
pub fn beta_i(a: f64, b: f64, x: f64) -> f64 {
    regularized_beta(a, b, x, 1.0 - x).0
}

/// The continued fraction of DLMF 8.17.22 (without the prefactor and the 1/a):
/// 1/(1 + d₁/(1 + d₂/(1 + …))) with d_{2m+1} = −(a+m)(a+b+m)x/((a+2m)(a+2m+1)) and
/// d_{2m} = m(b−m)x/((a+2m−1)(a+2m)), evaluated by [`modified_lentz`].
fn continued_fraction(a: f64, b: f64, x: f64) -> f64 {
    modified_lentz(
        0.0,
        |j| {
            if j == 1 {
                return (1.0, 1.0);
            }
            let k = j - 1;
            let m = (k / 2) as f64;
            let d = if k % 2 == 0 {
                m * (b - m) * x / ((a + 2.0 * m - 1.0) * (a + 2.0 * m))
            } else {
                -(a + m) * (a + b + m) * x / ((a + 2.0 * m) * (a + 2.0 * m + 1.0))
            };
            (d, 1.0)
        },
        1e-16,
        MAX_ITERATIONS,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_forms() {
        // DLMF 8.17.2 special cases: I_x(a, 1) = x^a, I_x(1, b) = 1 − (1−x)^b
        for &x in &[1e-6, 0.1, 0.5, 0.9, 0.999] {
            let p = beta_i(3.5, 1.0, x);
            assert!((p - x.powf(3.5)).abs() <= 1e-14 * x.powf(3.5), "x = {x}");
            let p = beta_i(1.0, 7.0, x);
            let expect = -(7.0 * (-x).ln_1p()).exp_m1();
            assert!((p - expect).abs() <= 1e-14 * expect, "x = {x}");
        }
        // I_x(1/2, 1/2) = (2/π) asin(√x) (arcsine law, common practice)
        let x: f64 = 0.3;
        let expect = 2.0 / std::f64::consts::PI * x.sqrt().asin();
        assert!((beta_i(0.5, 0.5, x) - expect).abs() < 1e-14 * expect);
    }

    #[test]
    fn symmetry_holds() {
        // DLMF 8.17.4
        let (p, q) = regularized_beta(40.0, 12.5, 0.8, 0.2);
        let (p2, q2) = regularized_beta(12.5, 40.0, 0.2, 0.8);
        assert!((p - q2).abs() < 1e-14 && (q - p2).abs() < 1e-14);
    }
}
