//! The normal potential of a level ellipsoid, removed from a gravity model to leave the
//! disturbing potential T = W − U.
//!
//! The ellipsoid's even zonals C̄_2n,0 = −J_2n/sqrt(4n+1) (Heiskanen & Moritz eq. 2-92; Moritz
//! 2000) and its degree-0 term belong to GM_e and a. In the model's expansion
//! (GM/r) Σ (R/r)^l C̄_lm … they become C̄'_2n,0 = C̄_2n,0 · (GM_e/GM) · (a/R)^{2n}, so model and
//! ellipsoid may use different reference radii and GM. The centrifugal parts of W and U are equal
//! and cancel, so neither appears.

use std::fmt;
use std::str::FromStr;

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

use super::ellipsoid::Ellipsoid;

/// Which normal field to remove before forming gravity quantities.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum NormalField {
    /// The model already holds the disturbing potential.
    #[default]
    None,
    /// Remove this ellipsoid's normal potential (degree 0 and even zonals).
    Ellipsoid(Ellipsoid),
}

impl NormalField {
    /// Parses `none`, `grs80`, `wgs84` or `custom:a,f,gm,omega`.
    pub fn parse(spec: &str) -> Result<NormalField> {
        if spec.trim().eq_ignore_ascii_case("none") {
            return Ok(NormalField::None);
        }
        Ellipsoid::parse(spec)
            .map(NormalField::Ellipsoid)
            .map_err(|e| Error::invalid(format!("--normal-field: {e}")))
    }

    pub fn ellipsoid(&self) -> Option<&Ellipsoid> {
        match self {
            NormalField::None => None,
            NormalField::Ellipsoid(e) => Some(e),
        }
    }

    /// The normal potential's coefficients in the model's terms (`geodesy` normalisation,
    /// reference radius R and GM of the model), degrees 0 and 2n ≤ lmax, as (degree, C̄).
    pub fn zonals_for(&self, lmax: usize, model_radius_m: f64, model_gm: f64) -> Vec<(usize, f64)> {
        let Some(e) = self.ellipsoid() else {
            return Vec::new();
        };
        let gm_ratio = e.gm_m3_s2 / model_gm;
        let radius_ratio = e.semi_major_axis_m / model_radius_m;
        e.even_zonals(lmax)
            .into_iter()
            .map(|(l, c)| (l, c * gm_ratio * radius_ratio.powi(l as i32)))
            .collect()
    }

    /// Subtracts the normal potential from `model` in place. The model must be in `geodesy`
    /// normalisation without phase (the engine's convention) and carry GM.
    pub fn remove_from(&self, model: &mut Coefficients) -> Result<()> {
        if self.ellipsoid().is_none() {
            return Ok(());
        }
        let gm = model.gm_m3_s2.ok_or_else(|| {
            Error::invalid(
                "removing a normal field needs the model's GM (attribute gm_m3_s2), which is missing",
            )
        })?;
        if model.normalization != crate::coeffs::Normalization::Geodesy || model.condon_shortley {
            return Err(Error::invalid(
                "internal: the normal field is removed from geodesy-normalised coefficients only",
            ));
        }
        for (l, c) in self.zonals_for(model.lmax(), model.reference_radius_m, gm) {
            let current = model.c(l, 0);
            model.set(l, 0, current - c, 0.0);
        }
        Ok(())
    }
}

impl fmt::Display for NormalField {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NormalField::None => f.write_str("none"),
            NormalField::Ellipsoid(e) => write!(f, "{e}"),
        }
    }
}

impl FromStr for NormalField {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        NormalField::parse(s)
    }
}
