//! Scalar observation rows of a block of observations at once, one SIMD lane per observation.
//!
//! A scalar row is a_i(C_lm) = k_l(r_i) P̄_lm(cos θ_i) cos mλ_i, a_i(S_lm) = k_l P̄_lm sin mλ_i
//! ([`super::functional`]). For a block of [`LANES`] observations the kernels here compute
//!
//! - the columns k_l P̄_lm of every lane, order by order (the layout of
//!   [`super::design::order_major_start`]), by the fully normalised recursion of Holmes &
//!   Featherstone (2002), J. Geodesy 76:279–299, eqs. 11–13, the same recursion and the same
//!   coefficients as [`super::design::LegendreTable::fill_order_major`], one chain per lane;
//! - cos mλ and sin mλ of every lane by the rotation recurrence cos(m+1)λ = cos mλ cos λ −
//!   sin mλ sin λ, sin(m+1)λ = sin mλ cos λ + cos mλ sin λ (common practice: the angle
//!   addition formulas), restarted from `sin_cos` every [`TRIG_RESTART`] orders so the rounding
//!   error of the recurrence, which grows about linearly with the number of steps, stays near
//!   64 ε;
//! - the synthesis a_iᵀx of every lane ([`LaneKernels::synthesize`]) and the adjoint
//!   accumulation Σ_i f_i a_i over the block ([`LaneKernels::accumulate`]), a small matrix
//!   product over the block's columns, into lane-wise partial sums ([`LaneSums`]) that are
//!   added in a fixed order at the end, so the result does not depend on the thread count.
//!
//! The kernel bodies are compiled three times, for the instruction sets of the transform
//! kernels ([`KernelPath`](crate::sht::KernelPath): AVX-512, AVX2 + FMA, portable), and the widest one the CPU has is
//! chosen at run time (`dispatch`). The reference they are tested against is the per-point
//! operator of [`super::scalar_normal`] and the pass over full rows of
//! [`super::iterative::RowSource`].
//!
//! Near a pole u^m underflows for large m, as in the scalar table; the true P̄_lm there are
//! themselves below ~1e-280 for the degrees a fit reaches (see [`super::design`]).

mod dispatch;
mod kernels;

pub use dispatch::LaneKernels;

use super::design::{order_major_start, UnknownLayout};
use crate::coeffs::packed_len;
use crate::sht::legendre::recursion::{a_lm, b_lm, sectoral_factors};

/// Observations per block: one lane each. Sixteen gives every kernel loop at least two
/// independent AVX-512 chains (four with AVX2), which hides the latency of the recursion.
pub const LANES: usize = 16;
/// Width of the partial sums of the adjoint: the block's lanes are folded into this many.
const SUM_WIDTH: usize = 8;
/// Orders between exact `sin_cos` restarts of the rotation recurrence.
pub const TRIG_RESTART: usize = 64;

/// Recursion coefficients of the order-major layout: entry (l, m) at `order_major_start(L, m)
/// + l − m`. a_lm, b_lm as [`crate::sht::legendre::recursion`] gives them (0 where unused),
///   and the sectoral prefactors c_m of P̄_mm = c_m sin^m θ.
#[derive(Debug, Clone)]
pub struct LaneTable {
    pub lmax: usize,
    a: Vec<f64>,
    b: Vec<f64>,
    sectoral: Vec<f64>,
}

impl LaneTable {
    pub fn new(lmax: usize) -> LaneTable {
        let n = packed_len(lmax);
        let (mut a, mut b) = (vec![0.0; n], vec![0.0; n]);
        for m in 0..=lmax {
            let base = order_major_start(lmax, m);
            for l in (m + 1)..=lmax {
                a[base + l - m] = a_lm(l, m);
                if l >= m + 2 {
                    b[base + l - m] = b_lm(l, m);
                }
            }
        }
        LaneTable {
            lmax,
            a,
            b,
            sectoral: sectoral_factors(lmax),
        }
    }
}

/// The inputs and the columns of one block of observations. A lane that holds no observation
/// has k = 0, so its columns are zero and it adds nothing.
#[derive(Debug, Clone)]
pub struct ObservationBlock {
    lmax: usize,
    /// cos θ and sin θ (≥ 0) per lane.
    t: [f64; LANES],
    u: [f64; LANES],
    /// cos mλ, sin mλ per order; orders 0, 1 and the restarts are set with the lane.
    cos: Vec<[f64; LANES]>,
    sin: Vec<[f64; LANES]>,
    /// Degree factors k_l per degree.
    k: Vec<[f64; LANES]>,
    /// k_l P̄_lm per lane, order-major.
    columns: Vec<[f64; LANES]>,
}

impl ObservationBlock {
    pub fn new(lmax: usize) -> ObservationBlock {
        let mut block = ObservationBlock {
            lmax,
            t: [0.0; LANES],
            u: [1.0; LANES],
            cos: vec![[1.0; LANES]; lmax + 1],
            sin: vec![[0.0; LANES]; lmax + 1],
            k: vec![[0.0; LANES]; lmax + 1],
            columns: vec![[0.0; LANES]; packed_len(lmax)],
        };
        block.clear();
        block
    }

    pub fn lmax(&self) -> usize {
        self.lmax
    }

    /// Empties every lane (k = 0 at the equator, λ = 0).
    pub fn clear(&mut self) {
        for g in 0..LANES {
            self.set_lane(g, 0.0, 1.0, 0.0, LaneFactors::Empty);
        }
    }

    /// Puts an observation at cos θ = `t`, sin θ = `u` (≥ 0), longitude `lambda_rad` with
    /// degree factors `k` into lane `g`.
    pub fn set_lane(&mut self, g: usize, t: f64, u: f64, lambda_rad: f64, k: LaneFactors) {
        self.t[g] = t;
        self.u[g] = u;
        match k {
            LaneFactors::Values(k) => self.k.iter_mut().zip(k).for_each(|(kl, v)| kl[g] = *v),
            LaneFactors::Profile { g: profile, s, e } => {
                // s^{e+l+1} by repeated multiplication: a relative error of about l ε/2
                let mut power = s.powi(e + 1);
                for (kl, gl) in self.k.iter_mut().zip(profile) {
                    kl[g] = gl * power;
                    power *= s;
                }
            }
            LaneFactors::Empty => self.k.iter_mut().for_each(|kl| kl[g] = 0.0),
        }
        self.cos[0][g] = 1.0;
        self.sin[0][g] = 0.0;
        let restarts = (TRIG_RESTART..=self.lmax).step_by(TRIG_RESTART);
        for m in (1..=self.lmax.min(1)).chain(restarts) {
            let (s, c) = (m as f64 * lambda_rad).sin_cos();
            self.cos[m][g] = c;
            self.sin[m][g] = s;
        }
    }
}

/// The degree factors k_l (l = 0..L) of one lane.
#[derive(Debug, Clone, Copy)]
pub enum LaneFactors<'a> {
    /// No observation: k = 0.
    Empty,
    /// The factors themselves.
    Values(&'a [f64]),
    /// k_l = g_l s^{e+l+1}, the split of
    /// [`RowBuilder::scalar_degree_profile`](crate::observe::fit::functional::RowBuilder::scalar_degree_profile).
    Profile { g: &'a [f64], s: f64, e: i32 },
}

/// Lane-wise partial sums of the adjoint Σ_i f_i a_i, order-major, for the C and the S
/// unknowns.
#[derive(Debug, Clone)]
pub struct LaneSums {
    lmax: usize,
    c: Vec<[f64; SUM_WIDTH]>,
    s: Vec<[f64; SUM_WIDTH]>,
}

impl LaneSums {
    pub fn new(lmax: usize) -> LaneSums {
        let n = packed_len(lmax);
        LaneSums {
            lmax,
            c: vec![[0.0; SUM_WIDTH]; n],
            s: vec![[0.0; SUM_WIDTH]; n],
        }
    }

    /// Bytes of one set of sums and one block, for memory estimates.
    pub fn bytes_with_block(lmax: usize) -> usize {
        packed_len(lmax) * 8 * (2 * SUM_WIDTH + LANES) + (3 * (lmax + 1)) * LANES * 8
    }

    /// Adds the sums, lanes folded in a fixed order, into `out` (the unknowns of `layout`,
    /// whose degree is the sums' degree).
    pub fn add_to(&self, layout: &UnknownLayout, out: &mut [f64]) {
        let lmax = self.lmax;
        for m in 0..=lmax {
            let base = order_major_start(lmax, m);
            for l in m..=lmax {
                let j = base + l - m;
                out[layout.c_index(l, m)] += self.c[j].iter().sum::<f64>();
                if m > 0 {
                    out[layout.s_index(l, m)] += self.s[j].iter().sum::<f64>();
                }
            }
        }
    }
}
