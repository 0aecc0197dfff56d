//! What the fit is given: observations of a functional, each at its own position, radius and
//! time, grouped in data sets with their own weight factor.
//!
//! Positions are geocentric (radius, colatitude, longitude) with the tilt of the local frame
//! (geodetic minus geocentric latitude) for points given on an ellipsoid, as
//! [`GeocentricPoint`] holds them for `evaluate`. Values are in the units `kugel evaluate`
//! writes for the quantity (m² s⁻², m, mGal, E, nT; `value` in the data's own units).

use crate::error::{Error, Result};
use crate::field::{GeocentricPoint, Quantity};
use crate::observe::points::PointSet;

/// One observation of one functional.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Observation {
    pub position: GeocentricPoint,
    pub quantity: Quantity,
    pub value: f64,
    /// One-sigma uncertainty, in the units of the value, when known.
    pub sigma: Option<f64>,
    /// Decimal year, for models with secular variation.
    pub time_year: Option<f64>,
    /// Index of the data set in [`ObservationSet::datasets`].
    pub dataset: usize,
    /// Line (CSV, 1-based) or record (NetCDF, 0-based) in the data set's file.
    pub source_line: usize,
}

/// A named group of observations (one point file).
#[derive(Debug, Clone, PartialEq)]
pub struct DataSet {
    /// Name shown in the summary (the file name, or a name given in the pipeline).
    pub name: String,
    /// Multiplies every weight 1/σ² of the set (1 = as given).
    pub weight_factor: f64,
    /// Whether the set's observations carry σ (otherwise unit weights).
    pub has_sigma: bool,
}

/// All observations of a fit.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ObservationSet {
    pub observations: Vec<Observation>,
    pub datasets: Vec<DataSet>,
}

impl ObservationSet {
    pub fn len(&self) -> usize {
        self.observations.len()
    }

    pub fn is_empty(&self) -> bool {
        self.observations.is_empty()
    }

    /// Adds a data set and returns its index.
    pub fn add_dataset(
        &mut self,
        name: &str,
        weight_factor: f64,
        has_sigma: bool,
    ) -> Result<usize> {
        if !(weight_factor.is_finite() && weight_factor > 0.0) {
            return Err(Error::invalid(format!(
                "data set `{name}`: weight factor {weight_factor} is not a positive number"
            )));
        }
        self.datasets.push(DataSet {
            name: name.to_string(),
            weight_factor,
            has_sigma,
        });
        Ok(self.datasets.len() - 1)
    }

    /// Least-squares weight of observation i: the data set's factor over σ² (over 1 without σ).
    pub fn weight(&self, i: usize) -> f64 {
        let o = &self.observations[i];
        let factor = self
            .datasets
            .get(o.dataset)
            .map_or(1.0, |d| d.weight_factor);
        match o.sigma {
            Some(s) => factor / (s * s),
            None => factor,
        }
    }

    /// Whether every observation carries σ (the posterior is then reported unscaled).
    pub fn all_have_sigma(&self) -> bool {
        self.observations.iter().all(|o| o.sigma.is_some())
    }

    /// A set of one quantity on the sphere of radius `radius_m`, from a validated point set
    /// (geocentric latitudes, the engine's [`PointSet`]).
    pub fn from_points(points: &PointSet, quantity: Quantity, radius_m: f64) -> ObservationSet {
        let mut set = ObservationSet::default();
        let d = set
            .add_dataset("points", 1.0, points.sigma.is_some())
            .expect("unit factor");
        set.push_points(points, quantity, radius_m, d);
        set
    }

    /// Appends a point set's observations, all of `quantity` at `radius_m`, to data set `d`.
    pub fn push_points(&mut self, points: &PointSet, quantity: Quantity, radius_m: f64, d: usize) {
        for i in 0..points.len() {
            self.observations.push(Observation {
                position: GeocentricPoint::from_degrees(
                    points.lat_deg[i],
                    points.lon_deg[i],
                    radius_m,
                ),
                quantity,
                value: points.value[i],
                sigma: points.sigma.as_ref().map(|s| s[i]),
                time_year: None,
                dataset: d,
                source_line: points.source_lines[i],
            });
        }
    }
}

/// How the rows of a point file become observations.
#[derive(Debug, Clone, PartialEq)]
pub struct PointConversion {
    /// Quantity of rows without a `quantity` column.
    pub default_quantity: Quantity,
    /// Radius that `altitude_km` is measured from (the model's reference radius), m.
    pub reference_radius_m: f64,
    /// With an ellipsoid, `lat` is geodetic and `height_m` the height above it; magnetic X and
    /// Z are then in the frame of the ellipsoid normal.
    pub ellipsoid: Option<crate::field::Ellipsoid>,
}

impl ObservationSet {
    /// Appends the rows of a point file read from `path` (named in messages) to data set `d`.
    ///
    /// Errors name the file and line: `height_m` without an ellipsoid, `altitude_km` with one,
    /// an altitude at or below −R.
    pub fn push_point_file(
        &mut self,
        path: &std::path::Path,
        points: &PointSet,
        conversion: &PointConversion,
        d: usize,
    ) -> Result<()> {
        let x = &points.extras;
        let file_error = |message: String| Error::format(path, message);
        match (&conversion.ellipsoid, &x.altitude_km, &x.height_m) {
            (None, _, Some(_)) => {
                return Err(file_error(
                    "column height_m is a height above an ellipsoid: name it with --ellipsoid, or give altitude_km above the reference sphere instead"
                        .into(),
                ))
            }
            (Some(_), Some(_), _) => {
                return Err(file_error(
                    "column altitude_km is above the reference sphere and cannot be combined with --ellipsoid (use height_m)"
                        .into(),
                ))
            }
            _ => {}
        }
        if !points.has_values() || points.value.len() != points.len() {
            return Err(file_error("the fit needs a value column".into()));
        }
        let r_ref = conversion.reference_radius_m;
        for i in 0..points.len() {
            let line = points.source_lines[i];
            let (lat, lon) = (points.lat_deg[i], points.lon_deg[i]);
            let position = match &conversion.ellipsoid {
                Some(e) => {
                    let h = x.height_m.as_ref().map_or(0.0, |h| h[i]);
                    GeocentricPoint::from_geodetic(e, lat, lon, h)
                }
                None => {
                    let alt_km = x.altitude_km.as_ref().map_or(0.0, |a| a[i]);
                    let r = r_ref + alt_km * 1e3;
                    if r.is_nan() || r <= 0.0 {
                        return Err(Error::Line {
                            path: path.to_path_buf(),
                            line,
                            message: format!(
                                "altitude_km {alt_km} is at or below −R = {} km: the point would lie at or beyond the centre",
                                -r_ref / 1e3
                            ),
                        });
                    }
                    GeocentricPoint::from_degrees(lat, lon, r)
                }
            };
            self.observations.push(Observation {
                position,
                quantity: x
                    .quantity
                    .as_ref()
                    .map_or(conversion.default_quantity, |q| q[i]),
                value: points.value[i],
                sigma: points.sigma.as_ref().map(|s| s[i]),
                time_year: x.time_year.as_ref().map(|t| t[i]),
                dataset: d,
                source_line: line,
            });
        }
        Ok(())
    }
}
