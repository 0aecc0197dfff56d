//! Design-matrix rows of a spherical-harmonic fit: the unknowns' layout and the fully
//! normalised Legendre functions at each observation.
//!
//! Model: f(θ, λ) = Σ_l Σ_{m=0..l} P̄_lm(cos θ) (C_lm cos mλ + S_lm sin mλ), `geodesy`
//! normalisation, no Condon–Shortley phase (docs/conventions.md §2). The row of an observation at
//! (θ, λ) holds P̄_lm cos mλ under C_lm and P̄_lm sin mλ under S_lm (m ≥ 1).
//!
//! P̄_lm by the fully normalised recursions of Holmes & Featherstone (2002), J. Geodesy
//! 76:279–299, eqs. 11–13: sectoral P̄_mm = c_m u^m, then P̄_lm = a_lm t P̄_{l−1,m} − b_lm
//! P̄_{l−2,m} (b_{m+1,m} = 0, so P̄_{m+1,m} = a_{m+1,m} t P̄_mm = sqrt(2m+3) t P̄_mm). The
//! coefficients c_m, a_lm and b_lm are those of [`crate::sht::legendre::recursion`].
//! Plain doubles suffice for the degrees a dense fit can reach (L ≲ 1000, where the normal
//! matrix alone needs ~8 TB): where u^m underflows near a pole, the true P̄_lm for l ≤ L are
//! themselves below ~1e-280, since the column only grows back for l ≳ m/θ.

use crate::coeffs::{packed_index, packed_len, Coefficients, Normalization};
use crate::sht::legendre::recursion::{a_lm, b_lm, sectoral_factors};

/// Where each coefficient sits in the vector of unknowns: order by order, for each m the
/// C_lm (l = m..L) then the S_lm (l = m..L, m ≥ 1). (L+1)² unknowns in all.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnknownLayout {
    pub lmax: usize,
    /// Start of order m's block.
    offsets: Vec<usize>,
}

impl UnknownLayout {
    pub fn new(lmax: usize) -> UnknownLayout {
        let mut offsets = Vec::with_capacity(lmax + 2);
        let mut next = 0;
        for m in 0..=lmax {
            offsets.push(next);
            let len = lmax + 1 - m;
            next += if m == 0 { len } else { 2 * len };
        }
        offsets.push(next);
        UnknownLayout { lmax, offsets }
    }

    /// Number of unknowns, (L+1)².
    pub fn len(&self) -> usize {
        self.offsets[self.lmax + 1]
    }

    pub fn is_empty(&self) -> bool {
        false
    }

    #[inline]
    pub fn c_index(&self, l: usize, m: usize) -> usize {
        self.offsets[m] + (l - m)
    }

    /// Index of S_lm, m ≥ 1.
    #[inline]
    pub fn s_index(&self, l: usize, m: usize) -> usize {
        self.offsets[m] + (self.lmax + 1 - m) + (l - m)
    }

    /// Degree of each unknown.
    pub fn degrees(&self) -> Vec<usize> {
        let mut d = vec![0; self.len()];
        for m in 0..=self.lmax {
            for l in m..=self.lmax {
                d[self.c_index(l, m)] = l;
                if m > 0 {
                    d[self.s_index(l, m)] = l;
                }
            }
        }
        d
    }

    /// Order of each unknown.
    pub fn orders(&self) -> Vec<usize> {
        let mut o = vec![0; self.len()];
        for m in 0..=self.lmax {
            o[self.offsets[m]..self.offsets[m + 1]].fill(m);
        }
        o
    }

    /// Unknown vector (and optional standard deviations) as a coefficient set.
    pub fn to_coefficients(&self, x: &[f64], sigma: Option<&[f64]>) -> Coefficients {
        let mut c = Coefficients::zeros(self.lmax, Normalization::Geodesy);
        let n = packed_len(self.lmax);
        let (mut cs, mut ss) = (vec![0.0; n], vec![0.0; n]);
        for m in 0..=self.lmax {
            for l in m..=self.lmax {
                let s_val = if m > 0 { x[self.s_index(l, m)] } else { 0.0 };
                c.set(l, m, x[self.c_index(l, m)], s_val);
                if let Some(sig) = sigma {
                    cs[packed_index(l, m)] = sig[self.c_index(l, m)];
                    ss[packed_index(l, m)] = if m > 0 { sig[self.s_index(l, m)] } else { 0.0 };
                }
            }
        }
        if sigma.is_some() {
            c.set_sigmas(cs, ss).expect("sigma length matches");
        }
        c
    }
}

/// Precomputed recursion coefficients for all (l, m) up to L, taken from
/// [`crate::sht::legendre::recursion`] once so that each design row costs no square roots.
#[derive(Debug, Clone)]
pub struct LegendreTable {
    pub lmax: usize,
    /// a_lm, packed (index `packed_index(l, m)`, l > m; 0 on the diagonal).
    a: Vec<f64>,
    /// b_lm, packed (0 for l ≤ m + 1).
    b: Vec<f64>,
    /// Sectoral prefactors c_m of P̄_mm = c_m sin^m θ, index m.
    sectoral: Vec<f64>,
}

impl LegendreTable {
    pub fn new(lmax: usize) -> LegendreTable {
        let n = packed_len(lmax);
        let (mut a, mut b) = (vec![0.0; n], vec![0.0; n]);
        for m in 0..=lmax {
            for l in (m + 1)..=lmax {
                a[packed_index(l, m)] = a_lm(l, m);
                b[packed_index(l, m)] = b_lm(l, m);
            }
        }
        LegendreTable {
            lmax,
            a,
            b,
            sectoral: sectoral_factors(lmax),
        }
    }

    /// All P̄_lm(cos θ), packed (index `packed_index(l, m)`), for t = cos θ, u = sin θ.
    pub fn fill(&self, t: f64, u: f64, out: &mut [f64]) {
        let lmax = self.lmax;
        let mut u_pow_m = 1.0;
        for m in 0..=lmax {
            if m > 0 {
                u_pow_m *= u;
            }
            let pmm = self.sectoral[m] * u_pow_m;
            out[packed_index(m, m)] = pmm;
            if m < lmax {
                let k = packed_index(m + 1, m);
                out[k] = self.a[k] * t * pmm;
            }
            for l in (m + 2)..=lmax {
                let k = packed_index(l, m);
                out[k] = self.a[k] * t * out[packed_index(l - 1, m)]
                    - self.b[k] * out[packed_index(l - 2, m)];
            }
        }
    }
}

impl LegendreTable {
    /// All P̄_lm(cos θ) in order-major layout: order m's run l = m..L starts at
    /// `order_major_start(L, m)`, the layout of the C block of [`UnknownLayout`]. The same
    /// recursion as [`LegendreTable::fill`], value for value.
    pub fn fill_order_major(&self, t: f64, u: f64, out: &mut [f64]) {
        let lmax = self.lmax;
        let mut u_pow_m = 1.0;
        let mut start = 0;
        for m in 0..=lmax {
            if m > 0 {
                u_pow_m *= u;
            }
            let run = &mut out[start..start + lmax + 1 - m];
            run[0] = self.sectoral[m] * u_pow_m;
            if m < lmax {
                run[1] = self.a[packed_index(m + 1, m)] * t * run[0];
            }
            for l in (m + 2)..=lmax {
                let k = packed_index(l, m);
                run[l - m] = self.a[k] * t * run[l - m - 1] - self.b[k] * run[l - m - 2];
            }
            start += lmax + 1 - m;
        }
    }
}

/// Start of order m's run in the order-major layout of degree `lmax`.
pub fn order_major_start(lmax: usize, m: usize) -> usize {
    // Σ_{k<m} (L + 1 − k)
    m * (lmax + 1) - m * (m.saturating_sub(1)) / 2
}

/// Writes the design row of an observation at (lat, lon) in degrees into `row` (length
/// (L+1)²), using `p` (length packed_len(L)) as scratch.
pub fn design_row(
    layout: &UnknownLayout,
    table: &LegendreTable,
    lat_deg: f64,
    lon_deg: f64,
    p: &mut [f64],
    row: &mut [f64],
) {
    let lmax = layout.lmax;
    let theta = (90.0 - lat_deg).to_radians();
    let (u, t) = theta.sin_cos();
    table.fill(t, u.abs(), p);
    let lambda = lon_deg.to_radians();
    for m in 0..=lmax {
        let (sm, cm) = (m as f64 * lambda).sin_cos();
        for l in m..=lmax {
            let v = p[packed_index(l, m)];
            row[layout.c_index(l, m)] = v * cm;
            if m > 0 {
                row[layout.s_index(l, m)] = v * sm;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn layout_counts_every_coefficient_once() {
        let layout = UnknownLayout::new(7);
        assert_eq!(layout.len(), 64);
        let mut seen = [false; 64];
        for m in 0..=7 {
            for l in m..=7 {
                seen[layout.c_index(l, m)] = true;
                if m > 0 {
                    seen[layout.s_index(l, m)] = true;
                }
            }
        }
        assert!(seen.iter().all(|&s| s));
    }

    #[test]
    fn order_major_values_are_the_packed_ones() {
        let table = LegendreTable::new(9);
        let (mut packed, mut major) = (vec![0.0; packed_len(9)], vec![0.0; packed_len(9)]);
        let (u, t) = 0.7f64.sin_cos();
        table.fill(t, u, &mut packed);
        table.fill_order_major(t, u, &mut major);
        for m in 0..=9 {
            for l in m..=9 {
                assert_eq!(
                    major[order_major_start(9, m) + l - m],
                    packed[packed_index(l, m)]
                );
            }
        }
        assert_eq!(order_major_start(9, 10), packed_len(9));
    }

    #[test]
    fn closed_forms_low_degree() {
        // Fully normalised closed forms (any geodesy text, e.g. Heiskanen & Moritz 1967 §1-14
        // with the 4π normalisation): P̄_20 = √5 (3t² − 1)/2, P̄_21 = √15 t u,
        // P̄_22 = √15/2 u², P̄_31 = √(21/8) u (5t² − 1) = √42/4 u (5t² − 1).
        let table = LegendreTable::new(3);
        let mut p = vec![0.0; packed_len(3)];
        for theta in [
            0.0f64,
            0.3,
            1.0,
            std::f64::consts::FRAC_PI_2,
            2.9,
            std::f64::consts::PI,
        ] {
            let (u, t) = theta.sin_cos();
            table.fill(t, u, &mut p);
            let close = |a: f64, b: f64| (a - b).abs() < 1e-14;
            assert!(close(
                p[packed_index(2, 0)],
                5f64.sqrt() * (3.0 * t * t - 1.0) / 2.0
            ));
            assert!(close(p[packed_index(2, 1)], 15f64.sqrt() * t * u));
            assert!(close(p[packed_index(2, 2)], 15f64.sqrt() / 2.0 * u * u));
            assert!(close(
                p[packed_index(3, 1)],
                42f64.sqrt() / 4.0 * u * (5.0 * t * t - 1.0)
            ));
            // P̄_33 = √70/4 u³ (same source): the sectoral factor c_3 = sqrt(35/8)
            assert!(close(p[packed_index(3, 3)], 70f64.sqrt() / 4.0 * u * u * u));
        }
    }
}
