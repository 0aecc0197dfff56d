//! Rotation of a real coefficient set: g(r) = f(R⁻¹ r) for an active rotation R (see
//! [`super::euler`] for the convention).
//!
//! With the complex 4π-normalised harmonics Y_lm = (−1)^m N_lm P_lm e^{imλ} (Condon–Shortley
//! phase, Y_{l,−m} = (−1)^m conj Y_lm) a field f = Σ a_lm Y_lm rotates as
//!
//!   a'_{lm'} = Σ_m D^l_{m'm}(R) a_lm,   D^l_{m'm}(α, β, γ) = e^{−im'α} d^l_{m'm}(β) e^{−imγ}
//!
//! (Edmonds 1957, *Angular Momentum in Quantum Mechanics*, eqs. 4.1.12 and 4.1.22; Varshalovich,
//! Moskalev & Khersonskii 1988, *Quantum Theory of Angular Momentum*, §4.1). The engine's real
//! `geodesy` coefficients relate to them by a_lm = (−1)^m (C_lm − i S_lm)/√2 and
//! a_{l,−m} = (C_lm + i S_lm)/√2 for m > 0, a_l0 = C_l0. Because the field is real, only
//! m' ≥ 0 is computed, and the sum over ±m splits into two real products per degree:
//! with b_m = e^{−imγ} a_m = x_m + i y_m,
//!
//!   Re c_{m'} = d_{m'0} x_0 + Σ_{m>0} (d_{m'm} + (−1)^m d_{m',−m}) x_m,
//!   Im c_{m'} = Σ_{m>0} (d_{m'm} − (−1)^m d_{m',−m}) y_m,    a'_{m'} = e^{−im'α} c_{m'}.
//!
//! Any normalisation and phase is accepted; the set is converted to `geodesy` without the
//! phase, rotated, and converted back. The d-matrices come degree after degree from Risbo's
//! recursion ([`super::WignerSmallDHalf`], only the rows m' ≥ 0); since degree l needs degree l − 1 the recursion itself
//! runs in order (its rows in parallel), and each degree's product runs over m' in parallel.
//! Standard errors cannot be rotated without their covariances and are dropped (the result
//! says so in its `rotation_note` attribute).

use rayon::prelude::*;

use super::euler::EulerAngles;
use super::wigner_d_half::WignerSmallDHalf;
use crate::coeffs::{packed_index, Coefficients};
use crate::error::Result;
use crate::memory;
use crate::progress::{Progress, Silent};

/// Degrees from which the per-degree product runs over m' in parallel.
const PARALLEL_FROM_DEGREE: usize = 96;

/// Bytes a rotation of a degree-`lmax` set needs besides its input (d-matrices, output, one
/// internal copy).
pub fn rotation_memory_bytes(lmax: usize) -> u64 {
    let packed = ((lmax + 1) * (lmax + 2) / 2) as u64;
    WignerSmallDHalf::memory_bytes(lmax) + 4 * packed * 8
}

/// The set rotated by `angles` (module notes), in the input's normalisation and phase.
pub fn rotate(coeffs: &Coefficients, angles: &EulerAngles) -> Result<Coefficients> {
    rotate_with_progress(coeffs, angles, &Silent)
}

/// As [`rotate`], reporting one unit of progress per degree.
pub fn rotate_with_progress(
    coeffs: &Coefficients,
    angles: &EulerAngles,
    progress: &dyn Progress,
) -> Result<Coefficients> {
    let mut out = rotate_many(std::slice::from_ref(coeffs), angles, progress)?;
    Ok(out.remove(0))
}

/// Rotates several sets by the same rotation, computing each degree's d-matrix once for all
/// of them (e.g. a family of windows). Each result keeps its input's normalisation and phase.
pub fn rotate_many(
    sets: &[Coefficients],
    angles: &EulerAngles,
    progress: &dyn Progress,
) -> Result<Vec<Coefficients>> {
    let lmax = sets.iter().map(Coefficients::lmax).max().unwrap_or(0);
    let packed = ((lmax + 1) * (lmax + 2) / 2) as u64;
    memory::check_fits(
        &format!("rotating {} degree-{lmax} model(s)", sets.len()),
        WignerSmallDHalf::memory_bytes(lmax) + 3 * sets.len() as u64 * packed * 8,
    )?;
    let mut inputs = Vec::with_capacity(sets.len());
    let mut outputs = Vec::with_capacity(sets.len());
    for set in sets {
        set.check_finite()?;
        let g = set.to_geodesy()?;
        let mut out = g.clone();
        out.clear_sigmas();
        inputs.push(g);
        outputs.push(out);
    }
    progress.stage("rotating", lmax as u64 + 1);
    let mut d = WignerSmallDHalf::new(angles.beta_rad, lmax);
    let mut degree_out: Vec<(f64, f64)> = Vec::with_capacity(lmax + 1);
    for l in 0..=lmax {
        if l > 0 {
            d.next_degree();
        }
        let one_set = |g: &Coefficients, out: &mut Coefficients, buf: &mut Vec<(f64, f64)>| {
            if l <= g.lmax() {
                rotate_degree(g, l, &d, angles, buf);
                for (m, (c, s)) in buf.iter().enumerate() {
                    out.set(l, m, *c, *s);
                }
            }
        };
        if inputs.len() > 1 {
            inputs
                .par_iter()
                .zip(outputs.par_iter_mut())
                .for_each_init(Vec::new, |buf, (g, out)| one_set(g, out, buf));
        } else {
            for (g, out) in inputs.iter().zip(outputs.iter_mut()) {
                one_set(g, out, &mut degree_out);
            }
        }
        progress.advance(1);
    }
    sets.iter()
        .zip(outputs)
        .map(|(set, out)| {
            let mut out = out.converted(set.normalization, set.condon_shortley)?;
            if set.sigmas().is_some() {
                out.attributes.insert(
                    "rotation_note".into(),
                    "standard errors of the input were dropped: rotating them needs their covariances"
                        .into(),
                );
            }
            Ok(out)
        })
        .collect()
}

/// (C', S') of degree l for m' = 0..=l into `out`.
fn rotate_degree(
    g: &Coefficients,
    l: usize,
    d: &WignerSmallDHalf,
    angles: &EulerAngles,
    out: &mut Vec<(f64, f64)>,
) {
    let sqrt_half = std::f64::consts::FRAC_1_SQRT_2;
    // b_m = e^{−imγ} a_m, a_m = (−1)^m (C − iS)/√2
    let start = packed_index(l, 0);
    let b: Vec<(f64, f64)> = (0..=l)
        .map(|m| {
            let (c, s) = (g.c_packed()[start + m], g.s_packed()[start + m]);
            if m == 0 {
                return (c, 0.0);
            }
            let sign = if m % 2 == 1 { -sqrt_half } else { sqrt_half };
            let (ar, ai) = (sign * c, -sign * s);
            let (sn, cs) = (m as f64 * angles.gamma_rad).sin_cos();
            // (ar + i ai)(cs − i sn)
            (ar * cs + ai * sn, ai * cs - ar * sn)
        })
        .collect();
    let one = |mp: usize| -> (f64, f64) {
        // entry l − m of the row is d_{m'm}, entry l + m is d_{m',−m}
        let row = d.row(mp);
        let (up, down) = (&row[..=l], &row[l..]);
        let mut re = down[0] * b[0].0;
        let mut im = 0.0;
        for (m, bm) in b.iter().enumerate().skip(1) {
            let direct = up[l - m];
            let mirrored = if m % 2 == 1 { -down[m] } else { down[m] };
            re += (direct + mirrored) * bm.0;
            im += (direct - mirrored) * bm.1;
        }
        // a' = e^{−im'α} c
        let (sn, cs) = (mp as f64 * angles.alpha_rad).sin_cos();
        let (ar, ai) = (re * cs + im * sn, im * cs - re * sn);
        if mp == 0 {
            (ar, 0.0)
        } else {
            // C − iS = √2 (−1)^m a
            let f = if mp % 2 == 1 {
                -std::f64::consts::SQRT_2
            } else {
                std::f64::consts::SQRT_2
            };
            (f * ar, -f * ai)
        }
    };
    out.clear();
    if l >= PARALLEL_FROM_DEGREE {
        out.par_extend((0..=l).into_par_iter().map(one));
    } else {
        out.extend((0..=l).map(one));
    }
}
