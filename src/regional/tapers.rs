//! A family of windows for one region: the windows sorted by concentration, the Shannon
//! number, the region's description and centre. Cap windows are built at the north pole
//! ([`super::cap`]) and rotated to the cap's centre ([`crate::rotate`]); rotation keeps every
//! concentration (the cap moves with the window).

use super::cap::{cap_shannon_number, cap_tapers_at_pole, Taper};
use super::multitaper::TaperChoice;
use crate::error::{Error, Result};
use crate::progress::{Progress, Silent};
use crate::rotate::{rotate_many, EulerAngles};

/// Default threshold of concentration for the windows a localised estimate uses.
pub const DEFAULT_MIN_CONCENTRATION: f64 = 0.99;

/// Windows of one region, sorted by decreasing concentration.
#[derive(Debug, Clone, PartialEq)]
pub struct TaperSet {
    /// Bandwidth L_W of every window.
    pub lmax_window: usize,
    pub tapers: Vec<Taper>,
    /// Σ of all (L_W + 1)² concentrations: the region's Shannon number.
    pub shannon_number: f64,
    /// Centre (degrees north, degrees east) the windows are concentrated about.
    pub centre_deg: (f64, f64),
    /// Human-readable region, e.g. `cap:30,-60,15`.
    pub region: String,
    /// Total number of windows of the problem ((L_W + 1)²), of which `tapers` may keep fewer.
    pub total_windows: usize,
}

impl TaperSet {
    /// Number of windows with concentration ≥ `threshold`.
    pub fn count_at_least(&self, threshold: f64) -> usize {
        self.tapers
            .iter()
            .filter(|t| t.concentration >= threshold)
            .count()
    }

    /// The concentrations, in order.
    pub fn concentrations(&self) -> Vec<f64> {
        self.tapers.iter().map(|t| t.concentration).collect()
    }
}

/// Windows of bandwidth `lmax_window` for the cap of radius `cap_radius_deg` centred at
/// `centre_deg` (lat, lon), keeping the windows `keep` selects (all when `None`); only the
/// kept windows are rotated to the centre.
pub fn cap_taper_set(
    lmax_window: usize,
    cap_radius_deg: f64,
    centre_deg: (f64, f64),
    keep: Option<TaperChoice>,
) -> Result<TaperSet> {
    cap_taper_set_with_progress(lmax_window, cap_radius_deg, centre_deg, keep, &Silent)
}

/// As [`cap_taper_set`], reporting the rotation's progress.
pub fn cap_taper_set_with_progress(
    lmax_window: usize,
    cap_radius_deg: f64,
    centre_deg: (f64, f64),
    keep: Option<TaperChoice>,
    progress: &dyn Progress,
) -> Result<TaperSet> {
    let (lat, lon) = centre_deg;
    if !(lat.is_finite() && (-90.0..=90.0).contains(&lat) && lon.is_finite()) {
        return Err(Error::invalid(format!(
            "cap centre must be a latitude in [-90, 90] and a finite longitude, got {lat}, {lon}"
        )));
    }
    let tapers = cap_tapers_at_pole(lmax_window, cap_radius_deg)?;
    let total_windows = tapers.len();
    let shannon_number = cap_shannon_number(lmax_window, cap_radius_deg);
    let mut set = TaperSet {
        lmax_window,
        tapers,
        shannon_number,
        centre_deg,
        region: format!("cap:{lat},{lon},{cap_radius_deg}"),
        total_windows,
    };
    if let Some(choice) = keep {
        let k = choice.count(&set)?;
        set.tapers.truncate(k);
    }
    let mut tapers = set.tapers;
    if lat != 90.0 {
        // the rotation that takes the north pole to the centre
        let to_centre = EulerAngles::moving_to_north_pole(lat, lon, 0.0)?.inverse();
        let sets: Vec<_> = tapers.iter().map(|t| t.coeffs.clone()).collect();
        let rotated = rotate_many(&sets, &to_centre, progress)?;
        for (t, c) in tapers.iter_mut().zip(rotated) {
            t.coeffs = c;
            t.order = None;
        }
    }
    set.tapers = tapers;
    Ok(set)
}
