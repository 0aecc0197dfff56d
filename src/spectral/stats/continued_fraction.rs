//! Continued fractions f = b₀ + a₁/(b₁ + a₂/(b₂ + a₃/(b₃ + …))) by the modified Lentz method.
//!
//! Lentz (1976), "Generating Bessel functions in Mie scattering calculations using continued
//! fractions", Applied Optics 15:668–671; modified by Thompson & Barnett (1986), "Coulomb and
//! Bessel functions of complex arguments and order", J. Comput. Phys. 64:490–509; as in
//! Numerical Recipes (3rd ed., Press et al. 2007) §5.2:
//!
//!   f₀ = b₀ (or `TINY` if b₀ = 0), C₀ = f₀, D₀ = 0,
//!   D_j = 1/(b_j + a_j D_{j−1}),  C_j = b_j + a_j / C_{j−1},  f_j = f_{j−1} C_j D_j,
//!
//! with any D or C that comes out zero replaced by `TINY`, which keeps the recurrence alive
//! through a zero partial denominator. Evaluation stops when |C_j D_j − 1| < `tolerance`, or
//! when a partial numerator a_j is zero (the fraction terminates there and f is exact).
//!
//! Callers: the incomplete gamma ([`super::gamma`]) and beta ([`super::beta`]) functions. The
//! Gaussian filter's Bessel ratios (`spectral::filter::gauss`) also come from a continued
//! fraction but need every tail ratio at once, which the backward recurrence there gives in
//! one pass; a forward method such as this one would evaluate each ratio separately.

/// Stand-in for an exact zero in C or D (Numerical Recipes §5.2).
const TINY: f64 = 1e-300;

/// Evaluates b₀ + a₁/(b₁ + a₂/(b₂ + …)), where `term(j)` returns (a_j, b_j) for j ≥ 1.
///
/// Stops after `max_terms` terms if the tolerance was not reached by then (the value of the
/// last convergent is returned).
pub fn modified_lentz(
    b0: f64,
    mut term: impl FnMut(usize) -> (f64, f64),
    tolerance: f64,
    max_terms: usize,
) -> f64 {
    let mut f = if b0 == 0.0 { TINY } else { b0 };
    let mut c = f;
    let mut d = 0.0;
    for j in 1..=max_terms {
        let (a, b) = term(j);
        if a == 0.0 {
            break;
        }
        d = b + a * d;
        if d == 0.0 {
            d = TINY;
        }
        c = b + a / c;
        if c == 0.0 {
            c = TINY;
        }
        d = 1.0 / d;
        // (f·C)·D rather than f·(C·D): after a zero denominator C and D are both ~1/TINY and
        // their product alone would overflow.
        f = f * c * d;
        let delta = c * d;
        if (delta - 1.0).abs() < tolerance {
            break;
        }
    }
    f
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn golden_ratio() {
        // 1 + 1/(1 + 1/(1 + …)) = (1 + √5)/2 (common practice). It converges slowly (the
        // error shrinks by φ² per term), so ~40 rounded products accumulate: allow 8 ulp.
        let phi = modified_lentz(1.0, |_| (1.0, 1.0), 1e-16, 1000);
        let exact = 0.5 * (1.0 + 5f64.sqrt());
        assert!((phi - exact).abs() <= 8.0 * f64::EPSILON * exact, "{phi}");
    }

    #[test]
    fn lambert_fraction_for_tan() {
        // tan x = x/(1 − x²/(3 − x²/(5 − …))) (Lambert's continued fraction, 1768; from
        // memory), compared with the library tan.
        for x in [0.1f64, 0.5, 1.0, 1.5, 3.0, -2.0] {
            let value = modified_lentz(
                0.0,
                |j| {
                    let a = if j == 1 { x } else { -x * x };
                    (a, (2 * j - 1) as f64)
                },
                1e-16,
                1000,
            );
            let exact = x.tan();
            assert!(
                (value - exact).abs() <= 8.0 * f64::EPSILON * exact.abs(),
                "x = {x}: {value} vs {exact}"
            );
        }
    }

    #[test]
    fn zero_numerator_ends_the_fraction_exactly() {
        // 2 + 3/(4 + 0/…) = 2.75
        let v = modified_lentz(
            2.0,
            |j| if j == 1 { (3.0, 4.0) } else { (0.0, 1.0) },
            1e-16,
            10,
        );
        assert_eq!(v, 2.75);
    }

    #[test]
    fn zero_partial_denominator_is_stepped_over() {
        // 0 + 1/(0 + 1/(1 + 1/(1 + …))): the first denominator is 0, the value is
        // 1/(1/φ) = φ (the golden ratio again, common practice)
        let v = modified_lentz(0.0, |j| (1.0, if j == 1 { 0.0 } else { 1.0 }), 1e-16, 1000);
        let exact = 0.5 * (1.0 + 5f64.sqrt());
        assert!((v - exact).abs() <= 8.0 * f64::EPSILON * exact, "{v}");
    }
}
