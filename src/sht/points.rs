//! Synthesis at arbitrary points: values and gradients of a coefficient set at (θ, λ).
//!
//! Per point, every column P̄_lm (l = m..L) comes from the stable recursion of
//! `legendre::column` (extended exponents near the poles), and ∂/∂θ from the non-singular
//! three-column relation, so the result holds at any degree and at the poles. At a pole,
//! (1/sin θ) ∂f/∂λ is the limit along the meridian λ (only order 1 contributes).
//! Points run in parallel; the cost is O(L²) per point.
//!
//! Points go through in groups of 16, one SIMD lane per point: every group streams the order
//! tables once and the 16 column recursions run side by side. The group code is compiled three
//! times, for the instruction sets of the transform kernels (`KernelPath`: AVX-512, AVX2 + FMA,
//! portable), and the widest one this CPU has is chosen at run time; the AVX copies fuse their
//! multiply–adds. The portable copy is the reference the others are tested against
//! (`tests/sht/points.rs`).

use rayon::prelude::*;

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

use crate::coeffs::packed_len;

use super::kernel::KernelPath;
use super::legendre::recursion::{a_lm, b_lm, column_start, sectoral, sectoral_factors};
use super::legendre::{order_one_over_sin_at_pole, ColatitudeCos, Pole};

/// A synthesised value with its horizontal gradient components.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PointValue {
    pub value: f64,
    /// ∂f/∂θ (per radian of colatitude).
    pub d_theta: f64,
    /// (1/sin θ) ∂f/∂λ (per radian of arc eastward).
    pub d_lambda_over_sin: f64,
}

/// Evaluates `coeffs` (any normalisation) at points given as (colatitude, longitude) in radians.
pub fn evaluate_points(coeffs: &Coefficients, points: &[(f64, f64)]) -> Result<Vec<PointValue>> {
    evaluate_points_with_path(coeffs, points, KernelPath::detect())
}

/// As [`evaluate_points`] on a given instruction-set path (refused when this CPU lacks it), for
/// testing each compiled copy against the portable one.
pub fn evaluate_points_with_path(
    coeffs: &Coefficients,
    points: &[(f64, f64)],
    path: KernelPath,
) -> Result<Vec<PointValue>> {
    if !path.is_supported() {
        return Err(Error::invalid(format!(
            "this CPU cannot run the {} kernels",
            path.name()
        )));
    }
    coeffs.check_finite()?;
    if let Some((i, p)) = points.iter().enumerate().find(|(_, (t, l))| {
        !t.is_finite() || !l.is_finite() || *t < 0.0 || *t > std::f64::consts::PI
    }) {
        return Err(Error::invalid(format!(
            "point {i}: (colatitude {}, longitude {}) rad is not a valid position (colatitude in [0, π], both finite)",
            p.0, p.1
        )));
    }
    let g = coeffs.to_geodesy()?;
    let table = OrderTable::new(&g);
    // full groups of GROUP, the rest in groups of 4 (a short group is padded)
    let split = points.len() / GROUP * GROUP;
    let (main, rest) = points.split_at(split);
    let mut out: Vec<PointValue> = main
        .par_chunks(GROUP)
        .map_init(
            || PointScratch::<GROUP>::new(g.lmax()),
            |sc, group| evaluate_group_on(path, &table, sc, group),
        )
        .flatten_iter()
        .collect();
    out.extend(
        rest.par_chunks(4)
            .map_init(
                || PointScratch::<4>::new(g.lmax()),
                |sc, group| evaluate_group::<4, false>(&table, sc, group),
            )
            .flatten_iter()
            .collect::<Vec<_>>(),
    );
    Ok(out)
}

/// Points evaluated together. Every group streams the order tables once, so a group of 16
/// reads them once per 16 points, and the points' column recursions are independent chains
/// that run side by side.
const GROUP: usize = 16;

/// What every point of one call shares, stored order by order (entry (l, m) at
/// `base[m] + l − m`) so that a point reads each order as one contiguous run: recursion
/// coefficients a_lm, b_lm, the derivative factors of the three-column relation (see
/// `legendre::column::column_with_derivative`) and the coefficients C_lm, S_lm. Built once
/// per call: the square roots cost as much as a whole point.
struct OrderTable {
    lmax: usize,
    base: Vec<usize>,
    factors: Vec<f64>,
    a: Vec<f64>,
    b: Vec<f64>,
    /// m = 0: sqrt(l(l+1)/2); m ≥ 1: sqrt((l+m+1)(l−m)) (factor of P̄_{l,m+1}).
    up: Vec<f64>,
    /// sqrt(k₁(l+m)(l−m+1)), k₁ = 2 for m = 1 else 1 (factor of P̄_{l,m−1}).
    down: Vec<f64>,
    c: Vec<f64>,
    s: Vec<f64>,
}

impl OrderTable {
    fn new(g: &Coefficients) -> Self {
        let lmax = g.lmax();
        let n = packed_len(lmax);
        let mut base = Vec::with_capacity(lmax + 1);
        let mut t = OrderTable {
            lmax,
            base: Vec::new(),
            factors: sectoral_factors(lmax),
            a: vec![0.0; n],
            b: vec![0.0; n],
            up: vec![0.0; n],
            down: vec![0.0; n],
            c: vec![0.0; n],
            s: vec![0.0; n],
        };
        let mut off = 0;
        for m in 0..=lmax {
            base.push(off);
            let mf = m as f64;
            for l in m..=lmax {
                let (i, lf) = (off + l - m, l as f64);
                if l > m {
                    t.a[i] = a_lm(l, m);
                    t.b[i] = b_lm(l, m);
                }
                if m == 0 {
                    t.up[i] = (lf * (lf + 1.0) / 2.0).sqrt();
                } else {
                    let k1 = if m == 1 { 2.0 } else { 1.0 };
                    t.down[i] = (k1 * (lf + mf) * (lf - mf + 1.0)).sqrt();
                    t.up[i] = ((lf + mf + 1.0) * (lf - mf)).sqrt();
                }
                t.c[i] = g.c(l, m);
                t.s[i] = g.s(l, m);
            }
            off += lmax + 1 - m;
        }
        t.base = base;
        t
    }

    /// The run of order m of one table.
    fn run<'t>(&self, v: &'t [f64], m: usize) -> &'t [f64] {
        &v[self.base[m]..self.base[m] + self.lmax + 1 - m]
    }
}

struct PointScratch<const G: usize> {
    /// Columns m − 1, m, m + 1 of every point of the group, entry l − (column order).
    below: Vec<[f64; G]>,
    here: Vec<[f64; G]>,
    above: Vec<[f64; G]>,
    starts: Vec<(usize, usize, f64, f64)>,
}

impl<const G: usize> PointScratch<G> {
    fn new(lmax: usize) -> Self {
        let n = lmax + 2;
        PointScratch {
            below: vec![[0.0; G]; n],
            here: vec![[0.0; G]; n],
            above: vec![[0.0; G]; n],
            starts: Vec::with_capacity(G),
        }
    }
}

/// Column m of P̄ for every point of the group into `dst[l − m][i]`: the recursion of
/// `legendre::column::column_with_coefficients` (start from `recursion::column_start`, then
/// P̄_{l+1} = a (x + x_lo) P̄_l − b P̄_{l−1} with the low part of cos θ), one chain per point,
/// run side by side; plain multiply and add, since a software `mul_add` would cost more than
/// the point.
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn group_column<const G: usize, const FUSED: bool>(
    t: &OrderTable,
    m: usize,
    x: &[f64; G],
    x_lo: &[f64; G],
    u: &[f64; G],
    starts: &mut Vec<(usize, usize, f64, f64)>,
    dst: &mut [[f64; G]],
) {
    let lmax = t.lmax;
    let n = lmax - m + 1;
    let dst = &mut dst[..n];
    dst.iter_mut().for_each(|v| *v = [0.0; G]);
    // `column_start` indexes a and b by degree l: shift the order's run by m (base[m] ≥ m,
    // since every earlier run holds at least two entries).
    let shift = t.base[m] - m;
    let (a, b) = (&t.a[shift..shift + lmax + 1], &t.b[shift..shift + lmax + 1]);
    starts.clear();
    for i in 0..G {
        if let Some(st) = column_start(m, lmax, x[i], sectoral(m, t.factors[m], u[i]), a, b) {
            starts.push((st.l, i, st.p_prev, st.p));
        }
    }
    if starts.is_empty() {
        return;
    }
    starts.sort_unstable_by_key(|s| s.0);
    let (mut p0, mut p1) = ([0.0; G], [0.0; G]);
    let mut next_start = 0;
    let mut l = starts[0].0;
    loop {
        while next_start < starts.len() && starts[next_start].0 == l {
            let (_, i, pp, p) = starts[next_start];
            p0[i] = pp;
            p1[i] = p;
            if l > m {
                dst[l - 1 - m][i] = pp;
            }
            next_start += 1;
        }
        dst[l - m] = p1;
        if l == lmax {
            break;
        }
        l += 1;
        let (al, bl) = (a[l], b[l]);
        for i in 0..G {
            let next = if FUSED {
                (al * x[i]).mul_add(p1[i], (al * x_lo[i]).mul_add(p1[i], -bl * p0[i]))
            } else {
                (al * x[i] * p1[i] - bl * p0[i]) + al * x_lo[i] * p1[i]
            };
            p0[i] = p1[i];
            p1[i] = next;
        }
    }
}

/// One full group on `path` (supported by this CPU, checked by the caller).
fn evaluate_group_on(
    path: KernelPath,
    t: &OrderTable,
    sc: &mut PointScratch<GROUP>,
    group: &[(f64, f64)],
) -> Vec<PointValue> {
    match path {
        // SAFETY (both arms): `evaluate_points_with_path` refused the path unless
        // `is_supported()` (runtime CPU detection) confirmed avx512f, avx2 and fma, or avx2
        // and fma, on this CPU; that is all the target features of the called copy.
        #[cfg(target_arch = "x86_64")]
        #[allow(unsafe_code)]
        KernelPath::Avx512 => unsafe { evaluate_group_avx512(t, sc, group) },
        #[cfg(target_arch = "x86_64")]
        #[allow(unsafe_code)]
        KernelPath::Avx2Fma => unsafe { evaluate_group_avx2(t, sc, group) },
        _ => evaluate_group::<GROUP, { super::kernel::PORTABLE_FUSED }>(t, sc, group),
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
#[allow(unsafe_code)]
unsafe fn evaluate_group_avx512(
    t: &OrderTable,
    sc: &mut PointScratch<GROUP>,
    group: &[(f64, f64)],
) -> Vec<PointValue> {
    evaluate_group::<GROUP, true>(t, sc, group)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(unsafe_code)]
unsafe fn evaluate_group_avx2(
    t: &OrderTable,
    sc: &mut PointScratch<GROUP>,
    group: &[(f64, f64)],
) -> Vec<PointValue> {
    evaluate_group::<GROUP, true>(t, sc, group)
}

#[inline(always)]
fn evaluate_group<const G: usize, const FUSED: bool>(
    t: &OrderTable,
    sc: &mut PointScratch<G>,
    group: &[(f64, f64)],
) -> Vec<PointValue> {
    let lmax = t.lmax;
    // pad a short group with copies of its first point (results dropped)
    let pt = |i: usize| group[if i < group.len() { i } else { 0 }];
    let mut x = [0.0; G];
    let mut x_lo = [0.0; G];
    let mut u = [0.0; G];
    for i in 0..G {
        let split = ColatitudeCos::new(pt(i).0);
        (x[i], x_lo[i], u[i]) = (split.t, split.t_lo, split.u);
    }
    let poles: [Option<Pole>; G] = std::array::from_fn(|i| Pole::at(pt(i).0));
    let mut out = [PointValue::default(); G];
    group_column::<G, FUSED>(t, 0, &x, &x_lo, &u, &mut sc.starts, &mut sc.here);
    for m in 0..=lmax {
        if m < lmax {
            group_column::<G, FUSED>(t, m + 1, &x, &x_lo, &u, &mut sc.starts, &mut sc.above);
        }
        let n = lmax - m + 1;
        let (c, s) = (t.run(&t.c, m), t.run(&t.s, m));
        let (fu, fd) = (t.run(&t.up, m), t.run(&t.down, m));
        let (here, above, below) = (&sc.here[..n], &sc.above[..n], &sc.below[..n + 1]);
        // Per-order sums Σ_l C P̄, Σ_l S P̄, Σ_l C ∂P̄, Σ_l S ∂P̄, combined with the
        // longitude factors once per order.
        let (mut ac, mut as_, mut dc, mut ds) = ([0.0; G], [0.0; G], [0.0; G], [0.0; G]);
        for k in 0..n {
            let up = if k > 0 { above[k - 1] } else { [0.0; G] };
            let (ck, sk) = (c[k], s[k]);
            for i in 0..G {
                let p = here[k][i];
                let d = if m == 0 {
                    -fu[k] * up[i]
                } else {
                    0.5 * (fd[k] * below[k + 1][i] - fu[k] * up[i])
                };
                if FUSED {
                    ac[i] = ck.mul_add(p, ac[i]);
                    as_[i] = sk.mul_add(p, as_[i]);
                    dc[i] = ck.mul_add(d, dc[i]);
                    ds[i] = sk.mul_add(d, ds[i]);
                } else {
                    ac[i] += ck * p;
                    as_[i] += sk * p;
                    dc[i] += ck * d;
                    ds[i] += sk * d;
                }
            }
        }
        let mf = m as f64;
        for i in 0..G {
            let (_, lambda) = pt(i);
            let (sm, cm) = (mf * lambda).sin_cos();
            let pv = &mut out[i];
            pv.value += ac[i] * cm + as_[i] * sm;
            pv.d_theta += dc[i] * cm + ds[i] * sm;
            match poles[i] {
                None => pv.d_lambda_over_sin += mf * (as_[i] * cm - ac[i] * sm) / u[i],
                Some(pole) if m == 1 => {
                    // only order 1 survives at a pole: Σ_l (S cos λ − C sin λ) lim P̄_l1/sin θ
                    let (mut pc, mut ps) = (0.0, 0.0);
                    for k in 0..n {
                        let lim = order_one_over_sin_at_pole(m + k, pole);
                        pc += c[k] * lim;
                        ps += s[k] * lim;
                    }
                    pv.d_lambda_over_sin += ps * cm - pc * sm;
                }
                Some(_) => {}
            }
        }
        // roll the columns: below ← here ← above
        std::mem::swap(&mut sc.below, &mut sc.here);
        std::mem::swap(&mut sc.here, &mut sc.above);
    }
    out[..group.len()].to_vec()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coeffs::Normalization;
    use crate::sht::legendre::column_with_derivative;

    /// Grouped evaluation (16 at once, then groups of 4 with padding) against a direct sum over
    /// the one-point columns of `legendre::column_with_derivative`, at degree 800 so that the
    /// near-pole points start their columns late (extended exponents), plus both poles.
    #[test]
    fn grouped_points_match_one_point_columns() {
        let lmax = 800;
        let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
        // deterministic, non-trivial coefficients falling off like a potential field
        for l in 0..=lmax {
            for m in 0..=l {
                let v = ((l * 31 + m * 17) % 23) as f64 / 23.0 - 0.5;
                let w = if m > 0 {
                    ((l * 7 + m * 29) % 19) as f64 / 19.0 - 0.5
                } else {
                    0.0
                };
                c.set(l, m, v / (l + 1) as f64, w / (l + 1) as f64);
            }
        }
        let mut pts: Vec<(f64, f64)> = (0..19)
            .map(|i| {
                (
                    1e-3 + (std::f64::consts::PI - 1.6e-3) * (i as f64 / 18.0).powi(2),
                    0.37 * i as f64 - 2.0,
                )
            })
            .collect();
        pts.push((0.0, 0.5));
        pts.push((std::f64::consts::PI, -1.2));
        pts.push((2e-3, 1.0));
        let got = evaluate_points(&c, &pts).unwrap();
        assert_eq!(got.len(), pts.len());
        for (k, &(theta, lambda)) in pts.iter().enumerate() {
            let u = theta.sin().abs();
            let (mut v, mut dt, mut dl) = (0.0, 0.0, 0.0);
            for m in 0..=lmax {
                let (p, d) = column_with_derivative(m, lmax, theta);
                let (sm, cm) = (m as f64 * lambda).sin_cos();
                for l in m..=lmax {
                    let (cc, ss) = (c.c(l, m), c.s(l, m));
                    v += p[l - m] * (cc * cm + ss * sm);
                    dt += d[l - m] * (cc * cm + ss * sm);
                    let pu = if u > 0.0 {
                        p[l - m] / u
                    } else if m == 1 {
                        if theta < 1.0 {
                            d[l - m]
                        } else {
                            -d[l - m]
                        }
                    } else {
                        0.0
                    };
                    dl += pu * m as f64 * (ss * cm - cc * sm);
                }
            }
            // summation order differs (per order first): a few hundred ulp of the largest term.
            // Near a pole (sin θ < 0.05) the recursion has a double characteristic root at x = 1, so its own
            // rounding grows about like l^1.5 ulp, and the two sides round differently (plain
            // multiply–add here, fused in the one-point columns): 4 ε L^1.5 there.
            let g = got[k];
            let near_pole = theta.sin() < 0.05;
            let rel = if near_pole {
                4.0 * f64::EPSILON * (lmax as f64).powf(1.5)
            } else {
                1e-12
            };
            let tol = |x: f64| rel * x.abs().max(1.0);
            assert!(
                (g.value - v).abs() < tol(v),
                "point {k}: {} vs {v}",
                g.value
            );
            assert!(
                (g.d_theta - dt).abs() < tol(dt),
                "point {k}: {} vs {dt}",
                g.d_theta
            );
            assert!(
                (g.d_lambda_over_sin - dl).abs() < tol(dl),
                "point {k}: {} vs {dl}",
                g.d_lambda_over_sin
            );
        }
    }
}
