//! The column starts of every (order, block of lanes) of a plan, found once when the plan is
//! built and read by every transform that runs on it.
//!
//! Where the column P̄_lm (l = m..L) of a lane first becomes representable depends only on the
//! degree, the lane's colatitude and the blocking of lanes, never on the data. Finding it takes
//! the extended-exponent sectoral value P̄_mm = c_m sin^m θ and a recursion through the degrees
//! where the column lies below 2^-1000 (`order::block_events`, after Fukushima 2012, J. Geodesy
//! 86:271–285). Repeated in every transform this cost about a third of a degree-255 synthesis
//! and a fifth of a degree-2047 round trip (perf profiles of `kugel bench`, December 2026).
//!
//! The table holds exactly the events `block_events` yields, in the same order, so a transform
//! reading it computes the same doubles as one finding its starts on the fly (tested in
//! `tests/sht/kernel_accuracy.rs`, which runs both).
//!
//! Size: at most one event (24 bytes) per (order, lane); about 0.7 of that bound is used on a
//! Gauss grid, since a column of order m > L sin θ never becomes representable. A plan keeps
//! the table only when the bound is no larger than one field of its grid (or 64 MiB) and fits
//! in memory beside it ([`ColumnStarts::planned_bytes`]); otherwise transforms find their
//! starts as before.

use rayon::prelude::*;

use super::block::Event;
use super::lanes::Lane;
use super::order::{block_events, OrderScratch};

/// Tables up to this size are kept whatever the grid's size.
const ALWAYS_KEPT_BYTES: u64 = 64 << 20;

/// The events of one order, block after block.
#[derive(Debug, Clone, Default)]
struct OrderStarts {
    events: Vec<Event>,
    /// End of block b's events in `events`; blocks from `block_end.len()` on have none (as
    /// lanes run from the equator to the poles, every block after the first empty one is
    /// empty too, and the kernels stop there).
    block_end: Vec<u32>,
}

/// The column starts of every order and block of one lane layout.
#[derive(Debug, Clone)]
pub(crate) struct ColumnStarts {
    lanes_per_block: usize,
    lanes: usize,
    orders: Vec<OrderStarts>,
}

impl ColumnStarts {
    /// The largest table for degree `lmax` over `lanes` lanes: one event per (order, lane) and
    /// one block end per (order, block).
    pub(crate) fn bound_bytes(lmax: usize, lanes: usize) -> u64 {
        let orders = lmax as u64 + 1;
        let lanes = lanes as u64;
        orders
            .saturating_mul(lanes)
            .saturating_mul(std::mem::size_of::<Event>() as u64)
            .saturating_add(orders.saturating_mul(lanes.div_ceil(8)).saturating_mul(4))
    }

    /// Bytes a plan to degree `lmax` with `lanes` lanes on a grid of `grid_bytes` bytes sets
    /// aside for its table, or `None` when it does without one (the bound exceeds both one
    /// field of the grid and [`ALWAYS_KEPT_BYTES`]).
    pub(crate) fn planned_bytes(lmax: usize, lanes: usize, grid_bytes: u64) -> Option<u64> {
        let bound = Self::bound_bytes(lmax, lanes);
        (bound <= grid_bytes.max(ALWAYS_KEPT_BYTES)).then_some(bound)
    }

    /// Finds the starts of every order 0..=lmax for `lanes` taken in blocks of
    /// `lanes_per_block` (8, 16 or 32: the recursion width of a kernel path), orders in
    /// parallel on the current rayon pool.
    pub(crate) fn build(
        lmax: usize,
        lanes: &[Lane],
        lanes_per_block: usize,
        sectoral_factors: &[f64],
    ) -> ColumnStarts {
        let orders = match lanes_per_block {
            8 => Self::orders::<8>(lmax, lanes, sectoral_factors),
            16 => Self::orders::<16>(lmax, lanes, sectoral_factors),
            32 => Self::orders::<32>(lmax, lanes, sectoral_factors),
            w => panic!("no kernel runs blocks of {w} lanes"),
        };
        ColumnStarts {
            lanes_per_block,
            lanes: lanes.len(),
            orders,
        }
    }

    fn orders<const W: usize>(
        lmax: usize,
        lanes: &[Lane],
        sectoral_factors: &[f64],
    ) -> Vec<OrderStarts> {
        (0..=lmax)
            .into_par_iter()
            .map_init(
                || OrderScratch::new(lmax, 1),
                |sc, m| {
                    sc.fill_recursion(m, lmax);
                    let mut out = OrderStarts::default();
                    for block in lanes.chunks(W) {
                        let events = block_events::<W>(m, lmax, sectoral_factors[m], block, sc);
                        if events.is_empty() {
                            break;
                        }
                        out.events.extend_from_slice(events);
                        out.block_end.push(
                            u32::try_from(out.events.len())
                                .expect("fewer than 2^32 lanes per order"),
                        );
                    }
                    out.events.shrink_to_fit();
                    out.block_end.shrink_to_fit();
                    out
                },
            )
            .collect()
    }

    /// Lanes per block the table was built for.
    pub(crate) fn lanes_per_block(&self) -> usize {
        self.lanes_per_block
    }

    /// Whether the lanes `first_lane..first_lane + lanes` of the layout the table was built
    /// for fall into whole blocks of it (the last block of the layout may be partial).
    pub(crate) fn covers(&self, first_lane: usize, lanes: usize) -> bool {
        let (w, end) = (self.lanes_per_block, first_lane + lanes);
        first_lane % w == 0 && (end == self.lanes || (end % w == 0 && end <= self.lanes))
    }

    /// The events of block `block` of order `m` (empty when none of its lanes starts).
    #[inline]
    pub(crate) fn block(&self, m: usize, block: usize) -> &[Event] {
        let o = &self.orders[m];
        match o.block_end.get(block) {
            None => &[],
            Some(&end) => {
                let start = if block == 0 {
                    0
                } else {
                    o.block_end[block - 1]
                };
                &o.events[start as usize..end as usize]
            }
        }
    }

    /// Bytes the table holds.
    pub(crate) fn bytes(&self) -> u64 {
        self.orders
            .iter()
            .map(|o| {
                (o.events.capacity() * std::mem::size_of::<Event>() + o.block_end.capacity() * 4)
                    as u64
            })
            .sum::<u64>()
            + (self.orders.capacity() * std::mem::size_of::<OrderStarts>()) as u64
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::grid::Grid;
    use crate::sht::kernel::build_lanes;
    use crate::sht::legendre::recursion::sectoral_factors;
    use crate::sht::GaussGrid;

    /// The table must hold, block by block, what `block_events` finds on the fly.
    #[test]
    fn the_table_holds_the_starts_found_on_the_fly() {
        let lmax = 700;
        let grid: Grid = GaussGrid::new(lmax);
        let lanes = build_lanes(&grid, true);
        let cm = sectoral_factors(lmax);
        let table = ColumnStarts::build(lmax, &lanes, 16, &cm);
        let mut sc = OrderScratch::new(lmax, 1);
        let (mut blocks, mut late) = (0, 0);
        for m in (0..=lmax).step_by(37).chain([lmax]) {
            sc.fill_recursion(m, lmax);
            for (b, block) in lanes.chunks(16).enumerate() {
                let want = block_events::<16>(m, lmax, cm[m], block, &mut sc).to_vec();
                let got = table.block(m, b);
                assert_eq!(want.len(), got.len(), "m {m} block {b}");
                for (w, g) in want.iter().zip(got) {
                    assert_eq!(
                        (w.l, w.lane, w.p_prev.to_bits(), w.p.to_bits()),
                        (g.l, g.lane, g.p_prev.to_bits(), g.p.to_bits()),
                        "m {m} block {b}"
                    );
                    late += usize::from(w.l as usize > m + 1);
                }
                blocks += usize::from(!want.is_empty());
                if want.is_empty() {
                    break;
                }
            }
        }
        // high orders start late near the poles: the test must cover those
        assert!(
            blocks > 100 && late > 50,
            "{blocks} blocks, {late} late starts"
        );
        assert!(table.bytes() <= ColumnStarts::bound_bytes(lmax, lanes.len()));
    }

    #[test]
    fn large_tables_are_planned_only_within_a_field_of_the_grid() {
        // degree 10,800 on its Gauss grid: 10,801 × 21,600 doubles, 5,401 lanes
        let grid_bytes = 10_801u64 * 21_600 * 8;
        let planned = ColumnStarts::planned_bytes(10_800, 5_401, grid_bytes);
        assert_eq!(planned, Some(ColumnStarts::bound_bytes(10_800, 5_401)));
        // a grid of few rings holds far less than one event per (order, lane) of a high degree
        assert_eq!(ColumnStarts::planned_bytes(100_000, 50_001, 1 << 20), None);
        // small tables are always kept
        assert!(ColumnStarts::planned_bytes(255, 128, 0).is_some());
    }
}
