//! Gauss–Legendre nodes and weights.
//!
//! Nodes x_j are the roots of P_n, weights w_j = 2 / ((1 − x_j²) P_n'(x_j)²), Σ w_j = 2.
//! Check values: Abramowitz & Stegun (1964) Table 25.4.

/// Nodes (descending, so x_0 is nearest the north pole) and weights of the n-point rule.
pub fn nodes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        // initial guess (A&S 22.16.6-type asymptotic), refined by Newton on P_n
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (p, d) = legendre_and_derivative(n, z);
            dp = d;
            let dz = p / d;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre_and_derivative(n, z);
        dp = if d.is_finite() { d } else { dp };
        x[i] = z;
        x[n - 1 - i] = -z;
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    if n % 2 == 1 {
        x[n / 2] = 0.0;
    }
    (x, w)
}

/// P_n(x) and P_n'(x) by the three-term recurrence.
fn legendre_and_derivative(n: usize, x: f64) -> (f64, f64) {
    let mut p0 = 1.0;
    let mut p1 = x;
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (x * p1 - p0) / (x * x - 1.0);
    (p1, d)
}
