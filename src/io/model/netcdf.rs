//! Coefficient models as NetCDF-4 (docs/conventions.md §8).
//!
//! Layout: dimensions `degree` and `order` (both 0..L) with integer coordinate variables of
//! the same names; float64 variables `C(degree, order)` and `S(degree, order)` (entries with
//! m > l are 0) and, when known, `C_sigma` and `S_sigma`; global attributes `normalization`
//! (`geodesy`, `schmidt`, `orthonormal`, `unnormalized`), `condon_shortley_phase` (0 or 1),
//! `reference_radius_m`, optional `gm_m3_s2`, `lmax`, `units`, plus CF and provenance globals.
//! A model with linear secular variation adds `dC_dt(degree, order)` and `dS_dt` (units per
//! year), optionally `dC_dt_sigma` and `dS_dt_sigma`, and the global attribute `epoch_year`
//! (decimal year, a double): C(t) = C + (t − epoch_year)·dC_dt.

use std::collections::BTreeMap;
use std::path::Path;

use netcdf_reader::NcAttrValue;
use netcdf_writer::NcFileBuilder;

use crate::coeffs::{packed_index, packed_len, square_from_packed, Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::io::netcdf_common as nc;
use crate::io::provenance::Provenance;

/// Global attribute names kugel sets itself; carried-through metadata never overrides them.
const RESERVED: &[&str] = &[
    "Conventions",
    "title",
    "source",
    "history",
    "normalization",
    "condon_shortley_phase",
    "reference_radius_m",
    "gm_m3_s2",
    "lmax",
    "units",
];

/// Writes `coeffs` as a NetCDF-4 model file (atomically).
pub fn write_model_netcdf(
    path: &Path,
    coeffs: &Coefficients,
    provenance: &Provenance,
) -> Result<()> {
    let l1 = coeffs.lmax() + 1;
    let n = l1 * l1;
    // square arrays, the builder's copy and the encoded bytes
    crate::memory::check_fits("writing the coefficient model", (n * 8 * 4 * 3) as u64)?;
    let we = |e| nc::write_error(path, e);
    let mut b = NcFileBuilder::new();
    let idx: Vec<i32> = (0..l1 as i32).collect();
    let (d_deg, d_ord) =
        nc::degree_order_axes(&mut b, path, &idx, &idx, "spherical-harmonic order m")?;

    let rate_units = crate::coeffs::rate_units(&coeffs.units);
    let mut arrays: Vec<(&str, &str, &[f64], &str)> = vec![
        (
            "C",
            "cosine coefficient C_lm",
            coeffs.c_packed(),
            &coeffs.units,
        ),
        (
            "S",
            "sine coefficient S_lm",
            coeffs.s_packed(),
            &coeffs.units,
        ),
    ];
    if let Some((cs, ss)) = coeffs.sigmas() {
        arrays.push(("C_sigma", "standard error of C_lm", cs, &coeffs.units));
        arrays.push(("S_sigma", "standard error of S_lm", ss, &coeffs.units));
    }
    if let Some(sv) = coeffs.secular() {
        let r = &sv.rates;
        arrays.push(("dC_dt", "rate of change of C_lm", r.c_packed(), &rate_units));
        arrays.push(("dS_dt", "rate of change of S_lm", r.s_packed(), &rate_units));
        if let Some((cs, ss)) = r.sigmas() {
            arrays.push(("dC_dt_sigma", "standard error of dC_lm/dt", cs, &rate_units));
            arrays.push(("dS_dt_sigma", "standard error of dS_lm/dt", ss, &rate_units));
        }
    }
    let rows = nc::chunk_rows(l1, 8).min(l1 as u64);
    for (name, long_name, packed, units) in arrays {
        let v = b.add_variable::<f64>(name, &[d_deg, d_ord]).map_err(we)?;
        nc::var_text(&mut b, path, v, "long_name", long_name)?;
        nc::var_text(&mut b, path, v, "units", units)?;
        b.set_variable_chunking(v, vec![rows, l1 as u64])
            .map_err(we)?;
        b.set_variable_deflate(v, Some(4), true).map_err(we)?;
        b.write_variable(v, &square_from_packed(packed, l1 - 1))
            .map_err(we)?;
    }

    let title = coeffs
        .attributes
        .get("title")
        .cloned()
        .unwrap_or_else(|| "spherical-harmonic coefficient model".to_string());
    let previous: Vec<(String, String)> = coeffs
        .attributes
        .get("history")
        .map(|h| vec![("history".to_string(), h.clone())])
        .unwrap_or_default();
    nc::add_globals(&mut b, path, &title, provenance, &previous)?;
    let put = |b: &mut NcFileBuilder, name: &str, v: NcAttrValue| {
        b.add_attribute(name, v)
            .map_err(|e| nc::write_error(path, e))
    };
    put(
        &mut b,
        "normalization",
        nc::chars(coeffs.normalization.name()),
    )?;
    put(
        &mut b,
        "condon_shortley_phase",
        NcAttrValue::Ints(vec![i32::from(coeffs.condon_shortley)]),
    )?;
    put(
        &mut b,
        "reference_radius_m",
        NcAttrValue::Doubles(vec![coeffs.reference_radius_m]),
    )?;
    if let Some(gm) = coeffs.gm_m3_s2 {
        put(&mut b, "gm_m3_s2", NcAttrValue::Doubles(vec![gm]))?;
    }
    put(
        &mut b,
        "lmax",
        NcAttrValue::Ints(vec![coeffs.lmax() as i32]),
    )?;
    put(&mut b, "units", nc::chars(&coeffs.units))?;
    if let Some(sv) = coeffs.secular() {
        put(
            &mut b,
            "epoch_year",
            NcAttrValue::Doubles(vec![sv.epoch_year]),
        )?;
    }
    let provenance_names: Vec<String> = provenance
        .to_attributes()
        .into_iter()
        .map(|(k, _)| k)
        .collect();
    for (k, v) in &coeffs.attributes {
        if RESERVED.contains(&k.as_str())
            || provenance_names.contains(k)
            || (k == "epoch_year" && coeffs.secular().is_some())
        {
            continue;
        }
        put(&mut b, k, nc::chars(v))?;
    }
    nc::write_netcdf4(path, &b)
}

/// The band limit a NetCDF model file declares (its `degree` dimension), read from the header
/// only; `None` when the file is not a readable NetCDF model. For checks before a run.
pub fn declared_lmax(path: &Path) -> Option<usize> {
    if !super::has_netcdf_magic(path).ok()? {
        return None;
    }
    let file = nc::open(path).ok()?;
    let n = file.dimension("degree").ok()?.size;
    usize::try_from(n).ok()?.checked_sub(1)
}

/// Reads a NetCDF model file written by kugel or by anyone following the layout above.
///
/// Values are read as the file means them (`netcdf_common::read_cf_values`: packing with
/// `scale_factor`/`add_offset`, `_FillValue`/`missing_value`); a coefficient that is missing,
/// masked or never written is refused naming (l, m), since a model has no gaps. The model
/// then passes the validation every format shares ([`super::validate_model`]).
pub fn read_model_netcdf(path: &Path) -> Result<Coefficients> {
    let file = nc::open(path)?;
    let globals = file
        .global_attributes()
        .map_err(|e| Error::format(path, format!("cannot read global attributes: {e}")))?
        .to_vec();
    let fmt = |msg: String| Error::format(path, msg);
    let global_number = |name: &str| nc::number_checked(path, &globals, "global", name);

    let norm_text = nc::text_checked(path, &globals, "global", "normalization")?.ok_or_else(|| {
        fmt("global attribute 'normalization' is missing (expected geodesy, schmidt, orthonormal or unnormalized)".into())
    })?;
    let normalization: Normalization = norm_text
        .parse()
        .map_err(|e| fmt(format!("global attribute 'normalization': {e}")))?;
    let phase = global_number("condon_shortley_phase")?.ok_or_else(|| {
        fmt("global attribute 'condon_shortley_phase' is missing (expected 0 or 1)".into())
    })?;
    let condon_shortley = match phase {
        0.0 => false,
        1.0 => true,
        p => {
            return Err(fmt(format!(
                "global attribute 'condon_shortley_phase' is {p}; expected 0 or 1"
            )))
        }
    };
    let reference_radius_m = global_number("reference_radius_m")?.ok_or_else(|| {
        fmt("global attribute 'reference_radius_m' is missing (the model's reference radius in metres)".into())
    })?;
    let gm_m3_s2 = global_number("gm_m3_s2")?;
    let attr_lmax = global_number("lmax")?;
    let units = nc::text_checked(path, &globals, "global", "units")?;

    let (c_sq, l1, transposed) = read_square(&file, path, "C", true)?.expect("required");
    let lmax = l1 - 1;
    if let Some(attr_lmax) = attr_lmax {
        if attr_lmax != lmax as f64 {
            return Err(fmt(format!(
                "global attribute 'lmax' is {attr_lmax} but variable 'C' has degrees 0..{lmax}"
            )));
        }
    }
    let mut arrays = vec![c_sq];
    for name in [
        "S",
        "C_sigma",
        "S_sigma",
        "dC_dt",
        "dS_dt",
        "dC_dt_sigma",
        "dS_dt_sigma",
    ] {
        match read_square(&file, path, name, name == "S")? {
            Some((sq, n, t)) => {
                if n != l1 || t != transposed {
                    return Err(fmt(format!(
                        "variable '{name}' does not have the shape of 'C' ({l1} x {l1})"
                    )));
                }
                arrays.push(sq);
            }
            None => arrays.push(Vec::new()),
        }
    }
    let packed: Vec<Vec<f64>> = [
        ("C", 0usize),
        ("S", 1),
        ("C_sigma", 2),
        ("S_sigma", 3),
        ("dC_dt", 4),
        ("dS_dt", 5),
        ("dC_dt_sigma", 6),
        ("dS_dt_sigma", 7),
    ]
    .iter()
    .map(|&(name, k)| {
        if arrays[k].is_empty() {
            Ok(Vec::new())
        } else {
            packed_from_square(&arrays[k], l1, transposed, path, name)
        }
    })
    .collect::<Result<_>>()?;
    for (name, k) in [("S", 1), ("dS_dt", 5)] {
        if packed[k].is_empty() {
            continue;
        }
        for l in 0..l1 {
            let s_l0 = packed[k][packed_index(l, 0)];
            if s_l0 != 0.0 {
                return Err(fmt(format!(
                    "variable '{name}' holds {s_l0} at degree {l}, order 0; {name}_l0 must be 0 (sin 0λ = 0), so the file's layout differs from this one"
                )));
            }
        }
    }
    let mut coeffs =
        Coefficients::from_packed(lmax, packed[0].clone(), packed[1].clone(), normalization)?;
    match (packed[2].is_empty(), packed[3].is_empty()) {
        (false, false) => coeffs.set_sigmas(packed[2].clone(), packed[3].clone())?,
        (true, true) => {}
        _ => {
            return Err(fmt(
                "only one of 'C_sigma' and 'S_sigma' is present; give both or neither".into(),
            ))
        }
    }
    coeffs.condon_shortley = condon_shortley;
    coeffs.reference_radius_m = reference_radius_m;
    coeffs.gm_m3_s2 = gm_m3_s2;
    coeffs.units = units.unwrap_or_else(|| "1".to_string());
    coeffs.attributes = carried_attributes(&globals);
    match (packed[4].is_empty(), packed[5].is_empty()) {
        (true, true) => {}
        (false, false) => {
            let epoch = global_number("epoch_year")?.ok_or_else(|| {
                fmt("variables 'dC_dt' and 'dS_dt' need the global attribute 'epoch_year' (decimal year of the rates' epoch)".into())
            })?;
            let mut rates = Coefficients::from_packed(
                lmax,
                packed[4].clone(),
                packed[5].clone(),
                normalization,
            )?;
            rates.condon_shortley = condon_shortley;
            match (packed[6].is_empty(), packed[7].is_empty()) {
                (false, false) => rates.set_sigmas(packed[6].clone(), packed[7].clone())?,
                (true, true) => {}
                _ => return Err(fmt(
                    "only one of 'dC_dt_sigma' and 'dS_dt_sigma' is present; give both or neither"
                        .into(),
                )),
            }
            coeffs
                .set_secular(epoch, rates)
                .map_err(|e| fmt(e.to_string()))?;
            coeffs.attributes.remove("epoch_year");
        }
        _ => return Err(fmt(
            "only one of 'dC_dt' and 'dS_dt' is present; a model with secular variation needs both"
                .into(),
        )),
    }
    if packed[4].is_empty() && !(packed[6].is_empty() && packed[7].is_empty()) {
        return Err(fmt(
            "'dC_dt_sigma'/'dS_dt_sigma' without the rates 'dC_dt' and 'dS_dt'".into(),
        ));
    }
    super::validate_model(&coeffs, path)?;
    Ok(coeffs)
}

fn carried_attributes(globals: &[netcdf_reader::NcAttribute]) -> BTreeMap<String, String> {
    globals
        .iter()
        .filter(|a| {
            !RESERVED.contains(&a.name.as_str()) || a.name == "title" || a.name == "history"
        })
        .map(|a| (a.name.clone(), nc::as_text(&a.value)))
        .collect()
}

/// Reads a 2-D (degree, order) variable; returns (row-major values, L+1, stored as
/// (order, degree)). `None` when the variable is absent and not required.
fn read_square(
    file: &netcdf_reader::NcFile,
    path: &Path,
    name: &str,
    required: bool,
) -> Result<Option<(Vec<f64>, usize, bool)>> {
    let var = match file.variable(name) {
        Ok(v) => v,
        Err(_) if !required => return Ok(None),
        Err(_) => {
            return Err(Error::format(
                path,
                format!("variable '{name}' is missing (a model needs C and S over dimensions degree and order)"),
            ))
        }
    };
    let dims: Vec<&str> = var.dimensions().iter().map(|d| d.name.as_str()).collect();
    let shape = var.shape();
    let transposed = match dims.as_slice() {
        ["degree", "order"] => false,
        ["order", "degree"] => true,
        _ => {
            return Err(Error::format(
                path,
                format!(
                    "variable '{name}' has dimensions ({}); expected (degree, order)",
                    dims.join(", ")
                ),
            ))
        }
    };
    if shape[0] != shape[1] || shape[0] == 0 {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' is {} x {}; expected a square (L+1) x (L+1) array",
                shape[0], shape[1]
            ),
        ));
    }
    nc::check_declared_size(path, name, &shape, shape[0].saturating_mul(shape[1]), 3)?;
    let decoded = nc::read_cf_values(file, path, name, None)?;
    Ok(Some((decoded.values, shape[0] as usize, transposed)))
}

/// Square (degree, order) array → packed triangle; entries with m > l must be 0 (a non-zero
/// one means the file's convention differs from the layout).
fn packed_from_square(
    sq: &[f64],
    l1: usize,
    transposed: bool,
    path: &Path,
    name: &str,
) -> Result<Vec<f64>> {
    let at = |l: usize, m: usize| {
        if transposed {
            sq[m * l1 + l]
        } else {
            sq[l * l1 + m]
        }
    };
    let mut out = vec![0.0; packed_len(l1 - 1)];
    for l in 0..l1 {
        for m in 0..l1 {
            let v = at(l, m);
            if m > l {
                if v != 0.0 && !v.is_nan() {
                    return Err(Error::format(
                        path,
                        format!("variable '{name}' has a non-zero entry {v} at degree {l}, order {m} > degree; entries with m > l must be 0"),
                    ));
                }
            } else if v.is_nan() {
                return Err(Error::format(
                    path,
                    format!("variable '{name}' has no value at degree {l}, order {m} (NaN, a fill or missing value, or never written); a model has no gaps"),
                ));
            } else {
                out[packed_index(l, m)] = v;
            }
        }
    }
    Ok(out)
}
