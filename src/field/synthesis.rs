//! The whole chain from a coefficient model to physical quantities on a grid or at points:
//! check the quantities against the model's kind, convert to `geodesy`, remove the normal
//! field, apply degree weights (filters), then per quantity scale a copy of the coefficients by
//! its k_l ([`super::degree_factors`]) and synthesise once.

use std::borrow::Cow;
use std::collections::BTreeMap;

use ndarray::{Array2, Zip};

use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};
use crate::sht::{evaluate_point_values, evaluate_points, Grid, TransformPlan};

use crate::spectral::continuation::{radial_factors, ContinuationOptions};
use crate::spectral::filter::FilterChain;

use super::degree_factors::{
    magnetic_horizontal_factors, magnetic_radial_factors, scalar_factors, PotentialScale,
};
use super::magnetic::FieldVector;
use super::model_kind::ModelKind;
use super::normal_field::NormalField;
use super::quantity::{Quantity, QuantityFamily};

/// The sphere on which grid quantities are computed.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum TargetSurface {
    /// r = R, the model's reference radius.
    #[default]
    ReferenceSphere,
    /// r = R + h.
    Altitude { altitude_m: f64 },
    /// r given directly.
    Radius { radius_m: f64 },
}

impl TargetSurface {
    /// The surface from an altitude above the reference sphere or a radius, both in km, as a
    /// front end receives them; `altitude_name` and `radius_name` are the option names the
    /// user typed, for the messages. Neither given: the reference sphere.
    pub fn from_km(
        altitude_km: Option<f64>,
        radius_km: Option<f64>,
        altitude_name: &str,
        radius_name: &str,
    ) -> Result<TargetSurface> {
        match (altitude_km, radius_km) {
            (Some(_), Some(_)) => Err(Error::invalid(format!(
                "give either {altitude_name} or {radius_name}, not both"
            ))),
            (Some(h), None) if h.is_finite() => Ok(TargetSurface::Altitude {
                altitude_m: h * 1e3,
            }),
            (None, Some(r)) if r.is_finite() && r > 0.0 => {
                Ok(TargetSurface::Radius { radius_m: r * 1e3 })
            }
            (None, None) => Ok(TargetSurface::ReferenceSphere),
            (Some(h), None) => Err(Error::invalid(format!(
                "{altitude_name} must be finite, got {h}"
            ))),
            (None, Some(r)) => Err(Error::invalid(format!(
                "{radius_name} must be positive, got {r}"
            ))),
        }
    }

    pub fn radius_m(&self, reference_radius_m: f64) -> f64 {
        match *self {
            TargetSurface::ReferenceSphere => reference_radius_m,
            TargetSurface::Altitude { altitude_m } => reference_radius_m + altitude_m,
            TargetSurface::Radius { radius_m } => radius_m,
        }
    }
}

/// A point in geocentric spherical coordinates, with the tilt of its local frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GeocentricPoint {
    pub radius_m: f64,
    pub colatitude_rad: f64,
    pub longitude_rad: f64,
    /// Geodetic minus geocentric latitude, radians: magnetic X, Z (and H, D, I) are reported
    /// in the local frame of the geodetic normal when the point was given on an ellipsoid;
    /// 0 for points given on a sphere.
    pub tilt_rad: f64,
}

impl GeocentricPoint {
    /// A point from geocentric latitude and longitude in degrees at a radius.
    pub fn from_degrees(lat_deg: f64, lon_deg: f64, radius_m: f64) -> GeocentricPoint {
        GeocentricPoint {
            radius_m,
            colatitude_rad: (90.0 - lat_deg).to_radians(),
            longitude_rad: lon_deg.to_radians(),
            tilt_rad: 0.0,
        }
    }

    /// A point from geodetic latitude, longitude (degrees) and ellipsoidal height (m).
    pub fn from_geodetic(
        ellipsoid: &super::Ellipsoid,
        lat_deg: f64,
        lon_deg: f64,
        height_m: f64,
    ) -> GeocentricPoint {
        let g =
            ellipsoid.geodetic_to_geocentric(lat_deg.to_radians(), lon_deg.to_radians(), height_m);
        let geocentric_lat = std::f64::consts::FRAC_PI_2 - g.colatitude_rad;
        GeocentricPoint {
            radius_m: g.radius_m,
            colatitude_rad: g.colatitude_rad,
            longitude_rad: g.longitude_rad,
            tilt_rad: lat_deg.to_radians() - geocentric_lat,
        }
    }
}

/// What to compute.
#[derive(Debug, Clone)]
pub struct SynthesisRequest<'a> {
    pub quantities: Vec<Quantity>,
    /// Where grid quantities are computed (points carry their own radius).
    pub surface: TargetSurface,
    pub normal_field: NormalField,
    /// Degree-domain filter applied (with the model's reference radius) after the normal
    /// field is removed and before the quantity factors.
    pub filter: Option<&'a FilterChain>,
    /// Cap and regularisation for downward continuation (r < R).
    pub continuation: ContinuationOptions,
}

impl<'a> SynthesisRequest<'a> {
    /// The quantities on the reference sphere, no normal field, no filter.
    pub fn new(quantities: Vec<Quantity>) -> SynthesisRequest<'a> {
        SynthesisRequest {
            quantities,
            surface: TargetSurface::ReferenceSphere,
            normal_field: NormalField::None,
            filter: None,
            continuation: ContinuationOptions::default(),
        }
    }
}

/// The model after checks, conversion, normal-field removal and filtering (the model itself,
/// borrowed, when none of them changes a value).
struct Prepared<'m> {
    coeffs: Cow<'m, Coefficients>,
    scale: Option<PotentialScale>,
}

fn prepare<'m>(model: &'m Coefficients, request: &SynthesisRequest) -> Result<Prepared<'m>> {
    if request.quantities.is_empty() {
        return Err(Error::invalid("no quantity requested"));
    }
    let kind = ModelKind::of(model);
    for &q in &request.quantities {
        kind.check_supports(model, q)?;
    }
    if request.normal_field != NormalField::None && kind != ModelKind::GravityPotential {
        return Err(Error::invalid(format!(
            "--normal-field applies to gravity potential models with GM only; this model is {}",
            match kind {
                ModelKind::Magnetic => "magnetic",
                _ => "a generic field without GM",
            }
        )));
    }
    if !(model.reference_radius_m.is_finite() && model.reference_radius_m > 0.0) {
        return Err(Error::invalid(format!(
            "the model's reference_radius_m must be positive, got {}",
            model.reference_radius_m
        )));
    }
    let unchanged = model.normalization == Normalization::Geodesy
        && !model.condon_shortley
        && request.normal_field == NormalField::None
        && request.filter.is_none();
    let coeffs = if unchanged {
        model.check_finite()?;
        Cow::Borrowed(model)
    } else {
        let mut coeffs = model.to_geodesy()?;
        coeffs.check_finite()?;
        request.normal_field.remove_from(&mut coeffs)?;
        if let Some(chain) = request.filter {
            chain.apply(&mut coeffs)?;
        }
        Cow::Owned(coeffs)
    };
    let scale = match (kind, model.gm_m3_s2) {
        (ModelKind::GravityPotential, Some(gm)) => Some(PotentialScale {
            reference_radius_m: model.reference_radius_m,
            gm_m3_s2: gm,
        }),
        _ => None,
    };
    Ok(Prepared { coeffs, scale })
}

/// A copy of `coeffs` with degree l scaled by `k[l]`.
/// [`scaled`], or `coeffs` itself when every factor is exactly 1 (a value on the reference
/// sphere): the product would change no bit, and the copy costs a pass over the set per call.
fn scaled_unless_unit<'c>(coeffs: &'c Coefficients, k: &[f64]) -> Cow<'c, Coefficients> {
    if k.iter().all(|&f| f == 1.0) {
        Cow::Borrowed(coeffs)
    } else {
        Cow::Owned(scaled(coeffs, k))
    }
}

fn scaled(coeffs: &Coefficients, k: &[f64]) -> Coefficients {
    let mut out = coeffs.clone();
    out.clear_sigmas();
    out.scale_by_degree(|l| k[l]);
    out
}

/// Whether B_r is needed; with a tilted local frame X, H and D mix in Z as well.
fn needs_radial(qs: &[Quantity], tilted: bool) -> bool {
    use Quantity::*;
    qs.iter().any(|q| {
        matches!(q, Br | Z | F | Inclination) || (tilted && matches!(q, X | H | Declination))
    })
}

/// Whether B_θ, B_λ are needed; with a tilted local frame Z mixes in X as well.
fn needs_horizontal(qs: &[Quantity], tilted: bool) -> bool {
    use Quantity::*;
    qs.iter().any(|q| {
        matches!(
            q,
            Btheta | Blambda | X | Y | H | F | Declination | Inclination
        ) || (tilted && *q == Z)
    })
}

/// Synthesises every requested quantity on `grid` (rows north to south), in request order.
///
/// The values are the model's at the grid nodes whatever the grid's spacing: when the grid has
/// fewer than 2·lmax + 1 longitudes (a coarse map of a high-degree model), the synthesis runs on
/// a grid with an integer multiple of its longitudes and keeps every stride-th column, so no
/// degree is dropped and nothing aliases.
pub fn synthesize_on_grid(
    model: &Coefficients,
    grid: &Grid,
    request: &SynthesisRequest,
) -> Result<Vec<(Quantity, Array2<f64>)>> {
    synthesize_on_grid_with_progress(model, grid, request, &crate::progress::Silent)
}

/// As [`synthesize_on_grid`], reporting one unit of progress per transform.
pub fn synthesize_on_grid_with_progress(
    model: &Coefficients,
    grid: &Grid,
    request: &SynthesisRequest,
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<(Quantity, Array2<f64>)>> {
    let (dense, stride) = longitude_densified(grid, model.lmax());
    let plan = TransformPlan::new(model.lmax(), &dense)?;
    synthesize_on_densified_plan(model, &plan, stride, request, progress)
}

/// [`synthesize_on_grid_with_progress`] with its plan built beforehand: `plan` is the plan for
/// the model's degree on `longitude_densified(grid, model.lmax())`, `stride` the stride that
/// returned. For front ends that keep plans between calls (the Python package's plan cache);
/// a plan depends only on (degree, grid), so the numbers are the same bit for bit.
pub fn synthesize_on_densified_plan(
    model: &Coefficients,
    plan: &TransformPlan,
    stride: usize,
    request: &SynthesisRequest,
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<(Quantity, Array2<f64>)>> {
    let out = synthesize_with_plan(model, plan, request, progress)?;
    if stride <= 1 {
        return Ok(out);
    }
    Ok(out
        .into_iter()
        .map(|(q, f)| (q, f.slice(ndarray::s![.., ..;stride]).to_owned()))
        .collect())
}

/// `grid` itself when it resolves `lmax` in longitude, else a copy with `stride` times as many
/// longitudes (same first longitude and rings), stride ≥ 1 the smallest that does.
pub fn longitude_densified(grid: &Grid, lmax: usize) -> (Grid, usize) {
    let stride = densification_stride(grid.nlon as f64, lmax) as usize;
    if stride == 1 {
        return (grid.clone(), 1);
    }
    let mut dense = grid.clone();
    dense.nlon = grid.nlon * stride;
    (dense, stride)
}

/// The stride of [`longitude_densified`] from the longitude count alone: the smallest s ≥ 1
/// with s·nlon ≥ 2·lmax + 1 (in f64, so that no degree overflows).
pub fn densification_stride(nlon: f64, lmax: usize) -> f64 {
    let needed = 2.0 * lmax as f64 + 1.0;
    (needed / nlon.max(1.0)).ceil().max(1.0)
}

/// Refuses, before any grid or table is built, a synthesis of `quantities` of a degree-`lmax`
/// model on an nlat × nlon grid that would not fit in memory: the estimate of
/// [`synthesis_memory_bytes`] on the longitude-densified grid, plus the plan's tables.
pub fn check_synthesis_job(
    lmax: usize,
    quantities: &[Quantity],
    (nlat, nlon): (f64, f64),
) -> Result<()> {
    let dense_nlon = nlon * densification_stride(nlon, lmax);
    let bytes = synthesis_memory_bytes_f64(lmax, quantities, nlat, dense_nlon)
        + crate::sht::budget::plan_table_bytes(lmax, nlat, dense_nlon);
    crate::memory::check_fits(
        &format!(
            "a synthesis of {} quantit{} to degree {lmax} on a {nlat} x {dense_nlon} grid",
            quantities.len(),
            if quantities.len() == 1 { "y" } else { "ies" }
        ),
        bytes as u64,
    )
}

/// Grids a synthesis of `quantities` holds at once: one per quantity plus one working grid,
/// or three for the magnetic vector components.
pub fn synthesis_grid_count(quantities: &[Quantity]) -> usize {
    let magnetic = quantities
        .iter()
        .any(|q| q.family() == QuantityFamily::Magnetic);
    quantities.len() + if magnetic { 3 } else { 1 }
}

/// Bytes [`synthesize_with_plan`] checks before it starts: the grids of
/// [`synthesis_grid_count`] (nlat × nlon doubles each), plus the prepared copy of the
/// degree-`model_lmax` coefficients (C and S) and the scaled copies synthesised together
/// (one per scalar quantity and one for B_r; at least one).
pub fn synthesis_memory_bytes(
    model_lmax: usize,
    quantities: &[Quantity],
    nlat: usize,
    nlon: usize,
) -> u64 {
    synthesis_memory_bytes_f64(model_lmax, quantities, nlat as f64, nlon as f64) as u64
}

/// [`synthesis_memory_bytes`] in f64 (no overflow for any shape).
fn synthesis_memory_bytes_f64(
    model_lmax: usize,
    quantities: &[Quantity],
    nlat: f64,
    nlon: f64,
) -> f64 {
    let grids = synthesis_grid_count(quantities) as f64;
    crate::sht::budget::grid_bytes(nlat, nlon, grids)
        + crate::sht::budget::synthesis_staging_bytes(grids, nlat)
        + crate::sht::budget::coefficient_set_bytes(
            model_lmax,
            (1 + one_pass_sets(quantities).max(1)) as f64,
        )
}

/// Coefficient sets synthesised in the one values pass: every scalar quantity, plus B_r when a
/// magnetic quantity needs it.
fn one_pass_sets(quantities: &[Quantity]) -> usize {
    let scalar = quantities
        .iter()
        .filter(|q| q.family() != QuantityFamily::Magnetic)
        .count();
    let magnetic = quantities
        .iter()
        .any(|q| q.family() == QuantityFamily::Magnetic);
    scalar + usize::from(magnetic && needs_radial(quantities, false))
}

/// As [`synthesize_on_grid`] with a prebuilt plan (reused across calls), reporting one unit of
/// progress per synthesised coefficient set. Every scalar quantity and B_r go through one
/// many-field pass ([`TransformPlan::synthesise_many`]: each P̄_lm computed once for all of
/// them), B_θ and B_λ through one gradient pass.
pub fn synthesize_with_plan(
    model: &Coefficients,
    plan: &TransformPlan,
    request: &SynthesisRequest,
    progress: &dyn crate::progress::Progress,
) -> Result<Vec<(Quantity, Array2<f64>)>> {
    let (nlat, nlon) = plan.grid().shape();
    let qs = &request.quantities;
    let magnetic = qs.iter().any(|q| q.family() == QuantityFamily::Magnetic);
    let arrays = synthesis_grid_count(qs);
    crate::memory::check_fits(
        &format!(
            "{arrays} grid(s) of {nlat} x {nlon} and {} copies of the degree-{} coefficients",
            1 + one_pass_sets(qs).max(1),
            model.lmax()
        ),
        synthesis_memory_bytes(model.lmax(), qs, nlat, nlon),
    )?;
    let prepared = prepare(model, request)?;
    let lmax = prepared.coeffs.lmax();
    let r_ref = model.reference_radius_m;
    let r = request.surface.radius_m(r_ref);
    let s = r_ref / r;
    let c = radial_factors(lmax, r_ref, r, &request.continuation)?;
    let radial = magnetic && needs_radial(qs, false);
    let horizontal = magnetic && needs_horizontal(qs, false);
    // One values pass: the scalar quantities in request order, then B_r.
    let factors: Vec<Option<Vec<f64>>> = qs
        .iter()
        .map(|&q| scalar_factors(q, prepared.scale, s, &c))
        .collect();
    let mut sets: Vec<Cow<'_, Coefficients>> = Vec::with_capacity(one_pass_sets(qs));
    for k in factors.iter().flatten() {
        sets.push(scaled_unless_unit(&prepared.coeffs, k));
    }
    if radial {
        sets.push(Cow::Owned(scaled(
            &prepared.coeffs,
            &magnetic_radial_factors(s, &c),
        )));
    }
    progress.stage(
        "synthesising",
        (sets.len() + usize::from(horizontal)) as u64,
    );
    let mut values = if sets.is_empty() {
        Vec::new()
    } else {
        plan.synthesise_many(&sets.iter().map(|c| c.as_ref()).collect::<Vec<_>>())?
    };
    progress.advance(sets.len() as u64);
    drop(sets);
    let zero = || Array2::<f64>::zeros((nlat, nlon));
    let br = if radial { values.pop() } else { None };
    let mut scalar_grids = values.into_iter();
    let mut vector: Option<(Array2<f64>, Array2<f64>, Array2<f64>)> = None;
    let mut out = Vec::with_capacity(qs.len());
    for (&q, k) in qs.iter().zip(&factors) {
        if k.is_some() {
            let grid = scalar_grids.next().expect("one grid per scalar quantity");
            out.push((q, grid));
            continue;
        }
        if vector.is_none() {
            let (bt, bl) = if horizontal {
                let k = magnetic_horizontal_factors(s, &c);
                let (dt, dl) = plan.synthesise_gradient(&scaled(&prepared.coeffs, &k))?;
                progress.advance(1);
                (dt.mapv(|v| -v), dl.mapv(|v| -v))
            } else {
                (zero(), zero())
            };
            vector = Some((br.clone().unwrap_or_else(zero), bt, bl));
        }
        let (br, bt, bl) = vector.as_ref().expect("set above");
        let mut field = Array2::<f64>::zeros((nlat, nlon));
        Zip::from(&mut field)
            .and(br)
            .and(bt)
            .and(bl)
            .for_each(|o, &br, &btheta, &blambda| {
                let v = FieldVector {
                    br,
                    btheta,
                    blambda,
                };
                *o = v.component(q, 0.0).unwrap_or(f64::NAN);
            });
        out.push((q, field));
    }
    Ok(out)
}

/// Evaluates every requested quantity at `points` (each at its own radius; `request.surface`
/// is not used). Returns one vector per quantity, in request order, each with one value per
/// point.
pub fn evaluate_at_points(
    model: &Coefficients,
    points: &[GeocentricPoint],
    request: &SynthesisRequest,
) -> Result<Vec<Vec<f64>>> {
    let prepared = prepare(model, request)?;
    let qs = &request.quantities;
    let lmax = prepared.coeffs.lmax();
    let r_ref = model.reference_radius_m;
    let mut out = vec![vec![f64::NAN; points.len()]; qs.len()];
    // Points at the same radius share one set of scaled coefficients.
    let mut by_radius: BTreeMap<u64, Vec<usize>> = BTreeMap::new();
    for (i, p) in points.iter().enumerate() {
        if !(p.radius_m.is_finite() && p.colatitude_rad.is_finite() && p.longitude_rad.is_finite())
        {
            return Err(Error::invalid(format!(
                "point {} has non-finite coordinates",
                i + 1
            )));
        }
        by_radius.entry(p.radius_m.to_bits()).or_default().push(i);
    }
    for (bits, idx) in by_radius {
        let r = f64::from_bits(bits);
        let s = r_ref / r;
        let c = radial_factors(lmax, r_ref, r, &request.continuation)?;
        let angles: Vec<(f64, f64)> = idx
            .iter()
            .map(|&i| (points[i].colatitude_rad, points[i].longitude_rad))
            .collect();
        let tilted = idx.iter().any(|&i| points[i].tilt_rad != 0.0);
        let mut vectors: Option<Vec<FieldVector>> = None;
        for (qi, &q) in qs.iter().enumerate() {
            if let Some(k) = scalar_factors(q, prepared.scale, s, &c) {
                let values = evaluate_point_values(&scaled(&prepared.coeffs, &k), &angles)?;
                for (&i, v) in idx.iter().zip(values) {
                    out[qi][i] = v;
                }
                continue;
            }
            if vectors.is_none() {
                let mut vs = vec![FieldVector::default(); idx.len()];
                if needs_radial(qs, tilted) {
                    let k = magnetic_radial_factors(s, &c);
                    for (v, p) in vs.iter_mut().zip(evaluate_point_values(
                        &scaled(&prepared.coeffs, &k),
                        &angles,
                    )?) {
                        v.br = p;
                    }
                }
                if needs_horizontal(qs, tilted) {
                    let k = magnetic_horizontal_factors(s, &c);
                    for (v, p) in vs
                        .iter_mut()
                        .zip(evaluate_points(&scaled(&prepared.coeffs, &k), &angles)?)
                    {
                        v.btheta = -p.d_theta;
                        v.blambda = -p.d_lambda_over_sin;
                    }
                }
                vectors = Some(vs);
            }
            let vs = vectors.as_ref().expect("set above");
            for (&i, v) in idx.iter().zip(vs) {
                out[qi][i] = v.component(q, points[i].tilt_rad).unwrap_or(f64::NAN);
            }
        }
    }
    Ok(out)
}

#[cfg(test)]
mod target_surface_tests {
    use super::TargetSurface;

    #[test]
    fn from_km_converts_and_names_the_options_it_refuses() {
        let s = |a, r| TargetSurface::from_km(a, r, "--alt", "--rad");
        assert_eq!(s(None, None).unwrap(), TargetSurface::ReferenceSphere);
        assert_eq!(
            s(Some(2.5), None).unwrap(),
            TargetSurface::Altitude { altitude_m: 2500.0 }
        );
        assert_eq!(
            s(None, Some(1737.4)).unwrap(),
            TargetSurface::Radius {
                radius_m: 1_737_400.0
            }
        );
        let both = s(Some(1.0), Some(1.0)).unwrap_err().to_string();
        assert!(both.contains("--alt") && both.contains("--rad"), "{both}");
        assert!(s(Some(f64::NAN), None)
            .unwrap_err()
            .to_string()
            .contains("--alt"));
        assert!(s(None, Some(-1.0))
            .unwrap_err()
            .to_string()
            .contains("--rad"));
    }
}
