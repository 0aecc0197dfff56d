//! A chain of degree-domain filters: the combined weight is the product of the members'
//! weights, W_l = Π_k W_l^(k), so the order of the members does not matter.

use std::path::Path;

use super::butterworth::Butterworth;
use super::gauss::GaussFilter;
use super::spec;
use super::taper::{Bandpass, Highpass, Lowpass};
use super::wiener::{no_spectrum_files, SpectrumReader, WienerFilter};
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

/// One degree-domain filter.
#[derive(Debug, Clone, PartialEq)]
pub enum Filter {
    Gauss(GaussFilter),
    Lowpass(Lowpass),
    Highpass(Highpass),
    Bandpass(Bandpass),
    Butterworth(Butterworth),
    Wiener(WienerFilter),
}

impl Filter {
    /// W_0..=W_lmax. `reference_radius_m` is the radius of the sphere the coefficients
    /// live on; only distance-based filters (gauss) use it.
    pub fn weights(&self, lmax: usize, reference_radius_m: f64) -> Result<Vec<f64>> {
        Ok(match self {
            Filter::Gauss(f) => f.weights(lmax, reference_radius_m)?,
            Filter::Lowpass(f) => f.weights(lmax),
            Filter::Highpass(f) => f.weights(lmax),
            Filter::Bandpass(f) => f.weights(lmax),
            Filter::Butterworth(f) => f.weights(lmax),
            Filter::Wiener(f) => f.weights(lmax)?,
        })
    }

    /// The spec keyword of this filter (`gauss`, `lowpass`, …).
    pub fn kind(&self) -> &'static str {
        match self {
            Filter::Gauss(_) => "gauss",
            Filter::Lowpass(_) => "lowpass",
            Filter::Highpass(_) => "highpass",
            Filter::Bandpass(_) => "bandpass",
            Filter::Butterworth(_) => "butterworth",
            Filter::Wiener(_) => "wiener",
        }
    }

    /// The spec that rebuilds this filter (`gauss:300`, `lowpass:40-50`, …).
    pub fn spec(&self) -> String {
        match self {
            Filter::Gauss(f) => format!("gauss:{}", f.half_width_km),
            Filter::Lowpass(f) => format!("lowpass:{}-{}", f.l1, f.l2),
            Filter::Highpass(f) => format!("highpass:{}-{}", f.l1, f.l2),
            Filter::Bandpass(f) => format!("bandpass:{}-{}-{}-{}", f.l1, f.l2, f.l3, f.l4),
            Filter::Butterworth(f) => format!("butterworth:{},{}", f.corner_degree, f.order),
            Filter::Wiener(f) => f.spec(),
        }
    }

    /// One line in words, for terminals and reports.
    pub fn explain(&self) -> String {
        match self {
            Filter::Gauss(f) => format!(
                "Gaussian smoothing, half-width {} km (Jekeli 1981)",
                f.half_width_km
            ),
            Filter::Lowpass(f) if f.l1 == f.l2 => {
                format!("ideal low-pass keeping degrees ≤ {}", f.l1)
            }
            Filter::Lowpass(f) => format!(
                "low-pass: 1 to degree {}, cosine taper to 0 at degree {}",
                f.l1, f.l2
            ),
            Filter::Highpass(f) if f.l1 == f.l2 => {
                format!("ideal high-pass keeping degrees ≥ {}", f.l1)
            }
            Filter::Highpass(f) => format!(
                "high-pass: 0 to degree {}, cosine taper to 1 at degree {}",
                f.l1, f.l2
            ),
            Filter::Bandpass(f) => format!(
                "band-pass: taper up {}..{}, flat to {}, taper down to 0 at {}",
                f.l1, f.l2, f.l3, f.l4
            ),
            Filter::Butterworth(f) => format!(
                "Butterworth low-pass, corner degree {}, order {} (amplitude 1/√2 at the corner)",
                f.corner_degree, f.order
            ),
            Filter::Wiener(f) => format!(
                "Wiener filter S/(S+N), signal spectrum {}, noise {}",
                f.signal_path.display(),
                match &f.noise {
                    super::wiener::NoiseLevel::Spectrum { path, .. } => path.display().to_string(),
                    super::wiener::NoiseLevel::Constant(v) =>
                        format!("degree variance {v:e} at every degree"),
                }
            ),
        }
    }
}

/// An ordered list of filters applied together (possibly empty: all weights 1).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FilterChain {
    pub filters: Vec<Filter>,
}

impl FilterChain {
    /// Parses one spec such as `gauss:300` or a chain `gauss:300+lowpass:40-50` that names no
    /// spectrum files (`wiener` needs [`FilterChain::parse_with`]; for files the caller is
    /// `io::filter_spectra::parse_filter_chain`).
    pub fn parse(spec: &str) -> Result<FilterChain> {
        Self::parse_with(spec, None, &no_spectrum_files)
    }

    /// Parses a spec or chain; the spectra named by `wiener` specs come from `read`, relative
    /// paths resolved against `base` (the folder of a config file) when given.
    pub fn parse_with(
        spec: &str,
        base: Option<&Path>,
        read: SpectrumReader,
    ) -> Result<FilterChain> {
        Ok(FilterChain {
            filters: spec::parse_chain(spec, base, read)?,
        })
    }

    /// Several specs (each may itself be a `+` chain), as given by repeated `--filter`, naming
    /// no spectrum files.
    pub fn from_specs(specs: &[String]) -> Result<FilterChain> {
        Self::from_specs_with(specs, &no_spectrum_files)
    }

    /// Several specs with the spectra of `wiener` specs from `read`.
    pub fn from_specs_with(specs: &[String], read: SpectrumReader) -> Result<FilterChain> {
        let mut filters = Vec::new();
        for s in specs {
            filters.extend(spec::parse_chain(s, None, read)?);
        }
        Ok(FilterChain { filters })
    }

    pub fn is_empty(&self) -> bool {
        self.filters.is_empty()
    }

    /// Combined weights W_0..=W_lmax: the product of every member's weights.
    pub fn weights(&self, lmax: usize, reference_radius_m: f64) -> Result<Vec<f64>> {
        let mut w = vec![1.0; lmax + 1];
        for f in &self.filters {
            for (acc, v) in w.iter_mut().zip(f.weights(lmax, reference_radius_m)?) {
                *acc *= v;
            }
        }
        Ok(w)
    }

    /// Multiplies every coefficient (and its sigma) of degree l by W_l, using the set's own
    /// reference radius.
    pub fn apply(&self, coeffs: &mut Coefficients) -> Result<()> {
        if self.is_empty() {
            return Ok(());
        }
        let w = self.weights(coeffs.lmax(), coeffs.reference_radius_m)?;
        coeffs.scale_by_degree(|l| w[l]);
        Ok(())
    }

    /// The canonical spec of the chain (`gauss:300+lowpass:40-50`, empty when no filter):
    /// what provenance records, and what [`FilterChain::parse`] turns back into this chain.
    pub fn describe(&self) -> String {
        self.filters
            .iter()
            .map(Filter::spec)
            .collect::<Vec<_>>()
            .join("+")
    }

    /// One line per filter in words.
    pub fn explain(&self) -> Vec<String> {
        self.filters.iter().map(Filter::explain).collect()
    }

    /// The first degree at which the combined weight drops below `level` (e.g. 0.5), if any
    /// degree up to `lmax` does.
    pub fn degree_below(
        &self,
        level: f64,
        lmax: usize,
        reference_radius_m: f64,
    ) -> Result<Option<usize>> {
        if !(level.is_finite()) {
            return Err(Error::invalid(format!(
                "weight level must be finite, got {level}"
            )));
        }
        let w = self.weights(lmax, reference_radius_m)?;
        Ok(w.iter().position(|&v| v < level))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const EARTH_M: f64 = 6_371_000.0;

    #[test]
    fn describe_round_trips_through_parse() {
        let chain = FilterChain::from_specs(&[
            "gauss:250.5+lowpass:40-50".to_string(),
            "butterworth:30,4".to_string(),
            "bandpass:2-4-60-80".to_string(),
        ])
        .unwrap();
        let text = chain.describe();
        assert_eq!(
            text,
            "gauss:250.5+lowpass:40-50+butterworth:30,4+bandpass:2-4-60-80"
        );
        assert_eq!(FilterChain::parse(&text).unwrap(), chain);
        assert!(FilterChain::parse("").unwrap().is_empty());
    }

    #[test]
    fn chain_weight_is_the_product() {
        let a = FilterChain::parse("gauss:400").unwrap();
        let b = FilterChain::parse("lowpass:20-60").unwrap();
        let ab = FilterChain::parse("gauss:400+lowpass:20-60").unwrap();
        let (wa, wb, wab) = (
            a.weights(80, EARTH_M).unwrap(),
            b.weights(80, EARTH_M).unwrap(),
            ab.weights(80, EARTH_M).unwrap(),
        );
        for l in 0..=80 {
            assert_eq!(wab[l], wa[l] * wb[l]);
        }
        assert_eq!(b.degree_below(0.5, 80, EARTH_M).unwrap(), Some(41));
    }
}
