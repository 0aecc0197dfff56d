//! Synthesis at a group of W arbitrary points, one SIMD lane per point, with the block kernels
//! of the transforms: per order m, the column starts of every lane (`kernel::starts`), then
//! degree chunks of the recursion into the level-1 row buffer (`block::recur`, through
//! `block::for_each_chunk`) and sum passes over those rows (`block::accumulate_values`, and for
//! gradients `block::accumulate_neighbours`). Only the hand-over differs from a transform: the
//! per-order sums of each lane are combined with cos mλ and sin mλ of its own longitude instead
//! of going to a ring's Fourier column.
//!
//! Values: f = Σ_m Σ_l P̄_lm (C_lm cos mλ + S_lm sin mλ) (`geodesy`, no Condon–Shortley phase).
//!
//! Gradients: ∂f/∂θ by the non-singular three-column relation of
//! `legendre::column::column_with_derivative` (DLMF 14.10.1 with 14.10.2, rescaled),
//!   dP̄_lm/dθ = ½[sqrt(k₁(l+m)(l−m+1)) P̄_{l,m−1} − sqrt((l+m+1)(l−m)) P̄_{l,m+1}]  (m ≥ 1),
//!   dP̄_l0/dθ = −sqrt(l(l+1)/2) P̄_l1,   k₁ = 2 for m = 1 else 1,
//! which needs no division by sin θ and so holds at and near the poles. Rather than keeping
//! three columns per point, each column P̄_{·,m} is summed once against the coefficients of
//! both neighbouring orders, premultiplied by their factors ([`PointTables`]: E for order
//! m + 1, F for order m − 1), and those sums are combined with the trigonometric factors of
//! orders m ± 1. (1/sin θ) ∂f/∂λ = Σ_m m (S̃_m cos mλ − C̃_m sin mλ) / sin θ with the value sums
//! C̃_m, S̃_m; at a pole, where only order 1 survives, it is the limit along the meridian λ
//! (`legendre::pole_limit`).
//!
//! Rounding differs from the one-point columns (`legendre::column_with_derivative`, the
//! reference of `tests/sht/points.rs`) only in the order of the sums (per order and parity
//! first) and in the products of the gradient factors with the coefficients being formed once
//! per call; the column values P̄_lm are the same doubles on the fused paths (the step of
//! `recursion::column_step`).
//!
//! cos mλ and sin mλ come from the rotation recurrence cos(m+1)λ = cos mλ cos λ − sin mλ sin λ,
//! sin(m+1)λ = sin mλ cos λ + cos mλ sin λ (the angle-addition formulas, common practice),
//! restarted from `sin_cos` every [`TRIG_RESTART`] orders: its rounding error grows about
//! linearly with the steps, so it stays within a few times 32 ε, while one `sin_cos` per point
//! and order was a fifth of the old point synthesis.

use super::block::{
    accumulate_neighbours, accumulate_values, fmadd, for_each_chunk_from, Event, NeighbourSums,
    Nodes, OrderCoefficients, Rows, SynthSums,
};
use super::order::order_major_offset;
use super::starts::column_starts;
use crate::coeffs::{packed_len, Coefficients};
use crate::sht::legendre::recursion::{a_lm, b_lm, sectoral_factors};
use crate::sht::legendre::{order_one_over_sin_at_pole, ColatitudeCos, Pole};
use crate::sht::points::PointValue;

/// Orders between exact `sin_cos` restarts of the rotation recurrence.
pub(crate) const TRIG_RESTART: usize = 32;

/// What every group of one call shares, order-major (entry (l, m) at
/// `order_major_offset(m, L) + l − m`, one contiguous run per order, as the transforms store
/// coefficients): recursion coefficients a_lm, b_lm, the coefficients C_lm, S_lm and, for
/// gradients, the neighbour coefficients of column m
///   E^C_lm = ½ sqrt(k₁(l+m+1)(l−m)) C_{l,m+1}  (l > m, m < L; k₁ = 2 for m + 1 = 1),
///   F^C_lm = −½ sqrt((l+m)(l−m+1)) C_{l,m−1}  (m ≥ 2),  F^C_l1 = −sqrt(l(l+1)/2) C_l0,
/// and the same with S. Built once per call: the square roots cost as much as a group.
pub(crate) struct PointTables {
    lmax: usize,
    gradient: bool,
    sectoral: Vec<f64>,
    /// One entry longer than the packed layout: the recursion of the last order reads (and
    /// discards) one step beyond L.
    a: Vec<f64>,
    b: Vec<f64>,
    c: Vec<f64>,
    s: Vec<f64>,
    next_c: Vec<f64>,
    next_s: Vec<f64>,
    prev_c: Vec<f64>,
    prev_s: Vec<f64>,
}

impl PointTables {
    /// The tables of `geodesy` coefficients `g`, with the neighbour tables when `gradient`.
    pub(crate) fn new(g: &Coefficients, gradient: bool) -> Self {
        let lmax = g.lmax();
        let n = packed_len(lmax);
        let zeros = |len: usize| vec![0.0; len];
        let grad_len = if gradient { n } else { 0 };
        let mut t = PointTables {
            lmax,
            gradient,
            sectoral: sectoral_factors(lmax),
            a: zeros(n + 1),
            b: zeros(n + 1),
            c: zeros(n),
            s: zeros(n),
            next_c: zeros(grad_len),
            next_s: zeros(grad_len),
            prev_c: zeros(grad_len),
            prev_s: zeros(grad_len),
        };
        for m in 0..=lmax {
            let base = order_major_offset(m, lmax);
            let mf = m as f64;
            for l in m..=lmax {
                let (i, lf) = (base + l - m, l as f64);
                if l > m {
                    t.a[i] = a_lm(l, m);
                    t.b[i] = b_lm(l, m);
                }
                t.c[i] = g.c(l, m);
                t.s[i] = g.s(l, m);
                if !gradient {
                    continue;
                }
                if l > m && m < lmax {
                    // factor of P̄_{l,m} in dP̄_{l,m+1}/dθ
                    let k1 = if m == 0 { 2.0 } else { 1.0 };
                    let e = 0.5 * (k1 * (lf + mf + 1.0) * (lf - mf)).sqrt();
                    t.next_c[i] = e * g.c(l, m + 1);
                    t.next_s[i] = e * g.s(l, m + 1);
                }
                if m >= 1 {
                    // factor of P̄_{l,m} in dP̄_{l,m−1}/dθ
                    let f = if m == 1 {
                        (lf * (lf + 1.0) / 2.0).sqrt()
                    } else {
                        0.5 * ((lf + mf) * (lf - mf + 1.0)).sqrt()
                    };
                    t.prev_c[i] = -f * g.c(l, m - 1);
                    t.prev_s[i] = -f * g.s(l, m - 1);
                }
            }
        }
        t
    }

    /// Bytes of the tables to degree `lmax` (with gradients or not), saturating.
    pub(crate) fn bytes(lmax: usize, gradient: bool) -> u64 {
        let arrays = if gradient { 8 } else { 4 };
        crate::memory::coefficient_pairs(lmax)
            .saturating_add(1)
            .saturating_mul(arrays * 8)
            .saturating_add((lmax as u64).saturating_add(1).saturating_mul(8))
    }

    pub(crate) fn lmax(&self) -> usize {
        self.lmax
    }

    /// The run of order m of table `v`, indexed by degree l (m ≤ l ≤ L; the entries before
    /// m belong to earlier orders and are not read).
    #[inline(always)]
    fn by_degree<'t>(&self, v: &'t [f64], m: usize) -> &'t [f64] {
        // order_major_offset(m) ≥ m: every earlier run holds at least one entry
        &v[order_major_offset(m, self.lmax) - m..]
    }
}

/// Per-thread scratch of point synthesis.
pub(crate) struct PointScratch {
    events: Vec<Event>,
}

impl PointScratch {
    pub(crate) fn new() -> Self {
        PointScratch {
            events: Vec::with_capacity(64),
        }
    }
}

/// cos kλ and sin kλ of every lane, from those of order k − 1 and of order 1.
#[inline(always)]
fn next_trig<const W: usize, const FMA: bool>(
    k: usize,
    lambda: &[f64; W],
    here: &([f64; W], [f64; W]),
    one: &([f64; W], [f64; W]),
) -> ([f64; W], [f64; W]) {
    let (mut c, mut s) = ([0.0; W], [0.0; W]);
    if k % TRIG_RESTART == 0 {
        for i in 0..W {
            (s[i], c[i]) = (k as f64 * lambda[i]).sin_cos();
        }
    } else {
        let ((ch, sh), (c1, s1)) = (here, one);
        for i in 0..W {
            c[i] = fmadd::<FMA>(ch[i], c1[i], -(sh[i] * s1[i]));
            s[i] = fmadd::<FMA>(sh[i], c1[i], ch[i] * s1[i]);
        }
    }
    (c, s)
}

/// Synthesis at the points of `group` (1 to W of them, (colatitude, longitude) in radians,
/// checked by the caller) into `out` (as long as the group): values, and with `GRAD` both
/// gradient components (the tables must hold the neighbour coefficients). A short group is
/// padded with copies of its first point, whose results are dropped. `H` lanes of sums stay in
/// registers at a time.
#[inline(always)]
pub(crate) fn point_group<const W: usize, const H: usize, const FMA: bool, const GRAD: bool>(
    tab: &PointTables,
    sc: &mut PointScratch,
    group: &[(f64, f64)],
    out: &mut [PointValue],
) {
    assert!(
        !group.is_empty() && group.len() <= W && out.len() == group.len(),
        "a group of {} points for {W} lanes",
        group.len()
    );
    assert!(!GRAD || tab.gradient, "gradient tables missing");
    let lmax = tab.lmax;
    let pt = |i: usize| group[if i < group.len() { i } else { 0 }];
    let mut nodes = Nodes {
        t: [0.0; W],
        t_lo: [0.0; W],
    };
    let (mut u, mut lambda) = ([0.0; W], [0.0; W]);
    let mut one = ([0.0; W], [0.0; W]);
    for i in 0..W {
        let (theta, lam) = pt(i);
        let x = ColatitudeCos::new(theta);
        (nodes.t[i], nodes.t_lo[i], u[i], lambda[i]) = (x.t, x.t_lo, x.u, lam);
        (one.1[i], one.0[i]) = lam.sin_cos();
    }
    let poles: [Option<Pole>; W] = std::array::from_fn(|i| Pole::at(pt(i).0));
    let lanes = GroupLanes {
        nodes,
        u,
        lambda,
        one,
    };
    // in the band π/3 ≤ θ ≤ 2π/3 cos θ needs no low part: a step without it
    let (value, d_theta, d_lambda) = if lanes.nodes.has_low_part() {
        orders::<W, H, FMA, GRAD, true>(tab, sc, &lanes)
    } else {
        orders::<W, H, FMA, GRAD, false>(tab, sc, &lanes)
    };
    for (i, pv) in out.iter_mut().enumerate() {
        pv.value = value[i];
        if !GRAD {
            continue;
        }
        pv.d_theta = d_theta[i];
        pv.d_lambda_over_sin = match poles[i] {
            None => d_lambda[i] / lanes.u[i],
            // only order 1 survives at a pole: Σ_l (S_l1 cos λ − C_l1 sin λ) lim P̄_l1/sin θ
            Some(pole) if lmax >= 1 => {
                let (c, s) = (tab.by_degree(&tab.c, 1), tab.by_degree(&tab.s, 1));
                let (mut pc, mut ps) = (0.0, 0.0);
                for l in 1..=lmax {
                    let lim = order_one_over_sin_at_pole(l, pole);
                    pc += c[l] * lim;
                    ps += s[l] * lim;
                }
                ps * lanes.one.0[i] - pc * lanes.one.1[i]
            }
            Some(_) => 0.0,
        };
    }
}

/// The points of one group as lanes: cos θ (with its low part), sin θ, λ and cos λ, sin λ.
struct GroupLanes<const W: usize> {
    nodes: Nodes<W>,
    u: [f64; W],
    lambda: [f64; W],
    one: ([f64; W], [f64; W]),
}

/// Per lane Σ_m of the value, of ∂f/∂θ and of sin θ · (1/sin θ) ∂f/∂λ (away from the poles),
/// order after order. `LO`: whether the recursion adds the low part of cos θ (see
/// `block::recur`).
#[inline(always)]
#[allow(clippy::type_complexity)]
fn orders<const W: usize, const H: usize, const FMA: bool, const GRAD: bool, const LO: bool>(
    tab: &PointTables,
    sc: &mut PointScratch,
    lanes: &GroupLanes<W>,
) -> ([f64; W], [f64; W], [f64; W]) {
    let lmax = tab.lmax;
    let GroupLanes {
        nodes,
        u,
        lambda,
        one,
    } = lanes;
    // cos and sin of orders m − 1, m, m + 1
    let mut prev = (one.0, one.1.map(|s| -s));
    let mut here = ([1.0; W], [0.0; W]);
    let mut next = *one;
    let (mut value, mut d_theta, mut d_lambda) = ([0.0; W], [0.0; W], [0.0; W]);
    let mut rows = Rows::<W>::new();
    for m in 0..=lmax {
        let (a, b) = (tab.by_degree(&tab.a, m), tab.by_degree(&tab.b, m));
        let first = column_starts::<W>(
            m,
            lmax,
            tab.sectoral[m],
            &nodes.t,
            u,
            W,
            a,
            b,
            &mut sc.events,
        );
        let l_first = if first.any {
            Some(m)
        } else {
            sc.events.first().map(|e| e.l as usize)
        };
        if let Some(l_first) = l_first {
            let (c, s) = (tab.by_degree(&tab.c, m), tab.by_degree(&tab.s, m));
            let mut vs = SynthSums::<W>::ZERO;
            let mut ns = NeighbourSums::<W>::ZERO;
            let rc = OrderCoefficients { lmax, a, b };
            for_each_chunk_from::<W, FMA, LO>(
                &rc,
                nodes,
                l_first,
                &first.p,
                &sc.events,
                &mut rows,
                // always inlined: a closure compiled on its own lacks the caller's target
                // features, and its `mul_add` became a software call (seen in the 8-lane copy)
                #[inline(always)]
                |l0, n, rows| {
                    let par0 = (l0 - m) & 1;
                    accumulate_values::<W, H, FMA>(rows, n, par0, &c[l0..], &s[l0..], &mut vs);
                    if GRAD {
                        accumulate_neighbours::<W, H, FMA>(
                            rows,
                            n,
                            &tab.by_degree(&tab.next_c, m)[l0..],
                            &tab.by_degree(&tab.next_s, m)[l0..],
                            &tab.by_degree(&tab.prev_c, m)[l0..],
                            &tab.by_degree(&tab.prev_s, m)[l0..],
                            &mut ns,
                        );
                    }
                },
            );
            let mf = m as f64;
            for i in 0..W {
                let ac = vs.c[0][i] + vs.c[1][i];
                let as_ = vs.s[0][i] + vs.s[1][i];
                value[i] = fmadd::<FMA>(as_, here.1[i], fmadd::<FMA>(ac, here.0[i], value[i]));
                if GRAD {
                    let east = fmadd::<FMA>(as_, here.0[i], -(ac * here.1[i]));
                    d_lambda[i] = fmadd::<FMA>(mf, east, d_lambda[i]);
                    let mut dt = fmadd::<FMA>(ns.next_c[i], next.0[i], d_theta[i]);
                    dt = fmadd::<FMA>(ns.next_s[i], next.1[i], dt);
                    dt = fmadd::<FMA>(ns.prev_c[i], prev.0[i], dt);
                    d_theta[i] = fmadd::<FMA>(ns.prev_s[i], prev.1[i], dt);
                }
            }
        }
        if m < lmax {
            let after = next_trig::<W, FMA>(m + 2, lambda, &next, one);
            prev = here;
            here = next;
            next = after;
        }
    }
    (value, d_theta, d_lambda)
}
