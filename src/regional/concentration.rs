//! The concentration problem of an arbitrary region (Simons, Dahlen & Wieczorek 2006, SIAM
//! Review 48:504–536, §3): the band-limited windows h = Σ g_i Y_i of bandwidth L_W that
//! maximise λ = ∫_R h² dΩ / ∫ h² dΩ are the eigenvectors of the concentration matrix
//!
//!   D_ij = (1/4π) ∫_R Y_i Y_j dΩ,   i, j over the u = (L_W + 1)² real harmonics
//!
//! Y = P̄_lm(cos θ) cos mλ and P̄_lm(cos θ) sin mλ (`geodesy`, so D = I for R the sphere), with the
//! concentrations as eigenvalues. Its trace is the Shannon number N = (L_W + 1)² A / 4π, A the
//! region's area (the addition theorem Σ_i Y_i² = (L_W + 1)² pointwise; SDW 2006 eq. 3.7).
//!
//! How D is integrated. The region is described on circles of latitude: at cos θ = z it covers
//! a set of longitude intervals. The longitude integral is done in closed form from
//! E(q) = Σ_intervals ∫ e^{iqλ} dλ, q = 0..2L_W, with
//!
//!   ∫ cos m λ cos m'λ = ½ Re[E(m − m') + E(m + m')],  ∫ sin m λ sin m'λ = ½ Re[E(m − m') − E(m + m')],
//!   ∫ cos m λ sin m'λ = ½ Im[E(m + m') − E(m − m')]    (E(−q) = conj E(q)),
//!
//! and the latitude integral by a quadrature rule in z whose nodes are the rows:
//! D_ij = (1/4π) Σ_r w_r P̄_i(z_r) P̄_j(z_r) T_ij(z_r). For a polygon the rows are Gauss–Legendre
//! nodes on every stretch of z between the latitudes where the region's width has a kink (its
//! vertices and the edges' extreme latitudes), so the integrand is smooth on each stretch; for
//! a mask they are the rows of its grid with the grid's own weights, and each cell marked
//! inside covers its longitude cell. This is the route "analyse Y_i·indicator" written
//! out: the longitude part of that analysis is exact instead of sampled, which matters because
//! the indicator is discontinuous (a sampled indicator converges only as the cell size). The
//! other route, the indicator's coefficients to degree 2L_W combined with Gaunt coefficients,
//! costs about u²·4L_W 3j products and carries the same quadrature error in the indicator's
//! coefficients; the rows route costs u²/2 multiply–adds per row, and the dense symmetric
//! eigen-decomposition (faer) about 10 u³ operations, which dominates from L_W ≈ 30 on.

use faer::{Mat, Side};
use rayon::prelude::*;

use super::cap::{sort_by_concentration, Taper};
use crate::coeffs::{packed_len, Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::sht::legendre::column::column;

/// Highest window degree a config may ask for (u = 10,201 unknowns; the operation limit below
/// refuses a little above it).
pub const MAX_WINDOW_DEGREE: usize = 100;

/// Concentration problems with more estimated operations than this are refused (about an
/// hour at a few GFLOP/s).
pub const MAX_OPERATIONS: f64 = 2e13;

/// The region on circles of latitude: rows at z = cos θ with weights in dz, and the longitude
/// intervals (radians, start < end) the region covers on each.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LatitudeRows {
    pub z: Vec<f64>,
    pub weight: Vec<f64>,
    pub intervals: Vec<Vec<(f64, f64)>>,
}

impl LatitudeRows {
    /// ∫_R dΩ by the rows' rule.
    pub fn area_sr(&self) -> f64 {
        self.weight
            .iter()
            .zip(&self.intervals)
            .map(|(w, iv)| w * iv.iter().map(|(a, b)| b - a).sum::<f64>())
            .sum()
    }

    /// The direction of the region's first moment ∫_R r̂ dΩ as (degrees north, degrees east);
    /// (90, 0) when the moment vanishes.
    pub fn centre_deg(&self) -> (f64, f64) {
        let mut v = [0.0; 3];
        for ((z, w), iv) in self.z.iter().zip(&self.weight).zip(&self.intervals) {
            let rho = ((1.0 - z) * (1.0 + z)).max(0.0).sqrt();
            for (a, b) in iv {
                v[0] += w * rho * (b.sin() - a.sin());
                v[1] += w * rho * (a.cos() - b.cos());
                v[2] += w * z * (b - a);
            }
        }
        let h = v[0].hypot(v[1]);
        if h.hypot(v[2]) < 1e-14 {
            return (90.0, 0.0);
        }
        (v[2].atan2(h).to_degrees(), v[1].atan2(v[0]).to_degrees())
    }
}

/// E(q) = Σ ∫ e^{iqλ} dλ over the intervals, q = 0..=qmax, as (re, im).
fn interval_moments(intervals: &[(f64, f64)], qmax: usize) -> Vec<(f64, f64)> {
    (0..=qmax)
        .map(|q| {
            if q == 0 {
                return (intervals.iter().map(|(a, b)| b - a).sum(), 0.0);
            }
            let qf = q as f64;
            intervals.iter().fold((0.0, 0.0), |(re, im), (a, b)| {
                let (sb, cb) = (qf * b).sin_cos();
                let (sa, ca) = (qf * a).sin_cos();
                (re + (sb - sa) / qf, im + (ca - cb) / qf)
            })
        })
        .collect()
}

/// One real harmonic of the basis: degree, order and whether it multiplies sin mλ.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Basis {
    l: usize,
    m: usize,
    sine: bool,
}

/// The basis in blocks of one (m, cos/sin), degrees m..=L_W within a block.
fn basis(lmax_window: usize) -> Vec<Basis> {
    let mut out = Vec::with_capacity((lmax_window + 1).pow(2));
    for m in 0..=lmax_window {
        for sine in [false, true] {
            if sine && m == 0 {
                continue;
            }
            out.extend((m..=lmax_window).map(|l| Basis { l, m, sine }));
        }
    }
    out
}

/// Estimated bytes and operations of the problem of bandwidth `lmax_window` over `rows` rows.
pub fn concentration_cost(lmax_window: usize, rows: usize) -> (u64, f64) {
    let u = ((lmax_window as u64) + 1).saturating_pow(2);
    // D, faer's copy, the eigenvectors and workspace, and the windows themselves; the table of
    // Legendre columns per row
    let bytes = crate::memory::saturating_product(&[u, u, 8, 5])
        .saturating_add(crate::memory::saturating_product(&[u, rows as u64, 8]));
    let uf = u as f64;
    (bytes, 10.0 * uf * uf * uf + uf * uf * rows as f64)
}

/// Refuses a problem that would not fit in memory or would take hours, with the estimate.
pub fn check_concentration_cost(lmax_window: usize, rows: usize, region: &str) -> Result<()> {
    let u = (lmax_window + 1) * (lmax_window + 1);
    let (bytes, ops) = concentration_cost(lmax_window, rows);
    let what = format!(
        "the concentration problem of {region} with windows of degree {lmax_window} ({u} unknowns, about {ops:.1e} operations)"
    );
    crate::memory::check_fits(&what, bytes)?;
    if ops > MAX_OPERATIONS {
        return Err(Error::invalid(format!(
            "{what} is refused: that is more than {MAX_OPERATIONS:.0e} operations (hours of work); \
             lower the window degree (the cost grows as (LW+1)^6)"
        )));
    }
    Ok(())
}

/// D (row-major, u × u) of bandwidth `lmax_window` over `rows` (module notes).
pub fn concentration_matrix(rows: &LatitudeRows, lmax_window: usize) -> Vec<f64> {
    let lw = lmax_window;
    let basis = basis(lw);
    let u = basis.len();
    let nrows = rows.z.len();
    // Legendre values per basis column, contiguous over rows (cos and sin share them)
    let mut legendre = vec![0.0; u * nrows];
    let mut col = vec![0.0; lw + 1];
    for (r, &z) in rows.z.iter().enumerate() {
        let s = ((1.0 - z) * (1.0 + z)).max(0.0).sqrt();
        for m in 0..=lw {
            column(m, lw, z, s, &mut col);
            for (j, b) in basis.iter().enumerate().filter(|(_, b)| b.m == m) {
                legendre[j * nrows + r] = col[b.l - m];
            }
        }
    }
    let moments: Vec<Vec<(f64, f64)>> = rows
        .intervals
        .iter()
        .map(|iv| interval_moments(iv, 2 * lw))
        .collect();
    let quarter_pi_inv = 1.0 / (4.0 * std::f64::consts::PI);
    // longitude integral of the trigonometric parts of two basis functions on row r
    let trig = |r: usize, a: Basis, b: Basis| -> f64 {
        let e = &moments[r];
        let sum = e[a.m + b.m];
        let (dre, dim) = if a.m >= b.m {
            e[a.m - b.m]
        } else {
            let (re, im) = e[b.m - a.m];
            (re, -im)
        };
        match (a.sine, b.sine) {
            (false, false) => 0.5 * (dre + sum.0),
            (true, true) => 0.5 * (dre - sum.0),
            // ∫ cos(a.m λ) sin(b.m λ)
            (false, true) => 0.5 * (sum.1 - dim),
            // ∫ sin(a.m λ) cos(b.m λ) = ½ Im[E(a + b) + E(a − b)]
            (true, false) => 0.5 * (sum.1 + dim),
        }
    };
    let block_starts: Vec<usize> = (0..u)
        .filter(|&j| j == 0 || (basis[j].m, basis[j].sine) != (basis[j - 1].m, basis[j - 1].sine))
        .collect();
    let mut d = vec![0.0; u * u];
    d.par_chunks_mut(u).enumerate().for_each(|(i, row)| {
        let bi = basis[i];
        let pi = &legendre[i * nrows..(i + 1) * nrows];
        let mut h = vec![0.0; nrows];
        for (k, &start) in block_starts.iter().enumerate() {
            if start > i {
                break;
            }
            let end = block_starts.get(k + 1).copied().unwrap_or(u).min(i + 1);
            let bj = basis[start];
            for (r, hr) in h.iter_mut().enumerate() {
                *hr = quarter_pi_inv * rows.weight[r] * trig(r, bi, bj) * pi[r];
            }
            for (j, out) in row.iter_mut().enumerate().take(end).skip(start) {
                let pj = &legendre[j * nrows..(j + 1) * nrows];
                *out = h.iter().zip(pj).map(|(a, b)| a * b).sum();
            }
        }
    });
    for i in 0..u {
        for j in 0..i {
            d[j * u + i] = d[i * u + j];
        }
    }
    d
}

/// Every window of bandwidth `lmax_window` for the region on `rows`, sorted by decreasing
/// concentration, and the Shannon number trace(D). `region` names it in messages.
pub fn region_tapers(
    rows: &LatitudeRows,
    lmax_window: usize,
    region: &str,
    progress: &dyn Progress,
) -> Result<(Vec<Taper>, f64)> {
    check_concentration_cost(lmax_window, rows.z.len(), region)?;
    let basis = basis(lmax_window);
    let u = basis.len();
    progress.stage("concentration matrix", 2);
    let d = concentration_matrix(rows, lmax_window);
    progress.advance(1);
    let shannon: f64 = (0..u).map(|i| d[i * u + i]).sum();
    let mat = Mat::<f64>::from_fn(u, u, |i, j| d[i * u + j]);
    drop(d);
    let evd = mat.selfadjoint_eigendecomposition(Side::Lower);
    progress.advance(1);
    let s = evd.s().column_vector();
    let v = evd.u();
    let mut tapers = Vec::with_capacity(u);
    for k in 0..u {
        let mut g: Vec<f64> = (0..u).map(|i| v[(i, k)]).collect();
        let largest = g
            .iter()
            .cloned()
            .fold(0.0f64, |a, x| if x.abs() > a.abs() { x } else { a });
        if largest < 0.0 {
            g.iter_mut().for_each(|x| *x = -*x);
        }
        let mut c = Coefficients::zeros(lmax_window, Normalization::Geodesy);
        c.condon_shortley = false;
        for (b, gi) in basis.iter().zip(&g) {
            let (cc, ss) = (c.c(b.l, b.m), c.s(b.l, b.m));
            if b.sine {
                c.set(b.l, b.m, cc, *gi);
            } else {
                c.set(b.l, b.m, *gi, ss);
            }
        }
        tapers.push(Taper {
            concentration: s[k].clamp(0.0, 1.0),
            order: None,
            coeffs: c,
        });
    }
    debug_assert_eq!(tapers[0].coeffs.c_packed().len(), packed_len(lmax_window));
    sort_by_concentration(&mut tapers);
    Ok((tapers, shannon))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_whole_sphere_gives_the_identity() {
        // orthogonality of the 4π-normalised real harmonics (docs/conventions.md §2; common
        // practice): Gauss–Legendre rows, every circle fully covered
        let lw = 9;
        let (z, w) = crate::sht::gauss_legendre::nodes_and_weights(lw + 2);
        let n = z.len();
        let rows = LatitudeRows {
            z,
            weight: w,
            intervals: vec![vec![(0.3, 0.3 + 2.0 * std::f64::consts::PI)]; n],
        };
        let d = concentration_matrix(&rows, lw);
        let u = (lw + 1) * (lw + 1);
        for i in 0..u {
            for j in 0..u {
                let want = if i == j { 1.0 } else { 0.0 };
                assert!(
                    (d[i * u + j] - want).abs() < 1e-13,
                    "({i},{j}) {}",
                    d[i * u + j]
                );
            }
        }
    }
}
