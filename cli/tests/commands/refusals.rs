//! Jobs too large for the machine are refused before anything is built: exit code 5 with the
//! estimate and the limit, no output file, no allocation failure or panic, for any degree or
//! grid step a user can type (up to 2⁶⁴ − 1). No timing is asserted; the refusals come from
//! estimates made before nodes, tables or grids exist.

use crate::run_kugel;
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::{Coefficients, Normalization};

const HUGE: &str = "18446744073709551615"; // 2^64 − 1

fn assert_memory_refusal(o: &std::process::Output, what: &str) {
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(5), "{what}: {err}");
    assert!(err.contains("MiB"), "{what}: no estimate in: {err}");
    assert!(
        !err.contains("panicked") && !err.contains("backtrace"),
        "{what}: {err}"
    );
}

#[test]
fn benchmark_refuses_huge_degrees_and_thread_counts() {
    for lmax in ["2000000", HUGE] {
        let o = run_kugel(&["bench", "--lmax", lmax, "--repeat", "1", "--json"]);
        assert_memory_refusal(&o, &format!("bench --lmax {lmax}"));
        assert!(String::from_utf8_lossy(&o.stderr).contains("transform benchmark"));
        let o = run_kugel(&[
            "bench", "--case", "points", "--lmax", lmax, "--points", "10",
        ]);
        assert_memory_refusal(&o, &format!("bench --case points --lmax {lmax}"));
    }
    let o = run_kugel(&["bench", "--lmax", "8", "--threads", "100000"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(3), "{err}");
    assert!(
        err.contains("--threads 100000") && err.contains("at most"),
        "{err}"
    );
}

#[test]
fn synthesis_refuses_padding_and_grids_that_do_not_fit() {
    let dir = tempfile::tempdir().unwrap();
    let model = dir.path().join("m.txt");
    let mut c = Coefficients::zeros(4, Normalization::Geodesy);
    c.set(2, 0, 1e-3, 0.0);
    write_model(&model, &c, &Provenance::default()).unwrap();
    let out = dir.path().join("map.nc");
    let m = model.to_str().unwrap();
    let o_path = out.to_str().unwrap();
    // the zero-padded model, the Gauss grid and a fine regular grid, each alone too large
    let cases: [&[&str]; 4] = [
        &[
            "synthesize",
            m,
            "-o",
            o_path,
            "--lmax",
            "100000",
            "--grid",
            "gauss",
        ],
        &[
            "synthesize",
            m,
            "-o",
            o_path,
            "--lmax",
            HUGE,
            "--grid",
            "gauss",
        ],
        &["synthesize", m, "-o", o_path, "--grid", "regular:0.00001"],
        &[
            "synthesize",
            m,
            "-o",
            o_path,
            "--lmax",
            HUGE,
            "--grid",
            "regular:1",
        ],
    ];
    for args in cases {
        let o = run_kugel(args);
        assert_memory_refusal(&o, &args.join(" "));
        assert!(!out.exists(), "{}: left a file", args.join(" "));
    }
    // still a clear error, not a refusal, for a step that does not divide 180°
    let o = run_kugel(&["synthesize", m, "-o", o_path, "--grid", "regular:0.7"]);
    assert_eq!(o.status.code(), Some(3));
}
