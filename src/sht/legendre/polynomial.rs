//! Legendre polynomials P_l(x) by Bonnet's recursion (Abramowitz & Stegun 1964, 8.5.3):
//! (l+1) P_{l+1} = (2l+1) x P_l − l P_{l−1}, P_0 = 1, P_1 = x. Forward recursion is stable on
//! [−1, 1] for the polynomials (|P_l| ≤ 1 there).

/// P_l(x).
pub fn legendre_polynomial(l: usize, x: f64) -> f64 {
    let (p, _) = legendre_polynomial_pair(l, x);
    p
}

/// (P_l(x), P_{l−1}(x)); P_{−1} is taken as 0.
pub fn legendre_polynomial_pair(l: usize, x: f64) -> (f64, f64) {
    if l == 0 {
        return (1.0, 0.0);
    }
    let (mut prev, mut p) = (1.0, x);
    for k in 1..l {
        let kf = k as f64;
        let next = ((2.0 * kf + 1.0) * x * p - kf * prev) / (kf + 1.0);
        prev = p;
        p = next;
    }
    (p, prev)
}

/// P_0(x) .. P_lmax(x).
pub fn legendre_polynomials(lmax: usize, x: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(lmax + 1);
    out.push(1.0);
    if lmax == 0 {
        return out;
    }
    out.push(x);
    for k in 1..lmax {
        let kf = k as f64;
        let next = ((2.0 * kf + 1.0) * x * out[k] - kf * out[k - 1]) / (kf + 1.0);
        out.push(next);
    }
    out
}
