//! The work for one order m: recursion coefficients, column starts per lane, the block kernels
//! and the hand-over to the ring (Fourier) stage. Generic over the lane count and FMA use; the
//! instruction-set variants are instantiated once in `kernel::unsafe_parts` and chosen when a
//! plan is built. Results leave through the per-order writers of that module, which are the
//! only way to reach the shared output.

use realfft::num_complex::Complex64;

use super::block::{
    accumulate_analysis, accumulate_derivative, accumulate_values, for_each_chunk, inject, recur,
    BlockSpectra, Event, Nodes, OrderCoefficients, Rows, SynthSums, CHUNK,
};
use super::column_starts::ColumnStarts;
use super::fourier_columns::OrderFourierColumns;
use super::lanes::Lane;
use super::starts::column_starts;
use super::unsafe_parts::OrderCoefficientSums;
use crate::coeffs::packed_index;
use crate::sht::legendre::recursion::{f_lm, fill_coefficients};

/// The widest set of partial sums per degree an analysis kernel keeps (its `F`).
pub const MAX_FOLD: usize = 8;

/// Per-thread scratch for one order (allocated once per thread, reused for every order).
pub(crate) struct OrderScratch {
    lmax: usize,
    fields: usize,
    a: Vec<f64>,
    b: Vec<f64>,
    f: Vec<f64>,
    /// C and S of the order, field after field, each `lmax + 2` long.
    c: Vec<f64>,
    s: Vec<f64>,
    events: Vec<Event>,
    /// The starts after degree m of one block (`kernel::starts`).
    late: Vec<Event>,
    /// The events of every block of an analysis order, block after block.
    all_events: Vec<Event>,
    /// Analysis partial sums of one degree chunk, field after field, each CHUNK·MAX_FOLD long.
    acc_re: LineAligned,
    acc_im: LineAligned,
    /// The degree-chunk rows of the kernel's width (`Rows<W>`, 16 KiB at W = 32), kept
    /// between orders: made and zeroed per order they cost about a tenth of a degree-255
    /// synthesis (a memset per order in perf profiles). Typed at first use, since the width is
    /// the kernel's.
    rows: Option<Box<dyn std::any::Any + Send>>,
}

impl OrderScratch {
    /// Scratch for transforms of `fields` fields at once to degree `lmax`.
    pub fn new(lmax: usize, fields: usize) -> Self {
        let n = lmax + 2;
        OrderScratch {
            lmax,
            fields,
            a: vec![0.0; n],
            b: vec![0.0; n],
            f: vec![0.0; n],
            c: vec![0.0; n * fields],
            s: vec![0.0; n * fields],
            events: Vec::with_capacity(64),
            late: Vec::with_capacity(64),
            all_events: Vec::new(),
            acc_re: LineAligned::zeros(CHUNK * MAX_FOLD * fields),
            acc_im: LineAligned::zeros(CHUNK * MAX_FOLD * fields),
            rows: None,
        }
    }

    /// Bytes held by one scratch set for `fields` fields (the degree-chunk rows and the
    /// per-block sums on the stack included; an analysis adds [`analysis_block_bytes`]).
    pub fn bytes(lmax: usize, fields: usize) -> u64 {
        let n = (lmax + 2) as u64;
        let fields = fields as u64;
        n * 8 * (3 + 2 * fields)
            + 2 * (CHUNK * MAX_FOLD) as u64 * fields * 8
            + 64 * 32
            + fields * 4 * 1024
            + 32 * 1024
    }

    /// a_lm and b_lm of order m (indexed by degree), `recursion::fill_coefficients`.
    #[inline(always)]
    pub(crate) fn fill_recursion(&mut self, m: usize, lmax: usize) {
        fill_coefficients(m, lmax, &mut self.a, &mut self.b);
    }

    #[inline(always)]
    fn fill(&mut self, m: usize, lmax: usize, grad: bool) {
        self.fill_recursion(m, lmax);
        if grad {
            for l in m..=lmax {
                self.f[l] = f_lm(l, m);
            }
        }
    }

    /// The kept rows of width W (new ones the first time, or after a kernel of another width).
    /// Every kernel writes each row before it reads it (`block::recur`), so kept rows give the
    /// same results as zeroed ones.
    fn take_rows<const W: usize>(&mut self) -> Box<Rows<W>> {
        self.rows
            .take()
            .and_then(|r| r.downcast::<Rows<W>>().ok())
            .unwrap_or_else(|| Box::new(Rows::new()))
    }

    fn keep_rows<const W: usize>(&mut self, rows: Box<Rows<W>>) {
        self.rows = Some(rows);
    }

    fn column(&self, field: usize) -> (&[f64], &[f64]) {
        let n = self.lmax + 2;
        let r = field * n..(field + 1) * n;
        (&self.c[r.clone()], &self.s[r])
    }
}

/// Zeroed doubles whose first one starts a cache line, so that every run of eight from the
/// start (one AVX-512 register, the analysis partial sums of one degree) lies within one line.
struct LineAligned {
    data: Vec<f64>,
    start: usize,
    len: usize,
}

impl LineAligned {
    fn zeros(len: usize) -> Self {
        let data = vec![0.0; len + 7];
        // an f64 pointer is 8-aligned, so at most 7 doubles reach the next 64-byte boundary
        let start = data.as_ptr().align_offset(64).min(7);
        LineAligned { data, start, len }
    }

    fn as_mut_slice(&mut self) -> &mut [f64] {
        &mut self.data[self.start..self.start + self.len]
    }
}

/// cos θ of a block's lanes (zeros beyond the block's end).
#[inline(always)]
fn block_nodes<const W: usize>(block: &[Lane]) -> Nodes<W> {
    let mut nodes = Nodes {
        t: [0.0; W],
        t_lo: [0.0; W],
    };
    for (i, lane) in block.iter().enumerate() {
        nodes.t[i] = lane.t;
        nodes.t_lo[i] = lane.t_lo;
    }
    nodes
}

/// The column starts of block `block` of order m: from the plan's table when the job has one,
/// else found now into `found` (`a`, `b`: the order's recursion coefficients; `late`: scratch).
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn starts_of_block<'a, const W: usize>(
    starts: Option<&'a ColumnStarts>,
    m: usize,
    lmax: usize,
    c_m: f64,
    (block_index, block): (usize, &[Lane]),
    a: &[f64],
    b: &[f64],
    (found, late): (&'a mut Vec<Event>, &mut Vec<Event>),
) -> &'a [Event] {
    match starts {
        Some(table) => table.block(m, block_index),
        None => find_block_events::<W>(m, lmax, c_m, block, a, b, found, late),
    }
}

/// Collects the column starts of a block's lanes (sorted by degree) into `sc.events` and
/// returns them. `sc` must hold the recursion coefficients of order m
/// ([`OrderScratch::fill_recursion`]).
pub(crate) fn block_events<'s, const W: usize>(
    m: usize,
    lmax: usize,
    c_m: f64,
    block: &[Lane],
    sc: &'s mut OrderScratch,
) -> &'s [Event] {
    find_block_events::<W>(
        m,
        lmax,
        c_m,
        block,
        &sc.a,
        &sc.b,
        &mut sc.events,
        &mut sc.late,
    )
}

/// [`block_events`] with the recursion coefficients `a`, `b` of order m, the event buffer and
/// the scratch for late starts given apart: the starts at degree m first, in lane order, then
/// the later ones by degree (`kernel::starts`).
#[allow(clippy::too_many_arguments)]
fn find_block_events<'s, const W: usize>(
    m: usize,
    lmax: usize,
    c_m: f64,
    block: &[Lane],
    a: &[f64],
    b: &[f64],
    events: &'s mut Vec<Event>,
    late: &mut Vec<Event>,
) -> &'s [Event] {
    let mut t = [0.0; W];
    let mut u = [0.0; W];
    for (i, lane) in block.iter().enumerate() {
        t[i] = lane.t;
        u[i] = lane.u;
    }
    let first = column_starts::<W>(m, lmax, c_m, &t, &u, block.len(), a, b, late);
    events.clear();
    if first.any {
        for (i, &p) in first.p.iter().enumerate() {
            if p != 0.0 {
                events.push(Event {
                    l: m as u32,
                    lane: i as u32,
                    p_prev: 0.0,
                    p,
                });
            }
        }
    }
    events.extend_from_slice(late);
    events
}

/// Where the column of order m starts in order-major storage to degree `lmax` (the degrees
/// m..=lmax of each order one after another): m (lmax + 1) − m (m − 1) / 2.
#[inline]
pub(crate) fn order_major_offset(m: usize, lmax: usize) -> usize {
    m * (lmax + 1) - m * m.saturating_sub(1) / 2
}

/// Degrees (or orders) per tile of the layout changes below: each tile reads and writes
/// short contiguous runs (a tile's rows of one column), so neither side touches a new cache
/// line (and, at high degree, a new page) per entry as a plain loop over one layout does on
/// the other: at L = 4095 the repacking of an analysis took 112 ms that way and 66 ms in
/// tiles (at L = 1023, where both layouts fit in the caches, the two measured alike).
const LAYOUT_TILE: usize = 32;

/// Order-major coefficients to degree `lmax` ([`order_major`]) back in the packed
/// degree-major layout of `coeffs::packed_index`, written into `packed`. Tiles of
/// [`LAYOUT_TILE`] degrees run in parallel (rayon), each writing its own rows of `packed`.
pub(crate) fn packed_from_order_major(order_major: &[f64], lmax: usize, packed: &mut [f64]) {
    use rayon::prelude::*;
    let mut tiles: Vec<(usize, &mut [f64])> = Vec::with_capacity(lmax / LAYOUT_TILE + 1);
    let mut rest = &mut packed[..packed_index(lmax, lmax) + 1];
    let mut l0 = 0;
    while l0 <= lmax {
        let l1 = (l0 + LAYOUT_TILE).min(lmax + 1);
        let (rows, tail) =
            std::mem::take(&mut rest).split_at_mut(packed_index(l1, 0) - packed_index(l0, 0));
        tiles.push((l0, rows));
        rest = tail;
        l0 = l1;
    }
    tiles.into_par_iter().for_each(|(l0, rows)| {
        let l1 = l0 + LAYOUT_TILE.min(lmax + 1 - l0);
        let base = packed_index(l0, 0);
        for m in 0..l1 {
            let column = &order_major[order_major_offset(m, lmax)..];
            for l in l0.max(m)..l1 {
                rows[packed_index(l, m) - base] = column[l - m];
            }
        }
    });
}

/// Packed (degree-major, `coeffs::packed_index`) coefficients to degree `lmax` rearranged
/// order-major, so that each order's kernel reads its column contiguously instead of one
/// cache line per degree. Tiles of [`LAYOUT_TILE`] orders run in parallel, each writing its
/// own columns.
pub(crate) fn order_major(packed: &[f64], lmax: usize) -> Vec<f64> {
    use rayon::prelude::*;
    let mut out = vec![0.0; packed.len()];
    let mut tiles: Vec<(usize, &mut [f64])> = Vec::with_capacity(lmax / LAYOUT_TILE + 1);
    let mut rest = &mut out[..];
    let mut m0 = 0;
    while m0 <= lmax {
        let m1 = (m0 + LAYOUT_TILE).min(lmax + 1);
        let len = order_major_offset(m1, lmax) - order_major_offset(m0, lmax);
        let (columns, tail) = std::mem::take(&mut rest).split_at_mut(len);
        tiles.push((m0, columns));
        rest = tail;
        m0 = m1;
    }
    tiles.into_par_iter().for_each(|(m0, columns)| {
        let m1 = m0 + LAYOUT_TILE.min(lmax + 1 - m0);
        let base = order_major_offset(m0, lmax);
        for l in m0..=lmax {
            let row = &packed[packed_index(l, 0)..=packed_index(l, l)];
            for m in m0..m1.min(l + 1) {
                columns[order_major_offset(m, lmax) + l - m - base] = row[m];
            }
        }
    });
    out
}

/// What a synthesis pass reads (it writes through [`OrderFourierColumns`]).
pub(crate) struct SynthJob<'a> {
    pub lmax: usize,
    pub lanes: &'a [Lane],
    pub sectoral_factors: &'a [f64],
    /// `geodesy` (C, S) of every field, all to `lmax`, order-major ([`order_major`]).
    pub fields: &'a [(&'a [f64], &'a [f64])],
    /// e^{i m λ_0} per order.
    pub rotation: &'a [Complex64],
    /// The plan's column starts of exactly these lanes in blocks of the kernel's width, if it
    /// keeps them (else each block finds its own).
    pub starts: Option<&'a ColumnStarts>,
}

/// Σ_l (C_lm cos mλ + S_lm sin mλ) f_l on a ring as its packed Fourier entry: for m = 0 the
/// value `a` itself, else ½ (a − i b) e^{i m λ_0}.
#[inline(always)]
fn put_fourier(
    job: &SynthJob,
    out: &mut OrderFourierColumns,
    grid: usize,
    row: usize,
    a: f64,
    b: f64,
) {
    let m = out.order();
    let x = if m == 0 {
        Complex64::new(a, 0.0)
    } else {
        Complex64::new(0.5 * a, -0.5 * b) * job.rotation[m]
    };
    out.put(grid, row, x);
}

/// Synthesis of the writer's order m for every field of the job into the packed Fourier
/// columns of every ring. Values of field k go to grid k; a gradient synthesis writes ∂/∂θ of
/// field k to grid 2k and (1/sin θ) ∂/∂λ to grid 2k + 1. `H` lanes of sums stay in registers
/// at a time.
#[inline(always)]
pub(crate) fn synth_order<const W: usize, const H: usize, const FMA: bool, const GRAD: bool>(
    job: &SynthJob,
    sc: &mut OrderScratch,
    out: &mut OrderFourierColumns,
) {
    let m = out.order();
    let lmax = job.lmax;
    let nf = job.fields.len();
    assert!(
        sc.lmax == lmax && sc.fields >= nf,
        "scratch of another shape"
    );
    sc.fill(m, lmax, GRAD);
    let stride = lmax + 2;
    let at = order_major_offset(m, lmax);
    let len = lmax + 1 - m;
    for (k, (c, s)) in job.fields.iter().enumerate() {
        let dst = k * stride + m..k * stride + lmax + 1;
        sc.c[dst.clone()].copy_from_slice(&c[at..at + len]);
        sc.s[dst].copy_from_slice(&s[at..at + len]);
    }
    let c_m = job.sectoral_factors[m];
    let starts = checked_starts(job.starts, job.lanes.len(), 0, W);
    let mut rows = sc.take_rows::<W>();
    // one field (the common case) keeps its sums on the stack: a heap block of this size per
    // order went through the allocator's slow path on every order (about 3 % of a degree-255
    // synthesis in perf profiles)
    let mut one = [SynthSums::<W>::ZERO; 1];
    let mut many = Vec::new();
    let sums: &mut [SynthSums<W>] = if nf == 1 {
        &mut one
    } else {
        many.resize(nf, SynthSums::<W>::ZERO);
        &mut many
    };
    let mut found = std::mem::take(&mut sc.events);
    for (bi, block) in job.lanes.chunks(W).enumerate() {
        let x = block_nodes::<W>(block);
        let events = starts_of_block::<W>(
            starts,
            m,
            lmax,
            c_m,
            (bi, block),
            &sc.a,
            &sc.b,
            (&mut found, &mut sc.late),
        );
        if events.is_empty() {
            // lanes run from the equator to the poles: every later block is negligible too
            break;
        }
        sums.iter_mut().for_each(|s| *s = SynthSums::ZERO);
        let rc = OrderCoefficients {
            lmax,
            a: &sc.a,
            b: &sc.b,
        };
        // one closure per recursion variant, each inlined into this kernel's instruction set
        // (a closure called through a reference is compiled on its own, without it)
        if x.has_low_part() {
            for_each_chunk::<W, FMA, true>(&rc, &x, events, &mut *rows, |l0, n, rows| {
                add_synthesis_sums::<W, H, FMA, GRAD>(rows, (l0, n), m, sc, &x, sums)
            });
        } else {
            for_each_chunk::<W, FMA, false>(&rc, &x, events, &mut *rows, |l0, n, rows| {
                add_synthesis_sums::<W, H, FMA, GRAD>(rows, (l0, n), m, sc, &x, sums)
            });
        }
        for (k, sum) in sums.iter().enumerate() {
            put_block::<W, GRAD>(job, out, block, k, sum);
        }
    }
    sc.events = found;
    sc.keep_rows(rows);
}

/// Pass 2 of a synthesis block for every field: the sums of the chunk of degrees `l0..l0 + n`
/// of order `m`, whose P̄ are in `rows`.
#[inline(always)]
fn add_synthesis_sums<const W: usize, const H: usize, const FMA: bool, const GRAD: bool>(
    rows: &Rows<W>,
    (l0, n): (usize, usize),
    m: usize,
    sc: &OrderScratch,
    x: &Nodes<W>,
    sums: &mut [SynthSums<W>],
) {
    let par0 = (l0 - m) & 1;
    for (k, sum) in sums.iter_mut().enumerate() {
        let (c, s) = sc.column(k);
        accumulate_values::<W, H, FMA>(rows, n, par0, &c[l0..], &s[l0..], sum);
        if GRAD {
            accumulate_derivative::<W, H, FMA>(
                rows,
                n,
                l0,
                par0,
                &sc.f[l0..],
                &c[l0..],
                &s[l0..],
                x,
                sum,
            );
        }
    }
}

/// The table `starts` if it describes `lanes` lanes from block `first_block` on in blocks of
/// `w` (the kernel's width); a table of another layout is a bug in the plan.
#[inline(always)]
fn checked_starts(
    starts: Option<&ColumnStarts>,
    lanes: usize,
    first_block: usize,
    w: usize,
) -> Option<&ColumnStarts> {
    starts.inspect(|t| {
        assert!(
            t.lanes_per_block() == w && t.covers(first_block * w, lanes),
            "column starts of another lane layout"
        )
    })
}

/// Hands one block's sums of field `k` to the Fourier columns of its rings.
#[inline(always)]
fn put_block<const W: usize, const GRAD: bool>(
    job: &SynthJob,
    out: &mut OrderFourierColumns,
    block: &[Lane],
    k: usize,
    sums: &SynthSums<W>,
) {
    let mf = out.order() as f64;
    for (i, lane) in block.iter().enumerate() {
        let (ce, co, se, so) = (sums.c[0][i], sums.c[1][i], sums.s[0][i], sums.s[1][i]);
        if !GRAD {
            put_fourier(job, out, k, lane.north, ce + co, se + so);
            if let Some(south) = lane.south {
                put_fourier(job, out, k, south, ce - co, se - so);
            }
        } else {
            let (g_theta, g_lambda) = (2 * k, 2 * k + 1);
            let inv_u = 1.0 / lane.u;
            let (de, do_, dse, dso) = (sums.dc[0][i], sums.dc[1][i], sums.ds[0][i], sums.ds[1][i]);
            put_fourier(
                job,
                out,
                g_theta,
                lane.north,
                (de + do_) * inv_u,
                (dse + dso) * inv_u,
            );
            put_fourier(
                job,
                out,
                g_lambda,
                lane.north,
                mf * (se + so) * inv_u,
                -mf * (ce + co) * inv_u,
            );
            if let Some(south) = lane.south {
                // d/dθ of a mirrored function changes sign: P̄'(π−θ) = −(−1)^{l−m} P̄'(θ)
                put_fourier(
                    job,
                    out,
                    g_theta,
                    south,
                    -(de - do_) * inv_u,
                    -(dse - dso) * inv_u,
                );
                put_fourier(
                    job,
                    out,
                    g_lambda,
                    south,
                    mf * (se - so) * inv_u,
                    -mf * (ce - co) * inv_u,
                );
            }
        }
    }
}

/// What an analysis pass reads (it adds its results through [`OrderCoefficientSums`]).
pub(crate) struct AnalysisJob<'a> {
    pub lmax: usize,
    /// The lanes of this chunk of rings.
    pub lanes: &'a [Lane],
    pub sectoral_factors: &'a [f64],
    /// Per field: weighted, rotated ring spectra H_m, order-major: the 2n ring rows of the
    /// chunk's n lanes for m = 0, then for m = 1, ... (lane k's north ring at 2k, its mirror
    /// at 2k + 1), so that a block reads the spectra of its lanes for one order contiguously.
    pub spectra: &'a [&'a [Complex64]],
    /// The plan's column starts, if it keeps them, and the index of this chunk's first block
    /// in them (the chunk's lanes are the plan's lanes from `first_block · W` on).
    pub starts: Option<&'a ColumnStarts>,
    pub first_block: usize,
}

/// One block of lanes of an analysis order, between degree chunks: its nodes, recursion
/// state and place in the shared event list.
struct AnalysisBlock<const W: usize> {
    x: Nodes<W>,
    /// P̄_{l−1,m} and P̄_lm of every lane at the next degree `l` to run.
    p0: [f64; W],
    p1: [f64; W],
    l: usize,
    /// The next event to inject and the end of this block's events in `OrderScratch::all_events`.
    ev: usize,
    ev_end: usize,
}

/// Bytes of the per-block state an analysis order holds for `lanes` lanes and `fields` fields
/// (nodes, recursion state, events and ring spectra; at most 32 lanes per block).
pub(crate) fn analysis_block_bytes(lanes: usize, fields: usize) -> u64 {
    let lanes = lanes.div_ceil(32) as u64 * 32;
    lanes * 8 * (4 + 4 * fields as u64) + lanes * std::mem::size_of::<Event>() as u64
}

/// The ring spectra of one block and one field, even and odd parts of l − m. `field` is
/// order-major ([`AnalysisJob::spectra`]) with `rows` ring rows per order.
#[inline(always)]
fn block_spectra<const W: usize>(
    field: &[Complex64],
    block: &[Lane],
    first_lane: usize,
    rows: usize,
    m: usize,
) -> BlockSpectra<W> {
    let field = &field[m * rows..(m + 1) * rows];
    let mut h = BlockSpectra {
        re: [[0.0; W]; 2],
        im: [[0.0; W]; 2],
    };
    for (i, lane) in block.iter().enumerate() {
        let k = first_lane + i;
        let hn = field[2 * k];
        let (e, o) = if lane.south.is_some() {
            let hs = field[2 * k + 1];
            (hn + hs, hn - hs)
        } else {
            (hn, hn)
        };
        h.re[0][i] = e.re;
        h.im[0][i] = e.im;
        h.re[1][i] = o.re;
        h.im[1][i] = o.im;
    }
    h
}

/// Analysis of the writer's order m over one chunk of rings, for every field of the job; adds
/// into the packed coefficients of each. `F` partial sums per degree (F divides W).
///
/// The degree chunks run outermost and the blocks of lanes inside them, each block resuming
/// its recursion where the previous chunk left it: so the partial sums of one chunk
/// (CHUNK · F per field and part) stay in the level-1 cache while every block adds into them.
/// With the blocks outermost the sums of the whole column were read and written back once
/// per block, from the level-2 cache (64 KiB at L = 1023), which held analysis at about two
/// thirds of the synthesis speed. Blocks still add in the same order, so the sums are the same
/// doubles.
#[inline(always)]
pub(crate) fn analysis_order<const W: usize, const F: usize, const FMA: bool>(
    job: &AnalysisJob,
    sc: &mut OrderScratch,
    out: &mut OrderCoefficientSums,
) {
    let m = out.order();
    let lmax = job.lmax;
    let nf = job.spectra.len();
    assert!(
        sc.lmax == lmax && sc.fields >= nf && F <= MAX_FOLD,
        "scratch of another shape"
    );
    let rows = 2 * job.lanes.len();
    let starts = checked_starts(job.starts, job.lanes.len(), job.first_block, W);
    // the recursion coefficients are needed to find column starts without the plan's table,
    // else only once some block of this chunk of rings starts at all
    if starts.is_none() {
        sc.fill(m, lmax, false);
    }
    let c_m = job.sectoral_factors[m];
    // every block's column starts and ring spectra, up to the first block without any
    let nblocks = job.lanes.len().div_ceil(W);
    let mut blocks: Vec<AnalysisBlock<W>> = Vec::with_capacity(nblocks);
    let mut spectra: Vec<BlockSpectra<W>> = Vec::with_capacity(nblocks * nf);
    let mut all_events = std::mem::take(&mut sc.all_events);
    all_events.clear();
    for (bi, block) in job.lanes.chunks(W).enumerate() {
        let x = block_nodes::<W>(block);
        let block_starts = starts_of_block::<W>(
            starts,
            m,
            lmax,
            c_m,
            (job.first_block + bi, block),
            &sc.a,
            &sc.b,
            (&mut sc.events, &mut sc.late),
        );
        let Some(first) = block_starts.first() else {
            // lanes run from the equator to the poles: every later block is negligible too
            break;
        };
        let ev = all_events.len();
        let l = first.l as usize;
        all_events.extend_from_slice(block_starts);
        blocks.push(AnalysisBlock {
            x,
            p0: [0.0; W],
            p1: [0.0; W],
            l,
            ev,
            ev_end: all_events.len(),
        });
        spectra.extend(
            job.spectra
                .iter()
                .map(|field| block_spectra::<W>(field, block, bi * W, rows, m)),
        );
    }
    // Near the poles whole chunks of rings have no column of this order above the smallest
    // double: nothing to add. Otherwise the degrees below the first start add only zeros, so
    // the degree chunks begin there (each degree's sums are the same doubles wherever the
    // chunks begin: a degree's partial sums collect the same blocks in the same order).
    // Skipping both was worth about a fifth of an analysis at L = 10,800, whose rings run in
    // tens of chunks that each repeated the O(L) bookkeeping of every order.
    let Some(l_first) = blocks.iter().map(|b| b.l).min() else {
        sc.all_events = all_events;
        return;
    };
    if starts.is_some() {
        sc.fill(m, lmax, false);
    }
    let mut rows = sc.take_rows::<W>();
    let rc = OrderCoefficients {
        lmax,
        a: &sc.a,
        b: &sc.b,
    };
    let mut l0 = l_first;
    while l0 <= lmax {
        let l1 = (l0 + CHUNK).min(lmax + 1);
        let span = (l1 - l0) * F;
        let acc_re = &mut sc.acc_re.as_mut_slice()[..nf * span];
        let acc_im = &mut sc.acc_im.as_mut_slice()[..nf * span];
        acc_re.fill(0.0);
        acc_im.fill(0.0);
        for (b, h) in blocks.iter_mut().zip(spectra.chunks(nf)) {
            let events = &all_events[..b.ev_end];
            // within the chunk, the block's degrees run in pieces that end at its events
            while b.l < l1 {
                inject(events, &mut b.ev, b.l, &mut b.p0, &mut b.p1);
                let next_event = events.get(b.ev).map_or(lmax + 1, |e| e.l as usize);
                let l_end = next_event.min(l1);
                let n = l_end - b.l;
                let (a_l, b_l) = (&rc.a[b.l + 1..], &rc.b[b.l + 1..]);
                if b.x.has_low_part() {
                    recur::<W, FMA, true>(n, a_l, b_l, &b.x, &mut b.p0, &mut b.p1, &mut *rows);
                } else {
                    recur::<W, FMA, false>(n, a_l, b_l, &b.x, &mut b.p0, &mut b.p1, &mut *rows);
                }
                let par0 = (b.l - m) & 1;
                let at = (b.l - l0) * F;
                for (k, hk) in h.iter().enumerate() {
                    let field = k * span + at..(k + 1) * span;
                    accumulate_analysis::<W, F, FMA>(
                        &*rows,
                        n,
                        par0,
                        hk,
                        &mut acc_re[field.clone()],
                        &mut acc_im[field],
                    );
                }
                b.l = l_end;
            }
        }
        for k in 0..nf {
            for l in l0..l1 {
                let at = k * span + (l - l0) * F;
                let re: f64 = acc_re[at..at + F].iter().sum();
                let im: f64 = acc_im[at..at + F].iter().sum();
                // C_lm − i S_lm = Σ P̄_lm H_m; S_l0 stays zero
                out.add(k, l, re, if m > 0 { -im } else { 0.0 });
            }
        }
        l0 = l1;
    }
    sc.all_events = all_events;
    sc.keep_rows(rows);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::legendre::recursion::{column_start, sectoral, sectoral_factors};

    /// The block-wise column starts must equal the one-lane `column_start` bit for bit,
    /// including lanes near the poles at high order, where the start passes through several
    /// rescalings of the extended exponent (Fukushima 2012), and lanes that never start.
    #[test]
    fn order_major_holds_every_column_contiguously() {
        for lmax in [0, 7, 31, 32, 33, 100] {
            order_major_round_trip(lmax);
        }
    }

    fn order_major_round_trip(lmax: usize) {
        let packed: Vec<f64> = (0..crate::coeffs::packed_len(lmax))
            .map(|i| i as f64)
            .collect();
        let om = order_major(&packed, lmax);
        for m in 0..=lmax {
            for l in m..=lmax {
                assert_eq!(
                    om[order_major_offset(m, lmax) + l - m],
                    packed[packed_index(l, m)]
                );
            }
        }
        assert_eq!(order_major_offset(lmax, lmax) + 1, packed.len());
        let mut back = vec![f64::NAN; packed.len()];
        packed_from_order_major(&om, lmax, &mut back);
        assert_eq!(back, packed);
    }

    /// The step without the low part (`LO = false`) must give the doubles of the full step
    /// wherever every lane's low part is zero (IEEE 754 arithmetic: a · 0 = 0 and
    /// fma(0, p, w) = w for finite p; common practice), and a Gauss grid must have such blocks
    /// (the band π/3 ≤ θ ≤ 2π/3) besides blocks that need the low part.
    #[test]
    fn band_blocks_recur_to_the_same_doubles_without_the_low_part() {
        use super::super::lanes::build_lanes;
        use crate::sht::legendre::recursion::{a_lm, b_lm};
        use crate::sht::GaussGrid;
        const W: usize = 8;
        let grid = GaussGrid::new(300);
        let lanes = build_lanes(&grid, true);
        let blocks: Vec<Nodes<W>> = lanes.chunks(W).map(block_nodes::<W>).collect();
        let band = blocks.iter().filter(|x| !x.has_low_part()).count();
        assert!(
            band > 0 && band < blocks.len(),
            "{band} of {}",
            blocks.len()
        );
        let (m, lmax) = (3, 300);
        let a: Vec<f64> = (m + 1..=lmax).map(|l| a_lm(l, m)).collect();
        let b: Vec<f64> = (m + 1..=lmax).map(|l| b_lm(l, m)).collect();
        for x in blocks.iter().filter(|x| !x.has_low_part()) {
            let (mut with, mut without) = (Rows::<W>::new(), Rows::<W>::new());
            let start = ([0.0; W], [0.5; W]);
            let (mut p0, mut p1) = start;
            let (mut q0, mut q1) = start;
            recur::<W, true, true>(CHUNK, &a, &b, x, &mut p0, &mut p1, &mut with);
            recur::<W, true, false>(CHUNK, &a, &b, x, &mut q0, &mut q1, &mut without);
            for (r, s) in with.rows.iter().zip(&without.rows) {
                assert_eq!(r.map(f64::to_bits), s.map(f64::to_bits));
            }
            assert_eq!((p0, p1), (q0, q1));
        }
    }

    /// The vectorised coefficients (`recursion::fill_coefficients`) must be the doubles of
    /// `recursion::a_lm` / `b_lm`.
    #[test]
    fn recursion_coefficients_equal_the_reference_formulas() {
        use crate::sht::legendre::recursion::{a_lm, b_lm};
        let lmax = 2100;
        let mut sc = OrderScratch::new(lmax, 1);
        for m in [0, 1, 2, 17, 1000, 2098, 2099, 2100] {
            sc.fill_recursion(m, lmax);
            for l in m + 1..=lmax {
                assert_eq!(sc.a[l].to_bits(), a_lm(l, m).to_bits(), "a {l} {m}");
                assert_eq!(sc.b[l].to_bits(), b_lm(l, m).to_bits(), "b {l} {m}");
            }
        }
    }

    #[test]
    fn block_events_equal_column_start() {
        let lmax = 3000;
        let cm = sectoral_factors(lmax);
        // sin θ from 1 down to 1e-4, plus an exact pole
        let lanes: Vec<Lane> = (0..37)
            .map(|j| {
                let th = if j == 36 {
                    0.0
                } else {
                    (1e-4f64).powf(j as f64 / 35.0).asin()
                };
                Lane {
                    t: th.cos(),
                    t_lo: 0.0,
                    u: th.sin(),
                    north: j,
                    south: None,
                }
            })
            .collect();
        let mut sc = OrderScratch::new(lmax, 1);
        let (mut started, mut late) = (0, 0);
        for m in [0, 1, 5, 150, 700, 1500, 2222, 2999, 3000] {
            sc.fill(m, lmax, false);
            for block in lanes.chunks(16) {
                block_events::<16>(m, lmax, cm[m], block, &mut sc);
                for (i, lane) in block.iter().enumerate() {
                    let i = i as u32;
                    let want =
                        column_start(m, lmax, lane.t, sectoral(m, cm[m], lane.u), &sc.a, &sc.b);
                    let got = sc.events.iter().find(|e| e.lane == i);
                    match (want, got) {
                        (None, None) => {}
                        (Some(w), Some(g)) => {
                            started += 1;
                            late += usize::from(w.l > m + 1);
                            assert_eq!(
                                (w.l, w.p_prev, w.p),
                                (g.l as usize, g.p_prev, g.p),
                                "m {m} lane {i}"
                            );
                        }
                        _ => panic!("m {m} lane {i}: {want:?} vs {got:?}"),
                    }
                }
                assert!(sc.events.windows(2).all(|w| w[0].l <= w[1].l));
            }
        }
        // the set must include late starts, not only plain sectoral values
        assert!(started > 100 && late > 20, "{started} {late}");
    }
}
