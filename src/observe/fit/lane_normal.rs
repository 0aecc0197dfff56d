//! The passes of the iterative solver over scalar observations (plain values, gravity
//! quantities), [`LANES`] observations at a time through the lane kernels of [`super::lanes`]:
//!
//! - N p = Σ_i w_i a_i (a_iᵀ p) ([`LaneNormalOperator::normal_times`]): per block the columns
//!   k_l P̄_lm of every lane, the synthesis a_iᵀp of every lane, then the adjoint accumulation
//!   of w_i (a_iᵀp) a_i over the block;
//! - b = Aᵀ W y with yᵀ W y ([`LaneNormalOperator::right_hand_side`]): the adjoint alone, with
//!   y the observation less its normal-field part (itself a lane synthesis of the normal
//!   coefficients, where the quantity is reduced: see
//!   [`RowBuilder::normal_reduction`](super::functional::RowBuilder::normal_reduction));
//! - model values A x (plus the normal-field part) at every observation
//!   ([`LaneNormalOperator::predict`]), for the residuals.
//!
//! Each pass runs over [`OPERATOR_CHUNKS`] fixed chunks of observations, with one set of
//! lane sums per chunk, added in chunk order: the result does not depend on the number of
//! threads. The references these passes are tested against are the per-point operator of
//! [`super::scalar_normal`], the pass over full rows of [`super::iterative::RowSource`] and
//! [`RowBuilder::predict`].

use rayon::prelude::*;

use super::functional::RowBuilder;
use super::iterative::{RightHandSide, OPERATOR_CHUNKS};
use super::lanes::{LaneFactors, LaneKernels, LaneSums, LaneTable, ObservationBlock, LANES};
use super::observation::ObservationSet;
use crate::error::Result;
use crate::field::Quantity;
use crate::sht::KernelPath;

/// The passes over scalar observations with weights `weights` (0 leaves an observation out).
pub struct LaneNormalOperator<'a> {
    set: &'a ObservationSet,
    builder: &'a RowBuilder,
    weights: &'a [f64],
    kernels: LaneKernels,
    table: LaneTable,
    /// The split k_l = g_l s^{e+l+1} of each quantity in the set, where it has one.
    profiles: Vec<(Quantity, DegreeProfile)>,
}

/// The split (g_l, e) of a quantity's degree factors, where it has one.
type DegreeProfile = Option<(Vec<f64>, i32)>;

impl<'a> LaneNormalOperator<'a> {
    /// The operator on the widest instruction-set path this CPU has.
    pub fn new(
        set: &'a ObservationSet,
        builder: &'a RowBuilder,
        weights: &'a [f64],
    ) -> LaneNormalOperator<'a> {
        Self::with_kernels(set, builder, weights, LaneKernels::detect())
    }

    /// The operator on a given path (refused when this CPU lacks it), for testing each
    /// compiled copy against the reference.
    pub fn with_path(
        set: &'a ObservationSet,
        builder: &'a RowBuilder,
        weights: &'a [f64],
        path: KernelPath,
    ) -> Result<LaneNormalOperator<'a>> {
        Ok(Self::with_kernels(
            set,
            builder,
            weights,
            LaneKernels::for_path(path)?,
        ))
    }

    fn with_kernels(
        set: &'a ObservationSet,
        builder: &'a RowBuilder,
        weights: &'a [f64],
        kernels: LaneKernels,
    ) -> LaneNormalOperator<'a> {
        assert!(
            builder.rows_are_scalar(),
            "the lane passes take scalar rows only"
        );
        assert_eq!(weights.len(), set.len());
        let mut profiles: Vec<(Quantity, DegreeProfile)> = Vec::new();
        for o in &set.observations {
            if !profiles.iter().any(|(q, _)| *q == o.quantity) {
                profiles.push((o.quantity, builder.scalar_degree_profile(o.quantity)));
            }
        }
        LaneNormalOperator {
            set,
            builder,
            weights,
            kernels,
            table: LaneTable::new(builder.layout.internal.lmax),
            profiles,
        }
    }

    /// Bytes a pass needs per worker thread besides its inputs.
    pub fn bytes_per_thread(lmax: usize) -> usize {
        LaneSums::bytes_with_block(lmax)
    }

    /// Puts observations `first..first + count` (count ≤ LANES) into `block` and fills its
    /// columns; lanes past `count` are empty.
    fn load(&self, block: &mut ObservationBlock, first: usize, count: usize) -> Result<()> {
        for g in 0..LANES {
            if g < count {
                let o = &self.set.observations[first + g];
                let (t, u, lambda) = RowBuilder::angles_of(o);
                let radius_m = o.position.radius_m;
                let profile = self
                    .profiles
                    .iter()
                    .find(|(q, _)| *q == o.quantity)
                    .and_then(|(_, p)| p.as_ref());
                match profile {
                    Some((profile, e)) if radius_m.is_finite() && radius_m > 0.0 => {
                        let s = self.builder.space.reference_radius_m() / radius_m;
                        let k = LaneFactors::Profile {
                            g: profile,
                            s,
                            e: *e,
                        };
                        block.set_lane(g, t, u, lambda, k);
                    }
                    // no split, or a radius the definition refuses (with its message)
                    _ => {
                        let k = self.builder.scalar_degree_factors(o)?;
                        block.set_lane(g, t, u, lambda, LaneFactors::Values(&k));
                    }
                }
            } else {
                block.set_lane(g, 0.0, 1.0, 0.0, LaneFactors::Empty);
            }
        }
        self.kernels.fill_columns(&self.table, block);
        Ok(())
    }

    /// The normal-field part of the observations of `block` (first..first + count): the
    /// synthesis of the normal coefficients where the quantity is reduced, 0 elsewhere.
    fn normal_part(&self, block: &ObservationBlock, first: usize, count: usize) -> [f64; LANES] {
        let mut part = [0.0; LANES];
        let reduced = |g: usize| {
            self.builder
                .normal_reduction(self.set.observations[first + g].quantity)
        };
        if let Some(normal) = (0..count).find_map(reduced) {
            let internal = &self.builder.layout.internal;
            let values = self.kernels.synthesize(block, internal, normal);
            for g in (0..count).filter(|&g| reduced(g).is_some()) {
                part[g] = values[g];
            }
        }
        part
    }

    /// Runs `block_pass(block, first, count, sums)` over every block of every fixed chunk and
    /// returns the chunks' sums over the internal unknowns, added in chunk order, with the
    /// chunks' `extra` results in order.
    fn chunked<T: Send>(
        &self,
        block_pass: impl Fn(&mut ObservationBlock, usize, usize, &mut LaneSums, &mut T) -> Result<()>
            + Sync,
        init: impl Fn() -> T + Sync,
    ) -> Result<(Vec<f64>, Vec<T>)> {
        let internal = &self.builder.layout.internal;
        let lmax = internal.lmax;
        let n = self.set.len();
        let chunks = OPERATOR_CHUNKS.min(n.max(1));
        let partial: Vec<(Vec<f64>, T)> = (0..chunks)
            .into_par_iter()
            .map(|c| -> Result<(Vec<f64>, T)> {
                let (lo, hi) = (c * n / chunks, (c + 1) * n / chunks);
                let mut block = ObservationBlock::new(lmax);
                let mut sums = LaneSums::new(lmax);
                let mut extra = init();
                for first in (lo..hi).step_by(LANES) {
                    let count = LANES.min(hi - first);
                    block_pass(&mut block, first, count, &mut sums, &mut extra)?;
                }
                let mut acc = vec![0.0; internal.len()];
                sums.add_to(internal, &mut acc);
                Ok((acc, extra))
            })
            .collect::<Result<_>>()?;
        let mut total = vec![0.0; internal.len()];
        let mut extras = Vec::with_capacity(partial.len());
        for (acc, extra) in partial {
            total.iter_mut().zip(&acc).for_each(|(t, a)| *t += a);
            extras.push(extra);
        }
        Ok((total, extras))
    }

    /// N p over the free unknowns (fixed ones held at zero).
    pub fn normal_times(&self, p_free: &[f64]) -> Result<Vec<f64>> {
        let layout = &self.builder.layout;
        let p = layout.expand(p_free);
        let (total, _) = self.chunked(
            |block, first, count, sums, _: &mut ()| {
                self.load(block, first, count)?;
                let value = self.kernels.synthesize(block, &layout.internal, &p);
                let mut f = [0.0; LANES];
                for g in 0..count {
                    f[g] = self.weights[first + g] * value[g];
                }
                self.kernels.accumulate(block, &f, sums);
                Ok(())
            },
            || (),
        )?;
        let mut out = vec![0.0; p_free.len()];
        layout.gather(&total, &mut out);
        Ok(out)
    }

    /// b = Aᵀ W y over the free unknowns, yᵀ W y and the number of observations used (weight
    /// above 0), y the observations less their normal-field part.
    pub fn right_hand_side(&self) -> Result<RightHandSide> {
        let layout = &self.builder.layout;
        let (total, extras) = self.chunked(
            |block, first, count, sums, (yy, used): &mut (f64, usize)| {
                self.load(block, first, count)?;
                let normal = self.normal_part(block, first, count);
                let mut f = [0.0; LANES];
                for g in 0..count {
                    let w = self.weights[first + g];
                    if w > 0.0 {
                        let y = self.set.observations[first + g].value - normal[g];
                        f[g] = w * y;
                        *yy += w * y * y;
                        *used += 1;
                    }
                }
                self.kernels.accumulate(block, &f, sums);
                Ok(())
            },
            || (0.0, 0usize),
        )?;
        let mut b = vec![0.0; layout.free_len()];
        layout.gather(&total, &mut b);
        let (y_w_y, observations) = extras
            .into_iter()
            .fold((0.0, 0), |(a, k), (y, u)| (a + y, k + u));
        Ok(RightHandSide {
            b,
            y_w_y,
            observations,
        })
    }

    /// The model's value at every observation for the full unknown vector `x`: a_iᵀx plus
    /// the normal-field part where the quantity is reduced, as [`RowBuilder::predict`].
    pub fn predict(&self, x: &[f64]) -> Result<Vec<f64>> {
        let internal = &self.builder.layout.internal;
        let lmax = internal.lmax;
        let mut out = vec![0.0; self.set.len()];
        out.par_chunks_mut(LANES)
            .enumerate()
            .map_init(
                || ObservationBlock::new(lmax),
                |block, (b, values)| -> Result<()> {
                    let (first, count) = (b * LANES, values.len());
                    self.load(block, first, count)?;
                    let model = self.kernels.synthesize(block, internal, x);
                    let normal = self.normal_part(block, first, count);
                    for (g, v) in values.iter_mut().enumerate() {
                        *v = model[g] + normal[g];
                    }
                    Ok(())
                },
            )
            .collect::<Result<()>>()?;
        Ok(out)
    }
}
