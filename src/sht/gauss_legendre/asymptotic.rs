//! The O(n) rule: each node from Bogaert's asymptotic expansion, polished by a Newton step on
//! the Stieltjes series of P_n, which also gives the weight. O(1) work per node.
//!
//! Nodes (Bogaert 2014, "Iteration-free computation of Gauss–Legendre quadrature nodes and
//! weights", SIAM J. Sci. Comput. 36:A1008–A1026, §3): with v = n + ½, the k-th zero j_{0,k}
//! of the Bessel function J_0 and α = j_{0,k}/v, u = cot α,
//!   θ_k = α + F_1(α) v⁻² + F_2(α) v⁻⁴ + O(v⁻⁶),
//!   F_1 = (uα − 1) / (8α),
//!   F_2 = (6α²(1 + u²) + 25 − u(31u² + 33)α³) / (384α³).
//! j_{0,k} from McMahon's expansion (Abramowitz & Stegun 1964, 9.5.12 with μ = 0), β = (k − ¼)π:
//!   j_{0,k} ≈ β + 1/(8β) − 124/(3(8β)³) + 120928/(15(8β)⁵) − 401743168/(105(8β)⁷).
//! The two terms leave an error of about 3e-14 rad at n = 100 and v⁻⁶ times less beyond, and
//! McMahon's series is only good to about 1e-12 for the lowest k used here, so each node is
//! polished.
//!
//! Polish and weight (the Stieltjes series, Szegő 1939, *Orthogonal Polynomials*, Theorem 8.21.4
//! and eq. (8.21.18); the way Hale & Townsend 2013, SIAM J. Sci. Comput. 35:A652–A674, evaluate
//! P_n in O(1)):
//!   P_n(cos θ) = C_n Σ_{m<M} h_m cos(α_m) / (2 sin θ)^{m+½} + R_M,
//!   α_m = (n + m + ½)θ − (m + ½)π/2,   h_m = Π_{j=1}^{m} (j − ½)² / (j (n + j + ½)),
//!   C_n = (4/π) Π_{j=1}^{n} j / (j + ½),
//! where |R_M| is less than twice the first omitted term (with |cos| replaced by 1). The series
//! converges for π/6 < θ < 5π/6 and is asymptotic elsewhere; a node is taken from it only when
//! its terms fall below 2⁻⁵⁶ of the first within [`MAX_TERMS`] terms (a few for most nodes,
//! from about the eighth node off each pole on), otherwise the caller uses the recursion.
//! α_0 is formed in double-double and reduced by π/2 in double-double, so the phase is right to
//! about 1e-16 even for n in the tens of thousands. One Newton step θ ← θ − P_n/P_n' follows
//! (a second only if the step was larger than 1e-8 rad) and the weight is w = 2/(dP_n/dθ)² at
//! the root, with dP_n/dθ moved from the evaluation point to the root by the Legendre equation
//! (P'' = −cot θ P' − n(n+1)P).

use super::double_double::Dd;
use std::f64::consts::{FRAC_PI_2, PI};

/// Terms of the Stieltjes series allowed before a node is handed to the recursion.
pub(super) const MAX_TERMS: usize = 40;

/// Relative size of the first omitted term at which the series is cut (2⁻⁵⁶).
const SERIES_TOLERANCE: f64 = 1.0 / 72_057_594_037_927_936.0;

/// π/2 = PIO2_HI + PIO2_LO to about 2⁻¹⁰⁷ (common practice: the two-double split of π/2).
const PIO2_HI: f64 = FRAC_PI_2;
const PIO2_LO: f64 = 6.123_233_995_736_766e-17;

/// The per-rule constants of the series for one n.
pub(super) struct StieltjesSeries {
    n: usize,
    /// C_n = (4/π) Π j/(j + ½), formed in double-double (a plain product would lose n ulp).
    c_n: f64,
}

/// P_n(cos θ)/C_n and its θ-derivative, from the series.
struct SeriesValue {
    p: f64,
    dp: f64,
}

impl StieltjesSeries {
    pub(super) fn new(n: usize) -> Self {
        let pi = Dd::from_parts(PI, 1.224_646_799_147_353_2e-16);
        let mut c = Dd::new(4.0).div(pi);
        for j in 1..=n {
            let ratio = Dd::new(2.0 * j as f64).div_f64((2 * j + 1) as f64);
            c = c.mul::<false>(ratio);
        }
        StieltjesSeries { n, c_n: c.to_f64() }
    }

    /// The series at θ ∈ (0, π/2], or `None` when it does not settle within [`MAX_TERMS`].
    fn evaluate(&self, theta: f64) -> Option<SeriesValue> {
        let nf = self.n as f64;
        let sin_t = theta.sin();
        let cot_t = theta.cos() / sin_t;
        let g = 0.5 / sin_t;
        // α_0 = (n + ½)θ − π/4 in double-double, reduced by multiples of π/2
        let a = Dd::two_prod::<false>(nf + 0.5, theta)
            .sub(Dd::from_parts(PIO2_HI / 2.0, PIO2_LO / 2.0));
        let q = (a.hi / FRAC_PI_2).round();
        let r = a
            .sub(Dd::two_prod::<false>(q, PIO2_HI))
            .sub(Dd::new(q * PIO2_LO));
        let (sr, cr) = r.hi.sin_cos();
        let (c0, s0) = (cr - sr * r.lo, sr + cr * r.lo);
        let (mut cos_m, mut sin_m) = match (q as i64).rem_euclid(4) {
            0 => (c0, s0),
            1 => (-s0, c0),
            2 => (-c0, -s0),
            _ => (s0, -c0),
        };
        // α_{m+1} = α_m + (θ − π/2)
        let (sin_b, cos_b) = ((theta - PIO2_HI) - PIO2_LO).sin_cos();
        let mut coefficient = g.sqrt(); // h_m g^{m+½}
        let (mut p, mut dp) = (0.0, 0.0);
        for m in 0..MAX_TERMS {
            let mf = m as f64;
            p += coefficient * cos_m;
            dp -= coefficient * ((nf + mf + 0.5) * sin_m + (mf + 0.5) * cot_t * cos_m);
            coefficient *= g * (mf + 0.5) * (mf + 0.5) / ((mf + 1.0) * (nf + mf + 1.5));
            // first omitted term against the first, for the value and for the derivative
            if coefficient * (nf + mf + 1.5) <= SERIES_TOLERANCE * g.sqrt() * (nf + 0.5) {
                return Some(SeriesValue { p, dp });
            }
            (cos_m, sin_m) = (cos_m * cos_b - sin_m * sin_b, sin_m * cos_b + cos_m * sin_b);
        }
        None
    }

    /// The i-th root from the north pole (i < ⌈n/2⌉) as (θ_i, w_i), or `None` where the series
    /// is not accurate enough (next to the pole).
    pub(super) fn root(&self, i: usize) -> Option<(f64, f64)> {
        let n = self.n;
        let nf = n as f64;
        let middle = n % 2 == 1 && i == n / 2;
        let mut theta = if middle {
            FRAC_PI_2
        } else {
            bogaert_colatitude(n, i + 1)
        };
        for _ in 0..4 {
            let s = self.evaluate(theta)?;
            // at the middle node of an odd rule P_n(0) = 0 exactly: no step
            let delta = if middle { 0.0 } else { -s.p / s.dp };
            if delta.abs() > 1e-8 {
                theta += delta;
                continue;
            }
            let cot_t = theta.cos() / theta.sin();
            let dp_root = s.dp * (1.0 - cot_t * delta + nf * (nf + 1.0) * delta * delta) * self.c_n;
            return Some((theta + delta, 2.0 / (dp_root * dp_root)));
        }
        None
    }
}

/// θ_k from Bogaert's expansion with two correction terms (see the module documentation).
pub(super) fn bogaert_colatitude(n: usize, k: usize) -> f64 {
    let v = n as f64 + 0.5;
    let alpha = bessel_j0_zero(k) / v;
    let u = alpha.cos() / alpha.sin();
    let a2 = alpha * alpha;
    let f1 = (u * alpha - 1.0) / (8.0 * alpha);
    let f2 = (6.0 * a2 * (1.0 + u * u) + 25.0 - u * (31.0 * u * u + 33.0) * a2 * alpha)
        / (384.0 * a2 * alpha);
    let vm2 = 1.0 / (v * v);
    alpha + vm2 * (f1 + vm2 * f2)
}

/// The k-th positive zero of J_0 (k ≥ 1) by McMahon's expansion (A&S 9.5.12, μ = 0); good to
/// about 1e-12 at k = 8 and better beyond, 2e-4 at k = 1.
pub(super) fn bessel_j0_zero(k: usize) -> f64 {
    let beta = (k as f64 - 0.25) * PI;
    let t = 1.0 / (8.0 * beta);
    let t2 = t * t;
    beta + t * (1.0 - t2 * (124.0 / 3.0 - t2 * (120_928.0 / 15.0 - t2 * 401_743_168.0 / 105.0)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mcmahon_zeros_of_j0() {
        // A&S Table 9.5: j_{0,1} = 2.404825557695773, j_{0,2} = 5.520078110286311,
        // j_{0,10} = 30.634606468431976 (from memory, to the digits printed there). McMahon's
        // series is asymptotic: with these four terms it is 2.9e-3 off at k = 1 and 3.4e-6 at
        // k = 2 (the nodes it seeds are polished, and those next to the poles take Newton's path)
        assert!((bessel_j0_zero(1) - 2.404_825_557_695_773).abs() < 5e-3);
        assert!((bessel_j0_zero(2) - 5.520_078_110_286_311).abs() < 1e-5);
        assert!((bessel_j0_zero(10) - 30.634_606_468_431_976).abs() < 1e-11);
    }

    #[test]
    fn series_matches_the_recursion_in_the_interior() {
        // P_5(cos θ) by its closed form (A&S 22.3.8: P_5 = (63x⁵ − 70x³ + 15x)/8) at θ = 1.3,
        // where the series converges fast
        let s = StieltjesSeries::new(5);
        let theta = 1.3f64;
        let x = theta.cos();
        let exact = (63.0 * x.powi(5) - 70.0 * x.powi(3) + 15.0 * x) / 8.0;
        let v = s.evaluate(theta).expect("the series converges at θ = 1.3");
        assert!(
            (v.p * s.c_n - exact).abs() < 1e-15,
            "{} vs {exact}",
            v.p * s.c_n
        );
    }
}
