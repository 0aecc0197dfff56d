//! The filter spec syntax: `KIND:ARGS`, several chained with `+`.
//!
//! | spec | filter |
//! |---|---|
//! | `gauss:R_KM` | Gaussian smoothing, half-width R_KM kilometres |
//! | `lowpass:L1-L2` | 1 to L1, cosine taper to 0 at L2 (`L-L`: ideal cut keeping ≤ L) |
//! | `highpass:L1-L2` | 0 to L1, cosine taper to 1 at L2 (`L-L`: ideal cut keeping ≥ L) |
//! | `bandpass:L1-L2-L3-L4` | rising taper L1..L2, flat, falling taper L3..L4 |
//! | `butterworth:L0,N` | 1/sqrt(1 + (l/L0)^{2N}) |
//! | `wiener:SIGNAL.csv,NOISE.csv` or `wiener:SIGNAL.csv,noise=X` | S_l/(S_l + N_l) |
//!
//! Every error names the spec as written and says what was expected. Spectrum paths in a
//! `wiener` spec cannot contain `+` or `,` (they separate chain members and arguments). The
//! `gauss` half-width is measured on the sphere of the model's reference radius.

use std::path::{Path, PathBuf};

use super::butterworth::Butterworth;
use super::chain::Filter;
use super::gauss::GaussFilter;
use super::taper::{Bandpass, Highpass, Lowpass};
use super::wiener::{no_spectrum_files, NoiseSource, SpectrumReader, WienerFilter};
use crate::error::{Error, Result};

/// The kinds accepted, for error messages.
pub const KINDS: &str = "gauss, lowpass, highpass, bandpass, butterworth, wiener";

/// Parses one filter spec (no `+`) that names no spectrum files (a `wiener` spec is refused:
/// parse those with [`parse_one_with`] and a reader of spectra).
pub fn parse_one(spec: &str) -> Result<Filter> {
    parse_one_with(spec, None, &no_spectrum_files)
}

/// Parses one filter spec; the spectra a `wiener` spec names are obtained from `read`, with
/// relative paths resolved against `base` when given.
pub fn parse_one_with(spec: &str, base: Option<&Path>, read: SpectrumReader) -> Result<Filter> {
    let spec = spec.trim();
    let (kind, args) = spec.split_once(':').ok_or_else(|| {
        Error::invalid(format!(
            "filter '{spec}': expected KIND:ARGS with KIND one of {KINDS} (e.g. gauss:300)"
        ))
    })?;
    let kind = kind.trim().to_ascii_lowercase();
    let args = args.trim();
    let bad = |what: &str| Error::invalid(format!("filter '{spec}': expected {what}"));
    match kind.as_str() {
        "gauss" | "gaussian" => {
            let r = args.parse::<f64>().map_err(|_| {
                bad("gauss:R_KM with the half-width R_KM in kilometres, e.g. gauss:300")
            })?;
            GaussFilter::new(r)
                .map(Filter::Gauss)
                .map_err(|e| Error::invalid(format!("filter '{spec}': {e}")))
        }
        "lowpass" | "highpass" => {
            let d = degrees(args, 2).ok_or_else(|| {
                bad(&format!(
                    "{kind}:L1-L2 with integer degrees L1 ≤ L2, e.g. {kind}:40-50"
                ))
            })?;
            if kind == "lowpass" {
                Ok(Filter::Lowpass(Lowpass::new(d[0], d[1])?))
            } else {
                Ok(Filter::Highpass(Highpass::new(d[0], d[1])?))
            }
        }
        "bandpass" => {
            let d = degrees(args, 4).ok_or_else(|| {
                bad("bandpass:L1-L2-L3-L4 with integer degrees L1 ≤ L2 ≤ L3 ≤ L4, e.g. bandpass:10-15-40-50")
            })?;
            Ok(Filter::Bandpass(Bandpass::new(d[0], d[1], d[2], d[3])?))
        }
        "butterworth" => {
            let expected = "butterworth:L0,N with a corner degree L0 > 0 and an integer order N ≥ 1, e.g. butterworth:30,4";
            let (l0, n) = args.split_once(',').ok_or_else(|| bad(expected))?;
            let l0 = l0.trim().parse::<f64>().map_err(|_| bad(expected))?;
            let n = n.trim().parse::<u32>().map_err(|_| bad(expected))?;
            Ok(Filter::Butterworth(Butterworth::new(l0, n)?))
        }
        "wiener" => {
            let expected = "wiener:SIGNAL.csv,NOISE.csv or wiener:SIGNAL.csv,noise=LEVEL (degree-variance spectra)";
            let (signal, noise) = args.split_once(',').ok_or_else(|| bad(expected))?;
            let (signal, noise) = (signal.trim(), noise.trim());
            if signal.is_empty() || noise.is_empty() {
                return Err(bad(expected));
            }
            let noise = match noise.strip_prefix("noise=") {
                Some(level) => {
                    NoiseSource::Constant(level.trim().parse::<f64>().map_err(|_| {
                        bad("noise=LEVEL with LEVEL a degree variance such as 1e-18")
                    })?)
                }
                None => NoiseSource::File(resolve(noise, base)),
            };
            WienerFilter::load(&resolve(signal, base), noise, read)
                .map(Filter::Wiener)
                .map_err(|e| Error::invalid(format!("filter '{spec}': {e}")))
        }
        other => Err(Error::invalid(format!(
            "filter '{spec}': unknown kind '{other}', expected one of {KINDS}"
        ))),
    }
}

/// Splits `spec` on `+` and parses each part (spectra from `read`, see [`parse_one_with`]).
pub fn parse_chain(spec: &str, base: Option<&Path>, read: SpectrumReader) -> Result<Vec<Filter>> {
    if spec.trim().is_empty() {
        return Ok(Vec::new());
    }
    spec.split('+')
        .map(|part| {
            if part.trim().is_empty() {
                Err(Error::invalid(format!(
                    "filter chain '{spec}': empty part between '+' signs"
                )))
            } else {
                parse_one_with(part, base, read)
            }
        })
        .collect()
}

fn resolve(path: &str, base: Option<&Path>) -> PathBuf {
    let p = PathBuf::from(path);
    match base {
        Some(b) if p.is_relative() => b.join(p),
        _ => p,
    }
}

/// `count` non-negative integers separated by '-'.
fn degrees(args: &str, count: usize) -> Option<Vec<usize>> {
    let parts: Vec<Option<usize>> = args.split('-').map(|p| p.trim().parse().ok()).collect();
    if parts.len() != count {
        return None;
    }
    parts.into_iter().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_each_kind() {
        assert_eq!(
            parse_one("gauss:300").unwrap(),
            Filter::Gauss(GaussFilter::new(300.0).unwrap())
        );
        assert_eq!(
            parse_one(" lowpass:40-50 ").unwrap(),
            Filter::Lowpass(Lowpass { l1: 40, l2: 50 })
        );
        assert_eq!(
            parse_one("highpass:3-3").unwrap(),
            Filter::Highpass(Highpass { l1: 3, l2: 3 })
        );
        assert_eq!(
            parse_one("bandpass:10-15-40-50").unwrap(),
            Filter::Bandpass(Bandpass {
                l1: 10,
                l2: 15,
                l3: 40,
                l4: 50
            })
        );
        assert_eq!(
            parse_one("butterworth:30,4").unwrap(),
            Filter::Butterworth(Butterworth {
                corner_degree: 30.0,
                order: 4
            })
        );
    }

    #[test]
    fn errors_name_the_spec_and_the_expectation() {
        let cases = [
            ("lowpass:50-40", "lowpass:50-40: L1 must not exceed L2"),
            ("lowpass:50", "expected lowpass:L1-L2"),
            ("gauss:wide", "filter 'gauss:wide': expected gauss:R_KM"),
            ("gauss:-3", "positive"),
            ("smooth:3", "unknown kind 'smooth'"),
            ("300", "expected KIND:ARGS"),
            ("butterworth:30", "butterworth:L0,N"),
            ("butterworth:30,0", "order N must be at least 1"),
            ("bandpass:1-2-3", "bandpass:L1-L2-L3-L4"),
            ("wiener:signal.csv", "wiener:SIGNAL.csv,NOISE.csv"),
            ("wiener:does-not-exist.csv,noise=1e-3", "does-not-exist.csv"),
        ];
        for (spec, want) in cases {
            let msg = parse_one(spec).unwrap_err().to_string();
            assert!(msg.contains(want), "{spec}: {msg}");
        }
        let msg = parse_chain("gauss:300++lowpass:3-4", None, &no_spectrum_files)
            .unwrap_err()
            .to_string();
        assert!(msg.contains("empty part"), "{msg}");
    }
}
