//! Region specifications as written on the command line and in configs:
//! `cap:LAT,LON,RADIUS_DEG` (degrees north, degrees east, cap radius in degrees),
//! `mask:FILE` (a NetCDF grid, 1 inside and 0 outside) and `polygon:FILE` (CSV of lat, lon
//! vertices joined by great-circle arcs). File regions are read by `io::region`.

use std::fmt;
use std::path::{Path, PathBuf};
use std::str::FromStr;

use super::cap::check_cap_radius;
use super::multitaper::TaperChoice;
use super::tapers::{cap_taper_set_with_progress, TaperSet};
use crate::error::{Error, Result};
use crate::progress::Progress;

/// The accepted forms, for messages.
pub const KINDS: &str = "cap:LAT,LON,RADIUS_DEG, mask:FILE or polygon:FILE";

/// A region for localised estimates.
#[derive(Debug, Clone, PartialEq)]
pub enum RegionSpec {
    /// A spherical cap of radius `radius_deg` about (`lat_deg`, `lon_deg`).
    Cap {
        lat_deg: f64,
        lon_deg: f64,
        radius_deg: f64,
    },
    /// A NetCDF grid readable by kugel's grid reader, 1 inside the region and 0 outside.
    Mask { path: PathBuf },
    /// A CSV file of vertices (lat, lon in degrees), joined by great-circle arcs.
    Polygon { path: PathBuf },
}

impl RegionSpec {
    /// The file a mask or polygon reads, if any.
    pub fn file(&self) -> Option<&Path> {
        match self {
            RegionSpec::Mask { path } | RegionSpec::Polygon { path } => Some(path),
            RegionSpec::Cap { .. } => None,
        }
    }

    /// The spec with a relative file taken from `base` (a config's folder).
    pub fn resolved_against(&self, base: &Path) -> RegionSpec {
        match self {
            RegionSpec::Mask { path } => RegionSpec::Mask {
                path: base.join(path),
            },
            RegionSpec::Polygon { path } => RegionSpec::Polygon {
                path: base.join(path),
            },
            cap => cap.clone(),
        }
    }

    /// The windows of bandwidth `lmax_window` for this region (those `keep` selects, or all).
    /// A mask or polygon is read by [`crate::io::region::read_region`] first.
    pub fn taper_set(
        &self,
        lmax_window: usize,
        keep: Option<TaperChoice>,
        progress: &dyn Progress,
    ) -> Result<TaperSet> {
        match self {
            RegionSpec::Cap {
                lat_deg,
                lon_deg,
                radius_deg,
            } => cap_taper_set_with_progress(
                lmax_window,
                *radius_deg,
                (*lat_deg, *lon_deg),
                keep,
                progress,
            ),
            RegionSpec::Mask { .. } | RegionSpec::Polygon { .. } => crate::io::region::read_region(
                self,
            )?
            .taper_set(&self.to_string(), lmax_window, keep, progress),
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
            RegionSpec::Mask { path } => write!(f, "mask:{}", path.display()),
            RegionSpec::Polygon { path } => write!(f, "polygon:{}", path.display()),
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
            "mask" | "polygon" => {
                let file = args.trim();
                if file.is_empty() {
                    return Err(Error::invalid(format!(
                        "region '{text}': expected {kind}:FILE with the file's path"
                    )));
                }
                let path = PathBuf::from(file);
                Ok(if kind.trim() == "mask" {
                    RegionSpec::Mask { path }
                } else {
                    RegionSpec::Polygon { path }
                })
            }
            other => Err(Error::invalid(format!(
                "region '{text}': unknown kind '{other}'; expected {KINDS}"
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
            "mask:",
            "polygon: ",
        ] {
            let e = bad.parse::<RegionSpec>().unwrap_err().to_string();
            assert!(e.contains(bad), "{e}");
        }
        let r: RegionSpec = "polygon:basin ring.csv".parse().unwrap();
        assert_eq!(r.to_string(), "polygon:basin ring.csv");
        assert!(matches!(
            "mask:m.nc".parse().unwrap(),
            RegionSpec::Mask { .. }
        ));
    }
}
