//! The bodies of the lane kernels, generic over fused multiply–add, inlined into each compiled
//! copy of `dispatch`. Every inner loop runs over the [`LANES`] lanes of one entry, which the
//! compiler turns into vector instructions of the copy's width.

use super::{LaneSums, LaneTable, ObservationBlock, LANES, SUM_WIDTH, TRIG_RESTART};
use crate::observe::fit::design::{order_major_start, UnknownLayout};

/// a b + c, fused when `F` (a software `mul_add` would cost more than it saves).
#[inline(always)]
fn fmadd<const F: bool>(a: f64, b: f64, c: f64) -> f64 {
    if F {
        a.mul_add(b, c)
    } else {
        a * b + c
    }
}

/// cos mλ, sin mλ of every lane for the orders the lane setter left to the recurrence, then
/// the columns k_l P̄_lm of every lane.
#[inline(always)]
pub(super) fn fill_columns<const F: bool>(table: &LaneTable, block: &mut ObservationBlock) {
    let lmax = block.lmax;
    debug_assert_eq!(table.lmax, lmax);
    let ObservationBlock {
        t,
        u,
        cos,
        sin,
        k,
        columns,
        ..
    } = block;
    let (c1, s1) = (cos.get(1).copied(), sin.get(1).copied());
    if let (Some(c1), Some(s1)) = (c1, s1) {
        for m in 2..=lmax {
            if m % TRIG_RESTART == 0 {
                continue;
            }
            let (cp, sp) = (cos[m - 1], sin[m - 1]);
            let (mut cm, mut sm) = ([0.0; LANES], [0.0; LANES]);
            for g in 0..LANES {
                cm[g] = fmadd::<F>(cp[g], c1[g], -(sp[g] * s1[g]));
                sm[g] = fmadd::<F>(sp[g], c1[g], cp[g] * s1[g]);
            }
            cos[m] = cm;
            sin[m] = sm;
        }
    }
    let mut u_pow_m = [1.0; LANES];
    for m in 0..=lmax {
        let base = order_major_start(lmax, m);
        let len = lmax + 1 - m;
        if m > 0 {
            for g in 0..LANES {
                u_pow_m[g] *= u[g];
            }
        }
        let run = &mut columns[base..base + len];
        let a = &table.a[base..base + len];
        let b = &table.b[base..base + len];
        let kk = &k[m..m + len];
        let mut p0 = [0.0; LANES];
        for g in 0..LANES {
            p0[g] = table.sectoral[m] * u_pow_m[g];
            run[0][g] = kk[0][g] * p0[g];
        }
        if len == 1 {
            continue;
        }
        let mut p1 = [0.0; LANES];
        for g in 0..LANES {
            p1[g] = a[1] * t[g] * p0[g];
            run[1][g] = kk[1][g] * p1[g];
        }
        for (((out, kl), &al), &bl) in run[2..].iter_mut().zip(&kk[2..]).zip(&a[2..]).zip(&b[2..]) {
            let mut p2 = [0.0; LANES];
            for g in 0..LANES {
                p2[g] = fmadd::<F>(al * t[g], p1[g], -(bl * p0[g]));
                out[g] = kl[g] * p2[g];
            }
            p0 = p1;
            p1 = p2;
        }
    }
}

/// Σ_l q_l x_l over one order's run for every lane, with two partial sums (even and odd
/// entries) per lane so that consecutive multiply–adds do not wait on each other.
#[inline(always)]
fn run_sums<const F: bool>(run: &[[f64; LANES]], x: &[f64]) -> [f64; LANES] {
    let (mut even, mut odd) = ([0.0; LANES], [0.0; LANES]);
    let mut pairs = run.chunks_exact(2);
    let mut xs = x.chunks_exact(2);
    for (q, xp) in (&mut pairs).zip(&mut xs) {
        for g in 0..LANES {
            even[g] = fmadd::<F>(q[0][g], xp[0], even[g]);
            odd[g] = fmadd::<F>(q[1][g], xp[1], odd[g]);
        }
    }
    if let (Some(q), Some(xl)) = (pairs.remainder().first(), xs.remainder().first()) {
        for g in 0..LANES {
            even[g] = fmadd::<F>(q[g], *xl, even[g]);
        }
    }
    let mut out = [0.0; LANES];
    for g in 0..LANES {
        out[g] = even[g] + odd[g];
    }
    out
}

/// a_iᵀx for every lane: Σ_m cos mλ Σ_l k_l P̄_lm C_lm + sin mλ Σ_l k_l P̄_lm S_lm, with x the
/// unknowns of `layout` (whose degree is the block's).
#[inline(always)]
pub(super) fn synthesize<const F: bool>(
    block: &ObservationBlock,
    layout: &UnknownLayout,
    x: &[f64],
) -> [f64; LANES] {
    let lmax = block.lmax;
    let mut value = [0.0; LANES];
    for m in 0..=lmax {
        let base = order_major_start(lmax, m);
        let len = lmax + 1 - m;
        let run = &block.columns[base..base + len];
        let c0 = layout.c_index(m, m);
        let fc = run_sums::<F>(run, &x[c0..c0 + len]);
        let cm = &block.cos[m];
        for g in 0..LANES {
            value[g] = fmadd::<F>(cm[g], fc[g], value[g]);
        }
        if m > 0 {
            let s0 = layout.s_index(m, m);
            let fs = run_sums::<F>(run, &x[s0..s0 + len]);
            let sm = &block.sin[m];
            for g in 0..LANES {
                value[g] = fmadd::<F>(sm[g], fs[g], value[g]);
            }
        }
    }
    value
}

/// sums += Σ_lanes f_g a_g: for every order, the run's columns times f cos mλ and f sin mλ,
/// the lanes folded into [`SUM_WIDTH`] partial sums (lane g into g mod SUM_WIDTH).
#[inline(always)]
pub(super) fn accumulate<const F: bool>(
    block: &ObservationBlock,
    f: &[f64; LANES],
    sums: &mut LaneSums,
) {
    let lmax = block.lmax;
    debug_assert_eq!(sums.lmax, lmax);
    for m in 0..=lmax {
        let base = order_major_start(lmax, m);
        let len = lmax + 1 - m;
        let run = &block.columns[base..base + len];
        let (mut fc, mut fs) = ([0.0; LANES], [0.0; LANES]);
        for g in 0..LANES {
            fc[g] = f[g] * block.cos[m][g];
            fs[g] = f[g] * block.sin[m][g];
        }
        let c = &mut sums.c[base..base + len];
        if m == 0 {
            for (q, ac) in run.iter().zip(c.iter_mut()) {
                fold_lanes::<F>(q, &fc, ac);
            }
            continue;
        }
        let s = &mut sums.s[base..base + len];
        for ((q, ac), as_) in run.iter().zip(c.iter_mut()).zip(s.iter_mut()) {
            fold_lanes::<F>(q, &fc, ac);
            fold_lanes::<F>(q, &fs, as_);
        }
    }
}

/// acc[h] += Σ_{g ≡ h mod SUM_WIDTH} q[g] f[g], in increasing g.
#[inline(always)]
#[allow(clippy::needless_range_loop)] // h indexes acc and, with the part, q and f
fn fold_lanes<const F: bool>(q: &[f64; LANES], f: &[f64; LANES], acc: &mut [f64; SUM_WIDTH]) {
    for part in 0..LANES / SUM_WIDTH {
        for h in 0..SUM_WIDTH {
            let g = part * SUM_WIDTH + h;
            acc[h] = fmadd::<F>(q[g], f[g], acc[h]);
        }
    }
}
