//! Reading users' global grids (NetCDF-3 or NetCDF-4) into engine order.
//!
//! The variable is `--variable`, or else the only data variable over a latitude and a
//! longitude dimension that no other variable names in `ancillary_variables`. Latitude and
//! longitude are found by CF attributes (`standard_name`, `units`, `axis`), then by name.
//! Packed integers are unpacked (`scale_factor`, `add_offset`), `_FillValue`, `missing_value`,
//! `valid_*` and NaN become masked cells. Extra dimensions of length 1 are dropped; longer ones
//! need an index each. The result is in engine order (rows north→south, columns eastwards from
//! `lon0_rad`) with the engine grid whose weights are the exact quadrature of the layout.

use std::path::{Path, PathBuf};

use ndarray::{Array2, ArrayView2};
use netcdf_reader::{NcFile, NcSliceInfo, NcSliceInfoElem, NcVariable};

use super::layout::{
    engine_grid, engine_order_field, first_infinite, latitude_axis, longitude_axis,
};
use crate::error::{Error, Result};
use crate::io::netcdf_common as nc;
use crate::sht::{Grid, GridKind};

/// Which variable and which slice of extra dimensions to read.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct GridReadOptions {
    pub variable: Option<String>,
    /// One index per extra dimension longer than 1, in the file's dimension order.
    pub index: Option<Vec<usize>>,
}

/// A user's grid in engine order.
#[derive(Debug, Clone)]
pub struct UserGrid {
    pub path: PathBuf,
    /// nlat × nlon, rows north→south, columns eastwards from `grid.lon0_rad`; NaN where masked.
    pub field: Array2<f64>,
    pub grid: Grid,
    /// True where the cell is masked (fill value, missing value, outside valid range, NaN).
    pub mask: Array2<bool>,
    pub variable: String,
    pub units: String,
    /// The variable's attributes as text.
    pub attributes: Vec<(String, String)>,
    /// What the reader did that a user may want to know (dropped columns, dimensions).
    pub notes: Vec<String>,
    /// Reference radius of the model a kugel grid was synthesised from
    /// (global `kugel_reference_radius_m`), if recorded.
    pub reference_radius_m: Option<f64>,
}

impl UserGrid {
    pub fn masked_count(&self) -> usize {
        self.mask.iter().filter(|&&m| m).count()
    }

    /// Refuses a grid with masked cells: analysis needs every cell. Names the first gap.
    pub fn require_complete(&self) -> Result<()> {
        let n = self.masked_count();
        if n == 0 {
            return Ok(());
        }
        let (i, k) = self
            .mask
            .indexed_iter()
            .find(|(_, &m)| m)
            .map(|(ix, _)| ix)
            .expect("counted");
        let lat = self.grid.latitudes_deg()[i];
        let lon = self.grid.longitude_rad(k).to_degrees().rem_euclid(360.0);
        Err(Error::format(
            &self.path,
            format!(
                "variable '{}' has {n} masked cell(s) (first at latitude {lat:.4}, longitude {lon:.4}); \
                 analysis needs a complete global grid: fill the gaps first, e.g. with `kugel grid` \
                 and its gap policies (--gaps nearest|mean|iterative)",
                self.variable
            ),
        ))
    }

    /// Refuses a band limit the layout cannot analyse exactly, stating the limit.
    pub fn check_degree(&self, lmax: usize) -> Result<()> {
        check_grid_degree(&self.path, &self.grid, lmax)
    }
}

/// Refuses a band limit `lmax` beyond what the quadrature of `g`, read from `path`, analyses
/// exactly, naming the rule and the highest degree it allows.
pub fn check_grid_degree(path: &Path, g: &Grid, lmax: usize) -> Result<()> {
    if lmax <= g.max_exact_degree {
        return Ok(());
    }
    let rule = match g.kind {
        GridKind::Gauss => "Gauss–Legendre",
        GridKind::EquiangularNodes => "Clenshaw–Curtis (node-registered with poles)",
        GridKind::EquiangularCells => "Fejér (cell-centred)",
        GridKind::Custom => "custom",
    };
    Err(Error::invalid(format!(
        "{}: this {} x {} grid with {rule} quadrature is analysed exactly up to degree {} only; \
         asked for degree {lmax}. Use --lmax {} or a finer grid",
        path.display(),
        g.nlat(),
        g.nlon,
        g.max_exact_degree,
        g.max_exact_degree
    )))
}

const LAT_UNITS: &[&str] = &[
    "degrees_north",
    "degree_north",
    "degree_n",
    "degrees_n",
    "degreen",
    "degreesn",
];
const LON_UNITS: &[&str] = &[
    "degrees_east",
    "degree_east",
    "degree_e",
    "degrees_e",
    "degreee",
    "degreese",
];

#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Axis {
    Lat,
    Lon,
}

/// Classifies a 1-D variable as latitude or longitude by CF attributes, then by name.
fn axis_of(v: &NcVariable) -> Option<Axis> {
    if v.ndim() != 1 {
        return None;
    }
    let a = v.attributes();
    let lower = |s: Option<String>| s.map(|x| x.to_ascii_lowercase());
    let standard = lower(nc::text(a, "standard_name"));
    let units = lower(nc::text(a, "units"));
    let axis = lower(nc::text(a, "axis"));
    match standard.as_deref() {
        Some("latitude" | "grid_latitude") => return Some(Axis::Lat),
        Some("longitude" | "grid_longitude") => return Some(Axis::Lon),
        _ => {}
    }
    if let Some(u) = units.as_deref() {
        if LAT_UNITS.contains(&u) {
            return Some(Axis::Lat);
        }
        if LON_UNITS.contains(&u) {
            return Some(Axis::Lon);
        }
    }
    let degrees = units
        .as_deref()
        .map(|u| u.starts_with("degree"))
        .unwrap_or(true);
    match axis.as_deref() {
        Some("y") if degrees => return Some(Axis::Lat),
        Some("x") if degrees => return Some(Axis::Lon),
        _ => {}
    }
    if !degrees {
        return None;
    }
    match v.name().to_ascii_lowercase().as_str() {
        "lat" | "latitude" | "nav_lat" => Some(Axis::Lat),
        "lon" | "long" | "longitude" | "nav_lon" => Some(Axis::Lon),
        _ => None,
    }
}

/// For each dimension name, the 1-D variable over it that is a latitude or longitude.
fn coordinate_for<'a>(vars: &'a [NcVariable], dim: &str) -> Option<(&'a NcVariable, Axis)> {
    let over: Vec<&NcVariable> = vars
        .iter()
        .filter(|v| v.ndim() == 1 && v.dimensions()[0].name == dim)
        .collect();
    // the coordinate variable proper (same name as the dimension) first
    over.iter()
        .filter(|v| v.name() == dim)
        .chain(over.iter().filter(|v| v.name() != dim))
        .find_map(|v| axis_of(v).map(|a| (*v, a)))
}

/// The (lat, lon) dimension positions of a variable, if it has both.
fn lat_lon_dims(vars: &[NcVariable], v: &NcVariable) -> Option<(usize, usize)> {
    let mut lat = None;
    let mut lon = None;
    for (k, d) in v.dimensions().iter().enumerate() {
        match coordinate_for(vars, &d.name).map(|(_, a)| a) {
            Some(Axis::Lat) if lat.is_none() => lat = Some(k),
            Some(Axis::Lon) if lon.is_none() => lon = Some(k),
            _ => {}
        }
    }
    Some((lat?, lon?))
}

fn candidates(vars: &[NcVariable]) -> Vec<&NcVariable> {
    let ancillary: Vec<String> = vars
        .iter()
        .filter_map(|v| nc::text(v.attributes(), "ancillary_variables"))
        .flat_map(|s| s.split_whitespace().map(str::to_string).collect::<Vec<_>>())
        .collect();
    vars.iter()
        .filter(|v| v.ndim() >= 2 && lat_lon_dims(vars, v).is_some())
        .filter(|v| !ancillary.iter().any(|a| a == v.name()))
        .collect()
}

fn choose_variable<'a>(
    path: &Path,
    vars: &'a [NcVariable],
    wanted: Option<&str>,
) -> Result<&'a NcVariable> {
    let cands = candidates(vars);
    let names = || {
        cands
            .iter()
            .map(|v| v.name().to_string())
            .collect::<Vec<_>>()
            .join(", ")
    };
    match wanted {
        Some(name) => {
            let v = vars.iter().find(|v| v.name() == name).ok_or_else(|| {
                Error::format(path, format!("no variable '{name}' (gridded variables: {})", if cands.is_empty() { "none".to_string() } else { names() }))
            })?;
            if lat_lon_dims(vars, v).is_none() {
                return Err(Error::format(
                    path,
                    format!("variable '{name}' is not over a latitude and a longitude dimension (gridded variables: {})", names()),
                ));
            }
            Ok(v)
        }
        None => match cands.as_slice() {
            [one] => Ok(one),
            [] => Err(Error::format(
                path,
                "no variable over a latitude and a longitude dimension was found (latitude and longitude are recognised by standard_name, units degrees_north/degrees_east, axis Y/X, or the names lat/lon)",
            )),
            _ => Err(Error::format(path, format!("several gridded variables: {}; choose one with --variable", names()))),
        },
    }
}

fn read_coordinate(file: &NcFile, path: &Path, v: &NcVariable) -> Result<Vec<f64>> {
    let data = nc::read_cf_values(file, path, v.name(), None)?;
    if let Some(i) = data.values.iter().position(|x| x.is_nan()) {
        return Err(Error::format(
            path,
            format!(
                "coordinate variable '{}' has a missing or unwritten value at index {i}; coordinates must all be given",
                v.name()
            ),
        ));
    }
    Ok(data.values)
}

/// Reads a user's global grid; see the module documentation for the rules.
pub fn read_grid(path: &Path, options: &GridReadOptions) -> Result<UserGrid> {
    let file = nc::open(path)?;
    let vars = file
        .variables()
        .map_err(|e| Error::format(path, format!("cannot list variables: {e}")))?;
    let var = choose_variable(path, vars, options.variable.as_deref())?;
    let name = var.name().to_string();
    let (lat_pos, lon_pos) = lat_lon_dims(vars, var).expect("checked when chosen");
    let dims = var.dimensions();
    let (lat_var, _) = coordinate_for(vars, &dims[lat_pos].name).expect("found");
    let (lon_var, _) = coordinate_for(vars, &dims[lon_pos].name).expect("found");
    let with_var = |e: Error| match e {
        Error::InvalidInput(m) => Error::format(path, format!("variable '{name}': {m}")),
        other => other,
    };

    // extra dimensions
    let mut notes = Vec::new();
    let extra: Vec<usize> = (0..dims.len())
        .filter(|&k| k != lat_pos && k != lon_pos)
        .collect();
    let long_extra: Vec<usize> = extra
        .iter()
        .copied()
        .filter(|&k| dims[k].size > 1)
        .collect();
    let index = options.index.clone().unwrap_or_default();
    if index.len() != long_extra.len() {
        let list = long_extra
            .iter()
            .map(|&k| format!("{} ({})", dims[k].name, dims[k].size))
            .collect::<Vec<_>>()
            .join(", ");
        return Err(Error::format(
            path,
            if long_extra.is_empty() {
                format!("variable '{name}' has no extra dimension longer than 1, so --index must not be given")
            } else {
                format!("variable '{name}' has extra dimension(s) {list}; give one --index value for each, in this order")
            },
        ));
    }
    let mut selections = Vec::with_capacity(dims.len());
    let mut it = index.iter();
    for (k, d) in dims.iter().enumerate() {
        if k == lat_pos || k == lon_pos {
            selections.push(NcSliceInfoElem::Slice {
                start: 0,
                end: d.size,
                step: 1,
            });
        } else {
            let i = if d.size > 1 {
                *it.next().expect("counted") as u64
            } else {
                0
            };
            if i >= d.size {
                return Err(Error::format(
                    path,
                    format!(
                        "--index {i} is out of range for dimension '{}' of length {}",
                        d.name, d.size
                    ),
                ));
            }
            if d.size > 1 {
                notes.push(format!("took index {i} of dimension '{}'", d.name));
            } else {
                notes.push(format!("dropped dimension '{}' of length 1", d.name));
            }
            selections.push(NcSliceInfoElem::Slice {
                start: i,
                end: i + 1,
                step: 1,
            });
        }
    }

    // sizes first: against memory and against what the file can hold, before any read
    let shape: Vec<u64> = dims.iter().map(|d| d.size).collect();
    let selected = dims[lat_pos].size.saturating_mul(dims[lon_pos].size);
    nc::check_declared_size(path, &name, &shape, selected, 4)?;
    for (axis, v) in [(lat_pos, lat_var), (lon_pos, lon_var)] {
        nc::check_declared_size(path, v.name(), &[dims[axis].size], dims[axis].size, 1)?;
    }
    let (nlat_file, nlon_file) = (dims[lat_pos].size as usize, dims[lon_pos].size as usize);
    let lat = read_coordinate(&file, path, lat_var)?;
    let lon = read_coordinate(&file, path, lon_var)?;
    let globals = file
        .global_attributes()
        .map(|g| g.to_vec())
        .unwrap_or_default();
    let claimed_gauss = nc::text(&globals, "kugel_grid").as_deref() == Some("gauss");
    let lat_axis = latitude_axis(
        &lat,
        &format!("latitude variable '{}'", lat_var.name()),
        claimed_gauss,
    )
    .map_err(with_var)?;
    let lon_axis = longitude_axis(&lon, &format!("longitude variable '{}'", lon_var.name()))
        .map_err(with_var)?;
    if lon_axis.dropped_wrap_column {
        notes.push("dropped the duplicated wrap-around longitude column".to_string());
    }

    let decoded = nc::read_cf_values(&file, path, &name, Some(&NcSliceInfo { selections }))?;
    if let Some(first) = decoded.first_unwritten {
        let (i, k) = if lat_pos < lon_pos {
            (first / nlon_file.max(1), first % nlon_file.max(1))
        } else {
            (first % nlat_file.max(1), first / nlat_file.max(1))
        };
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' has {} cell(s) that were never written (they hold the NetCDF default fill value and the variable declares no _FillValue), the first at latitude {}, longitude {}; write every cell or declare _FillValue to mark gaps",
                decoded.unwritten,
                lat.get(i).copied().unwrap_or(f64::NAN),
                lon.get(k).copied().unwrap_or(f64::NAN)
            ),
        ));
    }
    let values = decoded.values;
    if values.len() != nlat_file * nlon_file {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}': read {} values, expected {nlat_file} x {nlon_file}",
                values.len()
            ),
        ));
    }
    // the row-major values with the other dims of length 1, indexed [lat row, lon column]
    let lat_first = lat_pos < lon_pos;
    let shape_error =
        |e: ndarray::ShapeError| Error::format(path, format!("variable '{name}': {e}"));
    let view = if lat_first {
        ArrayView2::from_shape((nlat_file, nlon_file), &values).map_err(shape_error)?
    } else {
        ArrayView2::from_shape((nlon_file, nlat_file), &values)
            .map_err(shape_error)?
            .reversed_axes()
    };
    let grid = engine_grid(&lat_axis, &lon_axis);
    let field = engine_order_field(&lat_axis, &lon_axis, view);
    if let Some((i, k)) = first_infinite(&field, &lat_axis, &lon_axis) {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' holds an infinite value at latitude {}, longitude {}",
                lat[i], lon[k]
            ),
        ));
    }
    if lon_axis.dropped_wrap_column {
        // the file column left out of the eastward order is the duplicate of the first one
        let first = lon_axis.order[0];
        let last = (0..nlon_file).sum::<usize>() - lon_axis.order.iter().sum::<usize>();
        let worst = lat_axis
            .order
            .iter()
            .map(|&i| (view[[i, first]] - view[[i, last]]).abs())
            .filter(|d| !d.is_nan())
            .fold(0.0, f64::max);
        let scale = field
            .iter()
            .filter(|v| v.is_finite())
            .fold(0.0f64, |a, v| a.max(v.abs()));
        if worst > 1e-6 * scale.max(f64::MIN_POSITIVE) {
            notes.push(format!(
                "the wrap-around column differs from the first column by up to {worst:e}; the first was kept"
            ));
        }
    }
    let mask = field.mapv(f64::is_nan);
    let attributes: Vec<(String, String)> = var
        .attributes()
        .iter()
        .map(|a| (a.name.clone(), nc::as_text(&a.value)))
        .collect();
    Ok(UserGrid {
        path: path.to_path_buf(),
        field,
        grid,
        mask,
        variable: name,
        units: nc::text(var.attributes(), "units").unwrap_or_else(|| "1".to_string()),
        attributes,
        notes,
        reference_radius_m: nc::number(&globals, "kugel_reference_radius_m")
            .filter(|r| r.is_finite() && *r > 0.0),
    })
}
