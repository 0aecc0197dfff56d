//! The work for one order m: recursion coefficients, column starts per lane, the block kernels
//! and the hand-over to the ring (Fourier) stage. Generic over the lane count and FMA use; the
//! instruction-set variants are instantiated once in `kernel::unsafe_parts` and chosen when a
//! plan is built. Results leave through the per-order writers of that module, which are the
//! only way to reach the shared output.

use realfft::num_complex::Complex64;

use super::block::{analysis_block, synth_block, Event, Nodes, OrderCoefficients, FOLD};
use super::lanes::Lane;
use super::unsafe_parts::{FourierTarget, OrderCoefficientSums, OrderFourierColumns};
use crate::coeffs::packed_index;
use crate::sht::legendre::recursion::{a_lm, b_lm, f_lm, sectoral, NEGLIGIBLE_LOG2};
use crate::sht::legendre::xnumber::{BIG_INV, BIG_SQRT};

/// Per-thread scratch for one order (allocated once per thread, reused for every order).
pub(crate) struct OrderScratch {
    a: Vec<f64>,
    b: Vec<f64>,
    f: Vec<f64>,
    c: Vec<f64>,
    s: Vec<f64>,
    events: Vec<Event>,
    acc_re: Vec<f64>,
    acc_im: Vec<f64>,
}

impl OrderScratch {
    pub fn new(lmax: usize) -> Self {
        let n = lmax + 2;
        OrderScratch {
            a: vec![0.0; n],
            b: vec![0.0; n],
            f: vec![0.0; n],
            c: vec![0.0; n],
            s: vec![0.0; n],
            events: Vec::with_capacity(64),
            acc_re: vec![0.0; n * FOLD],
            acc_im: vec![0.0; n * FOLD],
        }
    }

    /// Bytes held by one scratch set.
    pub fn bytes(lmax: usize) -> u64 {
        ((lmax + 2) * (5 + 2 * FOLD) * 8 + 64 * 32) as u64
    }

    fn fill(&mut self, m: usize, lmax: usize, grad: bool) {
        for l in (m + 1)..=lmax {
            self.a[l] = a_lm(l, m);
            self.b[l] = b_lm(l, m);
        }
        if grad {
            for l in m..=lmax {
                self.f[l] = f_lm(l, m);
            }
        }
    }
}

/// Collects the column starts of a block's lanes (sorted by degree); returns the lane cos θ
/// values.
///
/// The same computation as `recursion::column_start` (same operations in the same order, so
/// the same doubles), run for the whole block at once: each lane carries its scaled value
/// p · 2^(960 k) and a limit, and only a step where some lane reaches its limit (rescale, or
/// the column becomes representable) leaves the vector loop. One lane at a time this costs
/// about ten times more, which made it the larger part of a transform.
fn block_events<const W: usize>(
    m: usize,
    lmax: usize,
    c_m: f64,
    block: &[Lane],
    sc: &mut OrderScratch,
) -> Nodes<W> {
    let mut nodes = Nodes {
        t: [0.0; W],
        t_lo: [0.0; W],
    };
    let mut x = [0.0; W];
    let mut p = [0.0; W];
    let mut pp = [0.0; W];
    let mut k = [0i32; W];
    let mut lim = [f64::INFINITY; W];
    let mut pending = 0usize;
    sc.events.clear();
    let threshold_abs = f64::from_bits(((NEGLIGIBLE_LOG2 + 960 + 1023) as u64) << 52);
    let limit = |k: i32| if k == -1 { threshold_abs } else { BIG_SQRT };
    for (i, lane) in block.iter().enumerate() {
        x[i] = lane.t;
        nodes.t[i] = lane.t;
        nodes.t_lo[i] = lane.t_lo;
        if m > lmax {
            continue;
        }
        let sv = sectoral(m, c_m, lane.u);
        if sv.mant == 0.0 {
            continue;
        }
        if sv.k == 0 || (sv.k == -1 && sv.mant.abs() >= threshold_abs) {
            sc.events.push(Event {
                l: m,
                lane: i,
                p_prev: 0.0,
                p: sv.to_f64(),
            });
        } else {
            p[i] = sv.mant;
            k[i] = sv.k;
            lim[i] = limit(sv.k);
            pending += 1;
        }
    }
    if pending == 0 {
        return nodes;
    }
    for l in (m + 1)..=lmax {
        let (al, bl) = (sc.a[l], sc.b[l]);
        let mut hit = false;
        for i in 0..W {
            let next = al * x[i] * p[i] - bl * pp[i];
            pp[i] = p[i];
            p[i] = next;
            hit |= next.abs() >= lim[i];
        }
        if !hit {
            continue;
        }
        for i in 0..W {
            if p[i].abs() < lim[i] {
                continue;
            }
            if p[i].abs() >= BIG_SQRT {
                p[i] *= BIG_INV;
                pp[i] *= BIG_INV;
                k[i] += 1;
            }
            if k[i] == -1 && p[i].abs() >= threshold_abs {
                sc.events.push(Event {
                    l,
                    lane: i,
                    p_prev: pp[i] * BIG_INV,
                    p: p[i] * BIG_INV,
                });
                // a finished lane holds zeros from here on and never reaches a limit again
                p[i] = 0.0;
                pp[i] = 0.0;
                lim[i] = f64::INFINITY;
                pending -= 1;
            } else {
                lim[i] = limit(k[i]);
            }
        }
        if pending == 0 {
            break;
        }
    }
    nodes
}

/// What a synthesis pass reads (it writes through [`OrderFourierColumns`]).
pub(crate) struct SynthJob<'a> {
    pub lmax: usize,
    pub lanes: &'a [Lane],
    pub sectoral_factors: &'a [f64],
    /// Packed `geodesy` C and S.
    pub c: &'a [f64],
    pub s: &'a [f64],
    /// e^{i m λ_0} per order.
    pub rotation: &'a [Complex64],
}

/// Σ_l (C_lm cos mλ + S_lm sin mλ) f_l on a ring as its packed Fourier entry: for m = 0 the
/// value `a` itself, else ½ (a − i b) e^{i m λ_0}.
#[inline(always)]
fn put_fourier(
    job: &SynthJob,
    out: &mut OrderFourierColumns,
    target: FourierTarget,
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
    out.put(target, row, x);
}

/// Synthesis of the writer's order m into the packed Fourier columns of every ring
/// (`FourierTarget::First` holds values, or ∂/∂θ for gradients; `Second` (1/sin θ) ∂/∂λ).
#[inline(always)]
pub(crate) fn synth_order<const W: usize, const FMA: bool, const GRAD: bool>(
    job: &SynthJob,
    sc: &mut OrderScratch,
    out: &mut OrderFourierColumns,
) {
    let m = out.order();
    let lmax = job.lmax;
    sc.fill(m, lmax, GRAD);
    for l in m..=lmax {
        let i = packed_index(l, m);
        sc.c[l] = job.c[i];
        sc.s[l] = job.s[i];
    }
    let c_m = job.sectoral_factors[m];
    for block in job.lanes.chunks(W) {
        let x = block_events::<W>(m, lmax, c_m, block, sc);
        if sc.events.is_empty() {
            // lanes run from the equator to the poles: every later block is negligible too
            break;
        }
        let rc = OrderCoefficients {
            m,
            lmax,
            a: &sc.a,
            b: &sc.b,
            f: &sc.f,
        };
        let sums = synth_block::<W, FMA, GRAD>(&rc, &x, &sc.events, &sc.c, &sc.s);
        let mf = m as f64;
        for (i, lane) in block.iter().enumerate() {
            let (ce, co, se, so) = (sums.c[0][i], sums.c[1][i], sums.s[0][i], sums.s[1][i]);
            if !GRAD {
                put_fourier(job, out, FourierTarget::First, lane.north, ce + co, se + so);
                if let Some(south) = lane.south {
                    put_fourier(job, out, FourierTarget::First, south, ce - co, se - so);
                }
            } else {
                let inv_u = 1.0 / lane.u;
                let (de, do_, dse, dso) =
                    (sums.dc[0][i], sums.dc[1][i], sums.ds[0][i], sums.ds[1][i]);
                put_fourier(
                    job,
                    out,
                    FourierTarget::First,
                    lane.north,
                    (de + do_) * inv_u,
                    (dse + dso) * inv_u,
                );
                put_fourier(
                    job,
                    out,
                    FourierTarget::Second,
                    lane.north,
                    mf * (se + so) * inv_u,
                    -mf * (ce + co) * inv_u,
                );
                if let Some(south) = lane.south {
                    // d/dθ of a mirrored function changes sign: P̄'(π−θ) = −(−1)^{l−m} P̄'(θ)
                    put_fourier(
                        job,
                        out,
                        FourierTarget::First,
                        south,
                        -(de - do_) * inv_u,
                        -(dse - dso) * inv_u,
                    );
                    put_fourier(
                        job,
                        out,
                        FourierTarget::Second,
                        south,
                        mf * (se - so) * inv_u,
                        -mf * (ce - co) * inv_u,
                    );
                }
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
    /// Weighted, rotated ring spectra H_m: lane k's north ring at row 2k, its mirror at 2k + 1,
    /// each row `lmax + 1` long.
    pub spectra: &'a [Complex64],
}

/// Analysis of the writer's order m over one chunk of rings; adds into the packed coefficients.
#[inline(always)]
pub(crate) fn analysis_order<const W: usize, const FMA: bool>(
    job: &AnalysisJob,
    sc: &mut OrderScratch,
    out: &mut OrderCoefficientSums,
) {
    let m = out.order();
    let lmax = job.lmax;
    let stride = lmax + 1;
    sc.fill(m, lmax, false);
    sc.acc_re[m * FOLD..(lmax + 1) * FOLD]
        .iter_mut()
        .for_each(|v| *v = 0.0);
    sc.acc_im[m * FOLD..(lmax + 1) * FOLD]
        .iter_mut()
        .for_each(|v| *v = 0.0);
    let c_m = job.sectoral_factors[m];
    for (bi, block) in job.lanes.chunks(W).enumerate() {
        let x = block_events::<W>(m, lmax, c_m, block, sc);
        if sc.events.is_empty() {
            break;
        }
        let mut hr = [[0.0; W]; 2];
        let mut hi = [[0.0; W]; 2];
        for (i, lane) in block.iter().enumerate() {
            let k = bi * W + i;
            let hn = job.spectra[2 * k * stride + m];
            let (e, o) = if lane.south.is_some() {
                let hs = job.spectra[(2 * k + 1) * stride + m];
                (hn + hs, hn - hs)
            } else {
                (hn, hn)
            };
            hr[0][i] = e.re;
            hi[0][i] = e.im;
            hr[1][i] = o.re;
            hi[1][i] = o.im;
        }
        let rc = OrderCoefficients {
            m,
            lmax,
            a: &sc.a,
            b: &sc.b,
            f: &sc.f,
        };
        analysis_block::<W, FMA>(
            &rc,
            &x,
            &sc.events,
            &hr,
            &hi,
            &mut sc.acc_re,
            &mut sc.acc_im,
        );
    }
    for l in m..=lmax {
        let re: f64 = sc.acc_re[l * FOLD..(l + 1) * FOLD].iter().sum();
        let im: f64 = sc.acc_im[l * FOLD..(l + 1) * FOLD].iter().sum();
        // C_lm − i S_lm = Σ P̄_lm H_m; S_l0 stays zero
        out.add(l, re, if m > 0 { -im } else { 0.0 });
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::legendre::recursion::{column_start, sectoral_factors};

    /// The block-wise column starts must equal the one-lane `column_start` bit for bit,
    /// including lanes near the poles at high order, where the start passes through several
    /// rescalings of the extended exponent (Fukushima 2012), and lanes that never start.
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
        let mut sc = OrderScratch::new(lmax);
        let (mut started, mut late) = (0, 0);
        for m in [0, 1, 5, 150, 700, 1500, 2222, 2999, 3000] {
            sc.fill(m, lmax, false);
            for block in lanes.chunks(16) {
                block_events::<16>(m, lmax, cm[m], block, &mut sc);
                for (i, lane) in block.iter().enumerate() {
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
                                (g.l, g.p_prev, g.p),
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
