//! Which solver a fit uses: the direct one (normal matrix assembled, Cholesky, exact posterior
//! σ) or the matrix-free one (preconditioned conjugate gradients, [`super::iterative`]), chosen
//! from the memory and time each would take.
//!
//! Estimates, for n observations and u free unknowns:
//! - direct memory: [`super::unknowns_memory_bytes`] (three u × u matrices, five with GCV);
//!   direct work: n·u² flops for the assembly (the lower triangle of N, an FMA per entry and
//!   observation) plus u³ for the Cholesky factor, the inverse of the factor and the covariance
//!   diagonal, at [`DIRECT_GFLOPS_PER_THREAD`];
//! - iterative memory: [`iterative_memory_bytes`] (a few u-vectors per worker and the
//!   order blocks of the preconditioner); iterative work: per conjugate-gradient step one pass
//!   over the observations, each rebuilding its design row and taking two dot products
//!   ([`ITERATIVE_FLOPS_PER_ROW_ENTRY`] flops per row entry, at
//!   [`ITERATIVE_GFLOPS_PER_THREAD`]), for [`EXPECTED_ITERATIONS`] steps.
//!
//! The rates are what this library's kernels sustained in `kugel bench --case fit` (100,000
//! gravity disturbances to L = 60 on 2 shared AVX2 cores: the direct assembly 5.5 GFLOP/s,
//! the iterative solver 21 steps of 3.4 s); they only rank the two solvers, so a factor of two either way
//! does not change the choice except near the break-even point. `auto` takes the direct solver
//! when it fits in memory and is expected to take less than [`DIRECT_ALWAYS_SECONDS`] or no
//! longer than the iterative one; otherwise
//! the iterative one, unless the regularisation needs the eigen-decomposition of N (GCV).

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

/// Sustained rate of the direct solver's matrix products and factorisations, GFLOP/s per thread.
pub const DIRECT_GFLOPS_PER_THREAD: f64 = 3.0;
/// Sustained rate of the matrix-free passes (row building, dot products), GFLOP/s per thread.
pub const ITERATIVE_GFLOPS_PER_THREAD: f64 = 0.45;
/// Flops per row entry and conjugate-gradient step: the row itself (Legendre recursion, degree
/// factor, longitude term) and the two dot products of N p = Σ w a (aᵀ p).
pub const ITERATIVE_FLOPS_PER_ROW_ENTRY: f64 = 8.0;
/// Conjugate-gradient steps assumed in the time estimate (the block-by-order preconditioner
/// leaves only the coupling between orders to the iteration; well-covered data take 10–40).
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

/// Chooses the solver for `observations` rows of `row_length` entries each (the full row the
/// builder fills; usually u) and `u` free unknowns. `available_bytes` is the memory the
/// process may use (`None`: unknown, not a limit); `threads` the worker threads.
pub fn plan_solver(
    request: SolverRequest,
    observations: usize,
    u: usize,
    row_length: usize,
    regularization: &Regularization,
    available_bytes: Option<u64>,
    threads: usize,
) -> Result<SolverPlan> {
    let threads_f = threads.max(1) as f64;
    let (n, uf) = (observations as f64, u as f64);
    let direct_bytes = super::unknowns_memory_bytes(u as u64, regularization);
    let iterative_bytes = iterative_memory_bytes(u as u64, threads as u64);
    let direct_seconds =
        (n * uf * uf + uf * uf * uf) / (DIRECT_GFLOPS_PER_THREAD * 1e9 * threads_f);
    let iterative_seconds =
        EXPECTED_ITERATIONS * n * row_length as f64 * ITERATIVE_FLOPS_PER_ROW_ENTRY
            / (ITERATIVE_GFLOPS_PER_THREAD * 1e9 * threads_f);
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
        let small = plan_solver(SolverRequest::Auto, 10_000, 441, 441, &none, None, 2).unwrap();
        assert_eq!(small.kind, SolverKind::Direct, "{}", small.reason);
        // 10⁶ observations at L = 100: the assembly alone is 10¹⁴ flops
        let big = plan_solver(
            SolverRequest::Auto,
            1_000_000,
            10_201,
            10_201,
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
            4_000,
            &none,
            Some(1 << 26),
            2,
        )
        .unwrap();
        assert_eq!(tight.kind, SolverKind::Iterative, "{}", tight.reason);
        assert!(tight.reason.contains("memory"), "{}", tight.reason);
    }

    #[test]
    fn gcv_keeps_the_direct_solver() {
        let gcv = Regularization::Gcv;
        let auto = plan_solver(
            SolverRequest::Auto,
            1_000_000,
            10_201,
            10_201,
            &gcv,
            None,
            2,
        )
        .unwrap();
        assert_eq!(auto.kind, SolverKind::Direct);
        let err = plan_solver(SolverRequest::Iterative, 100, 16, 16, &gcv, None, 1).unwrap_err();
        assert!(err.to_string().contains("GCV"), "{err}");
        assert!(SolverRequest::parse("sideways").is_err());
        assert_eq!(
            SolverRequest::parse(" Iterative ").unwrap(),
            SolverRequest::Iterative
        );
    }
}
