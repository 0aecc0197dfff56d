//! Which solver a fit uses: the direct one (normal matrix assembled, Cholesky, exact posterior
//! σ) or the matrix-free one (preconditioned conjugate gradients, [`super::iterative`]), chosen
//! from the memory and time each would take.
//!
//! Estimates, for n observations and u free unknowns:
//! - direct memory: [`super::unknowns_memory_bytes`] (three u × u matrices, five with GCV,
//!   and the assembly's block and packing buffers); direct time: n·u² flops for the assembly
//!   (the lower triangle of N, an FMA per entry and observation) at the rate of the rank-k
//!   update this CPU runs ([`DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_AVX512`] with the AVX-512
//!   micro-kernel, [`DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_TILED`] on faer's tiles elsewhere),
//!   plus u³ for the Cholesky factor, the inverse of the factor and the covariance diagonal at
//!   [`DIRECT_SOLVE_GFLOPS_PER_THREAD`];
//! - iterative memory: [`iterative_memory_bytes`] (a few u-vectors per worker and the
//!   order blocks of the preconditioner); iterative time: [`EXPECTED_ITERATIONS`]
//!   conjugate-gradient steps, each one pass over the n rows of ℓ entries (ℓ the full row
//!   length, usually u), at [`LANE_ROW_ENTRIES_PER_SECOND_PER_THREAD`] for scalar rows (the
//!   SIMD lane kernels of [`super::lane_normal`]) and
//!   [`FULL_ROW_ENTRIES_PER_SECOND_PER_THREAD`] for rows built whole (vector components,
//!   rates, external terms: [`super::iterative::RowSource`]).
//!
//! The rates are what this library's kernels sustained in `kugel bench --case fit` and
//! `--case rank-update` on 2 cores (each constant names its run); they only rank the two
//! solvers and give the user an order of magnitude, so a factor of two either way does not
//! change the choice except near the break-even point. `auto` takes the direct solver when it
//! fits in memory and is expected to take less than [`DIRECT_ALWAYS_SECONDS`] or no longer
//! than the iterative one; otherwise the iterative one, unless the regularisation needs the
//! eigen-decomposition of N (GCV).

use std::fmt;

use super::Regularization;
use crate::error::{Error, Result};
use crate::memory::saturating_product as product;

/// The solver asked for (`--solver`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SolverRequest {
    /// Pick from the estimates.
    #[default]
    Auto,
    Direct,
    Iterative,
}

impl SolverRequest {
    /// Parses `auto`, `direct` or `iterative`.
    pub fn parse(spec: &str) -> Result<SolverRequest> {
        match spec.trim().to_ascii_lowercase().as_str() {
            "auto" => Ok(SolverRequest::Auto),
            "direct" => Ok(SolverRequest::Direct),
            "iterative" => Ok(SolverRequest::Iterative),
            other => Err(Error::invalid(format!(
                "solver `{other}`: expected auto, direct or iterative"
            ))),
        }
    }
}

/// The solver used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SolverKind {
    /// Normal matrix, Cholesky, exact posterior covariance diagonal.
    Direct,
    /// Preconditioned conjugate gradients without the normal matrix.
    Iterative,
}

impl fmt::Display for SolverKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            SolverKind::Direct => "direct (normal matrix and Cholesky)",
            SolverKind::Iterative => "iterative (preconditioned conjugate gradients)",
        })
    }
}

/// Assembly rate with the packed AVX-512 rank-k update, GFLOP/s per thread (n·u² counted):
/// the update alone ran at 66–73 GFLOP/s on one nearly free AVX-512 core (`kugel bench
/// --case rank-update --lmax 60 --threads 1`, 4 December 2026), less the row filling (about a
/// tenth of the assembly in the profile); the whole assembly measured 20–24 per thread while
/// the machine was shared (load 5.4–5.9, README). Not yet checked on a quiet machine.
pub const DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_AVX512: f64 = 50.0;
/// Assembly rate on faer's tiles (256-bit kernels), GFLOP/s per thread: the tiled update of
/// `kugel bench --case rank-update --lmax 60` on the same machine, about 30 GFLOP/s per
/// thread on a quiet core, less the row filling; the AVX2 machine's triangular product gave
/// 81 GFLOP/s on 2 cores (3 December 2026).
pub const DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_TILED: f64 = 25.0;
/// Rate of the solve (Cholesky, inverse of the factor, covariance diagonal; u³ counted),
/// GFLOP/s per thread: 2.2–2.5 s for u = 3717 on 2 cores in the run above.
pub const DIRECT_SOLVE_GFLOPS_PER_THREAD: f64 = 10.0;
/// Row entries per second and thread of one conjugate-gradient pass over scalar rows (the
/// lane kernels): 1,000,000 gravity disturbances to L = 100 (10,201 entries per row),
/// 22 steps in 114 s on 2 quiet AVX-512 cores (README, 3 December 2026), i.e. 1.0e9, rounded
/// down for the AVX2 path.
pub const LANE_ROW_ENTRIES_PER_SECOND_PER_THREAD: f64 = 0.9e9;
/// Row entries per second and thread of a pass over rows built whole: 100,000 rows of 3,721
/// entries, 3.4 s per step on 2 AVX2 cores (the full-row pass, before the lane kernels).
pub const FULL_ROW_ENTRIES_PER_SECOND_PER_THREAD: f64 = 0.055e9;
/// Conjugate-gradient steps assumed in the time estimate (the block-by-order preconditioner
/// leaves only the coupling between orders to the iteration; well-covered data take 10–40,
/// the benchmark's orbital campaigns 21–22).
pub const EXPECTED_ITERATIONS: f64 = 25.0;

/// Below this expected time the direct solver is taken whenever it fits (its σ are exact).
pub const DIRECT_ALWAYS_SECONDS: f64 = 10.0;

/// The choice with its reasons, for the user.
#[derive(Debug, Clone, PartialEq)]
pub struct SolverPlan {
    pub kind: SolverKind,
    /// Memory the direct solver needs, bytes.
    pub direct_bytes: u64,
    /// Memory the iterative solver needs, bytes.
    pub iterative_bytes: u64,
    /// Expected seconds of the direct solver (assembly and solve).
    pub direct_seconds: f64,
    /// Expected seconds of the iterative solver.
    pub iterative_seconds: f64,
    /// One sentence: what was chosen and why.
    pub reason: String,
}

impl SolverPlan {
    /// Memory the chosen solver needs, bytes.
    pub fn bytes(&self) -> u64 {
        match self.kind {
            SolverKind::Direct => self.direct_bytes,
            SolverKind::Iterative => self.iterative_bytes,
        }
    }
}

/// Bytes of the matrix-free solver: per worker thread a row, an accumulator and the row
/// builder's scratch (about 6 u-vectors), the conjugate-gradient vectors (x, r, z, p, q), the
/// per-chunk partial sums and the preconditioner's order blocks (Σ_m (2(L−m)+2)² ≈ 4L³/3
/// doubles, bounded here by u·2√u).
pub fn iterative_memory_bytes(u: u64, threads: u64) -> u64 {
    let vectors = product(&[threads.max(1), 6, u, 8]).saturating_add(product(&[
        5 + super::iterative::OPERATOR_CHUNKS as u64,
        u,
        8,
    ]));
    let root = (u as f64).sqrt().ceil() as u64;
    vectors.saturating_add(product(&[u, 2, root.saturating_add(1), 8]))
}

fn human_bytes(b: u64) -> String {
    let mib = b as f64 / (1024.0 * 1024.0);
    if mib >= 1024.0 {
        format!("{:.1} GiB", mib / 1024.0)
    } else {
        format!("{mib:.0} MiB")
    }
}

fn human_seconds(s: f64) -> String {
    if s >= 120.0 {
        format!("{:.0} min", s / 60.0)
    } else if s >= 1.0 {
        format!("{s:.0} s")
    } else {
        "under 1 s".into()
    }
}

/// How the iterative solver's passes read the rows, for its time estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowPass {
    /// Scalar rows (plain values, gravity quantities) through the lane kernels, of this many
    /// entries (the full row length).
    Lanes(usize),
    /// Rows built whole (magnetic components, rates, external terms), of this many entries.
    Full(usize),
}

impl RowPass {
    /// Entries per row, and entries per second and thread.
    fn length_and_rate(self) -> (f64, f64) {
        match self {
            RowPass::Lanes(l) => (l as f64, LANE_ROW_ENTRIES_PER_SECOND_PER_THREAD),
            RowPass::Full(l) => (l as f64, FULL_ROW_ENTRIES_PER_SECOND_PER_THREAD),
        }
    }
}

/// Assembly rate of the rank-k update this CPU runs, GFLOP/s per thread.
pub fn direct_assembly_gflops_per_thread() -> f64 {
    if super::rank_update::packed::MicroKernel::avx512().is_some() {
        DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_AVX512
    } else {
        DIRECT_ASSEMBLY_GFLOPS_PER_THREAD_TILED
    }
}

/// Chooses the solver for `observations` rows (read as `rows` says) and `u` free unknowns. `available_bytes` is the memory the
/// process may use (`None`: unknown, not a limit); `threads` the worker threads.
pub fn plan_solver(
    request: SolverRequest,
    observations: usize,
    u: usize,
    rows: RowPass,
    regularization: &Regularization,
    available_bytes: Option<u64>,
    threads: usize,
) -> Result<SolverPlan> {
    let threads_f = threads.max(1) as f64;
    let (n, uf) = (observations as f64, u as f64);
    let direct_bytes = super::unknowns_memory_bytes(u as u64, regularization);
    let iterative_bytes = iterative_memory_bytes(u as u64, threads as u64);
    let direct_seconds = n * uf * uf / (direct_assembly_gflops_per_thread() * 1e9 * threads_f)
        + uf * uf * uf / (DIRECT_SOLVE_GFLOPS_PER_THREAD * 1e9 * threads_f);
    let (row_length, entries_per_second) = rows.length_and_rate();
    let iterative_seconds = EXPECTED_ITERATIONS * n * row_length / (entries_per_second * threads_f);
    let usable = available_bytes.map(|a| (a as f64 * 0.9) as u64);
    let direct_fits = usable.is_none_or(|a| direct_bytes <= a);
    let needs_spectrum = matches!(
        regularization,
        Regularization::Gcv | Regularization::KaulaGcv { .. }
    );
    let costs = format!(
        "direct ≈ {} and {}, iterative ≈ {} and {}",
        human_bytes(direct_bytes),
        human_seconds(direct_seconds),
        human_bytes(iterative_bytes),
        human_seconds(iterative_seconds)
    );
    let (kind, reason) = match request {
        SolverRequest::Direct => (SolverKind::Direct, format!("asked for ({costs})")),
        SolverRequest::Iterative => {
            if needs_spectrum {
                return Err(Error::invalid(
                    "the iterative solver cannot choose λ by GCV (GCV needs the eigen-decomposition of the \
                     normal matrix): use --solver direct, or give λ (damping:λ, kaula:A,p)",
                ));
            }
            (SolverKind::Iterative, format!("asked for ({costs})"))
        }
        SolverRequest::Auto => {
            if needs_spectrum {
                (
                    SolverKind::Direct,
                    format!("GCV needs the normal matrix ({costs})"),
                )
            } else if !direct_fits {
                (
                    SolverKind::Iterative,
                    format!(
                        "the normal matrix would not fit in memory ({costs}; {} usable)",
                        human_bytes(usable.unwrap_or(0))
                    ),
                )
            } else if direct_seconds > iterative_seconds && direct_seconds > DIRECT_ALWAYS_SECONDS {
                (
                    SolverKind::Iterative,
                    format!("expected to be faster ({costs})"),
                )
            } else {
                (
                    SolverKind::Direct,
                    format!("fits in memory and is quick enough, with exact σ ({costs})"),
                )
            }
        }
    };
    Ok(SolverPlan {
        kind,
        direct_bytes,
        iterative_bytes,
        direct_seconds,
        iterative_seconds,
        reason,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_problems_go_direct_and_large_ones_iterative() {
        let none = Regularization::None;
        let small = plan_solver(
            SolverRequest::Auto,
            10_000,
            441,
            RowPass::Lanes(441),
            &none,
            None,
            2,
        )
        .unwrap();
        assert_eq!(small.kind, SolverKind::Direct, "{}", small.reason);
        // 10⁶ observations at L = 100: the assembly alone is 10¹⁴ flops
        let big = plan_solver(
            SolverRequest::Auto,
            1_000_000,
            10_201,
            RowPass::Lanes(10_201),
            &none,
            None,
            2,
        )
        .unwrap();
        assert_eq!(big.kind, SolverKind::Iterative, "{}", big.reason);
        // too little memory for the matrix: iterative whatever the time
        let tight = plan_solver(
            SolverRequest::Auto,
            10_000,
            4_000,
            RowPass::Lanes(4_000),
            &none,
            Some(1 << 26),
            2,
        )
        .unwrap();
        assert_eq!(tight.kind, SolverKind::Iterative, "{}", tight.reason);
        assert!(tight.reason.contains("memory"), "{}", tight.reason);
    }

    /// The time model against the runs it was calibrated from (README, `kugel bench --case
    /// fit` on 2 AVX-512 cores): within a factor 1.5 of the measured times.
    #[test]
    fn time_estimates_match_the_benchmark_runs() {
        let kaula = Regularization::Kaula { a: 1e-5, p: 2.0 };
        // 1,000,000 scalar rows to L = 100 by the iterative solver: 114 s
        let iterative = plan_solver(
            SolverRequest::Iterative,
            1_000_000,
            10_197,
            RowPass::Lanes(10_201),
            &kaula,
            None,
            2,
        )
        .unwrap();
        let ratio = iterative.iterative_seconds / 114.0;
        assert!((1.0 / 1.5..1.5).contains(&ratio), "{}", iterative.reason);
        // rows built whole are far slower than the lane kernels
        let full = plan_solver(
            SolverRequest::Iterative,
            1_000_000,
            10_197,
            RowPass::Full(10_201),
            &kaula,
            None,
            2,
        )
        .unwrap();
        assert!(full.iterative_seconds > 10.0 * iterative.iterative_seconds);
    }

    #[test]
    fn gcv_keeps_the_direct_solver() {
        let gcv = Regularization::Gcv;
        let auto = plan_solver(
            SolverRequest::Auto,
            1_000_000,
            10_201,
            RowPass::Lanes(10_201),
            &gcv,
            None,
            2,
        )
        .unwrap();
        assert_eq!(auto.kind, SolverKind::Direct);
        let err = plan_solver(
            SolverRequest::Iterative,
            100,
            16,
            RowPass::Lanes(16),
            &gcv,
            None,
            1,
        )
        .unwrap_err();
        assert!(err.to_string().contains("GCV"), "{err}");
        assert!(SolverRequest::parse("sideways").is_err());
        assert_eq!(
            SolverRequest::parse(" Iterative ").unwrap(),
            SolverRequest::Iterative
        );
    }
}
