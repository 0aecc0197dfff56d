//! Complex coefficient sets (a_lm, m = −l..l) as NetCDF-4 (docs/conventions.md §8, "complex
//! sets in NetCDF").
//!
//! Layout: dimensions `degree` (0..L) and `order` (−L..L) with integer coordinate variables
//! of the same names; float64 variables `a_real(degree, order)` and `a_imag(degree, order)`,
//! the real and imaginary parts of a_lm, with `_FillValue` NaN in the cells |m| > l (no
//! coefficient there); global attributes `coefficient_form = "complex"` (what tells this
//! layout from the real one), `normalization` of the complex functions (`geodesy`, `schmidt`,
//! `orthonormal`, `unnormalized`, see [`crate::complex_coeffs`]), `condon_shortley_phase`
//! (0 or 1), `harmonic_definition` (the formula in words), `reference_radius_m`, optional
//! `gm_m3_s2`, `lmax`, `units`, plus the CF and provenance globals of every kugel file.
//!
//! Reading checks what a complex set of a real field must satisfy and names the file and
//! (l, m) when it does not: both parts present, every cell |m| ≤ l finite, the cells |m| > l
//! empty (NaN) or 0, a_l0 real and a_{l,−m} the partner of a_lm under the stated phase.

use std::path::Path;

use netcdf_reader::NcAttrValue;
use netcdf_writer::NcFileBuilder;

use crate::coeffs::Normalization;
use crate::complex_coeffs::ComplexCoefficients;
use crate::error::{Error, Result};
use crate::io::netcdf_common as nc;
use crate::io::provenance::Provenance;

use super::complex_text::{FORM_COMPLEX, FORM_KEY};

/// Names of the two variables.
pub const REAL_PART: &str = "a_real";
pub const IMAGINARY_PART: &str = "a_imag";

/// The definition written into every complex file.
fn harmonic_definition(condon_shortley: bool) -> String {
    format!(
        "f = sum over l, m = -l..l of a_lm Y_lm; Y_lm = N_lm P_l|m|(cos colatitude) exp(i m longitude){}; \
         Y_l,-m = {}conj(Y_lm); N_lm is the named normalisation's factor without its sqrt(2 - delta_m0)",
        if condon_shortley { " times (-1)^m for m > 0" } else { "" },
        if condon_shortley { "(-1)^m " } else { "" }
    )
}

/// True when the NetCDF file at `path` says `coefficient_form = complex`.
pub fn declares_complex_form(path: &Path) -> Result<bool> {
    let file = nc::open(path)?;
    let globals = file
        .global_attributes()
        .map_err(|e| Error::format(path, format!("cannot read global attributes: {e}")))?;
    Ok(nc::text(globals, FORM_KEY).is_some_and(|v| v.trim().eq_ignore_ascii_case(FORM_COMPLEX)))
}

/// Writes a complex set as NetCDF-4 (atomically; module notes).
pub fn write_complex_netcdf(
    path: &Path,
    set: &ComplexCoefficients,
    provenance: &Provenance,
) -> Result<()> {
    let lmax = set.lmax();
    let (rows, cols) = (lmax + 1, 2 * lmax + 1);
    crate::memory::check_fits(
        "writing the complex coefficient set",
        (rows * cols * 8 * 2 * 3) as u64,
    )?;
    let we = |e| nc::write_error(path, e);
    let mut b = NcFileBuilder::new();
    let degrees: Vec<i32> = (0..rows as i32).collect();
    let orders: Vec<i32> = (-(lmax as i32)..=lmax as i32).collect();
    let (d_deg, d_ord) = nc::degree_order_axes(
        &mut b,
        path,
        &degrees,
        &orders,
        "spherical-harmonic order m (negative orders included)",
    )?;

    let mut re = vec![f64::NAN; rows * cols];
    let mut im = vec![f64::NAN; rows * cols];
    for l in 0..=lmax {
        for m in -(l as i64)..=(l as i64) {
            let (r, i) = set.get(l, m);
            let cell = l * cols + (m + lmax as i64) as usize;
            re[cell] = r;
            im[cell] = i;
        }
    }
    let chunk = nc::chunk_rows(cols, 8).min(rows as u64);
    for (name, long_name, values) in [
        (REAL_PART, "real part of the complex coefficient a_lm", &re),
        (
            IMAGINARY_PART,
            "imaginary part of the complex coefficient a_lm",
            &im,
        ),
    ] {
        let v = b.add_variable::<f64>(name, &[d_deg, d_ord]).map_err(we)?;
        nc::var_text(&mut b, path, v, "long_name", long_name)?;
        nc::var_text(&mut b, path, v, "units", &set.units)?;
        b.add_variable_attribute(v, "_FillValue", NcAttrValue::Doubles(vec![f64::NAN]))
            .map_err(we)?;
        nc::var_text(
            &mut b,
            path,
            v,
            "comment",
            "cells with |order| > degree hold no coefficient (fill value)",
        )?;
        b.set_variable_chunking(v, vec![chunk, cols as u64])
            .map_err(we)?;
        b.set_variable_deflate(v, Some(4), true).map_err(we)?;
        b.write_variable(v, values).map_err(we)?;
    }
    nc::add_globals(
        &mut b,
        path,
        "complex spherical-harmonic coefficient set",
        provenance,
        &[],
    )?;
    let put = |b: &mut NcFileBuilder, name: &str, v: NcAttrValue| {
        b.add_attribute(name, v)
            .map_err(|e| nc::write_error(path, e))
    };
    put(&mut b, FORM_KEY, nc::chars(FORM_COMPLEX))?;
    put(&mut b, "normalization", nc::chars(set.normalization.name()))?;
    put(
        &mut b,
        "condon_shortley_phase",
        NcAttrValue::Ints(vec![i32::from(set.condon_shortley)]),
    )?;
    put(
        &mut b,
        "harmonic_definition",
        nc::chars(&harmonic_definition(set.condon_shortley)),
    )?;
    put(
        &mut b,
        "reference_radius_m",
        NcAttrValue::Doubles(vec![set.reference_radius_m]),
    )?;
    if let Some(gm) = set.gm_m3_s2 {
        put(&mut b, "gm_m3_s2", NcAttrValue::Doubles(vec![gm]))?;
    }
    put(&mut b, "lmax", NcAttrValue::Ints(vec![lmax as i32]))?;
    put(&mut b, "units", nc::chars(&set.units))?;
    nc::write_netcdf4(path, &b)
}

/// Reads a complex set written in the layout of the module notes (by kugel or anyone else),
/// with the checks listed there.
pub fn read_complex_netcdf(path: &Path) -> Result<ComplexCoefficients> {
    let file = nc::open(path)?;
    let globals = file
        .global_attributes()
        .map_err(|e| Error::format(path, format!("cannot read global attributes: {e}")))?
        .to_vec();
    let fmt = |msg: String| Error::format(path, msg);
    let norm_text = nc::text_checked(path, &globals, "global", "normalization")?.ok_or_else(|| {
        fmt("global attribute 'normalization' is missing (expected geodesy, schmidt, orthonormal or unnormalized)".into())
    })?;
    let normalization: Normalization = norm_text
        .parse()
        .map_err(|e| fmt(format!("global attribute 'normalization': {e}")))?;
    let condon_shortley = match nc::number_checked(path, &globals, "global", "condon_shortley_phase")? {
        Some(0.0) => false,
        Some(1.0) => true,
        Some(p) => {
            return Err(fmt(format!(
                "global attribute 'condon_shortley_phase' is {p}; expected 0 or 1"
            )))
        }
        None => {
            return Err(fmt(
                "global attribute 'condon_shortley_phase' is missing (expected 0 or 1); a complex set's sign of a_l,-m depends on it".into(),
            ))
        }
    };
    let reference_radius_m = nc::number_checked(path, &globals, "global", "reference_radius_m")?
        .ok_or_else(|| fmt("global attribute 'reference_radius_m' is missing (the set's reference radius in metres)".into()))?;
    let gm_m3_s2 = nc::number_checked(path, &globals, "global", "gm_m3_s2")?;
    let units = nc::text_checked(path, &globals, "global", "units")?;

    let (re, lmax) = read_part(&file, path, REAL_PART)?;
    let (im, lmax_im) = read_part(&file, path, IMAGINARY_PART)?;
    if lmax_im != lmax {
        return Err(fmt(format!(
            "variables '{REAL_PART}' and '{IMAGINARY_PART}' have different shapes (degrees 0..{lmax} and 0..{lmax_im})"
        )));
    }
    if let Some(declared) = nc::number_checked(path, &globals, "global", "lmax")? {
        if declared != lmax as f64 {
            return Err(fmt(format!(
                "global attribute 'lmax' is {declared} but variable '{REAL_PART}' has degrees 0..{lmax}"
            )));
        }
    }
    let cols = 2 * lmax + 1;
    let mut set = ComplexCoefficients::zeros(lmax, normalization, condon_shortley);
    for l in 0..=lmax {
        for (k, m) in (-(lmax as i64)..=lmax as i64).enumerate() {
            let cell = l * cols + k;
            for (name, v) in [(REAL_PART, re[cell]), (IMAGINARY_PART, im[cell])] {
                if m.unsigned_abs() as usize > l {
                    if v != 0.0 && !v.is_nan() {
                        return Err(fmt(format!(
                            "variable '{name}' holds {v} at degree {l}, order {m}, where |order| > degree; such cells must be empty (NaN) or 0"
                        )));
                    }
                } else if !v.is_finite() {
                    return Err(fmt(format!(
                        "variable '{name}' has no finite value at degree {l}, order {m} ({v}); a coefficient set has no gaps"
                    )));
                }
            }
            if m.unsigned_abs() as usize <= l {
                set.set(l, m, re[cell], im[cell]);
            }
        }
    }
    set.reference_radius_m = reference_radius_m;
    set.gm_m3_s2 = gm_m3_s2;
    set.units = units.unwrap_or_else(|| "1".to_string());
    Ok(set)
}

/// One (degree, order) part as row-major values with its degree L; the order axis must run
/// over −L..L.
fn read_part(file: &netcdf_reader::NcFile, path: &Path, name: &str) -> Result<(Vec<f64>, usize)> {
    let var = file.variable(name).map_err(|_| {
        Error::format(
            path,
            format!(
                "variable '{name}' is missing (a complex set needs both '{REAL_PART}' and '{IMAGINARY_PART}' over dimensions degree and order)"
            ),
        )
    })?;
    let dims: Vec<&str> = var.dimensions().iter().map(|d| d.name.as_str()).collect();
    if dims != ["degree", "order"] {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' has dimensions ({}); expected (degree, order)",
                dims.join(", ")
            ),
        ));
    }
    let shape = var.shape();
    if shape[0] == 0 || shape[1] != 2 * shape[0] - 1 {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' is {} x {}; expected (L+1) x (2L+1), orders -L..L",
                shape[0], shape[1]
            ),
        ));
    }
    nc::check_declared_size(path, name, &shape, shape[0].saturating_mul(shape[1]), 3)?;
    let decoded = nc::read_cf_values(file, path, name, None)?;
    Ok((decoded.values, shape[0] as usize - 1))
}
