//! Several fields in one pass (`TransformPlan::synthesise_many`, `synthesise_gradient_many`,
//! `analyse_many`) against the same fields transformed one at a time, on every kernel path this
//! CPU runs, paired and unpaired rings, and a size with late column starts.
//!
//! Source: the one-field transforms are the yardstick; they are checked against the scalar
//! reference in `kernel_accuracy.rs` (which is checked against mpmath columns and the
//! quadrature of docs/conventions.md §4). The many-field kernels compute each P̄_lm with the
//! same operations and keep every field's sums in the same order as the one-field kernels, so
//! the results must be bit-identical (common practice for a batched kernel: batching changes
//! the schedule, not the arithmetic); a single-ulp difference fails these tests.

use kugel::coeffs::Coefficients;
use kugel::sht::grid::{Grid, GridKind};
use kugel::sht::{GaussGrid, KernelPath, TransformPlan};
use ndarray::Array2;

use crate::common::sample;

/// An unpaired ring set with rings near both poles (odd count, not symmetric).
fn unpaired(lmax: usize) -> Grid {
    let n = lmax + 6;
    let theta: Vec<f64> = (0..n)
        .map(|j| {
            let s = (j as f64 + 0.41) / (n as f64 + 0.3);
            std::f64::consts::PI * s * s.sqrt()
        })
        .collect();
    Grid {
        kind: GridKind::Custom,
        weights: (0..n).map(|j| 1.0 + 0.1 * (j % 3) as f64).collect(),
        colatitude_rad: theta,
        nlon: 2 * lmax + 3,
        lon0_rad: 0.2,
        max_exact_degree: lmax,
    }
}

fn grids() -> Vec<(&'static str, usize, Grid)> {
    vec![
        ("L=37 Gauss", 37, GaussGrid::new(37)),
        ("L=300 Gauss", 300, GaussGrid::new(300)),
        ("L=90 unpaired", 90, unpaired(90)),
    ]
}

fn same_bits(a: &Array2<f64>, b: &Array2<f64>) -> bool {
    a.dim() == b.dim() && a.iter().zip(b).all(|(x, y)| x.to_bits() == y.to_bits())
}

fn same_coefficient_bits(a: &Coefficients, b: &Coefficients) -> bool {
    let bits = |c: &Coefficients| {
        c.c_packed()
            .iter()
            .chain(c.s_packed())
            .map(|v| v.to_bits())
            .collect::<Vec<_>>()
    };
    bits(a) == bits(b)
}

#[test]
fn many_fields_equal_one_field_at_a_time_to_the_bit() {
    for (name, lmax, grid) in grids() {
        // three different sets, one of them of another degree (zero-padded by the plan)
        let sets = [
            sample(lmax, 11),
            sample(lmax, 12),
            sample(lmax.saturating_sub(5), 13),
        ];
        let refs: Vec<&Coefficients> = sets.iter().collect();
        for path in KernelPath::available() {
            let plan = TransformPlan::new(lmax, &grid)
                .unwrap()
                .with_kernel_path(path)
                .unwrap();
            let what = format!("{name}, {} kernels", path.name());

            let many = plan.synthesise_many(&refs).unwrap();
            assert_eq!(many.len(), sets.len());
            for (k, c) in sets.iter().enumerate() {
                let one = plan.synthesise(c).unwrap();
                assert!(same_bits(&many[k], &one), "{what}: values of field {k}");
            }

            let many = plan.synthesise_gradient_many(&refs).unwrap();
            for (k, c) in sets.iter().enumerate() {
                let (dt, dl) = plan.synthesise_gradient(c).unwrap();
                assert!(same_bits(&many[k].0, &dt), "{what}: ∂/∂θ of field {k}");
                assert!(same_bits(&many[k].1, &dl), "{what}: ∂/∂λ of field {k}");
            }

            let fields: Vec<Array2<f64>> =
                sets.iter().map(|c| plan.synthesise(c).unwrap()).collect();
            let field_refs: Vec<&Array2<f64>> = fields.iter().collect();
            let many = plan.analyse_many(&field_refs).unwrap();
            for (k, f) in fields.iter().enumerate() {
                let one = plan.analyse(f).unwrap();
                assert!(
                    same_coefficient_bits(&many[k], &one),
                    "{what}: analysis of field {k}"
                );
            }
        }
    }
}

#[test]
fn many_fields_with_none_or_a_bad_one() {
    let grid = GaussGrid::new(20);
    let plan = TransformPlan::new(20, &grid).unwrap();
    assert!(plan.synthesise_many(&[]).unwrap().is_empty());
    assert!(plan.analyse_many(&[]).unwrap().is_empty());
    let good = plan.synthesise(&sample(20, 1)).unwrap();
    let mut bad = good.clone();
    bad[[3, 4]] = f64::NAN;
    let msg = plan.analyse_many(&[&good, &bad]).unwrap_err().to_string();
    assert!(
        msg.contains("field 2") && msg.contains("row 3, column 4"),
        "{msg}"
    );
    let wrong = Array2::<f64>::zeros((5, 7));
    let msg = plan.analyse_many(&[&good, &wrong]).unwrap_err().to_string();
    assert!(msg.contains("field 2"), "{msg}");
}
