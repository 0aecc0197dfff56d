//! The coupling of a global spectrum into a localised one (Wieczorek & Simons 2005, Geophys.
//! J. Int. 162:655–675, their expectation of the windowed spectrum; Wieczorek & Simons
//! 2007, J. Fourier Anal. Appl. 13:665–692).
//!
//! For a stationary random field f of degree variance S_f and a window h of degree variance
//! S_h (both `geodesy`, so Σ_l S_l is the mean square), the expected degree variance of the
//! windowed field Φ = h f is
//!
//!   ⟨S_Φ(l)⟩ = Σ_i M_li S_f(i),   M_li = (2l + 1) Σ_{j ≤ L_W} S_h(j) (j i l; 0 0 0)²,
//!
//! with the 3j symbols of [`crate::rotate::wigner_3j_all_j1`]. Because
//! Σ_i (2i + 1)(j i l; 0 0 0)² = 1, a field of constant power per coefficient s gives
//! ⟨S_Φ(l)⟩ = (2l + 1) s Σ_j S_h(j): with windows of unit mean square (as kugel's are) the
//! localised spectrum is an unbiased estimate of the global one wherever the global spectrum
//! varies slowly over L_W degrees.

use crate::error::{Error, Result};
use crate::rotate::wigner_3j_all_j1;

/// M_li for l = 0..=`lmax_out` and i = 0..=`lmax_out` + L_W (row l, column i), from the
/// window's degree variance `window_power` (j = 0..=L_W).
pub fn coupling_matrix(window_power: &[f64], lmax_out: usize) -> Result<Vec<Vec<f64>>> {
    if window_power.is_empty() {
        return Err(Error::invalid("the window spectrum is empty"));
    }
    let lw = window_power.len() - 1;
    let width = lmax_out + lw + 1;
    let mut m = vec![vec![0.0; width]; lmax_out + 1];
    for (l, row) in m.iter_mut().enumerate() {
        for (j, sh) in window_power.iter().enumerate() {
            if *sh == 0.0 {
                continue;
            }
            let (imin, w) = wigner_3j_all_j1(j, l, 0, 0)?;
            for (k, v) in w.iter().enumerate() {
                row[imin + k] += (2 * l + 1) as f64 * sh * v * v;
            }
        }
    }
    Ok(m)
}

/// The expected localised spectrum Σ_i M_li S(i) of a global spectrum `global` (degrees
/// beyond its end count as 0).
pub fn expected_localised_spectrum(
    global: &[f64],
    window_power: &[f64],
    lmax_out: usize,
) -> Result<Vec<f64>> {
    let m = coupling_matrix(window_power, lmax_out)?;
    Ok(m.iter()
        .map(|row| row.iter().zip(global).map(|(a, b)| a * b).sum())
        .collect())
}
