//! Window families (`kugel tapers`) as NetCDF-4 (docs/conventions.md §9).
//!
//! Layout: dimensions `taper` (K windows, best concentrated first), `degree` and `order`
//! (0..L_W) with coordinate variables; float64 `concentration(taper)`,
//! `C(taper, degree, order)` and `S(taper, degree, order)` in `geodesy` normalisation without
//! the Condon–Shortley phase (entries with m > l are 0), each window of unit mean square.
//! Global attributes: `shannon_number`, `region`, `centre_lat_deg`, `centre_lon_deg`,
//! `lmax_window`, `windows_total`, `normalization`, `condon_shortley_phase`, plus the CF
//! and provenance globals.

use std::path::Path;

use netcdf_reader::NcAttrValue;
use netcdf_writer::NcFileBuilder;

use crate::coeffs::packed_index;
use crate::error::Result;
use crate::io::netcdf_common as nc;
use crate::io::provenance::Provenance;
use crate::regional::TaperSet;

/// The windows' C (or, with `sine`, S) coefficients as one (taper, degree, order) array in
/// row-major order, zero where m > l: the layout of the file's `C` and `S` variables (and of
/// the Python package's `kugel.tapers`). The caller checks the memory (K (L_W + 1)² doubles).
pub fn taper_coefficient_cube(set: &TaperSet, sine: bool) -> Vec<f64> {
    let l1 = set.lmax_window + 1;
    let mut data = vec![0.0; set.tapers.len() * l1 * l1];
    for (t, taper) in set.tapers.iter().enumerate() {
        let packed = if sine {
            taper.coeffs.s_packed()
        } else {
            taper.coeffs.c_packed()
        };
        for l in 0..l1 {
            for m in 0..=l {
                data[(t * l1 + l) * l1 + m] = packed[packed_index(l, m)];
            }
        }
    }
    data
}

/// Writes the window family (atomically).
pub fn write_tapers_netcdf(path: &Path, set: &TaperSet, provenance: &Provenance) -> Result<()> {
    let l1 = set.lmax_window + 1;
    let k = set.tapers.len();
    crate::memory::check_fits("writing the windows", (k * l1 * l1 * 8 * 2 * 3) as u64)?;
    let we = |e| nc::write_error(path, e);
    let mut b = NcFileBuilder::new();
    let d_tap = b.add_dimension("taper", k as u64).map_err(we)?;
    let d_deg = b.add_dimension("degree", l1 as u64).map_err(we)?;
    let d_ord = b.add_dimension("order", l1 as u64).map_err(we)?;
    for (name, dim, long_name, n) in [
        ("taper", d_tap, "window number, best concentrated first", k),
        ("degree", d_deg, "spherical-harmonic degree l", l1),
        ("order", d_ord, "spherical-harmonic order m", l1),
    ] {
        let v = b.add_variable::<i32>(name, &[dim]).map_err(we)?;
        nc::var_text(&mut b, path, v, "long_name", long_name)?;
        nc::var_text(&mut b, path, v, "units", "1")?;
        let idx: Vec<i32> = (0..n as i32).collect();
        b.write_variable(v, &idx).map_err(we)?;
    }
    let v = b
        .add_variable::<f64>("concentration", &[d_tap])
        .map_err(we)?;
    nc::var_text(
        &mut b,
        path,
        v,
        "long_name",
        "fraction of the window's energy inside the region",
    )?;
    nc::var_text(&mut b, path, v, "units", "1")?;
    b.write_variable(v, &set.concentrations()).map_err(we)?;
    for (name, long_name, sine) in [
        ("C", "cosine coefficient C_lm of the window", false),
        ("S", "sine coefficient S_lm of the window", true),
    ] {
        let data = taper_coefficient_cube(set, sine);
        let v = b
            .add_variable::<f64>(name, &[d_tap, d_deg, d_ord])
            .map_err(we)?;
        nc::var_text(&mut b, path, v, "long_name", long_name)?;
        nc::var_text(&mut b, path, v, "units", "1")?;
        b.set_variable_chunking(v, vec![1, l1 as u64, l1 as u64])
            .map_err(we)?;
        b.set_variable_deflate(v, Some(4), true).map_err(we)?;
        b.write_variable(v, &data).map_err(we)?;
    }
    nc::add_globals(
        &mut b,
        path,
        &format!("windows concentrated in {}", set.region),
        provenance,
        &[],
    )?;
    let put = |b: &mut NcFileBuilder, name: &str, v: NcAttrValue| {
        b.add_attribute(name, v)
            .map_err(|e| nc::write_error(path, e))
    };
    put(
        &mut b,
        "shannon_number",
        NcAttrValue::Doubles(vec![set.shannon_number]),
    )?;
    put(&mut b, "region", nc::chars(&set.region))?;
    put(
        &mut b,
        "centre_lat_deg",
        NcAttrValue::Doubles(vec![set.centre_deg.0]),
    )?;
    put(
        &mut b,
        "centre_lon_deg",
        NcAttrValue::Doubles(vec![set.centre_deg.1]),
    )?;
    put(
        &mut b,
        "lmax_window",
        NcAttrValue::Ints(vec![set.lmax_window as i32]),
    )?;
    put(
        &mut b,
        "windows_total",
        NcAttrValue::Ints(vec![set.total_windows as i32]),
    )?;
    put(&mut b, "normalization", nc::chars("geodesy"))?;
    put(&mut b, "condon_shortley_phase", NcAttrValue::Ints(vec![0]))?;
    nc::write_netcdf4(path, &b)
}
