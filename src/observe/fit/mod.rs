//! Weighted, regularised least-squares fit of scattered observations straight to
//! spherical-harmonic coefficients up to degree L.
//!
//! Minimises (y − Ax)ᵀ W (y − Ax) + λ xᵀ P x with W = diag(1/σ²) (unit weights without σ),
//! A the design matrix ([`design`]), P diagonal:
//! - `None`: P = 0;
//! - `Damping(λ)`: Tikhonov damping, P = I (Tikhonov 1963, Soviet Math. Dokl. 4:1035);
//! - `Kaula { a, p }`: a prior per-coefficient RMS σ_l = a·l^−p (Kaula 1966, *Theory of Satellite
//!   Geodesy*; degree 0 uses σ_0 = a), P = diag(1/σ_l²), λ = 1 (the Bayesian prior itself);
//! - `Gcv`: P = I with λ from generalised cross-validation ([`gcv`]);
//! - `KaulaGcv { a, p }`: the Kaula prior scaled by a λ chosen by GCV.
//!
//! Posterior covariance C = σ̂₀² (N + λP)⁻¹. **Scaling:** when the points carry σ the formal
//! covariance is reported unscaled (σ̂₀² = 1; judge the σ by χ²/dof); without σ, unit weights
//! mean nothing in absolute terms, so σ̂₀² = χ²/dof, the a-posteriori variance factor.
//! χ²/dof = Σ w r² / (n − tr H), tr H = tr((N + λP)⁻¹N) = u − λ Σ P_ii [(N + λP)⁻¹]_ii.
//!
//! This folder owns the fit: [`design`] (unknowns and design rows), [`normal`] (assembly of
//! the normal equations), [`solve`](mod@solve) (Cholesky solve and posterior variances) and [`gcv`]
//! (choice of λ); this file drives them.

use crate::coeffs::Coefficients;
use crate::error::{Error, Result};

pub mod design;
pub mod gcv;
pub mod normal;
pub mod solve;

use self::design::UnknownLayout;
use self::gcv::GcvSpectrum;
use self::normal::{assemble, predict};
use self::solve::solve;
use crate::observe::gridding::EARTH_MEAN_RADIUS_M;
use crate::observe::points::PointSet;
use crate::observe::spatial::SphereIndex;
use crate::progress::{Progress, Silent};

/// Regularisation of the fit (see the module doc).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Regularization {
    None,
    Damping(f64),
    Kaula { a: f64, p: f64 },
    Gcv,
    KaulaGcv { a: f64, p: f64 },
}

impl Regularization {
    /// Parses `none`, `damping:λ`, `kaula:A,p`, `kaula:A,p:gcv` or `gcv`.
    pub fn parse(spec: &str) -> Result<Regularization> {
        let bad = |why: &str| {
            Error::invalid(format!(
                "--regularization `{spec}`: {why}; expected none, damping:λ, kaula:A,p, kaula:A,p:gcv or gcv"
            ))
        };
        let lower = spec.trim().to_ascii_lowercase();
        let (kind, rest) = lower.split_once(':').unwrap_or((lower.as_str(), ""));
        let number = |t: &str, what: &str| -> Result<f64> {
            t.trim()
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite() && *v > 0.0)
                .ok_or_else(|| bad(&format!("{what} `{t}` is not a positive number")))
        };
        match kind {
            "none" if rest.is_empty() => Ok(Regularization::None),
            "gcv" if rest.is_empty() => Ok(Regularization::Gcv),
            "damping" => Ok(Regularization::Damping(number(rest, "λ")?)),
            "kaula" => {
                let (params, gcv) = match rest.rsplit_once(':') {
                    Some((p, "gcv")) => (p, true),
                    Some(_) => return Err(bad("only `gcv` may follow the Kaula parameters")),
                    None => (rest, false),
                };
                let (a, p) = params
                    .split_once(',')
                    .ok_or_else(|| bad("Kaula needs A,p"))?;
                let a = number(a, "A")?;
                let p = p
                    .trim()
                    .parse::<f64>()
                    .ok()
                    .filter(|v| v.is_finite() && *v >= 0.0)
                    .ok_or_else(|| bad(&format!("exponent p `{p}` is not a number ≥ 0")))?;
                Ok(if gcv {
                    Regularization::KaulaGcv { a, p }
                } else {
                    Regularization::Kaula { a, p }
                })
            }
            _ => Err(bad("unknown form")),
        }
    }

    pub fn describe(&self) -> String {
        match self {
            Regularization::None => "none".into(),
            Regularization::Damping(l) => format!("Tikhonov damping λ = {l:e}"),
            Regularization::Kaula { a, p } => format!("Kaula-type prior RMS {a:e}·l^-{p}"),
            Regularization::Gcv => "Tikhonov damping, λ by GCV".into(),
            Regularization::KaulaGcv { a, p } => {
                format!("Kaula-type prior RMS {a:e}·l^-{p}, scaled by λ from GCV")
            }
        }
    }

    /// Diagonal of P for the unknowns of `layout` (empty for `None`).
    fn prior(&self, layout: &UnknownLayout) -> Vec<f64> {
        match *self {
            Regularization::None => vec![0.0; layout.len()],
            Regularization::Damping(_) | Regularization::Gcv => vec![1.0; layout.len()],
            Regularization::Kaula { a, p } | Regularization::KaulaGcv { a, p } => layout
                .degrees()
                .iter()
                .map(|&l| {
                    let rms = a * (l.max(1) as f64).powf(-p);
                    1.0 / (rms * rms)
                })
                .collect(),
        }
    }
}

/// Options of [`fit`].
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    pub regularization: Regularization,
    /// Reference radius of the model, metres (written as `reference_radius_m`).
    pub body_radius_m: f64,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            regularization: Regularization::None,
            body_radius_m: EARTH_MEAN_RADIUS_M,
        }
    }
}

/// Outcome of a fit.
#[derive(Debug, Clone)]
pub struct FitResult {
    /// Coefficients (`geodesy`, no phase) with C_sigma/S_sigma.
    pub model: Coefficients,
    /// sqrt(mean of r²), unweighted, in the units of the values.
    pub residual_rms: f64,
    /// Σ w r² / (n − tr H).
    pub chi2_per_dof: f64,
    /// Estimated 2-norm condition number of N + λP.
    pub condition_estimate: f64,
    /// λ used (0 for none, 1 for a plain Kaula prior).
    pub lambda: f64,
    /// Effective number of parameters tr H.
    pub effective_parameters: f64,
    /// Whether C_sigma/S_sigma were scaled by the a-posteriori variance factor.
    pub sigmas_scaled: bool,
    /// Residuals y − Ax per point.
    pub residuals: Vec<f64>,
    pub warnings: Vec<String>,
}

/// Bytes the fit needs: N, its regularised copy, L⁻¹ (and the eigenvectors for GCV).
pub fn fit_memory_bytes(lmax: usize, regularization: &Regularization) -> u64 {
    let u = ((lmax + 1) * (lmax + 1)) as u64;
    let matrices = match regularization {
        Regularization::Gcv | Regularization::KaulaGcv { .. } => 5,
        _ => 3,
    };
    matrices * u * u * 8 + u * 512 * 8 * 2
}

/// Fits the points to all coefficients up to `lmax` (no progress output).
pub fn fit(points: &PointSet, lmax: usize, options: &FitOptions) -> Result<FitResult> {
    fit_with_progress(points, lmax, options, &Silent)
}

/// As [`fit`], reporting progress while assembling.
pub fn fit_with_progress(
    points: &PointSet,
    lmax: usize,
    options: &FitOptions,
    progress: &dyn Progress,
) -> Result<FitResult> {
    if points.is_empty() || points.value.len() != points.len() {
        return Err(Error::invalid("the fit needs observations with values"));
    }
    if !(options.body_radius_m.is_finite() && options.body_radius_m > 0.0) {
        return Err(Error::invalid(format!(
            "body radius {} m is not a positive number",
            options.body_radius_m
        )));
    }
    let layout = UnknownLayout::new(lmax);
    let u = layout.len();
    crate::memory::check_fits(
        &format!("the normal matrix of a degree-{lmax} fit ({u} unknowns)"),
        fit_memory_bytes(lmax, &options.regularization),
    )?;
    let mut warnings = coverage_warnings(points, lmax, options.body_radius_m);

    let normals = assemble(points, &layout, progress);
    progress.stage("solving the normal equations", 0);
    let prior = options.regularization.prior(&layout);
    let lambda = match options.regularization {
        Regularization::None => 0.0,
        Regularization::Damping(l) => l,
        Regularization::Kaula { .. } => 1.0,
        Regularization::Gcv | Regularization::KaulaGcv { .. } => {
            let spectrum = GcvSpectrum::new(
                &normals.n,
                &prior,
                &normals.b,
                normals.y_w_y,
                normals.observations,
            );
            spectrum.choose().lambda
        }
    };
    let solution = solve(&normals.n, &prior, lambda, &normals.b)?;

    let predicted = predict(points, &layout, &solution.x);
    let residuals: Vec<f64> = points
        .value
        .iter()
        .zip(&predicted)
        .map(|(y, p)| y - p)
        .collect();
    let n = points.len() as f64;
    let residual_rms = (residuals.iter().map(|r| r * r).sum::<f64>() / n).sqrt();
    let chi2: f64 = residuals
        .iter()
        .enumerate()
        .map(|(i, r)| points.weight(i) * r * r)
        .sum();
    let trace_h = u as f64
        - lambda
            * prior
                .iter()
                .zip(&solution.covariance_diagonal)
                .map(|(p, c)| p * c)
                .sum::<f64>();
    let dof = n - trace_h;
    let chi2_per_dof = if dof > 0.5 { chi2 / dof } else { f64::NAN };
    if dof <= 0.5 {
        warnings.push(format!(
            "no degrees of freedom left ({} observations, {trace_h:.1} effective parameters): χ²/dof is undefined",
            points.len()
        ));
    }
    let sigmas_scaled = points.sigma.is_none();
    let factor = if sigmas_scaled && chi2_per_dof.is_finite() {
        chi2_per_dof
    } else {
        1.0
    };
    let sigma: Vec<f64> = solution
        .covariance_diagonal
        .iter()
        .map(|c| (c.max(0.0) * factor).sqrt())
        .collect();
    if solution.condition_estimate > 1e12 {
        warnings.push(format!(
            "the normal matrix is ill-conditioned (condition ≈ {:.1e}): coefficients and their σ are unreliable; regularise or lower --lmax",
            solution.condition_estimate
        ));
    }
    let mut model = layout.to_coefficients(&solution.x, Some(&sigma));
    model.reference_radius_m = options.body_radius_m;
    model.attributes.insert(
        "fit_regularization".into(),
        options.regularization.describe(),
    );
    model
        .attributes
        .insert("fit_lambda".into(), format!("{lambda:e}"));
    model
        .attributes
        .insert("fit_observations".into(), points.len().to_string());
    model
        .attributes
        .insert("fit_chi2_per_dof".into(), format!("{chi2_per_dof}"));
    model
        .attributes
        .insert("fit_residual_rms".into(), format!("{residual_rms}"));
    model.attributes.insert(
        "fit_sigma_convention".into(),
        if sigmas_scaled {
            "posterior covariance diagonal scaled by the a-posteriori variance factor chi2/dof (no input sigma)".into()
        } else {
            "formal posterior covariance diagonal from the input sigma, unscaled".into()
        },
    );
    Ok(FitResult {
        model,
        residual_rms,
        chi2_per_dof,
        condition_estimate: solution.condition_estimate,
        lambda,
        effective_parameters: trace_h,
        sigmas_scaled,
        residuals,
        warnings,
    })
}

/// Warnings about the data for degree L: fewer observations than unknowns, and the share of
/// the sphere farther than the half-wavelength πR/L from any observation (measured on the
/// Gauss grid of L, area-weighted).
pub fn coverage_warnings(points: &PointSet, lmax: usize, body_radius_m: f64) -> Vec<String> {
    let mut warnings = Vec::new();
    let u = (lmax + 1) * (lmax + 1);
    if points.len() < u {
        warnings.push(format!(
            "under-determined: {} observations for {u} unknowns at L = {lmax}; the fit rests on the regularisation",
            points.len()
        ));
    }
    let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
    let grid = crate::sht::GaussGrid::new(lmax.max(1));
    let half_wavelength = std::f64::consts::PI / lmax.max(1) as f64;
    let (mut gap_area, mut total) = (0.0, 0.0);
    for (j, &theta) in grid.colatitude_rad.iter().enumerate() {
        let (st, ct) = theta.sin_cos();
        for k in 0..grid.nlon {
            let (sl, cl) = grid.longitude_rad(k).sin_cos();
            let d = index.nearest(&[st * cl, st * sl, ct]).angle_rad;
            total += grid.weights[j];
            if d > half_wavelength {
                gap_area += grid.weights[j];
            }
        }
    }
    let share = gap_area / total;
    if share > 0.01 {
        warnings.push(format!(
            "data gaps: {:.1}% of the sphere is farther than the half-wavelength of degree {lmax} ({:.0} km) from any \
             observation; coefficients are poorly determined there",
            100.0 * share,
            half_wavelength * body_radius_m / 1000.0
        ));
    }
    warnings
}
