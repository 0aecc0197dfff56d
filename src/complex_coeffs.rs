//! Complex coefficient sets a_lm, m = −l..l, as physics and seismology codes write them, and
//! their exact conversion to and from the engine's real sets (docs/conventions.md §2).
//!
//! Complex harmonics Y_lm(θ, λ) = N^c_lm P_l|m|(cos θ) e^{imλ} (times (−1)^m for m > 0 when the
//! Condon–Shortley phase is on), with Y_{l,−m} = (−1)^m conj(Y_lm) (phase on) or conj(Y_lm)
//! (phase off), so that f = Σ_l Σ_{m=−l..l} a_lm Y_lm is real when a_{l,−m} = (−1)^m conj(a_lm)
//! (phase on) or conj(a_lm) (phase off). N^c_lm is the real normalisation's factor without
//! its √(2 − δ_m0): `geodesy` √((2l+1)(l−m)!/(l+m)!), `schmidt` √((l−m)!/(l+m)!),
//! `orthonormal` √((2l+1)/(4π)(l−m)!/(l+m)!) (the usual complex orthonormal harmonics, DLMF
//! §14.30), `unnormalized` 1.
//!
//! From the real `geodesy` set without phase (C, S): a_l0 = C_l0 and, for m > 0,
//! a_lm = φ_m (C_lm − i S_lm)/√2, a_{l,−m} = (C_lm + i S_lm)/√2, φ_m = (−1)^m with the phase
//! and 1 without; other normalisations scale a_lm by N^c_geodesy / N^c.

use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};

/// A complex coefficient set to degree `lmax`: a_lm for m = −l..l at index l² + l + m.
#[derive(Debug, Clone, PartialEq)]
pub struct ComplexCoefficients {
    lmax: usize,
    re: Vec<f64>,
    im: Vec<f64>,
    pub normalization: Normalization,
    pub condon_shortley: bool,
    pub reference_radius_m: f64,
    pub gm_m3_s2: Option<f64>,
    pub units: String,
}

/// Index of (l, m), −l ≤ m ≤ l, in the complex layout.
#[inline]
pub fn complex_index(l: usize, m: i64) -> usize {
    (l * l + l).wrapping_add_signed(m as isize)
}

/// ln(N^c_geodesy / N^c) for the complex functions of `normalization` (module notes).
fn ln_to_geodesy(normalization: Normalization, l: usize, m: usize) -> f64 {
    let real = normalization.ln_factor_relative_to_geodesy(l, m);
    // the real unnormalised factor is 1 where the complex one is too, but the real geodesy
    // factor carries √2 for m > 0 and the complex one does not
    let extra = if normalization == Normalization::Unnormalized && m > 0 {
        0.5 * std::f64::consts::LN_2
    } else {
        0.0
    };
    -(real + extra)
}

impl ComplexCoefficients {
    /// A zero set.
    pub fn zeros(lmax: usize, normalization: Normalization, condon_shortley: bool) -> Self {
        let n = (lmax + 1) * (lmax + 1);
        ComplexCoefficients {
            lmax,
            re: vec![0.0; n],
            im: vec![0.0; n],
            normalization,
            condon_shortley,
            reference_radius_m: 1.0,
            gm_m3_s2: None,
            units: "1".into(),
        }
    }

    pub fn lmax(&self) -> usize {
        self.lmax
    }

    /// a_lm as (real, imaginary).
    pub fn get(&self, l: usize, m: i64) -> (f64, f64) {
        let i = complex_index(l, m);
        (self.re[i], self.im[i])
    }

    pub fn set(&mut self, l: usize, m: i64, re: f64, im: f64) {
        let i = complex_index(l, m);
        self.re[i] = re;
        self.im[i] = im;
    }

    /// The complex form of a real set, in the given complex normalisation and phase.
    pub fn from_real(
        real: &Coefficients,
        normalization: Normalization,
        condon_shortley: bool,
    ) -> Result<Self> {
        let g = real.to_geodesy()?;
        let mut out = ComplexCoefficients::zeros(g.lmax(), normalization, condon_shortley);
        out.reference_radius_m = real.reference_radius_m;
        out.gm_m3_s2 = real.gm_m3_s2;
        out.units = real.units.clone();
        let h = std::f64::consts::FRAC_1_SQRT_2;
        for l in 0..=g.lmax() {
            out.set(
                l,
                0,
                g.c(l, 0) * ln_to_geodesy(normalization, l, 0).exp(),
                0.0,
            );
            for m in 1..=l {
                let k = ln_to_geodesy(normalization, l, m).exp();
                let (c, s) = (g.c(l, m), g.s(l, m));
                let phase = if condon_shortley && m % 2 == 1 {
                    -1.0
                } else {
                    1.0
                };
                out.set(l, m as i64, phase * k * h * c, -phase * k * h * s);
                out.set(l, -(m as i64), k * h * c, k * h * s);
            }
        }
        Ok(out)
    }

    /// The real set (`geodesy`, no phase) of the same field. Fails, naming (l, m), when the
    /// coefficients do not describe a real field (a_{l,−m} must match a_lm, a_l0 real), beyond
    /// a relative tolerance of 1e-10.
    pub fn to_real(&self) -> Result<Coefficients> {
        let mut out = Coefficients::zeros(self.lmax, Normalization::Geodesy);
        out.condon_shortley = false;
        out.reference_radius_m = self.reference_radius_m;
        out.gm_m3_s2 = self.gm_m3_s2;
        out.units = self.units.clone();
        let h = std::f64::consts::FRAC_1_SQRT_2;
        let close =
            |a: f64, b: f64, scale: f64| (a - b).abs() <= 1e-10 * scale.max(f64::MIN_POSITIVE);
        for l in 0..=self.lmax {
            let (re0, im0) = self.get(l, 0);
            let k0 = ln_to_geodesy(self.normalization, l, 0).exp();
            if !close(im0, 0.0, re0.abs().max(im0.abs())) {
                return Err(Error::invalid(format!(
                    "complex coefficient a_({l},0) = {re0} + {im0}i is not real, so the set does not describe a real field"
                )));
            }
            out.set(l, 0, re0 / k0, 0.0);
            for m in 1..=l {
                let k = ln_to_geodesy(self.normalization, l, m).exp();
                let phase = if self.condon_shortley && m % 2 == 1 {
                    -1.0
                } else {
                    1.0
                };
                let (pr, pi) = self.get(l, m as i64);
                let (nr, ni) = self.get(l, -(m as i64));
                // a_m = φ (C − iS)/√2 · k, a_−m = (C + iS)/√2 · k; dividing by the same
                // rounded 1/√2 that `from_real` multiplied by returns each geodesy value to
                // within one ulp (multiplying by √2 instead can miss by two)
                let hk = h * k;
                let (c1, s1) = (phase * pr / hk, -phase * pi / hk);
                let (c2, s2) = (nr / hk, ni / hk);
                let scale = c1.abs().max(s1.abs()).max(c2.abs()).max(s2.abs());
                if !close(c1, c2, scale) || !close(s1, s2, scale) {
                    return Err(Error::invalid(format!(
                        "complex coefficients a_({l},{m}) and a_({l},-{m}) are not related as a real field requires ({} phase convention)",
                        if self.condon_shortley { "Condon–Shortley" } else { "no" }
                    )));
                }
                out.set(l, m, 0.5 * (c1 + c2), 0.5 * (s1 + s2));
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn orthonormal_complex_matches_the_textbook_relation() {
        // DLMF §14.30 (the real orthonormal function for m > 0 is √2 Re Y_lm, phase on): a
        // real geodesy C_11 = 1 is the field √3 sin θ cos λ, whose orthonormal complex
        // coefficients are a_1,±1 = ∓√(4π)/√2 (N^c_geodesy / N^c_orthonormal = √(4π)); then a
        // round trip through every normalisation and phase.
        let mut r = Coefficients::zeros(3, Normalization::Geodesy);
        r.set(1, 1, 1.0, 0.0);
        r.set(2, 1, 0.3, -0.7);
        r.set(3, 0, 0.25, 0.0);
        let c = ComplexCoefficients::from_real(&r, Normalization::Orthonormal, true).unwrap();
        let four_pi = (4.0 * std::f64::consts::PI).sqrt();
        let (re, im) = c.get(1, 1);
        assert!(
            (re + four_pi / 2f64.sqrt()).abs() < 1e-14 && im == 0.0,
            "{re} {im}"
        );
        let (re, _) = c.get(1, -1);
        assert!((re - four_pi / 2f64.sqrt()).abs() < 1e-14);
        for norm in Normalization::ALL {
            for phase in [false, true] {
                let c = ComplexCoefficients::from_real(&r, norm, phase).unwrap();
                let back = c.to_real().unwrap();
                for (l, m, cv, sv) in r.iter() {
                    assert!(
                        (back.c(l, m) - cv).abs() < 1e-15 && (back.s(l, m) - sv).abs() < 1e-15,
                        "{norm} {phase} ({l},{m})"
                    );
                }
            }
        }
    }

    #[test]
    fn sets_that_are_not_real_fields_are_refused_by_name() {
        let mut c = ComplexCoefficients::zeros(2, Normalization::Orthonormal, true);
        c.set(2, 1, 1.0, 0.0);
        let e = c.to_real().unwrap_err().to_string();
        assert!(e.contains("a_(2,1)"), "{e}");
    }
}
