//! A checked job: the config, where its files are, what each product is, the run order and the
//! memory estimate. Built by [`Job::load`], which checks the whole config before any work.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use super::config::{Config, InputSpec, StepSpec, OUTPUT_FORMATS};
use super::{dag, estimate, schema, suggest};
use crate::error::{Error, Result};

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
    /// prefixed with its TOML path; nothing is read but the config and the existence of files.
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
            kinds.insert(name.clone(), input_kind(&input.kind));
            deps.insert(name.clone(), Vec::new());
        }
        for (name, step) in &config.steps {
            if config.inputs.contains_key(name) {
                problems.push(format!(
                    "steps.{name}: an input has the same name; rename one"
                ));
            }
            kinds.insert(name.clone(), step_product(&step.kind));
            deps.insert(name.clone(), step_uses(step));
        }
        for (name, step) in &config.steps {
            check_step(name, step, &kinds, &base_dir, &mut problems);
        }
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
        let memory = estimate::estimate(&config, &model_lmax);
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
            .map(|i| self.base_dir.join(&i.path))
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
                input.kind,
                self.base_dir.join(&input.path).display()
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
                    step.kind,
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

fn input_kind(kind: &str) -> ProductKind {
    match kind {
        "points" => ProductKind::Points,
        "grid" => ProductKind::Grid,
        _ => ProductKind::Model,
    }
}

fn step_product(kind: &str) -> ProductKind {
    match kind {
        "spectrum" => ProductKind::Spectrum,
        "compare" => ProductKind::Comparison,
        "synthesize" => ProductKind::Maps,
        "evaluate" => ProductKind::Residuals,
        _ => ProductKind::Model,
    }
}

/// Product names a step uses, in the order written.
pub fn step_uses(step: &StepSpec) -> Vec<String> {
    let mut uses: Vec<String> = Vec::new();
    uses.extend(step.input.iter().cloned());
    uses.extend(step.model.iter().cloned());
    uses.extend(step.models.iter().flatten().cloned());
    uses.extend(step.points.iter().cloned());
    uses
}

fn step_summary(step: &StepSpec) -> String {
    let mut parts = vec![format!("uses {}", step_uses(step).join(", "))];
    if let Some(l) = step.lmax {
        parts.push(format!("lmax {l}"));
    }
    if let Some(f) = &step.filter {
        parts.push(format!("filter {f}"));
    }
    if let Some(q) = &step.quantities {
        parts.push(q.join(", "));
    }
    if let Some(r) = &step.regularization {
        parts.push(format!("regularization {r}"));
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

fn check_input(name: &str, input: &InputSpec, base: &Path, problems: &mut Vec<String>) {
    let path = base.join(&input.path);
    if !path.is_file() {
        problems.push(format!(
            "inputs.{name}.path: no such file: {}",
            path.display()
        ));
    }
    check_choice(
        &format!("inputs.{name}.on_bad_row"),
        input.on_bad_row.as_deref(),
        &["error", "skip"],
        problems,
    );
    check_choice(
        &format!("inputs.{name}.quantity"),
        input.quantity.as_deref(),
        &["value", "potential"],
        problems,
    );
}

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

fn check_step(
    name: &str,
    step: &StepSpec,
    kinds: &BTreeMap<String, ProductKind>,
    base: &Path,
    problems: &mut Vec<String>,
) {
    let at = |key: &str| format!("steps.{name}.{key}");
    let mut need = |key: &str, value: Option<&String>, want: &[ProductKind]| match value {
        None => problems.push(format!(
            "{}: missing; this {} step needs it",
            at(key),
            step.kind
        )),
        Some(v) => match kinds.get(v) {
            None => {
                let known: Vec<&str> = kinds.keys().map(String::as_str).collect();
                problems.push(format!(
                    "{}: no input or step is called '{v}'{}",
                    at(key),
                    suggest::hint(v, &known)
                ));
            }
            Some(k) if !want.contains(k) => problems.push(format!(
                "{}: '{v}' is a {}, but a {} is needed",
                at(key),
                k.name(),
                want.iter()
                    .map(|w| w.name())
                    .collect::<Vec<_>>()
                    .join(" or ")
            )),
            Some(_) => {}
        },
    };
    use ProductKind as P;
    match step.kind.as_str() {
        "grid" | "fit" => need("input", step.input.as_ref(), &[P::Points]),
        "analyse" => need("input", step.input.as_ref(), &[P::Grid]),
        "spectrum" | "filter" | "synthesize" => need("model", step.model.as_ref(), &[P::Model]),
        "evaluate" => {
            need("model", step.model.as_ref(), &[P::Model]);
            need("points", step.points.as_ref(), &[P::Points]);
        }
        "compare" => match step.models.as_deref() {
            Some([a, b]) => {
                need("models", Some(a), &[P::Model]);
                need("models", Some(b), &[P::Model]);
            }
            _ => problems.push(format!(
                "{}: expected two model names, e.g. [\"a\", \"b\"]",
                at("models")
            )),
        },
        _ => {}
    }
    let needs_lmax = matches!(step.kind.as_str(), "grid" | "fit" | "analyse");
    match step.lmax {
        None if needs_lmax => problems.push(format!(
            "{}: missing; give the band limit (degree)",
            at("lmax")
        )),
        Some(l) if !(1..=MAX_DEGREE).contains(&l) => {
            problems.push(format!("{}: {l} is outside 1..={MAX_DEGREE}", at("lmax")))
        }
        _ => {}
    }
    if step.kind == "fit" && step.lmax.is_some_and(|l| l > 300) {
        problems.push(format!(
            "{}: a least-squares fit to degree {} has {} unknowns; fits go to degree 300 at most (grid the points instead)",
            at("lmax"),
            step.lmax.unwrap_or(0),
            (step.lmax.unwrap_or(0) + 1).pow(2)
        ));
    }
    if let Some(l) = step.grid_lmax {
        if !(1..=MAX_DEGREE).contains(&l) {
            problems.push(format!(
                "{}: {l} is outside 1..={MAX_DEGREE}",
                at("grid_lmax")
            ));
        }
    }
    check_choice(
        &at("method"),
        step.method.as_deref(),
        GRID_METHODS,
        problems,
    );
    if let Some(g) = &step.gaps {
        if let Err(e) = super::checks::check_gaps(g) {
            problems.push(format!("{}: {e}", at("gaps")));
        }
    }
    if let Some(r) = &step.regularization {
        if let Err(e) = super::checks::check_regularization(r) {
            problems.push(format!("{}: {e}", at("regularization")));
        }
    }
    if let Some(v) = step.radius_km {
        if !(v.is_finite() && v > 0.0) {
            problems.push(format!(
                "{}: must be a positive number of km, not {v}",
                at("radius_km")
            ));
        }
    }
    if let Some(c) = step.confidence {
        if !(c > 0.0 && c < 1.0) {
            problems.push(format!(
                "{}: must lie strictly between 0 and 1, not {c}",
                at("confidence")
            ));
        }
    }
    if let Some([a, b]) = step.fit_range {
        if a < 1 || b <= a {
            problems.push(format!(
                "{}: [{a}, {b}] is not a degree range lmin < lmax with lmin ≥ 1",
                at("fit_range")
            ));
        }
    }
    if let Some(alt) = step.altitude_m {
        if !alt.is_finite() {
            problems.push(format!(
                "{}: must be a finite number of metres",
                at("altitude_m")
            ));
        }
    }
    if step.kind == "synthesize" && step.quantities.as_ref().map_or(true, |q| q.is_empty()) {
        problems.push(format!(
            "{}: missing; list the quantities to map, e.g. [\"gravity-anomaly\"]",
            at("quantities")
        ));
    }
    for q in step.quantities.iter().flatten().chain(step.quantity.iter()) {
        if let Err(e) = super::checks::check_quantity(q) {
            problems.push(format!(
                "{}: {e}",
                at(if step.quantity.as_ref() == Some(q) {
                    "quantity"
                } else {
                    "quantities"
                })
            ));
        }
    }
    if step.kind == "filter" && step.filter.is_none() {
        problems.push(format!(
            "{}: missing; give a filter such as \"gauss:300\"",
            at("filter")
        ));
    }
    if let Some(f) = &step.filter {
        if let Err(e) = super::checks::check_filter(f, base) {
            problems.push(format!("{}: {e}", at("filter")));
        }
    }
}

/// Band limit of each model product: given for grid, fit and analyse steps, inherited by
/// filters. Model inputs are unknown until read (left out).
fn model_degrees(config: &Config, levels: &[Vec<String>]) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    for name in levels.iter().flatten() {
        if let Some(step) = config.steps.get(name) {
            let l = match step.kind.as_str() {
                "grid" | "fit" | "analyse" => step.lmax,
                "filter" => step.model.as_ref().and_then(|m| out.get(m).copied()),
                _ => None,
            };
            if let Some(l) = l {
                out.insert(name.clone(), l);
            }
        }
    }
    out
}
