//! What a localised estimate is asked for, as both front ends take it: a region, the windows'
//! bandwidth L_W and how many windows to use. One place decides the defaults and refusals, so
//! `kugel spectrum --region …` and `kugel.spectrum(model, region=…)` use the same windows.

use super::coupling::expected_localised_spectrum;
use super::multitaper::{localised_spectrum, LocalisedSpectrum, TaperChoice};
use super::region_spec::RegionSpec;
use super::tapers::{TaperSet, DEFAULT_MIN_CONCENTRATION};
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};
use crate::progress::Progress;

impl RegionSpec {
    /// The cap of radius `radius_deg` about (`lat_deg`, `lon_deg`), checked exactly as the
    /// text `cap:LAT,LON,RADIUS_DEG` is (the numbers go through the region parser).
    pub fn cap(lat_deg: f64, lon_deg: f64, radius_deg: f64) -> Result<RegionSpec> {
        RegionSpec::Cap {
            lat_deg,
            lon_deg,
            radius_deg,
        }
        .to_string()
        .parse()
    }
}

/// The windows a localised estimate of a degree-`model_lmax` model uses: the family of
/// bandwidth `window_lmax` for `region` (which must be below the model's degree, L_W < L), of
/// which the first `tapers` windows or, by default, every window with concentration at least
/// [`DEFAULT_MIN_CONCENTRATION`]. Only the windows used are rotated to the region.
pub fn estimate_windows(
    region: &RegionSpec,
    window_lmax: usize,
    tapers: Option<usize>,
    model_lmax: usize,
    progress: &dyn Progress,
) -> Result<(TaperSet, TaperChoice)> {
    if window_lmax >= model_lmax {
        return Err(Error::invalid(format!(
            "the window bandwidth {window_lmax} must be below the model's degree {model_lmax} (LW < L)"
        )));
    }
    let choice = match tapers {
        Some(k) => TaperChoice::Count(k),
        None => TaperChoice::MinConcentration(DEFAULT_MIN_CONCENTRATION),
    };
    let set = region.taper_set(window_lmax, Some(choice), progress)?;
    Ok((set, choice))
}

/// The localised spectrum of `model` with the windows `choice` takes from `set`, and beside it
/// the localised spectrum expected from the model's own global degree variance through the
/// coupling matrix ([`expected_localised_spectrum`]), for comparison.
pub fn localised_spectrum_with_expected(
    model: &Coefficients,
    set: &TaperSet,
    choice: TaperChoice,
    progress: &dyn Progress,
) -> Result<(LocalisedSpectrum, Vec<f64>)> {
    let local = localised_spectrum(model, set, choice, progress)?;
    let global = crate::spectral::degree_variance(model);
    let expected = expected_localised_spectrum(&global, &local.window_power, local.lmax)?;
    Ok((local, expected))
}
