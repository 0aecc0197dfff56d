//! Benchmarks of the scattered-data steps: gridding and least-squares fits (`kugel bench
//! --case grid|fit`).

/// Sizes for the scattered-data benchmarks.
#[derive(Debug, Clone)]
pub struct ObserveBenchArgs {
    pub points: usize,
    pub lmax: usize,
    pub repeat: usize,
    pub json: bool,
    pub seed: u64,
}

/// Grids `points` random observations onto the Gauss grid of `lmax`; prints times and memory.
pub fn run_gridding_bench(_args: &ObserveBenchArgs) -> anyhow::Result<()> {
    anyhow::bail!("the gridding benchmark is not available in this build yet")
}

/// Fits `points` random observations to coefficients up to `lmax`; prints times and memory.
pub fn run_fit_bench(_args: &ObserveBenchArgs) -> anyhow::Result<()> {
    anyhow::bail!("the fit benchmark is not available in this build yet")
}
