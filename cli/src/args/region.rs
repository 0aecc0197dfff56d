//! The region options of `kugel spectrum` and `kugel compare`: `--region`, `--window-lmax`,
//! `--tapers`.

use std::path::{Path, PathBuf};

use kugel::error::Error;
use kugel::progress::Progress;
use kugel::regional::{estimate_windows, RegionSpec, TaperChoice, TaperSet};

#[derive(Debug, Clone, clap::Args)]
pub struct RegionArgs {
    /// Localised (multitaper) estimate inside a region: cap:LAT,LON,RADIUS_DEG (degrees north,
    /// degrees east, cap radius in degrees), mask:FILE (a NetCDF grid, 1 inside and 0 outside)
    /// or polygon:FILE (CSV of lat, lon vertices in degrees joined by great-circle arcs; the
    /// smaller of the two sides is the region).
    #[arg(
        long,
        value_name = "cap:LAT,LON,RADIUS_DEG|mask:FILE|polygon:FILE",
        allow_hyphen_values = true
    )]
    pub region: Option<String>,
    /// With --region: bandwidth L_W of the windows (below the model's degree).
    #[arg(long, value_name = "LW", requires = "region")]
    pub window_lmax: Option<usize>,
    /// With --region: number of windows to use (default: every window with concentration ≥ 0.99).
    #[arg(long, value_name = "K", requires = "region")]
    pub tapers: Option<usize>,
}

impl RegionArgs {
    /// The file a mask or polygon region reads (an input outputs must not overwrite).
    pub fn region_file(&self) -> Option<PathBuf> {
        let spec = self.region.as_deref()?.parse::<RegionSpec>().ok()?;
        spec.file().map(Path::to_path_buf)
    }

    /// The parsed region, its window family and the window choice, when --region was given.
    pub fn taper_set(
        &self,
        model_lmax: usize,
        progress: &dyn Progress,
    ) -> Result<Option<(TaperSet, TaperChoice)>, Error> {
        let Some(text) = &self.region else {
            return Ok(None);
        };
        let region: RegionSpec = text.parse()?;
        let lw = self.window_lmax.ok_or_else(|| {
            Error::invalid("--region needs --window-lmax LW (the windows' bandwidth)")
        })?;
        let (set, choice) = estimate_windows(&region, lw, self.tapers, model_lmax, progress)?;
        Ok(Some((set, choice)))
    }
}
