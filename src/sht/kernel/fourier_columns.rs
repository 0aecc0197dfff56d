//! Where a synthesis puts the Fourier entries of each order: staged order-major, then written
//! into the rings' rows a group of orders at a time.
//!
//! Order m of a synthesis yields one complex entry per ring and output grid, which belongs in
//! columns 2m − 1 and 2m of that ring's row (the packed half-spectrum the inverse FFT reads,
//! `plan::TransformPlan::synthesise`). Written straight into the row-major grids, every entry
//! was another cache line (about 6 % of the synthesis kernel at L = 1023 in perf profiles, and
//! once more per field of a many-field synthesis). Here a group of consecutive orders runs in
//! parallel, each order writing its entries contiguously into its own slice of a staging buffer
//! (order-major: grid after grid, ring after ring); then each ring's row receives the group's
//! entries as one contiguous run. Safe code throughout: the staging slices are handed out by
//! `par_chunks_mut` and the rows by the same, so no two tasks share an element.
//!
//! Groups hold up to [`STAGING_BYTES`] of entries and at least [`MIN_GROUP`] orders; orders
//! within a group cost about the same (adjacent m), so the wait at the end of each group is at
//! most about one order's work per thread.

use std::ops::Range;

use rayon::prelude::*;
use realfft::num_complex::Complex64;

use super::per_thread::PerThread;

/// Bytes of staged entries per group of orders.
pub const STAGING_BYTES: usize = 4 << 20;
/// Fewest orders per group (more than a few per thread, whatever the grid).
const MIN_GROUP: usize = 16;
/// Most orders per group (beyond this a larger buffer buys nothing).
const MAX_GROUP: usize = 256;

/// Orders per group for `grids` output grids of `nlat` rings.
pub fn orders_per_group(grids: usize, nlat: usize) -> usize {
    let per_order = grids.max(1) * nlat.max(1) * std::mem::size_of::<Complex64>();
    (STAGING_BYTES / per_order).clamp(MIN_GROUP, MAX_GROUP)
}

/// Bytes of the staging buffer of a synthesis into `grids` grids of `nlat` rings.
pub fn staging_bytes(grids: usize, nlat: usize) -> u64 {
    (orders_per_group(grids, nlat) * grids.max(1) * nlat * std::mem::size_of::<Complex64>()) as u64
}

/// The output grids of a synthesis (row-major nlat × nlon, rows holding packed half-spectra
/// [Re X_0, Re X_1, Im X_1, Re X_2, Im X_2, ...]), filled order by order.
pub(crate) struct FourierColumns<'g> {
    grids: Vec<&'g mut [f64]>,
    nlat: usize,
    nlon: usize,
}

impl<'g> FourierColumns<'g> {
    /// Takes the grids (each nlat · nlon long) for a synthesis to degree `lmax`. Panics on a
    /// length mismatch or when nlon < 2·lmax + 1 (the plan refuses those earlier).
    pub(crate) fn new(grids: Vec<&'g mut [f64]>, nlat: usize, nlon: usize, lmax: usize) -> Self {
        assert!(2 * lmax < nlon, "nlon {nlon} cannot hold degree {lmax}");
        for g in &grids {
            assert_eq!(g.len(), nlat * nlon, "grid size");
        }
        FourierColumns { grids, nlat, nlon }
    }

    /// Runs `body` once for every order in `orders`, in parallel, one task per order, each with
    /// a writer to that order's entries and a per-thread state from `init`; every entry an order
    /// does not write is zero. The entries of orders outside `orders` are left as they are.
    pub(crate) fn for_each_order<S: Send, I, F>(&mut self, orders: Range<usize>, init: I, body: F)
    where
        I: Fn() -> S + Sync + Send,
        F: Fn(&mut S, &mut OrderFourierColumns) + Sync + Send,
    {
        let group = orders_per_group(self.grids.len(), self.nlat);
        self.for_each_order_in_groups(orders, group, init, body);
    }

    /// [`FourierColumns::for_each_order`] with `group` orders per group.
    fn for_each_order_in_groups<S: Send, I, F>(
        &mut self,
        orders: Range<usize>,
        group: usize,
        init: I,
        body: F,
    ) where
        I: Fn() -> S + Sync + Send,
        F: Fn(&mut S, &mut OrderFourierColumns) + Sync + Send,
    {
        let (nlat, nlon) = (self.nlat, self.nlon);
        let per_order = self.grids.len() * nlat;
        if per_order == 0 {
            // no grid (or no ring) to fill: nothing an order computes would be kept
            return;
        }
        let group = group.max(1);
        let mut staging = vec![Complex64::new(0.0, 0.0); group.min(orders.len()) * per_order];
        let scratch = PerThread::for_current_pool();
        let mut m0 = orders.start;
        while m0 < orders.end {
            let m1 = (m0 + group).min(orders.end);
            let staged = &mut staging[..(m1 - m0) * per_order];
            staged
                .par_chunks_mut(per_order)
                .with_max_len(1)
                .enumerate()
                .for_each(|(dm, entries)| {
                    // each order clears its own slice, in parallel and just before it writes
                    // there (one memset of the whole buffer per group was about 3 % of an
                    // eight-field synthesis at L = 1023)
                    entries.fill(Complex64::new(0.0, 0.0));
                    let mut out = OrderFourierColumns {
                        m: m0 + dm,
                        nlat,
                        entries,
                    };
                    scratch.with(&init, |state| body(state, &mut out));
                });
            let staged = &staging[..(m1 - m0) * per_order];
            for (k, grid) in self.grids.iter_mut().enumerate() {
                grid.par_chunks_mut(nlon)
                    .enumerate()
                    .for_each(|(row, values)| {
                        for m in m0..m1 {
                            let x = staged[(m - m0) * per_order + k * nlat + row];
                            if m == 0 {
                                values[0] = x.re;
                            } else {
                                values[2 * m - 1] = x.re;
                                values[2 * m] = x.im;
                            }
                        }
                    });
            }
            m0 = m1;
        }
    }
}

/// Writes the Fourier entries of one order m (its slice of the staging buffer).
pub(crate) struct OrderFourierColumns<'a> {
    m: usize,
    nlat: usize,
    entries: &'a mut [Complex64],
}

impl OrderFourierColumns<'_> {
    pub(crate) fn order(&self) -> usize {
        self.m
    }

    /// Sets the entry of this order on `row` of grid `grid` to `x` (only its real part is
    /// used for m = 0).
    #[inline(always)]
    pub(crate) fn put(&mut self, grid: usize, row: usize, x: Complex64) {
        assert!(row < self.nlat, "row {row} outside the grid");
        self.entries[grid * self.nlat + row] = x;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_staging_stays_within_the_budget_estimate() {
        for (grids, nlat) in [(1, 16), (1, 1024), (16, 10_801), (1 << 20, 1 << 10)] {
            let bound = crate::sht::budget::synthesis_staging_bytes(grids as f64, nlat as f64);
            assert!(
                staging_bytes(grids, nlat) as f64 <= bound,
                "{grids} x {nlat}"
            );
        }
    }

    #[test]
    fn every_order_writes_its_own_columns() {
        let (nlat, nlon, lmax) = (3, 9, 4);
        let mut a = vec![f64::NAN; nlat * nlon];
        let mut b = vec![f64::NAN; nlat * nlon];
        let mut grids = FourierColumns::new(vec![&mut a, &mut b], nlat, nlon, lmax);
        grids.for_each_order(
            0..lmax + 1,
            || (),
            |_, out| {
                let m = out.order() as f64;
                for row in 0..nlat {
                    out.put(0, row, Complex64::new(m, -m));
                    if row != 1 {
                        out.put(1, row, Complex64::new(10.0 + m, 0.5));
                    }
                }
            },
        );
        let want_a = [0.0, 1.0, -1.0, 2.0, -2.0, 3.0, -3.0, 4.0, -4.0];
        for row in 0..nlat {
            assert_eq!(&a[row * nlon..(row + 1) * nlon], &want_a);
        }
        assert_eq!(b[0], 10.0);
        assert_eq!((b[7], b[8]), (14.0, 0.5));
        // entries an order leaves unwritten are zero
        assert_eq!(&b[nlon..nlon + 9], &[0.0; 9]);
    }

    #[test]
    fn orders_outside_the_range_are_left_alone_and_groups_split_long_ranges() {
        // many grids of many rings stage few orders at a time, but never fewer than MIN_GROUP
        assert_eq!(orders_per_group(1 << 20, 1 << 10), MIN_GROUP);
        assert_eq!(orders_per_group(1, 16), MAX_GROUP);
        // 38 orders in groups of 16: three groups, the last one short
        let (nlat, nlon, lmax) = (2, 81, 40);
        let mut g = vec![7.0; nlat * nlon];
        let mut cols = FourierColumns::new(vec![&mut g], nlat, nlon, lmax);
        cols.for_each_order_in_groups(
            3..lmax + 1,
            16,
            || (),
            |_, out| {
                let m = out.order();
                out.put(0, 0, Complex64::new(m as f64, 0.25));
            },
        );
        assert_eq!(&g[..5], &[7.0; 5], "orders 0..3 untouched");
        for m in 3..=lmax {
            assert_eq!((g[2 * m - 1], g[2 * m]), (m as f64, 0.25));
            assert_eq!((g[nlon + 2 * m - 1], g[nlon + 2 * m]), (0.0, 0.0));
        }
    }
}
