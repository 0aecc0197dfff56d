//! Radial continuation of a field given on the sphere of radius R to the sphere of radius r.
//!
//! A field harmonic outside the sphere R (a potential, or any field treated as one) has degree-l
//! part proportional to (R/r)^{l+1} (Heiskanen & Moritz 1967, *Physical Geodesy*,
//! ch. 1; docs/conventions.md §6). Continuation multiplies the coefficients by
//!
//!   k_l = (R/r)^{l+1}.
//!
//! Upward (r > R) this is exact and damps the high degrees. Downward (r < R) it is the
//! inverse of an upward continuation and amplifies each degree by (R/r)^{l+1}, noise
//! included, up to (R/r)^{lmax+1} at the top degree: an ill-posed step. It is refused when that
//! amplification exceeds [`ContinuationOptions::max_amplification`] (default
//! [`DEFAULT_MAX_AMPLIFICATION`] = 1e3) unless a regularisation is stated:
//!
//! - [`DownwardRegularization::Tikhonov`]: with u_l = (r/R)^{l+1} the upward operator from r to
//!   R, k_l = u_l/(u_l² + α), the Tikhonov-regularised inverse of a diagonal operator (Tikhonov
//!   & Arsenin 1977, *Solutions of Ill-Posed Problems*; common practice for downward
//!   continuation). Its amplification never exceeds 1/(2√α).
//! - [`DownwardRegularization::Cutoff`]: k_l = (R/r)^{l+1} for l ≤ L_c and 0 above (truncated
//!   singular-value inverse; common practice). Amplification (R/r)^{L_c+1}.

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

/// Default cap on the amplification a downward continuation may apply without regularisation.
pub const DEFAULT_MAX_AMPLIFICATION: f64 = 1e3;

/// How a downward continuation is stabilised.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DownwardRegularization {
    /// k_l = u_l/(u_l² + α) with u_l = (r/R)^{l+1}; α > 0 (dimensionless).
    Tikhonov { alpha: f64 },
    /// k_l = (R/r)^{l+1} up to degree `lmax`, 0 above.
    Cutoff { lmax: usize },
}

impl DownwardRegularization {
    /// The spec form, `tikhonov:ALPHA` or `cutoff:L`, that [`str::parse`] reads back.
    pub fn describe(&self) -> String {
        match self {
            DownwardRegularization::Tikhonov { alpha } => format!("tikhonov:{alpha:e}"),
            DownwardRegularization::Cutoff { lmax } => format!("cutoff:{lmax}"),
        }
    }
}

impl std::str::FromStr for DownwardRegularization {
    type Err = Error;

    /// Parses `tikhonov:ALPHA` (ALPHA > 0) or `cutoff:L` (a degree).
    fn from_str(spec: &str) -> Result<Self> {
        let bad = || {
            Error::invalid(format!(
                "downward regularisation '{spec}': expected tikhonov:ALPHA (ALPHA > 0) or cutoff:L (a degree)"
            ))
        };
        let (method, value) = spec.trim().split_once(':').ok_or_else(bad)?;
        match method.trim().to_ascii_lowercase().as_str() {
            "tikhonov" => {
                let alpha: f64 = value.trim().parse().map_err(|_| bad())?;
                if !(alpha.is_finite() && alpha > 0.0) {
                    return Err(bad());
                }
                Ok(DownwardRegularization::Tikhonov { alpha })
            }
            "cutoff" => Ok(DownwardRegularization::Cutoff {
                lmax: value.trim().parse().map_err(|_| bad())?,
            }),
            _ => Err(bad()),
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ContinuationOptions {
    /// Required for downward continuation whose amplification exceeds the cap.
    pub regularization: Option<DownwardRegularization>,
    /// Largest (R/r)^{lmax+1} accepted without regularisation.
    pub max_amplification: f64,
}

impl Default for ContinuationOptions {
    fn default() -> Self {
        ContinuationOptions {
            regularization: None,
            max_amplification: DEFAULT_MAX_AMPLIFICATION,
        }
    }
}

/// Continuation factors k_0..=k_lmax from `reference_radius_m` (R) to `target_radius_m` (r):
/// (R/r)^{l+1}, regularised as stated when r < R (see the module docs).
///
/// Errors: non-positive or non-finite radii; a downward continuation whose amplification
/// (R/r)^{lmax+1} exceeds `options.max_amplification` with no regularisation (the message
/// gives the factor); a regularisation with α ≤ 0.
pub fn radial_factors(
    lmax: usize,
    reference_radius_m: f64,
    target_radius_m: f64,
    options: &ContinuationOptions,
) -> Result<Vec<f64>> {
    for (name, v) in [
        ("reference radius", reference_radius_m),
        ("target radius", target_radius_m),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(Error::invalid(format!(
                "continuation needs a positive finite {name}, got {v} m"
            )));
        }
    }
    let ratio = reference_radius_m / target_radius_m;
    let plain: Vec<f64> = (0..=lmax).map(|l| power(ratio, l + 1)).collect();
    if ratio <= 1.0 {
        return Ok(plain);
    }
    match options.regularization {
        None => {
            let log10_amp = (lmax + 1) as f64 * ratio.log10();
            if log10_amp > options.max_amplification.log10() {
                return Err(Error::invalid(format!(
                    "downward continuation from radius {:.3} km to {:.3} km amplifies degree {lmax} \
                     by (R/r)^{} = {} (cap {:e}): noise at that degree would grow as much; state a \
                     regularisation (Tikhonov alpha or a cutoff degree) or raise the cap",
                    reference_radius_m / 1e3,
                    target_radius_m / 1e3,
                    lmax + 1,
                    format_power_of_ten(log10_amp),
                    options.max_amplification
                )));
            }
            Ok(plain)
        }
        Some(DownwardRegularization::Tikhonov { alpha }) => {
            if !(alpha.is_finite() && alpha > 0.0) {
                return Err(Error::invalid(format!(
                    "Tikhonov parameter alpha must be positive and finite, got {alpha}"
                )));
            }
            let inv = 1.0 / ratio;
            Ok((0..=lmax)
                .map(|l| {
                    let u = power(inv, l + 1);
                    u / (u * u + alpha)
                })
                .collect())
        }
        Some(DownwardRegularization::Cutoff { lmax: cut }) => Ok(plain
            .into_iter()
            .enumerate()
            .map(|(l, k)| if l <= cut { k } else { 0.0 })
            .collect()),
    }
}

/// The largest factor a set of continuation factors applies: the amplification of noise.
pub fn amplification(factors: &[f64]) -> f64 {
    factors.iter().fold(0.0, |m, &k| m.max(k.abs()))
}

/// Re-expresses `coeffs` on the sphere of radius `target_radius_m`: after the call, the set
/// synthesised on its (new) reference sphere gives the field at that radius.
///
/// Each degree is multiplied by the [`radial_factors`] k_l and `reference_radius_m` becomes the
/// target radius. For a potential model with GM (T = GM/R Σ (R/r)^{l+1} C Y), the prefactor
/// GM/R also moves to GM/r, so the dimensionless coefficients get an extra r/R: C'_lm =
/// C_lm·k_l·r/R. Upward continuation therefore leaves the represented field unchanged
/// everywhere outside the target sphere; a regularised downward one changes it as its
/// factors say. The attribute `continued_from_radius_m` records the starting radius.
pub fn apply_continuation(
    coeffs: &mut Coefficients,
    target_radius_m: f64,
    options: &ContinuationOptions,
) -> Result<()> {
    let r0 = coeffs.reference_radius_m;
    let mut k = radial_factors(coeffs.lmax(), r0, target_radius_m, options)?;
    if coeffs.gm_m3_s2.is_some() {
        let prefactor = target_radius_m / r0;
        k.iter_mut().for_each(|v| *v *= prefactor);
    }
    coeffs.scale_by_degree(|l| k[l]);
    coeffs.reference_radius_m = target_radius_m;
    coeffs
        .attributes
        .entry("continued_from_radius_m".to_string())
        .or_insert_with(|| format!("{r0}"));
    if target_radius_m < r0 {
        if let Some(reg) = options.regularization {
            coeffs.attributes.insert(
                "downward_continuation_regularization".to_string(),
                reg.describe(),
            );
        }
    }
    Ok(())
}

/// x^n by binary powering (about log2 n roundings); underflows cleanly to 0.
fn power(x: f64, n: usize) -> f64 {
    if n <= i32::MAX as usize {
        x.powi(n as i32)
    } else {
        x.powf(n as f64)
    }
}

/// "3.2e15" for a base-10 logarithm, without overflowing for huge values.
fn format_power_of_ten(log10: f64) -> String {
    let exponent = log10.floor();
    let mantissa = 10f64.powf(log10 - exponent);
    format!("{mantissa:.2}e{exponent}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn upward_factors_are_powers_of_the_ratio() {
        let k = radial_factors(10, 6371e3, 6871e3, &ContinuationOptions::default()).unwrap();
        for (l, v) in k.iter().enumerate() {
            let expect = (6371.0f64 / 6871.0).powi(l as i32 + 1);
            assert!((v - expect).abs() <= 4.0 * f64::EPSILON * expect);
        }
        let same = radial_factors(5, 1.0, 1.0, &ContinuationOptions::default()).unwrap();
        assert_eq!(same, vec![1.0; 6]);
    }

    #[test]
    fn downward_beyond_the_cap_is_refused_with_the_factor() {
        // (6371/6271)^{301} = e^{301·ln(1.015946)} ≈ 1.17e2 ... and at lmax 1000 ≈ 7.4e6
        let opts = ContinuationOptions::default();
        assert!(radial_factors(300, 6371e3, 6271e3, &opts).is_ok());
        let msg = radial_factors(1000, 6371e3, 6271e3, &opts)
            .unwrap_err()
            .to_string();
        let expect = (6371.0f64 / 6271.0).powi(1001);
        let shown = format_power_of_ten(expect.log10());
        assert!(
            msg.contains(&shown) && msg.contains("regularisation"),
            "{msg} / {shown}"
        );
    }

    #[test]
    fn tikhonov_is_bounded_and_close_to_the_inverse_where_well_posed() {
        let alpha = 1e-6;
        let opts = ContinuationOptions {
            regularization: Some(DownwardRegularization::Tikhonov { alpha }),
            ..Default::default()
        };
        let k = radial_factors(3000, 6371e3, 6271e3, &opts).unwrap();
        let bound = 1.0 / (2.0 * alpha.sqrt());
        assert!(amplification(&k) <= bound * (1.0 + 1e-12));
        assert!(amplification(&k) > 0.9 * bound);
        // at degree 10 u² ≈ 0.7 ≫ α: the factor is the plain inverse to ~α/u²
        let plain = (6371.0f64 / 6271.0).powi(11);
        assert!((k[10] / plain - 1.0).abs() < 2e-6);
        assert!(k[3000] < 1e-10);
    }

    #[test]
    fn cutoff_zeroes_above_the_cutoff() {
        let opts = ContinuationOptions {
            regularization: Some(DownwardRegularization::Cutoff { lmax: 40 }),
            ..Default::default()
        };
        let k = radial_factors(100, 2.0, 1.0, &opts).unwrap();
        assert_eq!(k[40], 2f64.powi(41));
        assert!(k[41..].iter().all(|&v| v == 0.0));
    }

    #[test]
    fn regularisation_specs_round_trip() {
        for text in ["tikhonov:1e-6", "cutoff:120"] {
            let r: DownwardRegularization = text.parse().unwrap();
            assert_eq!(r.describe().parse::<DownwardRegularization>().unwrap(), r);
        }
        assert_eq!(
            "Tikhonov: 2.5e-3"
                .parse::<DownwardRegularization>()
                .unwrap(),
            DownwardRegularization::Tikhonov { alpha: 2.5e-3 }
        );
        for bad in ["tikhonov:0", "tikhonov:-1", "cutoff:x", "lasso:3", "3"] {
            let msg = bad
                .parse::<DownwardRegularization>()
                .unwrap_err()
                .to_string();
            assert!(msg.contains(bad) && msg.contains("tikhonov:ALPHA"), "{msg}");
        }
    }

    #[test]
    fn bad_radii_and_alpha_are_refused() {
        let o = ContinuationOptions::default();
        assert!(radial_factors(3, 0.0, 1.0, &o).is_err());
        assert!(radial_factors(3, 1.0, f64::NAN, &o).is_err());
        let bad = ContinuationOptions {
            regularization: Some(DownwardRegularization::Tikhonov { alpha: 0.0 }),
            ..o
        };
        assert!(radial_factors(3, 2.0, 1.0, &bad).is_err());
    }
}
