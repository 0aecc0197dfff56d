//! The spherical-harmonic coefficient set: packed triangular storage of C_lm and S_lm (and
//! their standard errors), the metadata that gives them meaning (normalisation, phase,
//! reference radius, GM, units), conversion between normalisations, truncation and
//! degree-wise arithmetic.
//!
//! Real expansion (docs/conventions.md §2):
//!   f(θ, λ) = Σ_l Σ_{m=0..l} Y_lm(cos θ) (C_lm cos mλ + S_lm sin mλ),
//! where Y_lm = N_lm · P_lm (times (−1)^m when the Condon–Shortley phase is on) and P_lm is
//! Ferrers' function without the phase. S_l0 is always 0.

use std::collections::BTreeMap;
use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};

/// Normalisation of the associated Legendre functions (docs/conventions.md §2).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Normalization {
    /// 4π fully normalised: N = sqrt((2 − δ_m0)(2l + 1)(l − m)!/(l + m)!). Gravity, topography.
    Geodesy,
    /// Schmidt semi-normalised: N = sqrt((2 − δ_m0)(l − m)!/(l + m)!). Geomagnetism.
    Schmidt,
    /// Orthonormal real harmonics: N = sqrt((2 − δ_m0)(2l + 1)/(4π)(l − m)!/(l + m)!).
    Orthonormal,
    /// No normalisation: N = 1.
    Unnormalized,
}

impl Normalization {
    pub const ALL: [Normalization; 4] = [
        Normalization::Geodesy,
        Normalization::Schmidt,
        Normalization::Orthonormal,
        Normalization::Unnormalized,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Normalization::Geodesy => "geodesy",
            Normalization::Schmidt => "schmidt",
            Normalization::Orthonormal => "orthonormal",
            Normalization::Unnormalized => "unnormalized",
        }
    }

    /// The Condon–Shortley phase customary for this normalisation (on for `orthonormal`).
    pub fn default_condon_shortley(self) -> bool {
        matches!(self, Normalization::Orthonormal)
    }

    /// ln(N_lm / N̄_lm): the logarithm of this normalisation's factor relative to the
    /// `geodesy` factor N̄_lm, for degree l and order m ≤ l.
    ///
    /// Working in logarithms keeps the `unnormalized` factor, sqrt((l+m)!/(l−m)!) relative to
    /// geodesy, representable to any degree (its value overflows a double near l ≈ 150).
    pub fn ln_factor_relative_to_geodesy(self, l: usize, m: usize) -> f64 {
        let two_l1 = (2 * l + 1) as f64;
        match self {
            Normalization::Geodesy => 0.0,
            Normalization::Schmidt => -0.5 * two_l1.ln(),
            Normalization::Orthonormal => -0.5 * (4.0 * std::f64::consts::PI).ln(),
            Normalization::Unnormalized => {
                // 1 / sqrt((2 − δ)(2l+1)(l−m)!/(l+m)!)
                let delta: f64 = if m == 0 { 1.0 } else { 2.0 };
                let ln_ratio: f64 = ((l - m + 1)..=(l + m)).map(|k| (k as f64).ln()).sum();
                0.5 * (ln_ratio - delta.ln() - two_l1.ln())
            }
        }
    }
}

impl fmt::Display for Normalization {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Normalization {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s.trim().to_ascii_lowercase().as_str() {
            "geodesy" => Ok(Normalization::Geodesy),
            "schmidt" => Ok(Normalization::Schmidt),
            "orthonormal" => Ok(Normalization::Orthonormal),
            "unnormalized" | "unnormalised" => Ok(Normalization::Unnormalized),
            other => Err(Error::invalid(format!(
                "unknown normalization '{other}': expected one of geodesy, schmidt, orthonormal, unnormalized"
            ))),
        }
    }
}

/// Index of (l, m) in packed triangular storage: l(l+1)/2 + m.
#[inline]
pub fn packed_index(l: usize, m: usize) -> usize {
    debug_assert!(m <= l);
    l * (l + 1) / 2 + m
}

/// Number of (l, m) pairs with 0 ≤ m ≤ l ≤ lmax.
#[inline]
pub fn packed_len(lmax: usize) -> usize {
    (lmax + 1) * (lmax + 2) / 2
}

/// A real spherical-harmonic coefficient set to degree `lmax`.
#[derive(Debug, Clone, PartialEq)]
pub struct Coefficients {
    lmax: usize,
    c: Vec<f64>,
    s: Vec<f64>,
    c_sigma: Option<Vec<f64>>,
    s_sigma: Option<Vec<f64>>,
    /// Normalisation of the functions the coefficients multiply.
    pub normalization: Normalization,
    /// Whether the functions carry the Condon–Shortley phase (−1)^m.
    pub condon_shortley: bool,
    /// Reference radius R of the expansion, metres.
    pub reference_radius_m: f64,
    /// Gravitational parameter GM for potential models, m³ s⁻².
    pub gm_m3_s2: Option<f64>,
    /// Units of the coefficients (CF units string; "1" for dimensionless potential coefficients).
    pub units: String,
    /// Free-form metadata carried through files (title, provenance, quantity, ...).
    pub attributes: BTreeMap<String, String>,
    /// Linear rates of change about an epoch, when the model has them.
    secular: Option<Box<SecularVariation>>,
}

/// Linear secular variation of a model about an epoch t₀:
/// C_lm(t) = C_lm + (t − t₀)·dC_lm/dt, S_lm(t) = S_lm + (t − t₀)·dS_lm/dt, t in decimal years —
/// the form main-field models use between their snapshot epochs (e.g. the IGRF, Alken et al.
/// 2021, Earth Planets Space 73:49, §2).
#[derive(Debug, Clone, PartialEq)]
pub struct SecularVariation {
    /// Epoch t₀, decimal year.
    pub epoch_year: f64,
    /// dC/dt and dS/dt per year, with their σ when known: same degree, normalisation and phase
    /// as the model; units the model's per year.
    pub rates: Coefficients,
}

impl Coefficients {
    /// A zero coefficient set in the given normalisation, with the customary phase for it,
    /// reference radius 1 m and dimensionless units.
    pub fn zeros(lmax: usize, normalization: Normalization) -> Self {
        let n = packed_len(lmax);
        Coefficients {
            lmax,
            c: vec![0.0; n],
            s: vec![0.0; n],
            c_sigma: None,
            s_sigma: None,
            normalization,
            condon_shortley: normalization.default_condon_shortley(),
            reference_radius_m: 1.0,
            gm_m3_s2: None,
            units: "1".to_string(),
            attributes: BTreeMap::new(),
            secular: None,
        }
    }

    /// Builds a set from packed C and S arrays (length `packed_len(lmax)`).
    pub fn from_packed(
        lmax: usize,
        c: Vec<f64>,
        s: Vec<f64>,
        normalization: Normalization,
    ) -> Result<Self> {
        let n = packed_len(lmax);
        if c.len() != n || s.len() != n {
            return Err(Error::ShapeMismatch(format!(
                "packed coefficients for lmax {lmax} need {n} values, got C {} and S {}",
                c.len(),
                s.len()
            )));
        }
        // the zero set of degree 0 gives every other field its default without allocating
        // two arrays of the full size only to drop them
        let mut out = Coefficients {
            lmax,
            c,
            s,
            ..Coefficients::zeros(0, normalization)
        };
        for l in 0..=lmax {
            out.s[packed_index(l, 0)] = 0.0;
        }
        Ok(out)
    }

    pub fn lmax(&self) -> usize {
        self.lmax
    }

    /// Number of stored (l, m) pairs.
    pub fn len(&self) -> usize {
        self.c.len()
    }

    pub fn is_empty(&self) -> bool {
        self.c.is_empty()
    }

    #[inline]
    pub fn c(&self, l: usize, m: usize) -> f64 {
        self.c[packed_index(l, m)]
    }

    #[inline]
    pub fn s(&self, l: usize, m: usize) -> f64 {
        self.s[packed_index(l, m)]
    }

    /// Sets C_lm and S_lm (S_l0 is forced to 0).
    #[inline]
    pub fn set(&mut self, l: usize, m: usize, c: f64, s: f64) {
        let i = packed_index(l, m);
        self.c[i] = c;
        self.s[i] = if m == 0 { 0.0 } else { s };
    }

    /// Packed C values, index [`packed_index`].
    pub fn c_packed(&self) -> &[f64] {
        &self.c
    }

    pub fn s_packed(&self) -> &[f64] {
        &self.s
    }

    pub fn c_packed_mut(&mut self) -> &mut [f64] {
        &mut self.c
    }

    pub fn s_packed_mut(&mut self) -> &mut [f64] {
        &mut self.s
    }

    /// Packed C and S, both mutable at once (e.g. for transforms that fill them together).
    pub fn packed_mut(&mut self) -> (&mut [f64], &mut [f64]) {
        (&mut self.c, &mut self.s)
    }

    /// Standard errors of C and S, when known.
    pub fn sigmas(&self) -> Option<(&[f64], &[f64])> {
        match (&self.c_sigma, &self.s_sigma) {
            (Some(c), Some(s)) => Some((c, s)),
            _ => None,
        }
    }

    /// Attaches standard errors (packed, same layout as C and S).
    pub fn set_sigmas(&mut self, c_sigma: Vec<f64>, s_sigma: Vec<f64>) -> Result<()> {
        let n = self.len();
        if c_sigma.len() != n || s_sigma.len() != n {
            return Err(Error::ShapeMismatch(format!(
                "sigmas for lmax {} need {n} values, got {} and {}",
                self.lmax,
                c_sigma.len(),
                s_sigma.len()
            )));
        }
        self.c_sigma = Some(c_sigma);
        self.s_sigma = Some(s_sigma);
        Ok(())
    }

    pub fn clear_sigmas(&mut self) {
        self.c_sigma = None;
        self.s_sigma = None;
    }

    /// Sigma of (C_lm, S_lm) when known.
    pub fn sigma(&self, l: usize, m: usize) -> Option<(f64, f64)> {
        self.sigmas()
            .map(|(c, s)| (c[packed_index(l, m)], s[packed_index(l, m)]))
    }

    /// Copies all metadata (normalisation, phase, radius, GM, units, attributes) from `other`.
    pub fn with_metadata_of(mut self, other: &Coefficients) -> Self {
        self.normalization = other.normalization;
        self.condon_shortley = other.condon_shortley;
        self.reference_radius_m = other.reference_radius_m;
        self.gm_m3_s2 = other.gm_m3_s2;
        self.units = other.units.clone();
        self.attributes = other.attributes.clone();
        self
    }

    /// The model's linear secular variation, when it has one.
    pub fn secular(&self) -> Option<&SecularVariation> {
        self.secular.as_deref()
    }

    /// Attaches rates of change per year about `epoch_year` (decimal year). The rates must have
    /// the model's degree, normalisation and phase, and no rates of their own.
    pub fn set_secular(&mut self, epoch_year: f64, mut rates: Coefficients) -> Result<()> {
        if !epoch_year.is_finite() {
            return Err(Error::invalid(format!(
                "epoch {epoch_year} is not a finite decimal year"
            )));
        }
        if rates.lmax != self.lmax
            || rates.normalization != self.normalization
            || rates.condon_shortley != self.condon_shortley
        {
            return Err(Error::ShapeMismatch(format!(
                "rates of degree {} ({}) do not match a degree-{} {} model",
                rates.lmax, rates.normalization, self.lmax, self.normalization
            )));
        }
        rates.secular = None;
        rates.reference_radius_m = self.reference_radius_m;
        rates.gm_m3_s2 = self.gm_m3_s2;
        rates.units = rate_units(&self.units);
        self.secular = Some(Box::new(SecularVariation { epoch_year, rates }));
        Ok(())
    }

    /// Removes the secular variation (the model then stands for its epoch).
    pub fn clear_secular(&mut self) {
        self.secular = None;
    }

    /// The model at time `year` (decimal year): C + (t − t₀)·dC/dt, S likewise, without
    /// rates. σ combine as sqrt(σ_C² + (t − t₀)² σ_dC²), treating C and dC/dt as uncorrelated
    /// (the files carry no covariances). Refused for a model without rates.
    pub fn at_time(&self, year: f64) -> Result<Coefficients> {
        let sv = self.secular().ok_or_else(|| {
            Error::invalid(
                "the model has no secular variation (no dC_dt, dS_dt): a time applies only to a model with rates",
            )
        })?;
        if !year.is_finite() {
            return Err(Error::invalid(format!(
                "time {year} is not a finite decimal year"
            )));
        }
        let dt = year - sv.epoch_year;
        let mut out = self.clone();
        out.secular = None;
        out.add_scaled(&sv.rates, dt)?;
        if let (Some((cs, ss)), Some((rcs, rss))) = (self.sigmas(), sv.rates.sigmas()) {
            let combine = |a: &[f64], b: &[f64]| -> Vec<f64> {
                a.iter().zip(b).map(|(x, y)| x.hypot(dt * y)).collect()
            };
            out.set_sigmas(combine(cs, rcs), combine(ss, rss))?;
        }
        out.attributes
            .insert("evaluated_at_year".into(), format!("{year}"));
        out.attributes.insert(
            "secular_variation_epoch_year".into(),
            format!("{}", sv.epoch_year),
        );
        Ok(out)
    }

    /// Checks that every coefficient is finite; the error names the first bad (l, m).
    pub fn check_finite(&self) -> Result<()> {
        // one vectorisable pass for the common case; the search by (l, m) below only names
        // the first bad value
        if all_finite(&self.c) && all_finite(&self.s) {
            return match &self.secular {
                Some(sv) => sv.rates.check_finite(),
                None => Ok(()),
            };
        }
        for l in 0..=self.lmax {
            for m in 0..=l {
                let i = packed_index(l, m);
                for (which, v) in [("C", self.c[i]), ("S", self.s[i])] {
                    if !v.is_finite() {
                        return Err(Error::NonFiniteCoefficient {
                            which,
                            l,
                            m,
                            value: v,
                        });
                    }
                }
            }
        }
        match &self.secular {
            Some(sv) => sv.rates.check_finite(),
            None => Ok(()),
        }
    }

    /// The set truncated or zero-padded to `lmax`.
    pub fn resized(&self, lmax: usize) -> Self {
        let n = packed_len(lmax);
        let keep = n.min(self.len());
        let mut out = self.clone();
        out.lmax = lmax;
        out.c = resize_packed(&self.c, keep, n);
        out.s = resize_packed(&self.s, keep, n);
        out.c_sigma = self.c_sigma.as_ref().map(|v| resize_packed(v, keep, n));
        out.s_sigma = self.s_sigma.as_ref().map(|v| resize_packed(v, keep, n));
        if let Some(sv) = &mut out.secular {
            sv.rates = sv.rates.resized(lmax);
        }
        out
    }

    /// Multiplies every coefficient of degree l (and its sigma) by `weight(l)`.
    /// The rates of change, when present, are scaled alike.
    pub fn scale_by_degree(&mut self, mut weight: impl FnMut(usize) -> f64) {
        let weights: Vec<f64> = (0..=self.lmax).map(&mut weight).collect();
        self.scale_by_weights(&weights);
    }

    /// [`Coefficients::scale_by_degree`] with the weights of degrees 0..=L given.
    fn scale_by_weights(&mut self, weights: &[f64]) {
        if let Some(sv) = &mut self.secular {
            sv.rates.scale_by_weights(weights);
        }
        for (l, &w) in weights.iter().enumerate() {
            let range = packed_index(l, 0)..=packed_index(l, l);
            for v in &mut self.c[range.clone()] {
                *v *= w;
            }
            for v in &mut self.s[range.clone()] {
                *v *= w;
            }
            if let (Some(cs), Some(ss)) = (&mut self.c_sigma, &mut self.s_sigma) {
                for v in &mut cs[range.clone()] {
                    *v *= w.abs();
                }
                for v in &mut ss[range.clone()] {
                    *v *= w.abs();
                }
            }
        }
    }

    /// The same field expressed in another normalisation and phase convention.
    ///
    /// The field is invariant: C^B_lm = C^A_lm · (N^A_lm φ^A_m)/(N^B_lm φ^B_m), with φ_m = (−1)^m
    /// when the phase is on. The factor for a pair (A, B) is computed once in a canonical
    /// direction and applied as a product one way and a quotient the other, so that a round
    /// trip A → B → A returns every coefficient to within 1 ulp.
    pub fn converted(&self, to: Normalization, condon_shortley: bool) -> Result<Self> {
        let from = self.normalization;
        let mut out = self.clone();
        out.normalization = to;
        out.condon_shortley = condon_shortley;
        let flip_phase = self.condon_shortley != condon_shortley;
        // with the same normalisation and phase every factor below is exactly 1 and every sign
        // +1: the copy is already the result, bit for bit
        let identity = from == to && !flip_phase;
        let forward = (from as u8) <= (to as u8);
        let (lo, hi) = if forward { (from, to) } else { (to, from) };
        for l in (0..=self.lmax).filter(|_| !identity) {
            for m in 0..=l {
                // factor q = N^lo / N^hi; lo → hi multiplies, hi → lo divides.
                let q = if lo == hi {
                    1.0
                } else {
                    (lo.ln_factor_relative_to_geodesy(l, m)
                        - hi.ln_factor_relative_to_geodesy(l, m))
                    .exp()
                };
                let sign = if flip_phase && m % 2 == 1 { -1.0 } else { 1.0 };
                let i = packed_index(l, m);
                let apply = |v: f64| if forward { v * q } else { v / q };
                out.c[i] = sign * apply(self.c[i]);
                out.s[i] = sign * apply(self.s[i]);
                if let (Some(cs), Some(ss)) = (&mut out.c_sigma, &mut out.s_sigma) {
                    cs[i] = apply(cs[i]);
                    ss[i] = apply(ss[i]);
                }
            }
        }
        if let Some(sv) = &self.secular {
            let rates = sv.rates.converted(to, condon_shortley)?;
            out.secular = Some(Box::new(SecularVariation {
                epoch_year: sv.epoch_year,
                rates,
            }));
        }
        out.check_finite().map_err(|e| {
            Error::invalid(format!(
                "conversion from {from} to {to} is not representable in double precision: {e}"
            ))
        })?;
        Ok(out)
    }

    /// Shorthand for conversion to `geodesy` without phase, the engine's internal convention.
    pub fn to_geodesy(&self) -> Result<Self> {
        if self.normalization == Normalization::Geodesy && !self.condon_shortley {
            return Ok(self.clone());
        }
        self.converted(Normalization::Geodesy, false)
    }

    /// Coefficient-wise `self + factor · other` (same lmax, normalisation and phase required).
    pub fn add_scaled(&mut self, other: &Coefficients, factor: f64) -> Result<()> {
        if other.lmax != self.lmax
            || other.normalization != self.normalization
            || other.condon_shortley != self.condon_shortley
        {
            return Err(Error::ShapeMismatch(format!(
                "cannot combine a degree-{} {} set with a degree-{} {} set",
                self.lmax, self.normalization, other.lmax, other.normalization
            )));
        }
        for (a, b) in self.c.iter_mut().zip(&other.c) {
            *a += factor * b;
        }
        for (a, b) in self.s.iter_mut().zip(&other.s) {
            *a += factor * b;
        }
        Ok(())
    }

    /// Iterates over (l, m, C_lm, S_lm) in packed order.
    pub fn iter(&self) -> impl Iterator<Item = (usize, usize, f64, f64)> + '_ {
        (0..=self.lmax).flat_map(move |l| {
            (0..=l).map(move |m| {
                let i = packed_index(l, m);
                (l, m, self.c[i], self.s[i])
            })
        })
    }
}

/// Units of a rate of change of coefficients in `units`: `units/year` (`1/year` for
/// dimensionless ones).
pub fn rate_units(units: &str) -> String {
    if units.trim().is_empty() {
        "1/year".into()
    } else {
        format!("{}/year", units.trim())
    }
}

fn resize_packed(v: &[f64], keep: usize, n: usize) -> Vec<f64> {
    let mut out = vec![0.0; n];
    out[..keep].copy_from_slice(&v[..keep]);
    out
}

/// A packed triangle (`packed_index`) of degree `lmax` as the row-major (L+1) × (L+1) square
/// indexed [l, m], zeros above the diagonal (m > l): the layout of model files and of
/// numpy's C and S. Written once, row by row (the l + 1 packed values, then the zeros).
pub fn square_from_packed(packed: &[f64], lmax: usize) -> Vec<f64> {
    let n = lmax + 1;
    let mut out = Vec::with_capacity(n * n);
    for l in 0..n {
        let start = packed_index(l, 0);
        out.extend_from_slice(&packed[start..=start + l]);
        out.resize(out.len() + n - l - 1, 0.0);
    }
    out
}

/// [`square_from_packed`] of several triangles at once, in parallel (memory-bound copies: at
/// degree 255 the two squares of a model took about 70 µs one after the other).
pub fn squares_from_packed(packed: &[&[f64]], lmax: usize) -> Vec<Vec<f64>> {
    use rayon::prelude::*;
    packed
        .par_iter()
        .map(|p| square_from_packed(p, lmax))
        .collect()
}

/// Whether every value is finite, in blocks of 8 without an early exit inside a block, so the
/// test compiles to vector compares: the common case (no bad value) is one pass at memory
/// speed; callers that find a bad value search again to name it.
pub(crate) fn all_finite(values: &[f64]) -> bool {
    let mut blocks = values.chunks_exact(8);
    let whole = blocks.all(|b| b.iter().fold(true, |ok, v| ok & v.is_finite()));
    whole && blocks.remainder().iter().all(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_square_layout_holds_each_coefficient_at_l_m_and_zeros_above() {
        let lmax = 4;
        let packed: Vec<f64> = (0..packed_len(lmax)).map(|i| 1.0 + i as f64).collect();
        let square = square_from_packed(&packed, lmax);
        for l in 0..=lmax {
            for m in 0..=lmax {
                let want = if m <= l {
                    packed[packed_index(l, m)]
                } else {
                    0.0
                };
                assert_eq!(square[l * (lmax + 1) + m], want, "{l} {m}");
            }
        }
        assert_eq!(
            squares_from_packed(&[&packed, &packed], lmax),
            vec![square.clone(), square]
        );
    }

    fn sample(lmax: usize) -> Coefficients {
        let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
        for l in 0..=lmax {
            for m in 0..=l {
                c.set(
                    l,
                    m,
                    1.0 + 0.37 * l as f64 - 0.11 * m as f64,
                    0.5 - 0.07 * m as f64,
                );
            }
        }
        c
    }

    #[test]
    fn check_finite_names_every_bad_value_wherever_it_sits() {
        // every packed position of a degree-6 set (28 values, so whole blocks of 8 and a
        // remainder), each bad kind, in C and in S: the fast pass must not miss one and the
        // message must name its (l, m)
        let lmax = 6;
        assert!(sample(lmax).check_finite().is_ok());
        for l in 0..=lmax {
            for m in 0..=l {
                for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
                    for in_s in [false, true] {
                        if in_s && m == 0 {
                            continue;
                        }
                        let mut c = sample(lmax);
                        let (cv, sv) = (c.c(l, m), c.s(l, m));
                        if in_s {
                            c.set(l, m, cv, bad);
                        } else {
                            c.set(l, m, bad, sv);
                        }
                        match c.check_finite() {
                            Err(Error::NonFiniteCoefficient {
                                which,
                                l: el,
                                m: em,
                                ..
                            }) => {
                                assert_eq!((which, el, em), (if in_s { "S" } else { "C" }, l, m));
                            }
                            other => panic!("({l}, {m}) {bad} in S={in_s}: {other:?}"),
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn packed_index_is_triangular() {
        // common practice: row-major lower triangle
        assert_eq!(packed_index(0, 0), 0);
        assert_eq!(packed_index(1, 0), 1);
        assert_eq!(packed_index(1, 1), 2);
        assert_eq!(packed_index(2, 0), 3);
        assert_eq!(packed_len(2), 6);
    }

    #[test]
    fn schmidt_factor_is_one_over_sqrt_2l_plus_1() {
        // docs/conventions.md §2: schmidt = geodesy / sqrt(2l+1)
        let g = sample(8);
        let s = g.converted(Normalization::Schmidt, false).unwrap();
        for l in 0..=8 {
            for m in 0..=l {
                let expect = g.c(l, m) * ((2 * l + 1) as f64).sqrt();
                assert!((s.c(l, m) - expect).abs() <= 1e-14 * expect.abs().max(1.0));
            }
        }
    }

    #[test]
    fn unnormalized_factor_matches_closed_form() {
        // closed form (any text): geodesy N̄_21 = sqrt(2·5·1/6) = sqrt(5/3); unnormalised N = 1,
        // so C^unnorm_21 = C̄_21 · sqrt(5/3).
        let mut g = Coefficients::zeros(2, Normalization::Geodesy);
        g.set(2, 1, 1.0, 0.0);
        let u = g.converted(Normalization::Unnormalized, false).unwrap();
        assert!((u.c(2, 1) - (5.0f64 / 3.0).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn round_trips_are_within_one_ulp() {
        let g = sample(60);
        for &a in &Normalization::ALL {
            let start = g.converted(a, false).unwrap();
            for &b in &Normalization::ALL {
                for cs in [false, true] {
                    let back = start.converted(b, cs).unwrap().converted(a, false).unwrap();
                    for (x, y) in start.c_packed().iter().zip(back.c_packed()) {
                        let ulp = f64::EPSILON * x.abs();
                        assert!((x - y).abs() <= ulp, "{a}->{b}->{a}: {x} vs {y}");
                    }
                }
            }
        }
    }

    #[test]
    fn phase_flips_odd_orders() {
        let g = sample(3);
        let p = g.converted(Normalization::Geodesy, true).unwrap();
        assert_eq!(p.c(3, 1), -g.c(3, 1));
        assert_eq!(p.c(3, 2), g.c(3, 2));
    }

    #[test]
    fn non_finite_is_named() {
        let mut g = sample(4);
        g.set(3, 2, f64::NAN, 0.0);
        let msg = g.check_finite().unwrap_err().to_string();
        assert!(msg.contains("C_{3,2}"), "{msg}");
    }

    #[test]
    fn parse_normalization_names() {
        assert_eq!(
            "Schmidt".parse::<Normalization>().unwrap(),
            Normalization::Schmidt
        );
        let err = "full".parse::<Normalization>().unwrap_err().to_string();
        assert!(err.contains("full") && err.contains("geodesy"));
    }

    #[test]
    fn resize_keeps_low_degrees() {
        let g = sample(5);
        let t = g.resized(3);
        assert_eq!(t.lmax(), 3);
        assert_eq!(t.c(3, 2), g.c(3, 2));
        let p = t.resized(6);
        assert_eq!(p.c(6, 6), 0.0);
        assert_eq!(p.c(2, 1), g.c(2, 1));
    }
}
