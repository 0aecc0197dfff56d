//! Weighted, regularised least-squares fit of observations of functionals (values, gravity
//! quantities, magnetic components and intensity), each at its own radius and time, straight to
//! spherical-harmonic coefficients up to degree L.
//!
//! Minimises (y − Ax)ᵀ W (y − Ax) + λ xᵀ P x with W = diag(f_d/σ²) (f_d the data set's weight
//! factor; unit weights without σ), A the observation equations ([`functional`]), P diagonal:
//! - `None`: P = 0;
//! - `Damping(λ)`: Tikhonov damping, P = I (Tikhonov 1963, Soviet Math. Dokl. 4:1035);
//! - `Kaula { a, p }`: a prior per-coefficient RMS σ_l = a·l^−p (Kaula 1966, *Theory of Satellite
//!   Geodesy*; degree 0 uses σ_0 = a), P = diag(1/σ_l²), λ = 1 (the Bayesian prior itself);
//! - `Gcv`: P = I with λ from generalised cross-validation ([`gcv`]);
//! - `KaulaGcv { a, p }`: the Kaula prior scaled by a λ chosen by GCV.
//!
//! **Units of the prior.** The prior always refers to the model's own coefficients in the
//! model's own normalisation: dimensionless `geodesy` potential coefficients for gravity
//! quantities (observations are divided by nothing: the rows carry GM/R), Schmidt Gauss
//! coefficients in nT for magnetic ones, `geodesy` coefficients in the data's units for plain
//! values. Rates (secular variation, per year) and external coefficients get the Kaula RMS of
//! their degree as well, so that GCV sees a positive prior everywhere.
//!
//! **Nonlinear and robust fits.** Total intensity F is linearised at the current model and the
//! fit repeated (Gauss–Newton) until the largest change of a coefficient is below
//! [`GAUSS_NEWTON_TOLERANCE`] of the largest coefficient; `--robust huber:C` reweights each
//! row by min(1, C/|r/σ|) (Huber 1981, *Robust Statistics*) and repeats (iteratively
//! reweighted least squares) until no weight changes by more than 1e-6.
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
pub mod functional;
pub mod gcv;
pub mod iterative;
pub mod lane_normal;
pub mod lanes;
pub mod normal;
pub mod observation;
pub mod parameters;
pub mod rank_update;
pub mod robust;
pub mod scalar_normal;
pub mod solve;
pub mod solver_choice;

use self::functional::{ModelSpace, RowBuilder, RowScratch};
use self::gcv::GcvSpectrum;
use self::iterative::{solve_iterative, RowSource, CG_TOLERANCE};
use self::lane_normal::LaneNormalOperator;
use self::normal::assemble_rows;
pub use self::observation::{DataSet, Observation, ObservationSet};
use self::parameters::ParameterLayout;
pub use self::robust::Robust;
use self::solve::{solve, Solution};
pub use self::solver_choice::{plan_solver, RowPass, SolverKind, SolverPlan, SolverRequest};
use crate::field::{NormalField, Quantity};
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

    /// Diagonal of P for unknowns of the given degrees.
    fn prior(&self, degrees: &[usize]) -> Vec<f64> {
        match *self {
            Regularization::None => vec![0.0; degrees.len()],
            Regularization::Damping(_) | Regularization::Gcv => vec![1.0; degrees.len()],
            Regularization::Kaula { a, p } | Regularization::KaulaGcv { a, p } => degrees
                .iter()
                .map(|&l| {
                    let rms = a * (l.max(1) as f64).powf(-p);
                    1.0 / (rms * rms)
                })
                .collect(),
        }
    }
}

/// Options of [`fit`] (plain values on a sphere).
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

/// Largest relative change of the coefficients at which the Gauss–Newton iteration of an F
/// fit stops.
pub const GAUSS_NEWTON_TOLERANCE: f64 = 1e-9;
/// Most passes of the Gauss–Newton / reweighting loop.
pub const MAX_ITERATIONS: usize = 30;

/// Everything a fit of an [`ObservationSet`] needs besides the observations.
#[derive(Debug, Clone, PartialEq)]
pub struct FitSetup {
    pub lmax: usize,
    pub regularization: Regularization,
    /// What the coefficients are (and R, GM).
    pub space: ModelSpace,
    /// Internal degrees held at zero (e.g. 0 and 1 for a disturbing potential in a
    /// centre-of-mass frame). Degree 0 of a magnetic model is always fixed.
    pub fixed_degrees: Vec<usize>,
    /// Normal field whose potential and radial gradient are taken off `potential` and
    /// `radial-gradient` observations; it is added back to the model written. The other gravity
    /// quantities (geoid, gravity disturbance, gravity anomaly) are already relative to a
    /// normal field and are used as given.
    pub normal_field: NormalField,
    /// External-source coefficients to this degree (magnetic, ≤ 3).
    pub external_lmax: Option<usize>,
    /// Linear secular variation about this epoch (decimal year), magnetic.
    pub secular_epoch_year: Option<f64>,
    /// Model at which total-intensity rows are first linearised (Schmidt, nT).
    pub start: Option<Coefficients>,
    /// Robust reweighting of the rows.
    pub robust: Option<Robust>,
    /// Direct, iterative, or chosen from the estimates ([`solver_choice`]).
    pub solver: SolverRequest,
}

impl FitSetup {
    /// A fit of plain values to degree `lmax` on a sphere of `reference_radius_m`.
    pub fn generic(lmax: usize, reference_radius_m: f64, regularization: Regularization) -> Self {
        FitSetup {
            lmax,
            regularization,
            space: ModelSpace::Generic { reference_radius_m },
            fixed_degrees: Vec::new(),
            normal_field: NormalField::None,
            external_lmax: None,
            secular_epoch_year: None,
            start: None,
            robust: None,
            solver: SolverRequest::Auto,
        }
    }
}

/// How the normal equations were solved.
#[derive(Debug, Clone, PartialEq)]
pub struct SolverReport {
    /// The solver used, its reason and the estimates behind the choice.
    pub plan: SolverPlan,
    /// Conjugate-gradient steps over all passes (iterative solver).
    pub iterations: Option<usize>,
    /// ‖b − (N + λP)x‖/‖b‖ of the last pass (iterative solver), recomputed from x.
    pub relative_residual: Option<f64>,
    /// Seconds spent building N and b (direct) or b (iterative), over all passes.
    pub assembly_seconds: f64,
    /// Seconds spent solving, over all passes (iterative: the conjugate gradients with their
    /// passes over the observations).
    pub solve_seconds: f64,
}

/// χ² of one data set.
#[derive(Debug, Clone, PartialEq)]
pub struct DataSetSummary {
    pub name: String,
    pub observations: usize,
    /// Σ w r² over the set (with the final robust weights).
    pub chi2: f64,
    /// chi2 / observations.
    pub chi2_per_observation: f64,
    /// sqrt(mean r²), unweighted, in the units of the set's values.
    pub residual_rms: f64,
}

/// One pass of the Gauss–Newton / reweighting loop.
#[derive(Debug, Clone, PartialEq)]
pub struct IterationReport {
    pub iteration: usize,
    /// max |Δx| / max |x| against the previous pass (infinite on the first).
    pub relative_change: f64,
    pub chi2_per_dof: f64,
    /// Rows whose robust weight is below 1.
    pub downweighted_rows: usize,
}

/// Outcome of a fit.
#[derive(Debug, Clone)]
pub struct FitResult {
    /// Coefficients with C_sigma/S_sigma (`geodesy` for values and gravity, `schmidt` in nT
    /// for magnetic fits), with the normal field added back when one was used.
    pub model: Coefficients,
    /// Rates of change per year with their sigmas, when secular variation was fitted.
    pub rates: Option<Coefficients>,
    /// External-source coefficients with their sigmas, when fitted.
    pub external: Option<Coefficients>,
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
    /// Number of free unknowns solved for.
    pub unknowns: usize,
    /// Whether C_sigma/S_sigma were scaled by the a-posteriori variance factor.
    pub sigmas_scaled: bool,
    /// Residuals y − model per observation.
    pub residuals: Vec<f64>,
    /// χ² per data set, in the order of [`ObservationSet::datasets`].
    pub datasets: Vec<DataSetSummary>,
    /// The passes of the Gauss–Newton / reweighting loop (one for a linear, plain fit).
    pub iterations: Vec<IterationReport>,
    /// Rows down-weighted by the robust weights in the final pass.
    pub downweighted_rows: usize,
    /// The solver and its convergence.
    pub solver: SolverReport,
    pub warnings: Vec<String>,
}

/// Bytes the fit needs. The solve holds five u × u matrices at its peak (`solve.rs`: N, the
/// regularised N + λP, the Cholesky factor, the copy of it the factorisation returns, and the
/// inverse of the factor), GCV two more (its eigenvectors and their workspace); the peak RSS of
/// `kugel bench --case fit --points 100000 --lmax 60 --solver direct` was 570 MiB against 554
/// for five matrices (December 2026), where three had been counted.
pub fn fit_memory_bytes(lmax: usize, regularization: &Regularization) -> u64 {
    let l1 = (lmax as u64).saturating_add(1);
    unknowns_memory_bytes(crate::memory::saturating_product(&[l1, l1]), regularization)
}

/// As [`fit_memory_bytes`] for `u` unknowns (saturating: any size can be estimated).
pub fn unknowns_memory_bytes(u: u64, regularization: &Regularization) -> u64 {
    use crate::memory::saturating_product as product;
    let matrices = match regularization {
        Regularization::Gcv | Regularization::KaulaGcv { .. } => 7,
        _ => 5,
    };
    // the assembly's block of design columns (and the row builder's copies of it), and the
    // rank-k update's packing buffer
    let block = product(&[u, normal::BLOCK_POINTS as u64, 8, 2]);
    let packing = rank_update::RankUpdater::buffer_bytes(usize::try_from(u).unwrap_or(usize::MAX));
    product(&[matrices, u, u, 8])
        .saturating_add(block)
        .saturating_add(packing)
}

/// Fits the points (plain values on the sphere of `options.body_radius_m`) to all
/// coefficients up to `lmax` (no progress output).
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
    let set = ObservationSet::from_points(points, Quantity::Value, options.body_radius_m);
    let setup = FitSetup::generic(lmax, options.body_radius_m, options.regularization);
    fit_observations_with_progress(&set, &setup, progress)
}

/// Fits observations of functionals (no progress output).
pub fn fit_observations(set: &ObservationSet, setup: &FitSetup) -> Result<FitResult> {
    fit_observations_with_progress(set, setup, &Silent)
}

/// Where an observation came from, for messages.
pub fn describe_source(set: &ObservationSet, o: &Observation) -> String {
    let name = set
        .datasets
        .get(o.dataset)
        .map_or("observations", |d| d.name.as_str());
    format!("{name}: line {}", o.source_line)
}

/// Checks the observations against the setup; each refusal names the data set and line.
pub fn check_observations(set: &ObservationSet, setup: &FitSetup) -> Result<()> {
    if set.is_empty() {
        return Err(Error::invalid("the fit needs observations with values"));
    }
    let r_ref = setup.space.reference_radius_m();
    if !(r_ref.is_finite() && r_ref > 0.0) {
        return Err(Error::invalid(format!(
            "reference radius {r_ref} m is not a positive number"
        )));
    }
    let magnetic = matches!(setup.space, ModelSpace::Magnetic { .. });
    if !magnetic && (setup.external_lmax.is_some() || setup.secular_epoch_year.is_some()) {
        return Err(Error::invalid(
            "external terms and secular variation belong to magnetic fits (quantities br, btheta, blambda, x, y, z, f)",
        ));
    }
    if setup.external_lmax.is_some_and(|l| !(1..=3).contains(&l)) {
        return Err(Error::invalid(format!(
            "--external-lmax {} must lie in 1..=3",
            setup.external_lmax.unwrap_or(0)
        )));
    }
    if setup.normal_field != NormalField::None && !matches!(setup.space, ModelSpace::Gravity(_)) {
        return Err(Error::invalid(
            "--normal-field applies to fits of gravity quantities only",
        ));
    }
    for o in &set.observations {
        let at = || describe_source(set, o);
        setup
            .space
            .check_quantity(o.quantity)
            .map_err(|e| Error::invalid(format!("{}: {e}", at())))?;
        let p = &o.position;
        if !(p.radius_m.is_finite() && p.radius_m > 0.0) {
            return Err(Error::invalid(format!(
                "{}: the observation lies at radius {} m; an altitude below −R (the centre of the body) is not a position",
                at(),
                p.radius_m
            )));
        }
        if !(o.value.is_finite()) || o.sigma.is_some_and(|s| !(s.is_finite() && s > 0.0)) {
            return Err(Error::invalid(format!(
                "{}: value {} or sigma {:?} is not usable (finite value, sigma > 0)",
                at(),
                o.value,
                o.sigma
            )));
        }
        match (o.time_year, setup.secular_epoch_year) {
            (Some(t), None) => {
                return Err(Error::invalid(format!(
                    "{}: the observation has a time ({t}) but the model has no time terms; pass --secular-variation --epoch YEAR, or drop the time column",
                    at()
                )))
            }
            (None, Some(_)) => {
                return Err(Error::invalid(format!(
                    "{}: secular variation needs a time (decimal year) for every observation; this one has none",
                    at()
                )))
            }
            _ => {}
        }
    }
    let has_f = set.observations.iter().any(|o| o.quantity == Quantity::F);
    let has_vector = set.observations.iter().any(|o| o.quantity != Quantity::F);
    if has_f && setup.start.is_none() && !has_vector {
        let first = set
            .observations
            .iter()
            .find(|o| o.quantity == Quantity::F)
            .expect("has F");
        return Err(Error::invalid(format!(
            "{}: total intensity F is nonlinear in the coefficients and needs a model to start from: pass --start MODEL, or add vector observations to the fit",
            describe_source(set, first)
        )));
    }
    Ok(())
}

/// The full unknown vector of a start model (internal block only; others zero).
fn start_vector(
    start: &Coefficients,
    layout: &ParameterLayout,
    space: &ModelSpace,
) -> Result<Vec<f64>> {
    let target = match space {
        ModelSpace::Magnetic { .. } => crate::coeffs::Normalization::Schmidt,
        _ => crate::coeffs::Normalization::Geodesy,
    };
    let m = start.converted(target, false)?;
    let mut x = vec![0.0; layout.full_len()];
    let internal = &layout.internal;
    for l in 1..=internal.lmax.min(m.lmax()) {
        for mm in 0..=l {
            x[internal.c_index(l, mm)] = m.c(l, mm);
            if mm > 0 {
                x[internal.s_index(l, mm)] = m.s(l, mm);
            }
        }
    }
    Ok(x)
}

/// As [`fit_observations`], reporting progress while assembling.
pub fn fit_observations_with_progress(
    set: &ObservationSet,
    setup: &FitSetup,
    progress: &dyn Progress,
) -> Result<FitResult> {
    check_observations(set, setup)?;
    let lmax = setup.lmax;
    // the smallest estimate first (the matrix-free solver's): nothing of the size of the
    // degree is built before it
    let l1 = (lmax as u64).saturating_add(1);
    crate::memory::check_fits(
        &format!("a degree-{lmax} fit"),
        solver_choice::iterative_memory_bytes(
            crate::memory::saturating_product(&[l1, l1]),
            rayon::current_num_threads() as u64,
        ),
    )?;
    let magnetic = matches!(setup.space, ModelSpace::Magnetic { .. });
    let mut fixed = setup.fixed_degrees.clone();
    if magnetic && !fixed.contains(&0) {
        fixed.push(0);
    }
    let layout = ParameterLayout::new(
        lmax,
        setup.secular_epoch_year.is_some(),
        setup.external_lmax,
        &fixed,
    );
    let u = layout.free_len();
    if u == 0 {
        return Err(Error::invalid(
            "every degree is fixed: the fit has no unknowns",
        ));
    }
    // the rows the iterative passes read: scalar ones through the lane kernels (as
    // `RowBuilder::rows_are_scalar` decides below), others built whole
    let scalar_rows = !magnetic && !layout.secular_variation && layout.external.is_none();
    let plan = plan_solver(
        setup.solver,
        set.len(),
        u,
        if scalar_rows {
            RowPass::Lanes(layout.full_len())
        } else {
            RowPass::Full(layout.full_len())
        },
        &setup.regularization,
        crate::memory::available_bytes(),
        rayon::current_num_threads(),
    )?;
    crate::memory::check_fits(
        &match plan.kind {
            SolverKind::Direct => {
                format!("the normal matrix of a degree-{lmax} fit ({u} unknowns)")
            }
            SolverKind::Iterative => {
                format!("the matrix-free solver of a degree-{lmax} fit ({u} unknowns)")
            }
        },
        plan.bytes(),
    )?;
    progress.note(&format!("solver: {}: {}", plan.kind, plan.reason));
    let order_groups = layout.free_groups_by_order();
    let r_ref = setup.space.reference_radius_m();
    let lat: Vec<f64> = set
        .observations
        .iter()
        .map(|o| 90.0 - o.position.colatitude_rad.to_degrees())
        .collect();
    let lon: Vec<f64> = set
        .observations
        .iter()
        .map(|o| o.position.longitude_rad.to_degrees())
        .collect();
    let mut warnings = coverage_warnings_at(&lat, &lon, u, lmax, r_ref);

    let normal_zonals = match setup.space {
        ModelSpace::Gravity(scale) => {
            setup
                .normal_field
                .zonals_for(lmax, scale.reference_radius_m, scale.gm_m3_s2)
        }
        _ => Vec::new(),
    };
    let builder = RowBuilder::new(
        setup.space,
        layout.clone(),
        setup.secular_epoch_year.unwrap_or(0.0),
        &normal_zonals,
    );
    let degrees: Vec<usize> = layout.free_kinds().iter().map(|&(_, l)| l).collect();
    let prior = setup.regularization.prior(&degrees);
    let has_f = set.observations.iter().any(|o| o.quantity == Quantity::F);
    let mut current: Option<Vec<f64>> = match (&setup.start, has_f) {
        (Some(start), true) => Some(start_vector(start, &layout, &setup.space)?),
        _ => None,
    };
    let n_obs = set.len();
    let base_weights: Vec<f64> = (0..n_obs).map(|i| set.weight(i)).collect();
    let mut robust_factor = vec![1.0; n_obs];
    let mut iterations = Vec::new();
    let (mut assembly_seconds, mut solve_seconds) = (0.0, 0.0);
    let mut cg_iterations = 0usize;
    let mut cg_residual = None;
    let mut warm_start: Option<Vec<f64>> = None;

    let (solution, lambda, x_full, residuals) = loop {
        let pass = iterations.len() + 1;
        // Without a start model, the first pass of an F fit uses the vector rows alone.
        let skip_f = has_f && current.is_none();
        let lin = current.clone();
        let init = || (builder.scratch(), vec![0.0; 0]);
        let row = |i: usize, (sc, _): &mut (RowScratch, Vec<f64>), col: &mut [f64]| {
            let o = &set.observations[i];
            if skip_f && o.quantity == Quantity::F {
                col.iter_mut().for_each(|v| *v = 0.0);
                return Ok((0.0, 0.0));
            }
            let offset = builder.fill(o, lin.as_deref(), sc)?;
            layout.gather(&sc.row, col);
            Ok((base_weights[i] * robust_factor[i], o.value - offset))
        };
        let (solution, lambda, used) = match plan.kind {
            SolverKind::Direct => {
                let clock = std::time::Instant::now();
                let normals = assemble_rows(u, n_obs, init, row, progress)?;
                assembly_seconds += clock.elapsed().as_secs_f64();
                let clock = std::time::Instant::now();
                progress.stage("solving the normal equations", 0);
                let lambda = match setup.regularization {
                    Regularization::Gcv | Regularization::KaulaGcv { .. } => {
                        GcvSpectrum::new(
                            &normals.n,
                            &prior,
                            &normals.b,
                            normals.y_w_y,
                            normals.observations,
                        )
                        .choose()
                        .lambda
                    }
                    fixed => fixed_lambda(&fixed),
                };
                let solution = solve(&normals.n, &prior, lambda, &normals.b)?;
                solve_seconds += clock.elapsed().as_secs_f64();
                (solution, lambda, normals.observations)
            }
            SolverKind::Iterative => {
                let clock = std::time::Instant::now();
                let source = RowSource {
                    unknowns: u,
                    observations: n_obs,
                    init,
                    row,
                };
                let pass_weights: Vec<f64> = (0..n_obs)
                    .map(|i| base_weights[i] * robust_factor[i])
                    .collect();
                // scalar rows go through the lane kernels, others through full rows
                let lanes = builder
                    .rows_are_scalar()
                    .then(|| LaneNormalOperator::new(set, &builder, &pass_weights));
                progress.stage("right-hand side", 0);
                let rhs = match &lanes {
                    Some(lanes) => lanes.right_hand_side()?,
                    None => source.right_hand_side()?,
                };
                assembly_seconds += clock.elapsed().as_secs_f64();
                let clock = std::time::Instant::now();
                let lambda = fixed_lambda(&setup.regularization);
                let normal_times = |p: &[f64]| -> Result<Vec<f64>> {
                    match &lanes {
                        Some(lanes) => lanes.normal_times(p),
                        None => source.normal_times(p),
                    }
                };
                let it = solve_iterative(
                    &source,
                    &normal_times,
                    &rhs,
                    order_groups.clone(),
                    &prior,
                    lambda,
                    warm_start.as_deref(),
                    progress,
                )?;
                solve_seconds += clock.elapsed().as_secs_f64();
                cg_iterations += it.iterations;
                cg_residual = Some(it.relative_residual);
                if !it.converged {
                    if it.relative_residual > 1e-6 {
                        return Err(Error::invalid(format!(
                            "the conjugate gradients did not converge ({} steps, relative residual {:.1e}): the data \
                             may not determine every coefficient; lower --lmax, regularise (damping:λ, kaula:A,p) \
                             or use --solver direct",
                            it.iterations, it.relative_residual
                        )));
                    }
                    warnings.push(format!(
                        "the conjugate gradients stopped at relative residual {:.1e} after {} steps (tolerance {CG_TOLERANCE:e})",
                        it.relative_residual, it.iterations
                    ));
                }
                warm_start = Some(it.x.clone());
                let solution = Solution {
                    x: it.x,
                    covariance_diagonal: it.approximate_covariance_diagonal,
                    condition_estimate: f64::NAN,
                };
                (solution, lambda, rhs.observations)
            }
        };
        let x_full = layout.expand(&solution.x);
        let residuals = predict_all(&builder, set, &x_full)?;
        let residuals: Vec<f64> = set
            .observations
            .iter()
            .zip(&residuals)
            .map(|(o, p)| o.value - p)
            .collect();
        let relative_change = match &current {
            Some(prev) => {
                let scale = x_full
                    .iter()
                    .fold(0.0f64, |a, v| a.max(v.abs()))
                    .max(1e-300);
                x_full
                    .iter()
                    .zip(prev)
                    .fold(0.0f64, |a, (x, p)| a.max((x - p).abs()))
                    / scale
            }
            None => f64::INFINITY,
        };
        let mut weights_changed = false;
        let mut downweighted = 0;
        if let Some(rob) = &setup.robust {
            for i in 0..n_obs {
                let standardised = residuals[i] * base_weights[i].sqrt();
                let f = rob.weight(standardised);
                weights_changed |= (f - robust_factor[i]).abs() > 1e-6;
                robust_factor[i] = f;
                downweighted += usize::from(f < 1.0);
            }
        }
        let chi2: f64 = (0..n_obs)
            .map(|i| base_weights[i] * robust_factor[i] * residuals[i] * residuals[i])
            .sum();
        let trace_h = effective_parameters(&prior, lambda, &solution.covariance_diagonal);
        let dof = used as f64 - trace_h;
        iterations.push(IterationReport {
            iteration: pass,
            relative_change,
            chi2_per_dof: if dof > 0.5 { chi2 / dof } else { f64::NAN },
            downweighted_rows: downweighted,
        });
        let nonlinear_done = !has_f || relative_change < GAUSS_NEWTON_TOLERANCE;
        let robust_done = setup.robust.is_none() || !weights_changed;
        let finished = (nonlinear_done && robust_done && !skip_f) || pass >= MAX_ITERATIONS;
        if finished {
            if pass >= MAX_ITERATIONS && !(nonlinear_done && robust_done) {
                warnings.push(format!(
                    "the iteration stopped after {MAX_ITERATIONS} passes without converging (last relative change {relative_change:.2e})"
                ));
            }
            break (solution, lambda, x_full, residuals);
        }
        current = Some(x_full);
    };

    let weights: Vec<f64> = (0..n_obs)
        .map(|i| base_weights[i] * robust_factor[i])
        .collect();
    let n = n_obs as f64;
    let residual_rms = (residuals.iter().map(|r| r * r).sum::<f64>() / n).sqrt();
    let chi2: f64 = residuals.iter().zip(&weights).map(|(r, w)| w * r * r).sum();
    let trace_h = effective_parameters(&prior, lambda, &solution.covariance_diagonal);
    let dof = n - trace_h;
    let chi2_per_dof = if dof > 0.5 { chi2 / dof } else { f64::NAN };
    if dof <= 0.5 {
        warnings.push(format!(
            "no degrees of freedom left ({n_obs} observations, {trace_h:.1} effective parameters): χ²/dof is undefined"
        ));
    }
    let sigmas_scaled = !set.all_have_sigma();
    let factor = if sigmas_scaled && chi2_per_dof.is_finite() {
        chi2_per_dof
    } else {
        1.0
    };
    let sigma_free: Vec<f64> = solution
        .covariance_diagonal
        .iter()
        .map(|c| (c.max(0.0) * factor).sqrt())
        .collect();
    let sigma_full = layout.expand(&sigma_free);
    if solution.condition_estimate > 1e12 {
        warnings.push(format!(
            "the normal matrix is ill-conditioned (condition ≈ {:.1e}): coefficients and their σ are unreliable; regularise or lower --lmax",
            solution.condition_estimate
        ));
    }
    let datasets = dataset_summaries(set, &residuals, &weights);
    let downweighted_rows = iterations.last().map_or(0, |i| i.downweighted_rows);

    let block = |offset: usize, sub: &design::UnknownLayout| -> Coefficients {
        let n = sub.len();
        let mut c = sub.to_coefficients(
            &x_full[offset..offset + n],
            Some(&sigma_full[offset..offset + n]),
        );
        c.reference_radius_m = r_ref;
        if magnetic {
            c.normalization = crate::coeffs::Normalization::Schmidt;
            c.units = "nT".into();
            c.attributes.insert("field_kind".into(), "magnetic".into());
        }
        c
    };
    let mut model = block(0, &layout.internal);
    match setup.space {
        ModelSpace::Gravity(scale) => {
            model.gm_m3_s2 = Some(scale.gm_m3_s2);
            model.units = "1".into();
            for &(l, c) in &normal_zonals {
                if l <= lmax {
                    let current = model.c(l, 0);
                    model.set(l, 0, current + c, 0.0);
                }
            }
            if setup.normal_field != NormalField::None {
                model.attributes.insert(
                    "fit_normal_field_added".into(),
                    format!(
                        "{}: fitted as a disturbing potential, the normal potential added back",
                        setup.normal_field
                    ),
                );
            }
        }
        ModelSpace::Magnetic { .. } => {}
        ModelSpace::Generic { .. } => {}
    }
    let rates = layout.secular_variation.then(|| {
        let mut r = block(layout.rate_offset(), &layout.internal);
        if magnetic {
            r.units = "nT/year".into();
        }
        r
    });
    let external = layout
        .external
        .as_ref()
        .map(|e| block(layout.external_offset(), e));
    if let (Some(epoch), Some(r)) = (setup.secular_epoch_year, &rates) {
        // the model file carries the rates (dC_dt, dS_dt with σ) and the epoch
        model.set_secular(epoch, r.clone())?;
    }
    if !setup.fixed_degrees.is_empty() {
        let list: Vec<String> = setup.fixed_degrees.iter().map(|l| l.to_string()).collect();
        model
            .attributes
            .insert("fit_fixed_degrees".into(), list.join(","));
    }
    model
        .attributes
        .insert("fit_regularization".into(), setup.regularization.describe());
    model
        .attributes
        .insert("fit_lambda".into(), format!("{lambda:e}"));
    model
        .attributes
        .insert("fit_observations".into(), n_obs.to_string());
    model
        .attributes
        .insert("fit_chi2_per_dof".into(), format!("{chi2_per_dof}"));
    model
        .attributes
        .insert("fit_residual_rms".into(), format!("{residual_rms}"));
    let covariance = match plan.kind {
        SolverKind::Direct => "posterior covariance diagonal",
        SolverKind::Iterative => {
            "APPROXIMATE posterior covariance diagonal (inverse of the block-diagonal-by-order \
             preconditioner of the iterative solver; coupling between orders neglected)"
        }
    };
    model.attributes.insert(
        "fit_sigma_convention".into(),
        if sigmas_scaled {
            format!("{covariance} scaled by the a-posteriori variance factor chi2/dof (not every observation has sigma)")
        } else {
            format!("formal {covariance} from the input sigma, unscaled")
        },
    );
    model.attributes.insert(
        "fit_solver".into(),
        match plan.kind {
            SolverKind::Direct => plan.kind.to_string(),
            SolverKind::Iterative => format!(
                "{}, {cg_iterations} steps, relative residual {:.1e} (tolerance {CG_TOLERANCE:e})",
                plan.kind,
                cg_residual.unwrap_or(f64::NAN)
            ),
        },
    );
    if plan.kind == SolverKind::Iterative {
        warnings.push(
            "σ from the iterative solver are approximate (block-diagonal-by-order inverse, coupling between \
             orders neglected); χ²/dof uses the same approximation for the effective parameters; the \
             condition number is not estimated; use --solver direct for exact σ"
                .into(),
        );
    }
    Ok(FitResult {
        model,
        rates,
        external,
        residual_rms,
        chi2_per_dof,
        condition_estimate: solution.condition_estimate,
        lambda,
        effective_parameters: trace_h,
        unknowns: u,
        sigmas_scaled,
        residuals,
        datasets,
        iterations,
        downweighted_rows,
        solver: SolverReport {
            iterations: (plan.kind == SolverKind::Iterative).then_some(cg_iterations),
            relative_residual: cg_residual,
            plan,
            assembly_seconds,
            solve_seconds,
        },
        warnings,
    })
}

/// λ of a regularisation that fixes it (GCV chooses it from the spectrum of N instead).
fn fixed_lambda(regularization: &Regularization) -> f64 {
    match regularization {
        Regularization::None => 0.0,
        Regularization::Damping(l) => *l,
        Regularization::Kaula { .. } => 1.0,
        // the solver choice keeps GCV on the direct path
        Regularization::Gcv | Regularization::KaulaGcv { .. } => f64::NAN,
    }
}

/// tr H = u − λ Σ P_ii [(N + λP)⁻¹]_ii.
fn effective_parameters(prior: &[f64], lambda: f64, covariance_diagonal: &[f64]) -> f64 {
    prior.len() as f64
        - lambda
            * prior
                .iter()
                .zip(covariance_diagonal)
                .map(|(p, c)| p * c)
                .sum::<f64>()
}

/// The model's value of every observation for the full unknown vector `x` (parallel; scalar
/// rows through the lane kernels of [`lanes`], others row by row).
pub fn predict_all(builder: &RowBuilder, set: &ObservationSet, x: &[f64]) -> Result<Vec<f64>> {
    use rayon::prelude::*;
    if builder.rows_are_scalar() {
        // the lane kernels; their weights play no part in the values
        let weights = vec![1.0; set.len()];
        return LaneNormalOperator::new(set, builder, &weights).predict(x);
    }
    set.observations
        .par_iter()
        .map_init(|| builder.scratch(), |sc, o| builder.predict(o, x, sc))
        .collect()
}

fn dataset_summaries(
    set: &ObservationSet,
    residuals: &[f64],
    weights: &[f64],
) -> Vec<DataSetSummary> {
    let mut out: Vec<DataSetSummary> = set
        .datasets
        .iter()
        .map(|d| DataSetSummary {
            name: d.name.clone(),
            observations: 0,
            chi2: 0.0,
            chi2_per_observation: f64::NAN,
            residual_rms: f64::NAN,
        })
        .collect();
    let mut sum_r2 = vec![0.0; out.len()];
    for (i, o) in set.observations.iter().enumerate() {
        if let Some(d) = out.get_mut(o.dataset) {
            d.observations += 1;
            d.chi2 += weights[i] * residuals[i] * residuals[i];
            sum_r2[o.dataset] += residuals[i] * residuals[i];
        }
    }
    for (d, s) in out.iter_mut().zip(sum_r2) {
        if d.observations > 0 {
            d.chi2_per_observation = d.chi2 / d.observations as f64;
            d.residual_rms = (s / d.observations as f64).sqrt();
        }
    }
    out
}

/// Warnings about the data for degree L: fewer observations than unknowns, and the share of
/// the sphere farther than the half-wavelength πR/L from any observation (measured on the
/// Gauss grid of L, area-weighted).
pub fn coverage_warnings(points: &PointSet, lmax: usize, body_radius_m: f64) -> Vec<String> {
    let u = (lmax + 1) * (lmax + 1);
    coverage_warnings_at(&points.lat_deg, &points.lon_deg, u, lmax, body_radius_m)
}

/// As [`coverage_warnings`] for observations at (lat, lon) in degrees and `u` unknowns.
pub fn coverage_warnings_at(
    lat_deg: &[f64],
    lon_deg: &[f64],
    u: usize,
    lmax: usize,
    body_radius_m: f64,
) -> Vec<String> {
    let mut warnings = Vec::new();
    if lat_deg.len() < u {
        warnings.push(format!(
            "under-determined: {} observations for {u} unknowns at L = {lmax}; the fit rests on the regularisation",
            lat_deg.len()
        ));
    }
    let index = SphereIndex::new(lat_deg, lon_deg);
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
