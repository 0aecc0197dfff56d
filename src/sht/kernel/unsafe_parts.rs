//! The kernel layer's only `unsafe` code (every other module of `sht` denies it), with the
//! argument for each part beside it:
//!
//! 1. [`KernelSet`]: the table of kernel functions a plan uses for every order (and point
//!    synthesis for every group of points), chosen once when the plan (or the call) starts. The AVX2 and AVX-512 variants are `#[target_feature]` functions,
//!    which may only be called on a CPU that has those features.
//! 2. [`CoefficientSums`]: the shared output of the per-order analysis tasks. Every order m
//!    adds into its own disjoint run of each output array; the output hands out one writer per
//!    order, inside a parallel loop it runs itself over distinct orders, so no two writers can
//!    touch the same element. (Synthesis stages its entries in safe slices,
//!    `kernel::fourier_columns`.)
//! 3. [`keep_loop_scalar`]: an empty inline-assembly statement that stops the compiler from
//!    widening a loop across its iterations.

use std::marker::PhantomData;

use rayon::prelude::*;

use super::fourier_columns::OrderFourierColumns;
use super::order::{
    analysis_order, order_major_offset, synth_order, AnalysisJob, OrderScratch, SynthJob,
};
use super::path::{KernelPath, PORTABLE_FUSED};
use super::per_thread::PerThread;
use super::point_group::{point_group, PointScratch, PointTables};
use crate::coeffs::packed_len;
use crate::sht::points::PointValue;

type SynthFn = unsafe fn(&SynthJob, &mut OrderScratch, &mut OrderFourierColumns);
type AnalysisFn = unsafe fn(&AnalysisJob, &mut OrderScratch, &mut OrderCoefficientSums);
type PointFn = unsafe fn(&PointTables, &mut PointScratch, &[(f64, f64)], &mut [PointValue]);

/// The kernel functions of one path: values, gradients and analysis, each for one order, and
/// point synthesis (values, or values and gradients) for one group of `path.lanes()` points.
///
/// Safety: a `KernelSet` is only made by [`KernelSet::for_path`], which returns `None` unless
/// `path.is_supported()` (runtime CPU detection), and each table entry is the variant compiled
/// for exactly that path's target features. Calling an entry is therefore sound on this CPU.
/// The fields are private, so no other table can be assembled.
#[derive(Clone, Copy)]
pub(crate) struct KernelSet {
    path: KernelPath,
    values: SynthFn,
    gradient: SynthFn,
    analysis: AnalysisFn,
    point_values: PointFn,
    point_gradients: PointFn,
    /// The same for groups of at most [`NARROW_GROUP`] points, 8 lanes wide.
    narrow_values: PointFn,
    narrow_gradients: PointFn,
}

/// Groups this short run on 8-lane copies: a call with a single point (as `field::synthesis`
/// makes for every point at a radius of its own) then costs 8 lanes of work, not 32.
pub(crate) const NARROW_GROUP: usize = 8;

impl std::fmt::Debug for KernelSet {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("KernelSet")
            .field("path", &self.path)
            .finish()
    }
}

impl KernelSet {
    /// The kernels of `path`, or `None` when this CPU cannot run them.
    pub(crate) fn for_path(path: KernelPath) -> Option<KernelSet> {
        if !path.is_supported() {
            return None;
        }
        let set = match path {
            KernelPath::Portable => KernelSet {
                path,
                values: synth_portable::<false>,
                gradient: synth_portable::<true>,
                analysis: analysis_portable,
                point_values: points_portable::<false>,
                point_gradients: points_portable::<true>,
                narrow_values: points_portable::<false>,
                narrow_gradients: points_portable::<true>,
            },
            #[cfg(target_arch = "x86_64")]
            KernelPath::Avx2Fma => KernelSet {
                path,
                values: synth_avx2::<false>,
                gradient: synth_avx2::<true>,
                analysis: analysis_avx2,
                point_values: points_avx2::<false>,
                point_gradients: points_avx2::<true>,
                narrow_values: narrow_points_avx2::<false>,
                narrow_gradients: narrow_points_avx2::<true>,
            },
            #[cfg(target_arch = "x86_64")]
            KernelPath::Avx512 => KernelSet {
                path,
                values: synth_avx512::<false>,
                gradient: synth_avx512::<true>,
                analysis: analysis_avx512,
                point_values: points_avx512::<false>,
                point_gradients: points_avx512::<true>,
                narrow_values: narrow_points_avx512::<false>,
                narrow_gradients: narrow_points_avx512::<true>,
            },
            #[cfg(not(target_arch = "x86_64"))]
            KernelPath::Avx2Fma | KernelPath::Avx512 => return None,
        };
        Some(set)
    }

    /// The fastest kernels this CPU runs.
    pub(crate) fn detect() -> KernelSet {
        KernelSet::for_path(KernelPath::detect()).expect("the detected path is supported")
    }

    pub(crate) fn path(&self) -> KernelPath {
        self.path
    }

    /// Synthesis of one order (values, or ∂/∂θ and (1/sin θ) ∂/∂λ when `gradient`).
    pub(crate) fn synth(
        &self,
        gradient: bool,
        job: &SynthJob,
        sc: &mut OrderScratch,
        out: &mut OrderFourierColumns,
    ) {
        let f = if gradient { self.gradient } else { self.values };
        // SAFETY: see the type's doc: the table belongs to a path this CPU supports.
        unsafe { f(job, sc, out) }
    }

    /// Analysis of one order over one chunk of rings.
    pub(crate) fn analyse(
        &self,
        job: &AnalysisJob,
        sc: &mut OrderScratch,
        out: &mut OrderCoefficientSums,
    ) {
        // SAFETY: as in `synth`.
        unsafe { (self.analysis)(job, sc, out) }
    }

    /// Synthesis at one group of 1 to `path().lanes()` points (values, and both gradient
    /// components when `gradient`; the tables must then hold the gradient coefficients).
    pub(crate) fn points(
        &self,
        gradient: bool,
        tables: &PointTables,
        sc: &mut PointScratch,
        group: &[(f64, f64)],
        out: &mut [PointValue],
    ) {
        let f = match (gradient, group.len() <= NARROW_GROUP) {
            (false, false) => self.point_values,
            (true, false) => self.point_gradients,
            (false, true) => self.narrow_values,
            (true, true) => self.narrow_gradients,
        };
        // SAFETY: as in `synth`.
        unsafe { f(tables, sc, group, out) }
    }
}

// The variants. `synth_order` and `analysis_order` are `#[inline(always)]`, so each wrapper
// compiles its own copy with the wrapper's target features. Lane counts: the recursion runs
// W lanes (W / lanes-per-register independent chains, enough to cover the latency of its two
// dependent fused steps), the synthesis sums H lanes at a time (four sets of H lanes fill
// half the register file) and analysis keeps F partial sums per degree (two registers on
// AVX2, one on AVX-512: the chain of FMAs into one partial sum is then W / F = 2 or 4 long,
// short enough for the independent degrees in flight to hide it). The widths must agree with
// `KernelPath::lanes`.

fn synth_portable<const GRAD: bool>(
    job: &SynthJob,
    sc: &mut OrderScratch,
    out: &mut OrderFourierColumns,
) {
    synth_order::<8, 4, PORTABLE_FUSED, GRAD>(job, sc, out)
}

fn analysis_portable(job: &AnalysisJob, sc: &mut OrderScratch, out: &mut OrderCoefficientSums) {
    analysis_order::<8, 2, PORTABLE_FUSED>(job, sc, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn synth_avx2<const GRAD: bool>(
    job: &SynthJob,
    sc: &mut OrderScratch,
    out: &mut OrderFourierColumns,
) {
    synth_order::<16, 8, true, GRAD>(job, sc, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn synth_avx512<const GRAD: bool>(
    job: &SynthJob,
    sc: &mut OrderScratch,
    out: &mut OrderFourierColumns,
) {
    if GRAD {
        synth_order::<32, 16, true, GRAD>(job, sc, out)
    } else {
        synth_order::<32, 32, true, GRAD>(job, sc, out)
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn analysis_avx2(job: &AnalysisJob, sc: &mut OrderScratch, out: &mut OrderCoefficientSums) {
    analysis_order::<16, 8, true>(job, sc, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn analysis_avx512(
    job: &AnalysisJob,
    sc: &mut OrderScratch,
    out: &mut OrderCoefficientSums,
) {
    analysis_order::<32, 8, true>(job, sc, out)
}

// Point groups: one lane per point, W = `KernelPath::lanes` points per group, sums of H lanes
// in registers at a time as in synthesis.

fn points_portable<const GRAD: bool>(
    tables: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    point_group::<8, 4, PORTABLE_FUSED, GRAD>(tables, sc, group, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn points_avx2<const GRAD: bool>(
    tables: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    point_group::<16, 8, true, GRAD>(tables, sc, group, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn points_avx512<const GRAD: bool>(
    tables: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    point_group::<32, 16, true, GRAD>(tables, sc, group, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn narrow_points_avx2<const GRAD: bool>(
    tables: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    point_group::<8, 8, true, GRAD>(tables, sc, group, out)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn narrow_points_avx512<const GRAD: bool>(
    tables: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    point_group::<8, 8, true, GRAD>(tables, sc, group, out)
}

/// Marks a loop whose iterations must not be vectorised across: inside it, the code already
/// works on whole vector registers (the fixed-size lane arrays), and a loop vectoriser that
/// widens the independent iterations instead (the degrees of an analysis chunk) turns every
/// load and store of the per-degree sums into gathers and scatters, which made the analysis
/// kernel about a sixth slower (perf annotate of `kugel bench --lmax 1023`, December 2026).
/// A loop holding an inline-assembly statement is never vectorised; the statement itself is
/// empty and emits no instruction.
#[inline(always)]
pub(crate) fn keep_loop_scalar() {
    #[cfg(any(target_arch = "x86_64", target_arch = "aarch64"))]
    // SAFETY: an empty template with no operands reads and writes nothing (no registers, no
    // memory, no flags, no stack), so it cannot break any invariant.
    unsafe {
        std::arch::asm!("", options(nomem, nostack, preserves_flags));
    }
}

/// `geodesy` C and S of one or more fields in order-major layout (the degrees m..=lmax of each
/// order one after another, `order::order_major_offset`), accumulated order by order in
/// parallel. Order-major, each order's sums land in one contiguous run; in the packed
/// degree-major layout every degree of an order was another cache line, which cost about a
/// sixth of an analysis (perf annotate at degree 1023, December 2026).
pub(crate) struct CoefficientSums<'c> {
    fields: Vec<(*mut f64, *mut f64)>,
    lmax: usize,
    _coefficients: PhantomData<&'c mut [f64]>,
}

// SAFETY: every array is borrowed mutably for 'c, so nothing outside reads or writes it while
// a `CoefficientSums` exists; and inside
// `for_each_order` each thread reads and writes only the elements order_major_offset(m, lmax)
// + l − m, l = m..=lmax, of its own order m; these runs of different orders are disjoint
// (each order's run ends where the next begins), and different arrays are different borrows.
unsafe impl Sync for CoefficientSums<'_> {}

impl<'c> CoefficientSums<'c> {
    /// Takes order-major (C, S) of degree `lmax` of each field (each `packed_len(lmax)` long).
    pub(crate) fn new(fields: Vec<(&'c mut [f64], &'c mut [f64])>, lmax: usize) -> Self {
        let fields = fields
            .into_iter()
            .map(|(c, s)| {
                assert_eq!(c.len(), packed_len(lmax), "packed C length");
                assert_eq!(s.len(), packed_len(lmax), "packed S length");
                (c.as_mut_ptr(), s.as_mut_ptr())
            })
            .collect();
        CoefficientSums {
            fields,
            lmax,
            _coefficients: PhantomData,
        }
    }

    /// Runs `body` once for every order 0..=lmax, in parallel, one task per order.
    pub(crate) fn for_each_order<S: Send, I, F>(&mut self, init: I, body: F)
    where
        I: Fn() -> S + Sync + Send,
        F: Fn(&mut S, &mut OrderCoefficientSums) + Sync + Send,
    {
        let sums: &CoefficientSums = self;
        let scratch = PerThread::for_current_pool();
        (0..self.lmax + 1)
            .into_par_iter()
            .with_max_len(1)
            .for_each(|m| {
                let mut out = OrderCoefficientSums { sums, m };
                scratch.with(&init, |state| body(state, &mut out));
            });
    }
}

/// Adds into the coefficients of one order m. Not `Clone`: one writer per order exists at a
/// time.
pub(crate) struct OrderCoefficientSums<'a, 'c> {
    sums: &'a CoefficientSums<'c>,
    m: usize,
}

impl OrderCoefficientSums<'_, '_> {
    pub(crate) fn order(&self) -> usize {
        self.m
    }

    /// C_lm += `dc`, S_lm += `ds` of field `field` for this order m and degree `l`
    /// (m ≤ l ≤ lmax).
    #[inline(always)]
    pub(crate) fn add(&mut self, field: usize, l: usize, dc: f64, ds: f64) {
        assert!(
            self.m <= l && l <= self.sums.lmax,
            "degree {l} outside the order's column"
        );
        let (c, s) = self.sums.fields[field];
        let i = order_major_offset(self.m, self.sums.lmax) + l - self.m;
        // SAFETY: i < packed_len(lmax) since m ≤ l ≤ lmax; the element belongs to order m
        // alone (see the `Sync` impl of `CoefficientSums`).
        unsafe {
            *c.add(i) += dc;
            *s.add(i) += ds;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_order_adds_into_its_own_coefficients() {
        let lmax = 5;
        let mut c = vec![0.0; packed_len(lmax)];
        let mut s = vec![0.0; packed_len(lmax)];
        let mut sums = CoefficientSums::new(vec![(&mut c, &mut s)], lmax);
        for _ in 0..2 {
            sums.for_each_order(
                || (),
                |_, out| {
                    for l in out.order()..=lmax {
                        out.add(0, l, l as f64, out.order() as f64);
                    }
                },
            );
        }
        for l in 0..=lmax {
            for m in 0..=l {
                let i = order_major_offset(m, lmax) + l - m;
                assert_eq!(c[i], 2.0 * l as f64);
                assert_eq!(s[i], 2.0 * m as f64);
            }
        }
    }

    #[test]
    #[should_panic(expected = "outside the order's column")]
    fn a_degree_below_the_order_is_refused() {
        let mut c = vec![0.0; packed_len(3)];
        let mut s = vec![0.0; packed_len(3)];
        CoefficientSums::new(vec![(&mut c, &mut s)], 3)
            .for_each_order(|| (), |_, out| out.add(0, 0, 1.0, 1.0));
    }
}
