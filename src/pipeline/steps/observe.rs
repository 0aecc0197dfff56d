//! grid and fit steps: scattered observations to a coefficient model (`observe::*`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};
use crate::io::grid::write::{write_grid, GridFile};
use crate::io::model::write_model;
use crate::observe::fit::{fit as lsq_fit, FitOptions, Regularization};
use crate::observe::gaps::GapPolicy;
use crate::observe::gridding::{grid_points, GriddingMethod, GriddingOptions};
use crate::observe::points::PointSet;
use crate::pipeline::config::StepSpec;
use crate::pipeline::products::{Points, Product};
use crate::report::html::Block;
use crate::report::maps::{render_map_png, MapStyle};
use crate::sht::TransformPlan;

/// Points in the units the model is fitted in: a disturbing potential T (m² s⁻²) becomes the
/// dimensionless T/(GM/R), so the model is a potential model with GM and R; other values are
/// kept. Returns the set and the factor from model units back to the observed units.
pub(super) fn model_units_points(points: &Points, env: &StepEnv) -> Result<(PointSet, f64)> {
    if points.quantity != "potential" {
        return Ok((points.set.clone(), 1.0));
    }
    let body = &env.job.config.body;
    let gm = body.gm_m3_s2.ok_or_else(|| {
        Error::invalid("body.gm_m3_s2: needed to turn observed potentials into coefficients")
    })?;
    let scale = gm / body.radius_m;
    let mut set = points.set.clone();
    set.value.iter_mut().for_each(|v| *v /= scale);
    if let Some(s) = set.sigma.as_mut() {
        s.iter_mut().for_each(|v| *v /= scale);
    }
    Ok((set, scale))
}

/// Stamps the model's metadata: potential models carry GM and units "1".
fn stamp(model: &mut Coefficients, points: &Points, env: &StepEnv, name: &str, how: &str) {
    let body = &env.job.config.body;
    model.reference_radius_m = body.radius_m;
    if points.quantity == "potential" {
        model.gm_m3_s2 = body.gm_m3_s2;
        model.units = "1".into();
    } else {
        model.gm_m3_s2 = None;
        model.units = points.units.clone();
    }
    model
        .attributes
        .insert("title".into(), format!("{name}: {how}"));
}

pub fn grid(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let points = env.points(step.input.as_ref())?;
    let lmax = step.lmax.unwrap_or(0);
    let (set, scale) = model_units_points(points, env)?;
    let method = match step.method.as_deref() {
        Some("nearest") => GriddingMethod::Nearest {
            k: step.neighbours.unwrap_or(8),
        },
        _ => GriddingMethod::Kernel {
            radius_km: step
                .radius_km
                .unwrap_or_else(|| default_radius_km(env, lmax)),
        },
    };
    let gaps = match &step.gaps {
        Some(g) => GapPolicy::parse(g)?,
        None => GapPolicy::Nearest,
    };
    let options = GriddingOptions {
        method,
        gaps,
        body_radius_m: env.job.config.body.radius_m,
    };
    let gridded = grid_points(&set, lmax, &options)?;
    let plan = TransformPlan::new(lmax, &gridded.grid)?;
    let mut model = plan.analyse(&gridded.value)?;
    stamp(
        &mut model,
        points,
        env,
        name,
        &format!(
            "gridded ({}) and analysed to degree {lmax}",
            method.describe()
        ),
    );

    let mut out = StepOutcome::default();
    let prov = env.provenance_for(Some(lmax), None);
    let model_file = format!("{name}_model.nc");
    write_model(&env.staging_dir.join(&model_file), &model, &prov)?;
    out.files.push((
        model_file,
        format!("coefficients to degree {lmax} from gridding"),
    ));

    let mut file =
        GridFile::from_engine_grid(&gridded.grid, format!("{name}: gridded observations"));
    file.push(
        "value",
        &format!("gridded {}", points.quantity),
        &points.units,
        None,
        gridded.value.mapv(|v| v * scale),
    );
    file.push(
        "count",
        "observations in each node's mean",
        "1",
        None,
        gridded.count.clone(),
    );
    file.push(
        "nearest_km",
        "distance to the nearest observation",
        "km",
        None,
        gridded.nearest_km.clone(),
    );
    let grid_file = format!("{name}_gridded.nc");
    write_grid(
        &env.staging_dir.join(&grid_file),
        &file,
        &super::field::write_options(env, &prov),
    )?;
    out.files.push((
        grid_file,
        "gridded values, counts and distance to data".into(),
    ));

    let style = MapStyle {
        title: format!("{name}: distance to nearest observation"),
        units: "km".into(),
        degree_range: gridded.report.summary().chars().take(110).collect(),
        lat_deg: Some(gridded.grid.latitudes_deg()),
        lon0_deg: gridded.grid.lon0_rad.to_degrees(),
    };
    let png = render_map_png(&gridded.nearest_km, &style);
    let png_name = format!("{name}_coverage.png");
    if env.job.config.output.wants("png") {
        crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&png_name), &png)?;
        out.files.push((png_name, "coverage map".into()));
    }
    out.report.push((
        ReportPart::Inputs,
        Block::Png {
            bytes: png,
            caption: format!(
                "{name}: distance from each grid node to the nearest observation ({})",
                gridded.report.summary()
            ),
        },
    ));
    out.numbers.push((
        "gap nodes".into(),
        format!("{} of {}", gridded.report.gap_nodes, gridded.report.nodes),
    ));
    out.product = Some(Product::Model(model));
    Ok(out)
}

/// Kernel radius when none is given: the half-wavelength πR/L of the band limit.
fn default_radius_km(env: &StepEnv, lmax: usize) -> f64 {
    std::f64::consts::PI * env.job.config.body.radius_m / 1000.0 / lmax.max(1) as f64
}

pub fn fit(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let points = env.points(step.input.as_ref())?;
    let lmax = step.lmax.unwrap_or(0);
    let (set, scale) = model_units_points(points, env)?;
    let regularization = Regularization::parse(step.regularization.as_deref().unwrap_or("gcv"))?;
    let options = FitOptions {
        regularization,
        body_radius_m: env.job.config.body.radius_m,
    };
    let result = lsq_fit(&set, lmax, &options)?;
    let mut model = result.model.clone();
    stamp(
        &mut model,
        points,
        env,
        name,
        &format!(
            "least-squares fit to degree {lmax}, {}",
            regularization.describe()
        ),
    );

    let mut out = StepOutcome::default();
    let mut prov = env.provenance_for(Some(lmax), None);
    prov.extra
        .push(("kugel_fit_regularization".into(), regularization.describe()));
    prov.extra.push((
        "kugel_fit_residual_rms".into(),
        format!("{:e} {}", result.residual_rms * scale, points.units),
    ));
    prov.extra.push((
        "kugel_fit_chi2_per_dof".into(),
        format!("{}", result.chi2_per_dof),
    ));
    let model_file = format!("{name}_model.nc");
    write_model(&env.staging_dir.join(&model_file), &model, &prov)?;
    out.files.push((
        model_file,
        format!("fitted coefficients with sigmas to degree {lmax}"),
    ));
    out.numbers.push((
        "residual RMS".into(),
        format!("{:.4} {}", result.residual_rms * scale, points.units),
    ));
    out.numbers
        .push(("χ²/dof".into(), format!("{:.3}", result.chi2_per_dof)));
    out.numbers
        .push(("λ".into(), format!("{:.3e}", result.lambda)));
    let rows = vec![
        vec!["points".into(), set.len().to_string()],
        vec!["unknowns".into(), ((lmax + 1) * (lmax + 1)).to_string()],
        vec!["regularization".into(), regularization.describe()],
        vec!["λ".into(), format!("{:.3e}", result.lambda)],
        vec![
            "effective parameters".into(),
            format!("{:.1}", result.effective_parameters),
        ],
        vec![
            "residual RMS".into(),
            format!("{:.4} {}", result.residual_rms * scale, points.units),
        ],
        vec!["χ²/dof".into(), format!("{:.3}", result.chi2_per_dof)],
        vec![
            "condition estimate".into(),
            format!("{:.3e}", result.condition_estimate),
        ],
    ];
    out.report.push((
        ReportPart::Models,
        Block::Paragraph(format!(
            "Fit '{name}' of '{}':",
            step.input.as_deref().unwrap_or("")
        )),
    ));
    out.report.push((
        ReportPart::Models,
        Block::Table {
            headers: vec!["quantity".into(), "value".into()],
            rows,
        },
    ));
    for w in &result.warnings {
        out.report.push((
            ReportPart::Models,
            Block::Paragraph(format!("Warning ({name}): {w}")),
        ));
    }
    out.product = Some(Product::Model(model));
    Ok(out)
}
