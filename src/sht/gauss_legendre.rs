//! Gauss–Legendre nodes and weights.
//!
//! Nodes x_j = cos θ_j are the roots of P_n; weights w_j = 2 / ((1 − x_j²) P_n'(x_j)²), Σ w_j = 2
//! (Abramowitz & Stegun 1964, 25.4.29; check values in their Table 25.4).
//!
//! Method: Newton's iteration in θ (not in x, which loses accuracy near ±1) on P_n(cos θ),
//! started from Tricomi's asymptotic approximation of the k-th root (Tricomi 1950; see also
//! Bogaert, Michiels & Fostier 2012, SIAM J. Sci. Comput. 34:C83–C101, and Hale & Townsend
//! 2013, SIAM J. Sci. Comput. 35:A652–A674)
//!   θ_k ≈ φ_k + ... , x_k ≈ (1 − (n−1)/(8n³) − (39 − 28/sin²φ_k)/(384 n⁴)) cos φ_k,
//!   φ_k = (4k − 1)π / (4n + 2),
//! with P_n and P_{n−1} from the three-term recurrence (O(n) per node, rayon over nodes).
//! Weights w = 2/(dP_n/dθ)², dP_n/dθ = n(cos θ P_n − P_{n−1})/sin θ (A&S 8.5.4).

use rayon::prelude::*;
use std::f64::consts::PI;

/// Colatitudes θ_j (ascending, north to south) and weights of the n-point rule.
pub fn colatitudes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    if n == 0 {
        return (Vec::new(), Vec::new());
    }
    let half = n.div_ceil(2);
    let table = BonnetTable::new(n);
    let north: Vec<(f64, f64)> = (0..half)
        .into_par_iter()
        .with_min_len(16)
        .map(|i| root(n, i, &table))
        .collect();
    let mut theta = vec![0.0; n];
    let mut w = vec![0.0; n];
    for (i, &(t, wi)) in north.iter().enumerate() {
        theta[i] = t;
        w[i] = wi;
        theta[n - 1 - i] = PI - t;
        w[n - 1 - i] = wi;
    }
    if n % 2 == 1 {
        theta[n / 2] = PI / 2.0;
    }
    (theta, w)
}

/// Nodes x_j = cos θ_j (descending, x_0 nearest the north pole) and weights of the n-point rule.
pub fn nodes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    let (theta, w) = colatitudes_and_weights(n);
    let half = n / 2;
    let mut x: Vec<f64> = theta.iter().map(|t| t.cos()).collect();
    // exact antisymmetry, exact zero in the middle
    for i in 0..half {
        x[n - 1 - i] = -x[i];
    }
    if n % 2 == 1 {
        x[n / 2] = 0.0;
    }
    (x, w)
}

/// The i-th root from the north pole (i < ⌈n/2⌉): (θ_i, w_i).
fn root(n: usize, i: usize, table: &BonnetTable) -> (f64, f64) {
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
    // Everything is evaluated at the rounded x = fl(cos θ) and its own sin, so the first-order
    // correction refers to the point actually used (near the poles fl(cos θ) moves θ by far
    // more than an ulp of θ).
    let x = theta.cos();
    let (p, q) = table.pair_double_double(x);
    let s = ((1.0 - x) * (1.0 + x)).sqrt();
    let dp = nf * (x * p - q) / s;
    let delta = -p / dp;
    let dp_root = dp * (1.0 - x / s * delta);
    (theta + delta, 2.0 / (dp_root * dp_root))
}

/// (P_n(x), P_{n−1}(x)) by Bonnet's recursion in double-double arithmetic (Dekker 1971,
/// Numer. Math. 18:224–242): the plain recursion loses about n ulp, which would cap the weights
/// near 1e-12 at n in the thousands. Each step forms (2k+1) x p_k − k p_{k−1} exactly enough
/// and divides by k + 1 in double-double, so no rounded ratio enters.
/// Bonnet's recursion P_{k+1}(x) = α_k x P_k(x) − β_k P_{k−1}(x) with α_k = (2k+1)/(k+1) and
/// β_k = k/(k+1) (Abramowitz & Stegun 8.5.3), its coefficients tabulated once per rule (in
/// double and in double-double precision) so that the per-node loops carry no division.
struct BonnetTable {
    n: usize,
    alpha: Vec<f64>,
    beta: Vec<f64>,
    alpha_dd: Vec<Dd>,
    beta_dd: Vec<Dd>,
}

impl BonnetTable {
    fn new(n: usize) -> Self {
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
    fn pair_double_double(&self, x: f64) -> (f64, f64) {
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
    unsafe fn pair_double_double_fma(&self, x: f64) -> (f64, f64) {
        self.pair_double_double_with::<true>(x)
    }

    #[inline(always)]
    fn pair_double_double_with<const FMA: bool>(&self, x: f64) -> (f64, f64) {
        if self.n == 0 {
            return (1.0, 0.0);
        }
        let mut prev = Dd::new(1.0);
        let mut p = Dd::new(x);
        for (a, b) in self.alpha_dd.iter().zip(&self.beta_dd) {
            let next = a.mul::<FMA>(p.mul_f64::<FMA>(x)).sub(b.mul::<FMA>(prev));
            prev = p;
            p = next;
        }
        (p.to_f64(), prev.to_f64())
    }
}

#[derive(Clone, Copy)]
struct Dd {
    hi: f64,
    lo: f64,
}

impl Dd {
    fn new(x: f64) -> Self {
        Dd { hi: x, lo: 0.0 }
    }
    fn to_f64(self) -> f64 {
        self.hi + self.lo
    }
    fn two_sum(a: f64, b: f64) -> Dd {
        let s = a + b;
        let bb = s - a;
        Dd {
            hi: s,
            lo: (a - (s - bb)) + (b - bb),
        }
    }
    fn quick_two_sum(a: f64, b: f64) -> Dd {
        let s = a + b;
        Dd {
            hi: s,
            lo: b - (s - a),
        }
    }
    /// Dekker's exact product without FMA (portable and fast on every target).
    /// Exact product a·b = hi + lo: by FMA, or by Dekker's splitting (Dekker 1971).
    #[inline(always)]
    fn two_prod<const FMA: bool>(a: f64, b: f64) -> Dd {
        let p = a * b;
        if FMA {
            return Dd {
                hi: p,
                lo: a.mul_add(b, -p),
            };
        }
        const SPLIT: f64 = 134_217_729.0; // 2^27 + 1
        let (ah, al) = {
            let t = SPLIT * a;
            let h = t - (t - a);
            (h, a - h)
        };
        let (bh, bl) = {
            let t = SPLIT * b;
            let h = t - (t - b);
            (h, b - h)
        };
        Dd {
            hi: p,
            lo: ((ah * bh - p) + ah * bl + al * bh) + al * bl,
        }
    }
    #[inline(always)]
    fn mul_f64<const FMA: bool>(self, b: f64) -> Dd {
        let p = Dd::two_prod::<FMA>(self.hi, b);
        Dd::quick_two_sum(p.hi, p.lo + self.lo * b)
    }
    fn sub(self, o: Dd) -> Dd {
        let s = Dd::two_sum(self.hi, -o.hi);
        Dd::quick_two_sum(s.hi, s.lo + (self.lo - o.lo))
    }
    /// Double-double product (Dekker 1971), dropping the lo·lo term.
    #[inline(always)]
    fn mul<const FMA: bool>(self, o: Dd) -> Dd {
        let p = Dd::two_prod::<FMA>(self.hi, o.hi);
        Dd::quick_two_sum(p.hi, p.lo + (self.hi * o.lo + self.lo * o.hi))
    }
    fn div_f64(self, b: f64) -> Dd {
        let q1 = self.hi / b;
        let r = self.sub(Dd::two_prod::<false>(q1, b));
        let q2 = r.hi / b;
        Dd::quick_two_sum(q1, q2)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_point_rule() {
        // A&S Table 25.4: n = 2, x = ±0.577350269189626 (= 1/√3), w = 1
        let (x, w) = nodes_and_weights(2);
        assert!(
            (x[0] - 3f64.sqrt().recip()).abs() <= 2.0 * f64::EPSILON,
            "{}",
            x[0] - 3f64.sqrt().recip()
        );
        assert!((w[0] - 1.0).abs() < 1e-15 && (w[1] - 1.0).abs() < 1e-15);
    }
}
