//! The Lowes–Mauersberger spectrum is the mean square of the magnetic field B = −∇V over the
//! sphere of radius r (Lowes 1966). Checked here against that definition directly: B is
//! synthesised on a Gauss grid at radius r from a random Schmidt model and |B|² is averaged by
//! quadrature. |B|² is band-limited to 2L (B_r² plainly; |∇_s f|² = ½Δ(f²) − fΔf), so the
//! L+1-node Gauss–Legendre rule is exact (CONVENTIONS.md §4).

use crate::support::random_model;
use kugel::sht::{GaussGrid, TransformPlan};
use kugel::spectral::spectrum::lowes_spectrum;
use kugel::Normalization;

#[test]
fn lowes_power_is_the_mean_square_field_at_radius() {
    let lmax = 24;
    let a = 6_371_200.0;
    let r = 6_371_200.0 + 450e3;
    let mut model = random_model(lmax, 17, |l| {
        if l == 0 {
            0.0
        } else {
            1e8 * 0.3f64.powi(l as i32)
        }
    })
    .converted(Normalization::Schmidt, false)
    .unwrap();
    model.units = "nT".into();
    model.reference_radius_m = a;

    // V = a Σ (a/r)^{l+1} g Y  ⇒  B_r = Σ (l+1)(a/r)^{l+2} g Y,
    // B_θ = −Σ (a/r)^{l+2} g ∂Y/∂θ, B_λ = −Σ (a/r)^{l+2} g (1/sin θ) ∂Y/∂λ.
    let mut q = model.clone();
    q.scale_by_degree(|l| (a / r).powi(l as i32 + 2));
    let mut radial = q.clone();
    radial.scale_by_degree(|l| (l + 1) as f64);
    let grid = GaussGrid::new(lmax);
    let plan = TransformPlan::new(lmax, &grid).unwrap();
    let b_r = plan.synthesise(&radial).unwrap();
    let (d_theta, d_lambda) = plan.synthesise_gradient(&q).unwrap();
    let nlon = grid.nlon as f64;
    let mut mean_square = 0.0;
    for j in 0..grid.nlat() {
        let ring: f64 = (0..grid.nlon)
            .map(|k| b_r[[j, k]].powi(2) + d_theta[[j, k]].powi(2) + d_lambda[[j, k]].powi(2))
            .sum();
        mean_square += 0.5 * grid.weights[j] * ring / nlon;
    }
    let total: f64 = lowes_spectrum(&model, r).unwrap().power.iter().sum();
    assert!(
        (mean_square / total - 1.0).abs() < 1e-11,
        "{mean_square} vs {total}"
    );
}
