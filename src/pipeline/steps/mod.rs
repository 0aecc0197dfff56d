//! One function per step kind. Each reads the products it names, calls the library module
//! that owns the science, writes its files into the staging folder and says what it made.

mod field;
mod models;
mod observe;
mod regional;
mod spectra;

use std::collections::BTreeMap;
use std::path::Path;

use super::config::Step;
use super::job::Job;
use super::products::{Points, Product};
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;
use crate::report::html::Block;

/// The report section a block belongs in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum ReportPart {
    Inputs,
    Models,
    Spectra,
    Comparisons,
    Maps,
    Residuals,
}

/// What a step read and may write to.
pub struct StepEnv<'a> {
    pub job: &'a Job,
    pub staging_dir: &'a Path,
    pub provenance: &'a Provenance,
    pub products: &'a BTreeMap<String, Product>,
    pub quiet: bool,
}

impl StepEnv<'_> {
    fn product(&self, name: &str) -> Result<&Product> {
        self.products.get(name).ok_or_else(|| {
            Error::invalid(format!(
                "product '{name}' has not been made (run order bug)"
            ))
        })
    }
    fn model(&self, name: &str) -> Result<&crate::coeffs::Coefficients> {
        self.product(name)?
            .as_model()
            .ok_or_else(|| Error::invalid(format!("'{name}' is not a model")))
    }
    fn points(&self, name: &str) -> Result<&Points> {
        self.product(name)?
            .as_points()
            .ok_or_else(|| Error::invalid(format!("'{name}' is not a point set")))
    }
    /// Provenance of one output: the run's, plus degree, normalisation and filter.
    fn provenance_for(&self, lmax: Option<usize>, filter: Option<String>) -> Provenance {
        let mut p = self.provenance.clone();
        p.lmax = lmax;
        p.normalization = lmax.map(|_| "geodesy".to_string());
        p.filter = filter;
        p
    }
}

/// What a step made.
#[derive(Debug, Default)]
pub struct StepOutcome {
    pub product: Option<Product>,
    /// (file name in the staging folder, what it holds)
    pub files: Vec<(String, String)>,
    /// Key numbers for the summary table, (label, value).
    pub numbers: Vec<(String, String)>,
    pub report: Vec<(ReportPart, Block)>,
    /// Cautions that apply to what this step wrote.
    pub cautions: Vec<String>,
}

/// Runs one step.
pub fn run_step(name: &str, step: &Step, env: &StepEnv) -> Result<StepOutcome> {
    match step {
        Step::Grid(s) => observe::grid(name, s, env),
        Step::Fit(s) => observe::fit(name, s, env),
        Step::Analyze(s) => models::analyze(name, s, env),
        Step::Filter(s) => models::filter(name, s, env),
        Step::Spectrum(s) => spectra::spectrum(name, s, env),
        Step::Compare(s) => spectra::compare(name, s, env),
        Step::Synthesize(s) => field::synthesize(name, s, env),
        Step::Evaluate(s) => field::evaluate(name, s, env),
        Step::Tapers(s) => regional::tapers(name, s, env),
        Step::RegionalSpectrum(s) => regional::spectrum(name, s, env),
        Step::RegionalCompare(s) => regional::compare(name, s, env),
    }
}
