//! Wigner 3j symbols (j1 j2 j3; m1 m2 m3) for all j1 at once, by the recursion of Schulten &
//! Gordon (1975, "Exact recursive evaluation of 3j- and 6j-coefficients for quantum-mechanical
//! coupling of angular momenta", J. Math. Phys. 16:1961–1970).
//!
//! With j2, j3, m2, m3 fixed and m1 = −m2 − m3, f(j) = (j j2 j3; m1 m2 m3) obeys for
//! j_min ≤ j ≤ j_max, j_min = max(|j2 − j3|, |m1|), j_max = j2 + j3,
//!
//!   j A(j+1) f(j+1) + B(j) f(j) + (j+1) A(j) f(j−1) = 0,
//!   A(j) = √((j² − (j2 − j3)²)((j2 + j3 + 1)² − j²)(j² − m1²)),
//!   B(j) = −(2j + 1)(j2(j2+1) m1 − j3(j3+1) m1 − j(j+1)(m3 − m2)).
//!
//! The recursion is run from both ends towards the middle, each direction only while the
//! values it produces grow (the direction in which it is stable), the two pieces are matched
//! at the meeting point, and the whole is scaled by the normalisation
//! Σ_j (2j + 1) f(j)² = 1 and the sign rule sgn f(j_max) = (−1)^{j2 − j3 + m1}
//! (Schulten & Gordon 1975, eqs. 3–5; Edmonds 1957, eq. 3.7.8). Intermediate values are
//! rescaled before they can overflow.

use crate::error::{Error, Result};

/// Rescale the partial solution when it exceeds this size.
const RESCALE_ABOVE: f64 = 1e150;

/// The symbols (j j2 j3; −m2−m3, m2, m3) for j = j_min..=j_max, returned with j_min.
/// Integer arguments only (what spherical harmonics need).
pub fn wigner_3j_all_j1(j2: usize, j3: usize, m2: i64, m3: i64) -> Result<(usize, Vec<f64>)> {
    let m1 = -m2 - m3;
    if m2.unsigned_abs() as usize > j2 || m3.unsigned_abs() as usize > j3 {
        return Err(Error::invalid(format!(
            "3j symbol needs |m2| ≤ j2 and |m3| ≤ j3, got j2 {j2}, m2 {m2}, j3 {j3}, m3 {m3}"
        )));
    }
    let jmin = j2.abs_diff(j3).max(m1.unsigned_abs() as usize);
    let jmax = j2 + j3;
    if jmin > jmax {
        return Ok((jmin, Vec::new()));
    }
    let n = jmax - jmin + 1;
    let (fj2, fj3, fm1, fm2, fm3) = (j2 as f64, j3 as f64, m1 as f64, m2 as f64, m3 as f64);
    let a = |j: f64| -> f64 {
        let t1 = j * j - (fj2 - fj3).powi(2);
        let t2 = (fj2 + fj3 + 1.0).powi(2) - j * j;
        let t3 = j * j - fm1 * fm1;
        (t1 * t2 * t3).max(0.0).sqrt()
    };
    let b = |j: f64| -> f64 {
        -(2.0 * j + 1.0)
            * (fj2 * (fj2 + 1.0) * fm1 - fj3 * (fj3 + 1.0) * fm1 - j * (j + 1.0) * (fm3 - fm2))
    };
    if n == 1 {
        let f = 1.0 / ((2 * jmin + 1) as f64).sqrt();
        return Ok((jmin, vec![f * sign_at_jmax(j2, j3, m1)]));
    }
    let mut f = vec![0.0; n];

    // forward from j_min while |f| grows (only when the first step is defined: j_min > 0)
    let mut forward_end = 0usize; // last index filled by the forward pass
    if jmin > 0 {
        f[0] = 1.0;
        let j = jmin as f64;
        f[1] = -b(j) / (j * a(j + 1.0)) * f[0];
        forward_end = 1;
        let mut i = 1;
        while i + 1 < n {
            // stop once the values stop growing (compare with two steps back: for m = 0 every
            // other value vanishes)
            if f[i].abs()
                < f[i - 1]
                    .abs()
                    .max(if i >= 2 { f[i - 2].abs() } else { 0.0 })
            {
                break;
            }
            let j = (jmin + i) as f64;
            f[i + 1] = -(b(j) * f[i] + (j + 1.0) * a(j) * f[i - 1]) / (j * a(j + 1.0));
            forward_end = i + 1;
            i += 1;
            if f[i].abs() > RESCALE_ABOVE {
                for v in &mut f[..=i] {
                    *v /= RESCALE_ABOVE;
                }
            }
        }
    }

    // backward from j_max down to the forward pass's end (or to j_min)
    let mut g = vec![0.0; n];
    g[n - 1] = 1.0;
    let stop = if jmin > 0 {
        forward_end.saturating_sub(1)
    } else {
        0
    };
    let mut i = n - 1;
    while i > stop {
        let j = (jmin + i) as f64;
        let next = if i + 1 < n { g[i + 1] } else { 0.0 };
        g[i - 1] = -(j * a(j + 1.0) * next + b(j) * g[i]) / ((j + 1.0) * a(j));
        i -= 1;
        if g[i].abs() > RESCALE_ABOVE {
            for v in &mut g[i..] {
                *v /= RESCALE_ABOVE;
            }
        }
    }

    let out = if jmin > 0 && forward_end > 0 {
        // match at whichever of the two overlapping points is larger
        let k = if f[forward_end].abs() >= f[forward_end - 1].abs() {
            forward_end
        } else {
            forward_end - 1
        };
        let scale = f[k] / g[k];
        let mut out = g;
        for v in &mut out[k..] {
            *v *= scale;
        }
        out[..k].copy_from_slice(&f[..k]);
        out
    } else {
        g
    };
    let norm: f64 = out
        .iter()
        .enumerate()
        .map(|(i, v)| (2 * (jmin + i) + 1) as f64 * v * v)
        .sum::<f64>()
        .sqrt();
    let sign = sign_at_jmax(j2, j3, m1) * out[n - 1].signum();
    let sign = if out[n - 1] == 0.0 { 1.0 } else { sign };
    Ok((jmin, out.into_iter().map(|v| sign * v / norm).collect()))
}

fn sign_at_jmax(j2: usize, j3: usize, m1: i64) -> f64 {
    let e = j2 as i64 - j3 as i64 + m1;
    if e.rem_euclid(2) == 0 {
        1.0
    } else {
        -1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_closed_forms() {
        // (1 1 0; 0 0 0) = −1/√3, (2 1 1; 0 0 0) = √(2/15) (Edmonds 1957 Table 2; from memory)
        let (jmin, v) = wigner_3j_all_j1(1, 1, 0, 0).unwrap();
        assert_eq!(jmin, 0);
        assert!((v[0] + 1.0 / 3f64.sqrt()).abs() < 1e-15, "{v:?}");
        assert!(v[1].abs() < 1e-15);
        assert!((v[2] - (2.0f64 / 15.0).sqrt()).abs() < 1e-15, "{v:?}");
    }
}
