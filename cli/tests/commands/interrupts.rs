//! Runs and folders: SIGINT and SIGTERM mid-run remove the staging folder, the lock and every
//! partial output (exit 130 / 143); after a SIGKILL the next run on the folder removes what was
//! left and says so; a second run on a folder in use is refused naming the first one's PID.

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// A job that takes seconds (a degree-60 fit: 3721 unknowns from 4000 points), and a quick one
/// on the same output folder.
fn make_jobs(dir: &Path) {
    let mut csv = String::from("lat,lon,value\n");
    for i in 0..4000 {
        let lat = -89.0 + (i as f64 * 0.618_034 * 178.0) % 178.0;
        let lon = (i as f64 * 137.508) % 360.0;
        csv += &format!(
            "{lat:.5},{lon:.5},{}\n",
            (lat.to_radians().sin() * 3.0).round()
        );
    }
    std::fs::write(dir.join("pts.csv"), csv).unwrap();
    let job = |lmax: usize| {
        format!(
            "[body]\nradius_m = 6378137.0\n[output]\nfolder = \"out\"\n\
             [inputs.pts]\nkind = \"points\"\npath = \"pts.csv\"\n\
             [steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = {lmax}\n"
        )
    };
    std::fs::write(dir.join("slow.toml"), job(60)).unwrap();
    std::fs::write(dir.join("quick.toml"), job(2)).unwrap();
}

fn start(dir: &Path, config: &str) -> Child {
    Command::new(env!("CARGO_BIN_EXE_kugel"))
        .args(["run", config])
        .current_dir(dir)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

/// Waits until the run's staging folder exists (the run is under way).
fn wait_for_staging(out: &Path, pid: u32) -> PathBuf {
    let staging = out.join(format!(".kugel-staging-{pid}"));
    let t = Instant::now();
    while !staging.exists() {
        assert!(
            t.elapsed() < Duration::from_secs(60),
            "the run never started staging"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    staging
}

fn signal(pid: u32, name: &str) {
    let ok = Command::new("kill")
        .args([format!("-{name}"), pid.to_string()])
        .status()
        .unwrap();
    assert!(ok.success());
}

fn entries(dir: &Path) -> Vec<String> {
    match std::fs::read_dir(dir) {
        Ok(rd) => rd
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect(),
        Err(_) => Vec::new(),
    }
}

#[test]
fn sigint_and_sigterm_leave_nothing_behind() {
    for (name, code) in [("INT", 130), ("TERM", 143)] {
        let dir = tempfile::tempdir().unwrap();
        make_jobs(dir.path());
        let child = start(dir.path(), "slow.toml");
        let pid = child.id();
        wait_for_staging(&dir.path().join("out"), pid);
        signal(pid, name);
        let out = child.wait_with_output().unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(code), "SIG{name}: {stderr}");
        assert!(stderr.contains("interrupted"), "{stderr}");
        let left = entries(&dir.path().join("out"));
        assert!(left.is_empty(), "SIG{name} left {left:?}");
    }
}

#[test]
fn after_sigkill_the_next_run_cleans_up_and_reports_it() {
    let dir = tempfile::tempdir().unwrap();
    make_jobs(dir.path());
    let mut child = start(dir.path(), "slow.toml");
    let pid = child.id();
    wait_for_staging(&dir.path().join("out"), pid);
    child.kill().unwrap();
    child.wait().unwrap();
    let left = entries(&dir.path().join("out"));
    assert!(
        left.iter().any(|n| n.starts_with(".kugel-staging-")),
        "a killed run leaves its staging folder: {left:?}"
    );
    let out = start(dir.path(), "quick.toml").wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{stderr}");
    assert!(
        stderr.contains(&format!("removed the staging folder .kugel-staging-{pid}")),
        "{stderr}"
    );
    let mut left = entries(&dir.path().join("out"));
    left.sort();
    assert_eq!(
        left,
        vec!["f_model.nc".to_string(), "report.html".to_string()]
    );
}

#[test]
fn a_second_run_on_a_folder_in_use_is_refused_naming_the_holder() {
    let dir = tempfile::tempdir().unwrap();
    make_jobs(dir.path());
    let first = start(dir.path(), "slow.toml");
    let pid = first.id();
    let staging = wait_for_staging(&dir.path().join("out"), pid);
    let second = start(dir.path(), "quick.toml").wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&second.stderr);
    assert_eq!(second.status.code(), Some(4), "{stderr}");
    assert!(
        stderr.contains("in use by another kugel run") && stderr.contains(&format!("PID {pid}")),
        "{stderr}"
    );
    assert!(
        staging.exists(),
        "the second run must not touch the first one's staging folder"
    );
    signal(pid, "TERM");
    let out = first.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(143));
    assert!(entries(&dir.path().join("out")).is_empty());
}
