//! What a coefficient model describes, decided from its metadata, and which quantities fit it.

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

use super::quantity::{Quantity, QuantityFamily};

/// The physical kind of a coefficient model.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ModelKind {
    /// Dimensionless potential coefficients with GM and reference radius R.
    GravityPotential,
    /// Gauss coefficients g, h in nT (internal sources) with reference radius a.
    Magnetic,
    /// Anything else (topography, heat flow, …): only `value` applies.
    Generic,
}

impl ModelKind {
    /// Magnetic when the coefficients are in nT (or an attribute `field_kind`/`kind` says
    /// `magnetic`); gravity potential when GM is known; generic otherwise.
    pub fn of(model: &Coefficients) -> ModelKind {
        let said = ["field_kind", "kind"]
            .iter()
            .find_map(|k| model.attributes.get(*k))
            .map(|v| v.trim().to_ascii_lowercase());
        let units = model.units.trim();
        if said.as_deref() == Some("magnetic")
            || units == "nT"
            || units.eq_ignore_ascii_case("nanotesla")
        {
            ModelKind::Magnetic
        } else if model.gm_m3_s2.is_some() {
            ModelKind::GravityPotential
        } else {
            ModelKind::Generic
        }
    }

    /// Refuses a quantity the model cannot give, saying why.
    pub fn check_supports(self, model: &Coefficients, quantity: Quantity) -> Result<()> {
        match (quantity.family(), self) {
            (QuantityFamily::Generic, _) => Ok(()),
            (QuantityFamily::Gravity, ModelKind::GravityPotential) => {
                if model.units.trim() != "1" && !model.units.trim().is_empty() {
                    return Err(Error::invalid(format!(
                        "quantity `{quantity}` needs dimensionless potential coefficients \
                         (units \"1\"), but the model's units are \"{}\"",
                        model.units
                    )));
                }
                Ok(())
            }
            (QuantityFamily::Gravity, ModelKind::Magnetic) => Err(Error::invalid(format!(
                "quantity `{quantity}` is a gravity quantity, but the model holds magnetic \
                 Gauss coefficients (units nT)"
            ))),
            (QuantityFamily::Gravity, ModelKind::Generic) => Err(Error::invalid(format!(
                "quantity `{quantity}` needs a gravity potential model with GM, but the model \
                 has no `gm_m3_s2` attribute; only `value` applies to it"
            ))),
            // Any normalisation is converted at the edge; Gauss coefficients are usually Schmidt.
            (QuantityFamily::Magnetic, ModelKind::Magnetic) => Ok(()),
            (QuantityFamily::Magnetic, _) => Err(Error::invalid(format!(
                "quantity `{quantity}` needs magnetic Gauss coefficients in nT, but the model's \
                 units are \"{}\"",
                model.units
            ))),
        }
    }
}
