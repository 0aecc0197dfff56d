//! A checked job: the config, where its files are, what each product is, the run order and the
//! memory estimate. Built by [`Job::load`], which checks the whole config before any work.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use super::config::{Config, Input, InputKind, Step, StepKind, OUTPUT_FORMATS};
use super::input_spec::PointsInput;
use super::step_spec::FitStep;
use super::{dag, estimate, file_names, schema, suggest};
use crate::error::{Error, Result};
use crate::observe::points::{BadRowPolicy, ColumnNames, PointReadOptions};

/// What a named product holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ProductKind {
    Points,
    Grid,
    Model,
    Spectrum,
    Comparison,
    Maps,
    Residuals,
    Windows,
    LocalisedSpectrum,
    LocalisedComparison,
}

impl ProductKind {
    pub fn name(self) -> &'static str {
        match self {
            ProductKind::Points => "point set",
            ProductKind::Grid => "grid",
            ProductKind::Model => "coefficient model",
            ProductKind::Spectrum => "spectrum",
            ProductKind::Comparison => "comparison",
            ProductKind::Maps => "maps",
            ProductKind::Residuals => "residuals",
            ProductKind::Windows => "window family",
            ProductKind::LocalisedSpectrum => "localised spectrum",
            ProductKind::LocalisedComparison => "localised comparison",
        }
    }
}

/// Highest band limit the pipeline accepts (the transforms are built for degree 10,800).
pub const MAX_DEGREE: usize = 10_800;

/// The validated job.
#[derive(Debug, Clone)]
pub struct Job {
    pub config: Config,
    pub config_path: PathBuf,
    /// The config file's folder: relative paths in the config start here.
    pub base_dir: PathBuf,
    pub output_dir: PathBuf,
    /// SHA-256 of the config file's bytes, hex.
    pub config_sha256: String,
    pub kinds: BTreeMap<String, ProductKind>,
    /// Products level by level (see `dag::levels`).
    pub levels: Vec<Vec<String>>,
    /// Band limit of every model product, known before running.
    pub model_lmax: BTreeMap<String, usize>,
    pub memory: estimate::MemoryEstimate,
}

impl Job {
    /// Reads and checks the config at `path`. All problems found are reported together, each
    /// prefixed with its TOML path. Nothing is read but the config, the existence of files and,
    /// for the memory estimate, the line count of point files.
    pub fn load(path: &Path) -> Result<Job> {
        let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
        let text = String::from_utf8(bytes.clone())
            .map_err(|_| Error::format(path, "the config is not UTF-8 text"))?;
        let value: toml::Value = text
            .parse()
            .map_err(|e: toml::de::Error| Error::format(path, format!("not valid TOML: {e}")))?;
        let problems = schema::check_keys(&value);
        if !problems.is_empty() {
            return Err(problem_list(path, &problems));
        }
        // typed parse from the text (not the value) so that type errors carry line numbers
        let config: Config =
            toml::from_str(&text).map_err(|e| Error::format(path, format!("config: {e}")))?;
        let base_dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
        let base_dir = if base_dir.as_os_str().is_empty() {
            PathBuf::from(".")
        } else {
            base_dir
        };
        let mut problems = Vec::new();
        check_body_and_output(&config, &mut problems);
        let mut kinds = BTreeMap::new();
        let mut deps = dag::Dependencies::new();
        for (name, input) in &config.inputs {
            check_input(name, input, &base_dir, &mut problems);
            kinds.insert(name.clone(), input_product(input.kind()));
            deps.insert(name.clone(), Vec::new());
        }
        for name in config.inputs.keys() {
            if let Err(e) = file_names::check_plain_name(name) {
                problems.push(format!("inputs.{name}: {e}"));
            }
        }
        for (name, step) in &config.steps {
            if let Err(e) = file_names::check_plain_name(name) {
                problems.push(format!("steps.{name}: {e}"));
            }
            if config.inputs.contains_key(name) {
                problems.push(format!(
                    "steps.{name}: an input has the same name; rename one"
                ));
            }
            kinds.insert(name.clone(), step_product(step.kind()));
            deps.insert(
                name.clone(),
                step.uses().into_iter().map(String::from).collect(),
            );
        }
        for (name, step) in &config.steps {
            check_step(name, step, &kinds, &base_dir, &mut problems);
        }
        check_times(&config, &mut problems);
        check_file_names(&config, &mut problems);
        check_output_folder(&config, &base_dir, &mut problems);
        let levels = match dag::levels(&deps) {
            Ok(l) => l,
            Err(e) => {
                problems.push(format!("steps: {e}"));
                Vec::new()
            }
        };
        if !problems.is_empty() {
            return Err(problem_list(path, &problems));
        }
        let model_lmax = model_degrees(&config, &levels);
        let mut known_lmax = model_lmax.clone();
        for (name, input) in &config.inputs {
            if let Input::Model(m) = input {
                let model_path = base_dir.join(&m.path);
                if crate::io::model::has_netcdf_magic(&model_path).unwrap_or(false) {
                    if let Some(l) = crate::io::model::netcdf::declared_lmax(&model_path) {
                        known_lmax.insert(name.clone(), l);
                    }
                } else if model_path.is_file() {
                    // A text table declares no size up front: it is read whole now, as the run
                    // would read it, so its band limit and its rows are checked before any work.
                    match crate::io::model::read_model(&model_path) {
                        Ok(model) => {
                            known_lmax.insert(name.clone(), model.lmax());
                        }
                        Err(e) => problems.push(format!("inputs.{name}.path: {e}")),
                    }
                }
            }
        }
        // A filter keeps its model's band limit, also when that model is an input.
        for name in levels.iter().flatten() {
            if let Some(Step::Filter(s)) = config.steps.get(name) {
                if let Some(&l) = known_lmax.get(&s.model) {
                    known_lmax.entry(name.clone()).or_insert(l);
                }
            }
        }
        check_fit_ranges(&config, &known_lmax, &mut problems);
        check_window_degrees(&config, &known_lmax, &mut problems);
        for (name, input) in &config.inputs {
            if let Input::Points(p) = input {
                check_point_columns(name, p, &base_dir, &mut problems);
            }
        }
        if !problems.is_empty() {
            return Err(problem_list(path, &problems));
        }
        let mut point_counts = BTreeMap::new();
        for (name, input) in &config.inputs {
            if let Input::Points(p) = input {
                let count = estimate::point_count_bound(&base_dir.join(&p.path))?;
                point_counts.insert(name.clone(), count);
            }
        }
        let memory = estimate::estimate(&config, &model_lmax, &point_counts)?;
        let output_dir = base_dir.join(&config.output.folder);
        Ok(Job {
            config_sha256: sha256_hex(text.as_bytes()),
            config,
            config_path: path.to_path_buf(),
            base_dir,
            output_dir,
            kinds,
            levels,
            model_lmax,
            memory,
        })
    }

    /// An input's path resolved against the config's folder.
    pub fn input_path(&self, name: &str) -> Option<PathBuf> {
        self.config
            .inputs
            .get(name)
            .map(|i| self.base_dir.join(i.path()))
    }

    /// Steps in run order (inputs left out).
    pub fn step_order(&self) -> Vec<&str> {
        self.levels
            .iter()
            .flatten()
            .filter(|n| self.config.steps.contains_key(n.as_str()))
            .map(String::as_str)
            .collect()
    }

    /// The plan printed by `--dry-run` and, with `--verbose`, before a run.
    pub fn describe(&self) -> String {
        let mut s = String::new();
        let title = self.config.job.title.as_deref().unwrap_or("(untitled job)");
        let _ = writeln!(s, "job: {title}");
        let _ = writeln!(
            s,
            "config: {} (sha256 {})",
            self.config_path.display(),
            &self.config_sha256[..16]
        );
        let _ = writeln!(s, "output folder: {}", self.output_dir.display());
        let _ = writeln!(s, "inputs:");
        for (name, input) in &self.config.inputs {
            let _ = writeln!(
                s,
                "  {name:<18} {:<7} {}",
                input.kind().name(),
                self.base_dir.join(input.path()).display()
            );
        }
        let _ = writeln!(
            s,
            "steps, in run order (one line per level; a level's steps are independent):"
        );
        let mut n = 0;
        for level in &self.levels {
            let steps: Vec<&String> = level
                .iter()
                .filter(|p| self.config.steps.contains_key(p.as_str()))
                .collect();
            for name in steps {
                n += 1;
                let step = &self.config.steps[name.as_str()];
                let _ = writeln!(
                    s,
                    "  {n:>2}. {name:<18} {:<10} {}",
                    step.kind().name(),
                    step_summary(step)
                );
            }
        }
        let _ = write!(s, "{}", self.memory.describe());
        s
    }
}

fn problem_list(path: &Path, problems: &[String]) -> Error {
    let noun = if problems.len() == 1 {
        "problem"
    } else {
        "problems"
    };
    let mut message = format!("{} {noun} in the config:", problems.len());
    for p in problems {
        message.push_str("\n  ");
        message.push_str(p);
    }
    Error::format(path, message)
}

pub(crate) fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn input_product(kind: InputKind) -> ProductKind {
    match kind {
        InputKind::Points => ProductKind::Points,
        InputKind::Grid => ProductKind::Grid,
        InputKind::Model => ProductKind::Model,
    }
}

fn step_product(kind: StepKind) -> ProductKind {
    match kind {
        StepKind::Grid | StepKind::Fit | StepKind::Analyze | StepKind::Filter => ProductKind::Model,
        StepKind::Spectrum => ProductKind::Spectrum,
        StepKind::Compare => ProductKind::Comparison,
        StepKind::Synthesize => ProductKind::Maps,
        StepKind::Evaluate => ProductKind::Residuals,
        StepKind::Tapers => ProductKind::Windows,
        StepKind::RegionalSpectrum => ProductKind::LocalisedSpectrum,
        StepKind::RegionalCompare => ProductKind::LocalisedComparison,
    }
}

/// One line of the plan: what the step uses and its main settings.
fn step_summary(step: &Step) -> String {
    let mut parts = vec![format!("uses {}", step.uses().join(", "))];
    if let Some(l) = step.lmax() {
        parts.push(format!("lmax {l}"));
    }
    match step {
        Step::Fit(s) => parts.push(format!("regularization {}", s.regularization_spec())),
        Step::Filter(s) => parts.push(format!("filter {}", s.filter)),
        Step::Synthesize(s) => {
            parts.push(s.quantities.join(", "));
            if let Some(f) = &s.filter {
                parts.push(format!("filter {f}"));
            }
            if let Some(h) = s.altitude_km {
                parts.push(format!("altitude {h} km"));
            }
            if let Some(t) = s.time {
                parts.push(format!("at {t}"));
            }
        }
        Step::Evaluate(s) => {
            if let Some(t) = s.time {
                parts.push(format!("at {t}"));
            }
        }
        Step::Tapers(s) => parts.push(format!("{}, windows of degree {}", s.region, s.window_lmax)),
        Step::RegionalSpectrum(s) => {
            parts.push(format!("{}, windows of degree {}", s.region, s.window_lmax))
        }
        Step::RegionalCompare(s) => {
            parts.push(format!("{}, windows of degree {}", s.region, s.window_lmax))
        }
        Step::Grid(_) | Step::Analyze(_) | Step::Spectrum(_) | Step::Compare(_) => {}
    }
    parts.join("; ")
}

fn check_body_and_output(config: &Config, problems: &mut Vec<String>) {
    let r = config.body.radius_m;
    if !(r.is_finite() && r > 0.0) {
        problems.push(format!(
            "body.radius_m: must be a positive number of metres, not {r}"
        ));
    }
    if let Some(gm) = config.body.gm_m3_s2 {
        if !(gm.is_finite() && gm > 0.0) {
            problems.push(format!("body.gm_m3_s2: must be positive, not {gm}"));
        }
    }
    for f in config.output.formats.iter().flatten() {
        if !OUTPUT_FORMATS.contains(&f.as_str()) {
            problems.push(format!(
                "output.formats: unknown format '{f}'{}",
                suggest::hint(f, OUTPUT_FORMATS)
            ));
        }
    }
    if let Some(c) = &config.output.lon_convention {
        if c != "0-360" && c != "-180-180" {
            problems.push(format!(
                "output.lon_convention: '{c}'; expected \"0-360\" or \"-180-180\""
            ));
        }
    }
}

/// Refuses two steps that would write a file of the same name (e.g. a fit `x`, writing
/// `x_model.nc`, beside a fit `x_model`), and a step file named like the run report. Names
/// are compared ignoring case, since the output folder may be on a file system that does.
fn check_file_names(config: &Config, problems: &mut Vec<String>) {
    let mut writer: BTreeMap<String, (String, &str)> = BTreeMap::new();
    writer.insert(
        "report.html".into(),
        ("report.html".into(), "the run report"),
    );
    for (name, step) in &config.steps {
        for file in file_names::planned_files(name, step, &config.output) {
            let key = file.to_lowercase();
            match writer.get(&key) {
                Some((other_file, other)) => problems.push(format!(
                    "steps.{name}: would write {file}, as {other} writes {other_file}; rename the step"
                )),
                None => {
                    writer.insert(key, (file, name));
                }
            }
        }
    }
}

/// The output folder must be a folder (or not exist yet) and must not hold any input: the run
/// replaces files inside it.
fn check_output_folder(config: &Config, base: &Path, problems: &mut Vec<String>) {
    let out = base.join(&config.output.folder);
    let kind = crate::io::atomic::TargetKind::of(&out);
    use crate::io::atomic::TargetKind as K;
    match kind {
        K::Absent | K::Directory => {}
        K::SymbolicLink if out.is_dir() => {}
        other => {
            problems.push(format!(
                "output.folder: {} is {}, not a folder",
                out.display(),
                other.describe()
            ));
            return;
        }
    }
    let Some(out_canonical) = canonical_folder(&out) else {
        return;
    };
    for (name, input) in &config.inputs {
        let path = base.join(input.path());
        let Ok(input_canonical) = path.canonicalize() else {
            continue;
        };
        if input_canonical.starts_with(&out_canonical) {
            problems.push(format!(
                "output.folder: {} holds the input '{name}' ({}); choose another folder so inputs are never overwritten",
                out.display(),
                path.display()
            ));
        }
    }
}

/// The canonical form of a folder that may not exist yet: its nearest existing ancestor,
/// canonicalised, joined with the rest.
fn canonical_folder(path: &Path) -> Option<PathBuf> {
    let mut rest = Vec::new();
    let mut p = path.to_path_buf();
    loop {
        if let Ok(c) = p.canonicalize() {
            return Some(
                rest.iter()
                    .rev()
                    .fold(c, |acc: PathBuf, part| acc.join(part)),
            );
        }
        rest.push(p.file_name()?.to_os_string());
        p = p.parent()?.to_path_buf();
        if p.as_os_str().is_empty() {
            p = PathBuf::from(".");
        }
    }
}

/// A spectrum's `fit_range` must lie within the band limit of its model, when that is known
/// before the run (model steps, NetCDF model inputs from their header, text-table model inputs
/// read whole during the checks).
fn check_fit_ranges(
    config: &Config,
    model_lmax: &BTreeMap<String, usize>,
    problems: &mut Vec<String>,
) {
    for (name, step) in &config.steps {
        if let Step::Spectrum(s) = step {
            if let (Some([_, b]), Some(&l)) = (s.fit_range, model_lmax.get(&s.model)) {
                if b > l {
                    problems.push(format!(
                        "steps.{name}.fit_range: ends at degree {b}, beyond the band limit {l} of model '{}'",
                        s.model
                    ));
                }
            }
        }
    }
}

/// Window degrees of regional steps below the degree of every model known before the run.
fn check_window_degrees(
    config: &Config,
    model_lmax: &BTreeMap<String, usize>,
    problems: &mut Vec<String>,
) {
    for (name, step) in &config.steps {
        let (lw, models) = match step {
            Step::RegionalSpectrum(s) => (s.window_lmax, vec![&s.model]),
            Step::RegionalCompare(s) => (s.window_lmax, s.models.iter().collect()),
            _ => continue,
        };
        for m in models {
            if let Some(&l) = model_lmax.get(m.as_str()) {
                if lw >= l {
                    problems.push(format!(
                        "steps.{name}.window_lmax: {lw} must be below the degree {l} of model '{m}' (LW < L)"
                    ));
                }
            }
        }
    }
}

/// The columns a CSV point input names must be in its header (read now, as the run would).
fn check_point_columns(name: &str, input: &PointsInput, base: &Path, problems: &mut Vec<String>) {
    let path = base.join(&input.path);
    match crate::observe::points::has_netcdf_signature(&path) {
        Ok(false) => {}
        _ => return,
    }
    let options = point_read_options(name, input);
    if let Err(e) = crate::observe::points::csv::read_csv_records(&path, &options) {
        problems.push(format!("inputs.{name}.columns: {e}"));
    }
}

/// How the run reads a point input: its column names, bad-row policy, and hints that name the
/// config keys.
pub(crate) fn point_read_options(name: &str, input: &PointsInput) -> PointReadOptions {
    let mut columns = ColumnNames::default();
    if let Some(c) = &input.columns {
        for (slot, given) in [
            (&mut columns.lat, &c.lat),
            (&mut columns.lon, &c.lon),
            (&mut columns.value, &c.value),
            (&mut columns.sigma, &c.sigma),
            (&mut columns.quantity, &c.quantity),
            (&mut columns.altitude_km, &c.altitude_km),
            (&mut columns.height_m, &c.height_m),
            (&mut columns.time, &c.time),
        ] {
            if let Some(g) = given {
                *slot = g.clone();
            }
        }
    }
    let on_bad_row = match input.on_bad_row.as_deref() {
        Some("skip") => BadRowPolicy::Skip,
        _ => BadRowPolicy::Error,
    };
    PointReadOptions {
        columns,
        on_bad_row,
        column_hint: Some(format!("inputs.{name}.columns")),
        ..Default::default()
    }
}

fn check_input(name: &str, input: &Input, base: &Path, problems: &mut Vec<String>) {
    let path = base.join(input.path());
    if !path.is_file() {
        problems.push(format!(
            "inputs.{name}.path: no such file: {}",
            path.display()
        ));
    }
    if let Input::Points(p) = input {
        check_choice(
            &format!("inputs.{name}.on_bad_row"),
            p.on_bad_row.as_deref(),
            &["error", "skip"],
            problems,
        );
    }
    let known: &[&str] = match input {
        Input::Points(_) => FIT_QUANTITIES,
        _ => &["value", "potential"],
    };
    check_choice(
        &format!("inputs.{name}.quantity"),
        input.quantity(),
        known,
        problems,
    );
    if let Input::Points(p) = input {
        if let Some(e) = &p.ellipsoid {
            if let Err(e) = crate::field::Ellipsoid::parse(e) {
                problems.push(format!("inputs.{name}.ellipsoid: {e}"));
            }
        }
    }
}

/// Quantities a point input may hold (those a fit takes).
pub const FIT_QUANTITIES: &[&str] = &[
    "value",
    "potential",
    "geoid",
    "gravity-disturbance",
    "gravity-anomaly",
    "radial-gradient",
    "br",
    "btheta",
    "blambda",
    "x",
    "y",
    "z",
    "f",
];

/// Accepted gridding `method` values.
pub const GRID_METHODS: &[&str] = &["kernel", "nearest"];

fn check_choice(path: &str, given: Option<&str>, known: &[&str], problems: &mut Vec<String>) {
    if let Some(g) = given {
        if !known.contains(&g) {
            problems.push(format!(
                "{path}: unknown value '{g}'{}",
                suggest::hint(g, known)
            ));
        }
    }
}

/// Checks of one step's settings beyond their types: the products it names exist and are of
/// the right kind, degrees and numbers lie in range, and specs parse with the parsers the run
/// uses.
fn check_step(
    name: &str,
    step: &Step,
    kinds: &BTreeMap<String, ProductKind>,
    base: &Path,
    problems: &mut Vec<String>,
) {
    let at = |key: &str| format!("steps.{name}.{key}");
    let mut found = Vec::new();
    let mut need = |key: &str, value: &str, want: ProductKind| match kinds.get(value) {
        None => {
            let known: Vec<&str> = kinds.keys().map(String::as_str).collect();
            found.push(format!(
                "{}: no input or step is called '{value}'{}",
                at(key),
                suggest::hint(value, &known)
            ));
        }
        Some(k) if *k != want => found.push(format!(
            "{}: '{value}' is a {}, but a {} is needed",
            at(key),
            k.name(),
            want.name()
        )),
        Some(_) => {}
    };
    use ProductKind as P;
    let pair = match step {
        Step::Compare(s) => Some(&s.models),
        Step::RegionalCompare(s) => Some(&s.models),
        _ => None,
    };
    if let Some(models) = pair {
        match models.as_slice() {
            [a, b] => {
                need("models", a, P::Model);
                need("models", b, P::Model);
            }
            _ => problems.push(format!(
                "{}: expected two model names, e.g. [\"a\", \"b\"]",
                at("models")
            )),
        }
    }
    match step {
        Step::Grid(s) => {
            need("input", &s.input, P::Points);
            check_degree(&at("lmax"), s.lmax, problems);
            check_choice(&at("method"), s.method.as_deref(), GRID_METHODS, problems);
            if let Some(v) = s.radius_km {
                if !(v.is_finite() && v > 0.0) {
                    problems.push(format!(
                        "{}: must be a positive number of km, not {v}",
                        at("radius_km")
                    ));
                }
            }
            if let Some(g) = &s.gaps {
                if let Err(e) = super::checks::check_gaps(g) {
                    problems.push(format!("{}: {e}", at("gaps")));
                }
            }
        }
        Step::Fit(s) => {
            match (&s.input, &s.inputs) {
                (Some(_), Some(_)) => problems.push(format!(
                    "{}: give either input or inputs, not both",
                    at("inputs")
                )),
                (None, None) => problems.push(format!(
                    "{}: missing; this fit step needs input = \"NAME\" or inputs = [\"A\", \"B\"]",
                    at("input")
                )),
                _ => {}
            }
            let names = s.input_names();
            for n in &names {
                need(
                    if s.input.is_some() { "input" } else { "inputs" },
                    n,
                    P::Points,
                );
            }
            if let Some(w) = &s.weights {
                if w.len() != names.len() || w.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
                    problems.push(format!(
                        "{}: {} positive weight factors needed, one per input, got {w:?}",
                        at("weights"),
                        names.len()
                    ));
                }
            }
            if let Some(n) = &s.normal_field {
                if let Err(e) = crate::field::NormalField::parse(n) {
                    problems.push(format!("{}: {e}", at("normal_field")));
                }
            }
            if let Some(r) = &s.robust {
                if let Err(e) = crate::observe::fit::Robust::parse(r) {
                    problems.push(format!("{}: {e}", at("robust")));
                }
            }
            check_degree(&at("lmax"), s.lmax, problems);
            if s.lmax > FitStep::MAX_DEGREE {
                problems.push(format!(
                    "{}: a least-squares fit to degree {} has {} unknowns; fits go to degree {} at most (grid the points instead)",
                    at("lmax"),
                    s.lmax,
                    (s.lmax + 1).pow(2),
                    FitStep::MAX_DEGREE
                ));
            }
            if let Err(e) = super::checks::check_regularization(s.regularization_spec()) {
                problems.push(format!("{}: {e}", at("regularization")));
            }
            if let Err(e) = crate::observe::fit::SolverRequest::parse(s.solver_spec()) {
                problems.push(format!("{}: {e}", at("solver")));
            }
        }
        Step::Analyze(s) => {
            need("input", &s.input, P::Grid);
            check_degree(&at("lmax"), s.lmax, problems);
        }
        Step::Spectrum(s) => {
            need("model", &s.model, P::Model);
            check_confidence(&at("confidence"), s.confidence, problems);
            if let Some([a, b]) = s.fit_range {
                if a < 1 || b <= a {
                    problems.push(format!(
                        "{}: [{a}, {b}] is not a degree range lmin < lmax with lmin ≥ 1",
                        at("fit_range")
                    ));
                }
            }
        }
        Step::Compare(s) => {
            check_confidence(&at("confidence"), s.confidence, problems);
        }
        Step::Filter(s) => {
            need("model", &s.model, P::Model);
            check_filter(&at("filter"), &s.filter, base, problems);
        }
        Step::Synthesize(s) => {
            need("model", &s.model, P::Model);
            if s.quantities.is_empty() {
                problems.push(format!(
                    "{}: empty; list the quantities to map, e.g. [\"gravity-anomaly\"]",
                    at("quantities")
                ));
            }
            for q in &s.quantities {
                if let Err(e) = super::checks::check_quantity(q) {
                    problems.push(format!("{}: {e}", at("quantities")));
                }
            }
            if let Some(l) = s.grid_lmax {
                check_degree(&at("grid_lmax"), l, problems);
            }
            check_altitude(&at("altitude_km"), s.altitude_km, problems);
            if let Some(f) = &s.filter {
                check_filter(&at("filter"), f, base, problems);
            }
        }
        Step::Evaluate(s) => {
            need("model", &s.model, P::Model);
            need("points", &s.points, P::Points);
            if let Some(q) = &s.quantity {
                if let Err(e) = super::checks::check_quantity(q) {
                    problems.push(format!("{}: {e}", at("quantity")));
                }
            }
            check_altitude(&at("altitude_km"), s.altitude_km, problems);
        }
        Step::Tapers(s) => {
            check_region(&at("region"), &s.region, base, problems);
            check_window_degree(&at("window_lmax"), s.window_lmax, problems);
            if s.keep == Some(0) {
                problems.push(format!("{}: must be at least 1", at("keep")));
            }
        }
        Step::RegionalSpectrum(s) => {
            need("model", &s.model, P::Model);
            check_region(&at("region"), &s.region, base, problems);
            check_window_degree(&at("window_lmax"), s.window_lmax, problems);
            if s.tapers == Some(0) {
                problems.push(format!("{}: must be at least 1", at("tapers")));
            }
        }
        Step::RegionalCompare(s) => {
            check_region(&at("region"), &s.region, base, problems);
            check_window_degree(&at("window_lmax"), s.window_lmax, problems);
            if s.tapers == Some(0) {
                problems.push(format!("{}: must be at least 1", at("tapers")));
            }
        }
    }
    problems.extend(found);
}

/// The `time` of synthesize and evaluate steps: a finite decimal year, for a model with
/// secular variation. Whether a step's model has rates is known here for models the job makes
/// (a fit step has them exactly when it has an `epoch`; a filter keeps its model's; grid and
/// analyze steps have none); a model input is checked when the step runs.
fn check_times(config: &Config, problems: &mut Vec<String>) {
    for (name, step) in &config.steps {
        let (model, time) = match step {
            Step::Synthesize(s) => (&s.model, s.time),
            Step::Evaluate(s) => (&s.model, s.time),
            _ => continue,
        };
        let Some(t) = time else { continue };
        if !t.is_finite() {
            problems.push(format!(
                "steps.{name}.time: must be a finite decimal year, not {t}"
            ));
            continue;
        }
        if model_has_rates(config, model, 0) == Some(false) {
            problems.push(format!(
                "steps.{name}.time: {t} given, but model '{model}' has no secular variation \
                 (no dC_dt, dS_dt); a time applies only to a model with rates (a fit step with epoch)"
            ));
        }
    }
}

/// Whether the model product `name` has secular variation, when the config alone tells.
fn model_has_rates(config: &Config, name: &str, depth: usize) -> Option<bool> {
    match config.steps.get(name)? {
        Step::Fit(f) => Some(f.epoch.is_some()),
        Step::Grid(_) | Step::Analyze(_) => Some(false),
        // the dependency graph has no cycles once checked; the depth bound keeps a cyclic
        // config (reported by the graph check) from recursing here
        Step::Filter(f) if depth < 64 => model_has_rates(config, &f.model, depth + 1),
        _ => None,
    }
}

/// A region spec parses and its file, if any, exists (its content is checked when the step runs).
fn check_region(path: &str, spec: &str, base: &Path, problems: &mut Vec<String>) {
    match spec.parse::<crate::regional::RegionSpec>() {
        Err(e) => problems.push(format!("{path}: {e}")),
        Ok(r) => {
            if let Some(file) = r.resolved_against(base).file() {
                if !file.is_file() {
                    problems.push(format!(
                        "{path}: the region file {} does not exist",
                        file.display()
                    ));
                }
            }
        }
    }
}

/// Window degrees: at least 1, and small enough for a dense concentration problem.
fn check_window_degree(path: &str, lw: usize, problems: &mut Vec<String>) {
    if !(1..=crate::regional::concentration::MAX_WINDOW_DEGREE).contains(&lw) {
        problems.push(format!(
            "{path}: {lw} is outside 1..={}",
            crate::regional::concentration::MAX_WINDOW_DEGREE
        ));
    }
}

fn check_degree(path: &str, lmax: usize, problems: &mut Vec<String>) {
    if !(1..=MAX_DEGREE).contains(&lmax) {
        problems.push(format!("{path}: {lmax} is outside 1..={MAX_DEGREE}"));
    }
}

fn check_confidence(path: &str, confidence: Option<f64>, problems: &mut Vec<String>) {
    if let Some(c) = confidence {
        if !(c > 0.0 && c < 1.0) {
            problems.push(format!(
                "{path}: must lie strictly between 0 and 1, not {c}"
            ));
        }
    }
}

fn check_altitude(path: &str, altitude_km: Option<f64>, problems: &mut Vec<String>) {
    if let Some(h) = altitude_km {
        if !h.is_finite() {
            problems.push(format!("{path}: must be a finite number of km, not {h}"));
        }
    }
}

fn check_filter(path: &str, spec: &str, base: &Path, problems: &mut Vec<String>) {
    if let Err(e) = super::checks::check_filter(spec, base) {
        problems.push(format!("{path}: {e}"));
    }
}

/// Band limit of each model product: given for grid, fit and analyze steps, inherited by
/// filters. Model inputs are unknown until read (left out).
fn model_degrees(config: &Config, levels: &[Vec<String>]) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    for name in levels.iter().flatten() {
        let Some(step) = config.steps.get(name) else {
            continue;
        };
        let l = match step {
            Step::Grid(s) => Some(s.lmax),
            Step::Fit(s) => Some(s.lmax),
            Step::Analyze(s) => Some(s.lmax),
            Step::Filter(s) => out.get(&s.model).copied(),
            Step::Spectrum(_)
            | Step::Compare(_)
            | Step::Synthesize(_)
            | Step::Evaluate(_)
            | Step::Tapers(_)
            | Step::RegionalSpectrum(_)
            | Step::RegionalCompare(_) => None,
        };
        if let Some(l) = l {
            out.insert(name.clone(), l);
        }
    }
    out
}
