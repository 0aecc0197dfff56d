//! Filling grid nodes that no observation reaches.
//!
//! - `Nearest`: the value of the nearest observation.
//! - `Mean`: the area-weighted mean of the filled nodes (Gauss weights × longitude spacing).
//! - `Iterative`: the band-limited model itself fills the gaps (alternating projections, as
//!   in Gerchberg 1974, Optica Acta 21:709; Papoulis 1975, IEEE Trans. Circuits Syst. 22:735):
//!   start from the mean, then repeat analyse to L → synthesise → replace only the gap nodes,
//!   until the largest change at a gap node, relative to the RMS of the data nodes, is below
//!   `tol` or `max_iter` is reached. Data nodes are never altered. The result is the
//!   band-limited completion nearest the starting fill; it equals the true field only when
//!   the data nodes determine every degree-L coefficient (per order m, enough data latitudes
//!   for the L − m + 1 unknowns), which large polar gaps at the grid's full degree do not.

use ndarray::Array2;

use crate::error::{Error, Result};
use crate::sht::{Grid, TransformPlan};

use super::points::PointSet;
use super::spatial::SphereIndex;
use crate::progress::Progress;

/// How nodes without data are filled.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GapPolicy {
    Nearest,
    Mean,
    Iterative { tol: f64, max_iter: usize },
}

/// Default relative tolerance and iteration cap of `GapPolicy::Iterative`.
pub const DEFAULT_GAP_TOLERANCE: f64 = 1e-4;
pub const DEFAULT_GAP_ITERATIONS: usize = 50;

impl GapPolicy {
    /// Parses `nearest`, `mean` or `iterative` (default tolerance and cap).
    pub fn parse(text: &str) -> Result<GapPolicy> {
        match text.to_ascii_lowercase().as_str() {
            "nearest" => Ok(GapPolicy::Nearest),
            "mean" => Ok(GapPolicy::Mean),
            "iterative" => Ok(GapPolicy::Iterative {
                tol: DEFAULT_GAP_TOLERANCE,
                max_iter: DEFAULT_GAP_ITERATIONS,
            }),
            other => Err(Error::invalid(format!(
                "--gaps `{other}` is not known; expected nearest, mean or iterative"
            ))),
        }
    }
}

/// What gap filling did.
#[derive(Debug, Clone, PartialEq)]
pub struct GapFillReport {
    pub policy: String,
    pub gap_nodes: usize,
    /// Iterations of the iterative policy (0 otherwise).
    pub iterations: usize,
    /// Final largest change at a gap node relative to the data RMS (iterative only).
    pub final_change: Option<f64>,
    /// Whether the iterative policy met its tolerance.
    pub converged: bool,
}

impl GapFillReport {
    pub fn describe(&self) -> String {
        if self.gap_nodes == 0 {
            return "no gaps to fill".to_string();
        }
        match self.final_change {
            Some(change) => format!(
                "gaps filled {} in {} iterations (final relative change {change:.2e}{})",
                self.policy,
                self.iterations,
                if self.converged {
                    ""
                } else {
                    ", tolerance NOT reached"
                }
            ),
            None => format!("gaps filled with the {}", self.policy),
        }
    }
}

/// Area-weighted mean of the non-gap nodes.
fn area_mean(field: &Array2<f64>, gap: &Array2<bool>, grid: &Grid) -> Option<f64> {
    let (mut sw, mut swv) = (0.0, 0.0);
    for (j, w) in grid.weights.iter().enumerate() {
        for (v, g) in field.row(j).iter().zip(gap.row(j)) {
            if !g {
                sw += w;
                swv += w * v;
            }
        }
    }
    (sw > 0.0).then(|| swv / sw)
}

/// Fills the nodes where `gap` is true according to `policy`.
#[allow(clippy::too_many_arguments)]
pub fn fill_gaps(
    field: &mut Array2<f64>,
    gap: &Array2<bool>,
    grid: &Grid,
    lmax: usize,
    policy: &GapPolicy,
    index: &SphereIndex,
    points: &PointSet,
    progress: &dyn Progress,
) -> Result<GapFillReport> {
    let gap_nodes = gap.iter().filter(|&&g| g).count();
    let mut report = GapFillReport {
        policy: String::new(),
        gap_nodes,
        iterations: 0,
        final_change: None,
        converged: true,
    };
    if gap_nodes == field.len() {
        return Err(Error::invalid(
            "no grid node has an observation within the search radius; increase --radius-km or use --neighbours",
        ));
    }
    match *policy {
        GapPolicy::Nearest => {
            report.policy = "nearest observation's value".into();
            for ((j, k), g) in gap.indexed_iter() {
                if *g {
                    let (st, ct) = grid.colatitude_rad[j].sin_cos();
                    let (sl, cl) = grid.longitude_rad(k).sin_cos();
                    let n = index.nearest(&[st * cl, st * sl, ct]);
                    field[(j, k)] = points.value[n.index];
                }
            }
        }
        GapPolicy::Mean => {
            report.policy = "area-weighted mean of the data nodes".into();
            let mean = area_mean(field, gap, grid).unwrap_or(0.0);
            field.zip_mut_with(gap, |v, &g| {
                if g {
                    *v = mean
                }
            });
        }
        GapPolicy::Iterative { tol, max_iter } => {
            report.policy = "iteratively by the band-limited model".into();
            if !(tol.is_finite() && tol > 0.0) || max_iter == 0 {
                return Err(Error::invalid(format!(
                    "iterative gap filling needs a tolerance > 0 and at least one iteration (got {tol}, {max_iter})"
                )));
            }
            let mean = area_mean(field, gap, grid).unwrap_or(0.0);
            field.zip_mut_with(gap, |v, &g| {
                if g {
                    *v = mean
                }
            });
            if gap_nodes == 0 {
                return Ok(report);
            }
            let data_rms = {
                let (mut n, mut s) = (0usize, 0.0);
                field
                    .iter()
                    .zip(gap.iter())
                    .filter(|(_, &g)| !g)
                    .for_each(|(v, _)| {
                        n += 1;
                        s += (v - mean) * (v - mean);
                    });
                let rms = (s / n.max(1) as f64).sqrt();
                if rms > 0.0 {
                    rms
                } else {
                    1.0
                }
            };
            let plan = TransformPlan::new(lmax, grid)?;
            progress.stage("filling gaps", max_iter as u64);
            report.converged = false;
            for it in 1..=max_iter {
                let model = plan.analyse(field)?;
                let synth = plan.synthesise(&model)?;
                let mut change: f64 = 0.0;
                for ((v, s), g) in field.iter_mut().zip(synth.iter()).zip(gap.iter()) {
                    if *g {
                        change = change.max((s - *v).abs());
                        *v = *s;
                    }
                }
                let relative = change / data_rms;
                report.iterations = it;
                report.final_change = Some(relative);
                progress.advance(1);
                if relative < tol {
                    report.converged = true;
                    break;
                }
            }
        }
    }
    Ok(report)
}
