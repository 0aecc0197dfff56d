//! Typed pipeline steps: every kind parses, each kind's keys are checked with the nearest valid
//! key and its TOML path, old spellings point to the new ones, output names do not repeat a
//! word, and the printed memory estimate is what the steps themselves check (the dry run of the
//! binary is tested in cli/tests/commands/run_config.rs).

use std::path::Path;

use kugel::field::Quantity;
use kugel::observe::fit::{
    fit_memory_bytes, fit_observations, FitSetup, ObservationSet, Regularization, SolverRequest,
};
use kugel::observe::points::PointSet;
use kugel::pipeline::config::{Step, StepKind};
use kugel::pipeline::estimate::human_bytes;
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
[inputs.topo]
kind = "grid"
path = "topo.nc"
"#;

/// One valid table of each kind, using the inputs of BASE and the fit `f`.
fn minimal(kind: StepKind) -> &'static str {
    match kind {
        StepKind::Grid => "kind = \"grid\"\ninput = \"pts\"\nlmax = 4\n",
        StepKind::Fit => "kind = \"fit\"\ninput = \"pts\"\nlmax = 4\n",
        StepKind::Analyze => "kind = \"analyze\"\ninput = \"topo\"\nlmax = 4\n",
        StepKind::Spectrum => "kind = \"spectrum\"\nmodel = \"f\"\n",
        StepKind::Compare => "kind = \"compare\"\nmodels = [\"f\", \"f\"]\n",
        StepKind::Filter => "kind = \"filter\"\nmodel = \"f\"\nfilter = \"gauss:300\"\n",
        StepKind::Synthesize => "kind = \"synthesize\"\nmodel = \"f\"\nquantities = [\"geoid\"]\n",
        StepKind::Evaluate => "kind = \"evaluate\"\nmodel = \"f\"\npoints = \"pts\"\n",
        StepKind::Tapers => "kind = \"tapers\"\nregion = \"cap:10,20,30\"\nwindow_lmax = 3\n",
        StepKind::RegionalSpectrum => {
            "kind = \"regional_spectrum\"\nmodel = \"f\"\nregion = \"cap:10,20,30\"\nwindow_lmax = 2\n"
        }
        StepKind::RegionalCompare => {
            "kind = \"regional_compare\"\nmodels = [\"f\", \"f\"]\nregion = \"cap:10,20,30\"\nwindow_lmax = 2\n"
        }
    }
}

const FIT: &str = "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 4\n";

fn load(dir: &Path, steps: &str) -> Result<Job, String> {
    std::fs::write(dir.join("pts.csv"), "lat,lon,value\n0,0,1\n10,20,2\n").unwrap();
    // existence is all the config check asks of a grid file
    std::fs::write(dir.join("topo.nc"), b"").unwrap();
    let path = dir.join("job.toml");
    std::fs::write(&path, format!("{BASE}{steps}")).unwrap();
    Job::load(&path).map_err(|e| e.to_string())
}

#[test]
fn each_step_kind_parses_into_its_own_variant() {
    let tmp = tempfile::tempdir().unwrap();
    for &kind in StepKind::ALL {
        let steps = format!("{FIT}[steps.s]\n{}", minimal(kind));
        let job = load(tmp.path(), &steps).unwrap_or_else(|e| panic!("{kind:?}: {e}"));
        let step = &job.config.steps["s"];
        assert_eq!(step.kind(), kind);
        // the typed settings hold what was written
        match step {
            Step::Grid(s) => assert_eq!((s.input.as_str(), s.lmax), ("pts", 4)),
            Step::Fit(s) => assert_eq!(s.regularization_spec(), "none"),
            Step::Analyze(s) => assert_eq!(s.input, "topo"),
            Step::Spectrum(s) => assert_eq!(s.model, "f"),
            Step::Compare(s) => assert_eq!(s.models, ["f", "f"]),
            Step::Filter(s) => assert_eq!(s.filter, "gauss:300"),
            Step::Synthesize(s) => assert_eq!(s.quantities, ["geoid"]),
            Step::Evaluate(s) => assert_eq!(s.points, "pts"),
            Step::Tapers(s) => assert_eq!((s.region.as_str(), s.window_lmax), ("cap:10,20,30", 3)),
            Step::RegionalSpectrum(s) => assert_eq!(s.window_lmax, 2),
            Step::RegionalCompare(s) => assert_eq!(s.models, ["f", "f"]),
        }
    }
}

#[test]
fn each_kind_accepts_exactly_its_documented_keys() {
    // the contract of docs/pipeline.md, "Steps"
    let documented: &[(StepKind, &[&str])] = &[
        (
            StepKind::Grid,
            &["input", "lmax", "method", "radius_km", "neighbours", "gaps"],
        ),
        (
            StepKind::Fit,
            &[
                "input",
                "inputs",
                "weights",
                "fix_degrees",
                "normal_field",
                "external_lmax",
                "epoch",
                "robust",
                "lmax",
                "regularization",
                "solver",
            ],
        ),
        (StepKind::Analyze, &["input", "lmax"]),
        (StepKind::Spectrum, &["model", "confidence", "fit_range"]),
        (
            StepKind::Compare,
            &["models", "confidence", "cross_quantity", "from_degree"],
        ),
        (StepKind::Filter, &["model", "filter"]),
        (
            StepKind::Synthesize,
            &[
                "model",
                "quantities",
                "altitude_km",
                "filter",
                "grid_lmax",
                "time",
            ],
        ),
        (
            StepKind::Evaluate,
            &["model", "points", "quantity", "altitude_km", "time"],
        ),
        (StepKind::Tapers, &["region", "window_lmax", "keep"]),
        (
            StepKind::RegionalSpectrum,
            &["model", "region", "window_lmax", "tapers"],
        ),
        (
            StepKind::RegionalCompare,
            &["models", "region", "window_lmax", "tapers", "from_degree"],
        ),
    ];
    assert_eq!(documented.len(), StepKind::ALL.len());
    for (kind, keys) in documented {
        let mut want = vec!["kind"];
        want.extend_from_slice(keys);
        assert_eq!(kind.keys(), want, "{kind:?}");
    }
}

/// `key` with its first two differing adjacent characters swapped: one edit in the
/// optimal-string-alignment distance (common practice).
fn transposed(key: &str) -> String {
    let mut c: Vec<char> = key.chars().collect();
    let i = (0..c.len() - 1)
        .find(|&i| c[i] != c[i + 1])
        .expect("a key with two different characters");
    c.swap(i, i + 1);
    let typo: String = c.into_iter().collect();
    assert_ne!(typo, key);
    typo
}

#[test]
fn a_mistyped_key_of_each_kind_gets_the_nearest_key_and_its_path() {
    let tmp = tempfile::tempdir().unwrap();
    for &kind in StepKind::ALL {
        for key in kind.keys().into_iter().skip(1) {
            let typo = transposed(key);
            let steps = format!("{FIT}[steps.s]\n{}{typo} = 1\n", minimal(kind));
            let err = load(tmp.path(), &steps).unwrap_err();
            let want = format!("steps.s.{typo}: unknown key; did you mean '{key}'?");
            assert!(err.contains(&want), "{kind:?}: {err}");
        }
    }
}

#[test]
fn a_key_of_another_kind_is_refused_with_its_path() {
    let tmp = tempfile::tempdir().unwrap();
    // grid_lmax belongs to syntheses, not spectra; nothing in a spectrum is close to it
    let steps = format!(
        "{FIT}[steps.s]\n{}grid_lmax = 8\n",
        minimal(StepKind::Spectrum)
    );
    let err = load(tmp.path(), &steps).unwrap_err();
    assert!(
        err.contains(
            "steps.s.grid_lmax: unknown key; expected one of: kind, model, confidence, fit_range"
        ),
        "{err}"
    );
}

#[test]
fn unknown_kinds_get_the_nearest_kind() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(tmp.path(), "[steps.s]\nkind = \"spectra\"\nmodel = \"x\"\n").unwrap_err();
    assert!(
        err.contains("steps.s.kind: unknown kind 'spectra'; did you mean 'spectrum'?"),
        "{err}"
    );
    let err = load(tmp.path(), "[steps.s]\nkind = \"interpolate\"\n").unwrap_err();
    assert!(
        err.contains("steps.s.kind: unknown kind 'interpolate'; expected one of: grid, fit, analyze, spectrum, compare, filter, synthesize, evaluate"),
        "{err}"
    );
    let err = load(
        tmp.path(),
        "[inputs.q]\nkind = \"point\"\npath = \"pts.csv\"\n",
    )
    .unwrap_err();
    assert!(
        err.contains("inputs.q.kind: unknown kind 'point'; did you mean 'points'?"),
        "{err}"
    );
}

#[test]
fn old_spellings_point_to_the_new_ones() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[steps.t]\nkind = \"analyse\"\ninput = \"topo\"\nlmax = 4\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.t.kind: unknown kind 'analyse'; did you mean 'analyze'?"),
        "{err}"
    );
    for kind in [StepKind::Synthesize, StepKind::Evaluate] {
        let steps = format!("{FIT}[steps.s]\n{}altitude_m = 400000.0\n", minimal(kind));
        let err = load(tmp.path(), &steps).unwrap_err();
        assert!(
            err.contains("steps.s.altitude_m: unknown key; did you mean 'altitude_km'? (altitudes are given in km: divide the value by 1000)"),
            "{kind:?}: {err}"
        );
    }
}

#[test]
fn missing_required_keys_are_named_with_their_path() {
    let tmp = tempfile::tempdir().unwrap();
    let err = load(
        tmp.path(),
        "[steps.a]\nkind = \"synthesize\"\nmodel = \"f\"\n[steps.b]\nkind = \"evaluate\"\nmodel = \"f\"\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.a.quantities: missing; this synthesize step needs it"),
        "{err}"
    );
    assert!(
        err.contains("steps.b.points: missing; this evaluate step needs it"),
        "{err}"
    );
    assert!(err.contains("2 problems"), "{err}");
}

#[test]
fn two_steps_writing_the_same_file_are_refused() {
    let tmp = tempfile::tempdir().unwrap();
    // a fit `x` writes x_model.nc, and so does a fit named x_model
    let err = load(
        tmp.path(),
        "[steps.x]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n[steps.x_model]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n",
    )
    .unwrap_err();
    assert!(
        err.contains(
            "steps.x_model: would write x_model.nc, as x writes x_model.nc; rename the step"
        ),
        "{err}"
    );
    // names differing only in case clash on case-insensitive file systems
    let err = load(
        tmp.path(),
        "[steps.Ridge]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n[steps.ridge]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 3\n",
    )
    .unwrap_err();
    assert!(
        err.contains("steps.ridge: would write ridge_model.nc, as Ridge writes Ridge_model.nc"),
        "{err}"
    );
}

#[test]
fn the_fit_estimate_is_what_the_fit_checks() {
    let tmp = tempfile::tempdir().unwrap();
    for (spec, regularization) in [
        ("none", Regularization::None),
        ("gcv", Regularization::Gcv),
        ("kaula:1e-4,2", Regularization::Kaula { a: 1e-4, p: 2.0 }),
    ] {
        let steps = format!(
            "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 30\nregularization = \"{spec}\"\n"
        );
        let job = load(tmp.path(), &steps).unwrap();
        let bytes = job.memory.bytes_of("f").unwrap();
        assert_eq!(bytes, fit_memory_bytes(30, &regularization), "{spec}");
        let plan = job.describe();
        let line = plan
            .lines()
            .find(|l| l.trim_start().starts_with("f "))
            .unwrap();
        assert!(line.contains(&human_bytes(bytes)), "{spec}: {line}");
    }
    // GCV keeps two more matrices: 5 instead of 3 of 961² doubles, plus the same design rows
    let none = fit_memory_bytes(30, &Regularization::None);
    let gcv = fit_memory_bytes(30, &Regularization::Gcv);
    assert_eq!(gcv - none, 2 * 961 * 961 * 8);
}

#[test]
fn a_fit_too_large_for_this_machine_is_refused_with_the_estimate_the_plan_printed() {
    // At degree 300 (90,601 unknowns) three normal matrices need about 183 GiB: more than this
    // machine has, so the direct fit refuses before allocating and its message carries the figure it
    // checked. That figure must be the plan's.
    let Some(available) = kugel::memory::available_bytes() else {
        eprintln!("no /proc/meminfo: the fit would not check its memory; nothing to compare");
        return;
    };
    let tmp = tempfile::tempdir().unwrap();
    let job = load(
        tmp.path(),
        "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 300\nsolver = \"direct\"\n",
    )
    .unwrap();
    let planned = job.memory.bytes_of("f").unwrap();
    assert!(
        planned > available,
        "this test needs a machine with < {planned} B free"
    );
    let (points, _) =
        PointSet::from_vectors(vec![0.0, 10.0], vec![0.0, 20.0], vec![1.0, 2.0], None).unwrap();
    let set = ObservationSet::from_points(&points, Quantity::Value, 1_950_000.0);
    let setup = FitSetup {
        solver: SolverRequest::Direct,
        ..FitSetup::generic(300, 1_950_000.0, Regularization::None)
    };
    match fit_observations(&set, &setup) {
        Err(kugel::Error::InsufficientMemory { needed_mib, .. }) => {
            let planned_mib = planned as f64 / kugel::memory::MIB;
            assert!(
                (needed_mib - planned_mib).abs() < 1e-6 * planned_mib,
                "fit checked {needed_mib} MiB, plan printed {planned_mib} MiB"
            );
        }
        other => panic!("expected a memory refusal, got {other:?}"),
    }
}

#[test]
fn synthesis_estimate_uses_the_synthesis_estimator() {
    use kugel::field::quantity::Quantity;
    use kugel::field::synthesis::synthesis_memory_bytes;
    let tmp = tempfile::tempdir().unwrap();
    let job = load(
        tmp.path(),
        &format!("{FIT}[steps.m]\nkind = \"synthesize\"\nmodel = \"f\"\nquantities = [\"geoid\", \"gravity-anomaly\"]\ngrid_lmax = 10\n"),
    )
    .unwrap();
    let qs: Vec<Quantity> = ["geoid", "gravity-anomaly"]
        .iter()
        .map(|q| q.parse().unwrap())
        .collect();
    // degree-10 Gauss grid: 11 rows x 24 columns (smallest 2,3,5-smooth length >= 21)
    assert_eq!(
        job.memory.bytes_of("m"),
        Some(synthesis_memory_bytes(4, &qs, 11, 24))
    );
}

#[test]
fn a_time_for_a_model_without_rates_is_refused_naming_the_step_and_the_model() {
    let tmp = tempfile::tempdir().unwrap();
    // a fit without epoch has no rates: both step kinds refuse the time when the config is
    // checked, and a non-finite time is refused as such
    let steps = format!(
        "{FIT}[steps.m]\nkind = \"synthesize\"\nmodel = \"f\"\nquantities = [\"value\"]\ntime = 2030.5\n\
         [steps.r]\nkind = \"evaluate\"\nmodel = \"f\"\npoints = \"pts\"\ntime = 2031.0\n\
         [steps.g]\nkind = \"filter\"\nmodel = \"f\"\nfilter = \"gauss:300\"\n\
         [steps.n]\nkind = \"synthesize\"\nmodel = \"g\"\nquantities = [\"value\"]\ntime = nan\n"
    );
    let err = load(tmp.path(), &steps).unwrap_err();
    assert!(
        err.contains("steps.m.time: 2030.5 given, but model 'f' has no secular variation"),
        "{err}"
    );
    assert!(
        err.contains("steps.r.time: 2031 given, but model 'f' has no secular variation"),
        "{err}"
    );
    assert!(
        err.contains("steps.n.time: must be a finite decimal year"),
        "{err}"
    );
    // a filter of a fit without epoch has none either
    let steps = format!(
        "{FIT}[steps.g]\nkind = \"filter\"\nmodel = \"f\"\nfilter = \"gauss:300\"\n\
         [steps.m]\nkind = \"synthesize\"\nmodel = \"g\"\nquantities = [\"value\"]\ntime = 2030.5\n"
    );
    let err = load(tmp.path(), &steps).unwrap_err();
    assert!(err.contains("model 'g' has no secular variation"), "{err}");
    // a fit with an epoch has rates: the time passes the check
    let steps = "[steps.f]\nkind = \"fit\"\ninput = \"pts\"\nlmax = 4\nepoch = 2030.0\n\
                 [steps.m]\nkind = \"synthesize\"\nmodel = \"f\"\nquantities = [\"value\"]\ntime = 2030.5\n";
    load(tmp.path(), steps).unwrap();
}

#[test]
fn evaluate_and_synthesize_take_a_model_input_at_its_time() {
    use kugel::coeffs::{Coefficients, Normalization};
    use kugel::io::provenance::Provenance;
    use kugel::pipeline::run::{run_job, RunOptions};
    use kugel::progress::Silent;

    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    // a degree-1 magnetic model with rates: g10 = −100 nT + 10 nT/yr about 2020
    let mut model = Coefficients::zeros(1, Normalization::Schmidt);
    model.set(1, 0, -100.0, 0.0);
    model.reference_radius_m = 1_950_000.0;
    model.units = "nT".into();
    let mut rates = Coefficients::zeros(1, Normalization::Schmidt);
    rates.set(1, 0, 10.0, 0.0);
    model.set_secular(2020.0, rates).unwrap();
    kugel::io::model::write_model(&dir.join("sv.nc"), &model, &Provenance::default()).unwrap();
    let mut still = model.clone();
    still.clear_secular();
    kugel::io::model::write_model(&dir.join("still.nc"), &still, &Provenance::default()).unwrap();
    // Z at the north pole on the reference sphere: Z = −B_r = −2·g10 (axial dipole, r = a;
    // common practice), so −2·(−100 + 10·2.5) = 150 nT at 2022.5
    std::fs::write(dir.join("pole.csv"), "lat,lon,quantity,value\n90,0,z,150\n").unwrap();
    let config = |model_file: &str| {
        format!(
            "[body]\nradius_m = 1950000.0\n[output]\nfolder = \"out\"\nformats = [\"csv\", \"netcdf\"]\n\
             [inputs.sv]\nkind = \"model\"\npath = \"{model_file}\"\n\
             [inputs.pole]\nkind = \"points\"\npath = \"pole.csv\"\n\
             [steps.r]\nkind = \"evaluate\"\nmodel = \"sv\"\npoints = \"pole\"\ntime = 2022.5\n\
             [steps.m]\nkind = \"synthesize\"\nmodel = \"sv\"\nquantities = [\"z\"]\ntime = 2022.5\n"
        )
    };
    std::fs::write(dir.join("job.toml"), config("sv.nc")).unwrap();
    let job = Job::load(&dir.join("job.toml")).unwrap();
    let options = RunOptions {
        quiet: true,
        ..Default::default()
    };
    let summary = run_job(&job, &options, &Silent).unwrap();
    let r = summary.steps.iter().find(|s| s.name == "r").unwrap();
    let rms: f64 = r.numbers[0]
        .1
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(rms < 1e-9, "residual at the pole {rms} nT");
    // the same file without rates: refused when the step runs, naming the step and the model
    std::fs::write(dir.join("job.toml"), config("still.nc")).unwrap();
    let job = Job::load(&dir.join("job.toml")).unwrap();
    let err = run_job(&job, &options, &Silent).unwrap_err().to_string();
    assert!(
        err.contains("time: 2022.5 given, but model 'sv' has no secular variation"),
        "{err}"
    );
    assert!(
        err.contains("step 'm'") || err.contains("step 'r'"),
        "{err}"
    );
}
