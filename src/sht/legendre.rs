//! Fully normalised associated Legendre functions P̄_lm (geodesy normalisation, no
//! Condon–Shortley phase) by the recursions of Holmes & Featherstone (2002),
//! J. Geodesy 76:279–299.

/// Recursion coefficient a_lm = sqrt((2l−1)(2l+1)/((l−m)(l+m))).
#[inline]
pub fn a_lm(l: usize, m: usize) -> f64 {
    let (l, m) = (l as f64, m as f64);
    ((2.0 * l - 1.0) * (2.0 * l + 1.0) / ((l - m) * (l + m))).sqrt()
}

/// Recursion coefficient b_lm = sqrt((2l+1)(l+m−1)(l−m−1)/((l−m)(l+m)(2l−3))).
#[inline]
pub fn b_lm(l: usize, m: usize) -> f64 {
    let (l, m) = (l as f64, m as f64);
    ((2.0 * l + 1.0) * (l + m - 1.0) * (l - m - 1.0) / ((l - m) * (l + m) * (2.0 * l - 3.0))).sqrt()
}

/// P̄_lm(cos θ) for l = m..=lmax at one point, written to `out[l - m]`.
pub fn column(m: usize, lmax: usize, t: f64, u: f64, out: &mut [f64]) {
    // sectoral start
    let mut pmm = 1.0;
    for k in 1..=m {
        let kf = k as f64;
        pmm *= u * ((2.0 * kf + 1.0) / (2.0 * kf)).sqrt();
        if k == 1 {
            pmm = u * 3f64.sqrt();
        }
    }
    if m > lmax {
        return;
    }
    out[0] = pmm;
    if m + 1 <= lmax {
        out[1] = ((2 * m + 3) as f64).sqrt() * t * pmm;
    }
    for l in (m + 2)..=lmax {
        out[l - m] = a_lm(l, m) * t * out[l - m - 1] - b_lm(l, m) * out[l - m - 2];
    }
}
