//! Region files: `polygon:FILE` (a CSV of vertices) and `mask:FILE` (a NetCDF grid), read into
//! a [`Region`] for the concentration problem (`kugel::regional`).
//!
//! Polygon CSV: one vertex per line, latitude then longitude in degrees (north, east), joined
//! in order by great-circle arcs and closed from the last vertex back to the first (a last
//! line repeating the first is allowed). Blank lines and lines starting with `#` are skipped.
//! A first line that is not two numbers is a header naming the columns: `lat`/`latitude`/
//! `lat_deg` and `lon`/`longitude`/`lon_deg`, in any order, other columns ignored.
//!
//! Mask: any grid [`read_grid`] reads (it picks the only gridded variable, or the first of
//! several named `mask`); every value must be 1 (inside) or 0 (outside); missing cells count as
//! outside and are reported in the description.

use std::path::Path;

use crate::error::{Error, Result};
use crate::io::csv_table::split_line;
use crate::io::grid::read::{read_grid, GridReadOptions};
use crate::regional::{MaskRegion, Region, RegionSpec, SphericalPolygon, Vertex};

/// Reads the region a spec names (caps need no file).
pub fn read_region(spec: &RegionSpec) -> Result<Region> {
    match spec {
        RegionSpec::Cap {
            lat_deg,
            lon_deg,
            radius_deg,
        } => Ok(Region::Cap {
            lat_deg: *lat_deg,
            lon_deg: *lon_deg,
            radius_deg: *radius_deg,
        }),
        RegionSpec::Polygon { path } => Ok(Region::Polygon(read_polygon(path)?)),
        RegionSpec::Mask { path } => Ok(Region::Mask(read_mask(path)?)),
    }
}

const LAT_NAMES: &[&str] = &["lat", "latitude", "lat_deg"];
const LON_NAMES: &[&str] = &["lon", "longitude", "lon_deg"];

/// Reads and validates a polygon CSV (module notes); errors name the file and line.
pub fn read_polygon(path: &Path) -> Result<SphericalPolygon> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes)
        .map_err(|e| Error::format(path, format!("not UTF-8 text: {e}")))?;
    let name = path.display().to_string();
    let mut columns: Option<(usize, usize)> = None;
    let mut vertices = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = raw.trim_start_matches('\u{feff}').trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let at_line = |message: String| Error::Line {
            path: path.to_path_buf(),
            line: i + 1,
            message,
        };
        let fields = split_line(line).map_err(at_line)?;
        let numbers: Vec<Option<f64>> = fields.iter().map(|f| f.parse::<f64>().ok()).collect();
        if columns.is_none() && vertices.is_empty() && numbers.iter().any(Option::is_none) {
            let find = |names: &[&str]| {
                fields
                    .iter()
                    .position(|f| names.iter().any(|n| f.eq_ignore_ascii_case(n)))
            };
            match (find(LAT_NAMES), find(LON_NAMES)) {
                (Some(a), Some(b)) => {
                    columns = Some((a, b));
                    continue;
                }
                _ => {
                    return Err(at_line(format!(
                        "expected a vertex 'lat, lon' in degrees or a header naming the columns lat and lon, got '{line}'"
                    )))
                }
            }
        }
        let (a, b) = columns.unwrap_or((0, 1));
        let need = a.max(b) + 1;
        if fields.len() < need || (columns.is_none() && fields.len() != 2) {
            return Err(at_line(format!(
                "expected {} fields (lat, lon in degrees), got {}: '{line}'",
                if columns.is_none() { 2 } else { need },
                fields.len()
            )));
        }
        let value = |k: usize, what: &str| {
            numbers[k].filter(|v| v.is_finite()).ok_or_else(|| {
                at_line(format!(
                    "{what} '{}' is not a finite number of degrees",
                    fields[k]
                ))
            })
        };
        let lat = value(a, "latitude")?;
        let lon = value(b, "longitude")?;
        if !(-90.0..=90.0).contains(&lat) {
            return Err(at_line(format!("latitude {lat} is outside [-90, 90]")));
        }
        vertices.push(Vertex {
            lat_deg: lat,
            lon_deg: lon,
            origin: format!("line {}", i + 1),
        });
    }
    SphericalPolygon::new(vertices, &name)
}

/// Reads a mask grid (module notes).
pub fn read_mask(path: &Path) -> Result<MaskRegion> {
    let grid = read_grid(path, &GridReadOptions::default()).or_else(|e| {
        // several variables: take the one called `mask` when there is one
        let named = GridReadOptions {
            variable: Some("mask".into()),
            index: None,
        };
        read_grid(path, &named).map_err(|_| e)
    })?;
    let lat = grid.grid.latitudes_deg();
    let mut inside = ndarray::Array2::from_elem(grid.field.dim(), false);
    for ((r, k), v) in grid.field.indexed_iter() {
        if grid.mask[(r, k)] {
            continue;
        }
        if *v == 1.0 {
            inside[(r, k)] = true;
        } else if *v != 0.0 {
            return Err(Error::format(
                path,
                format!(
                    "variable '{}' must be 1 inside the region and 0 outside, but is {v} at latitude {:.4}, longitude {:.4}",
                    grid.variable,
                    lat[r],
                    grid.grid.longitude_rad(k).to_degrees().rem_euclid(360.0)
                ),
            ));
        }
    }
    let mut source = format!("mask:{}", path.display());
    let missing = grid.masked_count();
    if missing > 0 {
        source.push_str(&format!(" ({missing} missing cells taken as outside)"));
    }
    MaskRegion::new(grid.grid, inside, &source)
}
