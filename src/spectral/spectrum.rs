//! The spectrum of one model: degree variance and everything derived from it (docs/conventions.md §5).
//!
//! - Degree variance S_l = Σ_m (C̄_lm² + S̄_lm²) in `geodesy` (4π) normalisation, so that
//!   Σ_l S_l is the mean square of the field over the sphere (Parseval; common practice).
//! - Degree amplitude √S_l, per-coefficient power S_l/(2l+1), cumulative power Σ_{k≤l} S_k and
//!   field RMS √(Σ_{k≤l} S_k).
//! - Error degree variance E_l = Σ_m (σ_C² + σ_S²) and signal-to-noise √(S_l/E_l) (ratio of
//!   degree amplitudes) where sigmas are present.
//! - Confidence band: for an isotropic Gaussian field (2l+1)Ŝ_l/S_l ~ χ²(2l+1), so the interval
//!   for the true S_l at level c is [(2l+1)Ŝ_l/χ²_{(1+c)/2}, (2l+1)Ŝ_l/χ²_{(1−c)/2}]
//!   (e.g. Jenkins & Watts 1968, *Spectral Analysis and its Applications*, §6.3).
//! - Lowes–Mauersberger spectrum at radius r for Schmidt Gauss coefficients (Lowes 1966,
//!   J. Geophys. Res. 71:2179; Mauersberger 1956): R_l = (l+1)(a/r)^{2l+4} Σ_m (g_lm² + h_lm²),
//!   the mean square over the sphere of radius r of the field B = −∇V.
//! - Half-wavelength πR/l in km, R the model's reference radius.

use super::comparable::in_geodesy;
use super::degree_power::{error_sum_of_squares, sum_of_squares};
use super::power_law::{fit_power_law, log_chi2_moments, PowerLawFit};
use super::stats::chi2_quantile;
use super::table::SpectralTable;
use super::units::{half_wavelength_km, squared_units};
use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};

/// Degree variance S_l (l = 0..=lmax) after conversion to `geodesy` normalisation.
pub fn degree_variance(coeffs: &Coefficients) -> Vec<f64> {
    match in_geodesy(coeffs) {
        Ok(g) => sum_of_squares(&g),
        // Conversion only fails when a converted value overflows; report that as non-finite power.
        Err(_) => vec![f64::NAN; coeffs.lmax() + 1],
    }
}

/// Options of [`Spectrum::compute`].
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumOptions {
    /// Confidence level of the χ² band, strictly between 0 and 1 (default 0.95).
    pub confidence: f64,
    /// Degree range (inclusive) of the power-law fit, if one is wanted.
    pub fit_range: Option<(usize, usize)>,
    /// Radius (m) at which to evaluate the Lowes–Mauersberger spectrum, if wanted.
    pub lowes_radius_m: Option<f64>,
}

impl Default for SpectrumOptions {
    fn default() -> Self {
        SpectrumOptions {
            confidence: 0.95,
            fit_range: None,
            lowes_radius_m: None,
        }
    }
}

/// Lowes–Mauersberger spectrum at one radius.
#[derive(Debug, Clone, PartialEq)]
pub struct LowesSpectrum {
    pub radius_m: f64,
    /// R_l for l = 0..=lmax (R_0 = (a/r)^4 g_00², normally 0), in squared field units.
    pub power: Vec<f64>,
}

/// The spectrum of one model. All vectors are indexed by degree 0..=lmax.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    pub lmax: usize,
    pub reference_radius_m: f64,
    /// Units of the coefficients; powers carry the square of these.
    pub units: String,
    /// Normalisation the input came in (power is always computed in `geodesy`).
    pub input_normalization: Normalization,
    pub confidence: f64,
    pub degree_variance: Vec<f64>,
    pub degree_amplitude: Vec<f64>,
    pub per_coefficient_power: Vec<f64>,
    pub cumulative_power: Vec<f64>,
    pub cumulative_rms: Vec<f64>,
    pub half_wavelength_km: Vec<f64>,
    /// Lower and upper end of the χ² confidence interval of each S_l.
    pub band_lower: Vec<f64>,
    pub band_upper: Vec<f64>,
    pub error_degree_variance: Option<Vec<f64>>,
    pub signal_to_noise: Option<Vec<f64>>,
    pub lowes: Option<LowesSpectrum>,
    pub power_law: Option<PowerLawFit>,
}

/// Multipliers (lower, upper) turning Ŝ_l into its χ² confidence interval at `confidence`.
pub fn chi2_band_factors(degree: usize, confidence: f64) -> Result<(f64, f64)> {
    let nu = (2 * degree + 1) as f64;
    let upper_q = chi2_quantile(0.5 * (1.0 + confidence), nu)?;
    let lower_q = chi2_quantile(0.5 * (1.0 - confidence), nu)?;
    Ok((nu / upper_q, nu / lower_q))
}

pub(crate) fn check_confidence(confidence: f64) -> Result<()> {
    if confidence > 0.0 && confidence < 1.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "confidence level must lie strictly between 0 and 1 (e.g. 0.95), got {confidence}"
        )))
    }
}

impl Spectrum {
    /// Computes the spectrum of `coeffs` (any normalisation; converted to `geodesy` first).
    pub fn compute(coeffs: &Coefficients, options: &SpectrumOptions) -> Result<Spectrum> {
        check_confidence(options.confidence)?;
        coeffs.check_finite()?;
        let geodesy = in_geodesy(coeffs)?;
        let lmax = geodesy.lmax();
        let s = sum_of_squares(&geodesy);
        let per_coefficient: Vec<f64> = s
            .iter()
            .enumerate()
            .map(|(l, v)| v / (2 * l + 1) as f64)
            .collect();
        let cumulative: Vec<f64> = s
            .iter()
            .scan(0.0, |acc, v| {
                *acc += v;
                Some(*acc)
            })
            .collect();
        let mut band_lower = Vec::with_capacity(lmax + 1);
        let mut band_upper = Vec::with_capacity(lmax + 1);
        for (l, v) in s.iter().enumerate() {
            let (lo, hi) = chi2_band_factors(l, options.confidence)?;
            band_lower.push(lo * v);
            band_upper.push(hi * v);
        }
        let error = error_sum_of_squares(&geodesy);
        let snr = error.as_ref().map(|e| {
            s.iter()
                .zip(e)
                .map(|(sig, err)| {
                    if *err > 0.0 {
                        (sig / err).sqrt()
                    } else {
                        f64::NAN
                    }
                })
                .collect()
        });
        let lowes = match options.lowes_radius_m {
            Some(r) => Some(lowes_spectrum(coeffs, r)?),
            None => None,
        };
        let power_law = match options.fit_range {
            Some((lo, hi)) => Some(fit_power_law(&per_coefficient, lo, hi)?),
            None => None,
        };
        Ok(Spectrum {
            lmax,
            reference_radius_m: coeffs.reference_radius_m,
            units: coeffs.units.clone(),
            input_normalization: coeffs.normalization,
            confidence: options.confidence,
            degree_amplitude: s.iter().map(|v| v.sqrt()).collect(),
            per_coefficient_power: per_coefficient,
            cumulative_rms: cumulative.iter().map(|v| v.sqrt()).collect(),
            cumulative_power: cumulative,
            half_wavelength_km: (0..=lmax)
                .map(|l| half_wavelength_km(l, coeffs.reference_radius_m))
                .collect(),
            degree_variance: s,
            band_lower,
            band_upper,
            error_degree_variance: error,
            signal_to_noise: snr,
            lowes,
            power_law,
        })
    }

    /// RMS of the field about its mean: √(Σ_{l≥1} S_l).
    pub fn rms_about_mean(&self) -> f64 {
        self.degree_variance.iter().skip(1).sum::<f64>().sqrt()
    }

    /// Fitted per-coefficient power (NaN outside l ≥ 1 or without a fit).
    pub fn power_law_values(&self) -> Option<Vec<f64>> {
        let fit = self.power_law.as_ref()?;
        Some(
            (0..=self.lmax)
                .map(|l| {
                    if l == 0 {
                        f64::NAN
                    } else {
                        fit.per_coefficient_power(l)
                    }
                })
                .collect(),
        )
    }

    /// All per-degree quantities as named columns with units, first `degree`.
    pub fn to_table(&self) -> SpectralTable {
        let sq = squared_units(&self.units);
        let mut t = SpectralTable::with_degrees(self.lmax);
        let pct = format!("{}%", trim_number(self.confidence * 100.0));
        t.push(
            "degree_variance",
            &sq,
            "degree variance S_l = sum over m of (C_lm^2 + S_lm^2), 4pi-normalised",
            self.degree_variance.clone(),
        );
        t.push("degree_variance_lower", &sq, &format!("lower end of the {pct} chi-squared confidence interval of S_l (2l+1 degrees of freedom)"), self.band_lower.clone());
        t.push("degree_variance_upper", &sq, &format!("upper end of the {pct} chi-squared confidence interval of S_l (2l+1 degrees of freedom)"), self.band_upper.clone());
        t.push(
            "degree_amplitude",
            &self.units,
            "degree amplitude sqrt(S_l)",
            self.degree_amplitude.clone(),
        );
        t.push(
            "per_coefficient_power",
            &sq,
            "power per coefficient S_l/(2l+1)",
            self.per_coefficient_power.clone(),
        );
        t.push(
            "cumulative_power",
            &sq,
            "cumulative power: sum of S_k for k <= l",
            self.cumulative_power.clone(),
        );
        t.push(
            "cumulative_rms",
            &self.units,
            "RMS of the field over the sphere up to degree l",
            self.cumulative_rms.clone(),
        );
        t.push(
            "half_wavelength_km",
            "km",
            "half-wavelength pi R / l on the reference sphere",
            self.half_wavelength_km.clone(),
        );
        if let Some(e) = &self.error_degree_variance {
            t.push(
                "error_degree_variance",
                &sq,
                "error degree variance: sum over m of (sigma_C^2 + sigma_S^2)",
                e.clone(),
            );
        }
        if let Some(snr) = &self.signal_to_noise {
            t.push(
                "signal_to_noise",
                "1",
                "signal-to-noise ratio of degree amplitudes sqrt(S_l / error degree variance)",
                snr.clone(),
            );
        }
        if let Some(lowes) = &self.lowes {
            t.push(
                "lowes_power",
                &sq,
                &format!(
                    "Lowes-Mauersberger spectrum R_l at radius {} km",
                    trim_number(lowes.radius_m / 1000.0)
                ),
                lowes.power.clone(),
            );
        }
        if let (Some(fit), Some(values)) = (&self.power_law, self.power_law_values()) {
            let ratio: Vec<f64> = self
                .per_coefficient_power
                .iter()
                .zip(&values)
                .map(|(o, f)| if *o > 0.0 { o / f } else { f64::NAN })
                .collect();
            let dev_sigma: Vec<f64> = (0..=self.lmax)
                .map(|l| {
                    if l == 0 || self.per_coefficient_power[l] <= 0.0 {
                        return f64::NAN;
                    }
                    let (bias, var) = log_chi2_moments(l);
                    ((self.per_coefficient_power[l].ln() - bias) - values[l].ln()) / var.sqrt()
                })
                .collect();
            t.push(
                "power_law_per_coefficient",
                &sq,
                &format!(
                    "fitted power law A l^-p per coefficient (fit over degrees {}-{})",
                    fit.lmin, fit.lmax
                ),
                values,
            );
            t.push(
                "power_law_ratio",
                "1",
                "observed over fitted per-coefficient power",
                ratio,
            );
            t.push("power_law_deviation_sigma", "1", "deviation of ln(observed power) from the power law in units of its chi-squared sampling sigma (bias removed)", dev_sigma);
            t.number_attribute("power_law_amplitude", fit.amplitude);
            t.number_attribute("power_law_amplitude_sigma", fit.amplitude_sigma);
            t.number_attribute("power_law_exponent", fit.exponent);
            t.number_attribute("power_law_exponent_sigma", fit.exponent_sigma);
            t.number_attribute("power_law_reduced_chi2", fit.reduced_chi2);
            t.attribute(
                "power_law_degree_range",
                format!("{}-{}", fit.lmin, fit.lmax),
            );
        }
        t.number_attribute("confidence_level", self.confidence);
        t.number_attribute("reference_radius_m", self.reference_radius_m);
        t.attribute("coefficient_units", &self.units);
        t.attribute(
            "normalization",
            format!("geodesy (4pi); input was {}", self.input_normalization),
        );
        t
    }

    /// A few lines for people: RMS, fit, band level.
    pub fn summary(&self) -> String {
        let units = if self.units.trim() == "1" {
            "(dimensionless)"
        } else {
            self.units.trim()
        };
        let mut out = format!(
            "degrees 0-{}, reference radius {} km, coefficient units {units}\nRMS of the expanded function on the reference sphere {:.6e}, about its mean {:.6e}\n",
            self.lmax,
            trim_number(self.reference_radius_m / 1000.0),
            self.cumulative_rms.last().copied().unwrap_or(0.0),
            self.rms_about_mean(),
        );
        if let Some(lowes) = &self.lowes {
            let total: f64 = lowes.power.iter().sum();
            let dipole = lowes.power.get(1).copied().unwrap_or(0.0);
            out += &format!(
                "Lowes-Mauersberger power at r = {} km: total {:.6e} (RMS field {:.6e}), degree 1 carries {:.1}%\n",
                trim_number(lowes.radius_m / 1000.0),
                total,
                total.sqrt(),
                if total > 0.0 { 100.0 * dipole / total } else { 0.0 }
            );
        }
        if let Some(fit) = &self.power_law {
            out += &format!(
                "power law over degrees {}-{}: per-coefficient power = {:.4e} ± {:.2e} · l^-({:.4} ± {:.4}); reduced chi2 {:.2}{}\n",
                fit.lmin,
                fit.lmax,
                fit.amplitude,
                fit.amplitude_sigma,
                fit.exponent,
                fit.exponent_sigma,
                fit.reduced_chi2,
                if fit.reduced_chi2 > 1.0 { " (uncertainties scaled up by it)" } else { "" }
            );
            // Kaula-type form: RMS per coefficient K·l^-q with K = √A, q = p/2.
            out += &format!(
                "  as an RMS per coefficient (Kaula form): {:.4e} · l^-{:.4}\n",
                fit.amplitude.sqrt(),
                fit.exponent / 2.0
            );
        }
        if let Some(snr) = &self.signal_to_noise {
            if let Some(l) =
                (1..=self.lmax).find(|&l| self.degree_variance[l] > 0.0 && snr[l] < 1.0)
            {
                out += &format!(
                    "signal-to-noise falls below 1 at degree {l} (half-wavelength {:.0} km)\n",
                    self.half_wavelength_km[l]
                );
            }
        }
        out
    }
}

/// Lowes–Mauersberger spectrum of `coeffs` (converted to Schmidt) at radius `radius_m`.
pub fn lowes_spectrum(coeffs: &Coefficients, radius_m: f64) -> Result<LowesSpectrum> {
    if !(radius_m > 0.0 && radius_m.is_finite()) {
        return Err(Error::invalid(format!(
            "Lowes spectrum radius must be positive, got {radius_m} m"
        )));
    }
    let schmidt = coeffs.converted(Normalization::Schmidt, false)?;
    let ratio_ln = (coeffs.reference_radius_m / radius_m).ln();
    let power = sum_of_squares(&schmidt)
        .iter()
        .enumerate()
        .map(|(l, v)| (l as f64 + 1.0) * ((2 * l + 4) as f64 * ratio_ln).exp() * v)
        .collect();
    Ok(LowesSpectrum { radius_m, power })
}

/// Number without trailing zeros (for labels and attributes).
pub(crate) fn trim_number(v: f64) -> String {
    let s = format!("{v:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axial_dipole_lowes_power_is_two_g10_squared() {
        // Axial dipole: B_r = 2 g10 (a/r)^3 cosθ, B_θ = g10 (a/r)^3 sinθ, so the mean square of
        // |B| over the sphere of radius r is 2 g10² (a/r)^6 (any geomagnetism text).
        let mut c = Coefficients::zeros(3, Normalization::Schmidt);
        c.set(1, 0, -29_400.0, 0.0);
        c.reference_radius_m = 6_371_200.0;
        c.units = "nT".into();
        let r = 6_371_200.0 + 400e3;
        let s = Spectrum::compute(
            &c,
            &SpectrumOptions {
                lowes_radius_m: Some(r),
                ..Default::default()
            },
        )
        .unwrap();
        let expect = 2.0 * 29_400f64.powi(2) * (6_371_200.0 / r).powi(6);
        let got = s.lowes.unwrap().power[1];
        assert!((got / expect - 1.0).abs() < 1e-14, "{got} vs {expect}");
    }

    #[test]
    fn band_brackets_estimate_and_narrows_with_degree() {
        let mut c = Coefficients::zeros(50, Normalization::Geodesy);
        for l in 0..=50 {
            c.set(l, 0, 1.0, 0.0);
        }
        let s = Spectrum::compute(&c, &SpectrumOptions::default()).unwrap();
        for l in 0..=50 {
            assert!(
                s.band_lower[l] < s.degree_variance[l] && s.degree_variance[l] < s.band_upper[l]
            );
        }
        let width = |l: usize| s.band_upper[l] / s.band_lower[l];
        assert!(width(50) < width(10) && width(10) < width(2));
    }

    #[test]
    fn bad_confidence_is_refused() {
        let c = Coefficients::zeros(4, Normalization::Geodesy);
        let err = Spectrum::compute(
            &c,
            &SpectrumOptions {
                confidence: 95.0,
                ..Default::default()
            },
        )
        .unwrap_err();
        assert!(err.to_string().contains("confidence"));
    }
}
