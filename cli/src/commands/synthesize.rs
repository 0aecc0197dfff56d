//! `kugel synthesize MODEL -o MAP.nc --quantity Q[,Q…]`: quantities of a coefficient model on
//! a global grid, one CF NetCDF variable per quantity.

use std::path::{Path, PathBuf};

use super::CommandContext;
use crate::args::field::{self as field_options, FieldOptions};
use crate::progress_bar::TerminalProgress;
use kugel::error::Error;
use kugel::field::synthesis::synthesize_on_grid_with_progress;
use kugel::field::{cautions, Quantity, SynthesisRequest, TargetSurface};
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::provenance::Provenance;
use kugel::report::raster::maps::{render_map_png, MapStyle};
use kugel::sht::{GaussGrid, Grid};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coefficient model (NetCDF or text table).
    pub model: PathBuf,
    /// Output NetCDF grid (written atomically; never the input).
    #[arg(long, short = 'o')]
    pub output: PathBuf,
    /// Grid: `gauss` (Gauss–Legendre for the band limit) or `regular:STEP_DEG`
    /// (node-registered, both poles included; `regular:1` is 181 x 360).
    #[arg(long, value_name = "KIND", default_value = "gauss")]
    pub grid: String,
    /// Height above the model's reference sphere, km (negative = downward continuation).
    #[arg(long, value_name = "H", allow_negative_numbers = true)]
    pub altitude_km: Option<f64>,
    /// Radius of the sphere to compute on, km (instead of --altitude-km).
    #[arg(long, value_name = "R")]
    pub radius_km: Option<f64>,
    /// Also write a quick-look PNG map per quantity beside the output (MAP_QUANTITY.png).
    #[arg(long)]
    pub png: bool,
    /// Store the data variables as 32-bit floats.
    #[arg(long)]
    pub float32: bool,
    /// Longitude range of the file: 0-360 or -180-180.
    #[arg(
        long,
        value_name = "RANGE",
        default_value = "0-360",
        allow_hyphen_values = true
    )]
    pub lon_range: String,
    #[command(flatten)]
    pub field: FieldOptions,
}

/// A `--grid` value: `gauss` or `regular:STEP_DEG`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GridSpec {
    Gauss,
    Regular { step_deg: f64 },
}

impl GridSpec {
    pub fn parse(spec: &str) -> kugel::Result<GridSpec> {
        let spec = spec.trim();
        if spec.eq_ignore_ascii_case("gauss") {
            return Ok(GridSpec::Gauss);
        }
        if let Some(step) = spec.strip_prefix("regular:") {
            let step_deg: f64 = step.trim().parse().map_err(|_| {
                Error::invalid(format!("--grid {spec}: '{step}' is not a step in degrees"))
            })?;
            return Ok(GridSpec::Regular { step_deg });
        }
        Err(Error::invalid(format!(
            "--grid '{spec}': expected gauss or regular:STEP_DEG (e.g. regular:1)"
        )))
    }

    /// (rows, columns) for band limit `lmax`, without building the grid.
    pub fn shape(self, lmax: usize) -> kugel::Result<(f64, f64)> {
        match self {
            GridSpec::Gauss => Ok(kugel::sht::budget::gauss_grid_shape(lmax)),
            GridSpec::Regular { step_deg } => {
                kugel::sht::equiangular::regular_grid_shape_by_step(step_deg)
            }
        }
    }

    /// The engine grid for band limit `lmax`.
    pub fn build(self, lmax: usize) -> kugel::Result<Grid> {
        match self {
            GridSpec::Gauss => Ok(GaussGrid::new(lmax)),
            GridSpec::Regular { step_deg } => {
                kugel::sht::equiangular::regular_grid_by_step(step_deg)
            }
        }
    }
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    kugel::io::atomic::refuse_overwrite_of_input(&args.output, &[&args.model])?;
    let parsed = args.field.parse()?;
    let surface = field_options::target_surface(args.altitude_km, args.radius_km)?;
    let lon_convention: LonConvention = args.lon_range.parse()?;
    let grid_spec = GridSpec::parse(&args.grid)?;
    let model = kugel::io::model::read_model(&args.model)?;
    // everything the synthesis will hold, estimated before the model is padded or any grid,
    // node or table is built
    let lmax = args.field.lmax.unwrap_or(model.lmax());
    kugel::field::synthesis::check_synthesis_job(lmax, &parsed.quantities, grid_spec.shape(lmax)?)?;
    let model = field_options::resize_model(&args.model, model, args.field.lmax)?;
    let model = field_options::model_at_time(&args.model, model, args.field.time, ctx.quiet)?;
    let grid = grid_spec.build(model.lmax())?;
    if let Some(w) = field_options::total_potential_warning(&model, &parsed) {
        eprintln!("{w}");
    }
    let request = SynthesisRequest {
        quantities: parsed.quantities.clone(),
        surface,
        normal_field: parsed.normal_field.clone(),
        filter: parsed.filter.as_ref(),
        continuation: parsed.continuation,
    };

    let progress = TerminalProgress::new(ctx.quiet);
    let fields = synthesize_on_grid_with_progress(&model, &grid, &request, &progress);
    progress.finish();
    let fields = fields?;

    let radius_m = surface.radius_m(model.reference_radius_m);
    let removed = parsed.normal_field.ellipsoid().is_some();
    let mut file = GridFile::from_engine_grid(&grid, title(&request.quantities, &surface));
    let mut pictures = Vec::new();
    for (q, data) in fields {
        let units = q
            .units()
            .map_or_else(|| model.units.clone(), str::to_string);
        if args.png {
            let path = picture_path(&args.output, q);
            let style = map_style(q, &units, &grid, &model, &parsed, &surface);
            pictures.push((path, render_map_png(&data, &style)));
        }
        file.push(
            &q.variable_name(),
            q.long_name(),
            &units,
            q.standard_name_given(removed),
            data,
        );
    }
    let caution: Vec<&str> = request
        .quantities
        .iter()
        .filter_map(|q| cautions::caution_for(*q))
        .collect();
    if !caution.is_empty() {
        file.attributes.push(("caution".into(), caution.join(" ")));
        file.attributes.push(("comment".into(), caution.join(" ")));
    }
    file.attributes.extend([
        ("kugel_radius_m".to_string(), format!("{radius_m}")),
        (
            "kugel_altitude_m".to_string(),
            format!("{}", radius_m - model.reference_radius_m),
        ),
        (
            "kugel_reference_radius_m".to_string(),
            format!("{}", model.reference_radius_m),
        ),
    ]);
    if let Some(gm) = model.gm_m3_s2 {
        file.attributes
            .push(("kugel_model_gm_m3_s2".into(), format!("{gm:e}")));
    }

    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.model)?;
    provenance.lmax = Some(model.lmax());
    provenance.normalization = Some(model.normalization.to_string());
    provenance.filter = parsed.filter.as_ref().map(|f| f.describe());
    provenance.extra = field_options::describe(&parsed);
    write_grid(
        &args.output,
        &file,
        &GridWriteOptions {
            float32: args.float32,
            lon_convention,
            provenance: &provenance,
        },
    )?;
    for (path, png) in &pictures {
        kugel::io::atomic::write_bytes_atomic(path, png)?;
        if !ctx.quiet {
            crate::outputs::wrote(format!("wrote {}", path.display()));
        }
    }
    field_options::print_cautions(&request.quantities);
    if !ctx.quiet {
        let (nlat, nlon) = grid.shape();
        crate::outputs::wrote(format!(
            "wrote {} on a {nlat} x {nlon} grid at radius {:.3} km to {}",
            request
                .quantities
                .iter()
                .map(|q| q.name())
                .collect::<Vec<_>>()
                .join(", "),
            radius_m / 1e3,
            args.output.display()
        ));
    }
    Ok(())
}

fn title(quantities: &[Quantity], surface: &TargetSurface) -> String {
    let names: Vec<&str> = quantities.iter().map(|q| q.name()).collect();
    format!(
        "kugel synthesis: {} {}",
        names.join(", "),
        title_place(surface)
    )
}

fn title_place(surface: &TargetSurface) -> String {
    match surface {
        TargetSurface::ReferenceSphere => "on the reference sphere".to_string(),
        TargetSurface::Altitude { altitude_m } => format!("at {} km altitude", altitude_m / 1e3),
        TargetSurface::Radius { radius_m } => format!("at radius {} km", radius_m / 1e3),
    }
}

/// `MAP.nc` → `MAP_<quantity>.png` in the same folder.
fn picture_path(output: &Path, q: Quantity) -> PathBuf {
    let stem = output
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "map".into());
    output.with_file_name(format!("{stem}_{}.png", q.variable_name()))
}

fn map_style(
    q: Quantity,
    units: &str,
    grid: &Grid,
    model: &kugel::coeffs::Coefficients,
    parsed: &field_options::ParsedFieldOptions,
    surface: &TargetSurface,
) -> MapStyle {
    let mut degree_range = format!("degrees 0-{}", model.lmax());
    if let Some(f) = &parsed.filter {
        degree_range.push_str(&format!(", filter {}", f.describe()));
    }
    // Short: the map's title line does not wrap.
    let place = match surface {
        TargetSurface::ReferenceSphere => "r = R".to_string(),
        TargetSurface::Altitude { altitude_m } => format!("h = {} km", altitude_m / 1e3),
        TargetSurface::Radius { radius_m } => format!("r = {} km", radius_m / 1e3),
    };
    let title = format!("{}, {place}", q.name());
    if q == Quantity::Declination {
        degree_range.push_str(" - not for navigation or safety decisions");
    }
    MapStyle {
        title,
        units: units.to_string(),
        degree_range,
        lat_deg: Some(grid.latitudes_deg()),
        lon0_deg: grid.lon0_rad.to_degrees(),
    }
}
