//! Making two models comparable before their spectra are compared: same normalisation, same
//! reference radius (and GM), same units, common maximum degree.
//!
//! Rescaling to another reference radius depends on what the coefficients describe, which is
//! read from `units` and `gm_m3_s2`:
//! - gravitational potential (dimensionless coefficients with GM): V = (GM/R) Σ (R/r)^{l+1} C̄ Y,
//!   so going from (R₂, GM₂) to (R₁, GM₁) gives C̄' = C̄ · (GM₂/GM₁) · (R₂/R₁)^l
//!   (Heiskanen & Moritz 1967, *Physical Geodesy*, §2-8);
//! - magnetic Gauss coefficients (units nT, µT or T): V = a Σ (a/r)^{l+1} g Y, so
//!   g' = g · (a₂/a₁)^{l+2} (Langel 1987, "The main field", in *Geomagnetism* vol. 1, §4);
//! - anything else (a function on the sphere itself: topography, a field on a grid): the radius
//!   only labels the sphere and there is no continuation law, so different radii are refused
//!   unless forced, and then compared as given.
//!
//! Different `units` mean different quantities: refused unless forced.

use std::borrow::Cow;

use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};

/// What a coefficient set expands, as far as rescaling is concerned.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QuantityKind {
    GravitationalPotential,
    MagneticPotential,
    SurfaceFunction,
}

impl QuantityKind {
    pub fn of(coeffs: &Coefficients) -> QuantityKind {
        let u = coeffs.units.trim();
        if matches!(u, "nT" | "uT" | "µT" | "T" | "tesla" | "nanotesla") {
            QuantityKind::MagneticPotential
        } else if coeffs.gm_m3_s2.is_some() && (u == "1" || u.is_empty()) {
            QuantityKind::GravitationalPotential
        } else {
            QuantityKind::SurfaceFunction
        }
    }
}

/// Two models in `geodesy` normalisation (no phase), same radius and units, cut to a common lmax.
#[derive(Debug, Clone)]
///
/// Inputs already in that form are borrowed, not copied (models at degree thousands are large).
pub struct ComparablePair<'a> {
    pub reference: Cow<'a, Coefficients>,
    pub other: Cow<'a, Coefficients>,
    pub lmax: usize,
    /// What was done to make them comparable, for the summary and the file attributes.
    pub notes: Vec<String>,
}

/// The set in `geodesy` normalisation without phase: borrowed when it already is.
pub fn in_geodesy(c: &Coefficients) -> Result<Cow<'_, Coefficients>> {
    if c.normalization == Normalization::Geodesy && !c.condon_shortley {
        Ok(Cow::Borrowed(c))
    } else {
        check_copy_fits(c, "converting the model to geodesy normalisation")?;
        Ok(Cow::Owned(c.converted(Normalization::Geodesy, false)?))
    }
}

/// Refuses, with the estimate, a working copy of `c` that would not fit in memory.
fn check_copy_fits(c: &Coefficients, what: &str) -> Result<()> {
    let arrays = if c.sigmas().is_some() { 4 } else { 2 };
    let bytes = crate::coeffs::packed_len(c.lmax()) * arrays * std::mem::size_of::<f64>();
    crate::memory::check_fits(&format!("{what} (degree {})", c.lmax()), bytes as u64)
}

fn same_radius(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
}

/// Brings `other` onto the conventions of `reference` (see the module documentation).
pub fn make_comparable<'a>(
    reference: &'a Coefficients,
    other: &'a Coefficients,
    force: bool,
) -> Result<ComparablePair<'a>> {
    let mut notes = Vec::new();
    let (ua, ub) = (reference.units.trim(), other.units.trim());
    if ua != ub {
        if !force {
            return Err(Error::invalid(format!(
                "the models describe different quantities: units '{ua}' (first) and '{ub}' (second); \
                 convert one of them or pass --force to compare the numbers anyway"
            )));
        }
        notes.push(format!(
            "units differ ('{ua}' and '{ub}'): compared as given because of --force"
        ));
    }
    for (which, c) in [("first", reference), ("second", other)] {
        if c.normalization != Normalization::Geodesy || c.condon_shortley {
            notes.push(format!(
                "{which} model converted from {}{} to geodesy normalisation",
                c.normalization,
                if c.condon_shortley {
                    " with Condon-Shortley phase"
                } else {
                    ""
                }
            ));
        }
    }
    let reference = in_geodesy(reference)?;
    let mut other = in_geodesy(other)?;
    let (r1, r2) = (reference.reference_radius_m, other.reference_radius_m);
    let kind = QuantityKind::of(&other);
    let gm_ratio = match (kind, reference.gm_m3_s2, other.gm_m3_s2) {
        (QuantityKind::GravitationalPotential, Some(g1), Some(g2)) if g1 != g2 => Some(g2 / g1),
        _ => None,
    };
    if !same_radius(r1, r2) || gm_ratio.is_some() {
        if matches!(other, Cow::Borrowed(_)) {
            check_copy_fits(
                &other,
                "rescaling the second model to the first one's radius",
            )?;
        }
        let ratio = r2 / r1;
        match kind {
            QuantityKind::GravitationalPotential => {
                let gm = gm_ratio.unwrap_or(1.0);
                other
                    .to_mut()
                    .scale_by_degree(|l| gm * ratio.powi(l as i32));
                notes.push(format!(
                    "second model rescaled from R = {r2} m{} to R = {r1} m{} as a gravitational potential: C' = C (GM2/GM1) (R2/R1)^l",
                    other.gm_m3_s2.map(|g| format!(", GM = {g}")).unwrap_or_default(),
                    reference.gm_m3_s2.map(|g| format!(", GM = {g}")).unwrap_or_default()
                ));
                other.to_mut().gm_m3_s2 = reference.gm_m3_s2;
            }
            QuantityKind::MagneticPotential => {
                other.to_mut().scale_by_degree(|l| ratio.powi(l as i32 + 2));
                notes.push(format!(
                    "second model rescaled from a = {r2} m to a = {r1} m as Gauss coefficients: g' = g (a2/a1)^(l+2)"
                ));
            }
            QuantityKind::SurfaceFunction => {
                if !force {
                    return Err(Error::invalid(format!(
                        "reference radii differ ({r1} m and {r2} m) and units '{ub}' are neither a \
                         gravitational potential (dimensionless with gm_m3_s2) nor magnetic Gauss \
                         coefficients (nT), so there is no rescaling law; pass --force to compare as given"
                    )));
                }
                notes.push(format!(
                    "reference radii differ ({r1} m and {r2} m) with no rescaling law for units '{ub}': compared as given because of --force"
                ));
            }
        }
        other.to_mut().reference_radius_m = r1;
    }
    other.check_finite().map_err(|e| {
        Error::invalid(format!(
            "rescaling the second model to the first one's radius overflowed: {e}"
        ))
    })?;
    let lmax = reference.lmax().min(other.lmax());
    if reference.lmax() != other.lmax() {
        notes.push(format!(
            "maximum degrees differ ({} and {}): compared up to degree {lmax}",
            reference.lmax(),
            other.lmax()
        ));
    }
    // Cut only what is longer than the common degree: models at degree thousands are large.
    let cut = |c: Cow<'a, Coefficients>| {
        if c.lmax() == lmax {
            c
        } else {
            Cow::Owned(c.resized(lmax))
        }
    };
    Ok(ComparablePair {
        reference: cut(reference),
        other: cut(other),
        lmax,
        notes,
    })
}
