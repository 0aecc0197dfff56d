//! The inner loops over degree l for one order m and one block of W lanes: the hot path of
//! every transform. Written once, generically over the lane count `W` and the use of fused
//! multiply–add, and compiled per instruction set by `kernel::dispatch` (the fixed-size lane
//! arrays let the compiler keep each in one or two vector registers).
//!
//! State at degree l: `p0` = P̄_{l−1,m}, `p1` = P̄_lm per lane; advancing uses
//! P̄_{l+1,m} = a_{l+1} x P̄_lm − b_{l+1} P̄_{l−1,m} (Holmes & Featherstone 2002). Lanes enter
//! at the degree where their column becomes representable (`Event`), before which they hold
//! zeros. The loop is unrolled by two so that even and odd l − m accumulate into separate,
//! independent registers.

/// A lane joins the recursion at degree `l` with P̄_{l−1,m} = `p_prev`, P̄_lm = `p`.
#[derive(Debug, Clone, Copy)]
pub struct Event {
    pub l: usize,
    pub lane: usize,
    pub p_prev: f64,
    pub p: f64,
}

/// Recursion coefficients of one order, indexed by degree.
pub struct OrderCoefficients<'a> {
    pub m: usize,
    pub lmax: usize,
    pub a: &'a [f64],
    pub b: &'a [f64],
    /// f_lm of the derivative relation (gradient synthesis only).
    pub f: &'a [f64],
}

#[inline(always)]
fn fmadd<const FMA: bool>(a: f64, b: f64, c: f64) -> f64 {
    if FMA {
        a.mul_add(b, c)
    } else {
        a * b + c
    }
}

/// Per-lane sums of one block, split by parity of l − m ([0] even, [1] odd).
pub struct SynthSums<const W: usize> {
    /// Σ C_lm P̄_lm and Σ S_lm P̄_lm.
    pub c: [[f64; W]; 2],
    pub s: [[f64; W]; 2],
    /// Σ C_lm (l x P̄_lm − f_lm P̄_{l−1,m}) and the same with S (gradient only; divide by sin θ).
    pub dc: [[f64; W]; 2],
    pub ds: [[f64; W]; 2],
}

impl<const W: usize> SynthSums<W> {
    pub fn zero() -> Self {
        SynthSums {
            c: [[0.0; W]; 2],
            s: [[0.0; W]; 2],
            dc: [[0.0; W]; 2],
            ds: [[0.0; W]; 2],
        }
    }
}

#[inline(always)]
fn inject<const W: usize>(events: &[Event], ev: &mut usize, l: usize, p0: &mut [f64; W], p1: &mut [f64; W]) {
    while *ev < events.len() && events[*ev].l == l {
        let e = events[*ev];
        p0[e.lane] = e.p_prev;
        p1[e.lane] = e.p;
        *ev += 1;
    }
}

#[inline(always)]
fn advance<const W: usize, const FMA: bool>(
    rc: &OrderCoefficients,
    l: usize,
    x: &[f64; W],
    p0: &mut [f64; W],
    p1: &mut [f64; W],
) {
    let (a, b) = (rc.a[l + 1], rc.b[l + 1]);
    for i in 0..W {
        let next = fmadd::<FMA>(a * x[i], p1[i], -(b * p0[i]));
        p0[i] = p1[i];
        p1[i] = next;
    }
}

#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn accumulate_synth<const W: usize, const FMA: bool, const GRAD: bool>(
    rc: &OrderCoefficients,
    l: usize,
    cl: f64,
    sl: f64,
    x: &[f64; W],
    p0: &[f64; W],
    p1: &[f64; W],
    ac: &mut [f64; W],
    as_: &mut [f64; W],
    dc: &mut [f64; W],
    ds: &mut [f64; W],
) {
    for i in 0..W {
        ac[i] = fmadd::<FMA>(cl, p1[i], ac[i]);
        as_[i] = fmadd::<FMA>(sl, p1[i], as_[i]);
    }
    if GRAD {
        let (lf, f) = (l as f64, rc.f[l]);
        for i in 0..W {
            let d = fmadd::<FMA>(lf * x[i], p1[i], -(f * p0[i]));
            dc[i] = fmadd::<FMA>(cl, d, dc[i]);
            ds[i] = fmadd::<FMA>(sl, d, ds[i]);
        }
    }
}

/// Synthesis sums for one order and one block: Σ_l C_lm P̄_lm(x_i) etc. per lane.
/// `c[l]`, `s[l]` hold the coefficients of order m; `events` must be sorted by degree.
#[inline(always)]
pub fn synth_block<const W: usize, const FMA: bool, const GRAD: bool>(
    rc: &OrderCoefficients,
    x: &[f64; W],
    events: &[Event],
    c: &[f64],
    s: &[f64],
) -> SynthSums<W> {
    let mut out = SynthSums::<W>::zero();
    let Some(first) = events.first() else {
        return out;
    };
    let (m, lmax) = (rc.m, rc.lmax);
    let mut p0 = [0.0; W];
    let mut p1 = [0.0; W];
    let (mut ac0, mut as0, mut dc0, mut ds0) = ([0.0; W], [0.0; W], [0.0; W], [0.0; W]);
    let (mut ac1, mut as1, mut dc1, mut ds1) = ([0.0; W], [0.0; W], [0.0; W], [0.0; W]);
    let mut ev = 0;
    let l_first = first.l;
    let mut l = l_first;
    loop {
        inject(events, &mut ev, l, &mut p0, &mut p1);
        accumulate_synth::<W, FMA, GRAD>(rc, l, c[l], s[l], x, &p0, &p1, &mut ac0, &mut as0, &mut dc0, &mut ds0);
        if l == lmax {
            break;
        }
        advance::<W, FMA>(rc, l, x, &mut p0, &mut p1);
        l += 1;
        inject(events, &mut ev, l, &mut p0, &mut p1);
        accumulate_synth::<W, FMA, GRAD>(rc, l, c[l], s[l], x, &p0, &p1, &mut ac1, &mut as1, &mut dc1, &mut ds1);
        if l == lmax {
            break;
        }
        advance::<W, FMA>(rc, l, x, &mut p0, &mut p1);
        l += 1;
    }
    let first_parity = (l_first - m) & 1;
    let (e, o) = (first_parity, 1 - first_parity);
    out.c[e] = ac0;
    out.s[e] = as0;
    out.c[o] = ac1;
    out.s[o] = as1;
    if GRAD {
        out.dc[e] = dc0;
        out.ds[e] = ds0;
        out.dc[o] = dc1;
        out.ds[o] = ds1;
    }
    out
}

/// Width of the partial sums kept per degree in analysis (one AVX2 register).
pub const FOLD: usize = 4;

#[inline(always)]
fn accumulate_analysis<const W: usize, const FMA: bool>(
    l: usize,
    p1: &[f64; W],
    hr: &[f64; W],
    hi: &[f64; W],
    acc_re: &mut [f64],
    acc_im: &mut [f64],
) {
    let mut sr = [0.0; FOLD];
    let mut si = [0.0; FOLD];
    for g in 0..W / FOLD {
        for k in 0..FOLD {
            let i = g * FOLD + k;
            sr[k] = fmadd::<FMA>(p1[i], hr[i], sr[k]);
            si[k] = fmadd::<FMA>(p1[i], hi[i], si[k]);
        }
    }
    let base = l * FOLD;
    for k in 0..FOLD {
        acc_re[base + k] += sr[k];
        acc_im[base + k] += si[k];
    }
}

/// Analysis for one order and one block: adds Σ_i P̄_lm(x_i) H_i (with H split by parity of
/// l − m: `hr[0]`/`hi[0]` for even, `[1]` for odd) into `acc_re`/`acc_im[l·FOLD + k]`.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub fn analysis_block<const W: usize, const FMA: bool>(
    rc: &OrderCoefficients,
    x: &[f64; W],
    events: &[Event],
    hr: &[[f64; W]; 2],
    hi: &[[f64; W]; 2],
    acc_re: &mut [f64],
    acc_im: &mut [f64],
) {
    let Some(first) = events.first() else {
        return;
    };
    let (m, lmax) = (rc.m, rc.lmax);
    let mut p0 = [0.0; W];
    let mut p1 = [0.0; W];
    let mut ev = 0;
    let mut l = first.l;
    let pa = (l - m) & 1;
    let (hr_a, hi_a, hr_b, hi_b) = (&hr[pa], &hi[pa], &hr[1 - pa], &hi[1 - pa]);
    loop {
        inject(events, &mut ev, l, &mut p0, &mut p1);
        accumulate_analysis::<W, FMA>(l, &p1, hr_a, hi_a, acc_re, acc_im);
        if l == lmax {
            break;
        }
        advance::<W, FMA>(rc, l, x, &mut p0, &mut p1);
        l += 1;
        inject(events, &mut ev, l, &mut p0, &mut p1);
        accumulate_analysis::<W, FMA>(l, &p1, hr_b, hi_b, acc_re, acc_im);
        if l == lmax {
            break;
        }
        advance::<W, FMA>(rc, l, x, &mut p0, &mut p1);
        l += 1;
    }
}
