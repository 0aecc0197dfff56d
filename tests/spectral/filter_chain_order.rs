//! Filters chain: applying every permutation of a chain gives the same coefficients
//! (the combined weight is a product, CONVENTIONS.md §7), and sigmas are scaled alongside.

use kugel::spectral::filter::FilterChain;
use kugel::{Coefficients, Normalization};

fn sample(lmax: usize) -> Coefficients {
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    c.reference_radius_m = 6_371_000.0;
    for l in 0..=lmax {
        for m in 0..=l {
            let v = ((l * 31 + m * 17) % 23) as f64 - 11.0;
            c.set(l, m, v * 1e-6 / (1.0 + l as f64), -v * 3e-7);
        }
    }
    let n = c.len();
    c.set_sigmas(vec![1e-8; n], vec![2e-8; n]).unwrap();
    c
}

/// All permutations of 0..n (Heap's algorithm).
fn permutations(n: usize) -> Vec<Vec<usize>> {
    fn heap(k: usize, a: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if k == 1 {
            out.push(a.clone());
            return;
        }
        for i in 0..k {
            heap(k - 1, a, out);
            let j = if k % 2 == 0 { i } else { 0 };
            a.swap(j, k - 1);
        }
    }
    let mut a: Vec<usize> = (0..n).collect();
    let mut out = Vec::new();
    heap(n, &mut a, &mut out);
    out
}

#[test]
fn every_order_of_a_chain_gives_the_same_result() {
    let dir = tempfile::tempdir().unwrap();
    let signal = dir.path().join("signal.csv");
    let rows: String = (0..=120)
        .map(|l| format!("{l},{:e}\n", 1e-10 / (1.0 + (l * l) as f64)))
        .collect();
    std::fs::write(&signal, format!("degree,degree_variance\n{rows}")).unwrap();
    let specs = [
        "gauss:350".to_string(),
        "lowpass:60-100".to_string(),
        "highpass:2-6".to_string(),
        "bandpass:1-3-80-110".to_string(),
        "butterworth:45,3".to_string(),
        format!("wiener:{},noise=1e-15", signal.display()),
    ];
    let input = sample(120);
    let mut reference: Option<Coefficients> = None;
    let perms = permutations(specs.len());
    assert_eq!(perms.len(), 720);
    for p in &perms {
        let ordered: Vec<String> = p.iter().map(|&i| specs[i].clone()).collect();
        let chain = FilterChain::from_specs(&ordered).unwrap();
        let mut out = input.clone();
        chain.apply(&mut out).unwrap();
        match &reference {
            None => reference = Some(out),
            Some(r) => {
                // products of the same six factors in another order: a few ulps apart
                for (a, b) in r.c_packed().iter().zip(out.c_packed()) {
                    assert!(
                        (a - b).abs() <= 8.0 * f64::EPSILON * a.abs(),
                        "{ordered:?}: {a} vs {b}"
                    );
                }
                let (rs, _) = r.sigmas().unwrap();
                let (os, _) = out.sigmas().unwrap();
                for (a, b) in rs.iter().zip(os) {
                    assert!((a - b).abs() <= 8.0 * f64::EPSILON * a.abs());
                }
            }
        }
    }
    // the chain did something at every stage: degree 0 cut by the high-pass, degree 120 by
    // the low-pass, and in between the product of all six weights
    let r = reference.unwrap();
    assert_eq!(r.c(0, 0), 0.0);
    assert_eq!(r.c(120, 7), 0.0);
    let chain = FilterChain::from_specs(&specs).unwrap();
    let w = chain.weights(120, 6_371_000.0).unwrap();
    assert!(w[30] > 0.0 && w[30] < 1.0);
    assert!(
        (r.c(30, 4) - input.c(30, 4) * w[30]).abs() <= 4.0 * f64::EPSILON * input.c(30, 4).abs()
    );
    assert!((r.sigma(30, 4).unwrap().0 - 1e-8 * w[30]).abs() < 1e-22);
}

#[test]
fn chained_spec_equals_repeated_options() {
    let joined = FilterChain::parse("gauss:200+butterworth:20,2").unwrap();
    let repeated =
        FilterChain::from_specs(&["gauss:200".to_string(), "butterworth:20,2".to_string()])
            .unwrap();
    assert_eq!(joined, repeated);
    assert_eq!(joined.describe(), "gauss:200+butterworth:20,2");
}
