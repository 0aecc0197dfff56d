//! Writes the demo data set: truth models, the two surveys and the topography grid, plus a
//! README that labels them as invented and gives the regeneration command.
//!
//! No file carries a time stamp, so regenerating gives byte-identical files.

use std::path::{Path, PathBuf};

use super::scenario::Scenario;
use super::surveys::{sample, SurveyDesign};
use kugel::error::{Error, Result};
use kugel::io::csv_table::write_csv_table;
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::sht::{GaussGrid, TransformPlan};

/// What `write_demo` wrote.
#[derive(Debug, Clone, Default)]
pub struct DemoReport {
    /// (path, bytes)
    pub files: Vec<(PathBuf, u64)>,
}

impl DemoReport {
    pub fn total_bytes(&self) -> u64 {
        self.files.iter().map(|f| f.1).sum()
    }
}

const NOTICE: &str = "invented data for the kugel demo: Oressa, Wickline and Halyard are not real";

fn provenance(scenario: &Scenario) -> Provenance {
    Provenance {
        extra: vec![
            ("kugel_generated_by".into(), "kugel make-demo".into()),
            ("kugel_demo_seed".into(), scenario.seed.to_string()),
            ("kugel_notice".into(), NOTICE.into()),
        ],
        ..Default::default()
    }
}

/// Generates the scenario and writes it to `out`. `step` is told the name of each stage as it
/// starts (for progress display).
pub fn write_demo(out: &Path, scenario: &Scenario, step: impl FnMut(&str)) -> Result<DemoReport> {
    write_demo_with(
        out,
        scenario,
        &[SurveyDesign::wickline(), SurveyDesign::halyard()],
        step,
    )
}

/// As [`write_demo`] with other survey designs (smaller data sets for tests).
pub fn write_demo_with(
    out: &Path,
    scenario: &Scenario,
    designs: &[SurveyDesign],
    mut step: impl FnMut(&str),
) -> Result<DemoReport> {
    std::fs::create_dir_all(out).map_err(|e| Error::io(out, e))?;
    let prov = provenance(scenario);
    let mut report = DemoReport::default();
    step("drawing the truth fields");
    let truth = scenario.truth();
    let models = [
        ("truth_gravity.nc", &truth.gravity),
        ("truth_topography.nc", &truth.topography),
    ];
    for (name, model) in models {
        let path = out.join(name);
        write_model(&path, model, &prov)?;
        report.files.push(sized(path)?);
    }

    step("synthesising the topography grid");
    let grid = GaussGrid::new(scenario.truth_lmax);
    let plan = TransformPlan::new(scenario.truth_lmax, &grid)?;
    let topo = plan.synthesise(&truth.topography)?;
    let mut file = GridFile::from_engine_grid(
        &grid,
        format!("{} topography (invented)", scenario.body_name),
    );
    file.push(
        "topography",
        "height above the reference sphere",
        "m",
        None,
        topo,
    );
    file.attributes
        .push(("kugel_body".into(), scenario.body_name.into()));
    file.attributes.push((
        "kugel_reference_radius_m".into(),
        scenario.radius_m.to_string(),
    ));
    let path = out.join("topography.nc");
    let options = GridWriteOptions {
        float32: true,
        lon_convention: LonConvention::ZeroTo360,
        provenance: &prov,
    };
    write_grid(&path, &file, &options)?;
    report.files.push(sized(path)?);

    for design in designs {
        step(&format!(
            "sampling the {} survey ({} sites)",
            design.name, design.points
        ));
        let survey = sample(design, scenario, &truth.gravity)?;
        let rows: Vec<Vec<String>> = (0..survey.lat_deg.len())
            .map(|i| {
                vec![
                    format!("{:.4}", survey.lat_deg[i]),
                    format!("{:.4}", survey.lon_deg[i]),
                    format!("{:.3}", survey.potential_m2_s2[i]),
                    format!("{}", survey.sigma_m2_s2),
                ]
            })
            .collect();
        let path = out.join(format!("{}.csv", design.file_stem));
        write_csv_table(
            &path,
            &["lat_deg", "lon_deg", "potential_m2_s2", "sigma_m2_s2"],
            &rows,
        )?;
        report.files.push(sized(path)?);
    }

    let path = out.join("README.md");
    kugel::io::atomic::write_bytes_atomic(&path, readme(scenario).as_bytes())?;
    report.files.push(sized(path)?);
    Ok(report)
}

fn sized(path: PathBuf) -> Result<(PathBuf, u64)> {
    let len = std::fs::metadata(&path)
        .map_err(|e| Error::io(&path, e))?
        .len();
    Ok((path, len))
}

fn readme(s: &Scenario) -> String {
    let (w, h) = (SurveyDesign::wickline(), SurveyDesign::halyard());
    format!(
        "# kugel demo data — invented, not a real body or mission\n\n\
Everything in this folder is **synthetic**. {name} is an invented airless moon of radius \
{r_km:.0} km (GM = {gm:e} m³ s⁻²); *{wn}* and *{hn}* are invented gravity campaigns. No value \
here describes a real body, mission or measurement.\n\n\
Regenerate it (byte-identical) with:\n\n    cargo run --release -- make-demo --out demo-data\n\n\
| file | content |\n|---|---|\n\
| `truth_gravity.nc` | the synthetic truth: dimensionless disturbing-potential coefficients to degree {l} (geodesy normalisation), per-coefficient RMS {a:e}·l^−{p} (Kaula-type) |\n\
| `truth_topography.nc` | truth topography coefficients (m) to degree {l}, RMS {ha}·l^−{hq} m, correlated with gravity by ρ_l = {rho}·(1 − e^−(l−1)/{rs}) |\n\
| `topography.nc` | the truth topography synthesised on a Gauss–Legendre grid for degree {l} (CF-1.8 NetCDF-4, float32) |\n\
| `{wf}.csv` | *{wn}* (early): {wp} sites within ±{wl}° latitude (polar gap), disturbing potential on the reference sphere, noise σ = {ws} m² s⁻² |\n\
| `{hf}.csv` | *{hn}* (later): {hp} sites, global, noise σ = {hs} m² s⁻² |\n\n\
Survey columns: `lat_deg`, `lon_deg` (geocentric, degrees), `potential_m2_s2` (disturbing \
potential T = GM/R·Σ C̄_lm Y_lm plus noise), `sigma_m2_s2` (the noise standard deviation). \
Seed: {seed} (ChaCha8).\n\n\
`configs/demo.toml` runs the whole job on these files: `cargo run --release -- run configs/demo.toml`.\n",
        name = s.body_name,
        r_km = s.radius_m / 1000.0,
        gm = s.gm_m3_s2,
        wn = w.name,
        hn = h.name,
        l = s.truth_lmax,
        a = s.kaula_amplitude,
        p = s.kaula_exponent,
        ha = s.topo_amplitude_m,
        hq = s.topo_exponent,
        rho = s.max_correlation,
        rs = s.correlation_scale,
        wf = w.file_stem,
        wp = w.points,
        wl = w.max_abs_lat_deg,
        ws = w.noise_m2_s2,
        hf = h.file_stem,
        hp = h.points,
        hs = h.noise_m2_s2,
        seed = s.seed,
    )
}
