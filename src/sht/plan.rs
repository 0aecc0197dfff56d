//! A reusable transform plan for one (lmax, grid) pair.
//!
//! Analysis: C_lm − i S_lm = (1/4π) Σ_j w_j P̄_lm(cos θ_j) G_m(θ_j), with
//! G_m = (2π/nlon) Σ_k f_jk e^{−imλ_k} (docs/conventions.md §4). Synthesis is its transpose.
//! Coefficients are `geodesy` without phase inside; other conventions are converted at the edge.
//!
//! Execution:
//! - Legendre stage: rayon over orders m (one task per order, work stealing balances the
//!   cost that falls with m); per order, the rings run in blocks of SIMD lanes, north and
//!   south rings together when the grid is symmetric, with the recursion computed on the fly
//!   (no tables of P̄_lm). The kernel variant (instruction set, lane width, fused
//!   multiply–add) is chosen once, when the plan is built, from runtime CPU detection.
//!   Several fields on the same grid (`synthesise_many`, `analyse_many`) share each P̄_lm:
//!   the recursion runs once per (order, block of rings, chunk of degrees) and every field
//!   only adds its own sums.
//! - Fourier stage: rayon over rings, one real FFT each (realfft), per-thread scratch.
//! - Synthesis keeps each ring's half-spectrum inside its own output row (2L + 1 ≤ nlon reals)
//!   and transforms the row in place, so no nlat × (L+1) complex array is held beside the grid.
//!   Analysis processes the rings in chunks whose spectra fit a fixed budget.

use std::borrow::Cow;
use std::ops::Range;
use std::sync::Arc;

use ndarray::{Array2, ArrayView2};
use rayon::prelude::*;
use realfft::num_complex::Complex64;
use realfft::{ComplexToReal, RealFftPlanner, RealToComplex};

use crate::coeffs::{packed_len, Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::memory;

use super::grid::{all_finite_field, Grid};
use super::kept_buffers::KeptSpectra;
use super::kernel::{
    analysis_block_bytes, build_lanes, is_symmetric, order_major, packed_from_order_major,
    staging_bytes, AnalysisJob, CoefficientSums, ColumnStarts, FourierColumns, KernelPath,
    KernelSet, Lane, OrderScratch, SynthJob,
};
use super::legendre::recursion::sectoral_factors;
use super::legendre::{order_one_over_sin_at_pole, Pole};

/// Budget for the ring spectra held at once during analysis (both copies, all fields).
///
/// Measured on the 2-core benchmark machine (December 2026): at L = 10,800 chunks of 16 MiB
/// (128 lanes, 43 chunks) took 38–40 s per analysis against 32 s with this budget (352
/// lanes, 16 chunks); at L = 1023 and 2047 the two budgets measured alike once the kernels'
/// buffers were cache-line aligned and the command line kept freed pages. Up to about
/// L = 1400 one chunk holds every ring and the plan keeps its buffers (`sht::kept_buffers`).
const ANALYSIS_CHUNK_BYTES: usize = 256 << 20;

/// The budget of an analysis of several fields at once: the plan keeps its buffers
/// (`kept_buffers::MAX_KEPT_BYTES`), where buffers of the single-field budget, K times the
/// spectra per lane, were made afresh every call (eight fields at L = 1023: 0.38 s per
/// analysis with 256 MiB chunks, 0.32 s with 64 MiB).
const MANY_FIELD_CHUNK_BYTES: usize = 64 << 20;

/// The fewest lanes an analysis chunk holds (one block of the widest kernel), whatever the
/// budget.
const MIN_CHUNK_LANES: usize = 32;

/// Transform plan: grid, degree, lane layout, FFT plans and the kernels chosen for this CPU.
/// `Send + Sync`; build once, reuse for every field of this shape.
pub struct TransformPlan {
    lmax: usize,
    grid: Grid,
    forward: Arc<dyn RealToComplex<f64>>,
    inverse: Arc<dyn ComplexToReal<f64>>,
    symmetric: bool,
    lanes: Vec<Lane>,
    sectoral_factors: Vec<f64>,
    rotation: Vec<Complex64>,
    kernels: KernelSet,
    /// Where every (order, block of lanes) column starts, found once (`None` when the table
    /// would be too large; see `kernel::column_starts`).
    column_starts: Option<ColumnStarts>,
    /// The ring spectra buffers of the last analysis, for the next (`sht::kept_buffers`).
    kept_spectra: KeptSpectra,
}

impl TransformPlan {
    /// Builds a plan for band limit `lmax` on `grid`. Fails if the grid cannot resolve `lmax`
    /// (nlon < 2·lmax + 1) or if the grid description is inconsistent.
    pub fn new(lmax: usize, grid: &Grid) -> Result<Self> {
        if grid.nlon < 2 * lmax + 1 {
            return Err(Error::invalid(format!(
                "a grid with {} longitudes resolves degree {} at most, not {lmax}",
                grid.nlon,
                (grid.nlon.saturating_sub(1)) / 2
            )));
        }
        if grid.nlat() == 0 || grid.weights.len() != grid.nlat() {
            return Err(Error::ShapeMismatch(format!(
                "grid has {} latitudes but {} quadrature weights",
                grid.nlat(),
                grid.weights.len()
            )));
        }
        if let Some(j) = grid
            .colatitude_rad
            .iter()
            .position(|t| !t.is_finite() || *t < 0.0 || *t > std::f64::consts::PI)
        {
            return Err(Error::invalid(format!(
                "grid row {j}: colatitude {} rad is outside [0, π]",
                grid.colatitude_rad[j]
            )));
        }
        // Refuse before planning anything: a plan is only useful if one field and one
        // coefficient set of its shape fit in memory.
        memory::check_fits(
            &format!("a transform to degree {lmax} on a {} x {} grid (one field and one coefficient set)", grid.nlat(), grid.nlon),
            plan_memory_bytes(lmax, grid.nlat(), grid.nlon),
        )?;
        let mut planner = RealFftPlanner::<f64>::new();
        let symmetric = is_symmetric(grid);
        let mut plan = TransformPlan {
            lmax,
            grid: grid.clone(),
            forward: planner.plan_fft_forward(grid.nlon),
            inverse: planner.plan_fft_inverse(grid.nlon),
            symmetric,
            lanes: build_lanes(grid, symmetric),
            sectoral_factors: sectoral_factors(lmax),
            rotation: (0..=lmax)
                .map(|m| Complex64::from_polar(1.0, m as f64 * grid.lon0_rad))
                .collect(),
            kernels: KernelSet::detect(),
            column_starts: None,
            kept_spectra: KeptSpectra::default(),
        };
        plan.find_column_starts();
        Ok(plan)
    }

    /// Builds the column-start table for the current lanes and kernel width, when it is
    /// small enough to keep ([`column_start_table_bytes`]) and fits in memory; otherwise the
    /// plan does without (each transform then finds the starts itself, with the same result).
    fn find_column_starts(&mut self) {
        self.column_starts = None;
        let Some(bytes) = column_start_table_bytes(self.lmax, self.lanes.len(), self.grid.shape())
        else {
            return;
        };
        let what = format!("the column starts of a degree-{} plan", self.lmax);
        if memory::check_fits(&what, bytes).is_ok() {
            self.column_starts = Some(ColumnStarts::build(
                self.lmax,
                &self.lanes,
                self.kernels.path().lanes(),
                &self.sectoral_factors,
            ));
        }
    }

    /// The same plan without its column-start table (every transform finds the starts itself),
    /// for testing that both give the same result.
    pub fn without_column_start_table(mut self) -> Self {
        self.column_starts = None;
        self
    }

    /// Whether the plan keeps a table of column starts.
    pub fn has_column_start_table(&self) -> bool {
        self.column_starts.is_some()
    }

    /// Bytes of the plan's column-start table (0 without one).
    pub fn column_start_table_bytes(&self) -> u64 {
        self.column_starts.as_ref().map_or(0, ColumnStarts::bytes)
    }

    /// The same plan running a given kernel path (refused when the CPU lacks it), for tests
    /// and benchmarks of each variant.
    pub fn with_kernel_path(mut self, path: KernelPath) -> Result<Self> {
        self.kernels = KernelSet::for_path(path).ok_or_else(|| {
            Error::invalid(format!(
                "this CPU cannot run the {} kernels (available: {})",
                path.name(),
                KernelPath::available()
                    .iter()
                    .map(|p| p.name())
                    .collect::<Vec<_>>()
                    .join(", ")
            ))
        })?;
        if self.column_starts.is_some() {
            self.find_column_starts();
        }
        Ok(self)
    }

    /// The same plan without equatorial pairing of rings (for testing the fallback).
    pub fn without_symmetry(mut self) -> Self {
        self.symmetric = false;
        self.lanes = build_lanes(&self.grid, false);
        if self.column_starts.is_some() {
            self.find_column_starts();
        }
        self
    }

    pub fn lmax(&self) -> usize {
        self.lmax
    }

    pub fn grid(&self) -> &Grid {
        &self.grid
    }

    /// The kernel variant this plan runs.
    pub fn kernel_path(&self) -> KernelPath {
        self.kernels.path()
    }

    /// Whether north and south rings are paired (the grid is symmetric about the equator).
    pub fn is_symmetric(&self) -> bool {
        self.symmetric
    }

    /// Bytes a synthesis needs beyond its input (output grids, converted input, scratch),
    /// for `outputs` output grids of one field each.
    pub fn synthesis_bytes(&self, outputs: usize) -> u64 {
        self.synthesis_bytes_many(outputs, 1)
    }

    /// Bytes a synthesis of `fields` fields at once needs beyond its inputs, for `outputs`
    /// output grids in all (one per field, or two per field for gradients).
    pub fn synthesis_bytes_many(&self, outputs: usize, fields: usize) -> u64 {
        let (nlat, nlon) = self.grid.shape();
        synthesis_memory_bytes_many(self.lmax, nlat, nlon, outputs, fields)
    }

    /// Bytes an analysis needs beyond its input (coefficients, ring spectra, scratch).
    pub fn analysis_bytes(&self) -> u64 {
        self.analysis_bytes_many(1)
    }

    /// Bytes an analysis of `fields` fields at once needs beyond its inputs.
    pub fn analysis_bytes_many(&self, fields: usize) -> u64 {
        analysis_memory_bytes_many(self.lmax, self.grid.nlon, self.lanes.len(), fields)
    }

    /// Analyses a field (nlat × nlon, rows north to south) into `geodesy` coefficients.
    pub fn analyse(&self, field: &Array2<f64>) -> Result<Coefficients> {
        self.analyse_rings(field, 0..self.grid.nlat())
    }

    /// Analyses several fields of this grid in one pass: each P̄_lm is computed once and
    /// applied to every field. The result of field k equals [`TransformPlan::analyse`] of that
    /// field to within a few ulp (the partial sums per degree are the same, only their
    /// grouping into rayon tasks is not guaranteed; see `tests/sht/many_fields.rs`).
    pub fn analyse_many(&self, fields: &[&Array2<f64>]) -> Result<Vec<Coefficients>> {
        self.analyse_rings_many(fields, 0..self.grid.nlat())
    }

    /// The contribution of rows `rings` to the analysis of `field`: summing the results over
    /// disjoint ring ranges that cover the grid gives [`TransformPlan::analyse`] (a seam for
    /// sharding work across machines).
    pub fn analyse_rings(&self, field: &Array2<f64>, rings: Range<usize>) -> Result<Coefficients> {
        let mut out = self.analyse_rings_many(&[field], rings)?;
        Ok(out.pop().expect("one field in, one out"))
    }

    /// [`TransformPlan::analyse`] of a view: any row stride (a grid stored south to north is
    /// the view with its rows reversed, `slice(s![..;-1, ..])`), read in place when each row is
    /// contiguous, so a caller whose layout differs from the engine's only in the row order
    /// needs no reordering copy. Bit-identical to [`TransformPlan::analyse`] of the same
    /// values in engine order.
    pub fn analyse_view(&self, field: ArrayView2<'_, f64>) -> Result<Coefficients> {
        let mut out = self.analyse_views(&[field], 0..self.grid.nlat())?;
        Ok(out.pop().expect("one field in, one out"))
    }

    /// [`TransformPlan::analyse_rings`] of several fields in one pass.
    pub fn analyse_rings_many(
        &self,
        fields: &[&Array2<f64>],
        rings: Range<usize>,
    ) -> Result<Vec<Coefficients>> {
        let views: Vec<ArrayView2<'_, f64>> = fields.iter().map(|f| f.view()).collect();
        self.analyse_views(&views, rings)
    }

    /// [`TransformPlan::analyse_view`] of a field that may hold non-finite values: `Ok(None)`
    /// when it does (found before any work, so that the caller can name the value in its
    /// own terms), else the analysis. For callers that would otherwise check the values
    /// first and pay a second pass over them.
    pub fn analyse_view_if_finite(
        &self,
        field: ArrayView2<'_, f64>,
    ) -> Result<Option<Coefficients>> {
        let rings = 0..self.grid.nlat();
        self.check_analysis_inputs(&[field], &rings)?;
        if !all_finite_field(field) {
            return Ok(None);
        }
        let mut out = self.analyse_finite_views(&[field], rings)?;
        Ok(out.pop())
    }

    /// [`TransformPlan::analyse_rings_many`] of views (see [`TransformPlan::analyse_view`]).
    pub fn analyse_views(
        &self,
        fields: &[ArrayView2<'_, f64>],
        rings: Range<usize>,
    ) -> Result<Vec<Coefficients>> {
        if fields.is_empty() {
            return Ok(Vec::new());
        }
        self.check_analysis_inputs(fields, &rings)?;
        for (k, field) in fields.iter().enumerate() {
            // a branch-free pass over the values (it vectorises) before the indexed search,
            // which runs only when some value is not finite: the search alone took about 2 %
            // of a degree-1023 analysis
            if all_finite_field(field.view()) {
                continue;
            }
            if let Some((idx, v)) = field.indexed_iter().find(|(_, v)| !v.is_finite()) {
                let which = if fields.len() > 1 {
                    format!("field {}: ", k + 1)
                } else {
                    String::new()
                };
                return Err(Error::invalid(format!(
                    "{which}field value at row {}, column {} is not finite ({v}); mask or fill gaps before analysis",
                    idx.0, idx.1
                )));
            }
        }
        self.analyse_finite_views(fields, rings)
    }

    /// The shapes, the ring range and the plan's degree against the grid's quadrature.
    fn check_analysis_inputs(
        &self,
        fields: &[ArrayView2<'_, f64>],
        rings: &Range<usize>,
    ) -> Result<()> {
        let nlat = self.grid.nlat();
        for (k, field) in fields.iter().enumerate() {
            let (rows, cols) = field.dim();
            self.grid.check_shape(rows, cols).map_err(|e| match e {
                Error::ShapeMismatch(msg) if fields.len() > 1 => {
                    Error::ShapeMismatch(format!("field {}: {msg}", k + 1))
                }
                other => other,
            })?;
        }
        if rings.end > nlat || rings.start > rings.end {
            return Err(Error::invalid(format!(
                "ring range {}..{} is outside the grid's {nlat} rows",
                rings.start, rings.end
            )));
        }
        if self.lmax > self.grid.max_exact_degree {
            return Err(Error::invalid(format!(
                "this grid's quadrature is exact to degree {} only, not {}: use a finer grid or lmax ≤ {}",
                self.grid.max_exact_degree, self.lmax, self.grid.max_exact_degree
            )));
        }
        Ok(())
    }

    /// The analysis of checked fields ([`TransformPlan::check_analysis_inputs`]) whose values
    /// are all finite.
    fn analyse_finite_views(
        &self,
        fields: &[ArrayView2<'_, f64>],
        rings: Range<usize>,
    ) -> Result<Vec<Coefficients>> {
        let (nlat, nlon) = (self.grid.nlat(), self.grid.nlon);
        let nf = fields.len();
        memory::check_fits(
            &format!(
                "analysis of {nf} field(s) to degree {} on a {nlat} x {nlon} grid",
                self.lmax
            ),
            self.analysis_bytes_many(nf),
        )?;
        let all_rings = rings == (0..nlat);
        let lanes: Vec<Lane> = if all_rings {
            self.lanes.clone()
        } else {
            self.lanes_for_rows(&rings)
        };
        // the table describes the plan's own lanes only
        let starts = self.column_starts.as_ref().filter(|_| all_rings);
        let w = self.kernels.path().lanes();
        // a field whose rows are not contiguous (a transposed or column-strided view) is copied
        // once; every other field is read row by row where it lies
        let copies: Vec<Option<Array2<f64>>> = fields
            .iter()
            .map(|f| (!rows_are_contiguous(f)).then(|| f.as_standard_layout().into_owned()))
            .collect();
        let data: Vec<Vec<&[f64]>> = fields
            .iter()
            .zip(&copies)
            .map(|(f, copy)| match copy {
                Some(owned) => ring_rows(owned.view()),
                None => ring_rows(f.view()),
            })
            .collect();
        let lmax = self.lmax;
        let stride = lmax + 1;
        // order-major sums (see `CoefficientSums`), packed at the end
        let mut order_major_sums =
            vec![(vec![0.0; packed_len(lmax)], vec![0.0; packed_len(lmax)]); nf];
        let chunk_lanes = analysis_chunk_lanes(lmax, lanes.len(), nf);
        let per_field = chunk_lanes.min(lanes.len()) * 2 * stride;
        // ring spectra as the FFTs leave them (ring after ring), and order-major for the kernels
        let mut buffers = self.kept_spectra.take(nf * per_field);
        let spectra = &mut buffers.by_ring[..nf * per_field];
        let by_order = &mut buffers.by_order[..nf * per_field];
        let scale = 1.0 / (2.0 * nlon as f64);
        let mut sums = CoefficientSums::new(
            order_major_sums
                .iter_mut()
                .map(|(c, s)| (c.as_mut_slice(), s.as_mut_slice()))
                .collect(),
            lmax,
        );
        for (ci, chunk) in lanes.chunks(chunk_lanes.max(1)).enumerate() {
            // Fourier stage: weighted, rotated half-spectra of the chunk's rings.
            let used = chunk.len() * 2 * stride;
            for (k, dst) in spectra.chunks_mut(per_field).enumerate() {
                dst[..used]
                    .par_chunks_mut(2 * stride)
                    .zip(chunk.par_iter())
                    .for_each_init(
                        || RingScratch::new(&*self.forward, &*self.inverse),
                        |rs, (dst, lane)| {
                            let (north, south) = dst.split_at_mut(stride);
                            self.ring_spectrum(&data[k], lane.north, scale, rs, north);
                            match lane.south {
                                Some(row) => self.ring_spectrum(&data[k], row, scale, rs, south),
                                None => {
                                    south.iter_mut().for_each(|z| *z = Complex64::new(0.0, 0.0))
                                }
                            }
                        },
                    );
            }
            for (src, dst) in spectra
                .chunks(per_field)
                .zip(by_order.chunks_mut(per_field))
            {
                rings_to_order_major(&src[..used], &mut dst[..used], stride);
            }
            // Legendre stage: one task per order, every field at once.
            let field_spectra: Vec<&[Complex64]> =
                by_order.chunks(per_field).map(|s| &s[..used]).collect();
            let job = AnalysisJob {
                lmax,
                lanes: chunk,
                sectoral_factors: &self.sectoral_factors,
                spectra: &field_spectra,
                starts,
                first_block: ci * chunk_lanes.max(1) / w,
            };
            let kernels = self.kernels;
            sums.for_each_order(
                || OrderScratch::new(lmax, nf),
                |sc, orders| kernels.analyse(&job, sc, orders),
            );
        }
        drop(sums);
        self.kept_spectra.give_back(buffers);
        let out = order_major_sums
            .iter()
            .map(|(c_om, s_om)| {
                let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
                let (c_packed, s_packed) = c.packed_mut();
                packed_from_order_major(c_om, lmax, c_packed);
                packed_from_order_major(s_om, lmax, s_packed);
                c
            })
            .collect();
        Ok(out)
    }

    /// H_m = w_j/(2 nlon) e^{−imλ_0} X_m for one row (X = the row's forward real FFT).
    fn ring_spectrum(
        &self,
        rows: &[&[f64]],
        row: usize,
        scale: f64,
        rs: &mut RingScratch,
        out: &mut [Complex64],
    ) {
        rs.real.copy_from_slice(rows[row]);
        self.forward
            .process_with_scratch(&mut rs.real, &mut rs.spectrum, &mut rs.fft_scratch)
            .expect("buffer sizes come from the same plan");
        let w = self.grid.weights[row] * scale;
        for (m, o) in out.iter_mut().enumerate() {
            *o = rs.spectrum[m] * self.rotation[m].conj() * w;
        }
    }

    /// Lanes of a subset of rows: mirror pairs when both rows are inside, single rings otherwise.
    fn lanes_for_rows(&self, rows: &Range<usize>) -> Vec<Lane> {
        let mut out = Vec::new();
        for lane in &self.lanes {
            let n_in = rows.contains(&lane.north);
            let s_in = lane.south.is_some_and(|s| rows.contains(&s));
            match (n_in, s_in) {
                (true, true) => out.push(*lane),
                (true, false) => out.push(Lane::single(&self.grid, lane.north)),
                (false, true) => out.push(Lane::single(&self.grid, lane.south.expect("checked"))),
                (false, false) => {}
            }
        }
        out
    }

    /// Synthesises `coeffs` (any normalisation; truncated or zero-padded to the plan's lmax)
    /// on the plan's grid.
    pub fn synthesise(&self, coeffs: &Coefficients) -> Result<Array2<f64>> {
        self.synthesise_orders(coeffs, 0..self.lmax + 1)
    }

    /// Synthesises several coefficient sets on the plan's grid in one pass: each P̄_lm is
    /// computed once and applied to every set. Field k is bit-identical to
    /// [`TransformPlan::synthesise`] of set k (the same sums in the same order).
    pub fn synthesise_many(&self, coeffs: &[&Coefficients]) -> Result<Vec<Array2<f64>>> {
        self.synthesise_orders_many(coeffs, 0..self.lmax + 1)
    }

    /// The part of the synthesis carried by orders `orders`: summing the fields over disjoint
    /// order ranges gives [`TransformPlan::synthesise`] (a seam for sharding).
    pub fn synthesise_orders(
        &self,
        coeffs: &Coefficients,
        orders: Range<usize>,
    ) -> Result<Array2<f64>> {
        let mut out = self.synthesise_orders_many(&[coeffs], orders)?;
        Ok(out.pop().expect("one field in, one out"))
    }

    fn synthesise_orders_many(
        &self,
        coeffs: &[&Coefficients],
        orders: Range<usize>,
    ) -> Result<Vec<Array2<f64>>> {
        let g = self.prepared_many(coeffs, 1)?;
        let mut out = (0..g.len())
            .map(|_| self.allocate_grid())
            .collect::<Result<Vec<_>>>()?;
        self.legendre_synthesis(&g, orders, false, out.iter_mut().collect());
        out.iter_mut().for_each(|f| self.inverse_rings(f));
        Ok(out)
    }

    /// ∂f/∂θ and (1/sin θ) ∂f/∂λ on the plan's grid. On pole rows (sin θ = 0) both are the
    /// limits along each meridian λ_k (only order 1 contributes there).
    pub fn synthesise_gradient(&self, coeffs: &Coefficients) -> Result<(Array2<f64>, Array2<f64>)> {
        let mut out = self.synthesise_gradient_many(&[coeffs])?;
        Ok(out.pop().expect("one field in, one out"))
    }

    /// [`TransformPlan::synthesise_gradient`] of several coefficient sets in one pass (each
    /// P̄_lm computed once); bit-identical to the single-set call for each set.
    pub fn synthesise_gradient_many(
        &self,
        coeffs: &[&Coefficients],
    ) -> Result<Vec<(Array2<f64>, Array2<f64>)>> {
        let g = self.prepared_many(coeffs, 2)?;
        let mut grids = (0..2 * g.len())
            .map(|_| self.allocate_grid())
            .collect::<Result<Vec<_>>>()?;
        self.legendre_synthesis(&g, 0..self.lmax + 1, true, grids.iter_mut().collect());
        let mut out = Vec::with_capacity(g.len());
        let mut grids = grids.into_iter();
        for gk in &g {
            let mut d_theta = grids.next().expect("two grids per field");
            let mut d_lambda = grids.next().expect("two grids per field");
            self.pole_gradient_rows(gk, &mut d_theta, &mut d_lambda);
            self.inverse_rings(&mut d_theta);
            self.inverse_rings(&mut d_lambda);
            out.push((d_theta, d_lambda));
        }
        Ok(out)
    }

    fn allocate_grid(&self) -> Result<Array2<f64>> {
        Ok(Array2::zeros(self.grid.shape()))
    }

    /// The inputs as `geodesy` coefficients of the plan's degree (borrowed when they already
    /// are), after checking that `outputs_per_field` grids per input fit in memory.
    fn prepared_many<'c>(
        &self,
        coeffs: &[&'c Coefficients],
        outputs_per_field: usize,
    ) -> Result<Vec<Cow<'c, Coefficients>>> {
        for c in coeffs {
            c.check_finite()?;
        }
        let nf = coeffs.len();
        memory::check_fits(
            &format!(
                "synthesis of {nf} field(s) to degree {} on a {} x {} grid",
                self.lmax,
                self.grid.nlat(),
                self.grid.nlon
            ),
            self.synthesis_bytes_many(outputs_per_field * nf, nf),
        )?;
        coeffs.iter().map(|c| self.prepared(c)).collect()
    }

    /// One input as `geodesy` coefficients of the plan's degree, borrowed when it already is.
    fn prepared<'c>(&self, coeffs: &'c Coefficients) -> Result<Cow<'c, Coefficients>> {
        if coeffs.normalization == Normalization::Geodesy
            && !coeffs.condon_shortley
            && coeffs.lmax() == self.lmax
        {
            return Ok(Cow::Borrowed(coeffs));
        }
        let g = coeffs.to_geodesy()?;
        Ok(Cow::Owned(if g.lmax() == self.lmax {
            g
        } else {
            g.resized(self.lmax)
        }))
    }

    /// The Legendre stage of a synthesis of every set in `g`: values of set k into `out[k]`,
    /// or for gradients ∂/∂θ into `out[2k]` and (1/sin θ) ∂/∂λ into `out[2k + 1]`.
    fn legendre_synthesis(
        &self,
        g: &[Cow<'_, Coefficients>],
        orders: Range<usize>,
        grad: bool,
        out: Vec<&mut Array2<f64>>,
    ) {
        let interior: Vec<Lane>;
        let lanes: &[Lane] = if grad && self.lanes.iter().any(|l| l.u == 0.0) {
            interior = self.lanes.iter().copied().filter(|l| l.u > 0.0).collect();
            &interior
        } else {
            &self.lanes
        };
        // the table describes the plan's own lanes only
        let starts = self
            .column_starts
            .as_ref()
            .filter(|_| lanes.len() == self.lanes.len());
        let columns: Vec<(Vec<f64>, Vec<f64>)> = g
            .par_iter()
            .map(|c| {
                (
                    order_major(c.c_packed(), self.lmax),
                    order_major(c.s_packed(), self.lmax),
                )
            })
            .collect();
        let fields: Vec<(&[f64], &[f64])> = columns
            .iter()
            .map(|(c, s)| (c.as_slice(), s.as_slice()))
            .collect();
        let job = SynthJob {
            lmax: self.lmax,
            lanes,
            sectoral_factors: &self.sectoral_factors,
            fields: &fields,
            rotation: &self.rotation,
            starts,
        };
        let lmax = self.lmax;
        let (nlat, nlon) = self.grid.shape();
        let orders = orders.start.min(lmax + 1)..orders.end.min(lmax + 1);
        assert_eq!(
            out.len(),
            g.len() * if grad { 2 } else { 1 },
            "output grids"
        );
        let mut grids = FourierColumns::new(
            out.into_iter()
                .map(|a| a.as_slice_mut().expect("standard layout"))
                .collect(),
            nlat,
            nlon,
            lmax,
        );
        let kernels = self.kernels;
        let nf = g.len();
        grids.for_each_order(
            orders,
            || OrderScratch::new(lmax, nf),
            |sc, columns| kernels.synth(grad, &job, sc, columns),
        );
    }

    /// Gradient Fourier columns of rows at the poles: only order 1 survives, with
    /// lim P̄_l1/sin θ = ±dP̄_l1/dθ (`legendre::pole_limit`).
    fn pole_gradient_rows(
        &self,
        g: &Coefficients,
        d_theta: &mut Array2<f64>,
        d_lambda: &mut Array2<f64>,
    ) {
        if self.lmax == 0 {
            return;
        }
        for (row, &theta) in self.grid.colatitude_rad.iter().enumerate() {
            let Some(pole) = Pole::at(theta) else {
                continue;
            };
            let (mut a_d, mut b_d, mut a_p, mut b_p) = (0.0, 0.0, 0.0, 0.0);
            for l in 1..=self.lmax {
                let p = order_one_over_sin_at_pole(l, pole);
                // dP̄_l1/dθ at the pole: the limit itself at the north pole; at the south pole
                // it is its negative (θ runs towards the pole there)
                let d = match pole {
                    Pole::North => p,
                    Pole::South => -p,
                };
                a_d += g.c(l, 1) * d;
                b_d += g.s(l, 1) * d;
                a_p += g.c(l, 1) * p;
                b_p += g.s(l, 1) * p;
            }
            let put = |arr: &mut Array2<f64>, a: f64, b: f64| {
                arr.row_mut(row).fill(0.0);
                let x = Complex64::new(0.5 * a, -0.5 * b) * self.rotation[1];
                arr[[row, 1]] = x.re;
                arr[[row, 2]] = x.im;
            };
            put(d_theta, a_d, b_d);
            // (1/sin θ) ∂/∂λ (a cos λ + b sin λ) P/u → A' = B·(P/u), B' = −A·(P/u)
            put(d_lambda, b_p, -a_p);
        }
    }

    /// Turns every row's packed half-spectrum [Re X_0, Re X_1, Im X_1, ...] into its values.
    fn inverse_rings(&self, grid: &mut Array2<f64>) {
        let nlon = self.grid.nlon;
        let lmax = self.lmax;
        let data = grid.as_slice_mut().expect("standard layout");
        data.par_chunks_mut(nlon).for_each_init(
            || RingScratch::new(&*self.forward, &*self.inverse),
            |rs, row| {
                rs.spectrum
                    .iter_mut()
                    .for_each(|z| *z = Complex64::new(0.0, 0.0));
                rs.spectrum[0] = Complex64::new(row[0], 0.0);
                for m in 1..=lmax {
                    rs.spectrum[m] = Complex64::new(row[2 * m - 1], row[2 * m]);
                }
                self.inverse
                    .process_with_scratch(&mut rs.spectrum, &mut rs.real, &mut rs.fft_scratch)
                    .expect("buffer sizes come from the same plan");
                row.copy_from_slice(&rs.real);
            },
        );
    }
}

/// Per-thread buffers of the Fourier stage.
struct RingScratch {
    real: Vec<f64>,
    spectrum: Vec<Complex64>,
    fft_scratch: Vec<Complex64>,
}

impl RingScratch {
    fn new(forward: &dyn RealToComplex<f64>, inverse: &dyn ComplexToReal<f64>) -> Self {
        RingScratch {
            real: forward.make_input_vec(),
            spectrum: forward.make_output_vec(),
            fft_scratch: vec![
                Complex64::new(0.0, 0.0);
                forward.get_scratch_len().max(inverse.get_scratch_len())
            ],
        }
    }
}

/// Whether every row of `field` is one contiguous run of memory (any row stride, either sign).
fn rows_are_contiguous(field: &ArrayView2<'_, f64>) -> bool {
    field.ncols() <= 1 || field.strides()[1] == 1
}

/// The rows of a field whose rows are contiguous ([`rows_are_contiguous`]) as slices.
fn ring_rows<'a>(field: ArrayView2<'a, f64>) -> Vec<&'a [f64]> {
    (0..field.nrows())
        .map(|i| {
            field
                .index_axis_move(ndarray::Axis(0), i)
                .to_slice()
                .expect("contiguous rows")
        })
        .collect()
}

/// Ring spectra of a chunk (row after row, `stride` = L + 1 entries each) rearranged
/// order-major (the rows' entries of m = 0, then of m = 1, ...): a transpose in tiles of
/// `ORDERS_PER_TILE` orders, each tile reading a short contiguous run of every row, in parallel.
fn rings_to_order_major(rings: &[Complex64], by_order: &mut [Complex64], stride: usize) {
    const ORDERS_PER_TILE: usize = 8;
    let rows = rings.len() / stride;
    by_order
        .par_chunks_mut(ORDERS_PER_TILE * rows)
        .enumerate()
        .for_each(|(tile, dst)| {
            let m0 = tile * ORDERS_PER_TILE;
            let orders = dst.len() / rows;
            for (r, ring) in rings.chunks_exact(stride).enumerate() {
                for (dm, h) in ring[m0..m0 + orders].iter().enumerate() {
                    dst[dm * rows + r] = *h;
                }
            }
        });
}

/// Bytes of the column-start table a plan to `lmax` with `lanes` lanes on an nlat × nlon grid
/// keeps, or `None` when it keeps none (`kernel::column_starts`: the table's bound must not
/// exceed one field of the grid, or 64 MiB).
pub fn column_start_table_bytes(
    lmax: usize,
    lanes: usize,
    (nlat, nlon): (usize, usize),
) -> Option<u64> {
    let grid_bytes = (nlat as u64).saturating_mul(nlon as u64).saturating_mul(8);
    ColumnStarts::planned_bytes(lmax, lanes, grid_bytes)
}

/// Bytes [`TransformPlan::new`] checks before planning: one field of nlat × nlon doubles, one
/// coefficient set to `lmax` and the FFT buffers of one ring.
pub fn plan_memory_bytes(lmax: usize, nlat: usize, nlon: usize) -> u64 {
    let (nlat, nlon) = (nlat as f64, nlon as f64);
    let l1 = lmax as f64 + 1.0;
    let estimate = nlat * nlon * 8.0 + l1 * (l1 + 1.0) * 8.0 + nlon * 48.0;
    estimate.min(u64::MAX as f64) as u64
}

/// Bytes a synthesis to `lmax` on an nlat × nlon grid needs beyond its input, for `outputs`
/// grids ([`TransformPlan::synthesis_bytes`] of such a plan).
pub fn synthesis_memory_bytes(lmax: usize, nlat: usize, nlon: usize, outputs: usize) -> u64 {
    synthesis_memory_bytes_many(lmax, nlat, nlon, outputs, 1)
}

/// As [`synthesis_memory_bytes`] for `fields` coefficient sets at once (`outputs` grids in
/// all).
pub fn synthesis_memory_bytes_many(
    lmax: usize,
    nlat: usize,
    nlon: usize,
    outputs: usize,
    fields: usize,
) -> u64 {
    let threads = rayon::current_num_threads() as u64;
    // the converted input and its order-major copy, per field; the staged Fourier entries
    (outputs * nlat * nlon * 8) as u64
        + (fields * 4 * packed_len(lmax) * 8) as u64
        + staging_bytes(outputs, nlat)
        + threads * (OrderScratch::bytes(lmax, fields) + (nlon as u64) * 48)
}

/// Bytes an analysis to `lmax` needs beyond its input, for a grid of `nlon` longitudes whose
/// rings form `lanes` lanes (nlat, or ⌈nlat/2⌉ for a grid symmetric about the equator)
/// ([`TransformPlan::analysis_bytes`] of such a plan).
pub fn analysis_memory_bytes(lmax: usize, nlon: usize, lanes: usize) -> u64 {
    analysis_memory_bytes_many(lmax, nlon, lanes, 1)
}

/// As [`analysis_memory_bytes`] for `fields` fields at once.
pub fn analysis_memory_bytes_many(lmax: usize, nlon: usize, lanes: usize, fields: usize) -> u64 {
    let threads = rayon::current_num_threads() as u64;
    let fields64 = fields as u64;
    let chunk_lanes = analysis_chunk_lanes(lmax, lanes, fields);
    // per field: the packed result and the order-major sums; the chunk's ring spectra twice
    fields64 * (4 * packed_len(lmax) * 8) as u64
        + 2 * fields64 * chunk_lanes as u64 * 2 * (lmax as u64 + 1) * 16
        + threads
            * (OrderScratch::bytes(lmax, fields)
                + analysis_block_bytes(chunk_lanes, fields)
                + (nlon as u64) * 48)
}

/// Lanes whose ring spectra an analysis of `fields` fields holds at once (twice: as the FFTs
/// leave them and order-major): as many as fit in `ANALYSIS_CHUNK_BYTES` (one field) or
/// `MANY_FIELD_CHUNK_BYTES` (several) for all fields together but at least `MIN_CHUNK_LANES`,
/// a multiple of 32, no more than the grid has.
fn analysis_chunk_lanes(lmax: usize, lanes: usize, fields: usize) -> usize {
    let per_lane = 2 * 2 * (lmax + 1) * 16 * fields.max(1);
    let w = 32; // a multiple of every path's lane count
    let budget = if fields > 1 {
        MANY_FIELD_CHUNK_BYTES
    } else {
        ANALYSIS_CHUNK_BYTES
    };
    let chunk = (budget / per_lane).max(MIN_CHUNK_LANES) / w * w;
    chunk.min(lanes.div_ceil(w) * w)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::GaussGrid;

    /// A grid stored south to north, handed over as the row-reversed view, must be analysed
    /// in place to the bits of its engine-order copy; a transposed view (rows not contiguous)
    /// is copied and agrees too; a non-finite value makes `analyse_view_if_finite` decline.
    #[test]
    fn views_are_analysed_to_the_bits_of_their_engine_order_copy() {
        use ndarray::s;
        let grid = GaussGrid::new(40);
        let plan = TransformPlan::new(40, &grid).unwrap();
        let (nlat, nlon) = grid.shape();
        let field = Array2::from_shape_fn((nlat, nlon), |(i, j)| ((7 * i + 3 * j) as f64).sin());
        let want = plan.analyse(&field).unwrap();
        let same = |got: &Coefficients| {
            got.c_packed() == want.c_packed() && got.s_packed() == want.s_packed()
        };
        let south_to_north = Array2::from_shape_fn((nlat, nlon), |(i, j)| field[(nlat - 1 - i, j)]);
        let reversed = south_to_north.slice(s![..;-1, ..]);
        assert!(reversed.strides()[0] < 0);
        assert!(same(&plan.analyse_view(reversed).unwrap()));
        assert!(same(
            &plan.analyse_view_if_finite(reversed).unwrap().unwrap()
        ));
        let transposed = field.t().to_owned();
        assert!(same(&plan.analyse_view(transposed.t()).unwrap()));
        let mut bad = field.clone();
        bad[(3, 4)] = f64::NAN;
        assert!(plan.analyse_view_if_finite(bad.view()).unwrap().is_none());
        assert!(plan.analyse_view(bad.view()).is_err());
    }

    /// The spectra buffers a plan keeps between analyses (`sht::kept_buffers`) must not
    /// carry anything from one field into the next: a second field analysed after a first
    /// equals the same field on a fresh plan, bit for bit.
    #[test]
    fn kept_spectra_buffers_carry_nothing_between_analyses() {
        let grid = GaussGrid::new(33);
        let reused = TransformPlan::new(33, &grid).unwrap();
        let (nlat, nlon) = grid.shape();
        let first = Array2::from_shape_fn((nlat, nlon), |(i, j)| 1e3 * ((i + 2 * j) as f64).cos());
        let second = Array2::from_shape_fn((nlat, nlon), |(i, j)| ((3 * i + j) as f64).sin());
        reused.analyse(&first).unwrap();
        let again = reused.analyse(&second).unwrap();
        let fresh = TransformPlan::new(33, &grid)
            .unwrap()
            .analyse(&second)
            .unwrap();
        assert_eq!(again.c_packed(), fresh.c_packed());
        assert_eq!(again.s_packed(), fresh.s_packed());
        assert!(reused.kept_spectra.bytes() > 0, "the buffers were kept");
    }

    #[test]
    fn the_finite_check_finds_every_kind_of_non_finite_value() {
        let grid = GaussGrid::new(20);
        let plan = TransformPlan::new(20, &grid).unwrap();
        let (nlat, nlon) = grid.shape();
        let clean = Array2::from_shape_fn((nlat, nlon), |(i, j)| (i * nlon + j) as f64 * 1e300);
        assert!(all_finite_field(clean.view()));
        assert!(all_finite_field(clean.t()), "any layout");
        for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
            for (row, col) in [(0, 0), (nlat - 1, nlon - 1), (7, 13)] {
                let mut field = clean.clone();
                field[(row, col)] = bad;
                assert!(!all_finite_field(field.view()));
                let err = plan.analyse(&field).unwrap_err().to_string();
                assert!(
                    err.contains(&format!("row {row}, column {col} is not finite")),
                    "{err}"
                );
            }
        }
    }
}
