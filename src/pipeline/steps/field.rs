//! synthesize and evaluate steps: physical quantities on grids and at points
//! (`field::synthesis`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::error::Result;
use crate::field::cautions::caution_for;
use crate::field::normal_field::NormalField;
use crate::field::quantity::Quantity;
use crate::field::synthesis::{
    evaluate_at_points, synthesize_on_grid, GeocentricPoint, SynthesisRequest, TargetSurface,
};
use crate::io::csv_table::write_csv_table;
use crate::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use crate::io::provenance::Provenance;
use crate::pipeline::config::StepSpec;
use crate::pipeline::products::Product;
use crate::report::html::Block;
use crate::report::maps::{render_map_png, render_points_png, MapStyle};
use crate::sht::GaussGrid;
use crate::spectral::filter::FilterChain;

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

pub fn synthesize(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let model = env.model(step.model.as_ref())?;
    let qs = quantities(step.quantities.as_deref().unwrap_or_default())?;
    let chain = step
        .filter
        .as_deref()
        .map(|f| FilterChain::parse_relative_to(f, &env.job.base_dir))
        .transpose()?;
    let altitude_m = step.altitude_m.unwrap_or(0.0);
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
        "degrees 0-{}{}{}",
        model.lmax(),
        filter_text
            .as_ref()
            .map(|f| format!(", {f}"))
            .unwrap_or_default(),
        if altitude_m != 0.0 {
            format!(", at {:.1} km altitude", altitude_m / 1e3)
        } else {
            String::new()
        }
    );
    let mut out = StepOutcome::default();
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
        let png_name = format!("{name}_{}.png", q.variable_name());
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
        if let Some(c) = caution_for(*q) {
            out.cautions.push(c.to_string());
        }
        variables.push(q.variable_name());
        file.push(
            &q.variable_name(),
            q.long_name(),
            &units,
            q.standard_name_given(false),
            data.clone(),
        );
    }
    if !out.cautions.is_empty() {
        file.attributes
            .push(("caution".into(), out.cautions.join(" ")));
    }
    file.attributes
        .push(("kugel_altitude_m".into(), altitude_m.to_string()));
    file.attributes.push((
        "kugel_reference_radius_m".into(),
        model.reference_radius_m.to_string(),
    ));
    let prov = env.provenance_for(Some(model.lmax()), filter_text);
    let nc = format!("{name}.nc");
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

pub fn evaluate(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let model = env.model(step.model.as_ref())?;
    let points = env.points(step.points.as_ref())?;
    let default_q = if points.quantity == "potential" {
        "potential"
    } else {
        "value"
    };
    let q: Quantity = step.quantity.as_deref().unwrap_or(default_q).parse()?;
    let radius = model.reference_radius_m + step.altitude_m.unwrap_or(0.0);
    let sites: Vec<GeocentricPoint> = points
        .set
        .lat_deg
        .iter()
        .zip(&points.set.lon_deg)
        .map(|(&la, &lo)| GeocentricPoint::from_degrees(la, lo, radius))
        .collect();
    let mut request = SynthesisRequest::new(vec![q]);
    request.normal_field = NormalField::None;
    let modelled = evaluate_at_points(model, &sites, &request)?.remove(0);
    let residual: Vec<f64> = points
        .set
        .value
        .iter()
        .zip(&modelled)
        .map(|(o, m)| o - m)
        .collect();
    let stats = ResidualStats::of(&residual);
    let units = q
        .units()
        .map_or_else(|| points.units.clone(), str::to_string);

    let mut out = StepOutcome::default();
    if env.job.config.output.wants("csv") {
        let rows: Vec<Vec<String>> = (0..residual.len())
            .map(|i| {
                vec![
                    points.set.lat_deg[i].to_string(),
                    points.set.lon_deg[i].to_string(),
                    format!("{:.6}", points.set.value[i]),
                    format!("{:.6}", modelled[i]),
                    format!("{:.6}", residual[i]),
                ]
            })
            .collect();
        let file = format!("{name}_residuals.csv");
        write_csv_table(
            &env.staging_dir.join(&file),
            &["lat_deg", "lon_deg", "observed", "model", "residual"],
            &rows,
        )?;
        out.files.push((
            file,
            format!(
                "observed − model {} at {} points ({units})",
                q.name(),
                residual.len()
            ),
        ));
    }
    let style = MapStyle {
        title: format!("{name}: residuals"),
        units: units.clone(),
        degree_range: format!(
            "observed minus model {} (degrees 0-{})",
            q.name(),
            model.lmax()
        ),
        ..Default::default()
    };
    let png = render_points_png(&points.set.lat_deg, &points.set.lon_deg, &residual, &style);
    if env.job.config.output.wants("png") {
        let file = format!("{name}_residuals.png");
        crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&file), &png)?;
        out.files.push((file, "residual map".into()));
    }
    out.report.push((
        ReportPart::Residuals,
        Block::Table {
            headers: ["step", "points", "mean", "RMS", "max |r|", "units"]
                .iter()
                .map(|s| s.to_string())
                .collect(),
            rows: vec![vec![
                name.to_string(),
                residual.len().to_string(),
                format!("{:.4}", stats.mean),
                format!("{:.4}", stats.rms),
                format!("{:.4}", stats.max_abs),
                units.clone(),
            ]],
        },
    ));
    out.report.push((
        ReportPart::Residuals,
        Block::Png {
            bytes: png,
            caption: format!("{name}: observed minus model at each observation ({units})"),
        },
    ));
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
