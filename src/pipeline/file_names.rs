//! Names of the files a step writes, all from one rule so that names never repeat a word:
//!
//! A step's files are named after the step. A file whose content the step name does not already
//! say gets a suffix naming it (`_model`, `_gridded`, `_coverage`, `_residuals`, or the mapped
//! quantity), and the suffix is left out when the step name already ends with it: a fit named
//! `halyard` writes `halyard_model.nc`, one named `topography_model` writes
//! `topography_model.nc`, an evaluation named `halyard_residuals` writes `halyard_residuals.csv`.
//! A step's main file without a suffix (spectra, comparisons, maps) is `NAME.EXT`.

use super::config::OutputSection;
use super::step_spec::Step;
use crate::field::quantity::Quantity;

/// Longest step or input name accepted (file names built from it stay well within the 255
/// bytes most file systems allow).
pub const MAX_NAME_BYTES: usize = 120;

/// The rule for step and input names, which become file names inside the output folder: a
/// plain name of letters, digits, `_`, `-` and `.`, not starting with `.` (no hidden files, no
/// `..`), no path separator, not absolute, at most [`MAX_NAME_BYTES`] bytes. So every file a
/// run writes lands inside the folder the user named.
pub fn check_plain_name(name: &str) -> Result<(), String> {
    if name.is_empty() {
        return Err("a name must not be empty".into());
    }
    if name.len() > MAX_NAME_BYTES {
        return Err(format!(
            "the name is {} bytes long; at most {MAX_NAME_BYTES} are accepted",
            name.len()
        ));
    }
    if name.starts_with('.') {
        return Err(format!(
            "'{name}' starts with '.'; names become file names and must not be hidden or climb out of the output folder"
        ));
    }
    if let Some(c) = name
        .chars()
        .find(|c| !(c.is_alphanumeric() || matches!(c, '_' | '-' | '.')))
    {
        let what = match c {
            '/' | '\\' => "a path separator".to_string(),
            c if c.is_control() => "a control character".to_string(),
            c => format!("'{c}'"),
        };
        return Err(format!(
            "'{}' contains {what}; names become file names inside the output folder, so use letters, digits, '_', '-' and '.' only",
            name.escape_default()
        ));
    }
    Ok(())
}

/// `NAME_SUFFIX.EXT`, or `NAME.EXT` when `suffix` is empty or `NAME` already ends with
/// `_SUFFIX` (or is `SUFFIX`).
pub fn file_name(step: &str, suffix: &str, extension: &str) -> String {
    let already = suffix.is_empty()
        || step == suffix
        || step
            .strip_suffix(suffix)
            .is_some_and(|rest| rest.ends_with('_'));
    if already {
        format!("{step}.{extension}")
    } else {
        format!("{step}_{suffix}.{extension}")
    }
}

/// The files of the step called `name`.
pub struct StepFiles<'a>(pub &'a str);

impl StepFiles<'_> {
    /// Coefficient model of grid, fit, analyze and filter steps.
    pub fn model_nc(&self) -> String {
        file_name(self.0, "model", "nc")
    }
    /// Gridded values, counts and distances of a grid step.
    pub fn gridded_nc(&self) -> String {
        file_name(self.0, "gridded", "nc")
    }
    /// Coverage map of a grid step.
    pub fn coverage_png(&self) -> String {
        file_name(self.0, "coverage", "png")
    }
    /// Degree table of spectrum and compare steps, and the maps file of a synthesis.
    pub fn main(&self, extension: &str) -> String {
        file_name(self.0, "", extension)
    }
    /// One map picture of a synthesis, per variable.
    pub fn map_png(&self, variable: &str) -> String {
        file_name(self.0, variable, "png")
    }
    /// Residual table and map of an evaluate step.
    pub fn residuals(&self, extension: &str) -> String {
        file_name(self.0, "residuals", extension)
    }
}

/// Every file a step will write with these output settings, for the check that no two steps
/// write the same name (quantities that do not parse are left out: the config check reports
/// them).
pub fn planned_files(name: &str, step: &Step, output: &OutputSection) -> Vec<String> {
    let f = StepFiles(name);
    let mut out = Vec::new();
    let mut add = |format: &str, file: String| {
        if format.is_empty() || output.wants(format) {
            out.push(file);
        }
    };
    match step {
        Step::Grid(_) => {
            add("", f.model_nc());
            add("", f.gridded_nc());
            add("png", f.coverage_png());
        }
        Step::Fit(_) | Step::Analyze(_) | Step::Filter(_) => add("", f.model_nc()),
        Step::Tapers(_) => add("", f.main("nc")),
        Step::Spectrum(_)
        | Step::Compare(_)
        | Step::RegionalSpectrum(_)
        | Step::RegionalCompare(_) => {
            add("netcdf", f.main("nc"));
            add("csv", f.main("csv"));
            add("svg", f.main("svg"));
        }
        Step::Synthesize(s) => {
            add("netcdf", f.main("nc"));
            for q in &s.quantities {
                if let Ok(q) = q.parse::<Quantity>() {
                    add("png", f.map_png(&q.variable_name()));
                }
            }
        }
        Step::Evaluate(_) => {
            add("csv", f.residuals("csv"));
            add("png", f.residuals("png"));
        }
    }
    // every CSV travels with its sidecar NAME.csv.json (io::csv_sidecar)
    let sidecars: Vec<String> = out
        .iter()
        .filter(|f| f.ends_with(".csv"))
        .map(|f| format!("{f}.json"))
        .collect();
    out.extend(sidecars);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_stay_plain() {
        for ok in ["halyard", "survey_2019", "a-b.c", "Fläche"] {
            assert!(check_plain_name(ok).is_ok(), "{ok}");
        }
        for (bad, word) in [
            ("../../x", "'.'"),
            ("/tmp/x", "path separator"),
            ("a/b", "path separator"),
            ("a\\b", "path separator"),
            ("..", "'.'"),
            (".hidden", "'.'"),
            ("", "empty"),
            ("a b", "' '"),
            ("tab\there", "control"),
        ] {
            let e = check_plain_name(bad).unwrap_err();
            assert!(e.contains(word), "{bad}: {e}");
        }
        assert!(check_plain_name(&"x".repeat(MAX_NAME_BYTES + 1)).is_err());
    }

    #[test]
    fn suffix_is_never_doubled() {
        assert_eq!(
            file_name("halyard", "residuals", "csv"),
            "halyard_residuals.csv"
        );
        assert_eq!(
            file_name("halyard_residuals", "residuals", "csv"),
            "halyard_residuals.csv"
        );
        assert_eq!(
            file_name("topography_model", "model", "nc"),
            "topography_model.nc"
        );
        assert_eq!(file_name("model", "model", "nc"), "model.nc");
        // only a whole trailing word counts: "supermodel" is not "super" + "_model"
        assert_eq!(
            file_name("supermodel", "model", "nc"),
            "supermodel_model.nc"
        );
        assert_eq!(file_name("maps", "", "nc"), "maps.nc");
    }
}
