//! The reference rule: Newton's iteration on Bonnet's recursion, O(n) per node.
//!
//! Newton's iteration in θ (not in x, which loses accuracy near ±1) on P_n(cos θ), started from
//! Tricomi's asymptotic approximation of the k-th root (Tricomi 1950; see also Bogaert, Michiels
//! & Fostier 2012, SIAM J. Sci. Comput. 34:C83–C101, and Hale & Townsend 2013, SIAM J. Sci.
//! Comput. 35:A652–A674)
//!   θ_k ≈ φ_k + ... , x_k ≈ (1 − (n−1)/(8n³) − (39 − 28/sin²φ_k)/(384 n⁴)) cos φ_k,
//!   φ_k = (4k − 1)π / (4n + 2),
//! with P_n and P_{n−1} from the three-term recurrence (O(n) per node, so O(n²) per rule).
//! Weights w = 2/(dP_n/dθ)², dP_n/dθ = n(cos θ P_n − P_{n−1})/sin θ (A&S 8.5.4), the final
//! recursion carried in double-double arithmetic.
//!
//! Used for small rules, for the few nodes next to the poles in large ones, and as the
//! yardstick the fast rule is tested against.

use super::double_double::Dd;
use std::f64::consts::PI;

/// The i-th root from the north pole (i < ⌈n/2⌉): (θ_i, w_i).
pub(super) fn root(n: usize, i: usize, table: &BonnetTable) -> (f64, f64) {
    let nf = n as f64;
    let k = (i + 1) as f64;
    let phi = (4.0 * k - 1.0) * PI / (4.0 * nf + 2.0);
    let s2 = phi.sin().powi(2);
    let x0 = (1.0 - (nf - 1.0) / (8.0 * nf.powi(3)) - (39.0 - 28.0 / s2) / (384.0 * nf.powi(4)))
        * phi.cos();
    let mut theta = x0.clamp(-1.0, 1.0).acos();
    if n % 2 == 1 && i == n / 2 {
        theta = PI / 2.0;
    }
    for _ in 0..10 {
        let (p, q) = table.pair(theta.cos());
        // dP_n/dθ = n (cos θ P_n − P_{n−1}) / sin θ
        let s = theta.sin();
        let dp = nf * (theta.cos() * p - q) / s;
        let step = p / dp;
        theta -= step;
        if step.abs() <= 4.0 * f64::EPSILON * theta {
            break;
        }
    }
    // w = 2 / (dP_n/dθ)² at the root. dP_n/dθ is nearly stationary there (the Legendre
    // equation gives P_θθ = −cot θ P_θ at a root), so evaluating it at the converged θ, with
    // that first-order correction for the remaining Newton step δ, keeps the weight accurate
    // even though P_{n−1} alone is not.
    // The last step evaluates P_n at cos θ carried in double-double (`cos_double_double`): the
    // rounded fl(cos θ) would stand for a colatitude up to 1e-16/sin θ away, which next to the
    // poles is thousands of ulps of θ.
    let x = cos_double_double(theta);
    let (p, q) = table.pair_double_double(x);
    let (s, x) = (theta.sin(), x.to_f64());
    let dp = nf * (x * p - q) / s;
    let delta = -p / dp;
    let dp_root = dp * (1.0 - x / s * delta);
    (theta + delta, 2.0 / (dp_root * dp_root))
}

/// cos θ for θ ∈ [0, π/2] in double-double, accurate to a small fraction of an ulp of θ in the
/// colatitude it stands for: 1 − 2 sin²(θ/2) (exact square) below π/4, sin(π/2 − θ) with the
/// difference formed exactly above (common practice: the half-angle and complement forms).
fn cos_double_double(theta: f64) -> Dd {
    if theta < std::f64::consts::FRAC_PI_4 {
        let h = (0.5 * theta).sin();
        Dd::new(1.0).sub(Dd::two_prod::<false>(2.0 * h, h))
    } else {
        // π/2 − θ: the high part exactly (Sterbenz), then the low part of π/2
        let d = Dd::from_parts(
            std::f64::consts::FRAC_PI_2 - theta,
            6.123_233_995_736_766e-17,
        );
        let (sd, cd) = d.hi.sin_cos();
        Dd::from_parts(sd, cd * d.lo)
    }
}

/// (P_n(x), P_{n−1}(x)) by Bonnet's recursion in double-double arithmetic (Dekker 1971,
/// Numer. Math. 18:224–242): the plain recursion loses about n ulp, which would cap the weights
/// near 1e-12 at n in the thousands. Each step forms (2k+1) x p_k − k p_{k−1} exactly enough
/// and divides by k + 1 in double-double, so no rounded ratio enters.
/// Bonnet's recursion P_{k+1}(x) = α_k x P_k(x) − β_k P_{k−1}(x) with α_k = (2k+1)/(k+1) and
/// β_k = k/(k+1) (Abramowitz & Stegun 8.5.3), its coefficients tabulated once per rule (in
/// double and in double-double precision) so that the per-node loops carry no division.
pub(super) struct BonnetTable {
    n: usize,
    alpha: Vec<f64>,
    beta: Vec<f64>,
    alpha_dd: Vec<Dd>,
    beta_dd: Vec<Dd>,
}

impl BonnetTable {
    pub(super) fn new(n: usize) -> Self {
        let ks = 1..n.max(1);
        let alpha_dd: Vec<Dd> = ks
            .clone()
            .map(|k| Dd::new((2 * k + 1) as f64).div_f64((k + 1) as f64))
            .collect();
        let beta_dd: Vec<Dd> = ks
            .map(|k| Dd::new(k as f64).div_f64((k + 1) as f64))
            .collect();
        BonnetTable {
            n,
            alpha: alpha_dd.iter().map(|d| d.to_f64()).collect(),
            beta: beta_dd.iter().map(|d| d.to_f64()).collect(),
            alpha_dd,
            beta_dd,
        }
    }

    /// (P_n(x), P_{n−1}(x)) in double precision (for the Newton steps).
    fn pair(&self, x: f64) -> (f64, f64) {
        if self.n == 0 {
            return (1.0, 0.0);
        }
        let (mut prev, mut p) = (1.0, x);
        for (a, b) in self.alpha.iter().zip(&self.beta) {
            let next = a * x * p - b * prev;
            prev = p;
            p = next;
        }
        (p, prev)
    }

    /// (P_n(x), P_{n−1}(x)) carried in double-double precision, rounded at the end: the
    /// derivative in the weight formula then keeps full double accuracy at n in the tens of
    /// thousands.
    fn pair_double_double(&self, x: Dd) -> (f64, f64) {
        if cfg!(any(target_arch = "aarch64", target_feature = "fma")) {
            // the target has FMA in hardware: `mul_add` compiles to it
            return self.pair_double_double_with::<true>(x);
        }
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("fma") {
            // SAFETY: the CPU supports FMA (checked just above). This and the function below
            // are the only unsafe code of `sht` outside `kernel::unsafe_parts`.
            #[allow(unsafe_code)]
            return unsafe { self.pair_double_double_fma(x) };
        }
        self.pair_double_double_with::<false>(x)
    }

    /// The same recursion compiled with hardware FMA, whose exact products replace Dekker's
    /// splitting (both give the exact error term, so the results are identical).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "fma")]
    #[allow(unsafe_code)]
    unsafe fn pair_double_double_fma(&self, x: Dd) -> (f64, f64) {
        self.pair_double_double_with::<true>(x)
    }

    #[inline(always)]
    fn pair_double_double_with<const FMA: bool>(&self, x: Dd) -> (f64, f64) {
        if self.n == 0 {
            return (1.0, 0.0);
        }
        let mut prev = Dd::new(1.0);
        let mut p = x;
        for (a, b) in self.alpha_dd.iter().zip(&self.beta_dd) {
            let next = a.mul::<FMA>(p.mul::<FMA>(x)).sub(b.mul::<FMA>(prev));
            prev = p;
            p = next;
        }
        (p.to_f64(), prev.to_f64())
    }
}
