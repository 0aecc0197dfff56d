//! Columns l = m..L of P̄_lm(cos θ) and their θ-derivatives at one point, stable for every θ in
//! [0, π] and every degree (extended exponents for the column start, see `recursion`).
//!
//! These columns are the yardstick of the transform kernels (`sht::reference` is built on
//! them): given the colatitude they carry the low part of cos θ (see [`super::colatitude`]) and
//! round every step like fused multiply–add hardware, so they are at least as accurate as any
//! kernel path.

use super::colatitude::ColatitudeCos;
use super::recursion::{column_start, column_step, fill_coefficients, sectoral, sectoral_factor};

/// P̄_lm(cos θ) (`geodesy`, no phase) for l = m..=lmax, written to `out[l − m]`, at the point
/// whose cosine is exactly `t` (`u = sin θ ≥ 0`).
///
/// Entries whose magnitude is below 2^-1000 are returned as 0 (they cannot change a sum of
/// order-one terms); every other entry is a full-precision value. `out` must hold at least
/// lmax − m + 1 values; nothing is written when m > lmax. Given a colatitude, prefer
/// [`column_at_colatitude`], which also carries the rounding error of fl(cos θ).
pub fn column(m: usize, lmax: usize, t: f64, u: f64, out: &mut [f64]) {
    column_split(m, lmax, ColatitudeCos { t, t_lo: 0.0, u }, out);
}

/// P̄_lm(cos θ) for l = m..=lmax at colatitude `theta_rad` (a double taken as exact), written to
/// `out[l − m]` as in [`column()`]; near the poles it is accurate to the colatitude itself, not
/// only to fl(cos θ).
pub fn column_at_colatitude(m: usize, lmax: usize, theta_rad: f64, out: &mut [f64]) {
    column_split(m, lmax, ColatitudeCos::new(theta_rad), out);
}

fn column_split(m: usize, lmax: usize, x: ColatitudeCos, out: &mut [f64]) {
    if m > lmax {
        return;
    }
    let u = x.u;
    let n = lmax - m + 1;
    let mut a = vec![0.0; lmax + 1];
    let mut b = vec![0.0; lmax + 1];
    fill_coefficients(m, lmax, &mut a, &mut b);
    column_with_coefficients(
        m,
        lmax,
        x.t,
        x.t_lo,
        sectoral(m, sectoral_factor(m), u),
        &a,
        &b,
        &mut out[..n],
    );
}

/// As [`column`] with cos θ = `t` + `t_lo`, precomputed a_lm, b_lm (indexed by l) and the
/// sectoral X-number. The column start runs on `t` alone (its values are below 2^-1000 or
/// grow monotonically, where the low part does not matter); each later step is
/// P̄_lm = a_lm (t + t_lo) P̄_{l−1,m} − b_lm P̄_{l−2,m}, see [`super::recursion::column_step`].
#[allow(clippy::too_many_arguments)]
pub(crate) fn column_with_coefficients(
    m: usize,
    lmax: usize,
    t: f64,
    t_lo: f64,
    sectoral_value: super::xnumber::XNumber,
    a: &[f64],
    b: &[f64],
    out: &mut [f64],
) {
    out.iter_mut().for_each(|v| *v = 0.0);
    let Some(start) = column_start(m, lmax, t, sectoral_value, a, b) else {
        return;
    };
    let (mut prev, mut p) = (start.p_prev, start.p);
    if start.l > m {
        out[start.l - 1 - m] = prev;
    }
    out[start.l - m] = p;
    for l in (start.l + 1)..=lmax {
        let next = column_step(a[l], b[l], t, t_lo, p, prev);
        prev = p;
        p = next;
        out[l - m] = p;
    }
}

/// P̄_lm(cos θ) for one (l, m) (`geodesy`, no phase).
pub fn geodesy_value(l: usize, m: usize, theta_rad: f64) -> f64 {
    assert!(m <= l, "order m = {m} exceeds degree l = {l}");
    let mut col = vec![0.0; l - m + 1];
    column_at_colatitude(m, l, theta_rad, &mut col);
    col[l - m]
}

/// P̄_lm and dP̄_lm/dθ for l = m..=lmax at colatitude θ.
///
/// The derivative uses the non-singular three-column relation (from the unnormalised
/// dP_l^m/dθ = ½[(l+m)(l−m+1) P_l^{m−1} − P_l^{m+1}], any text, e.g. DLMF 14.10.1 combined
/// with 14.10.2), rescaled to the `geodesy` normalisation:
///   dP̄_lm/dθ = ½[sqrt(k₁(l+m)(l−m+1)) P̄_{l,m−1} − sqrt(k₂(l+m+1)(l−m)) P̄_{l,m+1}],
/// k₁ = 2 for m = 1 else 1, k₂ = ½ for m = 0 else 1 (for m = 0 the first term is absent and
/// the second reads −sqrt(l(l+1)/2) P̄_l1). It needs no division by sin θ, so it holds at and
/// near the poles.
pub fn column_with_derivative(m: usize, lmax: usize, theta_rad: f64) -> (Vec<f64>, Vec<f64>) {
    let n = lmax.saturating_sub(m) + 1;
    if m > lmax {
        return (Vec::new(), Vec::new());
    }
    let mut here = vec![0.0; n];
    column_at_colatitude(m, lmax, theta_rad, &mut here);
    let below = if m >= 1 {
        let mut c = vec![0.0; n + 1];
        column_at_colatitude(m - 1, lmax, theta_rad, &mut c);
        c
    } else {
        Vec::new()
    };
    let above = if m < lmax {
        let mut c = vec![0.0; n - 1];
        column_at_colatitude(m + 1, lmax, theta_rad, &mut c);
        c
    } else {
        Vec::new()
    };
    let d = derivative_from_neighbours(m, lmax, &below, &above);
    (here, d)
}

/// dP̄_lm/dθ for l = m..=lmax from the neighbouring columns P̄_{l,m−1} (`below[l − m + 1]`,
/// ignored for m = 0) and P̄_{l,m+1} (`above[l − m − 1]`).
pub(crate) fn derivative_from_neighbours(
    m: usize,
    lmax: usize,
    below: &[f64],
    above: &[f64],
) -> Vec<f64> {
    let mut d = vec![0.0; lmax - m + 1];
    for l in m..=lmax {
        let (lf, mf) = (l as f64, m as f64);
        let up = if l > m { above[l - m - 1] } else { 0.0 };
        d[l - m] = if m == 0 {
            -(lf * (lf + 1.0) / 2.0).sqrt() * up
        } else {
            let k1 = if m == 1 { 2.0 } else { 1.0 };
            let down = below[l - m + 1];
            0.5 * ((k1 * (lf + mf) * (lf - mf + 1.0)).sqrt() * down
                - ((lf + mf + 1.0) * (lf - mf)).sqrt() * up)
        };
    }
    d
}
