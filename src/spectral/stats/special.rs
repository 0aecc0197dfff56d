//! Special functions the distributions are built on: ln Γ, the Stirling remainder, digamma,
//! trigamma, ln(1+t) − t, and a rough normal quantile used only as a starting guess.
//!
//! Large arguments use the Stirling and asymptotic series (Abramowitz & Stegun 6.1.41, 6.3.18,
//! 6.4.12; DLMF §5.11); small ones are shifted up with the recurrences Γ(z+1) = zΓ(z),
//! ψ(z+1) = ψ(z) + 1/z, ψ'(z+1) = ψ'(z) − 1/z² (DLMF 5.5.1, 5.5.2).

/// ½ ln(2π).
const HALF_LN_2PI: f64 = 0.918_938_533_204_672_8;

/// Arguments at or above this use the asymptotic series directly.
const ASYMPTOTIC_FROM: f64 = 10.0;

/// The digamma and trigamma series are truncated after the z^-10 term; at z ≥ 20 the first
/// omitted term is below 1e-17.
const POLYGAMMA_ASYMPTOTIC_FROM: f64 = 20.0;

/// Stirling remainder se(z) = ln Γ(z) − [(z − ½) ln z − z + ½ ln 2π], for z > 0.
///
/// Kept separate from ln Γ because the incomplete gamma and beta prefactors need it without
/// the large terms that cancel (Temme 1996, *Special Functions*, §3.6; DLMF 5.11.1).
pub fn stirling_error(z: f64) -> f64 {
    debug_assert!(z > 0.0);
    if z >= ASYMPTOTIC_FROM {
        // DLMF 5.11.1 with B_2k/(2k(2k−1)): 1/12, −1/360, 1/1260, −1/1680, 1/1188, −691/360360, 1/156.
        let r = 1.0 / z;
        let r2 = r * r;
        r * (1.0 / 12.0
            + r2 * (-1.0 / 360.0
                + r2 * (1.0 / 1260.0
                    + r2 * (-1.0 / 1680.0
                        + r2 * (1.0 / 1188.0 + r2 * (-691.0 / 360_360.0 + r2 * (1.0 / 156.0)))))))
    } else {
        ln_gamma(z) - ((z - 0.5) * z.ln() - z + HALF_LN_2PI)
    }
}

/// ln Γ(z) for z > 0.
pub fn ln_gamma(z: f64) -> f64 {
    debug_assert!(z > 0.0);
    if z >= ASYMPTOTIC_FROM {
        return (z - 0.5) * z.ln() - z + HALF_LN_2PI + stirling_error(z);
    }
    // Shift up: ln Γ(z) = ln Γ(z + n) − ln(z (z+1) … (z+n−1)).
    let mut shifted = z;
    let mut product = 1.0;
    while shifted < ASYMPTOTIC_FROM {
        product *= shifted;
        shifted += 1.0;
    }
    ln_gamma(shifted) - product.ln()
}

/// Digamma ψ(z) = d ln Γ / dz for z > 0 (asymptotic series A&S 6.3.18 after shifting).
pub fn digamma(z: f64) -> f64 {
    debug_assert!(z > 0.0);
    let mut z = z;
    let mut acc = 0.0;
    while z < POLYGAMMA_ASYMPTOTIC_FROM {
        acc -= 1.0 / z;
        z += 1.0;
    }
    let r2 = 1.0 / (z * z);
    acc + z.ln()
        - 0.5 / z
        - r2 * (1.0 / 12.0
            - r2 * (1.0 / 120.0 - r2 * (1.0 / 252.0 - r2 * (1.0 / 240.0 - r2 * (1.0 / 132.0)))))
}

/// Trigamma ψ'(z) for z > 0 (asymptotic series A&S 6.4.12 after shifting).
pub fn trigamma(z: f64) -> f64 {
    debug_assert!(z > 0.0);
    let mut z = z;
    let mut acc = 0.0;
    while z < POLYGAMMA_ASYMPTOTIC_FROM {
        acc += 1.0 / (z * z);
        z += 1.0;
    }
    let r = 1.0 / z;
    let r2 = r * r;
    acc + r
        + 0.5 * r2
        + r * r2
            * (1.0 / 6.0
                - r2 * (1.0 / 30.0 - r2 * (1.0 / 42.0 - r2 * (1.0 / 30.0 - r2 * (5.0 / 66.0)))))
}

/// ln(1 + t) − t for t > −1, accurate also for small |t| where the two terms nearly cancel.
///
/// For |t| < ½ it uses ln(1+t) = 2 atanh(u), u = t/(2+t), so that
/// ln(1+t) − t = −2u²/(1−u) + 2(u³/3 + u⁵/5 + …), a series in u² ≤ 0.04.
pub fn ln_1p_minus(t: f64) -> f64 {
    if t.abs() >= 0.5 {
        return t.ln_1p() - t;
    }
    let u = t / (2.0 + t);
    let u2 = u * u;
    let mut term = u * u2;
    let mut sum = 0.0;
    let mut k = 3.0;
    loop {
        let add = term / k;
        sum += add;
        if add.abs() <= 1e-17 * sum.abs() {
            break;
        }
        term *= u2;
        k += 2.0;
    }
    -2.0 * u2 / (1.0 - u) + 2.0 * sum
}

/// a·[ln r − (r − 1)] with r = x/x₀, given t = r − 1 computed carefully by the caller and r itself.
///
/// Near r = 1 the series form is used; far from it the logarithm of r is taken directly so that
/// tiny r (where 1 + t has lost its digits) stays accurate.
pub(crate) fn scaled_log_deviation(a: f64, t: f64, r: f64) -> f64 {
    if t.abs() < 0.5 {
        a * ln_1p_minus(t)
    } else {
        a * (r.ln() - t)
    }
}

/// Rough standard normal quantile (Abramowitz & Stegun 26.2.23, |error| < 4.5e-4).
///
/// Used only as the starting point of the Newton iterations that solve for exact quantiles.
pub fn normal_quantile_rough(p: f64) -> f64 {
    let (q, sign) = if p < 0.5 { (p, -1.0) } else { (1.0 - p, 1.0) };
    let q = q.max(1e-300);
    let t = (-2.0 * q.ln()).sqrt();
    let z = t
        - (2.515_517 + 0.802_853 * t + 0.010_328 * t * t)
            / (1.0 + 1.432_788 * t + 0.189_269 * t * t + 0.001_308 * t * t * t);
    sign * z
}

/// ½ ln(2π), exposed for the prefactors.
pub(crate) fn half_ln_2pi() -> f64 {
    HALF_LN_2PI
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn ln_gamma_known_values() {
        // from memory / DLMF 5.4: Γ(1/2) = √π, Γ(5) = 24, Γ(10.5) = 1133278.3889487855...
        assert!((ln_gamma(0.5) - PI.sqrt().ln()).abs() < 4e-15);
        assert!((ln_gamma(5.0) - 24f64.ln()).abs() < 4e-15);
        assert!((ln_gamma(1.0)).abs() < 4e-15);
        assert!((ln_gamma(2.0)).abs() < 4e-15);
        // ln Γ(100) = ln(99!) = 359.1342053695754 (common practice, factorial tables)
        assert!((ln_gamma(100.0) - 359.134_205_369_575_4).abs() < 1e-12);
    }

    #[test]
    fn digamma_and_trigamma_known_values() {
        // DLMF 5.4.12: ψ(1) = −γ; DLMF 5.15.2: ψ'(1) = π²/6; ψ'(1/2) = π²/2
        let euler_gamma = 0.577_215_664_901_532_9;
        assert!((digamma(1.0) + euler_gamma).abs() < 1e-14);
        assert!((trigamma(1.0) - PI * PI / 6.0).abs() < 1e-14);
        assert!((trigamma(0.5) - PI * PI / 2.0).abs() < 1e-13);
        // DLMF 5.4.13: ψ(1/2) = −γ − 2 ln 2
        assert!((digamma(0.5) + euler_gamma + 2.0 * 2f64.ln()).abs() < 1e-14);
    }

    #[test]
    fn ln_1p_minus_matches_direct_where_direct_is_accurate() {
        for &t in &[-0.49, -0.3, -1e-3, 1e-3, 0.2, 0.49] {
            let direct = (1.0f64 + t).ln() - t;
            assert!((ln_1p_minus(t) - direct).abs() < 1e-15, "t = {t}");
        }
        // Taylor series −t²/2 + t³/3 − t⁴/4 for tiny t (Taylor, common practice)
        let t = 1e-6;
        let expect = -t * t / 2.0 + t * t * t / 3.0 - t * t * t * t / 4.0;
        assert!((ln_1p_minus(t) - expect).abs() < 1e-27);
    }
}
