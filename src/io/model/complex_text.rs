//! Complex coefficient sets as plain-text tables (docs/conventions.md §8).
//!
//! Header lines `key = value` as for real tables, with `coefficient_form = complex`,
//! `normalization` and `condon_shortley_phase` required (the complex convention cannot be
//! guessed), then one line `l m Re(a_lm) Im(a_lm)` per pair, m = −l..l; `#` starts a comment;
//! absent pairs read as 0. The meaning of a_lm is that of [`crate::complex_coeffs`].

use std::fmt::Write as _;
use std::path::Path;

use crate::coeffs::Normalization;
use crate::complex_coeffs::ComplexCoefficients;
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;

/// The header key and value that mark a complex table.
pub const FORM_KEY: &str = "coefficient_form";
pub const FORM_COMPLEX: &str = "complex";

/// True when the text's header says `coefficient_form = complex`.
pub fn is_complex_table(text: &str) -> bool {
    text.lines().any(|raw| {
        let body = raw.split('#').next().unwrap_or("").trim();
        body.split_once('=').is_some_and(|(k, v)| {
            k.trim().eq_ignore_ascii_case(FORM_KEY) && v.trim().eq_ignore_ascii_case(FORM_COMPLEX)
        })
    })
}

fn line_error(path: &Path, line: usize, message: impl Into<String>) -> Error {
    Error::Line {
        path: path.to_path_buf(),
        line,
        message: message.into(),
    }
}

/// Parses a complex table; `path` is for messages.
pub fn parse_complex_text(text: &str, path: &Path) -> Result<ComplexCoefficients> {
    let mut normalization: Option<Normalization> = None;
    let mut phase: Option<bool> = None;
    let mut radius = 1.0;
    let mut gm = None;
    let mut units = "1".to_string();
    let mut rows: Vec<(usize, usize, i64, f64, f64)> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = i + 1;
        let body = raw
            .split('#')
            .next()
            .unwrap_or("")
            .trim()
            .trim_start_matches('\u{feff}');
        if body.is_empty() {
            continue;
        }
        if let Some((k, v)) = body.split_once('=') {
            let (k, v) = (k.trim().to_ascii_lowercase(), v.trim());
            let number = || {
                v.parse::<f64>()
                    .ok()
                    .filter(|x| x.is_finite())
                    .ok_or_else(|| {
                        line_error(path, line, format!("{k} = '{v}' is not a finite number"))
                    })
            };
            match k.as_str() {
                "normalization" => {
                    normalization = Some(
                        v.parse()
                            .map_err(|e| line_error(path, line, format!("{e}")))?,
                    )
                }
                "condon_shortley_phase" => {
                    phase = Some(match v {
                        "0" => false,
                        "1" => true,
                        _ => {
                            return Err(line_error(
                                path,
                                line,
                                format!("condon_shortley_phase = '{v}': expected 0 or 1"),
                            ))
                        }
                    })
                }
                "reference_radius_m" => radius = number()?,
                "gm_m3_s2" => gm = Some(number()?),
                "units" => units = v.to_string(),
                _ => {}
            }
            continue;
        }
        let t: Vec<&str> = body.split_whitespace().collect();
        if t.len() != 4 {
            return Err(line_error(
                path,
                line,
                format!("expected 'l m Re Im' (4 columns), found {}", t.len()),
            ));
        }
        let l: usize = t[0].parse().map_err(|_| {
            line_error(
                path,
                line,
                format!("degree '{}' is not a non-negative integer", t[0]),
            )
        })?;
        let m: i64 = t[1]
            .parse()
            .map_err(|_| line_error(path, line, format!("order '{}' is not an integer", t[1])))?;
        if m.unsigned_abs() as usize > l {
            return Err(line_error(
                path,
                line,
                format!("order {m} is outside −{l}..{l}"),
            ));
        }
        let parse = |s: &str, what: &str| {
            s.replace(['D', 'd'], "e")
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| {
                    line_error(path, line, format!("{what} '{s}' is not a finite number"))
                })
        };
        rows.push((line, l, m, parse(t[2], "Re")?, parse(t[3], "Im")?));
    }
    let normalization = normalization.ok_or_else(|| {
        Error::format(
            path,
            "a complex table needs a 'normalization = …' header line",
        )
    })?;
    let phase = phase.ok_or_else(|| {
        Error::format(
            path,
            "a complex table needs a 'condon_shortley_phase = 0|1' header line",
        )
    })?;
    let lmax = rows
        .iter()
        .map(|r| r.1)
        .max()
        .ok_or_else(|| Error::format(path, "the complex table has no coefficient lines"))?;
    let mut out = ComplexCoefficients::zeros(lmax, normalization, phase);
    out.reference_radius_m = radius;
    out.gm_m3_s2 = gm;
    out.units = units;
    for (_, l, m, re, im) in rows {
        out.set(l, m, re, im);
    }
    Ok(out)
}

/// Renders a complex table (shortest round-trip numbers).
pub fn complex_text(set: &ComplexCoefficients, provenance: &Provenance) -> String {
    let mut out = String::new();
    out.push_str("# kugel complex spherical-harmonic coefficient table\n");
    let _ = writeln!(out, "{FORM_KEY} = {FORM_COMPLEX}");
    let _ = writeln!(out, "normalization = {}", set.normalization.name());
    let _ = writeln!(
        out,
        "condon_shortley_phase = {}",
        u8::from(set.condon_shortley)
    );
    let _ = writeln!(out, "reference_radius_m = {:e}", set.reference_radius_m);
    if let Some(gm) = set.gm_m3_s2 {
        let _ = writeln!(out, "gm_m3_s2 = {gm:e}");
    }
    let _ = writeln!(out, "units = {}", set.units.replace(['\n', '\r', '#'], " "));
    let _ = writeln!(out, "lmax = {}", set.lmax());
    for (k, v) in provenance.to_attributes() {
        if !k.is_empty() && !k.contains(char::is_whitespace) && !k.contains(['=', '#']) {
            let _ = writeln!(out, "{k} = {}", v.replace(['\n', '\r', '#'], " "));
        }
    }
    out.push_str("# l m Re(a_lm) Im(a_lm)\n");
    for l in 0..=set.lmax() {
        for m in -(l as i64)..=(l as i64) {
            let (re, im) = set.get(l, m);
            let _ = writeln!(out, "{l} {m} {re:e} {im:e}");
        }
    }
    out
}

/// Writes a complex table atomically.
pub fn write_complex_text(
    path: &Path,
    set: &ComplexCoefficients,
    provenance: &Provenance,
) -> Result<()> {
    crate::io::atomic::write_bytes_atomic(path, complex_text(set, provenance).as_bytes())
}
