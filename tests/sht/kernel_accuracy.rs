//! Every kernel path against the scalar reference (`kugel::sht::reference`), in the manner of an
//! FFT library that checks each of its algorithms against the naive transform: every path this
//! CPU runs × paired and unpaired rings × values and gradients × three sizes, for synthesis and
//! analysis.
//!
//! Source of the yardstick: the reference evaluates the same sums ring by ring and degree by
//! degree with the columns of `legendre::column_at_colatitude`, which are checked against
//! mpmath in `legendre.rs` (outside source) and round every step at least as finely as any
//! kernel (fused steps, the low part of cos θ included). The sums themselves are the quadrature
//! of docs/conventions.md §4 (common practice).
//!
//! Tolerance: see [`tolerance`]. Set `KUGEL_SHOW_ERRORS=1` to print every difference.

use kugel::coeffs::Coefficients;
use kugel::sht::grid::{Grid, GridKind};
use kugel::sht::legendre::recursion::{
    column_start, fill_coefficients, sectoral, sectoral_factors,
};
use kugel::sht::reference::{self, Quantity};
use kugel::sht::{GaussGrid, KernelPath, TransformPlan};
use ndarray::Array2;
use std::f64::consts::PI;

use crate::common::sample;

/// A ring set without equatorial symmetry and with an odd number of rings: `n` colatitudes
/// spread unevenly over (0, π), plus rings close to both poles. The weights are arbitrary
/// positive numbers: reference and kernels form the same weighted sum, so the comparison needs
/// no exactness of the quadrature (hence `max_exact_degree` = lmax, to allow the analysis).
fn asymmetric_rings(lmax: usize, n: usize, nlon: usize, polar: &[f64]) -> Grid {
    let mut theta: Vec<f64> = (0..n)
        .map(|j| {
            let s = (j as f64 + 0.37) / n as f64;
            PI * s
                * (1.0 + 0.15 * (1.0 - s))
                    .min(1.0 / s.max(1e-9) * (1.0 - 1e-9))
                    .min(1.0)
        })
        .collect();
    theta.extend(polar.iter().copied());
    theta.extend(polar.iter().map(|d| PI - 1.7 * d));
    theta.retain(|t| *t > 0.0 && *t < PI);
    theta.sort_by(f64::total_cmp);
    theta.dedup();
    if theta.len() % 2 == 0 {
        theta.pop();
    }
    let nlat = theta.len();
    Grid {
        kind: GridKind::Custom,
        weights: (0..nlat)
            .map(|j| 1.0 + 0.5 * ((j * 7) % 5) as f64 / 5.0)
            .collect(),
        colatitude_rad: theta,
        nlon,
        lon0_rad: 0.3,
        max_exact_degree: lmax,
    }
}

/// A symmetric ring set (θ and π − θ) with rings close to the poles, for sizes where a full
/// Gauss grid would make the reference slow.
fn symmetric_rings(lmax: usize, north: &[f64], nlon: usize) -> Grid {
    let mut theta: Vec<f64> = north.to_vec();
    theta.push(PI / 2.0);
    theta.extend(north.iter().rev().map(|t| PI - t));
    let nlat = theta.len();
    Grid {
        kind: GridKind::Custom,
        weights: vec![2.0 / nlat as f64; nlat],
        colatitude_rad: theta,
        nlon,
        lon0_rad: 0.0,
        max_exact_degree: lmax,
    }
}

/// Tolerance for max|kernel − reference| / max|reference| over a grid or coefficient set.
///
/// Both sides evaluate the same recursion with the same coefficients; on the fused paths the
/// columns agree to the bit, so what differs is the order of summation (even and odd l − m
/// apart, lanes in blocks, partial sums per degree in analysis) and, on a path without fused
/// multiply–add, one more rounding per step. Summation of ~L terms in another order differs by
/// a few ulp per term of the largest size, about ε·sqrt(L) relative to the result, and the
/// extra roundings of an unfused path are amplified like l² near the poles (see
/// `legendre.rs`). Measured on an AVX-512 machine: at most 71·ε·sqrt(L) for values,
/// λ-gradients and analysis, 144·ε·sqrt(L) for ∂/∂θ (with the near-pole allowance of
/// [`rel_grid_derivative`]). The bound is 200·ε·sqrt(L) (4.4e-14·sqrt(L)). A drift of one ulp
/// per recursion step instead accumulates coherently over the column, like ε·L away from the
/// poles and ε·L² near them: a_lm enlarged by one ulp in the kernels fails this test already
/// at L = 40, and dropping the low part of cos θ from the kernels' step fails it at L = 300
/// (only just: ∂/∂θ near the poles, 7.75e-13 against 7.69e-13 allowed).
fn tolerance(lmax: usize) -> f64 {
    200.0 * f64::EPSILON * (lmax.max(1) as f64).sqrt()
}

fn rel_grid(a: &Array2<f64>, reference: &Array2<f64>) -> f64 {
    let scale = reference.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let diff = a
        .iter()
        .zip(reference)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
    diff / scale
}

/// As [`rel_grid`], with the difference on rows within sin θ < 0.01 of a pole divided by
/// 0.01/sin θ: the kernels' ∂/∂θ comes from the two-term relation (l cos θ P̄_lm − f_lm
/// P̄_{l−1,m})/sin θ (Holmes & Featherstone 2002, eq. 30), a difference of terms of size l·P̄
/// divided by sin θ, whose rounding grows like 1/sin θ towards the poles; the reference's
/// three-column relation has no such division.
fn rel_grid_derivative(a: &Array2<f64>, reference: &Array2<f64>, grid: &Grid) -> f64 {
    let scale = reference.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut worst: f64 = 0.0;
    for (j, theta) in grid.colatitude_rad.iter().enumerate() {
        let allowance = (0.01 / theta.sin().abs()).max(1.0);
        let diff = a
            .row(j)
            .iter()
            .zip(reference.row(j))
            .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
        worst = worst.max(diff / allowance);
    }
    worst / scale
}

fn rel_coeffs(a: &Coefficients, reference: &Coefficients) -> f64 {
    let pairs = || {
        a.c_packed()
            .iter()
            .zip(reference.c_packed())
            .chain(a.s_packed().iter().zip(reference.s_packed()))
    };
    let scale = pairs().fold(0.0f64, |m, (_, y)| m.max(y.abs()));
    pairs().fold(0.0f64, |m, (x, y)| m.max((x - y).abs())) / scale
}

/// Column starts of order m on the grid's rings that come after extended-exponent steps, as
/// (degree of the start − m): the regime where a kernel joins a lane deep inside the column.
fn late_start_depths(lmax: usize, grid: &Grid) -> Vec<usize> {
    let factors = sectoral_factors(lmax);
    let (mut a, mut b) = (vec![0.0; lmax + 2], vec![0.0; lmax + 2]);
    let mut depths = Vec::new();
    for (m, &c_m) in factors.iter().enumerate() {
        fill_coefficients(m, lmax, &mut a, &mut b);
        for &theta in &grid.colatitude_rad {
            let sv = sectoral(m, c_m, theta.sin().abs());
            if sv.k == 0 {
                continue;
            }
            if let Some(start) = column_start(m, lmax, theta.cos(), sv, &a, &b) {
                depths.push(start.l - m);
            }
        }
    }
    depths
}

struct Case {
    name: &'static str,
    lmax: usize,
    grid: Grid,
    paired: bool,
}

fn cases() -> Vec<Case> {
    let mut out = Vec::new();
    // L = 40: the small size with a Gauss grid (paired; rotated and with nlon > 2L + 2)
    let mut gauss40 = GaussGrid::new(40);
    gauss40.lon0_rad = 0.3;
    gauss40.nlon = 90;
    out.push(Case {
        name: "L=40 Gauss",
        lmax: 40,
        grid: gauss40,
        paired: true,
    });
    out.push(Case {
        name: "L=40 asymmetric",
        lmax: 40,
        grid: asymmetric_rings(40, 41, 90, &[2e-3]),
        paired: false,
    });
    // L = 300: Gauss rings reach θ ≈ 0.008; the asymmetric set adds rings at 1e-3 and 4e-3
    out.push(Case {
        name: "L=300 Gauss",
        lmax: 300,
        grid: GaussGrid::new(300),
        paired: true,
    });
    out.push(Case {
        name: "L=300 asymmetric",
        lmax: 300,
        grid: asymmetric_rings(300, 151, 602, &[1e-3, 4e-3]),
        paired: false,
    });
    // L = 1200 on few rings, most of them near the poles: large orders start their columns
    // from extended exponents tens to hundreds of degrees after m (asserted below)
    let north = [1.5e-3, 6e-3, 0.02, 0.045, 0.08, 0.15, 0.4, 0.9, 1.3];
    out.push(Case {
        name: "L=1200 polar, symmetric",
        lmax: 1200,
        grid: symmetric_rings(1200, &north, 2402),
        paired: true,
    });
    out.push(Case {
        name: "L=1200 polar, asymmetric",
        lmax: 1200,
        grid: asymmetric_rings(1200, 9, 2402, &north[..6]),
        paired: false,
    });
    out
}

#[test]
fn every_kernel_path_matches_the_scalar_reference() {
    let paths = KernelPath::available();
    assert!(paths.contains(&KernelPath::Portable));
    let show = std::env::var_os("KUGEL_SHOW_ERRORS").is_some();
    let mut worst: f64 = 0.0;
    for case in cases() {
        let Case {
            name,
            lmax,
            grid,
            paired,
        } = case;
        let depths = late_start_depths(lmax, &grid);
        let deepest = depths.iter().copied().max().unwrap_or(0);
        match lmax {
            // a plain double holds every sectoral value at L = 40: no late starts at all
            40 => assert_eq!(deepest, 0, "{name}"),
            300 => assert!(
                deepest > 1,
                "{name}: late starts expected, deepest {deepest}"
            ),
            _ => assert!(
                deepest > 100 && depths.iter().filter(|d| **d > 20).count() > 100,
                "{name}: deep column starts expected, deepest {deepest}"
            ),
        }
        let c = sample(lmax, lmax as u64 + 5);
        let values_ref = reference::synthesise(&c, &grid, Quantity::Value);
        let d_theta_ref = reference::synthesise(&c, &grid, Quantity::DTheta);
        let d_lambda_ref = reference::synthesise(&c, &grid, Quantity::DLambdaOverSin);
        let analysis_ref = reference::analyse(lmax, &grid, &values_ref).unwrap();
        let tol = tolerance(lmax);
        for &path in &paths {
            let plan = TransformPlan::new(lmax, &grid)
                .unwrap()
                .with_kernel_path(path)
                .unwrap();
            assert_eq!(plan.is_symmetric(), paired, "{name}");
            assert_eq!(plan.kernel_path(), path);
            let values = plan.synthesise(&c).unwrap();
            let (d_theta, d_lambda) = plan.synthesise_gradient(&c).unwrap();
            let analysis = plan.analyse(&values_ref).unwrap();
            let errors = [
                ("values", rel_grid(&values, &values_ref)),
                ("∂/∂θ", rel_grid_derivative(&d_theta, &d_theta_ref, &grid)),
                ("(1/sin θ) ∂/∂λ", rel_grid(&d_lambda, &d_lambda_ref)),
                ("analysis", rel_coeffs(&analysis, &analysis_ref)),
            ];
            for (what, err) in errors {
                worst = worst.max(err / (f64::EPSILON * (lmax as f64).sqrt()));
                if show {
                    eprintln!(
                        "{name:26} {:9} {what:16} {err:.2e} = {:5.1} ε sqrt(L)",
                        path.name(),
                        err / (f64::EPSILON * (lmax as f64).sqrt())
                    );
                }
                assert!(
                    err < tol,
                    "{name}, {} kernels, {what}: {err:e} exceeds {tol:e}",
                    path.name()
                );
            }
        }
    }
    eprintln!("largest difference: {worst:.1} ε sqrt(L)");
}

/// A plan's table of column starts (`kernel::column_starts`, found once when the plan is
/// built) must give the same doubles as finding the starts in every transform: synthesis,
/// gradients, analysis of the whole grid and of a ring range, on every path and ring layout,
/// including grids of several analysis chunks' worth of blocks and grids with pole rows.
#[test]
fn the_column_start_table_changes_no_bit() {
    let mut grids: Vec<(String, usize, Grid)> = cases()
        .into_iter()
        .map(|c| (c.name.to_string(), c.lmax, c.grid))
        .collect();
    // an equiangular grid with both poles: gradients leave the pole rows out of the lanes
    let eq = kugel::sht::equiangular::regular_grid_by_step(2.0).unwrap();
    assert!(eq.colatitude_rad[0] == 0.0, "the grid holds a pole row");
    grids.push(("2° grid with poles".to_string(), 44, eq));
    for (name, lmax, grid) in grids {
        let c = sample(lmax, lmax as u64 + 11);
        for path in KernelPath::available() {
            let with = TransformPlan::new(lmax, &grid)
                .unwrap()
                .with_kernel_path(path)
                .unwrap();
            assert!(with.has_column_start_table(), "{name}");
            let without = TransformPlan::new(lmax, &grid)
                .unwrap()
                .with_kernel_path(path)
                .unwrap()
                .without_column_start_table();
            assert!(!without.has_column_start_table());
            let bits = |a: &Array2<f64>| a.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
            let coeff_bits = |c: &Coefficients| {
                c.c_packed()
                    .iter()
                    .chain(c.s_packed())
                    .map(|v| v.to_bits())
                    .collect::<Vec<_>>()
            };
            let v1 = with.synthesise(&c).unwrap();
            let v2 = without.synthesise(&c).unwrap();
            assert_eq!(bits(&v1), bits(&v2), "{name} {} values", path.name());
            let (t1, l1) = with.synthesise_gradient(&c).unwrap();
            let (t2, l2) = without.synthesise_gradient(&c).unwrap();
            assert_eq!(bits(&t1), bits(&t2), "{name} {} ∂/∂θ", path.name());
            assert_eq!(bits(&l1), bits(&l2), "{name} {} ∂/∂λ", path.name());
            if lmax <= grid.max_exact_degree {
                let a1 = with.analyse(&v1).unwrap();
                let a2 = without.analyse(&v1).unwrap();
                assert_eq!(
                    coeff_bits(&a1),
                    coeff_bits(&a2),
                    "{name} {} analysis",
                    path.name()
                );
                let rows = 1..grid.nlat() / 2 + 1;
                let r1 = with.analyse_rings(&v1, rows.clone()).unwrap();
                let r2 = without.analyse_rings(&v1, rows).unwrap();
                assert_eq!(
                    coeff_bits(&r1),
                    coeff_bits(&r2),
                    "{name} {} rings",
                    path.name()
                );
            }
        }
    }
}
