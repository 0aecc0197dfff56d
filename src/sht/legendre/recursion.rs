//! Recursion coefficients and the start of each column for the fully normalised functions
//! P̄_lm (`geodesy` normalisation, no Condon–Shortley phase), after Holmes & Featherstone
//! (2002), "A unified approach to the Clenshaw summation and the recursive computation of very
//! high degree and order normalised associated Legendre functions", J. Geodesy 76:279–299:
//!
//!   P̄_mm = c_m sin^m θ,   c_0 = 1, c_m = sqrt(2) Π_{k=1..m} sqrt((2k+1)/(2k)) (m ≥ 1),
//!   P̄_lm = a_lm cos θ P̄_{l−1,m} − b_lm P̄_{l−2,m}  (l > m, P̄_{m−1,m} = 0),
//!   a_lm = sqrt((2l−1)(2l+1)/((l−m)(l+m))),
//!   b_lm = sqrt((2l+1)(l+m−1)(l−m−1)/((l−m)(l+m)(2l−3))).

use super::xnumber::{XNumber, BIG_INV, BIG_SQRT};

/// Recursion coefficient a_lm (l > m).
#[inline]
pub fn a_lm(l: usize, m: usize) -> f64 {
    let (lf, mf) = (l as f64, m as f64);
    ((2.0 * lf - 1.0) * (2.0 * lf + 1.0) / ((lf - mf) * (lf + mf))).sqrt()
}

/// Recursion coefficient b_lm (l > m; zero for l = m + 1).
#[inline]
pub fn b_lm(l: usize, m: usize) -> f64 {
    if l <= m + 1 {
        return 0.0;
    }
    let (lf, mf) = (l as f64, m as f64);
    ((2.0 * lf + 1.0) * (lf + mf - 1.0) * (lf - mf - 1.0)
        / ((lf - mf) * (lf + mf) * (2.0 * lf - 3.0)))
        .sqrt()
}

/// Derivative coefficient f_lm = sqrt((2l+1)/(2l−1) (l−m)(l+m)) of the two-term relation
/// dP̄_lm/dθ = (l cos θ P̄_lm − f_lm P̄_{l−1,m}) / sin θ (Holmes & Featherstone 2002, eq. 30).
#[inline]
pub fn f_lm(l: usize, m: usize) -> f64 {
    if l == 0 || l == m {
        return 0.0;
    }
    let (lf, mf) = (l as f64, m as f64);
    ((2.0 * lf + 1.0) / (2.0 * lf - 1.0) * (lf - mf) * (lf + mf)).sqrt()
}

/// The sectoral prefactor c_m, computed as exp of a compensated sum of ln(1 + 1/(2k)) so that
/// it is good to a few ulp at any m (a running product would drift by up to m ulp).
pub fn sectoral_factor(m: usize) -> f64 {
    SectoralLogSum::new()
        .nth(m)
        .expect("the iterator is unbounded")
        .exp()
}

/// Running compensated (Neumaier 1974) sum of ln c_m = ½ ln 2 + Σ_{k=1..m} ½ ln(1 + 1/(2k)),
/// yielding ln c_0 = 0, ln c_1, ln c_2, ...
struct SectoralLogSum {
    k: usize,
    sum: f64,
    comp: f64,
}

impl SectoralLogSum {
    fn new() -> Self {
        SectoralLogSum {
            k: 0,
            sum: 0.5 * std::f64::consts::LN_2,
            comp: 0.0,
        }
    }
}

impl Iterator for SectoralLogSum {
    type Item = f64;
    fn next(&mut self) -> Option<f64> {
        if self.k == 0 {
            self.k = 1;
            return Some(0.0);
        }
        let term = 0.5 * (0.5 / self.k as f64).ln_1p();
        let t = self.sum + term;
        self.comp += if self.sum.abs() >= term.abs() {
            (self.sum - t) + term
        } else {
            (term - t) + self.sum
        };
        self.sum = t;
        self.k += 1;
        Some(self.sum + self.comp)
    }
}

/// All sectoral prefactors c_0..c_mmax (one pass, same compensated sum).
pub fn sectoral_factors(mmax: usize) -> Vec<f64> {
    SectoralLogSum::new().take(mmax + 1).map(f64::exp).collect()
}

/// P̄_mm(θ) = c_m sin^m θ as an X-number (exact zero at the poles for m > 0).
pub fn sectoral(m: usize, c_m: f64, sin_theta: f64) -> XNumber {
    if m == 0 {
        return XNumber::from_f64(1.0);
    }
    if sin_theta == 0.0 {
        return XNumber::ZERO;
    }
    XNumber::from_f64(sin_theta).powi(m).scale(c_m)
}

/// Threshold below which a column value is treated as zero: 2^-1000 ≈ 9e-302.
/// Values of P̄_lm this small cannot change a sum whose terms are of order one.
pub const NEGLIGIBLE_LOG2: i32 = -1000;

/// Where a column becomes representable: at degree `l`, `p_prev` = P̄_{l−1,m} and `p` = P̄_lm
/// as plain doubles. Every P̄_jm with j < l − 1 is below 2^-1000 in magnitude (or `l = m`,
/// `p_prev = 0`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColumnStart {
    pub l: usize,
    pub p_prev: f64,
    pub p: f64,
}

/// Runs the column recursion in extended-exponent arithmetic from the sectoral value until
/// the column becomes representable, and returns the state there; `None` when every P̄_lm,
/// l ≤ lmax, is negligible (or exactly zero, as at the poles for m > 0).
///
/// `a` and `b` hold a_lm and b_lm indexed by l (entries l ≤ m are not read).
pub fn column_start(
    m: usize,
    lmax: usize,
    cos_theta: f64,
    sectoral_value: XNumber,
    a: &[f64],
    b: &[f64],
) -> Option<ColumnStart> {
    if m > lmax || sectoral_value.mant == 0.0 {
        return None;
    }
    let threshold = (NEGLIGIBLE_LOG2 + 960) as f64; // log2 of the mantissa at k = −1
    let plain = |x: XNumber| x.k == 0 || (x.k == -1 && x.mant.abs().log2() >= threshold);
    if plain(sectoral_value) {
        return Some(ColumnStart {
            l: m,
            p_prev: 0.0,
            p: sectoral_value.to_f64(),
        });
    }
    // Scaled doubles sharing one exponent k: true value = p · 2^(960 k).
    let mut k = sectoral_value.k;
    let mut p_prev = 0.0;
    let mut p = sectoral_value.mant;
    let threshold_abs = f64::from_bits(((threshold as i64 + 1023) as u64) << 52);
    for l in (m + 1)..=lmax {
        let next = a[l] * cos_theta * p - b[l] * p_prev;
        p_prev = p;
        p = next;
        if p.abs() >= BIG_SQRT {
            p *= BIG_INV;
            p_prev *= BIG_INV;
            k += 1;
        }
        if k == -1 && p.abs() >= threshold_abs {
            // Both values as plain doubles; p_prev may be tiny or subnormal, which is
            // harmless because it lies below the negligible threshold anyway.
            return Some(ColumnStart {
                l,
                p_prev: p_prev * BIG_INV,
                p: p * BIG_INV,
            });
        }
    }
    None
}

/// One step of the column recursion with cos θ = `t` + `t_lo` (see `legendre::colatitude`):
/// P̄_lm = a_lm (t + t_lo) P̄_{l−1,m} − b_lm P̄_{l−2,m} from `p` = P̄_{l−1,m}, `prev` = P̄_{l−2,m}.
///
/// Evaluated as fma(a t_lo, p, fma(a t, p, −b prev)): the products a·t and a·t_lo round once,
/// each fused step once more. `mul_add` is exact on every target, so this scalar step is at
/// least as accurate as every kernel path (which use these very operations on FMA hardware and
/// plain multiply–add elsewhere); it is the yardstick the kernels are tested against.
#[inline]
pub fn column_step(a: f64, b: f64, t: f64, t_lo: f64, p: f64, prev: f64) -> f64 {
    let main = (a * t).mul_add(p, -(b * prev));
    (a * t_lo).mul_add(p, main)
}

/// Fills `a[l]`, `b[l]` for l = m+1..=lmax (slices of length ≥ lmax + 1): the same doubles as
/// [`a_lm`] / [`b_lm`] (the same operations on the same exactly represented integers,
/// l, m < 2^53), written without branches and with the degree counted in doubles, so that the
/// loops vectorise. `#[inline(always)]`: inside a transform kernel they compile with its
/// instruction set (a square root and a division per coefficient were about 8 % of a
/// degree-511 synthesis when run two doubles at a time).
#[inline(always)]
pub fn fill_coefficients(m: usize, lmax: usize, a: &mut [f64], b: &mut [f64]) {
    if m >= lmax {
        return;
    }
    let mf = m as f64;
    let first = (m + 1) as f64;
    for (k, a) in a[m + 1..=lmax].iter_mut().enumerate() {
        let lf = first + k as f64;
        *a = ((2.0 * lf - 1.0) * (2.0 * lf + 1.0) / ((lf - mf) * (lf + mf))).sqrt();
    }
    // b_{m+1,m} = 0: the recursion's first step has no second term
    b[m + 1] = 0.0;
    let first = (m + 2) as f64;
    for (k, b) in b[m + 2..=lmax].iter_mut().enumerate() {
        let lf = first + k as f64;
        *b = ((2.0 * lf + 1.0) * (lf + mf - 1.0) * (lf - mf - 1.0)
            / ((lf - mf) * (lf + mf) * (2.0 * lf - 3.0)))
            .sqrt();
    }
}
