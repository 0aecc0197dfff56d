//! `kugel grid`: scattered observations → a gridded field on the Gauss grid of degree L,
//! with `count` and `nearest_km` coverage layers, written as CF NetCDF.

use std::path::PathBuf;

use super::CommandContext;
use crate::args::PointInputArgs;
use crate::progress_bar::TerminalProgress;
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::provenance::Provenance;
use kugel::observe::degree_choice::default_lmax_with_index;
use kugel::observe::gaps::{GapPolicy, DEFAULT_GAP_ITERATIONS, DEFAULT_GAP_TOLERANCE};
use kugel::observe::gridding::{
    default_radius_km, grid_points_with_progress, gridding_memory_bytes, GriddingMethod,
    GriddingOptions,
};
use kugel::observe::spatial::SphereIndex;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Observations: CSV with a header (lat, lon, value[, sigma]) or a NetCDF point file.
    pub points: PathBuf,
    /// Band limit of the Gauss grid; by default chosen from the data spacing.
    #[arg(long)]
    pub lmax: Option<usize>,
    /// Output grid (NetCDF).
    #[arg(short = 'o', long)]
    pub output: PathBuf,
    /// Gaussian-kernel mean within this search radius, km (half-width radius/2).
    #[arg(long, value_name = "KM", conflicts_with = "neighbours")]
    pub radius_km: Option<f64>,
    /// Inverse-distance mean of the K nearest observations instead of the kernel.
    #[arg(long, value_name = "K")]
    pub neighbours: Option<usize>,
    /// How to fill nodes without data: nearest, mean or iterative.
    #[arg(long, value_name = "POLICY", default_value = "nearest")]
    pub gaps: String,
    /// Relative tolerance of iterative gap filling.
    #[arg(long, default_value_t = DEFAULT_GAP_TOLERANCE)]
    pub gap_tolerance: f64,
    /// Iteration cap of iterative gap filling.
    #[arg(long, default_value_t = DEFAULT_GAP_ITERATIONS)]
    pub gap_iterations: usize,
    /// Name of the gridded variable.
    #[arg(long, default_value = "value")]
    pub variable: String,
    /// Longitude range of the file: 0-360 or -180-180.
    #[arg(long, default_value = "0-360")]
    pub lon_range: String,
    #[command(flatten)]
    pub input: PointInputArgs,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    kugel::io::atomic::refuse_overwrite_of_input(&args.output, &[&args.points])?;
    let lon_convention: LonConvention = args.lon_range.parse()?;
    let body_radius_m = args.input.body_radius_m()?;
    if let Some(l) = args.lmax {
        // the size first: a grid that cannot fit is refused before the points are read
        kugel::memory::check_fits(
            &format!("the L = {l} Gauss grid"),
            gridding_memory_bytes(0, l),
        )?;
    }
    let points = args.input.read(&args.points, ctx)?;
    let lmax = match args.lmax {
        Some(l) => l,
        None => {
            let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
            let (l, reason) = default_lmax_with_index(&points, &index, body_radius_m);
            if !ctx.quiet {
                eprintln!("degree L = {l} chosen from the data spacing: {reason}");
            }
            l
        }
    };
    let method = match (args.radius_km, args.neighbours) {
        (_, Some(k)) => GriddingMethod::Nearest { k },
        (Some(r), None) => GriddingMethod::Kernel { radius_km: r },
        (None, None) => {
            let r = default_radius_km(lmax, body_radius_m);
            if !ctx.quiet {
                eprintln!("search radius {r:.1} km (twice the node spacing at L = {lmax}); set --radius-km or --neighbours to change");
            }
            GriddingMethod::Kernel { radius_km: r }
        }
    };
    let gaps = match GapPolicy::parse(&args.gaps)? {
        GapPolicy::Iterative { .. } => GapPolicy::Iterative {
            tol: args.gap_tolerance,
            max_iter: args.gap_iterations,
        },
        other => other,
    };
    let options = GriddingOptions {
        method,
        gaps,
        body_radius_m,
    };
    let progress = TerminalProgress::new(ctx.quiet);
    let field = grid_points_with_progress(&points, lmax, &options, &progress);
    progress.finish();
    let field = field?;
    if !ctx.quiet {
        eprintln!("{}", field.report.summary());
        if field.report.gap_fill.final_change.is_some() && !field.report.gap_fill.converged {
            eprintln!("warning: iterative gap filling stopped at the iteration cap before reaching the tolerance");
        }
    }

    let mut file = GridFile::from_engine_grid(
        &field.grid,
        format!("{} gridded by kugel", args.points.display()),
    );
    let value = file.push(
        &args.variable,
        "gridded observations",
        &args.input.units,
        None,
        field.value,
    );
    value.ancillary = vec!["count".into(), "nearest_km".into()];
    file.push(
        "count",
        "number of observations in the node's mean",
        "1",
        None,
        field.count,
    );
    file.push(
        "nearest_km",
        "distance from the node to the nearest observation",
        "km",
        None,
        field.nearest_km,
    );
    let r = &field.report;
    file.attributes
        .push(("gridding_method".into(), r.method.clone()));
    file.attributes
        .push(("gridding_gap_nodes".into(), r.gap_nodes.to_string()));
    file.attributes
        .push(("gridding_gap_fill".into(), r.gap_fill.describe()));
    file.attributes
        .push(("gridding_points".into(), r.points.to_string()));
    let mut provenance = Provenance::from_command_line(&ctx.command_line);
    provenance.add_input(&args.points)?;
    provenance.lmax = Some(lmax);
    write_grid(
        &args.output,
        &file,
        &GridWriteOptions {
            float32: false,
            lon_convention,
            provenance: &provenance,
        },
    )?;
    if !ctx.quiet {
        crate::outputs::wrote(format!("wrote {}", args.output.display()));
    }
    Ok(())
}
