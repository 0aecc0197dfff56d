//! Band-limited windows best concentrated in a spherical cap: Slepian's concentration problem
//! on the sphere (Simons, Dahlen & Wieczorek 2006, "Spatiospectral concentration on a sphere",
//! SIAM Review 48:504–536; Wieczorek & Simons 2005, Geophys. J. Int. 162:655–675).
//!
//! A window h = Σ_{l ≤ L_W} Σ_m (C_lm cos mλ + S_lm sin mλ) P̄_lm(cos θ) (`geodesy`
//! normalisation) has concentration λ = ∫_R h² dΩ / ∫_Ω h² dΩ in the region R. For a cap of
//! radius θ₀ about the north pole the problem separates by order: with the coefficient vector
//! g_l (l = m..L_W) of one order and one of cos/sin, λ = gᵀ D g / gᵀ g with the Gram matrix
//!
//!   D_{ll'} = (1/4π) ∫_cap P̄_lm P̄_l'm cos²(mλ) dΩ = c_m ∫_{cos θ₀}^{1} P̄_lm(x) P̄_l'm(x) dx,
//!   c_0 = 1/2, c_m = 1/4 (m > 0)
//!
//! (SDW 2006, written here in real 4π-normalised form). The integrand is a polynomial of degree
//! l + l' ≤ 2L_W in x, so an (L_W + 1)-point Gauss–Legendre rule on [cos θ₀, 1] integrates it
//! exactly. Each D is eigen-decomposed (faer); the eigenvalues are the concentrations, and
//! their sum over all orders (m > 0 twice, for cos and sin) is the trace
//! N = (L_W + 1)² (1 − cos θ₀)/2, the spherical Shannon number (SDW 2006).
//! Eigenvectors have unit norm, so every window has mean square 1 over the sphere.

use faer::{Mat, Side};

use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::sht::gauss_legendre::nodes_and_weights;
use crate::sht::legendre::column::column;

/// One band-limited window with its concentration in the region.
#[derive(Debug, Clone, PartialEq)]
pub struct Taper {
    /// λ ∈ [0, 1]: the fraction of the window's energy inside the region.
    pub concentration: f64,
    /// For a cap at the pole: the order m of the window and whether it multiplies sin mλ;
    /// `None` for windows of other regions (which mix orders).
    pub order: Option<(usize, bool)>,
    /// Coefficients (`geodesy`, no phase), unit norm Σ (C² + S²) = 1.
    pub coeffs: Coefficients,
}

/// The spherical Shannon number N = (L_W + 1)² (1 − cos θ₀)/2 of a cap (SDW 2006).
pub fn cap_shannon_number(lmax_window: usize, cap_radius_deg: f64) -> f64 {
    let l1 = (lmax_window + 1) as f64;
    l1 * l1 * (1.0 - cap_radius_deg.to_radians().cos()) / 2.0
}

/// Checks a cap radius: 0 < θ₀ ≤ 180°.
pub fn check_cap_radius(cap_radius_deg: f64) -> Result<()> {
    if cap_radius_deg.is_finite() && cap_radius_deg > 0.0 && cap_radius_deg <= 180.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "cap radius must be more than 0 and at most 180 degrees, got {cap_radius_deg}"
        )))
    }
}

/// Bytes the full set of cap windows of bandwidth `lmax_window` needs.
/// Saturating, so that any bandwidth a user types ends in a refusal with the estimate rather
/// than an overflow.
pub fn taper_set_bytes(lmax_window: usize) -> u64 {
    let l1 = (lmax_window as u64).saturating_add(1);
    crate::memory::saturating_product(&[
        l1,
        l1,
        2,
        crate::memory::coefficient_pairs(lmax_window),
        8,
    ])
}

/// The Gram matrix D of order m (module notes), (L_W − m + 1)², row-major.
pub fn cap_gram_matrix(m: usize, lmax_window: usize, cap_radius_deg: f64) -> Vec<f64> {
    let n = lmax_window - m + 1;
    let x0 = cap_radius_deg.to_radians().cos();
    let (x, w) = nodes_and_weights(lmax_window + 1);
    // map [−1, 1] to [x0, 1]
    let half = 0.5 * (1.0 - x0);
    let c_m = if m == 0 { 0.5 } else { 0.25 };
    let mut d = vec![0.0; n * n];
    let mut col = vec![0.0; n];
    for (xi, wi) in x.iter().zip(&w) {
        let t = x0 + half * (xi + 1.0);
        let u = ((1.0 - t) * (1.0 + t)).max(0.0).sqrt();
        column(m, lmax_window, t, u, &mut col);
        let wt = c_m * half * wi;
        for i in 0..n {
            let a = wt * col[i];
            for j in 0..=i {
                d[i * n + j] += a * col[j];
            }
        }
    }
    for i in 0..n {
        for j in 0..i {
            d[j * n + i] = d[i * n + j];
        }
    }
    d
}

/// Every window of bandwidth `lmax_window` for the cap of radius `cap_radius_deg` about the
/// north pole, sorted by decreasing concentration ((L_W + 1)² windows).
pub fn cap_tapers_at_pole(lmax_window: usize, cap_radius_deg: f64) -> Result<Vec<Taper>> {
    check_cap_radius(cap_radius_deg)?;
    crate::memory::check_fits(
        &format!(
            "the {} windows of bandwidth {lmax_window}",
            ((lmax_window as f64) + 1.0).powi(2)
        ),
        taper_set_bytes(lmax_window),
    )?;
    let mut tapers = Vec::with_capacity((lmax_window + 1).pow(2));
    for m in 0..=lmax_window {
        let n = lmax_window - m + 1;
        let d = cap_gram_matrix(m, lmax_window, cap_radius_deg);
        let mat = Mat::<f64>::from_fn(n, n, |i, j| d[i * n + j]);
        let evd = mat.selfadjoint_eigendecomposition(Side::Lower);
        let s = evd.s().column_vector();
        let v = evd.u();
        for k in 0..n {
            let mut g: Vec<f64> = (0..n).map(|i| v[(i, k)]).collect();
            orient(&mut g, m);
            let concentration = s[k].clamp(0.0, 1.0);
            for sine in [false, true] {
                if sine && m == 0 {
                    continue;
                }
                let mut c = Coefficients::zeros(lmax_window, Normalization::Geodesy);
                c.condon_shortley = false;
                for (i, gl) in g.iter().enumerate() {
                    let l = m + i;
                    if sine {
                        c.set(l, m, 0.0, *gl);
                    } else {
                        c.set(l, m, *gl, 0.0);
                    }
                }
                tapers.push(Taper {
                    concentration,
                    order: Some((m, sine)),
                    coeffs: c,
                });
            }
        }
    }
    sort_by_concentration(&mut tapers);
    Ok(tapers)
}

/// A fixed sign for every eigenvector: for m = 0 the window is positive at the pole
/// (Σ g_l √(2l+1) > 0); otherwise the largest coefficient is positive.
fn orient(g: &mut [f64], m: usize) {
    let key = if m == 0 {
        g.iter()
            .enumerate()
            .map(|(i, v)| v * ((2 * i + 1) as f64).sqrt())
            .sum::<f64>()
    } else {
        g.iter()
            .cloned()
            .fold(0.0f64, |a, v| if v.abs() > a.abs() { v } else { a })
    };
    if key < 0.0 {
        for v in g.iter_mut() {
            *v = -*v;
        }
    }
}

/// Sorts by decreasing concentration; ties keep order m, then cos before sin.
pub fn sort_by_concentration(tapers: &mut [Taper]) {
    tapers.sort_by(|a, b| {
        b.concentration
            .partial_cmp(&a.concentration)
            .unwrap_or(std::cmp::Ordering::Equal)
            .then(a.order.cmp(&b.order))
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whole_sphere_gram_matrix_is_the_identity() {
        // orthogonality of the 4π-normalised functions (docs/conventions.md §2; common practice)
        for m in [0, 1, 7] {
            let d = cap_gram_matrix(m, 12, 180.0);
            let n = 12 - m + 1;
            for i in 0..n {
                for j in 0..n {
                    let want = if i == j { 1.0 } else { 0.0 };
                    assert!(
                        (d[i * n + j] - want).abs() < 1e-13,
                        "m {m} ({i},{j}) {}",
                        d[i * n + j]
                    );
                }
            }
        }
    }
}
