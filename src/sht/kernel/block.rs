//! The inner loops over degree l for one order m and one block of W lanes: the hot path of
//! every transform. Written once, generically over the lane count `W` and the use of fused
//! multiply–add, and compiled per instruction set in `kernel::unsafe_parts` (the fixed-size lane
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

/// Loads the events of degree `l` (from `*ev` on) into the state. Runs between segments
/// only: its dynamic lane index would otherwise pin the state arrays to memory.
#[inline(always)]
fn inject<const W: usize>(
    events: &[Event],
    ev: &mut usize,
    l: usize,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
) {
    while *ev < events.len() && events[*ev].l == l {
        let e = events[*ev];
        p0[e.lane] = e.p_prev;
        p1[e.lane] = e.p;
        *ev += 1;
    }
}

/// cos θ of a block's lanes as a double `t` plus its rounding error `t_lo`
/// (see `legendre::colatitude`).
#[derive(Debug, Clone, Copy)]
pub struct Nodes<const W: usize> {
    pub t: [f64; W],
    pub t_lo: [f64; W],
}

/// One recursion step P̄_{l−1}, P̄_l → P̄_l, P̄_{l+1} with `a` = a_{l+1}, `b` = b_{l+1}.
#[inline(always)]
fn advance<const W: usize, const FMA: bool>(
    a: f64,
    b: f64,
    x: &Nodes<W>,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
) {
    for i in 0..W {
        let main = fmadd::<FMA>(a * x.t[i], p1[i], -(b * p0[i]));
        let next = fmadd::<FMA>(a * x.t_lo[i], p1[i], main);
        p0[i] = p1[i];
        p1[i] = next;
    }
}

/// Sums of one parity class of l − m.
#[derive(Clone, Copy)]
struct Acc<const W: usize> {
    c: [f64; W],
    s: [f64; W],
    dc: [f64; W],
    ds: [f64; W],
}

impl<const W: usize> Acc<W> {
    const ZERO: Self = Acc {
        c: [0.0; W],
        s: [0.0; W],
        dc: [0.0; W],
        ds: [0.0; W],
    };
}

#[inline(always)]
#[allow(clippy::too_many_arguments, clippy::needless_range_loop)]
fn synth_step<const W: usize, const FMA: bool, const GRAD: bool>(
    lf: f64,
    f: f64,
    cl: f64,
    sl: f64,
    a_next: f64,
    b_next: f64,
    x: &Nodes<W>,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
    acc: &mut Acc<W>,
) {
    for i in 0..W {
        acc.c[i] = fmadd::<FMA>(cl, p1[i], acc.c[i]);
        acc.s[i] = fmadd::<FMA>(sl, p1[i], acc.s[i]);
    }
    if GRAD {
        for i in 0..W {
            // l (t + t_lo) P̄_lm − f_lm P̄_{l−1,m}: the low part of cos θ matters here too,
            // since the difference is divided by sin θ afterwards
            let main = fmadd::<FMA>(lf * x.t[i], p1[i], -(f * p0[i]));
            let d = fmadd::<FMA>(lf * x.t_lo[i], p1[i], main);
            acc.dc[i] = fmadd::<FMA>(cl, d, acc.dc[i]);
            acc.ds[i] = fmadd::<FMA>(sl, d, acc.ds[i]);
        }
    }
    advance::<W, FMA>(a_next, b_next, x, p0, p1);
}

/// Degrees l0..l0 + n with no lane entering: the state and both parity sums travel by value
/// and every index is static, so the whole loop runs in registers. `cur` collects the parity
/// of l0 and is returned as the parity of l0 + n. Slices start at l0 (`a`, `b` at l0 + 1) and
/// hold at least n entries.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn synth_segment<const W: usize, const FMA: bool, const GRAD: bool>(
    l0: usize,
    n: usize,
    a: &[f64],
    b: &[f64],
    f: &[f64],
    c: &[f64],
    s: &[f64],
    x: &Nodes<W>,
    mut p0: [f64; W],
    mut p1: [f64; W],
    mut cur: Acc<W>,
    mut other: Acc<W>,
) -> ([f64; W], [f64; W], Acc<W>, Acc<W>) {
    let (a, b, c, s) = (&a[..n], &b[..n], &c[..n], &s[..n]);
    let f = if GRAD { &f[..n] } else { &f[..0] };
    let fv = |k: usize| if GRAD { f[k] } else { 0.0 };
    let mut k = 0;
    while k + 2 <= n {
        let lf = (l0 + k) as f64;
        synth_step::<W, FMA, GRAD>(
            lf,
            fv(k),
            c[k],
            s[k],
            a[k],
            b[k],
            x,
            &mut p0,
            &mut p1,
            &mut cur,
        );
        synth_step::<W, FMA, GRAD>(
            lf + 1.0,
            fv(k + 1),
            c[k + 1],
            s[k + 1],
            a[k + 1],
            b[k + 1],
            x,
            &mut p0,
            &mut p1,
            &mut other,
        );
        k += 2;
    }
    if k < n {
        let lf = (l0 + k) as f64;
        synth_step::<W, FMA, GRAD>(
            lf,
            fv(k),
            c[k],
            s[k],
            a[k],
            b[k],
            x,
            &mut p0,
            &mut p1,
            &mut cur,
        );
        std::mem::swap(&mut cur, &mut other);
    }
    (p0, p1, cur, other)
}

/// Synthesis sums for one order and one block: Σ_l C_lm P̄_lm(x_i) etc. per lane.
/// `c[l]`, `s[l]` hold the coefficients of order m; `events` must be sorted by degree.
/// `rc.a`, `rc.b` must hold lmax + 2 entries (the last is read by a final, discarded step).
#[inline(always)]
pub fn synth_block<const W: usize, const FMA: bool, const GRAD: bool>(
    rc: &OrderCoefficients,
    x: &Nodes<W>,
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
    let (mut cur, mut other) = (Acc::<W>::ZERO, Acc::<W>::ZERO);
    let mut ev = 0;
    let mut l = first.l;
    inject(events, &mut ev, l, &mut p0, &mut p1);
    loop {
        let l_end = if ev < events.len() {
            events[ev].l
        } else {
            lmax + 1
        };
        let n = l_end - l;
        (p0, p1, cur, other) = synth_segment::<W, FMA, GRAD>(
            l,
            n,
            &rc.a[l + 1..],
            &rc.b[l + 1..],
            if GRAD { &rc.f[l..] } else { &rc.f[..0] },
            &c[l..],
            &s[l..],
            x,
            p0,
            p1,
            cur,
            other,
        );
        l = l_end;
        if l > lmax {
            break;
        }
        inject(events, &mut ev, l, &mut p0, &mut p1);
    }
    // `cur` now belongs to the parity of lmax + 1 − m
    let pc = (lmax + 1 - m) & 1;
    let (e, o) = if pc == 0 { (cur, other) } else { (other, cur) };
    out.c = [e.c, o.c];
    out.s = [e.s, o.s];
    if GRAD {
        out.dc = [e.dc, o.dc];
        out.ds = [e.ds, o.ds];
    }
    out
}

/// Width of the partial sums kept per degree in analysis (one AVX2 register).
pub const FOLD: usize = 4;

#[inline(always)]
fn accumulate_analysis<const W: usize, const FMA: bool>(
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
    for k in 0..FOLD {
        acc_re[k] += sr[k];
        acc_im[k] += si[k];
    }
}

/// Real and imaginary parts of the ring spectra of one parity class.
type SpectrumPair<'h, const W: usize> = (&'h [f64; W], &'h [f64; W]);

/// Degrees l0..l0 + n with no lane entering (see `synth_segment`). `h_cur` belongs to the
/// parity of l0; the pair is returned swapped when n is odd. `acc_re`/`acc_im` start at
/// l0·FOLD, `a`, `b` at l0 + 1.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn analysis_segment<'h, const W: usize, const FMA: bool>(
    n: usize,
    a: &[f64],
    b: &[f64],
    x: &Nodes<W>,
    mut p0: [f64; W],
    mut p1: [f64; W],
    mut h_cur: SpectrumPair<'h, W>,
    mut h_other: SpectrumPair<'h, W>,
    acc_re: &mut [f64],
    acc_im: &mut [f64],
) -> ([f64; W], [f64; W], SpectrumPair<'h, W>, SpectrumPair<'h, W>) {
    let (a, b) = (&a[..n], &b[..n]);
    let acc_re = &mut acc_re[..n * FOLD];
    let acc_im = &mut acc_im[..n * FOLD];
    let (hr0, hi0) = (*h_cur.0, *h_cur.1);
    let (hr1, hi1) = (*h_other.0, *h_other.1);
    let mut k = 0;
    while k + 2 <= n {
        let (re, im) = (&mut acc_re[k * FOLD..], &mut acc_im[k * FOLD..]);
        accumulate_analysis::<W, FMA>(&p1, &hr0, &hi0, &mut re[..FOLD], &mut im[..FOLD]);
        advance::<W, FMA>(a[k], b[k], x, &mut p0, &mut p1);
        accumulate_analysis::<W, FMA>(
            &p1,
            &hr1,
            &hi1,
            &mut re[FOLD..2 * FOLD],
            &mut im[FOLD..2 * FOLD],
        );
        advance::<W, FMA>(a[k + 1], b[k + 1], x, &mut p0, &mut p1);
        k += 2;
    }
    if k < n {
        let (re, im) = (&mut acc_re[k * FOLD..], &mut acc_im[k * FOLD..]);
        accumulate_analysis::<W, FMA>(&p1, &hr0, &hi0, &mut re[..FOLD], &mut im[..FOLD]);
        advance::<W, FMA>(a[k], b[k], x, &mut p0, &mut p1);
        std::mem::swap(&mut h_cur, &mut h_other);
    }
    (p0, p1, h_cur, h_other)
}

/// Analysis for one order and one block: adds Σ_i P̄_lm(x_i) H_i (with H split by parity of
/// l − m: `hr[0]`/`hi[0]` for even, `[1]` for odd) into `acc_re`/`acc_im[l·FOLD + k]`.
/// `rc.a`, `rc.b` must hold lmax + 2 entries (the last is read by a final, discarded step).
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub fn analysis_block<const W: usize, const FMA: bool>(
    rc: &OrderCoefficients,
    x: &Nodes<W>,
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
    let mut h_cur = (&hr[pa], &hi[pa]);
    let mut h_other = (&hr[1 - pa], &hi[1 - pa]);
    inject(events, &mut ev, l, &mut p0, &mut p1);
    loop {
        let l_end = if ev < events.len() {
            events[ev].l
        } else {
            lmax + 1
        };
        (p0, p1, h_cur, h_other) = analysis_segment::<W, FMA>(
            l_end - l,
            &rc.a[l + 1..],
            &rc.b[l + 1..],
            x,
            p0,
            p1,
            h_cur,
            h_other,
            &mut acc_re[l * FOLD..],
            &mut acc_im[l * FOLD..],
        );
        l = l_end;
        if l > lmax {
            break;
        }
        inject(events, &mut ev, l, &mut p0, &mut p1);
    }
}
