//! `kugel tapers --cap-radius-deg D | --region mask:FILE|polygon:FILE --lmax LW -o T.nc
//! [--centre LAT,LON] [--keep K] [--png N]`: the band-limited windows best concentrated in a
//! spherical cap or an arbitrary region (`kugel::regional`), sorted by concentration, written
//! as NetCDF with the Shannon number; optional PNG maps of the best windows.

use std::path::{Path, PathBuf};

use super::CommandContext;
use crate::args::parse_numbers;
use crate::progress_bar::TerminalProgress;
use kugel::error::Error;
use kugel::io::atomic::{refuse_overwrite_of_input, write_bytes_atomic};
use kugel::io::provenance::Provenance;
use kugel::io::tapers::write_tapers_netcdf;
use kugel::regional::{RegionSpec, TaperChoice, DEFAULT_MIN_CONCENTRATION};
use kugel::report::raster::maps::{render_map_png, MapStyle};
use kugel::sht::{GaussGrid, TransformPlan};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Angular radius of the cap in degrees (more than 0, at most 180).
    #[arg(long, value_name = "D", required_unless_present = "region")]
    pub cap_radius_deg: Option<f64>,
    /// Instead of a cap: any region, as cap:LAT,LON,RADIUS_DEG, mask:FILE (a NetCDF grid, 1
    /// inside and 0 outside) or polygon:FILE (CSV of lat, lon vertices in degrees, joined by
    /// great-circle arcs; the smaller of the two sides is the region).
    #[arg(
        long,
        value_name = "mask:FILE|polygon:FILE",
        conflicts_with_all = ["cap_radius_deg", "centre"],
        allow_hyphen_values = true
    )]
    pub region: Option<String>,
    /// Bandwidth L_W of the windows (their highest degree).
    #[arg(long = "lmax", value_name = "LW")]
    pub lmax_window: usize,
    /// Output file (NetCDF-4): C(taper, degree, order), S(taper, degree, order),
    /// concentration(taper), the Shannon number and the centre as attributes.
    #[arg(short = 'o', long = "output", value_name = "T.nc")]
    pub output: PathBuf,
    /// Centre of the cap (degrees north, degrees east); default the north pole. For other
    /// regions the file records the direction of the region's centroid.
    #[arg(long, value_name = "LAT,LON", allow_hyphen_values = true)]
    pub centre: Option<String>,
    /// Keep only the K best-concentrated windows (default: all (LW+1)²).
    #[arg(long, value_name = "K")]
    pub keep: Option<usize>,
    /// Also draw maps of the N best windows as T_window_K.png beside the output.
    #[arg(long, value_name = "N")]
    pub png: Option<usize>,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let region: RegionSpec = match (&args.region, args.cap_radius_deg) {
        (Some(text), _) => text.parse()?,
        (None, Some(radius_deg)) => {
            let (lat, lon) = match &args.centre {
                Some(c) => {
                    let v = parse_numbers(c, 2, "--centre", "LAT,LON in degrees (e.g. 30,-60)")?;
                    (v[0], v[1])
                }
                None => (90.0, 0.0),
            };
            // the numbers are checked the same way `--region cap:…` is
            RegionSpec::cap(lat, lon, radius_deg)?
        }
        (None, None) => {
            return Err(Error::invalid(
                "give --cap-radius-deg D or --region mask:FILE|polygon:FILE",
            )
            .into())
        }
    };
    let inputs: Vec<&Path> = region.file().into_iter().collect();
    refuse_overwrite_of_input(&args.output, &inputs)?;
    let progress = TerminalProgress::new(ctx.quiet);
    let set = region.taper_set(
        args.lmax_window,
        args.keep.map(TaperChoice::Count),
        &progress,
    );
    progress.finish();
    let set = set?;
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.lmax = Some(set.lmax_window);
    provenance.normalization = Some("geodesy".into());
    write_tapers_netcdf(&args.output, &set, &provenance)?;
    if let Some(n) = args.png {
        let n = n.min(set.tapers.len());
        let lmax = set.lmax_window.max(90);
        let grid = GaussGrid::new(lmax);
        let plan = TransformPlan::new(lmax, &grid)?;
        for (k, t) in set.tapers[..n].iter().enumerate() {
            let field = plan.synthesise(&t.coeffs)?;
            let style = MapStyle {
                title: format!(
                    "window {} of {}, concentration {:.6}",
                    k + 1,
                    set.region,
                    t.concentration
                ),
                units: "1".into(),
                degree_range: format!("degrees 0-{}", set.lmax_window),
                lat_deg: Some(grid.latitudes_deg()),
                lon0_deg: 0.0,
            };
            write_bytes_atomic(
                &png_path(&args.output, k + 1),
                &render_map_png(&field, &style),
            )?;
        }
    }
    if !ctx.quiet {
        println!(
            "{} windows of degree {} for {} (of {} in all); Shannon number {:.3}; {} with concentration ≥ {}",
            set.tapers.len(),
            set.lmax_window,
            set.region,
            set.total_windows,
            set.shannon_number,
            set.count_at_least(DEFAULT_MIN_CONCENTRATION),
            DEFAULT_MIN_CONCENTRATION
        );
        for (k, t) in set.tapers.iter().take(5).enumerate() {
            println!("  window {}: concentration {:.8}", k + 1, t.concentration);
        }
        crate::outputs::wrote(format!("wrote {}", args.output.display()));
    }
    if set.tapers.is_empty() {
        return Err(Error::invalid("no windows were produced").into());
    }
    Ok(())
}

/// `T.nc` → `T_window_K.png` in the same folder.
fn png_path(output: &Path, k: usize) -> PathBuf {
    let stem = output
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "tapers".into());
    output.with_file_name(format!("{stem}_window_{k}.png"))
}
