//! Validation of observation records and merging of duplicates.
//!
//! Rules (each bad row names the rule it broke):
//! - latitude is a number in [−90, 90];
//! - longitude is a number in [−180, 360] (either convention);
//! - the value is a finite number;
//! - σ, where given, is a finite number > 0;
//! - the quantity, where given, is a name `kugel evaluate --quantity` knows;
//! - altitude, height and time, where given, are finite numbers.
//!
//! Observations at the same position (equal latitude and longitude after reducing longitude to
//! [0, 360); at a pole every longitude is the same position) are merged into one point whose
//! value is the σ-weighted mean Σ(v/σ²)/Σ(1/σ²) and whose σ is (Σ 1/σ²)^−½, the usual
//! combination of independent measurements of one quantity (common practice). Without σ the
//! merged value is the plain mean.

use std::collections::HashMap;
use std::path::Path;

use crate::error::{Error, Result};

use super::{BadRowPolicy, PointExtras, PointReadOptions, PointReadReport, PointSet};
use crate::field::Quantity;

/// How many bad rows an error message or report quotes.
pub const QUOTED_BAD_ROWS: usize = 5;

/// One record as parsed, before validation. A field is `Err(text)` when it could not be read
/// as a number (the text is quoted in the message).
#[derive(Debug, Clone, PartialEq)]
pub struct RawRecord {
    /// Line number (CSV) or record index (NetCDF).
    pub line: usize,
    pub lat: std::result::Result<f64, String>,
    pub lon: std::result::Result<f64, String>,
    /// `None` when the source has no value column.
    pub value: Option<std::result::Result<f64, String>>,
    /// `None` when the source has no σ column.
    pub sigma: Option<std::result::Result<f64, String>>,
    /// The optional columns (each `None` when absent from the source).
    pub extras: RawExtras,
}

/// The optional columns of one record, before validation.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RawExtras {
    /// The quantity name as written.
    pub quantity: Option<String>,
    pub altitude_km: Option<std::result::Result<f64, String>>,
    pub height_m: Option<std::result::Result<f64, String>>,
    pub time: Option<std::result::Result<f64, String>>,
}

/// The optional columns of one record, validated.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct CheckedExtras {
    quantity: Option<Quantity>,
    altitude_km: Option<f64>,
    height_m: Option<f64>,
    time: Option<f64>,
}

fn check_extras(r: &RawExtras) -> std::result::Result<CheckedExtras, String> {
    let finite = |name: &str,
                  f: &Option<std::result::Result<f64, String>>|
     -> std::result::Result<Option<f64>, String> {
        match f {
            None => Ok(None),
            Some(Err(text)) => Err(format!("{name} `{text}` is not a number")),
            Some(Ok(v)) if !v.is_finite() => Err(format!("{name} {v} is not finite")),
            Some(Ok(v)) => Ok(Some(*v)),
        }
    };
    let quantity = match &r.quantity {
        None => None,
        Some(text) => Some(text.parse::<Quantity>().map_err(|e| e.to_string())?),
    };
    Ok(CheckedExtras {
        quantity,
        altitude_km: finite("altitude_km", &r.altitude_km)?,
        height_m: finite("height_m", &r.height_m)?,
        time: finite("time", &r.time)?,
    })
}

/// Checks one record; the error text names the field and what was expected.
fn check_record(
    r: &RawRecord,
) -> std::result::Result<(f64, f64, Option<f64>, Option<f64>), String> {
    let number =
        |name: &str, f: &std::result::Result<f64, String>| -> std::result::Result<f64, String> {
            match f {
                Ok(v) => Ok(*v),
                Err(text) => Err(format!("{name} `{text}` is not a number")),
            }
        };
    let lat = number("latitude", &r.lat)?;
    if !(-90.0..=90.0).contains(&lat) {
        return Err(format!("latitude {lat} is outside [-90, 90]"));
    }
    let lon = number("longitude", &r.lon)?;
    if !(-180.0..=360.0).contains(&lon) {
        return Err(format!("longitude {lon} is outside [-180, 360]"));
    }
    let value = match &r.value {
        Some(f) => {
            let v = number("value", f)?;
            if !v.is_finite() {
                return Err(format!("value {v} is not finite"));
            }
            Some(v)
        }
        None => None,
    };
    let sigma = match &r.sigma {
        Some(f) => {
            let s = number("sigma", f)?;
            if !(s.is_finite() && s > 0.0) {
                return Err(format!("sigma {s} is not a finite number > 0"));
            }
            Some(s)
        }
        None => None,
    };
    Ok((lat, lon, value, sigma))
}

/// Position key for duplicate detection: exact equality after reducing longitude to [0, 360)
/// (all longitudes coincide at a pole).
fn position_key(lat: f64, lon: f64) -> (u64, u64) {
    let lon = if lat.abs() == 90.0 {
        0.0
    } else {
        lon.rem_euclid(360.0)
    };
    // +0.0 avoids distinguishing −0 from 0.
    ((lat + 0.0).to_bits(), (lon + 0.0).to_bits())
}

/// Which optional columns the records of a source carry (known from its header or variable
/// list before any record is read).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct RecordColumns {
    pub value: bool,
    pub sigma: bool,
    pub quantity: bool,
    pub altitude_km: bool,
    pub height_m: bool,
    pub time: bool,
}

/// Validates records as they come, applies the bad-row policy and merges duplicates. `unit`
/// names what `line` counts ("line", "record", "index") in messages. An error from the source
/// (a malformed record) stops the reading and is returned as it is.
pub fn validate_records(
    path: &Path,
    unit: &str,
    columns: RecordColumns,
    records: impl IntoIterator<Item = Result<RawRecord>>,
    options: &PointReadOptions,
) -> Result<(PointSet, PointReadReport)> {
    let mut report = PointReadReport {
        path: path.to_path_buf(),
        ..Default::default()
    };
    let mut set = PointSet::default();
    let mut sigma = Vec::new();
    let mut extras = ExtrasBuilder::default();
    let mut bad = 0usize;
    for r in records {
        let r = r?;
        report.rows_read += 1;
        match check_record(&r).and_then(|ok| Ok((ok, check_extras(&r.extras)?))) {
            Ok(((lat, lon, v, s), x)) => {
                extras.push(&x);
                set.lat_deg.push(lat);
                set.lon_deg.push(lon);
                if let Some(v) = v {
                    set.value.push(v);
                }
                if let Some(s) = s {
                    sigma.push(s);
                }
                set.source_lines.push(r.line);
            }
            Err(message) => {
                bad += 1;
                if report.bad_row_examples.len() < QUOTED_BAD_ROWS {
                    report
                        .bad_row_examples
                        .push(format!("{unit} {}: {message}", r.line));
                }
            }
        }
    }
    if bad > 0 && options.on_bad_row == BadRowPolicy::Error {
        return Err(Error::format(
            path,
            format!(
                "{bad} bad row{} of {}: {}{}; fix them or pass --on-bad-row skip to skip and count them",
                if bad == 1 { "" } else { "s" },
                report.rows_read,
                report.bad_row_examples.join("; "),
                if bad > QUOTED_BAD_ROWS { "; ..." } else { "" }
            ),
        ));
    }
    report.bad_rows_skipped = bad;
    if columns.sigma {
        set.sigma = Some(sigma);
    }
    if !columns.value {
        set.value.clear();
    }
    set.extras = extras.finish(columns);
    if options.merge_duplicates && !set.extras.any() {
        merge_duplicates(&mut set, &mut report);
    }
    report.points = set.len();
    if set.is_empty() {
        return Err(Error::format(
            path,
            format!(
                "no valid observations ({} rows read, {} bad)",
                report.rows_read, report.bad_rows_skipped
            ),
        ));
    }
    Ok((set, report))
}

/// Collects the validated optional columns row by row.
#[derive(Default)]
struct ExtrasBuilder {
    quantity: Vec<Quantity>,
    altitude_km: Vec<f64>,
    height_m: Vec<f64>,
    time: Vec<f64>,
}

impl ExtrasBuilder {
    fn push(&mut self, x: &CheckedExtras) {
        if let Some(q) = x.quantity {
            self.quantity.push(q);
        }
        if let Some(v) = x.altitude_km {
            self.altitude_km.push(v);
        }
        if let Some(v) = x.height_m {
            self.height_m.push(v);
        }
        if let Some(v) = x.time {
            self.time.push(v);
        }
    }

    fn finish(self, columns: RecordColumns) -> PointExtras {
        PointExtras {
            quantity: columns.quantity.then_some(self.quantity),
            altitude_km: columns.altitude_km.then_some(self.altitude_km),
            height_m: columns.height_m.then_some(self.height_m),
            time_year: columns.time.then_some(self.time),
        }
    }
}

/// Merges observations at identical positions into their first occurrence (σ-weighted mean).
pub fn merge_duplicates(set: &mut PointSet, report: &mut PointReadReport) {
    let n = set.len();
    let mut first_of: HashMap<(u64, u64), usize> = HashMap::with_capacity(n);
    let mut target = vec![usize::MAX; n];
    let mut any = false;
    for (i, (target_i, (&lat, &lon))) in target
        .iter_mut()
        .zip(set.lat_deg.iter().zip(&set.lon_deg))
        .enumerate()
    {
        let first = *first_of.entry(position_key(lat, lon)).or_insert(i);
        *target_i = first;
        any |= first != i;
    }
    if !any {
        return;
    }
    // Accumulate Σ w·v and Σ w at each first occurrence.
    let mut sum_wv = vec![0.0; n];
    let mut sum_w = vec![0.0; n];
    let mut count = vec![0usize; n];
    for (i, &t) in target.iter().enumerate() {
        let w = set.weight(i);
        if !set.value.is_empty() {
            sum_wv[t] += w * set.value[i];
        }
        sum_w[t] += w;
        count[t] += 1;
    }
    let mut out = PointSet::default();
    let mut sigma = Vec::new();
    for i in 0..n {
        if target[i] != i {
            continue;
        }
        out.lat_deg.push(set.lat_deg[i]);
        out.lon_deg.push(set.lon_deg[i]);
        out.source_lines.push(set.source_lines[i]);
        if !set.value.is_empty() {
            out.value.push(sum_wv[i] / sum_w[i]);
        }
        if set.sigma.is_some() {
            sigma.push(1.0 / sum_w[i].sqrt());
        }
        if count[i] > 1 {
            report.duplicate_positions += 1;
            report.duplicates_merged += count[i] - 1;
        }
    }
    if set.sigma.is_some() {
        out.sigma = Some(sigma);
    }
    *set = out;
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Validates in-memory records with the default options; sigma is present if the first has one.
    fn validate_all(recs: Vec<RawRecord>) -> (PointSet, PointReadReport) {
        let sigma = recs[0].sigma.is_some();
        validate_records(
            Path::new("x.csv"),
            "line",
            RecordColumns {
                value: true,
                sigma,
                ..Default::default()
            },
            recs.into_iter().map(Ok),
            &PointReadOptions::default(),
        )
        .unwrap()
    }

    fn rec(line: usize, lat: f64, lon: f64, v: f64, s: Option<f64>) -> RawRecord {
        RawRecord {
            line,
            lat: Ok(lat),
            lon: Ok(lon),
            value: Some(Ok(v)),
            sigma: s.map(Ok),
            extras: RawExtras::default(),
        }
    }

    #[test]
    fn weighted_mean_of_duplicates() {
        // Two measurements 1 ± 1 and 4 ± 2: weighted mean (1·1 + 4·0.25)/1.25 = 1.6,
        // σ = 1/sqrt(1.25) (common practice: inverse-variance weighting).
        let recs = vec![
            rec(2, 10.0, -170.0, 1.0, Some(1.0)),
            rec(3, 10.0, 190.0, 4.0, Some(2.0)),
        ];
        let (set, report) = validate_all(recs);
        assert_eq!(set.len(), 1);
        assert!((set.value[0] - 1.6).abs() < 1e-15);
        assert!((set.sigma.as_ref().unwrap()[0] - 1.0 / 1.25f64.sqrt()).abs() < 1e-15);
        assert_eq!(report.duplicates_merged, 1);
        assert_eq!(report.duplicate_positions, 1);
    }

    #[test]
    fn pole_longitudes_coincide() {
        let recs = vec![rec(2, 90.0, 0.0, 1.0, None), rec(3, 90.0, 123.0, 3.0, None)];
        let (set, report) = validate_all(recs);
        assert_eq!(set.len(), 1);
        assert_eq!(set.value[0], 2.0);
        assert_eq!(report.duplicates_merged, 1);
    }
}
