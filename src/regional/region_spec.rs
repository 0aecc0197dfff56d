//! Region specifications as written on the command line and in configs:
//! `cap:LAT,LON,RADIUS_DEG` (degrees north, degrees east, cap radius in degrees).

use std::fmt;
use std::str::FromStr;

use super::cap::check_cap_radius;
use super::multitaper::TaperChoice;
use super::tapers::{cap_taper_set_with_progress, TaperSet};
use crate::error::{Error, Result};
use crate::progress::Progress;

/// A region for localised estimates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RegionSpec {
    /// A spherical cap of radius `radius_deg` about (`lat_deg`, `lon_deg`).
    Cap {
        lat_deg: f64,
        lon_deg: f64,
        radius_deg: f64,
    },
}

impl RegionSpec {
    /// The windows of bandwidth `lmax_window` for this region (those `keep` selects, or all).
    pub fn taper_set(
        &self,
        lmax_window: usize,
        keep: Option<TaperChoice>,
        progress: &dyn Progress,
    ) -> Result<TaperSet> {
        match *self {
            RegionSpec::Cap {
                lat_deg,
                lon_deg,
                radius_deg,
            } => cap_taper_set_with_progress(
                lmax_window,
                radius_deg,
                (lat_deg, lon_deg),
                keep,
                progress,
            ),
        }
    }
}

impl fmt::Display for RegionSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            RegionSpec::Cap {
                lat_deg,
                lon_deg,
                radius_deg,
            } => write!(f, "cap:{lat_deg},{lon_deg},{radius_deg}"),
        }
    }
}

impl FromStr for RegionSpec {
    type Err = Error;
    fn from_str(text: &str) -> Result<Self> {
        let (kind, args) = text.split_once(':').unwrap_or((text, ""));
        match kind.trim() {
            "cap" => {
                let v: Vec<Option<f64>> = args
                    .split(',')
                    .map(|t| t.trim().parse::<f64>().ok().filter(|x| x.is_finite()))
                    .collect();
                if v.len() != 3 || v.iter().any(Option::is_none) {
                    return Err(Error::invalid(format!(
                        "region '{text}': expected cap:LAT,LON,RADIUS_DEG with three numbers in degrees (e.g. cap:30,-60,15)"
                    )));
                }
                let (lat, lon, r) = (v[0].unwrap(), v[1].unwrap(), v[2].unwrap());
                if !(-90.0..=90.0).contains(&lat) {
                    return Err(Error::invalid(format!(
                        "region '{text}': latitude {lat} is outside [-90, 90]"
                    )));
                }
                check_cap_radius(r).map_err(|e| Error::invalid(format!("region '{text}': {e}")))?;
                Ok(RegionSpec::Cap {
                    lat_deg: lat,
                    lon_deg: lon,
                    radius_deg: r,
                })
            }
            "mask" | "polygon" => Err(Error::invalid(format!(
                "region '{text}': {kind} regions are not available yet; use cap:LAT,LON,RADIUS_DEG"
            ))),
            other => Err(Error::invalid(format!(
                "region '{text}': unknown kind '{other}'; expected cap:LAT,LON,RADIUS_DEG"
            ))),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn caps_parse_and_bad_ones_say_what_is_expected() {
        let r: RegionSpec = "cap:30,-60,15".parse().unwrap();
        assert_eq!(
            r,
            RegionSpec::Cap {
                lat_deg: 30.0,
                lon_deg: -60.0,
                radius_deg: 15.0
            }
        );
        for bad in [
            "cap:30,-60,0",
            "cap:30,-60,181",
            "cap:30,-60",
            "cap:95,0,10",
            "disc:1,2,3",
        ] {
            let e = bad.parse::<RegionSpec>().unwrap_err().to_string();
            assert!(e.contains(bad), "{e}");
        }
    }
}
