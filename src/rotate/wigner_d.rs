//! Wigner's small d-functions d^l_{m'm}(β) for every degree up to L, by Risbo's recursion
//! (T. Risbo 1996, "Fourier transform summation of Legendre series and D-functions",
//! J. Geodesy 70:383–396).
//!
//! Convention: d^j_{m'm}(β) = ⟨j m'| exp(−iβ J_y) |j m⟩ (Edmonds 1957, *Angular Momentum in
//! Quantum Mechanics*, eq. 4.1.15; the Condon–Shortley phase of the states), so
//! d^{1/2}(β) = [[cos β/2, −sin β/2], [sin β/2, cos β/2]] with rows and columns ordered
//! m = +1/2, −1/2, and d^1_{10}(β) = −sin β/√2.
//!
//! The recursion. The representation of degree j acts on homogeneous polynomials of degree
//! n = 2j in two variables with the orthonormal basis e_i = x^{n−i} y^i / √((n−i)! i!), where e_i
//! stands for m = j − i. Writing e^{(n)}_k as x·e^{(n−1)}_k/√(n−k) or as y·e^{(n−1)}_{k−1}/√k and
//! averaging the two with weights (n−k)/n and k/n gives Risbo's half-integer step
//!
//!   D^{(n)}_{ik} = (1/n) [ √(n−k) (a√(n−i) D_{i,k} + c√i D_{i−1,k})
//!                        + √k   (b√(n−i) D_{i,k−1} + d√i D_{i−1,k−1}) ],
//!
//! with D = D^{(n−1)}, entries outside 0..n−1 zero and [[a, b], [c, d]] = d^{1/2}(β). Two steps
//! take degree l − 1 to degree l. Every step is a convex combination of bounded quantities, so
//! the recursion neither grows nor loses accuracy with degree (Risbo 1996 §3; it is stable to
//! degrees in the thousands). Entries that fall below 10⁻³⁰⁰ (far from the diagonal at small
//! β, where d ~ sin^{|m−m'|}(β/2)) are flushed to zero: they contribute nothing in double
//! precision, and subnormal arithmetic would slow every later step.

use rayon::prelude::*;

/// Values below this magnitude are set to zero (see the module notes on underflow).
const FLUSH_BELOW: f64 = 1e-300;

/// Matrices from this size on are stepped with their rows in parallel.
const PARALLEL_FROM_ROWS: usize = 192;

/// The full matrix d^l_{m'm}(β), m', m = −l..l, for one angle β, advanced degree by degree.
#[derive(Debug, Clone)]
pub struct WignerSmallD {
    /// cos(β/2), sin(β/2): the degree-½ matrix is [[cos, −sin], [sin, cos]].
    cos_half: f64,
    sin_half: f64,
    /// n = 2j of the matrix held now.
    two_j: usize,
    /// (n + 1)² entries, row-major: row i ↔ m' = j − i, column k ↔ m = j − k.
    values: Vec<f64>,
    next: Vec<f64>,
    /// √k for k = 0..
    sqrt_int: Vec<f64>,
}

impl WignerSmallD {
    /// d⁰(β) = \[1\], ready to be advanced with [`WignerSmallD::next_degree`]; `lmax` only sizes
    /// the buffers.
    pub fn new(beta_rad: f64, lmax: usize) -> Self {
        let side = 2 * lmax + 1;
        let mut values = Vec::with_capacity(side * side);
        values.push(1.0);
        WignerSmallD {
            cos_half: (0.5 * beta_rad).cos(),
            sin_half: (0.5 * beta_rad).sin(),
            two_j: 0,
            values,
            next: Vec::with_capacity(side * side),
            sqrt_int: (0..=side).map(|k| (k as f64).sqrt()).collect(),
        }
    }

    /// Bytes the buffers need to reach degree `lmax`.
    pub fn memory_bytes(lmax: usize) -> u64 {
        let side = (2 * lmax + 1) as u64;
        2 * side * side * 8
    }

    /// Degree l of the matrix held now.
    pub fn degree(&self) -> usize {
        self.two_j / 2
    }

    /// Advances from degree l to l + 1 (two half-integer steps).
    pub fn next_degree(&mut self) {
        self.half_step();
        self.half_step();
    }

    /// d^l_{m'm}(β) for the degree held now; |m'|, |m| ≤ l.
    #[inline]
    pub fn get(&self, m_prime: isize, m: isize) -> f64 {
        let l = self.degree() as isize;
        debug_assert!(m_prime.abs() <= l && m.abs() <= l);
        let side = self.two_j + 1;
        self.values[(l - m_prime) as usize * side + (l - m) as usize]
    }

    /// One step n − 1 → n of Risbo's recursion (module notes).
    fn half_step(&mut self) {
        let n = self.two_j + 1;
        let old_side = n;
        let side = n + 1;
        let (a, b, c, d) = (self.cos_half, -self.sin_half, self.sin_half, self.cos_half);
        let inv_n = 1.0 / n as f64;
        let sq = &self.sqrt_int;
        let old = &self.values;
        self.next.clear();
        self.next.resize(side * side, 0.0);
        let row = |i: usize, out: &mut [f64]| {
            // weights of old rows i and i − 1 (absent rows weigh nothing)
            let (wi_left, wi_right) = if i < n {
                (a * sq[n - i], b * sq[n - i])
            } else {
                (0.0, 0.0)
            };
            let (wm_left, wm_right) = if i >= 1 {
                (c * sq[i], d * sq[i])
            } else {
                (0.0, 0.0)
            };
            let zero_row = [0.0; 0];
            let row_i: &[f64] = if i < n {
                &old[i * old_side..(i + 1) * old_side]
            } else {
                &zero_row
            };
            let row_im1: &[f64] = if i >= 1 {
                &old[(i - 1) * old_side..i * old_side]
            } else {
                &zero_row
            };
            let at = |r: &[f64], k: usize| if r.is_empty() { 0.0 } else { r[k] };
            for (k, slot) in out.iter_mut().enumerate() {
                let mut v = 0.0;
                if k < n {
                    let left = wi_left * at(row_i, k) + wm_left * at(row_im1, k);
                    v += sq[n - k] * left;
                }
                if k >= 1 {
                    let right = wi_right * at(row_i, k - 1) + wm_right * at(row_im1, k - 1);
                    v += sq[k] * right;
                }
                v *= inv_n;
                *slot = if v.abs() < FLUSH_BELOW { 0.0 } else { v };
            }
        };
        if side >= PARALLEL_FROM_ROWS {
            self.next
                .par_chunks_mut(side)
                .enumerate()
                .for_each(|(i, out)| row(i, out));
        } else {
            for (i, out) in self.next.chunks_mut(side).enumerate() {
                row(i, out);
            }
        }
        std::mem::swap(&mut self.values, &mut self.next);
        self.two_j = n;
    }
}

/// The closed forms of degree 1 (Edmonds 1957, Table 4.1; common practice), for tests:
/// rows and columns m = 1, 0, −1.
pub fn degree_one_closed_form(beta_rad: f64) -> [[f64; 3]; 3] {
    let (s, c) = beta_rad.sin_cos();
    let r = std::f64::consts::FRAC_1_SQRT_2;
    [
        [0.5 * (1.0 + c), -s * r, 0.5 * (1.0 - c)],
        [s * r, c, -s * r],
        [0.5 * (1.0 - c), s * r, 0.5 * (1.0 + c)],
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn degree_one_matches_the_closed_form() {
        // closed form: Edmonds 1957, Table 4.1 (common practice)
        for beta in [0.0, 0.3, 1.2, 2.9, -0.7] {
            let mut d = WignerSmallD::new(beta, 1);
            d.next_degree();
            let want = degree_one_closed_form(beta);
            for (i, mp) in [1isize, 0, -1].into_iter().enumerate() {
                for (k, m) in [1isize, 0, -1].into_iter().enumerate() {
                    let got = d.get(mp, m);
                    assert!(
                        (got - want[i][k]).abs() < 1e-15,
                        "β {beta}: d1_({mp},{m}) = {got}, closed form {}",
                        want[i][k]
                    );
                }
            }
        }
    }

    #[test]
    fn matrices_stay_orthogonal_at_high_degree() {
        // d^l(β) is a real orthogonal matrix (common practice); rows of degree 600 are unit
        // vectors to ~1e-13, which fails if a recursion weight is off.
        let mut d = WignerSmallD::new(1.1, 600);
        for _ in 0..600 {
            d.next_degree();
        }
        let l = 600isize;
        for mp in [l, l / 2, 0, -l / 3, -l] {
            let norm: f64 = (-l..=l).map(|m| d.get(mp, m).powi(2)).sum();
            assert!((norm - 1.0).abs() < 1e-12, "row {mp}: Σ d² = {norm}");
            let dot: f64 = (-l..=l).map(|m| d.get(mp, m) * d.get(1, m)).sum();
            if mp != 1 {
                assert!(dot.abs() < 1e-12, "rows {mp}, 1: dot {dot}");
            }
        }
    }
}
