//! The field options shared by grid synthesis and point evaluation — quantities, normal
//! field, filters, downward-continuation safeguards — parsed by the same library parsers as
//! the command line's `--quantity`, `--normal-field`, `--filter`, `--downward` and
//! `--max-amplification`, so the same text means the same thing in both front ends.

use kugel::error::Error;
use kugel::field::{NormalField, Quantity, SynthesisRequest, TargetSurface};
use kugel::spectral::continuation::{ContinuationOptions, DownwardRegularization};
use kugel::spectral::filter::FilterChain;

/// The options checked and parsed.
pub struct FieldOptions {
    pub quantities: Vec<Quantity>,
    pub normal_field: NormalField,
    pub filter: Option<FilterChain>,
    pub continuation: ContinuationOptions,
}

impl FieldOptions {
    pub fn parse(
        quantity: &str,
        normal_field: &str,
        filter: &[String],
        downward: Option<&str>,
        max_amplification: f64,
    ) -> kugel::Result<FieldOptions> {
        let quantities = Quantity::parse_list(quantity)?;
        let normal_field = NormalField::parse(normal_field)?;
        let filter = if filter.is_empty() {
            None
        } else {
            Some(
                kugel::io::filter_spectra::filter_chain_from_specs(filter)
                    .map_err(|e| Error::invalid(format!("filter: {e}")))?,
            )
        };
        if !(max_amplification.is_finite() && max_amplification >= 1.0) {
            return Err(Error::invalid(format!(
                "max_amplification must be a finite number >= 1, got {max_amplification}"
            )));
        }
        let regularization = downward
            .map(str::parse::<DownwardRegularization>)
            .transpose()?;
        Ok(FieldOptions {
            quantities,
            normal_field,
            filter,
            continuation: ContinuationOptions {
                regularization,
                max_amplification,
            },
        })
    }

    /// The library's request for these options on `surface`.
    pub fn request(&self, surface: TargetSurface) -> SynthesisRequest<'_> {
        SynthesisRequest {
            quantities: self.quantities.clone(),
            surface,
            normal_field: self.normal_field.clone(),
            filter: self.filter.as_ref(),
            continuation: self.continuation,
        }
    }
}

/// The sphere to compute on from `altitude_km` (above the reference sphere) or `radius_km`.
pub fn target_surface(
    altitude_km: Option<f64>,
    radius_km: Option<f64>,
) -> kugel::Result<TargetSurface> {
    TargetSurface::from_km(altitude_km, radius_km, "altitude_km", "radius_km")
}
