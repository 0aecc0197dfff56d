//! Per-degree sums of squares and products of coefficients (docs/conventions.md §5), the building
//! blocks of every spectrum. Inputs must already be in `geodesy` normalisation without the
//! Condon–Shortley phase (the phase does not change squares, but products need both sets in
//! one convention).

use crate::coeffs::{packed_index, Coefficients};

/// Degree variance S_l = Σ_m (C_lm² + S_lm²) for l = 0..=lmax of `coeffs` as stored.
pub fn sum_of_squares(coeffs: &Coefficients) -> Vec<f64> {
    cross_sum(coeffs, coeffs, coeffs.lmax())
}

/// Σ_m (C^f_lm C^g_lm + S^f_lm S^g_lm) for l = 0..=lmax (both sets must reach lmax).
pub fn cross_sum(f: &Coefficients, g: &Coefficients, lmax: usize) -> Vec<f64> {
    let (fc, fs, gc, gs) = (f.c_packed(), f.s_packed(), g.c_packed(), g.s_packed());
    (0..=lmax)
        .map(|l| {
            let range = packed_index(l, 0)..=packed_index(l, l);
            range.map(|i| fc[i] * gc[i] + fs[i] * gs[i]).sum::<f64>()
        })
        .collect()
}

/// Σ_m ((C^f − C^g)² + (S^f − S^g)²) for l = 0..=lmax, formed from the differences
/// themselves so that nearly equal models do not lose their digits.
pub fn difference_sum_of_squares(f: &Coefficients, g: &Coefficients, lmax: usize) -> Vec<f64> {
    let (fc, fs, gc, gs) = (f.c_packed(), f.s_packed(), g.c_packed(), g.s_packed());
    (0..=lmax)
        .map(|l| {
            let range = packed_index(l, 0)..=packed_index(l, l);
            range
                .map(|i| (fc[i] - gc[i]).powi(2) + (fs[i] - gs[i]).powi(2))
                .sum::<f64>()
        })
        .collect()
}

/// Error degree variance Σ_m (σ_C² + σ_S²) (σ_S of order 0 ignored, S_l0 ≡ 0), if sigmas exist.
pub fn error_sum_of_squares(coeffs: &Coefficients) -> Option<Vec<f64>> {
    let (cs, ss) = coeffs.sigmas()?;
    Some(
        (0..=coeffs.lmax())
            .map(|l| {
                (0..=l)
                    .map(|m| {
                        let i = packed_index(l, m);
                        cs[i] * cs[i] + if m == 0 { 0.0 } else { ss[i] * ss[i] }
                    })
                    .sum()
            })
            .collect(),
    )
}
