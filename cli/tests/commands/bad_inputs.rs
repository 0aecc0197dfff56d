//! Every command × every bad-input class, from the built binary: the exit code the README
//! documents, the words of the message, no panic, no output left behind, and every input
//! byte-identical afterwards. Each row of `cases()` is one command line in a fresh copy of the
//! same small set of inputs.

use std::collections::BTreeMap;
use std::path::Path;

use crate::support::random_model;
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::sht::{GaussGrid, TransformPlan};

/// The inputs every case starts from.
fn make_inputs(dir: &Path) {
    let mut g = random_model(8, 5, |l| if l == 0 { 1.0 } else { 1e-8 / (l * l) as f64 });
    g.reference_radius_m = 6_378_137.0;
    g.gm_m3_s2 = Some(3.986_004_418e14);
    write_model(&dir.join("g.nc"), &g, &Provenance::default()).unwrap();
    let mut zero = kugel::Coefficients::zeros(8, kugel::Normalization::Geodesy);
    zero.reference_radius_m = g.reference_radius_m;
    zero.gm_m3_s2 = g.gm_m3_s2;
    write_model(&dir.join("zero.nc"), &zero, &Provenance::default()).unwrap();
    let mut nan_gm = g.clone();
    nan_gm.gm_m3_s2 = Some(f64::NAN);
    write_model(&dir.join("nan_gm.nc"), &nan_gm, &Provenance::default()).unwrap();
    // region files: a self-crossing ring and a plain triangle
    std::fs::write(dir.join("bow.csv"), "lat,lon\n0,0\n10,10\n10,0\n0,10\n").unwrap();
    std::fs::write(dir.join("tri.csv"), "10,20\n30,25\n15,40\n").unwrap();
    std::fs::write(
        dir.join("norad.txt"),
        "normalization = geodesy\n0 0 1 0\n1 0 0.001 0\n1 1 0.002 0.001\n",
    )
    .unwrap();
    let grid = GaussGrid::new(8);
    let field = TransformPlan::new(8, &grid)
        .unwrap()
        .synthesise(&g)
        .unwrap();
    let mut file = GridFile::from_engine_grid(&grid, "test grid".to_string());
    file.push("value", "a field", "1", None, field);
    write_grid(
        &dir.join("grid.nc"),
        &file,
        &GridWriteOptions {
            float32: false,
            lon_convention: LonConvention::ZeroTo360,
            provenance: &Provenance::default(),
        },
    )
    .unwrap();
    let mut csv = String::from("lat,lon,value\n");
    let mut dup = String::from("lat,lon,value,value\n");
    for i in 0..300 {
        let lat = -85.0 + (i as f64 * 37.0) % 170.0;
        let lon = (i as f64 * 73.0) % 360.0;
        csv += &format!("{lat},{lon},{}\n", (i % 7) as f64);
        dup += &format!("{lat},{lon},{},{}\n", (i % 7) as f64, i);
    }
    std::fs::write(dir.join("pts.csv"), csv).unwrap();
    std::fs::write(dir.join("dup.csv"), dup).unwrap();
    std::fs::create_dir(dir.join("adir")).unwrap();
    std::os::unix::fs::symlink("g.nc", dir.join("alink.nc")).unwrap();
    let config = |step: &str, folder: &str| {
        format!(
            "[body]\nradius_m = 6378137.0\ngm_m3_s2 = 3.986e14\n[output]\nfolder = \"{folder}\"\n\
             [inputs.pts]\nkind = \"points\"\npath = \"pts.csv\"\n\
             [steps.\"{step}\"]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n"
        )
    };
    std::fs::write(dir.join("climb.toml"), config("../../x", "out")).unwrap();
    std::fs::write(dir.join("absolute.toml"), config("/tmp/x", "out")).unwrap();
    std::fs::write(dir.join("into_file.toml"), config("f", "pts.csv")).unwrap();
    std::fs::write(dir.join("into_inputs.toml"), config("f", ".")).unwrap();
    std::fs::write(
        dir.join("columns.toml"),
        config("f", "out").replace(
            "path = \"pts.csv\"",
            "path = \"pts.csv\"\ncolumns = { value = \"gravity\" }",
        ),
    )
    .unwrap();
    std::fs::write(
        dir.join("fit_range.toml"),
        config("f", "out") + "[steps.s]\nkind = \"spectrum\"\nmodel = \"f\"\nfit_range = [2, 40]\n",
    )
    .unwrap();
}

/// Every file under `dir` (following no links) with its bytes, or its kind for non-files.
fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    let mut out = BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let e = e.unwrap();
            let p = e.path();
            let name = p.strip_prefix(dir).unwrap().display().to_string();
            let t = e.file_type().unwrap();
            if t.is_dir() {
                out.insert(name, b"<dir>".to_vec());
                stack.push(p);
            } else if t.is_symlink() {
                out.insert(
                    name,
                    format!("<link {}>", std::fs::read_link(&p).unwrap().display()).into_bytes(),
                );
            } else if t.is_file() {
                out.insert(name, std::fs::read(&p).unwrap());
            } else {
                out.insert(name, b"<special>".to_vec());
            }
        }
    }
    out
}

struct Case {
    args: &'static str,
    code: i32,
    words: &'static [&'static str],
}

const fn case(args: &'static str, code: i32, words: &'static [&'static str]) -> Case {
    Case { args, code, words }
}

const DIR: &[&str] = &["adir", "is a directory"];
const LINK: &[&str] = &["alink.nc", "symbolic link"];
const FIFO: &[&str] = &["afifo", "FIFO"];
const NO_FOLDER: &[&str] = &["missing", "does not exist"];
const MEMORY: &[&str] = &["needs", "MiB"];
const GM: &[&str] = &["nan_gm.nc", "gm_m3_s2", "NaN"];
const RADIUS: &[&str] = &["norad.txt", "reference_radius_m"];
const DUP: &[&str] = &["dup.csv", "columns named `value`"];

fn cases() -> Vec<Case> {
    vec![
        // outputs that are not regular files, or have no folder
        case("convert g.nc adir", 3, DIR),
        case("convert g.nc alink.nc", 3, LINK),
        case("convert g.nc afifo", 3, FIFO),
        case("convert g.nc missing/x.nc", 4, NO_FOLDER),
        case("analyze grid.nc -o adir", 3, DIR),
        case("analyze grid.nc -o alink.nc", 3, LINK),
        case("analyze grid.nc -o missing/m.nc", 4, NO_FOLDER),
        case("fit pts.csv --lmax 2 -o afifo", 3, FIFO),
        case("fit pts.csv --lmax 2 -o missing/m.nc", 4, NO_FOLDER),
        case("grid pts.csv --lmax 8 -o adir", 3, DIR),
        case("grid pts.csv --lmax 8 -o alink.nc", 3, LINK),
        case("evaluate g.nc pts.csv -o adir", 3, DIR),
        case("evaluate g.nc pts.csv -o missing/e.csv", 4, NO_FOLDER),
        case("spectrum g.nc -o alink.nc", 3, LINK),
        case("spectrum g.nc --csv afifo", 3, FIFO),
        case("compare g.nc zero.nc --plot adir", 3, DIR),
        case("filter g.nc -f gauss:500 -o alink.nc", 3, LINK),
        case("synthesize g.nc -o afifo", 3, FIFO),
        // several outputs: all or nothing
        case("spectrum g.nc -o A.nc --csv missing/x.csv", 4, NO_FOLDER),
        case(
            "compare g.nc zero.nc -o A.nc --plot missing/x.svg",
            4,
            NO_FOLDER,
        ),
        case(
            "filter g.nc -f gauss:500 -o F.nc --weights missing/w.csv",
            4,
            NO_FOLDER,
        ),
        case("spectrum g.nc -o A.nc --csv A.nc", 3, &["same file"]),
        // sizes a user can type
        case("fit pts.csv --lmax 18446744073709551615 -o f.nc", 5, MEMORY),
        case("fit pts.csv --lmax 1000000 -o f.nc", 5, MEMORY),
        case(
            "grid pts.csv --lmax 18446744073709551615 -o g2.nc",
            5,
            MEMORY,
        ),
        case("grid pts.csv --lmax 4000000000 -o g2.nc", 5, MEMORY),
        case(
            "evaluate g.nc pts.csv --lmax 18446744073709551615 -o e.csv",
            5,
            MEMORY,
        ),
        case(
            "synthesize g.nc --lmax 18446744073709551615 -o s.nc",
            5,
            MEMORY,
        ),
        case(
            "analyze grid.nc --lmax 18446744073709551615 -o m.nc",
            3,
            &["degree 8 only"],
        ),
        case(
            "spectrum g.nc --fit 2-18446744073709551615",
            3,
            &["fit range", "maximum degree"],
        ),
        // regions: polygons that are not simple rings, masks kugel cannot read, problems too big
        case(
            "tapers --region polygon:bow.csv --lmax 4 -o t.nc",
            3,
            &["bow.csv", "crosses itself", "line 2"],
        ),
        case(
            "spectrum g.nc --region polygon:bow.csv --window-lmax 2",
            3,
            &["bow.csv", "crosses itself"],
        ),
        case(
            "compare g.nc zero.nc --region mask:pts.csv --window-lmax 2",
            3,
            &["pts.csv"],
        ),
        case(
            "tapers --region polygon:tri.csv --lmax 4 -o tri.csv",
            3,
            &["same file", "tri.csv"],
        ),
        case(
            "tapers --region polygon:tri.csv --lmax 400 -o t.nc",
            5,
            &["concentration problem", "160801 unknowns", "MiB"],
        ),
        case(
            "tapers --region polygon:absent.csv --lmax 4 -o t.nc",
            4,
            &["absent.csv"],
        ),
        // models whose numbers would silently mislead
        case("convert nan_gm.nc c.nc", 3, GM),
        case("spectrum nan_gm.nc", 3, GM),
        case("compare g.nc nan_gm.nc", 3, GM),
        case("filter nan_gm.nc -f gauss:500 -o F.nc", 3, GM),
        case("evaluate nan_gm.nc pts.csv -o e.csv", 3, GM),
        case("synthesize nan_gm.nc -o s.nc", 3, GM),
        case("convert norad.txt c.nc", 3, RADIUS),
        case("spectrum norad.txt", 3, RADIUS),
        case("synthesize norad.txt -o s.nc", 3, RADIUS),
        // ambiguous point files
        case("fit dup.csv --lmax 2 -o f.nc", 3, DUP),
        case("grid dup.csv --lmax 4 -o g2.nc", 3, DUP),
        // configs: names stay plain, folders hold no inputs, checks before work
        case("run climb.toml", 3, &["steps.../../x", "'.'"]),
        case("run --dry-run climb.toml", 3, &["steps.../../x"]),
        case("run --dry-run absolute.toml", 3, &["path separator"]),
        case(
            "run --dry-run into_file.toml",
            3,
            &["output.folder", "not a folder"],
        ),
        case(
            "run --dry-run into_inputs.toml",
            3,
            &["output.folder", "holds the input"],
        ),
        case(
            "run --dry-run columns.toml",
            3,
            &["inputs.pts.columns", "gravity", "inputs.pts.columns.value"],
        ),
        case(
            "run --dry-run fit_range.toml",
            3,
            &["steps.s.fit_range", "band limit 3"],
        ),
    ]
}

#[test]
fn every_command_refuses_every_bad_input_class_cleanly() {
    let template = tempfile::tempdir().unwrap();
    make_inputs(template.path());
    let mut failures = Vec::new();
    for c in cases() {
        let dir = tempfile::tempdir().unwrap();
        for (name, bytes) in snapshot(template.path()) {
            let to = dir.path().join(&name);
            if bytes == b"<dir>" {
                std::fs::create_dir_all(&to).unwrap();
            } else if name == "alink.nc" {
                std::os::unix::fs::symlink("g.nc", &to).unwrap();
            } else {
                std::fs::write(&to, bytes).unwrap();
            }
        }
        let fifo = dir.path().join("afifo");
        let made = std::process::Command::new("mkfifo").arg(&fifo).status();
        assert!(
            made.map(|s| s.success()).unwrap_or(false),
            "mkfifo is needed"
        );
        let before = snapshot(dir.path());
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_kugel"))
            .args(c.args.split_whitespace())
            .current_dir(dir.path())
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        let after = snapshot(dir.path());
        let mut problems = Vec::new();
        if out.status.code() != Some(c.code) {
            problems.push(format!("exit {:?}, expected {}", out.status.code(), c.code));
        }
        for w in c.words {
            if !stderr.contains(w) {
                problems.push(format!("message lacks '{w}'"));
            }
        }
        if stderr.contains("panicked") || stderr.contains("RUST_BACKTRACE") {
            problems.push("panicked".into());
        }
        if after != before {
            let added: Vec<&String> = after.keys().filter(|k| !before.contains_key(*k)).collect();
            let changed: Vec<&String> = before
                .keys()
                .filter(|k| after.get(*k) != before.get(*k))
                .collect();
            problems.push(format!(
                "files changed: added {added:?}, changed or removed {changed:?}"
            ));
        }
        let lines: Vec<&str> = stderr.lines().filter(|l| l.starts_with("error")).collect();
        if lines.len() != 1 {
            problems.push(format!("{} error lines", lines.len()));
        }
        if !problems.is_empty() {
            failures.push(format!(
                "kugel {}: {}\n    stderr: {}",
                c.args,
                problems.join("; "),
                stderr.trim()
            ));
        }
    }
    assert!(
        failures.is_empty(),
        "{} case(s) failed:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn compare_with_a_zero_model_never_agrees_and_swapping_keeps_the_verdict() {
    let dir = tempfile::tempdir().unwrap();
    make_inputs(dir.path());
    let run = |a: &str, b: &str| {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_kugel"))
            .args(["compare", a, b])
            .current_dir(dir.path())
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8_lossy(&out.stderr)
            .lines()
            .find(|l| l.contains("agree"))
            .unwrap_or_default()
            .to_string()
    };
    let ab = run("g.nc", "zero.nc");
    let ba = run("zero.nc", "g.nc");
    assert!(ab.starts_with("no agreement"), "{ab}");
    assert_eq!(ab, ba);
    assert!(run("g.nc", "g.nc").starts_with("agree up to degree 8"));
}

#[test]
fn dry_run_checks_a_text_table_model_input_through_a_filter() {
    let dir = tempfile::tempdir().unwrap();
    make_inputs(dir.path());
    let g = kugel::io::model::read_model(&dir.path().join("g.nc")).unwrap();
    write_model(&dir.path().join("g.txt"), &g, &Provenance::default()).unwrap();
    std::fs::write(
        dir.path().join("bad.txt"),
        "normalization = geodesy\n0 0 1 0\n1 0 oops 0\n",
    )
    .unwrap();
    let spec = |model: &str| {
        format!(
            "[body]\nradius_m = 6378137.0\n[output]\nfolder = \"out\"\n\
             [inputs.g]\nkind = \"model\"\npath = \"{model}\"\n\
             [steps.f]\nkind = \"filter\"\nmodel = \"g\"\nfilter = \"gauss:300\"\n\
             [steps.s]\nkind = \"spectrum\"\nmodel = \"f\"\nfit_range = [2, 30]\n"
        )
    };
    let dry_run = |model: &str| {
        std::fs::write(dir.path().join("spec.toml"), spec(model)).unwrap();
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_kugel"))
            .args(["run", "--dry-run", "spec.toml"])
            .current_dir(dir.path())
            .output()
            .unwrap();
        (
            out.status.code(),
            String::from_utf8_lossy(&out.stderr).to_string(),
        )
    };
    let (code, stderr) = dry_run("g.txt");
    assert_eq!(code, Some(3), "{stderr}");
    assert!(
        stderr.contains("steps.s.fit_range") && stderr.contains("band limit 8 of model 'f'"),
        "{stderr}"
    );
    let (code, stderr) = dry_run("bad.txt");
    assert_eq!(code, Some(3), "{stderr}");
    assert!(
        stderr.contains("inputs.g.path") && stderr.contains("bad.txt"),
        "{stderr}"
    );
    assert!(!dir.path().join("out").exists());
}

#[test]
fn dry_run_checks_a_fit_range_beyond_a_model_input() {
    let dir = tempfile::tempdir().unwrap();
    make_inputs(dir.path());
    std::fs::write(
        dir.path().join("spec.toml"),
        "[body]\nradius_m = 6378137.0\n[output]\nfolder = \"out\"\n\
         [inputs.g]\nkind = \"model\"\npath = \"g.nc\"\n\
         [steps.s]\nkind = \"spectrum\"\nmodel = \"g\"\nfit_range = [2, 30]\n",
    )
    .unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_kugel"))
        .args(["run", "--dry-run", "spec.toml"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(3), "{stderr}");
    assert!(
        stderr.contains("steps.s.fit_range") && stderr.contains("band limit 8 of model 'g'"),
        "{stderr}"
    );
}
