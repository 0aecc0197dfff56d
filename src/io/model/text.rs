//! Coefficient models as plain-text tables (docs/conventions.md §8).
//!
//! Data lines hold `l m C S` or `l m C S σC σS`, separated by whitespace and/or commas; a
//! leading non-numeric keyword column (as some published tables carry) is skipped; Fortran
//! `D` exponents are accepted. `#` starts a comment. Header lines `key = value` set
//! `normalization`, `condon_shortley_phase` (0/1), `reference_radius_m`, `gm_m3_s2`, `units`,
//! `lmax` and `epoch_year`; other keys are kept as metadata. A table with an `epoch_year`
//! header carries linear secular variation: its data lines hold `l m C S dC_dt dS_dt` or
//! `l m C S σC σS dC_dt dS_dt σdC_dt σdS_dt` (rates per year, about the epoch). Pairs (l, m) that are absent read as 0 and are
//! counted in the report.

use std::collections::{BTreeMap, HashSet};
use std::fmt::Write as _;
use std::path::Path;

use crate::coeffs::{packed_index, packed_len, Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;

/// Highest degree a text table may declare (keeps a typo from asking for terabytes).
pub const MAX_TEXT_DEGREE: usize = 100_000;

/// What reading a text table found besides the coefficients.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TextModelReport {
    /// Number of (l, m) pairs with 0 ≤ m ≤ l ≤ lmax absent from the table (read as 0).
    pub missing_pairs: usize,
    /// Number of data lines read.
    pub data_lines: usize,
    /// False when the table had no `normalization` header and `geodesy` was assumed.
    pub normalization_given: bool,
}

struct Row {
    line: usize,
    l: usize,
    m: usize,
    values: Vec<f64>,
}

fn line_error(path: &Path, line: usize, message: impl Into<String>) -> Error {
    Error::Line {
        path: path.to_path_buf(),
        line,
        message: message.into(),
    }
}

/// Parses a number, accepting Fortran-style `1.0D-05`.
fn parse_number(token: &str) -> Option<f64> {
    token
        .parse::<f64>()
        .ok()
        .or_else(|| token.replace(['D', 'd'], "e").parse::<f64>().ok())
}

fn parse_index(path: &Path, line: usize, token: &str, what: &str) -> Result<usize> {
    let v = token.parse::<usize>().map_err(|_| {
        line_error(
            path,
            line,
            format!("{what} '{token}' is not a non-negative integer"),
        )
    })?;
    if v > MAX_TEXT_DEGREE {
        return Err(line_error(
            path,
            line,
            format!("{what} {v} exceeds the supported maximum degree {MAX_TEXT_DEGREE}"),
        ));
    }
    Ok(v)
}

fn parse_data_line(path: &Path, line: usize, body: &str) -> Result<Row> {
    let mut tokens: Vec<&str> = body
        .split(|c: char| c.is_whitespace() || c == ',')
        .filter(|t| !t.is_empty())
        .collect();
    if let Some(first) = tokens.first() {
        if parse_number(first).is_none() {
            tokens.remove(0);
        }
    }
    if ![4, 6, 10].contains(&tokens.len()) {
        return Err(line_error(
            path,
            line,
            format!(
                "expected 4 columns (l m C S) or 6 (l m C S sigmaC sigmaS; with an epoch_year header \
                 l m C S dC_dt dS_dt), or 10 with an epoch_year header (l m C S sigmaC sigmaS dC_dt dS_dt \
                 sigma_dC_dt sigma_dS_dt), found {} numeric columns",
                tokens.len()
            ),
        ));
    }
    let l = parse_index(path, line, tokens[0], "degree l")?;
    let m = parse_index(path, line, tokens[1], "order m")?;
    if m > l {
        return Err(line_error(
            path,
            line,
            format!("order m = {m} exceeds degree l = {l}"),
        ));
    }
    let names = if tokens.len() == 10 {
        [
            "C",
            "S",
            "sigma C",
            "sigma S",
            "dC_dt",
            "dS_dt",
            "sigma dC_dt",
            "sigma dS_dt",
        ]
    } else {
        ["C", "S", "column 5", "column 6", "", "", "", ""]
    };
    let mut values = Vec::with_capacity(tokens.len() - 2);
    for (k, t) in tokens[2..].iter().enumerate() {
        let v = parse_number(t)
            .ok_or_else(|| line_error(path, line, format!("{} '{t}' is not a number", names[k])))?;
        if !v.is_finite() {
            return Err(line_error(
                path,
                line,
                format!("{} is not finite ({t})", names[k]),
            ));
        }
        values.push(v);
    }
    Ok(Row { line, l, m, values })
}

/// Parses a text coefficient table. `path` is used in error messages only.
pub fn parse_model_text(text: &str, path: &Path) -> Result<(Coefficients, TextModelReport)> {
    let mut headers: BTreeMap<String, (String, usize)> = BTreeMap::new();
    let mut rows: Vec<Row> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line_no = i + 1;
        let body = raw.split('#').next().unwrap_or("").trim();
        let body = body.trim_start_matches('\u{feff}');
        if body.is_empty() {
            continue;
        }
        if let Some((k, v)) = body.split_once('=') {
            let key = k.trim().to_ascii_lowercase();
            if key.is_empty() || key.contains(char::is_whitespace) {
                return Err(line_error(
                    path,
                    line_no,
                    format!("malformed header line '{body}': expected key = value"),
                ));
            }
            headers.insert(key, (v.trim().to_string(), line_no));
            continue;
        }
        rows.push(parse_data_line(path, line_no, body)?);
    }
    build(path, headers, rows)
}

fn header_number(
    path: &Path,
    headers: &BTreeMap<String, (String, usize)>,
    key: &str,
) -> Result<Option<f64>> {
    match headers.get(key) {
        None => Ok(None),
        Some((v, line)) => parse_number(v)
            .filter(|x| x.is_finite())
            .map(Some)
            .ok_or_else(|| {
                line_error(path, *line, format!("{key} = '{v}' is not a finite number"))
            }),
    }
}

fn build(
    path: &Path,
    headers: BTreeMap<String, (String, usize)>,
    rows: Vec<Row>,
) -> Result<(Coefficients, TextModelReport)> {
    let (normalization, normalization_given) = match headers.get("normalization") {
        Some((v, line)) => (
            v.parse::<Normalization>()
                .map_err(|e| line_error(path, *line, e.to_string()))?,
            true,
        ),
        None => (Normalization::Geodesy, false),
    };
    let condon_shortley = match headers.get("condon_shortley_phase") {
        None => normalization.default_condon_shortley(),
        Some((v, line)) => match v.to_ascii_lowercase().as_str() {
            "0" | "off" | "false" | "no" => false,
            "1" | "on" | "true" | "yes" => true,
            _ => {
                return Err(line_error(
                    path,
                    *line,
                    format!("condon_shortley_phase = '{v}': expected 0 or 1"),
                ))
            }
        },
    };
    let lmax_header = match headers.get("lmax") {
        None => None,
        Some((v, line)) => Some(parse_index(path, *line, v, "lmax")?),
    };
    let data_lmax = rows.iter().map(|r| r.l).max();
    let lmax = match (lmax_header, data_lmax) {
        (Some(h), Some(d)) if d > h => {
            let r = rows.iter().find(|r| r.l > h).expect("exists");
            return Err(line_error(
                path,
                r.line,
                format!("degree {} exceeds the header's lmax = {h}", r.l),
            ));
        }
        (Some(h), _) => h,
        (None, Some(d)) => d,
        (None, None) => {
            return Err(Error::format(
                path,
                "no coefficient lines found (expected lines 'l m C S')",
            ))
        }
    };
    let epoch = header_number(path, &headers, "epoch_year")?;
    let width = rows.first().map_or(2, |r| r.values.len());
    if let Some(r) = rows.iter().find(|r| r.values.len() != width) {
        return Err(line_error(
            path,
            r.line,
            format!(
                "{} columns here but {} on the first data line; give the same columns on every line",
                r.values.len() + 2,
                width + 2
            ),
        ));
    }
    // where the σ and the rates sit among the values after l and m
    let (sigma_at, rate_at, rate_sigma_at) = match (epoch.is_some(), width) {
        (false, 2) => (None, None, None),
        (false, 4) => (Some(2), None, None),
        (true, 4) => (None, Some(2), None),
        (true, 8) => (Some(2), Some(4), Some(6)),
        (true, _) => {
            return Err(line_error(
                path,
                rows[0].line,
                format!(
                    "{} columns in a table with an epoch_year header; expected 6 (l m C S dC_dt dS_dt) or 10 \
                     (l m C S sigmaC sigmaS dC_dt dS_dt sigma_dC_dt sigma_dS_dt)",
                    width + 2
                ),
            ))
        }
        (false, _) => {
            return Err(line_error(
                path,
                rows[0].line,
                format!(
                    "{} columns need an epoch_year header (rates of change); without it a line holds 4 or 6 columns",
                    width + 2
                ),
            ))
        }
    };
    let with_sigma = sigma_at.is_some();
    let n = packed_len(lmax);
    crate::memory::check_fits("the coefficient table", (n * 8 * 8) as u64)?;
    let mut coeffs = Coefficients::zeros(lmax, normalization);
    coeffs.condon_shortley = condon_shortley;
    let (mut cs, mut ss) = if with_sigma {
        (vec![0.0; n], vec![0.0; n])
    } else {
        (Vec::new(), Vec::new())
    };
    let mut rates = Coefficients::zeros(lmax, normalization);
    rates.condon_shortley = condon_shortley;
    let (mut rcs, mut rss) = if rate_sigma_at.is_some() {
        (vec![0.0; n], vec![0.0; n])
    } else {
        (Vec::new(), Vec::new())
    };
    let mut seen = HashSet::with_capacity(rows.len());
    for r in &rows {
        if !seen.insert((r.l, r.m)) {
            return Err(line_error(
                path,
                r.line,
                format!("(l, m) = ({}, {}) appears twice", r.l, r.m),
            ));
        }
        if r.m == 0 && r.values[1] != 0.0 {
            return Err(line_error(
                path,
                r.line,
                format!("S_{{{},0}} = {} but S_l0 must be 0", r.l, r.values[1]),
            ));
        }
        if let Some(rate) = rate_at {
            if r.m == 0 && r.values[rate + 1] != 0.0 {
                return Err(line_error(
                    path,
                    r.line,
                    format!(
                        "dS_dt at ({}, 0) is {} but the sine terms of order 0 are 0",
                        r.l,
                        r.values[rate + 1]
                    ),
                ));
            }
        }
        let sigma_values = [sigma_at, rate_sigma_at]
            .into_iter()
            .flatten()
            .flat_map(|k| [r.values[k], r.values[k + 1]]);
        if let Some(v) = sigma_values.into_iter().find(|v| *v < 0.0) {
            return Err(line_error(
                path,
                r.line,
                format!("sigma {v} is negative; a standard error must not be negative"),
            ));
        }
        coeffs.set(r.l, r.m, r.values[0], r.values[1]);
        let i = packed_index(r.l, r.m);
        if let Some(k) = sigma_at {
            cs[i] = r.values[k];
            ss[i] = r.values[k + 1];
        }
        if let Some(k) = rate_at {
            rates.set(r.l, r.m, r.values[k], r.values[k + 1]);
        }
        if let Some(k) = rate_sigma_at {
            rcs[i] = r.values[k];
            rss[i] = r.values[k + 1];
        }
    }
    if with_sigma {
        coeffs.set_sigmas(cs, ss)?;
    }
    if rate_sigma_at.is_some() {
        rates.set_sigmas(rcs, rss)?;
    }
    match header_number(path, &headers, "reference_radius_m")? {
        Some(r) if r <= 0.0 => {
            let line = headers["reference_radius_m"].1;
            return Err(line_error(
                path,
                line,
                format!("reference_radius_m = {r}: expected a positive radius in metres"),
            ));
        }
        Some(r) => coeffs.reference_radius_m = r,
        // no default radius: any quantity, continuation or comparison would silently use it
        None => {
            return Err(Error::format(
                path,
                "no reference_radius_m header line; add one, e.g. `reference_radius_m = 6378136.3` (the model's reference radius in metres)",
            ))
        }
    }
    if let Some(gm) = header_number(path, &headers, "gm_m3_s2")? {
        if gm <= 0.0 {
            let line = headers["gm_m3_s2"].1;
            return Err(line_error(
                path,
                line,
                format!("gm_m3_s2 = {gm}: expected a positive number of m3 s-2"),
            ));
        }
        coeffs.gm_m3_s2 = Some(gm);
    }
    if let Some((u, _)) = headers.get("units") {
        coeffs.units = u.clone();
    }
    if let Some(epoch) = epoch {
        coeffs.set_secular(epoch, rates)?;
    }
    const KNOWN: &[&str] = &[
        "normalization",
        "condon_shortley_phase",
        "lmax",
        "reference_radius_m",
        "gm_m3_s2",
        "units",
        "epoch_year",
    ];
    for (k, (v, _)) in headers {
        if !KNOWN.contains(&k.as_str()) {
            coeffs.attributes.insert(k, v);
        }
    }
    let report = TextModelReport {
        missing_pairs: n - seen.len(),
        data_lines: rows.len(),
        normalization_given,
    };
    Ok((coeffs, report))
}

/// Reads a text coefficient table from a file.
pub fn read_model_text(path: &Path) -> Result<(Coefficients, TextModelReport)> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes)
        .map_err(|e| Error::format(path, format!("not UTF-8 text: {e}")))?;
    parse_model_text(&text, path)
}

/// One header value on a single line (line breaks would end the header early).
fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

/// Renders a coefficient table. Numbers use Rust's shortest round-trip representation in
/// exponent form (`{:e}`), so reading the text back gives every value bit for bit.
pub fn model_text(coeffs: &Coefficients, provenance: &Provenance) -> String {
    let mut out = String::new();
    let sig = coeffs.sigmas();
    out.push_str("# kugel spherical-harmonic coefficient table\n");
    out.push_str(&format!(
        "# source: {}\n",
        crate::io::provenance::source_attribute()
    ));
    let _ = writeln!(out, "normalization = {}", coeffs.normalization.name());
    let _ = writeln!(
        out,
        "condon_shortley_phase = {}",
        u8::from(coeffs.condon_shortley)
    );
    let _ = writeln!(out, "reference_radius_m = {:e}", coeffs.reference_radius_m);
    if let Some(gm) = coeffs.gm_m3_s2 {
        let _ = writeln!(out, "gm_m3_s2 = {gm:e}");
    }
    let _ = writeln!(out, "units = {}", one_line(&coeffs.units));
    let _ = writeln!(out, "lmax = {}", coeffs.lmax());
    let secular = coeffs.secular();
    if let Some(sv) = secular {
        let _ = writeln!(out, "epoch_year = {:e}", sv.epoch_year);
    }
    let mut extra: Vec<(String, String)> = provenance.to_attributes();
    if let Some(previous) = coeffs.attributes.get("history") {
        for (k, v) in extra.iter_mut() {
            if k == "history" {
                *v = crate::io::provenance::chain_history(v, Some(previous), " | ");
            }
        }
    }
    for (k, v) in &coeffs.attributes {
        // the epoch of a rate-carrying model is written with the rates, not as a loose attribute
        let written_with_rates = k == "epoch_year" && secular.is_some();
        if !written_with_rates && !extra.iter().any(|(e, _)| e == k) {
            extra.push((k.clone(), v.clone()));
        }
    }
    for (k, v) in extra {
        if !k.is_empty() && !k.contains(char::is_whitespace) && !k.contains(['=', '#']) {
            let _ = writeln!(out, "{k} = {}", one_line(&v).replace('#', " "));
        }
    }
    match secular {
        None => {
            out.push_str(if sig.is_some() {
                "# l m C S sigma_C sigma_S\n"
            } else {
                "# l m C S\n"
            });
            for (l, m, c, s) in coeffs.iter() {
                let _ = write!(out, "{l} {m} {c:e} {s:e}");
                if let Some((sc, ss)) = sig {
                    let i = packed_index(l, m);
                    let _ = write!(out, " {:e} {:e}", sc[i], ss[i]);
                }
                out.push('\n');
            }
        }
        Some(sv) => {
            let rates = &sv.rates;
            let both = sig.zip(rates.sigmas());
            out.push_str(if both.is_some() {
                "# l m C S sigma_C sigma_S dC_dt dS_dt sigma_dC_dt sigma_dS_dt (rates per year)\n"
            } else {
                "# l m C S dC_dt dS_dt (rates per year)\n"
            });
            for (l, m, c, s) in coeffs.iter() {
                let i = packed_index(l, m);
                let _ = write!(out, "{l} {m} {c:e} {s:e}");
                if let Some(((sc, ss), _)) = both {
                    let _ = write!(out, " {:e} {:e}", sc[i], ss[i]);
                }
                let _ = write!(out, " {:e} {:e}", rates.c(l, m), rates.s(l, m));
                if let Some((_, (rc, rs))) = both {
                    let _ = write!(out, " {:e} {:e}", rc[i], rs[i]);
                }
                out.push('\n');
            }
        }
    }
    out
}

/// Writes a text coefficient table atomically.
pub fn write_model_text(path: &Path, coeffs: &Coefficients, provenance: &Provenance) -> Result<()> {
    coeffs.check_finite()?;
    if let Some(sv) = coeffs.secular() {
        if coeffs.sigmas().is_some() != sv.rates.sigmas().is_some() {
            return Err(Error::invalid(format!(
                "{}: a text table gives σ for both the coefficients and their rates, or for neither; \
                 this model has them for only one (write NetCDF, .nc, to keep them)",
                path.display()
            )));
        }
    }
    crate::io::atomic::write_bytes_atomic(path, model_text(coeffs, provenance).as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p() -> &'static Path {
        Path::new("table.txt")
    }

    #[test]
    fn reads_keyword_column_commas_and_missing_pairs() {
        let text = "# demo\nnormalization = schmidt\nreference_radius_m = 6371.2e3\nlmax = 2\n\
                    coef, 1, 0, -29000.5, 0\ncoef 1 1 -1500 4800.25  # trailing comment\n2 2 1.5D+02 -3.0d1\n";
        let (c, r) = parse_model_text(text, p()).unwrap();
        assert_eq!(c.normalization, Normalization::Schmidt);
        assert!(!c.condon_shortley);
        assert_eq!(c.reference_radius_m, 6371.2e3);
        assert_eq!(c.c(1, 0), -29000.5);
        assert_eq!(c.s(1, 1), 4800.25);
        assert_eq!(c.c(2, 2), 150.0);
        assert_eq!(c.s(2, 2), -30.0);
        // pairs (0,0), (2,0), (2,1) are absent
        assert_eq!(r.missing_pairs, 3);
        assert!(r.normalization_given);
    }

    #[test]
    fn malformed_line_is_named() {
        let text = "1 0 1.0 0\n1 1 x 2\n";
        let err = parse_model_text(text, p()).unwrap_err().to_string();
        assert!(
            err.contains("table.txt, line 2") && err.contains("'x'"),
            "{err}"
        );
        let err = parse_model_text("2 3 1 1\n", p()).unwrap_err().to_string();
        assert!(
            err.contains("line 1") && err.contains("exceeds degree"),
            "{err}"
        );
        let err = parse_model_text("normalization = full\n1 0 1 0\n", p())
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("line 1") && err.contains("unknown normalization 'full'"),
            "{err}"
        );
        let err = parse_model_text("1 0 1 0 0.1 0.1\n1 1 1 1\n", p())
            .unwrap_err()
            .to_string();
        assert!(err.contains("line 2"), "{err}");
        let err = parse_model_text("1 0 1 0\n1 0 2 0\n", p())
            .unwrap_err()
            .to_string();
        assert!(err.contains("line 2") && err.contains("twice"), "{err}");
        let err = parse_model_text("lmax = 1\n2 0 1 0\n", p())
            .unwrap_err()
            .to_string();
        assert!(err.contains("line 2") && err.contains("lmax"), "{err}");
    }

    #[test]
    fn write_read_is_bit_exact() {
        let mut c = Coefficients::zeros(6, Normalization::Orthonormal);
        c.reference_radius_m = 3_396_000.0;
        c.gm_m3_s2 = Some(4.282837e13);
        c.units = "m".into();
        let mut sc = vec![0.0; c.len()];
        let mut ss = vec![0.0; c.len()];
        for (i, (l, m)) in (0..=6usize)
            .flat_map(|l| (0..=l).map(move |m| (l, m)))
            .enumerate()
        {
            let x = (i as f64 + 0.1).sin() / 3.0 * 10f64.powi(-(l as i32));
            c.set(l, m, x, if m > 0 { x * std::f64::consts::PI } else { 0.0 });
            sc[i] = x.abs() * 1e-3 + 1e-300;
            ss[i] = 1.0 / 3.0;
        }
        c.set_sigmas(sc, ss).unwrap();
        c.attributes.insert("title".into(), "test model".into());
        let text = model_text(&c, &Provenance::from_command_line("kugel convert a b"));
        let (back, r) = parse_model_text(&text, p()).unwrap();
        assert_eq!(r.missing_pairs, 0);
        assert_eq!(back.c_packed(), c.c_packed());
        assert_eq!(back.s_packed(), c.s_packed());
        assert_eq!(back.sigmas(), c.sigmas());
        assert_eq!(back.condon_shortley, c.condon_shortley);
        assert_eq!(back.gm_m3_s2, c.gm_m3_s2);
        assert_eq!(back.units, "m");
        assert_eq!(back.attributes["title"], "test model");
    }
}
