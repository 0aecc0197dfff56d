//! Where the column of order m becomes representable, for every lane of a block at once: the
//! degree, P̄_{l−1,m} and P̄_lm there, as the [`Event`]s the block kernels inject. Shared by the
//! transforms (a lane is a ring) and point synthesis (a lane is a point).
//!
//! The same computation as `legendre::recursion::column_start` with the sectoral value of
//! `recursion::sectoral` (Fukushima 2012, extended exponents; the same operations in the same
//! order, so the same doubles), in two steps:
//!
//! 1. The sectoral value c_m sin^m θ of every lane by plain binary powering in vector
//!    registers. `sectoral` powers an X-number `mant · 2^(960 k)` with the same products; an
//!    X-number product rounds exactly as the plain product of the values as long as that
//!    product is a normal double (scaling by 2^960 is exact, and rounding depends only on the
//!    significands then). Every intermediate of the powering is at least the final power (the
//!    factors are ≤ 1), so when the power is normal and c_m sin^m θ ≥ 2^-1000 the plain
//!    result is the X-number's value bit for bit, and the column starts right there
//!    (`column_start` returns l = m, P̄_{m−1,m} = 0). Only the other lanes, near the poles,
//!    call `sectoral` itself. Per lane and order the X-number powering cost about as much as
//!    the lane's whole recursion at L = 100 (a quarter of point synthesis in a profile).
//! 2. The lanes whose sectoral value is below 2^-1000 run the recursion in scaled doubles
//!    p · 2^(960 k) side by side, each with a limit; only a step where some lane reaches its
//!    limit (rescale, or the column becomes representable) leaves the vector loop. One lane at
//!    a time this costs about ten times more, which made it the larger part of a transform.

use super::block::Event;
use crate::sht::legendre::recursion::{sectoral, NEGLIGIBLE_LOG2};
use crate::sht::legendre::xnumber::{BIG_INV, BIG_SQRT};

/// 2^NEGLIGIBLE_LOG2 = 2^-1000: the smallest column value kept as a plain double.
const NEGLIGIBLE: f64 = f64::from_bits(((NEGLIGIBLE_LOG2 + 1023) as u64) << 52);

/// u^m of every lane by binary powering (square the base, multiply the set bits in, lowest
/// first), the product sequence of `XNumber::powi`.
#[inline(always)]
pub(crate) fn plain_powers<const W: usize>(u: &[f64; W], m: usize) -> [f64; W] {
    let mut result = [1.0; W];
    let mut base = *u;
    let mut n = m;
    while n > 0 {
        if n & 1 == 1 {
            for i in 0..W {
                result[i] *= base[i];
            }
        }
        n >>= 1;
        if n > 0 {
            for b in base.iter_mut() {
                *b *= *b;
            }
        }
    }
    result
}

/// The lanes whose column of order m starts at degree m itself: P̄_mm of each (0 in the other
/// lanes) and whether there is any.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SectoralStarts<const W: usize> {
    pub any: bool,
    pub p: [f64; W],
}

/// The column starts of order m for the first `lanes` lanes, at cos θ = `t` and sin θ = `u`
/// ≥ 0; `c_m` is the sectoral prefactor, `a` and `b` hold a_lm, b_lm indexed by degree
/// (entries l ≤ m unread). Lanes that start at degree m (P̄_{m−1,m} = 0) are returned; the
/// later starts go to `late` (cleared first, sorted by degree on return). Lanes in neither
/// hold columns below 2^-1000 (or exactly zero) to `lmax`.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub(crate) fn column_starts<const W: usize>(
    m: usize,
    lmax: usize,
    c_m: f64,
    t: &[f64; W],
    u: &[f64; W],
    lanes: usize,
    a: &[f64],
    b: &[f64],
    late: &mut Vec<Event>,
) -> SectoralStarts<W> {
    late.clear();
    let mut starts = SectoralStarts {
        any: false,
        p: [0.0; W],
    };
    if m > lmax {
        return starts;
    }
    let powers = plain_powers(u, m);
    let mut plain = [false; W];
    let mut all = true;
    for i in 0..W {
        // m = 0: `sectoral` returns exactly 1 = c_0 · u^0
        let v = if m == 0 { 1.0 } else { powers[i] * c_m };
        plain[i] = i < lanes && powers[i] >= f64::MIN_POSITIVE && v >= NEGLIGIBLE;
        starts.p[i] = if plain[i] { v } else { 0.0 };
        starts.any |= plain[i];
        all &= plain[i] || i >= lanes;
    }
    if all {
        return starts;
    }
    let threshold_abs = f64::from_bits(((NEGLIGIBLE_LOG2 + 960 + 1023) as u64) << 52);
    let limit = |k: i32| if k == -1 { threshold_abs } else { BIG_SQRT };
    let mut x = [0.0; W];
    let mut p = [0.0; W];
    let mut pp = [0.0; W];
    let mut k = [0i32; W];
    let mut lim = [f64::INFINITY; W];
    let mut pending = 0usize;
    for i in 0..lanes {
        if plain[i] {
            continue;
        }
        x[i] = t[i];
        let sv = sectoral(m, c_m, u[i]);
        if sv.mant == 0.0 {
            continue;
        }
        if sv.k == 0 || (sv.k == -1 && sv.mant.abs() >= threshold_abs) {
            starts.p[i] = sv.to_f64();
            starts.any = true;
        } else {
            p[i] = sv.mant;
            k[i] = sv.k;
            lim[i] = limit(sv.k);
            pending += 1;
        }
    }
    if pending == 0 {
        return starts;
    }
    for l in (m + 1)..=lmax {
        let (al, bl) = (a[l], b[l]);
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
                late.push(Event {
                    l: l as u32,
                    lane: i as u32,
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
    starts
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::legendre::recursion::{column_start, fill_coefficients, sectoral_factors};

    /// The vector powering against `sectoral` (the X-number powering of Fukushima 2012) bit
    /// for bit wherever it is used, i.e. where it claims a plain start, over sin θ from 1 down
    /// to 1e-300 (subnormal powers included) and orders to 5000; and every lane must get the
    /// start of `column_start`.
    #[test]
    fn vector_starts_equal_the_extended_exponent_starts() {
        let lmax = 5000;
        let cm = sectoral_factors(lmax);
        let u: [f64; 16] = [
            1.0, 0.999, 0.7, 0.3, 0.1, 3e-2, 1e-2, 5e-3, 1.7e-3, 1e-3, 3e-4, 1e-5, 1e-30, 1e-300,
            0.0, 0.5,
        ];
        let t: [f64; 16] = u.map(|s| (1.0 - s * s).sqrt());
        let (mut a, mut b) = (vec![0.0; lmax + 1], vec![0.0; lmax + 1]);
        let mut events = Vec::new();
        let (mut plain, mut late, mut none) = (0, 0, 0);
        for m in [
            0usize, 1, 2, 3, 7, 64, 100, 101, 150, 300, 1000, 2047, 4999, 5000,
        ] {
            fill_coefficients(m, lmax, &mut a, &mut b);
            let first = column_starts::<16>(m, lmax, cm[m], &t, &u, 16, &a, &b, &mut events);
            assert!(events
                .windows(2)
                .all(|w| w[0].l <= w[1].l && w[0].l as usize > m));
            assert_eq!(first.any, first.p.iter().any(|&p| p != 0.0));
            let powers = plain_powers(&u, m);
            for i in 0..16 {
                let want = column_start(m, lmax, t[i], sectoral(m, cm[m], u[i]), &a, &b);
                let at_m = (first.p[i] != 0.0).then_some(Event {
                    l: m as u32,
                    lane: i as u32,
                    p_prev: 0.0,
                    p: first.p[i],
                });
                let got = at_m.or_else(|| events.iter().find(|e| e.lane as usize == i).copied());
                match (want, got) {
                    (None, None) => none += 1,
                    (Some(w), Some(g)) => {
                        assert_eq!(
                            (w.l, w.p_prev, w.p),
                            (g.l as usize, g.p_prev, g.p),
                            "m {m} u {}",
                            u[i]
                        );
                        if w.l == m {
                            plain += 1;
                        } else {
                            late += 1;
                        }
                    }
                    _ => panic!("m {m} u {}: {want:?} vs {got:?}", u[i]),
                }
                if m > 0 && powers[i] >= f64::MIN_POSITIVE && powers[i] * cm[m] >= NEGLIGIBLE {
                    assert_eq!(
                        sectoral(m, cm[m], u[i]).to_f64(),
                        powers[i] * cm[m],
                        "m {m} u {}",
                        u[i]
                    );
                }
            }
        }
        assert!(
            plain > 80 && late > 15 && none > 15,
            "{plain} {late} {none}"
        );
    }
}
