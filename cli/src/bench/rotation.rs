//! `kugel bench --case rotation --lmax L`: a seeded degree-L model rotated by fixed Euler
//! angles and back, timed, with the worst coefficient error of the round trip relative to the
//! largest coefficient, checked against the goal of 1e-11 (R⁻¹R = identity; common practice).
//! This is where the round trip at L = 2,000 is checked: it takes too long for `cargo test`,
//! which runs L = 400.

use std::time::Instant;

use kugel::progress::Silent;
use kugel::rotate::{rotate_with_progress, rotation_memory_bytes, EulerAngles};

use super::transform::{bench_threads, random_coefficients};

/// Goal of the round trip: worst |error| / largest |coefficient|.
pub const ROUND_TRIP_GOAL: f64 = 1e-11;

/// Sizes of the rotation benchmark.
#[derive(Debug, Clone)]
pub struct RotationBenchArgs {
    pub lmax: usize,
    pub threads: usize,
    pub repeat: usize,
    pub seed: u64,
}

/// One result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct RotationBenchResult {
    pub case: &'static str,
    pub lmax: usize,
    pub threads: usize,
    pub repeat: usize,
    /// Median time of one rotation (forward), seconds.
    pub rotate_s: f64,
    /// Worst coefficient error of rotation then inverse, relative to the largest coefficient.
    pub round_trip_rel_err: f64,
    pub goal: f64,
    pub pass: bool,
    pub peak_rss_mb: f64,
}

pub fn run_rotation_bench(args: &RotationBenchArgs) -> anyhow::Result<RotationBenchResult> {
    let threads = bench_threads(args.threads)?;
    kugel::memory::check_fits(
        &format!("the rotation benchmark (degree {})", args.lmax),
        rotation_memory_bytes(args.lmax)
            .saturating_add(kugel::memory::coefficient_set_bytes(args.lmax) * 3),
    )?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let model = random_coefficients(args.lmax, args.seed);
        // the angles of the round-trip test in tests/sht/rotation.rs
        let angles = EulerAngles::from_degrees(-63.0, 137.0, 29.0)?;
        let mut times = Vec::new();
        let mut rotated = None;
        for _ in 0..args.repeat.max(1) {
            let t = Instant::now();
            rotated = Some(rotate_with_progress(&model, &angles, &Silent)?);
            times.push(t.elapsed().as_secs_f64());
        }
        let back = rotate_with_progress(
            rotated.as_ref().expect("at least one repeat"),
            &angles.inverse(),
            &Silent,
        )?;
        let largest = model
            .iter()
            .fold(0.0f64, |a, (_, _, c, s)| a.max(c.abs()).max(s.abs()));
        let worst = model.iter().fold(0.0f64, |a, (l, m, c, s)| {
            a.max((back.c(l, m) - c).abs())
                .max((back.s(l, m) - s).abs())
        });
        times.sort_by(f64::total_cmp);
        let round_trip_rel_err = worst / largest;
        Ok(RotationBenchResult {
            case: "rotation",
            lmax: args.lmax,
            threads,
            repeat: args.repeat.max(1),
            rotate_s: times[times.len() / 2],
            round_trip_rel_err,
            goal: ROUND_TRIP_GOAL,
            pass: round_trip_rel_err < ROUND_TRIP_GOAL,
            peak_rss_mb: kugel::memory::peak_rss_mib().unwrap_or(f64::NAN),
        })
    })
}

/// Prints a result as one line of text or one JSON line.
pub fn print_rotation_result(r: &RotationBenchResult, json: bool) -> anyhow::Result<()> {
    super::print_line_or_json(r, json, || {
        format!(
            "rotation: degree {} on {} threads: {:.3} s per rotation (median of {}); rotation then inverse: worst error {:.2e} of the largest coefficient, goal {:.0e}: {}; peak RSS {:.0} MiB",
            r.lmax,
            r.threads,
            r.rotate_s,
            r.repeat,
            r.round_trip_rel_err,
            r.goal,
            if r.pass { "pass" } else { "FAIL" },
            r.peak_rss_mb
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_rotation_bench_reports_a_round_trip_error() {
        let r = run_rotation_bench(&RotationBenchArgs {
            lmax: 20,
            threads: 1,
            repeat: 1,
            seed: 5,
        })
        .unwrap();
        assert!(r.pass && r.round_trip_rel_err > 0.0, "{r:?}");
    }
}
