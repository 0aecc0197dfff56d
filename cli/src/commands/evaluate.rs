//! `kugel evaluate MODEL POINTS.csv --quantity Q[,Q…] -o OUT.csv`: quantities of a model at
//! points. The output keeps every input column and adds one column per quantity; points with a
//! `value` column evaluated for `value` also get `residual` = value − model.

use std::path::{Path, PathBuf};

use anyhow::Context;

use super::CommandContext;
use crate::args::field::{self as field_options, FieldOptions};
use crate::progress_bar::TerminalProgress;
use kugel::error::Error;
use kugel::field::{evaluate_at_points, Ellipsoid, GeocentricPoint, Quantity, SynthesisRequest};
use kugel::io::csv_sidecar::{write_sidecar, CsvSidecar};
use kugel::io::csv_table::{csv_text, read_csv_table, CsvTable};
use kugel::io::provenance::Provenance;
use kugel::progress::Progress;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coefficient model (NetCDF or text table).
    pub model: PathBuf,
    /// Points: CSV with columns lat, lon (degrees) and optional altitude_km above the
    /// model's reference sphere, or height_m above the ellipsoid with --ellipsoid.
    pub points: PathBuf,
    /// Output CSV (written atomically; never one of the inputs).
    #[arg(long, short = 'o')]
    pub output: PathBuf,
    /// Read lat as geodetic latitude and height_m as ellipsoidal height on this ellipsoid
    /// (grs80, wgs84 or custom:a,f,gm,omega); magnetic X, Z then refer to the ellipsoid normal.
    #[arg(long, value_name = "NAME")]
    pub ellipsoid: Option<String>,
    #[command(flatten)]
    pub field: FieldOptions,
}

/// Points per call of the evaluator: the unit of progress.
const CHUNK: usize = 500;

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    kugel::io::atomic::refuse_overwrite_of_input(&args.output, &[&args.model, &args.points])?;
    let parsed = args.field.parse()?;
    let ellipsoid = args
        .ellipsoid
        .as_deref()
        .map(Ellipsoid::parse)
        .transpose()?;
    let model = field_options::read_model_truncated(&args.model, args.field.lmax)?;
    let model = field_options::model_at_time(&args.model, model, args.field.time, ctx.quiet)?;
    if let Some(w) = field_options::total_potential_warning(&model, &parsed) {
        eprintln!("{w}");
    }
    let table = read_csv_table(&args.points)?;
    let points = points_of(&table, model.reference_radius_m, ellipsoid.as_ref())?;

    let request = SynthesisRequest {
        quantities: parsed.quantities.clone(),
        normal_field: parsed.normal_field.clone(),
        filter: parsed.filter.as_ref(),
        continuation: parsed.continuation,
        ..SynthesisRequest::new(Vec::new())
    };
    // Check the request once on a single point, so a bad combination fails before any work.
    if let Some(first) = points.first() {
        evaluate_at_points(&model, std::slice::from_ref(first), &request)?;
    }
    let progress = TerminalProgress::new(ctx.quiet);
    progress.stage("evaluating", points.len() as u64);
    let mut columns: Vec<Vec<f64>> =
        vec![Vec::with_capacity(points.len()); request.quantities.len()];
    for chunk in points.chunks(CHUNK) {
        let values = evaluate_at_points(&model, chunk, &request)?;
        for (col, v) in columns.iter_mut().zip(values) {
            col.extend(v);
        }
        progress.advance(chunk.len() as u64);
    }
    progress.finish();

    let (headers, rows) = output_table(&table, &request.quantities, &columns)?;
    // the CSV starts with its header row; units, cautions and provenance go to the sidecar
    let mut sidecar =
        CsvSidecar::with_provenance(&Provenance::from_command_line(ctx.command_line.clone()));
    for q in &request.quantities {
        let name = &headers[table.headers.len() + sidecar.columns.len()];
        let units = q.units().unwrap_or(model.units.as_str());
        sidecar.column(name, units, q.long_name());
        if let Some(c) = kugel::field::cautions::caution_for(*q) {
            sidecar.cautions.push(format!("{q}: {c}"));
        }
    }
    if headers.last().map(String::as_str) == Some("residual") {
        sidecar.column("residual", &model.units, "value minus model value");
    }
    kugel::io::atomic::write_bytes_atomic(&args.output, csv_text(&headers, &rows).as_bytes())
        .and_then(|()| write_sidecar(&args.output, &sidecar))
        .with_context(|| format!("writing {}", args.output.display()))?;
    field_options::print_cautions(&request.quantities);
    if !ctx.quiet {
        crate::outputs::wrote(format!(
            "wrote {} points x {} quantities to {}",
            points.len(),
            request.quantities.len(),
            args.output.display()
        ));
    }
    Ok(())
}

/// Geocentric points from the table's columns, with line-numbered errors.
fn points_of(
    table: &CsvTable,
    reference_radius_m: f64,
    ellipsoid: Option<&Ellipsoid>,
) -> kugel::Result<Vec<GeocentricPoint>> {
    let path: &Path = &table.path;
    let lat = table.numeric_column("lat")?;
    let lon = table.numeric_column("lon")?;
    let has_alt = table.column("altitude_km").is_some();
    let has_height = table.column("height_m").is_some();
    match (ellipsoid.is_some(), has_alt, has_height) {
        (false, _, true) => {
            return Err(Error::format(
                path,
                "column height_m is a height above an ellipsoid: name it with --ellipsoid, or \
                 give altitude_km above the reference sphere instead",
            ))
        }
        (true, true, _) => {
            return Err(Error::format(
                path,
                "column altitude_km is above the reference sphere and cannot be combined with \
                 --ellipsoid (use height_m)",
            ))
        }
        _ => {}
    }
    let alt_km = if has_alt {
        Some(table.numeric_column("altitude_km")?)
    } else {
        None
    };
    let height_m = if has_height {
        Some(table.numeric_column("height_m")?)
    } else {
        None
    };
    let mut out = Vec::with_capacity(lat.len());
    for i in 0..lat.len() {
        let line = table.line_numbers[i];
        let lat_ok = lat[i].is_finite() && lat[i].abs() <= 90.0;
        if !lat_ok || !lon[i].is_finite() {
            return Err(Error::Line {
                path: path.to_path_buf(),
                line,
                message: format!(
                    "lat must lie in [-90, 90] and lon be finite (degrees), got lat {} lon {}",
                    lat[i], lon[i]
                ),
            });
        }
        let p = match ellipsoid {
            Some(e) => {
                let h = height_m.as_ref().map_or(0.0, |h| h[i]);
                GeocentricPoint::from_geodetic(e, lat[i], lon[i], h)
            }
            None => {
                let alt_m = alt_km.as_ref().map_or(0.0, |a| a[i] * 1e3);
                let r = reference_radius_m + alt_m;
                if r.is_nan() || r <= 0.0 {
                    return Err(Error::Line {
                        path: path.to_path_buf(),
                        line,
                        message: format!(
                            "altitude_km {} puts the point at or below the centre",
                            alt_m / 1e3
                        ),
                    });
                }
                GeocentricPoint::from_degrees(lat[i], lon[i], r)
            }
        };
        out.push(p);
    }
    Ok(out)
}

/// Input columns plus one column per quantity (renamed `<q>_model` if the input already has a
/// column of that name), plus `residual` when the input has `value` and `value` was asked.
fn output_table(
    table: &CsvTable,
    quantities: &[Quantity],
    columns: &[Vec<f64>],
) -> kugel::Result<(Vec<String>, Vec<Vec<String>>)> {
    let mut headers = table.headers.clone();
    for q in quantities {
        let name = q.name().to_string();
        let taken = table.column(&name).is_some();
        headers.push(if taken { format!("{name}_model") } else { name });
    }
    let observed = match (
        quantities.iter().position(|q| *q == Quantity::Value),
        table.column("value"),
    ) {
        (Some(qi), Some(_)) => Some((qi, table.numeric_column("value")?)),
        _ => None,
    };
    if observed.is_some() {
        if table.column("residual").is_some() {
            return Err(Error::format(
                &table.path,
                "the points already have a `residual` column; rename it so it is not confused \
                 with value - model",
            ));
        }
        headers.push("residual".to_string());
    }
    let rows = table
        .rows
        .iter()
        .enumerate()
        .map(|(i, row)| {
            let mut r = row.clone();
            r.extend(columns.iter().map(|c| format_number(c[i])));
            if let Some((qi, obs)) = &observed {
                r.push(format_number(obs[i] - columns[*qi][i]));
            }
            r
        })
        .collect();
    Ok((headers, rows))
}

/// Shortest representation that reads back to the same double.
fn format_number(v: f64) -> String {
    if v.is_finite() {
        format!("{v}")
    } else {
        "NaN".to_string()
    }
}
