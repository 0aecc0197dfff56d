//! Writing latitude–longitude grids as CF-1.8 NetCDF-4 with deflate (CONVENTIONS.md §1, §8).
//!
//! Coordinates `lat` (ascending, degrees_north) and `lon` (degrees_east, ascending within the
//! chosen convention 0..360 or −180..180); data variables with `units`, `long_name`, optional
//! `standard_name` and `ancillary_variables`, and `_FillValue` when any cell is masked (NaN in
//! memory). Grids made from an engine grid also record `kugel_grid` (gauss,
//! equiangular_nodes, equiangular_cells) and `kugel_grid_lmax`, so kugel reads them back as the
//! exact grid they came from.

use std::path::Path;

use ndarray::Array2;
use netcdf_writer::{NcAttrValue, NcFileBuilder, NC_FILL_DOUBLE, NC_FILL_FLOAT};

use crate::error::{Error, Result};
use crate::io::netcdf_common as nc;
use crate::io::provenance::Provenance;
use crate::sht::{Grid, GridKind};

/// One gridded quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct GridVariable {
    pub name: String,
    pub long_name: String,
    /// UDUNITS string (e.g. "m", "mGal", "nT", "1").
    pub units: String,
    pub standard_name: Option<String>,
    /// lat × lon, in the order of `GridFile::lat_deg` and `GridFile::lon_deg`; NaN = masked.
    pub data: Array2<f64>,
    /// Names of variables holding this one's ancillary data (counts, distances, ...).
    pub ancillary: Vec<String>,
}

/// A grid file's content before writing. Coordinates may be in any order; the writer sorts.
#[derive(Debug, Clone, PartialEq)]
pub struct GridFile {
    pub title: String,
    pub lat_deg: Vec<f64>,
    pub lon_deg: Vec<f64>,
    pub variables: Vec<GridVariable>,
    /// Further global attributes.
    pub attributes: Vec<(String, String)>,
}

/// Longitude range of the written file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LonConvention {
    /// 0 ≤ λ < 360 (default).
    #[default]
    ZeroTo360,
    /// −180 ≤ λ < 180.
    MinusPlus180,
}

impl std::str::FromStr for LonConvention {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s.trim() {
            "0-360" | "0..360" => Ok(LonConvention::ZeroTo360),
            "-180-180" | "-180..180" => Ok(LonConvention::MinusPlus180),
            other => Err(Error::invalid(format!(
                "unknown longitude range '{other}': expected 0-360 or -180-180"
            ))),
        }
    }
}

impl LonConvention {
    /// Maps a longitude in degrees into this convention's range.
    pub fn wrap(self, lon_deg: f64) -> f64 {
        let w = match self {
            LonConvention::ZeroTo360 => lon_deg.rem_euclid(360.0),
            LonConvention::MinusPlus180 => (lon_deg + 180.0).rem_euclid(360.0) - 180.0,
        };
        // rem_euclid can return the upper bound for tiny negative inputs
        match self {
            LonConvention::ZeroTo360 if w >= 360.0 => 0.0,
            LonConvention::MinusPlus180 if w >= 180.0 => -180.0,
            _ => w,
        }
    }
}

/// How to write a grid.
#[derive(Debug, Clone, Copy)]
pub struct GridWriteOptions<'a> {
    /// Store data variables as float32 (coordinates stay float64).
    pub float32: bool,
    pub lon_convention: LonConvention,
    pub provenance: &'a Provenance,
}

/// Name of an engine grid kind in the `kugel_grid` attribute.
pub fn grid_kind_name(kind: GridKind) -> &'static str {
    match kind {
        GridKind::Gauss => "gauss",
        GridKind::EquiangularNodes => "equiangular_nodes",
        GridKind::EquiangularCells => "equiangular_cells",
        GridKind::Custom => "custom",
    }
}

impl GridFile {
    /// Coordinates (engine order: north to south, eastwards from `lon0_rad`) and grid
    /// attributes of an engine grid, with no variables yet.
    pub fn from_engine_grid(grid: &Grid, title: impl Into<String>) -> GridFile {
        GridFile {
            title: title.into(),
            lat_deg: grid.latitudes_deg(),
            lon_deg: grid.longitudes_deg(),
            variables: Vec::new(),
            attributes: vec![
                (
                    "kugel_grid".to_string(),
                    grid_kind_name(grid.kind).to_string(),
                ),
                (
                    "kugel_grid_lmax".to_string(),
                    grid.max_exact_degree.to_string(),
                ),
            ],
        }
    }

    /// Adds a variable (data in the order of `lat_deg` × `lon_deg`).
    pub fn push(
        &mut self,
        name: &str,
        long_name: &str,
        units: &str,
        standard_name: Option<&str>,
        data: Array2<f64>,
    ) -> &mut GridVariable {
        self.variables.push(GridVariable {
            name: name.to_string(),
            long_name: long_name.to_string(),
            units: units.to_string(),
            standard_name: standard_name.map(str::to_string),
            data,
            ancillary: Vec::new(),
        });
        self.variables.last_mut().expect("just pushed")
    }
}

/// Permutation sorting `values` ascending; fails on duplicates or non-finite values.
fn ascending_order(values: &[f64], what: &str) -> Result<Vec<usize>> {
    if let Some(v) = values.iter().find(|v| !v.is_finite()) {
        return Err(Error::invalid(format!(
            "{what} coordinate {v} is not finite"
        )));
    }
    let mut idx: Vec<usize> = (0..values.len()).collect();
    idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]));
    if let Some(w) = idx.windows(2).find(|w| values[w[0]] == values[w[1]]) {
        return Err(Error::invalid(format!(
            "{what} coordinate {} appears twice",
            values[w[0]]
        )));
    }
    Ok(idx)
}

/// Writes `grid` as CF-1.8 NetCDF-4 (deflate level 4 with shuffle), atomically.
pub fn write_grid(path: &Path, grid: &GridFile, options: &GridWriteOptions) -> Result<()> {
    let (nlat, nlon) = (grid.lat_deg.len(), grid.lon_deg.len());
    if nlat == 0 || nlon == 0 {
        return Err(Error::invalid(format!(
            "grid for {} has no cells",
            path.display()
        )));
    }
    let bytes_per = if options.float32 { 4 } else { 8 };
    let cells = (nlat * nlon * grid.variables.len().max(1)) as u64;
    // sorted copy, the builder's byte copy, the chunked HDF5 copy and the encoded bytes
    // (measured: about 4 × the float64 data at 1801 × 3600)
    crate::memory::check_fits("writing the grid file", cells * (16 + 2 * bytes_per as u64))?;
    let lon_wrapped: Vec<f64> = grid
        .lon_deg
        .iter()
        .map(|&l| options.lon_convention.wrap(l))
        .collect();
    let lat_order = ascending_order(&grid.lat_deg, "latitude")?;
    let lon_order = ascending_order(&lon_wrapped, "longitude")?;
    if let Some(l) = grid.lat_deg.iter().find(|l| l.abs() > 90.0) {
        return Err(Error::invalid(format!("latitude {l} is outside [-90, 90]")));
    }

    let we = |e| nc::write_error(path, e);
    let mut b = NcFileBuilder::new();
    let d_lat = b.add_dimension("lat", nlat as u64).map_err(we)?;
    let d_lon = b.add_dimension("lon", nlon as u64).map_err(we)?;
    let v_lat = b.add_variable::<f64>("lat", &[d_lat]).map_err(we)?;
    for (k, v) in [
        ("units", "degrees_north"),
        ("standard_name", "latitude"),
        ("long_name", "latitude"),
        ("axis", "Y"),
    ] {
        nc::var_text(&mut b, path, v_lat, k, v)?;
    }
    let v_lon = b.add_variable::<f64>("lon", &[d_lon]).map_err(we)?;
    for (k, v) in [
        ("units", "degrees_east"),
        ("standard_name", "longitude"),
        ("long_name", "longitude"),
        ("axis", "X"),
    ] {
        nc::var_text(&mut b, path, v_lon, k, v)?;
    }
    let lat_sorted: Vec<f64> = lat_order.iter().map(|&i| grid.lat_deg[i]).collect();
    let lon_sorted: Vec<f64> = lon_order.iter().map(|&i| lon_wrapped[i]).collect();
    b.write_variable(v_lat, &lat_sorted).map_err(we)?;
    b.write_variable(v_lon, &lon_sorted).map_err(we)?;

    let rows = nc::chunk_rows(nlon, bytes_per).min(nlat as u64);
    for var in &grid.variables {
        if var.data.dim() != (nlat, nlon) {
            return Err(Error::ShapeMismatch(format!(
                "variable '{}' is {:?} but the grid is {nlat} x {nlon}",
                var.name,
                var.data.dim()
            )));
        }
        if let Some(v) = var.data.iter().find(|v| v.is_infinite()) {
            return Err(Error::invalid(format!(
                "variable '{}' holds an infinite value ({v})",
                var.name
            )));
        }
        let masked = var.data.iter().any(|v| v.is_nan());
        let mut sorted = Vec::with_capacity(nlat * nlon);
        for &i in &lat_order {
            for &k in &lon_order {
                sorted.push(var.data[[i, k]]);
            }
        }
        let id = if options.float32 {
            let id = b
                .add_variable::<f32>(&var.name, &[d_lat, d_lon])
                .map_err(we)?;
            if masked {
                b.set_variable_fill_value(id, NC_FILL_FLOAT).map_err(we)?;
            }
            let data: Vec<f32> = sorted
                .iter()
                .map(|&v| if v.is_nan() { NC_FILL_FLOAT } else { v as f32 })
                .collect();
            b.write_variable(id, &data).map_err(we)?;
            id
        } else {
            let id = b
                .add_variable::<f64>(&var.name, &[d_lat, d_lon])
                .map_err(we)?;
            if masked {
                b.set_variable_fill_value(id, NC_FILL_DOUBLE).map_err(we)?;
            }
            let data: Vec<f64> = sorted
                .iter()
                .map(|&v| if v.is_nan() { NC_FILL_DOUBLE } else { v })
                .collect();
            b.write_variable(id, &data).map_err(we)?;
            id
        };
        b.set_variable_chunking(id, vec![rows, nlon as u64])
            .map_err(we)?;
        b.set_variable_deflate(id, Some(4), true).map_err(we)?;
        nc::var_text(&mut b, path, id, "long_name", &var.long_name)?;
        nc::var_text(&mut b, path, id, "units", &var.units)?;
        if let Some(s) = &var.standard_name {
            nc::var_text(&mut b, path, id, "standard_name", s)?;
        }
        if !var.ancillary.is_empty() {
            nc::var_text(
                &mut b,
                path,
                id,
                "ancillary_variables",
                &var.ancillary.join(" "),
            )?;
        }
        let finite = var.data.iter().filter(|v| v.is_finite());
        let (lo, hi) = finite.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, c), &v| {
            (a.min(v), c.max(v))
        });
        if lo <= hi {
            let range = if options.float32 {
                NcAttrValue::Floats(vec![lo as f32, hi as f32])
            } else {
                NcAttrValue::Doubles(vec![lo, hi])
            };
            b.add_variable_attribute(id, "actual_range", range)
                .map_err(we)?;
        }
    }
    nc::add_globals(
        &mut b,
        path,
        &grid.title,
        options.provenance,
        &grid.attributes,
    )?;
    nc::write_netcdf4(path, &b)
}
