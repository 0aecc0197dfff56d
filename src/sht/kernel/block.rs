//! The inner loops over degree l for one order m and one block of W lanes: the hot path of
//! every transform. Written once, generically over the lane count `W`, the width of the
//! register sets (`H`, `F`) and the use of fused multiply–add, and compiled per instruction set
//! in `kernel::unsafe_parts` (the fixed-size lane arrays let the compiler keep each in a few
//! vector registers).
//!
//! State at degree l: `p0` = P̄_{l−1,m}, `p1` = P̄_lm per lane; advancing uses
//! P̄_{l+1,m} = a_{l+1} x P̄_lm − b_{l+1} P̄_{l−1,m} (Holmes & Featherstone 2002). Lanes enter
//! at the degree where their column becomes representable (`Event`), before which they hold
//! zeros.
//!
//! The degrees run in chunks of at most [`CHUNK`], in two passes per chunk:
//! 1. [`recur`] runs the recursion alone and writes P̄_lm of every lane into [`Rows`], a
//!    buffer that stays in the level-1 cache. With W lanes the step has W / (lanes per
//!    register) independent dependency chains (two fused steps of latency each), enough to
//!    keep both FMA pipes busy, and nothing but the recursion state competes for registers.
//! 2. The sums read the rows back, once per field: synthesis keeps Σ C_lm P̄_lm and
//!    Σ S_lm P̄_lm of H lanes in registers (even and odd l − m apart, [`accumulate_values`]),
//!    analysis adds Σ_i P̄_lm(x_i) H_i into F partial sums per degree ([`accumulate_analysis`]).
//!    K fields on the same grid share one recursion: each field costs only its sums. Point
//!    synthesis (`kernel::point_group`, one lane per point) adds [`accumulate_neighbours`],
//!    the sums of a column against the gradient coefficients of the neighbouring orders.
//!
//! Every P̄_lm is the same double as in a one-pass loop (the same operations in the same
//! order); synthesis sums in the same order too, so a field synthesised with others is
//! bit-identical to the field synthesised alone.

/// Degrees per chunk: the rows of one chunk (CHUNK + 1 rows of W doubles) stay in L1.
pub const CHUNK: usize = 64;

/// A lane joins the recursion at degree `l` with P̄_{l−1,m} = `p_prev`, P̄_lm = `p`
/// (`l` and `lane` as 32-bit counts: plans keep one event per order and lane,
/// `kernel::column_starts`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Event {
    pub l: u32,
    pub lane: u32,
    pub p_prev: f64,
    pub p: f64,
}

/// Recursion coefficients of one order, indexed by degree.
pub struct OrderCoefficients<'a> {
    pub lmax: usize,
    pub a: &'a [f64],
    pub b: &'a [f64],
}

/// a·b + c, fused (one rounding) when `FMA`.
#[inline(always)]
pub(super) fn fmadd<const FMA: bool>(a: f64, b: f64, c: f64) -> f64 {
    if FMA {
        a.mul_add(b, c)
    } else {
        a * b + c
    }
}

/// Per-lane sums of one block and one field, split by parity of l − m ([0] even, [1] odd).
#[derive(Clone, Copy)]
#[repr(C, align(64))]
pub struct SynthSums<const W: usize> {
    /// Σ C_lm P̄_lm and Σ S_lm P̄_lm.
    pub c: [[f64; W]; 2],
    pub s: [[f64; W]; 2],
    /// Σ C_lm (l x P̄_lm − f_lm P̄_{l−1,m}) and the same with S (gradient only; divide by sin θ).
    pub dc: [[f64; W]; 2],
    pub ds: [[f64; W]; 2],
}

impl<const W: usize> SynthSums<W> {
    pub const ZERO: Self = SynthSums {
        c: [[0.0; W]; 2],
        s: [[0.0; W]; 2],
        dc: [[0.0; W]; 2],
        ds: [[0.0; W]; 2],
    };
}

/// Loads the events of degree `l` (from `*ev` on) into the state. Runs between chunks only:
/// its dynamic lane index would otherwise pin the state arrays to memory.
#[inline(always)]
pub fn inject<const W: usize>(
    events: &[Event],
    ev: &mut usize,
    l: usize,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
) {
    while *ev < events.len() && events[*ev].l as usize == l {
        let e = events[*ev];
        p0[e.lane as usize] = e.p_prev;
        p1[e.lane as usize] = e.p;
        *ev += 1;
    }
}

/// cos θ of a block's lanes as a double `t` plus its rounding error `t_lo`
/// (see `legendre::colatitude`).
#[derive(Debug, Clone, Copy)]
#[repr(C, align(64))]
pub struct Nodes<const W: usize> {
    pub t: [f64; W],
    pub t_lo: [f64; W],
}

impl<const W: usize> Nodes<W> {
    /// Whether some lane's cos θ has a low part, so that the recursion must add it (`LO` of
    /// [`recur`]); false for a block inside the band π/3 ≤ θ ≤ 2π/3, about a third of a
    /// Gauss grid's rings, whose steps then take two operations fewer of five.
    pub fn has_low_part(&self) -> bool {
        self.t_lo.iter().any(|&v| v != 0.0)
    }
}

/// One recursion step P̄_{l−1}, P̄_l → P̄_l, P̄_{l+1} with `a` = a_{l+1}, `b` = b_{l+1}.
///
/// Per lane: three multiplications (a t, a t_lo, b P̄_{l−1}) and two fused multiply–adds, of
/// which only the two fused ones lie on the dependency chain from P̄_l to P̄_{l+1}. Without
/// `LO` (every lane's t_lo is zero: the band π/3 ≤ θ ≤ 2π/3, see `legendre::colatitude`) the
/// second fused step, which would add (a · 0) P̄_l, is left out: the same values, up to the
/// sign of an exact zero.
#[inline(always)]
fn advance<const W: usize, const FMA: bool, const LO: bool>(
    a: f64,
    b: f64,
    x: &Nodes<W>,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
) {
    for i in 0..W {
        let main = fmadd::<FMA>(a * x.t[i], p1[i], -(b * p0[i]));
        let next = if LO {
            fmadd::<FMA>(a * x.t_lo[i], p1[i], main)
        } else {
            main
        };
        p0[i] = p1[i];
        p1[i] = next;
    }
}

/// P̄ of one chunk of degrees l0..l0 + n: `rows[0]` = P̄_{l0−1,m}, `rows[k + 1]` = P̄_{l0+k,m}.
///
/// Aligned to a cache line, so that no register's worth of a row (64 bytes on AVX-512)
/// straddles two lines: the rows are read once per field and degree, and a split load costs
/// two accesses of the level-1 cache.
#[repr(C, align(64))]
pub struct Rows<const W: usize> {
    pub rows: [[f64; W]; CHUNK + 1],
}

impl<const W: usize> Rows<W> {
    pub fn new() -> Self {
        Rows {
            rows: [[0.0; W]; CHUNK + 1],
        }
    }
}

/// Pass 1: the recursion over degrees l0..l0 + n (n ≤ [`CHUNK`]), writing every P̄ into
/// `rows`. On entry `p0`, `p1` hold P̄_{l0−1}, P̄_{l0}; on return P̄_{l0+n−1}, P̄_{l0+n}.
/// `a`, `b` start at degree l0 + 1 and hold at least n entries.
#[inline(always)]
pub fn recur<const W: usize, const FMA: bool, const LO: bool>(
    n: usize,
    a: &[f64],
    b: &[f64],
    x: &Nodes<W>,
    p0: &mut [f64; W],
    p1: &mut [f64; W],
    rows: &mut Rows<W>,
) {
    assert!(n <= CHUNK, "chunk of {n} degrees");
    let (a, b) = (&a[..n], &b[..n]);
    let (mut q0, mut q1) = (*p0, *p1);
    rows.rows[0] = q0;
    for k in 0..n {
        rows.rows[k + 1] = q1;
        advance::<W, FMA, LO>(a[k], b[k], x, &mut q0, &mut q1);
    }
    *p0 = q0;
    *p1 = q1;
}

/// Lanes h·H .. (h+1)·H of a row.
#[inline(always)]
fn part<const W: usize, const H: usize>(row: &[f64; W], h: usize) -> [f64; H] {
    row[h * H..(h + 1) * H]
        .try_into()
        .expect("H divides W and h < W / H")
}

#[inline(always)]
fn set_part<const W: usize, const H: usize>(row: &mut [f64; W], h: usize, v: [f64; H]) {
    row[h * H..(h + 1) * H].copy_from_slice(&v);
}

/// Pass 2 of synthesis, values: adds Σ_k C_{l0+k} P̄_{l0+k} and the same with S to the sums of
/// one field, H lanes at a time (four sets of H lanes in registers). `par0` is the parity of
/// l0 − m; `c`, `s` start at l0.
#[inline(always)]
pub fn accumulate_values<const W: usize, const H: usize, const FMA: bool>(
    rows: &Rows<W>,
    n: usize,
    par0: usize,
    c: &[f64],
    s: &[f64],
    sums: &mut SynthSums<W>,
) {
    let (c, s) = (&c[..n], &s[..n]);
    let rows = &rows.rows[1..=n];
    let (pe, po) = (par0, 1 - par0);
    for h in 0..W / H {
        let mut ce: [f64; H] = part(&sums.c[pe], h);
        let mut se: [f64; H] = part(&sums.s[pe], h);
        let mut co: [f64; H] = part(&sums.c[po], h);
        let mut so: [f64; H] = part(&sums.s[po], h);
        let mut k = 0;
        while k + 2 <= n {
            let r0: [f64; H] = part(&rows[k], h);
            let r1: [f64; H] = part(&rows[k + 1], h);
            for i in 0..H {
                ce[i] = fmadd::<FMA>(c[k], r0[i], ce[i]);
                se[i] = fmadd::<FMA>(s[k], r0[i], se[i]);
                co[i] = fmadd::<FMA>(c[k + 1], r1[i], co[i]);
                so[i] = fmadd::<FMA>(s[k + 1], r1[i], so[i]);
            }
            k += 2;
        }
        if k < n {
            let r0: [f64; H] = part(&rows[k], h);
            for i in 0..H {
                ce[i] = fmadd::<FMA>(c[k], r0[i], ce[i]);
                se[i] = fmadd::<FMA>(s[k], r0[i], se[i]);
            }
        }
        set_part(&mut sums.c[pe], h, ce);
        set_part(&mut sums.s[pe], h, se);
        set_part(&mut sums.c[po], h, co);
        set_part(&mut sums.s[po], h, so);
    }
}

/// Pass 2 of gradient synthesis, the θ part: adds Σ C_l d_l and Σ S_l d_l with
/// d_l = l (t + t_lo) P̄_lm − f_lm P̄_{l−1,m} (the low part of cos θ matters here too, since
/// the sum is divided by sin θ afterwards). `f`, `c`, `s` start at l0.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub fn accumulate_derivative<const W: usize, const H: usize, const FMA: bool>(
    rows: &Rows<W>,
    n: usize,
    l0: usize,
    par0: usize,
    f: &[f64],
    c: &[f64],
    s: &[f64],
    x: &Nodes<W>,
    sums: &mut SynthSums<W>,
) {
    let (f, c, s) = (&f[..n], &c[..n], &s[..n]);
    let rows = &rows.rows[..=n];
    for h in 0..W / H {
        let t: [f64; H] = part(&x.t, h);
        let t_lo: [f64; H] = part(&x.t_lo, h);
        let mut dc: [[f64; H]; 2] = [part(&sums.dc[0], h), part(&sums.dc[1], h)];
        let mut ds: [[f64; H]; 2] = [part(&sums.ds[0], h), part(&sums.ds[1], h)];
        for k in 0..n {
            let p = (par0 + k) & 1;
            let lf = (l0 + k) as f64;
            let prev: [f64; H] = part(&rows[k], h);
            let cur: [f64; H] = part(&rows[k + 1], h);
            for i in 0..H {
                let main = fmadd::<FMA>(lf * t[i], cur[i], -(f[k] * prev[i]));
                let d = fmadd::<FMA>(lf * t_lo[i], cur[i], main);
                dc[p][i] = fmadd::<FMA>(c[k], d, dc[p][i]);
                ds[p][i] = fmadd::<FMA>(s[k], d, ds[p][i]);
            }
        }
        for p in 0..2 {
            set_part(&mut sums.dc[p], h, dc[p]);
            set_part(&mut sums.ds[p], h, ds[p]);
        }
    }
}

/// Per-lane sums of one order's column that feed the θ-derivatives of the neighbouring orders
/// (point synthesis, see `kernel::point_group`): Σ_l E_l P̄_lm for order m + 1 and
/// Σ_l F_l P̄_lm for order m − 1, with the C and the S coefficients.
#[derive(Clone, Copy)]
#[repr(C, align(64))]
pub struct NeighbourSums<const W: usize> {
    pub next_c: [f64; W],
    pub next_s: [f64; W],
    pub prev_c: [f64; W],
    pub prev_s: [f64; W],
}

impl<const W: usize> NeighbourSums<W> {
    pub const ZERO: Self = NeighbourSums {
        next_c: [0.0; W],
        next_s: [0.0; W],
        prev_c: [0.0; W],
        prev_s: [0.0; W],
    };
}

/// Pass 2 of point gradients: adds Σ_k E_{l0+k} P̄_{l0+k} for the four coefficient runs
/// `next_c`, `next_s`, `prev_c`, `prev_s` (all starting at l0) to the sums, H lanes at a time
/// (four sets of H lanes in registers, four independent chains).
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub fn accumulate_neighbours<const W: usize, const H: usize, const FMA: bool>(
    rows: &Rows<W>,
    n: usize,
    next_c: &[f64],
    next_s: &[f64],
    prev_c: &[f64],
    prev_s: &[f64],
    sums: &mut NeighbourSums<W>,
) {
    let (nc, ns, pc, ps) = (&next_c[..n], &next_s[..n], &prev_c[..n], &prev_s[..n]);
    let rows = &rows.rows[1..=n];
    for h in 0..W / H {
        let mut a: [f64; H] = part(&sums.next_c, h);
        let mut b: [f64; H] = part(&sums.next_s, h);
        let mut c: [f64; H] = part(&sums.prev_c, h);
        let mut d: [f64; H] = part(&sums.prev_s, h);
        for k in 0..n {
            let r: [f64; H] = part(&rows[k], h);
            for i in 0..H {
                a[i] = fmadd::<FMA>(nc[k], r[i], a[i]);
                b[i] = fmadd::<FMA>(ns[k], r[i], b[i]);
                c[i] = fmadd::<FMA>(pc[k], r[i], c[i]);
                d[i] = fmadd::<FMA>(ps[k], r[i], d[i]);
            }
        }
        set_part(&mut sums.next_c, h, a);
        set_part(&mut sums.next_s, h, b);
        set_part(&mut sums.prev_c, h, c);
        set_part(&mut sums.prev_s, h, d);
    }
}

/// Ring spectra of one block and one field, real and imaginary parts, by parity of l − m
/// ([0] even: north + south, [1] odd: north − south).
#[repr(C, align(64))]
pub struct BlockSpectra<const W: usize> {
    pub re: [[f64; W]; 2],
    pub im: [[f64; W]; 2],
}

/// Pass 2 of analysis: adds Σ_i P̄_{l,m}(x_i) H_i for l = l0..l0 + n into F partial sums per
/// degree (`acc_re`, `acc_im` start at l0·F; partial sum j collects lanes j, j + F, ...). Even
/// and odd l − m run as two sweeps, so that one parity's spectra stay in registers.
#[inline(always)]
pub fn accumulate_analysis<const W: usize, const F: usize, const FMA: bool>(
    rows: &Rows<W>,
    n: usize,
    par0: usize,
    h: &BlockSpectra<W>,
    acc_re: &mut [f64],
    acc_im: &mut [f64],
) {
    let rows = &rows.rows[1..=n];
    let acc_re = &mut acc_re[..n * F];
    let acc_im = &mut acc_im[..n * F];
    for first in 0..2.min(n) {
        let p = (par0 + first) & 1;
        let (hr, hi) = (h.re[p], h.im[p]);
        let mut k = first;
        while k < n {
            super::unsafe_parts::keep_loop_scalar();
            let row = &rows[k];
            let mut sr: [f64; F] = acc_re[k * F..(k + 1) * F].try_into().expect("F entries");
            let mut si: [f64; F] = acc_im[k * F..(k + 1) * F].try_into().expect("F entries");
            for g in 0..W / F {
                for j in 0..F {
                    let i = g * F + j;
                    sr[j] = fmadd::<FMA>(row[i], hr[i], sr[j]);
                    si[j] = fmadd::<FMA>(row[i], hi[i], si[j]);
                }
            }
            acc_re[k * F..(k + 1) * F].copy_from_slice(&sr);
            acc_im[k * F..(k + 1) * F].copy_from_slice(&si);
            k += 2;
        }
    }
}

/// The degree chunks of one block: from the first event on, each chunk ends at [`CHUNK`]
/// degrees, at the next event or after lmax. Calls `body(l0, n, rows)` after the recursion of
/// each chunk has filled `rows`.
#[inline(always)]
pub fn for_each_chunk<const W: usize, const FMA: bool, const LO: bool>(
    rc: &OrderCoefficients,
    x: &Nodes<W>,
    events: &[Event],
    rows: &mut Rows<W>,
    body: impl FnMut(usize, usize, &Rows<W>),
) {
    let Some(first) = events.first() else {
        return;
    };
    for_each_chunk_from::<W, FMA, LO>(rc, x, first.l as usize, &[0.0; W], events, rows, body)
}

/// As [`for_each_chunk`] from degree `l_first`, where P̄_{l_first−1} = 0 and P̄_{l_first} =
/// `p_first` in every lane (0 in the lanes that start later, at their `events`, sorted by
/// degree, none before `l_first`).
#[inline(always)]
pub fn for_each_chunk_from<const W: usize, const FMA: bool, const LO: bool>(
    rc: &OrderCoefficients,
    x: &Nodes<W>,
    l_first: usize,
    p_first: &[f64; W],
    events: &[Event],
    rows: &mut Rows<W>,
    mut body: impl FnMut(usize, usize, &Rows<W>),
) {
    let lmax = rc.lmax;
    let mut p0 = [0.0; W];
    let mut p1 = *p_first;
    let mut ev = 0;
    let mut l = l_first;
    inject(events, &mut ev, l, &mut p0, &mut p1);
    while l <= lmax {
        let next_event = if ev < events.len() {
            events[ev].l as usize
        } else {
            lmax + 1
        };
        let l_end = next_event.min(l + CHUNK);
        let n = l_end - l;
        recur::<W, FMA, LO>(n, &rc.a[l + 1..], &rc.b[l + 1..], x, &mut p0, &mut p1, rows);
        body(l, n, rows);
        l = l_end;
        inject(events, &mut ev, l, &mut p0, &mut p1);
    }
}
