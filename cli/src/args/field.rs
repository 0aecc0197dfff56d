//! Command-line options shared by `kugel synthesize` and `kugel evaluate`: which quantities,
//! which normal field, which filters, and how downward continuation is stabilised.

use std::path::Path;

use kugel::coeffs::Coefficients;
use kugel::error::Error;
use kugel::field::{cautions, NormalField, Quantity};
use kugel::spectral::continuation::{
    ContinuationOptions, DownwardRegularization, DEFAULT_MAX_AMPLIFICATION,
};
use kugel::spectral::filter::FilterChain;

#[derive(Debug, Clone, clap::Args)]
pub struct FieldOptions {
    /// Quantities, comma separated: value, potential, geoid, gravity-disturbance,
    /// gravity-anomaly, radial-gradient, br, btheta, blambda, x, y, z, h, f, declination,
    /// inclination.
    #[arg(long, short = 'q', value_name = "Q[,Q...]", default_value = "value")]
    pub quantity: String,
    /// Normal field removed before gravity quantities: grs80, wgs84, none or
    /// custom:a_m,f,gm_m3_s2,omega_rad_s (f above 1 is read as 1/f).
    #[arg(long, value_name = "NAME", default_value = "none")]
    pub normal_field: String,
    /// Degree-domain filter, e.g. gauss:300 or lowpass:40-50; repeat or chain with `+`.
    #[arg(long, value_name = "SPEC")]
    pub filter: Vec<String>,
    /// Truncate (or zero-pad) the model to this degree first (default: the model's).
    #[arg(long, value_name = "L")]
    pub lmax: Option<usize>,
    /// Stabilise downward continuation (below the reference sphere): tikhonov:ALPHA or
    /// cutoff:L.
    #[arg(long, value_name = "METHOD")]
    pub downward: Option<String>,
    /// Largest noise amplification (R/r)^(lmax+1) accepted for downward continuation
    /// without --downward.
    #[arg(long, value_name = "FACTOR", default_value_t = DEFAULT_MAX_AMPLIFICATION)]
    pub max_amplification: f64,
    /// Evaluate a model with secular variation (dC_dt, dS_dt) at this decimal year:
    /// C + (YEAR − epoch)·dC_dt. Without it such a model is taken at its epoch.
    #[arg(long, value_name = "YEAR", allow_negative_numbers = true)]
    pub time: Option<f64>,
}

/// The options checked and parsed.
pub struct ParsedFieldOptions {
    pub quantities: Vec<Quantity>,
    pub normal_field: NormalField,
    pub filter: Option<FilterChain>,
    pub continuation: ContinuationOptions,
}

impl FieldOptions {
    pub fn parse(&self) -> kugel::Result<ParsedFieldOptions> {
        let quantities = Quantity::parse_list(&self.quantity)?;
        let normal_field = NormalField::parse(&self.normal_field)?;
        let filter = if self.filter.is_empty() {
            None
        } else {
            Some(
                kugel::io::filter_spectra::filter_chain_from_specs(&self.filter)
                    .map_err(|e| Error::invalid(format!("--filter: {e}")))?,
            )
        };
        if !(self.max_amplification.is_finite() && self.max_amplification >= 1.0) {
            return Err(Error::invalid(format!(
                "--max-amplification must be a finite number >= 1, got {}",
                self.max_amplification
            )));
        }
        let regularization = self
            .downward
            .as_deref()
            .map(str::parse::<DownwardRegularization>)
            .transpose()?;
        Ok(ParsedFieldOptions {
            quantities,
            normal_field,
            filter,
            continuation: ContinuationOptions {
                regularization,
                max_amplification: self.max_amplification,
            },
        })
    }
}

/// Reads a model and truncates (or zero-pads) it to `lmax` when asked.
pub fn read_model_truncated(path: &Path, lmax: Option<usize>) -> anyhow::Result<Coefficients> {
    if let Some(l) = lmax {
        // before the file is read: a typed degree alone can be refused
        kugel::memory::check_coefficients_fit("the model truncated or padded to --lmax", l)?;
    }
    resize_model(path, kugel::io::model::read_model(path)?, lmax)
}

/// Truncates or zero-pads a model read from `path` to `lmax` when asked, refusing first when
/// the padded copy would not fit in memory.
pub fn resize_model(
    path: &Path,
    model: Coefficients,
    lmax: Option<usize>,
) -> anyhow::Result<Coefficients> {
    Ok(match lmax {
        Some(l) => {
            // refuse before the zero-padded copy is allocated
            let arrays = if model.sigmas().is_some() { 4.0 } else { 2.0 };
            kugel::memory::check_fits(
                &format!("{} padded or cut to degree {l}", path.display()),
                kugel::sht::budget::coefficient_set_bytes(l, arrays / 2.0) as u64,
            )?;
            model.resized(l)
        }
        None => model,
    })
}

/// The model at `--time` when given: C + (t − epoch)·dC/dt ([`Coefficients::at_time`]);
/// refused for a model without rates. Without `--time`, a model with rates is taken at its
/// epoch, and a note says so (unless `quiet`).
pub fn model_at_time(
    path: &Path,
    model: Coefficients,
    time: Option<f64>,
    quiet: bool,
) -> anyhow::Result<Coefficients> {
    match (time, model.secular()) {
        (Some(t), Some(_)) => Ok(model.at_time(t)?),
        (Some(t), None) => Err(Error::invalid(format!(
            "--time {t}: {} has no secular variation (no dC_dt, dS_dt); a time applies only to a model \
             with rates (kugel fit --secular-variation --epoch YEAR)",
            path.display()
        ))
        .into()),
        (None, Some(sv)) => {
            if !quiet {
                eprintln!(
                    "note: {} has secular variation about {}; evaluated at that epoch (give --time YEAR for another)",
                    path.display(),
                    sv.epoch_year
                );
            }
            let mut m = model;
            m.clear_secular();
            Ok(m)
        }
        (None, None) => Ok(model),
    }
}

/// Prints the cautions that belong with the requested quantities (always, even with --quiet:
/// they are not progress chatter).
pub fn print_cautions(quantities: &[Quantity]) {
    for &q in quantities {
        if let Some(text) = cautions::caution_for(q) {
            eprintln!("caution ({q}): {text}");
        }
    }
}

/// A one-line description of the processing, for provenance.
pub fn describe(parsed: &ParsedFieldOptions) -> Vec<(String, String)> {
    let mut out = vec![(
        "quantities".to_string(),
        parsed
            .quantities
            .iter()
            .map(|q| q.name())
            .collect::<Vec<_>>()
            .join(","),
    )];
    out.push(("normal_field".to_string(), parsed.normal_field.to_string()));
    if let Some(r) = parsed.continuation.regularization {
        out.push(("downward_regularization".to_string(), r.describe()));
    }
    out
}

/// A warning when gravity quantities are asked of what looks like a total potential (C̄00 ≈ 1,
/// or a large C̄20) with no normal field removed: the results would be dominated by it.
pub fn total_potential_warning(
    model: &Coefficients,
    parsed: &ParsedFieldOptions,
) -> Option<String> {
    use kugel::field::quantity::QuantityFamily;
    let gravity = parsed
        .quantities
        .iter()
        .any(|q| q.family() == QuantityFamily::Gravity);
    if !gravity || parsed.normal_field != NormalField::None || model.gm_m3_s2.is_none() {
        return None;
    }
    let g = model.to_geodesy().ok()?;
    let c00 = g.c(0, 0);
    let c20 = if g.lmax() >= 2 { g.c(2, 0) } else { 0.0 };
    (c00.abs() > 0.5 || c20.abs() > 1e-4).then(|| {
        format!(
            "warning: the model looks like a total potential (C00 = {c00}, C20 = {c20:e}) and no \
             normal field is removed; pass --normal-field grs80, wgs84 or custom:… for \
             disturbing-potential quantities"
        )
    })
}

/// The radius (m) the grid is computed on, from --altitude-km or --radius-km.
pub fn target_surface(
    altitude_km: Option<f64>,
    radius_km: Option<f64>,
) -> kugel::Result<kugel::field::TargetSurface> {
    use kugel::field::TargetSurface;
    TargetSurface::from_km(altitude_km, radius_km, "--altitude-km", "--radius-km")
}
