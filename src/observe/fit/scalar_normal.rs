//! N p = Σ_i w_i a_i (a_iᵀ p) for scalar functionals (plain values, gravity quantities)
//! without building the rows: the fast kernel of the iterative solver's passes.
//!
//! A scalar row is a_i(C_lm) = k_l(r_i) P̄_lm(cos θ_i) cos mλ_i, a_i(S_lm) = k_l P̄_lm sin mλ_i
//! ([`super::functional`]). Per observation the columns k_l P̄_lm are computed order by order
//! (order-major, [`super::design::LegendreTable::fill_order_major`]) into one buffer; the synthesis
//! a_iᵀ p = Σ_m cos mλ Σ_l k_l P̄_lm C_lm + sin mλ Σ_l k_l P̄_lm S_lm then runs over contiguous
//! runs of p (the order-major layout of [`UnknownLayout`]), and its adjoint adds
//! w_i (a_iᵀ p) cos mλ k_l P̄_lm (and the sine part) into the same runs of the result. Two
//! sweeps over a buffer of (L+1)(L+2)/2 values instead of a row of (L+1)² entries built,
//! gathered and read twice.
//!
//! The generic pass over full rows ([`super::iterative::RowSource::normal_times`]) is the
//! scalar reference this kernel is tested against.

use rayon::prelude::*;

use super::design::{order_major_start, UnknownLayout};
use super::functional::{dot, RowBuilder};
use super::iterative::OPERATOR_CHUNKS;
use super::observation::ObservationSet;
use crate::coeffs::packed_len;
use crate::error::Result;

/// The normal-matrix product of scalar observations with weights `weights` (0 leaves an
/// observation out).
pub struct ScalarNormalOperator<'a> {
    pub set: &'a ObservationSet,
    pub builder: &'a RowBuilder,
    pub weights: &'a [f64],
}

impl ScalarNormalOperator<'_> {
    /// N p over the free unknowns (fixed ones held at zero), in fixed chunks whose partial
    /// sums are added in order, so the result does not depend on the number of threads.
    pub fn normal_times(&self, p_free: &[f64]) -> Result<Vec<f64>> {
        let layout = &self.builder.layout;
        let internal = &layout.internal;
        let p = layout.expand(p_free);
        let n = self.set.len();
        let chunks = OPERATOR_CHUNKS.min(n.max(1));
        let partial: Vec<Vec<f64>> = (0..chunks)
            .into_par_iter()
            .map(|c| -> Result<Vec<f64>> {
                let (lo, hi) = (c * n / chunks, (c + 1) * n / chunks);
                let mut acc = vec![0.0; internal.len()];
                let mut columns = vec![0.0; packed_len(internal.lmax)];
                for i in lo..hi {
                    let w = self.weights[i];
                    if w <= 0.0 {
                        continue;
                    }
                    self.accumulate(i, w, &p, &mut columns, &mut acc)?;
                }
                Ok(acc)
            })
            .collect::<Result<_>>()?;
        let mut total = vec![0.0; internal.len()];
        for acc in partial {
            total.iter_mut().zip(&acc).for_each(|(t, a)| *t += a);
        }
        let mut out = vec![0.0; p_free.len()];
        layout.gather(&total, &mut out);
        Ok(out)
    }

    /// acc += w (a_iᵀ p) a_i for observation i.
    fn accumulate(
        &self,
        i: usize,
        w: f64,
        p: &[f64],
        columns: &mut [f64],
        acc: &mut [f64],
    ) -> Result<()> {
        let internal: &UnknownLayout = &self.builder.layout.internal;
        let lmax = internal.lmax;
        let o = &self.set.observations[i];
        let (t, u, lambda) = RowBuilder::angles_of(o);
        self.builder
            .legendre_table()
            .fill_order_major(t, u, columns);
        let k = self.builder.scalar_degree_factors(o)?;
        let trig: Vec<(f64, f64)> = (0..=lmax).map(|m| (m as f64 * lambda).sin_cos()).collect();
        // k_l P̄_lm, and the synthesis a_iᵀ p
        let mut value = 0.0;
        for (m, &(sm, cm)) in trig.iter().enumerate() {
            let run = &mut columns[order_major_start(lmax, m)..order_major_start(lmax, m + 1)];
            run.iter_mut().zip(&k[m..]).for_each(|(v, kl)| *v *= kl);
            let c0 = internal.c_index(m, m);
            let fc = dot(run, &p[c0..c0 + run.len()]);
            value += cm * fc;
            if m > 0 {
                let s0 = internal.s_index(m, m);
                value += sm * dot(run, &p[s0..s0 + run.len()]);
            }
        }
        // the adjoint: w (a_iᵀ p) a_i
        let f = w * value;
        for (m, &(sm, cm)) in trig.iter().enumerate() {
            let run = &columns[order_major_start(lmax, m)..order_major_start(lmax, m + 1)];
            let c0 = internal.c_index(m, m);
            let fc = f * cm;
            acc[c0..c0 + run.len()]
                .iter_mut()
                .zip(run)
                .for_each(|(a, v)| *a += fc * v);
            if m > 0 {
                let s0 = internal.s_index(m, m);
                let fs = f * sm;
                acc[s0..s0 + run.len()]
                    .iter_mut()
                    .zip(run)
                    .for_each(|(a, v)| *a += fs * v);
            }
        }
        Ok(())
    }
}
