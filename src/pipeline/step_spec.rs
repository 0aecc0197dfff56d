//! The steps of a job, one settings struct per kind with exactly the keys that kind accepts.
//! The key check (`schema.rs`) reads each kind's keys from these structs, so a key is added or
//! renamed here and nowhere else.

use serde::Deserialize;

use super::kinds::config_kinds;

config_kinds! {
    /// A named step, `[steps.NAME]` with `kind = "…"`.
    pub enum Step / StepKind {
        /// Scattered points gridded onto a Gauss grid and analysed to coefficients.
        Grid = "grid" => GridStep,
        /// Points fitted to coefficients by least squares.
        Fit = "fit" => FitStep,
        /// A grid analysed to coefficients.
        Analyze = "analyze" => AnalyzeStep,
        /// Degree-variance spectrum of a model.
        Spectrum = "spectrum" => SpectrumStep,
        /// Two models compared degree by degree.
        Compare = "compare" => CompareStep,
        /// A model filtered in the degree domain.
        Filter = "filter" => FilterStep,
        /// Quantities of a model mapped on a Gauss grid.
        Synthesize = "synthesize" => SynthesizeStep,
        /// A model evaluated at the observation points (residuals observed − model).
        Evaluate = "evaluate" => EvaluateStep,
        /// Band-limited windows concentrated in a region (spatio-spectral tapers).
        Tapers = "tapers" => TapersStep,
        /// Localised (multitaper) degree variance of a model inside a region.
        RegionalSpectrum = "regional_spectrum" => RegionalSpectrumStep,
        /// Two models compared inside a region: localised cross-power, correlation, admittance.
        RegionalCompare = "regional_compare" => RegionalCompareStep,
    }
}

#[derive(Debug, Clone, Deserialize)]
pub struct GridStep {
    /// The point set to grid.
    pub input: String,
    /// Band limit of the Gauss grid and of the model.
    pub lmax: usize,
    /// "kernel" (default) or "nearest".
    pub method: Option<String>,
    /// Kernel method: averaging cap radius, km (default πR/L).
    pub radius_km: Option<f64>,
    /// Nearest method: number of neighbours (default 8).
    pub neighbours: Option<usize>,
    /// How empty cells are filled: "nearest" (default), "mean" or "iterative".
    pub gaps: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct FitStep {
    /// The point set to fit (or `inputs` for several).
    pub input: Option<String>,
    /// Several point sets fitted together, each with its own quantity and columns (set on the
    /// input) and weight factor (`weights`).
    pub inputs: Option<Vec<String>>,
    /// Weight factor per input, in the order of `inputs` (default 1 each).
    pub weights: Option<Vec<f64>>,
    /// Internal degrees held at zero, e.g. [0, 1].
    pub fix_degrees: Option<Vec<usize>>,
    /// Normal field taken off potential and radial-gradient observations (grs80, wgs84,
    /// custom:…) and added back to the model.
    pub normal_field: Option<String>,
    /// Magnetic: external-source coefficients to this degree (1 to 3).
    pub external_lmax: Option<usize>,
    /// Magnetic: linear secular variation about this epoch (decimal year); needs times.
    pub epoch: Option<f64>,
    /// Robust reweighting, "huber:C".
    pub robust: Option<String>,
    /// Band limit of the model (at most [`FitStep::MAX_DEGREE`]).
    pub lmax: usize,
    /// "none" (default), "damping:λ", "kaula:A,p", "kaula:A,p:gcv" or "gcv", as in
    /// `kugel fit --regularization`.
    pub regularization: Option<String>,
    /// "auto" (default), "direct" or "iterative", as in `kugel fit --solver`.
    pub solver: Option<String>,
}

impl FitStep {
    /// Highest degree of a least-squares fit; beyond it the (L+1)² unknowns make the normal
    /// matrix too large, and gridding is the tool.
    pub const MAX_DEGREE: usize = 300;

    /// The point sets fitted, in order.
    pub fn input_names(&self) -> Vec<&str> {
        match (&self.input, &self.inputs) {
            (Some(i), _) => vec![i.as_str()],
            (None, Some(list)) => list.iter().map(String::as_str).collect(),
            (None, None) => Vec::new(),
        }
    }

    /// The regularization written, or the default `none`.
    pub fn regularization_spec(&self) -> &str {
        self.regularization.as_deref().unwrap_or("none")
    }

    /// The solver written, or the default `auto`.
    pub fn solver_spec(&self) -> &str {
        self.solver.as_deref().unwrap_or("auto")
    }
}

#[derive(Debug, Clone, Deserialize)]
pub struct AnalyzeStep {
    /// The grid to analyse.
    pub input: String,
    /// Band limit of the model.
    pub lmax: usize,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SpectrumStep {
    /// The model whose spectrum is computed.
    pub model: String,
    /// Confidence level of the intervals (default 0.95).
    pub confidence: Option<f64>,
    /// Degree range [lmin, lmax] of the power-law fit.
    pub fit_range: Option<[usize; 2]>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct CompareStep {
    /// The two models, first against second.
    pub models: Vec<String>,
    /// Confidence level of the intervals (default 0.95).
    pub confidence: Option<f64>,
    /// The models are different quantities (e.g. gravity and topography, for admittance);
    /// compared as given instead of refused for differing units.
    pub cross_quantity: Option<bool>,
    /// Leave degrees below this out (set to zero in both copies); e.g. 2 for disturbing
    /// potentials, whose degrees 0 and 1 vanish by definition but are estimated as noise.
    pub from_degree: Option<usize>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct FilterStep {
    /// The model to filter.
    pub model: String,
    /// Filter spec such as "gauss:300" (several joined by '+').
    pub filter: String,
}

#[derive(Debug, Clone, Deserialize)]
pub struct SynthesizeStep {
    /// The model to map.
    pub model: String,
    /// Quantities to map, e.g. ["gravity-anomaly", "geoid"].
    pub quantities: Vec<String>,
    /// Height above the reference sphere, km (default 0).
    pub altitude_km: Option<f64>,
    /// Filter spec applied before mapping, such as "gauss:300".
    pub filter: Option<String>,
    /// Band limit of the output Gauss grid (default: the model's).
    pub grid_lmax: Option<usize>,
    /// Decimal year at which a model with secular variation is mapped (default: its epoch);
    /// refused for a model without rates.
    pub time: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct EvaluateStep {
    /// The model to evaluate.
    pub model: String,
    /// The point set at which to evaluate (residuals are observed − model).
    pub points: String,
    /// The quantity the points observed, for rows without a `quantity` column (default: the
    /// input's `quantity`, else "value").
    pub quantity: Option<String>,
    /// Height of the points above the reference sphere, km (default 0), for points without
    /// an `altitude_km` or `height_m` column (each row is otherwise evaluated at its own).
    pub altitude_km: Option<f64>,
    /// Decimal year at which a model with secular variation is evaluated (default: its
    /// epoch); refused for a model without rates.
    pub time: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct TapersStep {
    /// "cap:LAT,LON,RADIUS_DEG", "mask:FILE" or "polygon:FILE" (files relative to the config).
    pub region: String,
    /// Bandwidth L_W of the windows.
    pub window_lmax: usize,
    /// Keep only the K best-concentrated windows (default: all (L_W + 1)²).
    pub keep: Option<usize>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct RegionalSpectrumStep {
    /// The model whose localised spectrum is estimated.
    pub model: String,
    /// "cap:LAT,LON,RADIUS_DEG", "mask:FILE" or "polygon:FILE" (files relative to the config).
    pub region: String,
    /// Bandwidth L_W of the windows (below the model's degree).
    pub window_lmax: usize,
    /// Number of windows (default: every window with concentration ≥ 0.99).
    pub tapers: Option<usize>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct RegionalCompareStep {
    /// The two models, first (reference A) against second (B); the admittance is A on B.
    pub models: Vec<String>,
    /// "cap:LAT,LON,RADIUS_DEG", "mask:FILE" or "polygon:FILE" (files relative to the config).
    pub region: String,
    /// Bandwidth L_W of the windows (below both models' degrees).
    pub window_lmax: usize,
    /// Number of windows (default: every window with concentration ≥ 0.99).
    pub tapers: Option<usize>,
    /// Leave degrees below this out of both models, as in `compare`.
    pub from_degree: Option<usize>,
}

impl Step {
    /// Product names the step uses, in the order written.
    pub fn uses(&self) -> Vec<&str> {
        match self {
            Step::Grid(s) => vec![s.input.as_str()],
            Step::Fit(s) => s.input_names(),
            Step::Analyze(s) => vec![s.input.as_str()],
            Step::Spectrum(s) => vec![s.model.as_str()],
            Step::Compare(s) => s.models.iter().map(String::as_str).collect(),
            Step::Filter(s) => vec![s.model.as_str()],
            Step::Synthesize(s) => vec![s.model.as_str()],
            Step::Evaluate(s) => vec![s.model.as_str(), s.points.as_str()],
            Step::Tapers(_) => Vec::new(),
            Step::RegionalSpectrum(s) => vec![s.model.as_str()],
            Step::RegionalCompare(s) => s.models.iter().map(String::as_str).collect(),
        }
    }

    /// The band limit the step's settings give, if any.
    pub fn lmax(&self) -> Option<usize> {
        match self {
            Step::Grid(s) => Some(s.lmax),
            Step::Fit(s) => Some(s.lmax),
            Step::Analyze(s) => Some(s.lmax),
            Step::Spectrum(_)
            | Step::Compare(_)
            | Step::Filter(_)
            | Step::Synthesize(_)
            | Step::Evaluate(_)
            | Step::Tapers(_)
            | Step::RegionalSpectrum(_)
            | Step::RegionalCompare(_) => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_lists_its_keys() {
        // the keys come from the structs: spot-check a few and that no kind is left empty
        assert_eq!(
            StepKind::Fit.keys(),
            [
                "kind",
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
                "solver"
            ]
        );
        assert!(StepKind::Synthesize.keys().contains(&"altitude_km"));
        assert!(!StepKind::Synthesize.keys().contains(&"altitude_m"));
        for k in StepKind::ALL {
            assert!(k.keys().len() >= 2, "{k:?}");
            assert_eq!(StepKind::from_name(k.name()), Some(*k));
        }
        assert_eq!(StepKind::from_name("analyse"), None);
    }
}
