//! `kugel bench --case transform`: synthesis then analysis on the Gauss grid of degree L with
//! seeded N(0, 1) coefficients; median times over K repeats, round-trip error and peak memory.

use std::time::Instant;

use rand::SeedableRng;
use rand_distr::{Distribution, StandardNormal};

use kugel::coeffs::{Coefficients, Normalization};
use kugel::sht::{GaussGrid, TransformPlan};

/// What the transform benchmark measures.
#[derive(Debug, Clone)]
pub struct TransformBenchArgs {
    pub lmax: usize,
    pub threads: usize,
    pub repeat: usize,
    pub json: bool,
    pub seed: u64,
    pub quiet: bool,
}

/// One benchmark result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct TransformBenchResult {
    pub lmax: usize,
    pub nlat: usize,
    pub nlon: usize,
    pub threads: usize,
    pub kernel: String,
    pub repeat: usize,
    /// Gauss–Legendre nodes and weights with the grid (part of `plan_s`), seconds.
    pub gauss_grid_s: f64,
    pub plan_s: f64,
    pub synthesis_s: f64,
    pub analysis_s: f64,
    pub roundtrip_rel_err: f64,
    /// 2 (L+1)³ / t for each direction, GFLOP/s (the rate measure).
    pub synthesis_gflops: f64,
    pub analysis_gflops: f64,
    pub peak_rss_mb: f64,
}

/// Seeded coefficients with every C_lm and S_lm (m > 0) drawn from N(0, 1).
pub fn random_coefficients(lmax: usize, seed: u64) -> Coefficients {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for l in 0..=lmax {
        for m in 0..=l {
            let a: f64 = StandardNormal.sample(&mut rng);
            let b: f64 = if m > 0 {
                StandardNormal.sample(&mut rng)
            } else {
                0.0
            };
            c.set(l, m, a, b);
        }
    }
    c
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Runs the benchmark in a pool of `threads` threads.
pub fn run_transform_bench(args: &TransformBenchArgs) -> anyhow::Result<TransformBenchResult> {
    let threads = if args.threads == 0 {
        std::thread::available_parallelism().map_or(1, |n| n.get())
    } else {
        args.threads
    };
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let lmax = args.lmax;
        let say = |msg: String| {
            if !args.quiet && !args.json {
                eprintln!("{msg}");
            }
        };
        let t = Instant::now();
        let grid = GaussGrid::new(lmax);
        let gauss_grid_s = t.elapsed().as_secs_f64();
        let plan = TransformPlan::new(lmax, &grid)?;
        let plan_s = t.elapsed().as_secs_f64();
        say(format!(
            "degree {lmax}: Gauss grid {} x {}, {threads} threads, {} kernels, plan {plan_s:.3} s (Gauss–Legendre nodes and weights {gauss_grid_s:.3} s)",
            grid.nlat(),
            grid.nlon,
            plan.kernel_path().name()
        ));
        let input = random_coefficients(lmax, args.seed);
        let (mut ts, mut ta) = (Vec::new(), Vec::new());
        let mut err = 0.0;
        for k in 0..args.repeat.max(1) {
            let t = Instant::now();
            let field = plan.synthesise(&input)?;
            ts.push(t.elapsed().as_secs_f64());
            let t = Instant::now();
            let back = plan.analyse(&field)?;
            ta.push(t.elapsed().as_secs_f64());
            drop(field);
            err = relative_error(&input, &back);
            say(format!(
                "  repeat {}: synthesis {:.3} s, analysis {:.3} s, round-trip error {err:.2e}",
                k + 1,
                ts[k],
                ta[k]
            ));
        }
        let (s, a) = (median(ts), median(ta));
        let flops = 2.0 * ((lmax + 1) as f64).powi(3) / 1e9;
        Ok(TransformBenchResult {
            lmax,
            nlat: grid.nlat(),
            nlon: grid.nlon,
            threads,
            kernel: plan.kernel_path().name().to_string(),
            repeat: args.repeat.max(1),
            gauss_grid_s,
            plan_s,
            synthesis_s: s,
            analysis_s: a,
            roundtrip_rel_err: err,
            synthesis_gflops: flops / s,
            analysis_gflops: flops / a,
            peak_rss_mb: kugel::memory::peak_rss_mib().unwrap_or(f64::NAN),
        })
    })
}

/// max |c_out − c_in| / max |c_in| over all C and S.
pub fn relative_error(input: &Coefficients, output: &Coefficients) -> f64 {
    let pairs = input
        .c_packed()
        .iter()
        .zip(output.c_packed())
        .chain(input.s_packed().iter().zip(output.s_packed()));
    let (mut num, mut den) = (0.0f64, 0.0f64);
    for (a, b) in pairs {
        num = num.max((a - b).abs());
        den = den.max(a.abs());
    }
    if den == 0.0 {
        num
    } else {
        num / den
    }
}

/// Prints a result as a table row block or one JSON line.
pub fn print_result(r: &TransformBenchResult, json: bool) -> anyhow::Result<()> {
    if json {
        println!("{}", serde_json::to_string(r)?);
    } else {
        println!(
            "lmax {}  grid {} x {}  threads {}  kernels {}",
            r.lmax, r.nlat, r.nlon, r.threads, r.kernel
        );
        println!(
            "synthesis {:.3} s ({:.1} GFLOP/s equiv.)  analysis {:.3} s ({:.1} GFLOP/s equiv.)  (median of {})",
            r.synthesis_s, r.synthesis_gflops, r.analysis_s, r.analysis_gflops, r.repeat
        );
        println!(
            "round-trip relative error {:.2e}  peak RSS {:.0} MiB",
            r.roundtrip_rel_err, r.peak_rss_mb
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn seeded_coefficients_are_reproducible_and_standard_normal() {
        let a = random_coefficients(60, 42);
        let b = random_coefficients(60, 42);
        assert_eq!(a, b);
        // sample mean and variance of ~3600 N(0,1) draws: within 5 standard errors
        let v: Vec<f64> = a
            .iter()
            .flat_map(|(_, m, c, s)| if m > 0 { vec![c, s] } else { vec![c] })
            .collect();
        let n = v.len() as f64;
        let mean = v.iter().sum::<f64>() / n;
        let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n;
        assert!(mean.abs() < 5.0 / n.sqrt(), "{mean}");
        assert!((var - 1.0).abs() < 5.0 * (2.0 / n).sqrt(), "{var}");
        assert!(a.iter().all(|(l, m, _, s)| m > 0 || s == 0.0 || l == 0));
    }

    #[test]
    fn small_bench_runs_and_reports_round_trip() {
        let r = run_transform_bench(&TransformBenchArgs {
            lmax: 31,
            threads: 2,
            repeat: 1,
            json: true,
            seed: 1,
            quiet: true,
        })
        .unwrap();
        assert_eq!((r.nlat, r.threads), (32, 2));
        assert!(r.roundtrip_rel_err < 1e-13, "{}", r.roundtrip_rel_err);
    }
}
