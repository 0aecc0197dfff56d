//! NetCDF point files: 1-D variables along one common dimension (CF "point" discrete
//! sampling geometry, or any file laid out that way). `_FillValue`/`missing_value` entries
//! become NaN and are then caught by validation as non-finite.

use std::path::Path;

use netcdf_reader::NcFile;

use crate::error::{Error, Result};

use super::validate::{RawExtras, RawRecord, RecordColumns};
use super::PointReadOptions;

/// Finds a variable by case-insensitive name.
fn find_variable(path: &Path, file: &NcFile, name: &str) -> Result<Option<String>> {
    let vars = file
        .variables()
        .map_err(|e| Error::format(path, e.to_string()))?;
    Ok(vars
        .iter()
        .find(|v| v.name().eq_ignore_ascii_case(name))
        .map(|v| v.name().to_string()))
}

/// Reads the records of a NetCDF point file (unvalidated), with the optional columns found.
/// Record numbers start at 0.
pub fn read_netcdf_records(
    path: &Path,
    options: &PointReadOptions,
) -> Result<(RecordColumns, Vec<RawRecord>)> {
    let file = NcFile::open(path)
        .map_err(|e| Error::format(path, format!("cannot open as NetCDF: {e}")))?;
    let names = &options.columns;
    let all_names = || -> String {
        file.variables()
            .map(|v| {
                v.iter()
                    .map(|v| v.name().to_string())
                    .collect::<Vec<_>>()
                    .join(", ")
            })
            .unwrap_or_default()
    };
    let locate = |key: &str, name: &str, required: bool| -> Result<Option<String>> {
        match find_variable(path, &file, name)? {
            Some(n) => Ok(Some(n)),
            None if required => Err(Error::format(
                path,
                format!(
                    "no variable `{name}` for {key} (variables: {}); name it with --columns {key}=NAME",
                    all_names()
                ),
            )),
            None => Ok(None),
        }
    };
    let lat = locate("lat", &names.lat, true)?.unwrap_or_default();
    let lon = locate("lon", &names.lon, true)?.unwrap_or_default();
    let value = locate("value", &names.value, options.require_value)?;
    let sigma = locate("sigma", &names.sigma, false)?;
    // Optional numeric columns; a per-row quantity column is a CSV feature (NetCDF point
    // files name one quantity per file, given on the command line).
    let altitude = locate("altitude_km", &names.altitude_km, false)?;
    let height = locate("height_m", &names.height_m, false)?;
    let time = locate("time", &names.time, false)?;

    let read = |name: &str| -> Result<Vec<f64>> {
        let var = file
            .variable(name)
            .map_err(|e| Error::format(path, e.to_string()))?;
        if var.dimensions().len() != 1 {
            return Err(Error::format(
                path,
                format!(
                    "variable `{name}` has {} dimensions; point files need 1-D variables along one dimension",
                    var.dimensions().len()
                ),
            ));
        }
        let shape = var.shape();
        crate::io::netcdf_common::check_declared_size(path, name, &shape, shape[0], 4)?;
        // fill, missing and never-written values read as NaN: bad records for the row policy
        Ok(crate::io::netcdf_common::read_cf_values(&file, path, name, None)?.values)
    };
    let lat_v = read(&lat)?;
    let lon_v = read(&lon)?;
    let value_v = value.as_deref().map(read).transpose()?;
    let sigma_v = sigma.as_deref().map(read).transpose()?;
    let altitude_v = altitude.as_deref().map(read).transpose()?;
    let height_v = height.as_deref().map(read).transpose()?;
    let time_v = time.as_deref().map(read).transpose()?;
    let n = lat_v.len();
    let mismatch = |name: &str, len: usize| {
        Error::format(
            path,
            format!("variable `{name}` has {len} entries but `{lat}` has {n}; point variables must share one dimension"),
        )
    };
    if lon_v.len() != n {
        return Err(mismatch(&lon, lon_v.len()));
    }
    if let (Some(v), Some(name)) = (&value_v, &value) {
        if v.len() != n {
            return Err(mismatch(name, v.len()));
        }
    }
    if let (Some(s), Some(name)) = (&sigma_v, &sigma) {
        if s.len() != n {
            return Err(mismatch(name, s.len()));
        }
    }
    for (v, name) in [
        (&altitude_v, &altitude),
        (&height_v, &height),
        (&time_v, &time),
    ] {
        if let (Some(v), Some(name)) = (v, name) {
            if v.len() != n {
                return Err(mismatch(name, v.len()));
            }
        }
    }
    let columns = RecordColumns {
        value: value_v.is_some(),
        sigma: sigma_v.is_some(),
        quantity: false,
        altitude_km: altitude_v.is_some(),
        height_m: height_v.is_some(),
        time: time_v.is_some(),
    };
    let records = (0..n)
        .map(|i| RawRecord {
            line: i,
            lat: Ok(lat_v[i]),
            lon: Ok(lon_v[i]),
            value: value_v.as_ref().map(|v| Ok(v[i])),
            sigma: sigma_v.as_ref().map(|s| Ok(s[i])),
            extras: RawExtras {
                quantity: None,
                altitude_km: altitude_v.as_ref().map(|v| Ok(v[i])),
                height_m: height_v.as_ref().map(|v| Ok(v[i])),
                time: time_v.as_ref().map(|v| Ok(v[i])),
            },
        })
        .collect();
    Ok((columns, records))
}
