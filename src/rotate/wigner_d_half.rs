//! The rows m' ≥ 0 of Wignerʼs small d-matrices d^l_{m'm}(β), advanced degree by degree with
//! the same recursion as the full-matrix reference [`super::WignerSmallD`] (Risbo 1996,
//! J. Geodesy 70:383–396; its notes give the step and the convention), at about a quarter of
//! its memory traffic.
//!
//! Two savings, neither of which changes a single term of the recursion:
//!
//! * Half the rows. d^j_{−m',−m}(β) = (−1)^{m'−m} d^j_{m'm}(β) for integer and half-integer j
//!   (Edmonds 1957, *Angular Momentum in Quantum Mechanics*, eq. 4.2.6; common practice). In
//!   the row index i = j − m' of the reference this reads D_{n−i, n−k} = (−1)^{i−k} D_{ik}
//!   with n = 2j. Row i of a step needs rows i and i − 1 of the step before, so the rows
//!   i ≤ l of degree l (m' ≥ 0, all a rotation of a real field needs) follow from the rows
//!   i ≤ l of the half-integer step, and those from the rows i ≤ l of degree l − 1: the
//!   stored rows i ≤ l − 1 and one more, row l, which is row l − 2 mirrored.
//! * One pass per degree. The half-integer step's rows are made two at a time inside the
//!   pass that makes degree l's rows, so they never go to main memory; at L = 2,000 the
//!   stored matrix alone is 32 MB, far beyond the caches.
//!
//! The rows of a degree are made in parallel in contiguous blocks; each block makes the one
//! half-integer row before its first row again. Entries below 10⁻³⁰⁰ are flushed to zero as in
//! the reference. Tested against the reference in `tests/sht/rotation.rs`.

use rayon::prelude::*;

/// Values below this magnitude are set to zero (as in the reference).
const FLUSH_BELOW: f64 = 1e-300;

/// Degrees from which the rows of a degree are made in parallel.
const PARALLEL_FROM_DEGREE: usize = 96;

/// The rows m' = l, l − 1, …, 0 of d^l(β) for one angle β, advanced degree by degree.
#[derive(Debug, Clone)]
pub struct WignerSmallDHalf {
    /// cos(β/2), sin(β/2): the degree-½ matrix is [[cos, −sin], [sin, cos]].
    cos_half: f64,
    sin_half: f64,
    /// Degree held now.
    l: usize,
    /// (l + 1) rows of 2l + 1 entries: row i ↔ m' = l − i, column k ↔ m = l − k.
    values: Vec<f64>,
    next: Vec<f64>,
    /// √k for k = 0..
    sqrt_int: Vec<f64>,
}

impl WignerSmallDHalf {
    /// d⁰(β) = \[1\], ready to be advanced with [`WignerSmallDHalf::next_degree`]; `lmax` only
    /// sizes the buffers.
    pub fn new(beta_rad: f64, lmax: usize) -> Self {
        let capacity = (lmax + 1) * (2 * lmax + 1);
        let mut values = Vec::with_capacity(capacity);
        values.push(1.0);
        WignerSmallDHalf {
            cos_half: (0.5 * beta_rad).cos(),
            sin_half: (0.5 * beta_rad).sin(),
            l: 0,
            values,
            next: Vec::with_capacity(capacity),
            sqrt_int: (0..=2 * lmax + 2).map(|k| (k as f64).sqrt()).collect(),
        }
    }

    /// Bytes the buffers need to reach degree `lmax`.
    pub fn memory_bytes(lmax: usize) -> u64 {
        2 * ((lmax + 1) * (2 * lmax + 1)) as u64 * 8
    }

    /// Degree l of the rows held now.
    pub fn degree(&self) -> usize {
        self.l
    }

    /// The row m' (0 ≤ m' ≤ l): entry l − m holds d^l_{m'm}(β), m = l, l − 1, …, −l.
    #[inline]
    pub fn row(&self, m_prime: usize) -> &[f64] {
        debug_assert!(m_prime <= self.l);
        let side = 2 * self.l + 1;
        let i = self.l - m_prime;
        &self.values[i * side..(i + 1) * side]
    }

    /// d^l_{m'm}(β) for the degree held now, any |m'|, |m| ≤ l (rows m' < 0 by the symmetry of
    /// the module notes).
    pub fn get(&self, m_prime: isize, m: isize) -> f64 {
        let l = self.l as isize;
        debug_assert!(m_prime.abs() <= l && m.abs() <= l);
        if m_prime >= 0 {
            self.row(m_prime as usize)[(l - m) as usize]
        } else {
            let v = self.row((-m_prime) as usize)[(l + m) as usize];
            if (m_prime - m).rem_euclid(2) == 0 {
                v
            } else {
                -v
            }
        }
    }

    /// Advances from degree l − 1 to l (both half-integer steps in one pass).
    pub fn next_degree(&mut self) {
        let l = self.l + 1;
        let n0 = 2 * self.l; // 2j of the rows held now; they have n0 + 1 entries
        let old_side = n0 + 1;
        let side = 2 * l + 1;
        // old row l (m' = −1 of degree l − 1) is row l − 2 mirrored; it exists from l = 2 on
        let extra_row: Vec<f64> = if l <= n0 {
            let src = &self.values[(n0 - l) * old_side..(n0 - l + 1) * old_side];
            (0..old_side)
                .map(|k| {
                    let v = src[n0 - k];
                    if (l + k) % 2 == 0 {
                        v
                    } else {
                        -v
                    }
                })
                .collect()
        } else {
            Vec::new()
        };
        let old = &self.values;
        let old_row = |i: usize| -> Option<&[f64]> {
            if i < l {
                Some(&old[i * old_side..(i + 1) * old_side])
            } else if i == l && !extra_row.is_empty() {
                Some(&extra_row)
            } else {
                None
            }
        };
        let stepper = HalfStep {
            a: self.cos_half,
            b: -self.sin_half,
            c: self.sin_half,
            d: self.cos_half,
            sqrt_int: &self.sqrt_int,
        };
        // every entry of every row is written below, so the buffer is not cleared first (at
        // L = 2,000 zeroing it cost a sixth of the instructions and a pass over memory)
        let needed = (l + 1) * side;
        if self.next.len() < needed {
            self.next.resize(needed, 0.0);
        } else {
            self.next.truncate(needed);
        }
        let rows = l + 1;
        let block = |first_row: usize, out: &mut [f64]| {
            let n1 = 2 * l - 1;
            let mut mid_prev = vec![0.0; n1 + 1];
            let mut mid_this = vec![0.0; n1 + 1];
            if first_row >= 1 {
                stepper.row(
                    n1,
                    first_row - 1,
                    old_row(first_row - 1),
                    first_row.checked_sub(2).and_then(&old_row),
                    &mut mid_prev,
                );
            }
            for (offset, out_row) in out.chunks_mut(side).enumerate() {
                let i = first_row + offset;
                stepper.row(
                    n1,
                    i,
                    old_row(i),
                    i.checked_sub(1).and_then(&old_row),
                    &mut mid_this,
                );
                let prev = if i >= 1 { Some(&mid_prev[..]) } else { None };
                stepper.row(2 * l, i, Some(&mid_this), prev, out_row);
                std::mem::swap(&mut mid_prev, &mut mid_this);
            }
        };
        if l >= PARALLEL_FROM_DEGREE {
            let blocks = 4 * rayon::current_num_threads().max(1);
            let rows_per_block = rows.div_ceil(blocks);
            self.next
                .par_chunks_mut(rows_per_block * side)
                .enumerate()
                .for_each(|(b, out)| block(b * rows_per_block, out));
        } else {
            block(0, &mut self.next);
        }
        std::mem::swap(&mut self.values, &mut self.next);
        self.l = l;
    }
}

/// The weights of one half-integer step of Risbo's recursion.
struct HalfStep<'a> {
    a: f64,
    b: f64,
    c: f64,
    d: f64,
    sqrt_int: &'a [f64],
}

impl HalfStep<'_> {
    /// Row i of step n (n + 1 entries, into `out`) from rows i and i − 1 of step n − 1
    /// (n entries each; `None` where the row lies outside 0..n − 1):
    ///
    ///   D^{(n)}_{ik} = (1/n) [ √(n−k) (a√(n−i) D_{i,k} + c√i D_{i−1,k})
    ///                        + √k   (b√(n−i) D_{i,k−1} + d√i D_{i−1,k−1}) ].
    fn row(
        &self,
        n: usize,
        i: usize,
        row_i: Option<&[f64]>,
        row_im1: Option<&[f64]>,
        out: &mut [f64],
    ) {
        let sq = self.sqrt_int;
        let (wi_left, wi_right, ri) = match row_i {
            Some(r) => (self.a * sq[n - i], self.b * sq[n - i], r),
            None => (0.0, 0.0, row_im1.expect("one of the two rows exists")),
        };
        let (wm_left, wm_right, rm) = match row_im1 {
            Some(r) => (self.c * sq[i], self.d * sq[i], r),
            None => (0.0, 0.0, ri),
        };
        let inv_n = 1.0 / n as f64;
        let flush = |v: f64| if v.abs() < FLUSH_BELOW { 0.0 } else { v };
        let (ri, rm) = (&ri[..n], &rm[..n]);
        let out = &mut out[..n + 1];
        out[0] = flush(inv_n * (sq[n] * (wi_left * ri[0] + wm_left * rm[0])));
        out[n] = flush(inv_n * (sq[n] * (wi_right * ri[n - 1] + wm_right * rm[n - 1])));
        // 1 ≤ k ≤ n − 1: √(n−k) runs down from √(n−1) while √k runs up
        let interior = out[1..n]
            .iter_mut()
            .zip(ri[1..].iter().zip(&rm[1..]))
            .zip(ri[..n - 1].iter().zip(&rm[..n - 1]))
            .zip(sq[1..n].iter().rev().zip(&sq[1..n]));
        for (((slot, (xi, xm)), (yi, ym)), (s_down, s_up)) in interior {
            let left = wi_left * xi + wm_left * xm;
            let right = wi_right * yi + wm_right * ym;
            *slot = flush(inv_n * (s_down * left + s_up * right));
        }
    }
}
