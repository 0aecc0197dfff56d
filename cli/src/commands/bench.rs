//! `kugel bench`: speed, accuracy and memory of the transforms (and of the scattered-data
//! steps), for checking the project's performance goals.

use super::CommandContext;
use crate::bench::nodes::{print_nodes_result, run_nodes_bench, NodesBenchArgs};
use crate::bench::observe::{run_fit_bench, run_gridding_bench, ObserveBenchArgs};
use crate::bench::points::{print_points_result, run_points_bench, PointsBenchArgs};
use crate::bench::rank_update::{
    print_rank_update_result, run_rank_update_bench, RankUpdateBenchArgs,
};
use crate::bench::rotation::{print_rotation_result, run_rotation_bench, RotationBenchArgs};
use crate::bench::transform::{print_result, run_transform_bench, TransformBenchArgs};

/// Which benchmark to run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Case {
    /// Synthesis then analysis on the Gauss grid of degree L.
    Transform,
    /// Gridding of scattered observations.
    Grid,
    /// Least-squares fit of scattered observations.
    Fit,
    /// Synthesis of a degree-L model at scattered points: values alone (`values_terms_per_s`)
    /// and values with both gradient components (`terms_per_s`), in (l, m) terms per point and
    /// second, each also as a fraction of the FMA peak measured in the same run.
    Points,
    /// Rotation of a degree-L model and back: time and round-trip error against 1e-11.
    Rotation,
    /// The Gauss–Legendre nodes and weights of the degree-L Gauss grid (L + 1 points) alone.
    Nodes,
    /// The direct fit's normal-matrix update N += B Bᵀ alone (u = (L+1)² unknowns, --depth
    /// points): faer's general product, the single triangular product and the tiled update.
    RankUpdate,
}

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Band limit (maximum degree) L.
    #[arg(long)]
    pub lmax: usize,
    /// Worker threads (default: all cores; at most four times the cores).
    #[arg(long, default_value_t = 0)]
    pub threads: usize,
    /// Coefficient sets transformed together on one plan (transform case); the times are for
    /// all of them.
    #[arg(long, default_value_t = 1)]
    pub fields: usize,
    /// Repeats; the median time is reported.
    #[arg(long, default_value_t = 3)]
    pub repeat: usize,
    /// Print exactly one JSON object on one line.
    #[arg(long)]
    pub json: bool,
    /// What to benchmark.
    #[arg(long, value_enum, default_value_t = Case::Transform)]
    pub case: Case,
    /// Number of scattered points (grid, fit and points cases).
    #[arg(long, default_value_t = 100_000)]
    pub points: usize,
    /// Seed of the random inputs.
    #[arg(long, default_value_t = 20_260_101)]
    pub seed: u64,
    /// Solver of the fit case: auto, direct or iterative.
    #[arg(long, default_value = "auto")]
    pub solver: String,
    /// Points per block of the rank-update case (the depth k of N += B Bᵀ).
    #[arg(long, default_value_t = kugel::observe::fit::normal::BLOCK_POINTS)]
    pub depth: usize,
    /// Kernel set of the transform case: portable, avx2+fma or avx512 (default: the widest
    /// this CPU runs), to compare instruction sets on one machine.
    #[arg(long)]
    pub kernels: Option<String>,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    if args.repeat == 0 {
        return Err(kugel::Error::invalid("--repeat must be at least 1").into());
    }
    if args.fields == 0 {
        return Err(kugel::Error::invalid("--fields must be at least 1").into());
    }
    match args.case {
        Case::Transform => {
            let r = run_transform_bench(&TransformBenchArgs {
                lmax: args.lmax,
                fields: args.fields,
                threads: args.threads,
                repeat: args.repeat,
                json: args.json,
                seed: args.seed,
                quiet: ctx.quiet,
                kernels: args.kernels.clone(),
            })?;
            print_result(&r, args.json)
        }
        Case::Rotation => {
            let r = run_rotation_bench(&RotationBenchArgs {
                lmax: args.lmax,
                threads: args.threads,
                repeat: args.repeat,
                seed: args.seed,
            })?;
            print_rotation_result(&r, args.json)?;
            if !r.pass {
                return Err(kugel::Error::invalid(format!(
                    "rotation round trip at degree {}: error {:.2e} exceeds the goal {:.0e}",
                    r.lmax, r.round_trip_rel_err, r.goal
                ))
                .into());
            }
            Ok(())
        }
        Case::Points => {
            let r = run_points_bench(&PointsBenchArgs {
                points: args.points,
                lmax: args.lmax,
                threads: args.threads,
                repeat: args.repeat,
                seed: args.seed,
            })?;
            print_points_result(&r, args.json)
        }
        Case::Nodes => {
            let r = run_nodes_bench(&NodesBenchArgs {
                lmax: args.lmax,
                threads: args.threads,
                repeat: args.repeat,
            })?;
            print_nodes_result(&r, args.json)
        }
        Case::RankUpdate => {
            let r = run_rank_update_bench(&RankUpdateBenchArgs {
                lmax: args.lmax,
                depth: args.depth,
                threads: args.threads,
                repeat: args.repeat,
                seed: args.seed,
            })?;
            print_rank_update_result(&r, args.json)
        }
        Case::Grid | Case::Fit => {
            let o = ObserveBenchArgs {
                points: args.points,
                lmax: args.lmax,
                repeat: args.repeat,
                json: args.json,
                seed: args.seed,
                solver: kugel::observe::fit::SolverRequest::parse(&args.solver)?,
            };
            if args.case == Case::Grid {
                run_gridding_bench(&o)
            } else {
                run_fit_bench(&o)
            }
        }
    }
}
