//! `kugel bench --case transform`: synthesis then analysis on the Gauss grid of degree L with
//! seeded N(0, 1) coefficients; median times over the repeats, round-trip error, peak memory,
//! and the machine's FMA peak measured in the same run (`fma_peak`), against which both
//! directions are stated as fractions (rate = 2·(L+1)³·fields / time).
//!
//! With `fields` = K > 1, K coefficient sets are transformed on the same plan and the times are
//! for all K together, by the plan's many-field transforms (`synthesise_many`, `analyse_many`:
//! each Legendre value is computed once and applied to the K fields).

use std::time::Instant;

use rand::SeedableRng;
use rand_distr::{Distribution, StandardNormal};

use kugel::coeffs::{Coefficients, Normalization};
use kugel::sht::budget::{check_transform_job, gauss_grid_shape};
use kugel::sht::{GaussGrid, KernelPath, TransformPlan};

use super::fma_peak::measure_fma_peak;

/// What the transform benchmark measures.
#[derive(Debug, Clone)]
pub struct TransformBenchArgs {
    pub lmax: usize,
    /// Coefficient sets transformed together (K ≥ 1).
    pub fields: usize,
    pub threads: usize,
    pub repeat: usize,
    pub json: bool,
    pub seed: u64,
    pub quiet: bool,
    /// A [`KernelPath::name`] to force, or `None` for the plan's own choice.
    pub kernels: Option<String>,
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
    /// Coefficient sets transformed per direction; `synthesis_s` and `analysis_s` are for all
    /// of them together.
    pub fields: usize,
    /// How the K fields are transformed.
    pub fields_method: &'static str,
    /// Gauss–Legendre nodes and weights with the grid (part of `plan_s`), seconds.
    pub gauss_grid_s: f64,
    pub plan_s: f64,
    /// The plan's table of column starts (found once, read by every transform), MiB; 0 when
    /// the plan keeps none.
    pub column_start_table_mb: f64,
    pub synthesis_s: f64,
    pub analysis_s: f64,
    pub roundtrip_rel_err: f64,
    /// 2 (L+1)³ / t for each direction, GFLOP/s (the rate measure).
    pub synthesis_gflops: f64,
    pub analysis_gflops: f64,
    /// All-thread FP64 FMA rate of this machine, measured in this run (see `fma_peak`).
    pub fma_peak_gflops: f64,
    /// The instruction set of the FMA loop (the kernels' own).
    pub fma_peak_kernel: String,
    /// `synthesis_gflops` / `fma_peak_gflops`.
    pub synthesis_peak_fraction: f64,
    /// `analysis_gflops` / `fma_peak_gflops`.
    pub analysis_peak_fraction: f64,
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

/// The pool size a benchmark runs with: all cores for 0, else `requested`, refused beyond
/// four times the cores (more threads only measure the scheduler, and a huge count would
/// spend minutes creating them).
pub fn bench_threads(requested: usize) -> anyhow::Result<usize> {
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let limit = 4 * cores;
    if requested > limit {
        return Err(kugel::Error::invalid(format!(
            "--threads {requested}: at most {limit} on this machine (4 x its {cores} cores; 0 = all cores)"
        ))
        .into());
    }
    Ok(if requested == 0 { cores } else { requested })
}

/// Runs the benchmark in a pool of `threads` threads.
pub fn run_transform_bench(args: &TransformBenchArgs) -> anyhow::Result<TransformBenchResult> {
    let threads = bench_threads(args.threads)?;
    let fields = args.fields.max(1);
    let lmax = args.lmax;
    // refuse before any node, table or grid exists: K fields, K inputs and K outputs
    check_transform_job(
        &format!("the transform benchmark with {fields} field(s)"),
        lmax,
        gauss_grid_shape(lmax),
        fields as f64,
        2.0 * fields as f64,
    )?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let say = |msg: String| {
            if !args.quiet && !args.json {
                eprintln!("{msg}");
            }
        };
        let peak = measure_fma_peak(3, 0.2);
        say(format!(
            "FMA peak {:.1} GFLOP/s on {threads} threads ({} loop)",
            peak.gflops,
            peak.path.name()
        ));
        let t = Instant::now();
        let grid = GaussGrid::new(lmax);
        let gauss_grid_s = t.elapsed().as_secs_f64();
        let mut plan = TransformPlan::new(lmax, &grid)?;
        if let Some(name) = &args.kernels {
            let path = KernelPath::from_name(name).ok_or_else(|| {
                kugel::Error::invalid(format!(
                    "--kernels {name}: expected one of {}",
                    KernelPath::all().map(|p| p.name()).join(", ")
                ))
            })?;
            plan = plan.with_kernel_path(path)?;
        }
        let plan_s = t.elapsed().as_secs_f64();
        say(format!(
            "degree {lmax}: Gauss grid {} x {}, {threads} threads, {} kernels, plan {plan_s:.3} s (Gauss–Legendre nodes and weights {gauss_grid_s:.3} s)",
            grid.nlat(),
            grid.nlon,
            plan.kernel_path().name()
        ));
        let inputs: Vec<Coefficients> = (0..fields)
            .map(|k| random_coefficients(lmax, args.seed.wrapping_add(k as u64)))
            .collect();
        let (mut ts, mut ta) = (Vec::new(), Vec::new());
        let mut err = 0.0f64;
        for k in 0..args.repeat.max(1) {
            let t = Instant::now();
            let refs: Vec<&Coefficients> = inputs.iter().collect();
            let grids = if fields == 1 {
                vec![plan.synthesise(refs[0])?]
            } else {
                plan.synthesise_many(&refs)?
            };
            ts.push(t.elapsed().as_secs_f64());
            let t = Instant::now();
            let back = if fields == 1 {
                vec![plan.analyse(&grids[0])?]
            } else {
                plan.analyse_many(&grids.iter().collect::<Vec<_>>())?
            };
            ta.push(t.elapsed().as_secs_f64());
            drop(grids);
            err = inputs
                .iter()
                .zip(&back)
                .map(|(a, b)| relative_error(a, b))
                .fold(0.0, f64::max);
            say(format!(
                "  repeat {}: synthesis {:.3} s, analysis {:.3} s, round-trip error {err:.2e}",
                k + 1,
                ts[k],
                ta[k]
            ));
        }
        let (s, a) = (median(ts), median(ta));
        let flops = fields as f64 * 2.0 * ((lmax + 1) as f64).powi(3) / 1e9;
        Ok(TransformBenchResult {
            lmax,
            nlat: grid.nlat(),
            nlon: grid.nlon,
            threads,
            kernel: plan.kernel_path().name().to_string(),
            repeat: args.repeat.max(1),
            fields,
            fields_method: if fields == 1 {
                "single"
            } else {
                "many-field transforms (one Legendre pass for all fields)"
            },
            gauss_grid_s,
            plan_s,
            column_start_table_mb: plan.column_start_table_bytes() as f64 / kugel::memory::MIB,
            synthesis_s: s,
            analysis_s: a,
            roundtrip_rel_err: err,
            synthesis_gflops: flops / s,
            analysis_gflops: flops / a,
            fma_peak_gflops: peak.gflops,
            fma_peak_kernel: peak.path.name().to_string(),
            synthesis_peak_fraction: flops / s / peak.gflops,
            analysis_peak_fraction: flops / a / peak.gflops,
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
            "lmax {}  grid {} x {}  threads {}  kernels {}  fields {} ({})",
            r.lmax, r.nlat, r.nlon, r.threads, r.kernel, r.fields, r.fields_method
        );
        println!(
            "synthesis {:.3} s ({:.1} GFLOP/s equiv., {:.2} of peak)  analysis {:.3} s ({:.1} GFLOP/s equiv., {:.2} of peak)  (median of {})",
            r.synthesis_s,
            r.synthesis_gflops,
            r.synthesis_peak_fraction,
            r.analysis_s,
            r.analysis_gflops,
            r.analysis_peak_fraction,
            r.repeat
        );
        println!(
            "FMA peak {:.1} GFLOP/s ({} loop, all threads, measured in this run)",
            r.fma_peak_gflops, r.fma_peak_kernel
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
            fields: 2,
            threads: 2,
            repeat: 1,
            json: true,
            seed: 1,
            quiet: true,
            kernels: Some("portable".into()),
        })
        .unwrap();
        assert_eq!((r.nlat, r.threads, r.fields), (32, 2, 2));
        assert_eq!(r.kernel, "portable");
        assert!(r.roundtrip_rel_err < 1e-13, "{}", r.roundtrip_rel_err);
        assert!(r.fma_peak_gflops > 0.0 && r.synthesis_peak_fraction > 0.0);
        let expected = r.synthesis_gflops / r.fma_peak_gflops;
        assert!((r.synthesis_peak_fraction - expected).abs() <= 1e-12 * expected);
    }
}
