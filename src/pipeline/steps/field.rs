//! synthesize and evaluate steps: physical quantities on grids and at points
//! (`field::synthesis`).

use std::borrow::Cow;
use std::collections::BTreeMap;

use super::{ReportPart, StepEnv, StepOutcome};
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};
use crate::field::cautions::{caution_for, DECLINATION_CAUTION};
use crate::field::normal_field::NormalField;
use crate::field::quantity::{Quantity, QuantityFamily};
use crate::field::synthesis::{
    evaluate_at_points, synthesize_on_grid, GeocentricPoint, SynthesisRequest, TargetSurface,
};
use crate::field::{Ellipsoid, ModelKind};
use crate::io::csv_sidecar::{write_sidecar, CsvSidecar};
use crate::io::csv_table::write_csv_table;
use crate::io::filter_spectra::parse_filter_chain;
use crate::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use crate::io::provenance::Provenance;
use crate::observe::fit::observation::{ObservationSet, PointConversion};
use crate::pipeline::file_names::StepFiles;
use crate::pipeline::products::Product;
use crate::pipeline::step_spec::{EvaluateStep, SynthesizeStep};
use crate::report::html::Block;
use crate::report::raster::maps::{render_map_png, render_points_png, MapStyle};
use crate::sht::GaussGrid;

/// Grid-writing options from the config's `[output]`.
pub(super) fn write_options<'a>(env: &StepEnv, provenance: &'a Provenance) -> GridWriteOptions<'a> {
    let lon_convention = match env.job.config.output.lon_convention.as_deref() {
        Some("-180-180") => LonConvention::MinusPlus180,
        _ => LonConvention::ZeroTo360,
    };
    GridWriteOptions {
        float32: env.job.config.output.float32,
        lon_convention,
        provenance,
    }
}

fn quantities(names: &[String]) -> Result<Vec<Quantity>> {
    names.iter().map(|q| q.parse::<Quantity>()).collect()
}

/// The model a synthesize or evaluate step works on at its `time` key: C + (t − t₀)·dC/dt for a
/// model with secular variation ([`Coefficients::at_time`]), the model at its epoch t₀ when no
/// time is given (said in `notes`). A time for a model without rates is refused, naming the
/// step and the model.
pub(super) fn model_at_time<'a>(
    step_name: &str,
    model_name: &str,
    model: &'a Coefficients,
    time: Option<f64>,
    notes: &mut Vec<String>,
) -> Result<Cow<'a, Coefficients>> {
    match (time, model.secular()) {
        (Some(t), Some(_)) => {
            Ok(Cow::Owned(model.at_time(t).map_err(|e| {
                Error::invalid(format!("steps.{step_name}.time: {e}"))
            })?))
        }
        (Some(t), None) => Err(Error::invalid(format!(
            "steps.{step_name}.time: {t} given, but model '{model_name}' has no secular variation \
             (no dC_dt, dS_dt); a time applies only to a model with rates (a fit step with epoch)"
        ))),
        (None, Some(sv)) => {
            notes.push(format!(
                "{step_name}: model '{model_name}' has secular variation; evaluated at its epoch {} (give time = YEAR for another)",
                sv.epoch_year
            ));
            let mut m = model.clone();
            m.clear_secular();
            Ok(Cow::Owned(m))
        }
        (None, None) => Ok(Cow::Borrowed(model)),
    }
}

/// The cautions that belong with these quantities: declination and geoid have their own;
/// every magnetic quantity carries the declination caution, since a magnetic model's maps
/// and values are one step from a declination.
pub(super) fn cautions_for(quantities: &[Quantity]) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for &q in quantities {
        let text = caution_for(q).or(if q.family() == QuantityFamily::Magnetic {
            Some(DECLINATION_CAUTION)
        } else {
            None
        });
        if let Some(t) = text {
            if !out.iter().any(|c| c == t) {
                out.push(t.to_string());
            }
        }
    }
    out
}

pub fn synthesize(name: &str, step: &SynthesizeStep, env: &StepEnv) -> Result<StepOutcome> {
    let mut notes = Vec::new();
    let model = model_at_time(
        name,
        &step.model,
        env.model(&step.model)?,
        step.time,
        &mut notes,
    )?;
    let model = model.as_ref();
    let qs = quantities(&step.quantities)?;
    let chain = step
        .filter
        .as_deref()
        .map(|f| parse_filter_chain(f, Some(&env.job.base_dir)))
        .transpose()?;
    let altitude_m = step.altitude_km.unwrap_or(0.0) * 1e3;
    let surface = if altitude_m == 0.0 {
        TargetSurface::ReferenceSphere
    } else {
        TargetSurface::Altitude { altitude_m }
    };
    let grid_lmax = step.grid_lmax.unwrap_or(model.lmax());
    let grid = GaussGrid::new(grid_lmax);
    let mut request = SynthesisRequest::new(qs.clone());
    request.surface = surface;
    request.normal_field = NormalField::None;
    request.filter = chain.as_ref();
    let fields = synthesize_on_grid(model, &grid, &request)?;

    let filter_text = chain.as_ref().map(|c| c.describe());
    let degree_range = format!(
        "degrees 0-{}{}{}{}",
        model.lmax(),
        filter_text
            .as_ref()
            .map(|f| format!(", {f}"))
            .unwrap_or_default(),
        if altitude_m != 0.0 {
            format!(", at {:.1} km altitude", altitude_m / 1e3)
        } else {
            String::new()
        },
        step.time.map(|t| format!(", at {t}")).unwrap_or_default()
    );
    let mut out = StepOutcome::default();
    for n in notes {
        out.report.push((ReportPart::Maps, Block::Paragraph(n)));
    }
    let mut file = GridFile::from_engine_grid(
        &grid,
        format!(
            "{name}: {}",
            qs.iter().map(|q| q.name()).collect::<Vec<_>>().join(", ")
        ),
    );
    let mut variables = Vec::new();
    for (q, data) in &fields {
        let units = q
            .units()
            .map_or_else(|| model.units.clone(), str::to_string);
        let style = MapStyle {
            title: format!("{name}: {}", q.long_name()),
            units: units.clone(),
            degree_range: degree_range.clone(),
            lat_deg: Some(grid.latitudes_deg()),
            lon0_deg: grid.lon0_rad.to_degrees(),
        };
        let png = render_map_png(data, &style);
        let png_name = StepFiles(name).map_png(&q.variable_name());
        if env.job.config.output.wants("png") {
            crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&png_name), &png)?;
            out.files.push((png_name, format!("map of {}", q.name())));
        }
        out.report.push((
            ReportPart::Maps,
            Block::Png {
                bytes: png,
                caption: format!("{}: {} ({units}), {degree_range}", name, q.long_name()),
            },
        ));
        variables.push(q.variable_name());
        file.push(
            &q.variable_name(),
            q.long_name(),
            &units,
            q.standard_name_given(false),
            data.clone(),
        );
    }
    out.cautions = cautions_for(&qs);
    if !out.cautions.is_empty() {
        file.attributes
            .push(("caution".into(), out.cautions.join(" ")));
    }
    file.attributes
        .push(("kugel_altitude_m".into(), altitude_m.to_string()));
    if let Some(t) = step.time {
        file.attributes
            .push(("kugel_time_year".into(), t.to_string()));
    }
    file.attributes.push((
        "kugel_reference_radius_m".into(),
        model.reference_radius_m.to_string(),
    ));
    let prov = env.provenance_for(Some(model.lmax()), filter_text);
    let nc = StepFiles(name).main("nc");
    if env.job.config.output.wants("netcdf") {
        write_grid(
            &env.staging_dir.join(&nc),
            &file,
            &write_options(env, &prov),
        )?;
        out.files
            .push((nc, format!("maps of {}", variables.join(", "))));
    }
    out.product = Some(Product::Maps(variables));
    Ok(out)
}

/// Where and what each point of `points_name` observed: its own altitude, ellipsoidal height
/// and quantity columns when it has them (the conversion the fit uses,
/// [`ObservationSet::push_point_file`]), else the step's `altitude_km` and `quantity`.
fn observed_rows(
    name: &str,
    step: &EvaluateStep,
    model: &Coefficients,
    env: &StepEnv,
) -> Result<ObservationSet> {
    let points = env.points(&step.points)?;
    let extras = &points.set.extras;
    if step.altitude_km.is_some() && (extras.altitude_km.is_some() || extras.height_m.is_some()) {
        return Err(Error::invalid(format!(
            "steps.{name}.altitude_km: the points '{}' carry their own altitude or height column; leave the key out",
            step.points
        )));
    }
    let default_q = match &step.quantity {
        Some(q) => q.parse::<Quantity>()?,
        None => points
            .quantity
            .parse::<Quantity>()
            .unwrap_or(Quantity::Value),
    };
    let ellipsoid = match env.job.config.inputs.get(&step.points) {
        Some(crate::pipeline::input_spec::Input::Points(p)) => {
            p.ellipsoid.as_deref().map(Ellipsoid::parse).transpose()?
        }
        _ => None,
    };
    let path = env
        .job
        .input_path(&step.points)
        .unwrap_or_else(|| step.points.clone().into());
    let mut set = ObservationSet::default();
    let d = set.add_dataset(&step.points, 1.0, points.set.sigma.is_some())?;
    set.push_point_file(
        &path,
        &points.set,
        &PointConversion {
            default_quantity: default_q,
            reference_radius_m: model.reference_radius_m + step.altitude_km.unwrap_or(0.0) * 1e3,
            ellipsoid,
        },
        d,
    )?;
    Ok(set)
}

pub fn evaluate(name: &str, step: &EvaluateStep, env: &StepEnv) -> Result<StepOutcome> {
    let mut notes = Vec::new();
    let model = model_at_time(
        name,
        &step.model,
        env.model(&step.model)?,
        step.time,
        &mut notes,
    )?;
    let model = model.as_ref();
    let points = env.points(&step.points)?;
    let rows = observed_rows(name, step, model, env)?;
    let obs = &rows.observations;
    // rows of one quantity are evaluated together (the request is per quantity)
    let mut by_quantity: BTreeMap<Quantity, Vec<usize>> = BTreeMap::new();
    for (i, o) in obs.iter().enumerate() {
        by_quantity.entry(o.quantity).or_default().push(i);
    }
    let mut modelled = vec![f64::NAN; obs.len()];
    for (&q, idx) in &by_quantity {
        ModelKind::of(model).check_supports(model, q)?;
        let sites: Vec<GeocentricPoint> = idx.iter().map(|&i| obs[i].position).collect();
        let mut request = SynthesisRequest::new(vec![q]);
        request.normal_field = NormalField::None;
        let values = evaluate_at_points(model, &sites, &request)?.remove(0);
        for (&i, v) in idx.iter().zip(values) {
            modelled[i] = v;
        }
    }
    let residual: Vec<f64> = obs
        .iter()
        .zip(&modelled)
        .map(|(o, m)| o.value - m)
        .collect();
    let quantities: Vec<Quantity> = by_quantity.keys().copied().collect();
    let units_of = |q: Quantity| -> String {
        q.units()
            .map_or_else(|| points.units.clone(), str::to_string)
    };
    let mut unit_names: Vec<String> = quantities.iter().map(|&q| units_of(q)).collect();
    unit_names.dedup();
    // one unit for the whole table when the quantities share it (x, y, z in nT)
    let units = if unit_names.len() == 1 {
        unit_names[0].clone()
    } else {
        "see the quantity column".to_string()
    };
    let what = quantities
        .iter()
        .map(|q| q.name())
        .collect::<Vec<_>>()
        .join(", ");

    let mut out = StepOutcome {
        cautions: cautions_for(&quantities),
        ..Default::default()
    };
    if env.job.config.output.wants("csv") {
        let table: Vec<Vec<String>> = (0..residual.len())
            .map(|i| {
                let o = &obs[i];
                vec![
                    points.set.lat_deg[i].to_string(),
                    points.set.lon_deg[i].to_string(),
                    format!(
                        "{:.3}",
                        (o.position.radius_m - model.reference_radius_m) / 1e3
                    ),
                    o.quantity.name().to_string(),
                    format!("{:.6}", o.value),
                    format!("{:.6}", modelled[i]),
                    format!("{:.6}", residual[i]),
                ]
            })
            .collect();
        let file = StepFiles(name).residuals("csv");
        let path = env.staging_dir.join(&file);
        write_csv_table(
            &path,
            &[
                "lat_deg",
                "lon_deg",
                "altitude_km",
                "quantity",
                "observed",
                "model",
                "residual",
            ],
            &table,
        )?;
        let mut sidecar =
            CsvSidecar::with_provenance(&env.provenance_for(Some(model.lmax()), None));
        sidecar
            .column("lat_deg", "degree_north", "latitude")
            .column("lon_deg", "degree_east", "longitude")
            .column(
                "altitude_km",
                "km",
                "geocentric radius of the point minus the model's reference radius",
            )
            .column("quantity", "1", "the quantity observed on the row")
            .column("observed", &units, "observed value")
            .column("model", &units, "model value")
            .column("residual", &units, "observed minus model");
        sidecar.cautions = out.cautions.clone();
        write_sidecar(&path, &sidecar)?;
        out.files.push((
            format!("{file}.json"),
            "units and provenance of the CSV".into(),
        ));
        out.files.push((
            file,
            format!(
                "observed − model {what} at {} points ({units})",
                residual.len()
            ),
        ));
    }
    let style = MapStyle {
        title: format!("{name}: residuals"),
        units: units.clone(),
        degree_range: format!("observed minus model {what} (degrees 0-{})", model.lmax()),
        ..Default::default()
    };
    let png = render_points_png(&points.set.lat_deg, &points.set.lon_deg, &residual, &style);
    if env.job.config.output.wants("png") {
        let file = StepFiles(name).residuals("png");
        crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&file), &png)?;
        out.files.push((file, "residual map".into()));
    }
    for n in notes {
        out.report
            .push((ReportPart::Residuals, Block::Paragraph(n)));
    }
    let stats_rows = by_quantity
        .iter()
        .map(|(&q, idx)| {
            let r: Vec<f64> = idx.iter().map(|&i| residual[i]).collect();
            let stats = ResidualStats::of(&r);
            vec![
                name.to_string(),
                q.name().to_string(),
                r.len().to_string(),
                format!("{:.4}", stats.mean),
                format!("{:.4}", stats.rms),
                format!("{:.4}", stats.max_abs),
                units_of(q),
            ]
        })
        .collect();
    out.report.push((
        ReportPart::Residuals,
        Block::Table {
            headers: [
                "step", "quantity", "points", "mean", "RMS", "max |r|", "units",
            ]
            .iter()
            .map(|s| s.to_string())
            .collect(),
            rows: stats_rows,
        },
    ));
    out.report.push((
        ReportPart::Residuals,
        Block::Png {
            bytes: png,
            caption: format!("{name}: observed minus model at each observation ({units})"),
        },
    ));
    let stats = ResidualStats::of(&residual);
    out.numbers
        .push(("residual RMS".into(), format!("{:.4} {units}", stats.rms)));
    out.product = Some(Product::Residuals { rms: stats.rms });
    Ok(out)
}

/// Mean, RMS and largest absolute value of residuals (NaN-free input).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResidualStats {
    pub mean: f64,
    pub rms: f64,
    pub max_abs: f64,
}

impl ResidualStats {
    pub fn of(r: &[f64]) -> ResidualStats {
        let n = r.len().max(1) as f64;
        ResidualStats {
            mean: r.iter().sum::<f64>() / n,
            rms: (r.iter().map(|x| x * x).sum::<f64>() / n).sqrt(),
            max_abs: r.iter().fold(0.0, |m, x| m.max(x.abs())),
        }
    }
}
