//! Config validation: every rule reports its TOML path and what was expected, before any work.

use std::path::Path;

use kugel::pipeline::Job;

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

fn load(dir: &Path, extra: &str) -> Result<Job, String> {
    std::fs::write(dir.join("pts.csv"), "lat,lon,value\n0,0,1\n").unwrap();
    let path = dir.join("job.toml");
    std::fs::write(&path, format!("{BASE}{extra}")).unwrap();
    Job::load(&path).map_err(|e| e.to_string())
}

#[test]
fn unknown_key_gets_path_and_suggestion() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[steps.fit]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 4\nregularisation = \"gcv\"\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.fit.regularisation: unknown key; did you mean 'regularization'?"),
        "{err}"
    );
    let err = load(
        tmp.path(),
        "[steps.g]\nkind = \"grid\"\ninput = \"pts\"\nlmxa = 4\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.g.lmxa: unknown key; did you mean 'lmax'?"),
        "{err}"
    );
}

#[test]
fn missing_path_is_named() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[inputs.topo]\nkind = \"grid\"\npath = \"nowhere.nc\"\n",
    )
    .unwrap_err();
    assert!(err.contains("inputs.topo.path: no such file:"), "{err}");
    assert!(err.contains("nowhere.nc"), "{err}");
}

#[test]
fn bad_degrees_are_refused() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[steps.g]\nkind = \"grid\"\ninput = \"pts\"\nlmax = 0\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.g.lmax: 0 is outside 1..=10800"),
        "{err}"
    );
    let err = load(tmp.path(), "[steps.g]\nkind = \"grid\"\ninput = \"pts\"\n").unwrap_err();
    assert!(err.contains("steps.g.lmax: missing"), "{err}");
    let err = load(
        tmp.path(),
        "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 400\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.f.lmax: a least-squares fit to degree 400"),
        "{err}"
    );
}

#[test]
fn cycles_and_missing_products_are_reported() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[steps.a]\nkind = \"filter\"\nmodel = \"b\"\nfilter = \"gauss:300\"\n[steps.b]\nkind = \"filter\"\nmodel = \"a\"\nfilter = \"gauss:300\"\n",
    )
    .unwrap_err();
    assert!(err.contains("dependency cycle: a → b → a"), "{err}");
    let err = load(tmp.path(), "[steps.s]\nkind = \"spectrum\"\nmodel = \"fti\"\n[steps.fit]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n").unwrap_err();
    assert!(
        err.contains("steps.s.model: no input or step is called 'fti'; did you mean 'fit'?"),
        "{err}"
    );
    let err = load(
        tmp.path(),
        "[steps.s]\nkind = \"spectrum\"\nmodel = \"pts\"\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.s.model: 'pts' is a point set, but a coefficient model is needed"),
        "{err}"
    );
}

#[test]
fn values_checked_by_the_owning_parsers() {
    let tmp = tempfile::tempdir().unwrap();
    let extra = "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n[steps.m]\nkind = \"synthesize\"\nmodel = \"f\"\nquantities = [\"gravity-anomly\"]\nfilter = \"gauss:-5\"\n";
    let err = load(tmp.path(), extra).unwrap_err();
    assert!(err.contains("steps.m.quantities:"), "{err}");
    assert!(err.contains("steps.m.filter:"), "{err}");
    // all problems together, counted
    assert!(err.contains("2 problems in the config"), "{err}");
}

#[test]
fn valid_config_gives_plan_and_memory_estimate() {
    let tmp = tempfile::tempdir().unwrap();
    let job = load(tmp.path(), "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 10\n[steps.s]\nkind = \"spectrum\"\nmodel = \"f\"\n").unwrap();
    assert_eq!(job.step_order(), vec!["f", "s"]);
    let plan = job.describe();
    assert!(plan.contains("memory estimate"), "{plan}");
    // 121 unknowns: two 121×121 matrices of doubles
    assert!(plan.contains("121 unknowns"), "{plan}");
    assert_eq!(job.config_sha256.len(), 64);
}
