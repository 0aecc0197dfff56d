//! Writes the demo data set: truth models, the three campaigns and the topography grid, plus a
//! README that labels them as invented, describes every file and gives the regeneration
//! command.
//!
//! No file carries a time stamp, so regenerating gives byte-identical files.

use std::path::{Path, PathBuf};

use super::scenario::Scenario;
use super::surveys::{sample, Coverage, SurveyDesign};
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

const NOTICE: &str =
    "invented data for the kugel demo: Oressa, Wickline, Halyard and Brindle are not real";

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
    write_demo_with(out, scenario, &SurveyDesign::all(), step)
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
        ("truth_magnetic.nc", &truth.magnetic),
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
            "sampling the {} campaign ({} sites)",
            design.name, design.sites
        ));
        let survey = sample(design, scenario, &truth)?;
        let rows: Vec<Vec<String>> = survey
            .rows
            .iter()
            .map(|r| {
                let mut row = vec![
                    format!("{:.4}", r.site.lat_deg),
                    format!("{:.4}", r.site.lon_deg),
                    format!("{:.3}", r.site.altitude_km),
                ];
                if design.has_component_column() {
                    row.push(r.quantity.name().to_string());
                }
                row.push(format!("{:.4}", r.value));
                row.push(format!("{}", survey.sigma));
                row
            })
            .collect();
        let mut headers = vec!["lat_deg", "lon_deg", "altitude_km"];
        if design.has_component_column() {
            headers.push("component");
        }
        headers.push(design.value_column());
        headers.push(design.sigma_column());
        let path = out.join(format!("{}.csv", design.file_stem));
        write_csv_table(&path, &headers, &rows)?;
        report.files.push(sized(path)?);
    }

    let path = out.join("README.md");
    kugel::io::atomic::write_bytes_atomic(&path, readme(scenario, designs).as_bytes())?;
    report.files.push(sized(path)?);
    Ok(report)
}

fn sized(path: PathBuf) -> Result<(PathBuf, u64)> {
    let len = std::fs::metadata(&path)
        .map_err(|e| Error::io(&path, e))?
        .len();
    Ok((path, len))
}

fn readme(s: &Scenario, designs: &[SurveyDesign]) -> String {
    let mut text = format!(
        "# kugel demo data — invented, not a real body or mission\n\n\
Everything in this folder is **synthetic**. {name} is an invented airless moon of radius \
{r_km:.0} km (GM = {gm:e} m³ s⁻²) with a magnetised crust and no dynamo; {campaigns} are \
invented campaigns. No value here describes a real body, mission or measurement.\n\n\
Regenerate it (byte-identical) with:\n\n    cargo run --release -- make-demo --out demo-data\n\n\
| file | content |\n|---|---|\n\
| `truth_gravity.nc` | the synthetic truth: dimensionless disturbing-potential coefficients to degree {lg} (geodesy normalisation, GM and R in the file), per-coefficient RMS {a:e}·l^−{p} (Kaula-type), degrees 0 and 1 zero. Band-limited at {lg} so that fits to that degree can explain the data |\n\
| `truth_topography.nc` | truth topography coefficients (m) to degree {l}, RMS {ha}·l^−{hq} m, correlated with gravity (to degree {lg}) by ρ_l = {rho}·(1 − e^−(l−1)/{rs}) |\n\
| `truth_magnetic.nc` | truth crustal magnetic field: internal Schmidt semi-normalised Gauss coefficients g, h in nT at the reference radius, degrees 1–{lm}, Lowes–Mauersberger spectrum R_l = {k}·l·(1 − {d_km} km/R)^(2l+4) nT² |\n\
| `topography.nc` | the truth topography synthesised on a Gauss–Legendre grid for degree {l} (CF-1.8 NetCDF-4, float32) |\n",
        name = s.body_name,
        r_km = s.radius_m / 1000.0,
        gm = s.gm_m3_s2,
        campaigns = designs
            .iter()
            .map(|d| format!("*{}*", d.name))
            .collect::<Vec<_>>()
            .join(", "),
        l = s.truth_lmax,
        lg = s.gravity_lmax.min(s.truth_lmax),
        lm = s.magnetic_lmax,
        a = s.kaula_amplitude,
        p = s.kaula_exponent,
        ha = s.topo_amplitude_m,
        hq = s.topo_exponent,
        rho = s.max_correlation,
        rs = s.correlation_scale,
        k = s.magnetic_scale_nt2,
        d_km = s.magnetic_depth_m / 1000.0,
    );
    for d in designs {
        text.push_str(&format!(
            "| `{}.csv` | *{}*: {} |\n",
            d.file_stem,
            d.name,
            describe_campaign(d)
        ));
    }
    text.push_str(&format!(
        "\nColumns of the campaign files (one header row, then one row per observation):\n\n\
- `lat_deg`, `lon_deg`: geocentric latitude and longitude of the site, degrees (longitude 0–360 east);\n\
- `altitude_km`: the site's altitude above the reference sphere of radius {r_km:.0} km (orbit altitude; for \
ground stations the truth topography there, to the metre);\n\
- `component` (magnetic file only): `x` (north), `y` (east) or `z` (down), three rows per site;\n\
- the value: `gravity_disturbance_mgal` δg = −∂T/∂r, `gravity_anomaly_mgal` Δg = −∂T/∂r − 2T/r \
(spherical approximation), or `b_nt` the magnetic component, each the truth evaluated at the site's \
own radius plus Gaussian noise;\n\
- `sigma_mgal` / `sigma_nt`: the standard deviation of that noise (the same for every row of a campaign).\n\n\
Seed: {seed} (ChaCha8); each campaign draws from its own stream, the magnetic truth from another.\n\n\
`configs/demo.toml` runs the whole job on these files: `cargo run --release -- run configs/demo.toml`.\n",
        r_km = s.radius_m / 1000.0,
        seed = s.seed,
    ));
    text
}

/// One line on a campaign for the README table.
fn describe_campaign(d: &SurveyDesign) -> String {
    let what = d
        .quantities
        .iter()
        .map(|q| q.name())
        .collect::<Vec<_>>()
        .join(", ");
    let units = if d.sigma_column() == "sigma_nt" {
        "nT"
    } else {
        "mGal"
    };
    let coverage = match &d.coverage {
        Coverage::Orbit(o) => format!(
            "{} sites along the tracks of an orbit inclined {}° to the equator ({} samples per revolution, no site poleward of ±{}°), at {} ± {} km altitude",
            d.sites,
            o.inclination_deg,
            o.samples_per_revolution,
            o.inclination_deg,
            o.mean_altitude_km,
            o.altitude_swing_km
        ),
        Coverage::Stations(n) => format!(
            "{} ground stations inside the {}° cap about {}° N, {}° E ({:.0}% spread over it, the rest within {}° of {} base camps), at their height on the truth topography",
            d.sites,
            n.radius_deg,
            n.centre_lat_deg,
            n.centre_lon_deg,
            100.0 * n.spread_fraction,
            n.camp_radius_deg,
            n.camps
        ),
    };
    format!(
        "{what} ({units}); {coverage}; noise σ = {} {units}",
        d.noise
    )
}
