//! Single harmonics under each gravity quantity against the CONVENTIONS.md §6 factors and a
//! closed-form Legendre function; finite-difference consistency of the radial derivatives;
//! exact continuation; normal-field removal against the ellipsoid's own J_2n series.

use kugel::field::{
    evaluate_at_points, synthesize_on_grid, Ellipsoid, GeocentricPoint, NormalField, Quantity,
    SynthesisRequest, TargetSurface,
};
use kugel::sht::GaussGrid;
use kugel::{Coefficients, Normalization};

const R: f64 = 6_378_136.3;
const GM: f64 = 3.986_004_415e14;
const C32: f64 = 2.5e-6;

/// A model holding only C̄_32.
fn single_harmonic() -> Coefficients {
    let mut c = Coefficients::zeros(5, Normalization::Geodesy);
    c.set(3, 2, C32, 0.0);
    c.reference_radius_m = R;
    c.gm_m3_s2 = Some(GM);
    c
}

/// P̄_32(cos θ) cos 2λ from the closed form P_3^2(x) = 15 x (1 − x²) (any text, e.g.
/// Abramowitz & Stegun 8.6; no Condon–Shortley phase) times N = sqrt(2·7·1!/5!).
fn y32(theta: f64, lam: f64) -> f64 {
    let x = theta.cos();
    (2.0 * 7.0 / 120.0f64).sqrt() * 15.0 * x * (1.0 - x * x) * (2.0 * lam).cos()
}

fn eval(model: &Coefficients, q: Quantity, p: GeocentricPoint) -> f64 {
    evaluate_at_points(model, &[p], &SynthesisRequest::new(vec![q])).unwrap()[0][0]
}

#[test]
fn single_harmonic_under_each_quantity() {
    // CONVENTIONS.md §6 (Heiskanen & Moritz 1967, ch. 2): k_l for l = 3 with s = R/r.
    // 1e-12 relative: a handful of roundings.
    let model = single_harmonic();
    for alt in [0.0, 250e3, 20_000e3] {
        let r = R + alt;
        let s = R / r;
        for (lat, lon) in [(0.0, 0.0), (37.0, 21.0), (-61.0, 200.0), (80.0, 300.0)] {
            let p = GeocentricPoint::from_degrees(lat, lon, r);
            let y = C32 * y32(p.colatitude_rad, p.longitude_rad);
            let cases = [
                (Quantity::Potential, GM / R * s.powi(4)),
                (Quantity::Geoid, R * s.powi(4)),
                (
                    Quantity::GravityDisturbance,
                    GM / (R * R) * 4.0 * s.powi(5) * 1e5,
                ),
                (
                    Quantity::GravityAnomaly,
                    GM / (R * R) * 2.0 * s.powi(5) * 1e5,
                ),
                (
                    Quantity::RadialGradient,
                    GM / R.powi(3) * 20.0 * s.powi(6) * 1e9,
                ),
                (Quantity::Value, s.powi(4)),
            ];
            for (q, k) in cases {
                let got = eval(&model, q, p);
                let want = k * y;
                assert!(
                    (got - want).abs() <= 1e-12 * (k * C32).abs(),
                    "{q} at ({lat},{lon}) alt {alt}: {got} vs {want}"
                );
            }
        }
    }
}

#[test]
fn radial_derivatives_agree_with_finite_differences() {
    // Definitions (Heiskanen & Moritz 1967, §2-12/2-14): δg = −∂T/∂r, Δg = δg − 2T/r,
    // T_rr = ∂²T/∂r². Central differences with a 10 m step: truncation error ~ (h/r)² ≈ 1e-12
    // relative, rounding ~ 1e-16·T/h; tolerance 1e-6 relative of the quantity's scale.
    let model = single_harmonic();
    let h = 10.0;
    let (lat, lon) = (28.0, 45.0);
    let r = R + 3_000.0;
    let t = |rr: f64| {
        eval(
            &model,
            Quantity::Potential,
            GeocentricPoint::from_degrees(lat, lon, rr),
        )
    };
    let dg = |rr: f64| {
        eval(
            &model,
            Quantity::GravityDisturbance,
            GeocentricPoint::from_degrees(lat, lon, rr),
        ) * 1e-5
    };
    let p = GeocentricPoint::from_degrees(lat, lon, r);
    let fd_dg = -(t(r + h) - t(r - h)) / (2.0 * h);
    let got_dg = eval(&model, Quantity::GravityDisturbance, p) * 1e-5;
    assert!(
        (got_dg - fd_dg).abs() < 1e-6 * got_dg.abs(),
        "{got_dg} {fd_dg}"
    );
    let got_anom = eval(&model, Quantity::GravityAnomaly, p) * 1e-5;
    let want_anom = got_dg - 2.0 * t(r) / r;
    assert!(
        (got_anom - want_anom).abs() < 1e-12 * got_dg.abs(),
        "{got_anom} {want_anom}"
    );
    let fd_trr = -(dg(r + h) - dg(r - h)) / (2.0 * h);
    let got_trr = eval(&model, Quantity::RadialGradient, p) * 1e-9;
    assert!(
        (got_trr - fd_trr).abs() < 1e-6 * got_trr.abs(),
        "{got_trr} {fd_trr}"
    );
}

#[test]
fn upward_continuation_of_single_harmonics_is_exact() {
    // common practice: a harmonic of degree l continues from R to r as (R/r)^{l+1}.
    let lmax = 12;
    let grid = GaussGrid::new(lmax);
    let mut model = Coefficients::zeros(lmax, Normalization::Geodesy);
    model.reference_radius_m = 1_737_400.0;
    model.units = "m".into();
    for (l, m) in [(0, 0), (1, 1), (5, 0), (7, 4), (12, 12)] {
        model.set(l, m, 1.0, if m > 0 { 0.5 } else { 0.0 });
    }
    let at = |surface| {
        let mut req = SynthesisRequest::new(vec![Quantity::Value]);
        req.surface = surface;
        synthesize_on_grid(&model, &grid, &req).unwrap().remove(0).1
    };
    let plan = kugel::sht::TransformPlan::new(lmax, &grid).unwrap();
    let r = 1_737_400.0 + 100e3;
    let high = at(TargetSurface::Radius { radius_m: r });
    let back = plan.analyse(&high).unwrap();
    for (l, m, c, s) in model.iter() {
        let k = (1_737_400.0f64 / r).powi(l as i32 + 1);
        assert!((back.c(l, m) - c * k).abs() < 1e-12, "C {l} {m}");
        assert!((back.s(l, m) - s * k).abs() < 1e-12, "S {l} {m}");
    }
    let also = at(TargetSurface::Altitude { altitude_m: 100e3 });
    assert!((&also - &high).iter().all(|d| d.abs() < 1e-15));
    // Downward continuation within the cap works and is exact too; far below it is refused.
    let mut req = SynthesisRequest::new(vec![Quantity::Value]);
    req.surface = TargetSurface::Radius {
        radius_m: 1_700_000.0,
    };
    assert!(synthesize_on_grid(&model, &grid, &req).is_ok());
    req.surface = TargetSurface::Radius {
        radius_m: 600_000.0,
    };
    let err = synthesize_on_grid(&model, &grid, &req)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("downward continuation") && err.contains("amplifies"),
        "{err}"
    );
}

/// U/GM·r = 1 − Σ J_2n (a/r)^{2n} P_2n(cos θ), Legendre polynomials by Bonnet's recursion
/// (Heiskanen & Moritz eq. 2-92's series; any text for the recursion).
fn normal_potential(e: &Ellipsoid, r: f64, theta: f64) -> f64 {
    let x = theta.cos();
    let (mut p0, mut p1) = (1.0, x);
    let mut sum = 1.0;
    for l in 2..=30usize {
        let p2 = ((2 * l - 1) as f64 * x * p1 - (l - 1) as f64 * p0) / l as f64;
        if l % 2 == 0 {
            sum -= e.j2n(l / 2) * (e.semi_major_axis_m / r).powi(l as i32) * p2;
        }
        p0 = p1;
        p1 = p2;
    }
    e.gm_m3_s2 / r * sum
}

#[test]
fn normal_field_removal_with_different_radius_and_gm() {
    // The model is the GRS80 normal potential plus one harmonic, expressed with a reference
    // radius and GM of its own. Its potential (normal field none) must equal the ellipsoid's
    // J_2n series plus the harmonic; with grs80 removed only the harmonic may remain.
    // Tolerance 1e-7 m² s⁻² against a potential of 6e7 m² s⁻²: ~2e-15 relative, a few ulps.
    let e = Ellipsoid::grs80();
    let lmax = 20;
    let mut model = Coefficients::zeros(lmax, Normalization::Geodesy);
    model.reference_radius_m = R;
    model.gm_m3_s2 = Some(GM);
    for (l, c) in NormalField::Ellipsoid(e.clone()).zonals_for(lmax, R, GM) {
        model.set(l, 0, c, 0.0);
    }
    let c32_before = model.c(3, 2);
    model.set(3, 2, c32_before + C32, 0.0);
    for (lat, lon) in [(0.0, 0.0), (52.0, 13.0), (-89.0, 100.0)] {
        let p = GeocentricPoint::from_geodetic(&e, lat, lon, 500.0);
        let total = eval(&model, Quantity::Potential, p);
        let harmonic =
            GM / R * (R / p.radius_m).powi(4) * C32 * y32(p.colatitude_rad, p.longitude_rad);
        let want_total = normal_potential(&e, p.radius_m, p.colatitude_rad) + harmonic;
        assert!((total - want_total).abs() < 1e-7, "{total} vs {want_total}");
        let mut req = SynthesisRequest::new(vec![Quantity::Potential]);
        req.normal_field = NormalField::parse("grs80").unwrap();
        let t = evaluate_at_points(&model, &[p], &req).unwrap()[0][0];
        assert!((t - harmonic).abs() < 1e-7, "{t} vs {harmonic}");
    }
}

#[test]
fn filter_is_applied_before_the_quantity_factors() {
    // A degree-8 harmonic added to C̄_32 is removed by a low-pass that ends at degree 6, so
    // the geoid equals that of C̄_32 alone (the factors of CONVENTIONS.md §6 as above).
    let mut model = single_harmonic().resized(10);
    model.set(8, 5, 1e-6, -2e-6);
    let chain = kugel::spectral::filter::FilterChain::parse("lowpass:4-6").unwrap();
    let mut req = SynthesisRequest::new(vec![Quantity::Geoid]);
    req.filter = Some(&chain);
    let p = GeocentricPoint::from_degrees(33.0, 71.0, R);
    let got = evaluate_at_points(&model, &[p], &req).unwrap()[0][0];
    let want = R * C32 * y32(p.colatitude_rad, p.longitude_rad);
    assert!((got - want).abs() < 1e-12 * R * C32, "{got} vs {want}");
    let unfiltered = eval(&model, Quantity::Geoid, p);
    assert!(
        (unfiltered - want).abs() > 1e-3,
        "the degree-8 term must matter unfiltered"
    );
}

#[test]
fn coarse_grids_sample_a_high_degree_model_exactly() {
    // A degree-30 model on a 12-longitude grid: values at the nodes must equal point
    // evaluation (the reference evaluator), not a truncated field. 1e-12 relative.
    let lmax = 30;
    let mut model = Coefficients::zeros(lmax, Normalization::Geodesy);
    model.reference_radius_m = 1.0e6;
    model.units = "m".into();
    model.set(30, 17, 1.0, -0.5);
    model.set(2, 1, 0.25, 0.0);
    let mut grid = GaussGrid::new(5);
    grid.nlon = 12;
    let out = synthesize_on_grid(&model, &grid, &SynthesisRequest::new(vec![Quantity::Value]))
        .unwrap()
        .remove(0)
        .1;
    assert_eq!(out.dim(), (grid.nlat(), 12));
    let pts: Vec<(f64, f64)> = grid
        .colatitude_rad
        .iter()
        .flat_map(|&t| (0..12).map(move |k| (t, std::f64::consts::PI * k as f64 / 6.0)))
        .collect();
    let want = kugel::sht::evaluate_points(&model, &pts).unwrap();
    for (v, w) in out.iter().zip(&want) {
        assert!((v - w.value).abs() < 1e-12 * 4.0, "{v} vs {}", w.value);
    }
}
