//! `kugel filter` end to end: reads a model, applies the chain and a continuation, writes the
//! result with provenance; bad input fails with a clear message and leaves no output.

use crate::run_kugel;
use std::path::Path;

use kugel::io::model::{read_model, write_model};
use kugel::io::provenance::Provenance;
use kugel::spectral::filter::FilterChain;
use kugel::{Coefficients, Normalization};

const R: f64 = 6_371_000.0;

fn write_sample(path: &Path) -> Coefficients {
    let mut c = Coefficients::zeros(90, Normalization::Geodesy);
    c.reference_radius_m = R;
    c.units = "m".to_string();
    for l in 0..=90 {
        for m in 0..=l {
            c.set(
                l,
                m,
                100.0 / (1.0 + l as f64),
                50.0 / (1.0 + (l + m) as f64),
            );
        }
    }
    write_model(path, &c, &Provenance::from_command_line("test")).unwrap();
    read_model(path).unwrap()
}

#[test]
fn filters_and_continues_a_model_file() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("topo.nc");
    let output = dir.path().join("smooth.nc");
    let weights = dir.path().join("weights.csv");
    let original = write_sample(&input);
    let before = std::fs::read(&input).unwrap();
    let out = run_kugel(&[
        "filter",
        input.to_str().unwrap(),
        "--filter",
        "gauss:400+lowpass:60-80",
        "--filter",
        "highpass:1-1",
        "--altitude-km",
        "250",
        "-o",
        output.to_str().unwrap(),
        "--weights",
        weights.to_str().unwrap(),
    ]);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        stdout.contains("filter chain: gauss:400+lowpass:60-80+highpass:1-1"),
        "{stdout}"
    );
    assert!(stdout.contains("below 0.5 from degree"), "{stdout}");
    assert!(stdout.contains("upward continuation"), "{stdout}");
    assert_eq!(std::fs::read(&input).unwrap(), before, "input untouched");

    let got = read_model(&output).unwrap();
    assert_eq!(got.reference_radius_m, R + 250e3);
    let chain = FilterChain::parse("gauss:400+lowpass:60-80+highpass:1-1").unwrap();
    let w = chain.weights(90, R).unwrap();
    for (l, m) in [(0, 0), (1, 1), (2, 0), (17, 5), (59, 59), (70, 3), (85, 2)] {
        let k = (R / (R + 250e3)).powi(l as i32 + 1);
        let expect = original.c(l, m) * w[l] * k;
        assert!(
            (got.c(l, m) - expect).abs() <= 1e-13 * original.c(l, m).abs(),
            "l={l} m={m}"
        );
    }
    assert_eq!(got.c(0, 0), 0.0);
    assert_eq!(got.c(85, 2), 0.0);
    let desc = got
        .attributes
        .get("kugel_filter")
        .cloned()
        .unwrap_or_default();
    assert_eq!(desc, "gauss:400+lowpass:60-80+highpass:1-1");
}

#[test]
fn refusals_are_clear_and_leave_no_file() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("topo.nc");
    let output = dir.path().join("out.nc");
    write_sample(&input);
    let cases: [(&[&str], &str); 4] = [
        (
            &["--filter", "lowpass:50-40"],
            "lowpass:50-40: L1 must not exceed L2",
        ),
        (
            &["--filter", "gauss:300", "--altitude-km", "-1000"],
            "amplifies degree 90",
        ),
        (&[], "nothing to do"),
        (&["--filter", "wiener:missing.csv,noise=1"], "missing.csv"),
    ];
    for (extra, want) in cases {
        let mut args = vec![
            "filter",
            input.to_str().unwrap(),
            "-o",
            output.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        let out = run_kugel(&args);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(!out.status.success());
        assert!(stderr.contains(want), "{extra:?}: {stderr}");
        assert!(!output.exists(), "{extra:?} left a file");
    }
    // regularised downward continuation goes through
    let out = run_kugel(&[
        "filter",
        input.to_str().unwrap(),
        "-o",
        output.to_str().unwrap(),
        "--altitude-km",
        "-1000",
        "--downward",
        "tikhonov:1e-4",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let got = read_model(&output).unwrap();
    let biggest = got.c_packed().iter().fold(0.0f64, |a, v| a.max(v.abs()));
    assert!(biggest <= 100.0 / (2.0 * 1e-2) * 1.0000001);
    // the output cannot replace the input
    let out = run_kugel(&[
        "filter",
        input.to_str().unwrap(),
        "-o",
        input.to_str().unwrap(),
        "-f",
        "gauss:100",
    ]);
    assert!(!out.status.success());
}
