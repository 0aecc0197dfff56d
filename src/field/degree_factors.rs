//! Per-degree factors k_l that turn potential coefficients into each quantity
//! (docs/conventions.md §6; Heiskanen & Moritz 1967, ch. 2; Hofmann-Wellenhof & Moritz 2005).
//!
//! With s = R/r and the continuation factor c_l from `spectral::continuation::radial_factors`
//! (= s^{l+1}; regularised when stated for downward continuation):
//!
//! | quantity | k_l |
//! |---|---|
//! | value | c_l |
//! | potential T | (GM/R) c_l |
//! | geoid N = T/γ, γ = GM/R² | R c_l |
//! | gravity disturbance −∂T/∂r | (GM/R²)(l+1) s c_l · 1e5 (mGal) |
//! | gravity anomaly −∂T/∂r − 2T/r | (GM/R²)(l−1) s c_l · 1e5 (mGal) |
//! | radial gradient T_rr | (GM/R³)(l+1)(l+2) s² c_l · 1e9 (E) |
//!
//! For magnetic Gauss coefficients (nT, reference radius a = R) the radial component uses
//! (l+1) s c_l and the horizontal components the gradient of the synthesis with s c_l
//! (see [`super::magnetic`]). External-source coefficients (potential
//! V = a Σ (r/a)^l Σ (q_lm cos mλ + s_lm sin mλ) P_l^m, same source) use −l s^{1−l} for the
//! radial component and s^{1−l} for the horizontal ones.
//!
//! These factors are the one definition of each functional: synthesis, `evaluate` and the
//! fit's observation rows (`observe::fit::functional`) all take them from here.

use super::quantity::Quantity;

/// 1 mGal = 1e-5 m s⁻².
pub const M_S2_PER_MGAL: f64 = 1e-5;
/// 1 E (eötvös) = 1e-9 s⁻².
pub const PER_S2_PER_EOTVOS: f64 = 1e-9;

/// The model constants the gravity factors need.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PotentialScale {
    pub reference_radius_m: f64,
    pub gm_m3_s2: f64,
}

/// k_l for a scalar quantity (`value` or a gravity quantity), given the continuation factors
/// `c` (length lmax + 1) and s = R/r. Magnetic quantities return `None`: they are formed from
/// components (see [`magnetic_radial_factors`] and [`magnetic_horizontal_factors`]).
pub fn scalar_factors(
    quantity: Quantity,
    scale: Option<PotentialScale>,
    s: f64,
    c: &[f64],
) -> Option<Vec<f64>> {
    let k = |f: &dyn Fn(f64) -> f64| -> Vec<f64> {
        c.iter()
            .enumerate()
            .map(|(l, cl)| f(l as f64) * cl)
            .collect()
    };
    if quantity == Quantity::Value {
        return Some(c.to_vec());
    }
    let PotentialScale {
        reference_radius_m: r,
        gm_m3_s2: gm,
    } = scale?;
    let g0 = gm / (r * r);
    Some(match quantity {
        Quantity::Potential => k(&|_| gm / r),
        Quantity::Geoid => k(&|_| r),
        Quantity::GravityDisturbance => k(&|l| g0 * (l + 1.0) * s / M_S2_PER_MGAL),
        Quantity::GravityAnomaly => k(&|l| g0 * (l - 1.0) * s / M_S2_PER_MGAL),
        Quantity::RadialGradient => {
            k(&|l| g0 / r * (l + 1.0) * (l + 2.0) * s * s / PER_S2_PER_EOTVOS)
        }
        _ => return None,
    })
}

/// (l+1) s c_l: synthesis of the Gauss coefficients with these factors gives B_r in nT.
pub fn magnetic_radial_factors(s: f64, c: &[f64]) -> Vec<f64> {
    c.iter()
        .enumerate()
        .map(|(l, cl)| (l as f64 + 1.0) * s * cl)
        .collect()
}

/// s c_l: the negative horizontal gradient of the synthesis with these factors gives
/// B_θ = −∂/∂θ and B_λ = −(1/sin θ) ∂/∂λ in nT.
pub fn magnetic_horizontal_factors(s: f64, c: &[f64]) -> Vec<f64> {
    c.iter().map(|cl| s * cl).collect()
}

/// −l s^{1−l}: synthesis of external-source coefficients with these factors gives B_r in nT
/// (B_r = −∂V/∂r with V = a Σ (r/a)^l …, s = a/r).
pub fn magnetic_external_radial_factors(s: f64, lmax: usize) -> Vec<f64> {
    (0..=lmax)
        .map(|l| -(l as f64) * s.powi(1 - l as i32))
        .collect()
}

/// s^{1−l}: the negative horizontal gradient of the synthesis of external-source coefficients
/// with these factors gives B_θ and B_λ in nT.
pub fn magnetic_external_horizontal_factors(s: f64, lmax: usize) -> Vec<f64> {
    (0..=lmax).map(|l| s.powi(1 - l as i32)).collect()
}
