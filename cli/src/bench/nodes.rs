//! `kugel bench --case nodes`: the n-point Gauss–Legendre rule alone (n = L + 1, the rule of
//! the Gauss grid of degree L), by the O(n) path every Gauss grid uses
//! (`sht::gauss_legendre::colatitudes_and_weights`); median time over the repeats.

use std::time::Instant;

use kugel::sht::gauss_legendre::colatitudes_and_weights;

use super::transform::bench_threads;

/// Sizes of the nodes benchmark.
#[derive(Debug, Clone)]
pub struct NodesBenchArgs {
    pub lmax: usize,
    pub threads: usize,
    pub repeat: usize,
}

/// One result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct NodesBenchResult {
    pub case: &'static str,
    /// Points of the rule (lmax + 1).
    pub n: usize,
    pub threads: usize,
    pub repeat: usize,
    /// Median time for all n nodes and weights, seconds.
    pub nodes_s: f64,
    /// Σ w_j − 2 (the weights of a rule on [−1, 1] sum to 2), as a sanity figure.
    pub weight_sum_error: f64,
}

pub fn run_nodes_bench(args: &NodesBenchArgs) -> anyhow::Result<NodesBenchResult> {
    let threads = bench_threads(args.threads)?;
    let n = args.lmax.checked_add(1).ok_or_else(|| {
        kugel::Error::invalid(format!("--lmax {}: too large for a rule", args.lmax))
    })?;
    // colatitudes, weights and the northern half they are mirrored from
    kugel::memory::check_fits(
        &format!("the Gauss–Legendre benchmark ({n} points)"),
        (n as f64 * 8.0 * 4.0) as u64,
    )?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let mut times = Vec::new();
        let mut weight_sum_error = 0.0;
        for _ in 0..args.repeat.max(1) {
            let t = Instant::now();
            let (theta, w) = colatitudes_and_weights(n);
            times.push(t.elapsed().as_secs_f64());
            weight_sum_error = w.iter().sum::<f64>() - 2.0;
            std::hint::black_box(theta);
        }
        times.sort_by(f64::total_cmp);
        Ok(NodesBenchResult {
            case: "nodes",
            n,
            threads,
            repeat: args.repeat.max(1),
            nodes_s: times[times.len() / 2],
            weight_sum_error,
        })
    })
}

/// Prints a result as one line of text or one JSON line.
pub fn print_nodes_result(r: &NodesBenchResult, json: bool) -> anyhow::Result<()> {
    super::print_line_or_json(r, json, || {
        format!(
            "Gauss–Legendre rule of {} points on {} threads: {:.4} s (median of {}), Σw − 2 = {:.1e}",
            r.n, r.threads, r.nodes_s, r.repeat, r.weight_sum_error
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_nodes_bench_sums_the_weights_to_two() {
        let r = run_nodes_bench(&NodesBenchArgs {
            lmax: 300,
            threads: 1,
            repeat: 1,
        })
        .unwrap();
        assert_eq!(r.n, 301);
        // Σ w = 2 for any Gauss–Legendre rule (common practice)
        assert!(r.weight_sum_error.abs() < 1e-13, "{}", r.weight_sum_error);
        assert!(r.nodes_s > 0.0);
    }
}
