//! `kugel run` on configs: the dry run writes nothing, and an invalid config exits with code 3
//! and a message naming the TOML path.

use std::path::Path;

const BASE: &str = r#"
[body]
radius_m = 1950000.0
gm_m3_s2 = 6.21e12
[output]
folder = "out"
[inputs.pts]
kind = "points"
path = "pts.csv"
"#;

fn write_config(dir: &Path, extra: &str) {
    std::fs::write(dir.join("pts.csv"), "lat,lon,value\n0,0,1\n").unwrap();
    std::fs::write(dir.join("job.toml"), format!("{BASE}{extra}")).unwrap();
}

#[test]
fn dry_run_and_exit_code_from_the_binary() {
    let tmp = tempfile::tempdir().unwrap();
    write_config(
        tmp.path(),
        "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n",
    );
    let exe = env!("CARGO_BIN_EXE_kugel");
    let ok = std::process::Command::new(exe)
        .args(["run", "--dry-run"])
        .arg(tmp.path().join("job.toml"))
        .output()
        .unwrap();
    assert!(ok.status.success());
    assert!(String::from_utf8_lossy(&ok.stdout).contains("dry run: config is valid"));
    assert!(!tmp.path().join("out").exists(), "a dry run writes nothing");
    std::fs::write(
        tmp.path().join("bad.toml"),
        format!("{BASE}\n[steps.f]\nkind = \"fti\"\n"),
    )
    .unwrap();
    let bad = std::process::Command::new(exe)
        .args(["run"])
        .arg(tmp.path().join("bad.toml"))
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(3), "invalid config → exit code 3");
    assert!(String::from_utf8_lossy(&bad.stderr)
        .contains("steps.f.kind: unknown kind 'fti'; did you mean 'fit'?"));
}
