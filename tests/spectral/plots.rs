//! SVG plots: well-formed XML (checked by a small independent parser in the test support),
//! a viewBox, the expected series, labels with units, the km axis and superscript tick labels.

use crate::support::xml;

use crate::support::{correlated_partner, random_model};
use kugel::report::plots::{comparison_svg, spectrum_svg};
use kugel::spectral::{CompareOptions, Comparison, Spectrum, SpectrumOptions};
use xml::check_well_formed;

fn variance(l: usize) -> f64 {
    if l < 2 {
        0.0
    } else {
        1e-10 * (l as f64).powf(-4.0)
    }
}

fn gravity_like(seed: u64) -> kugel::Coefficients {
    let mut c = random_model(180, seed, variance);
    c.reference_radius_m = 6_378_137.0;
    c.gm_m3_s2 = Some(3.986_004_418e14);
    c
}

#[test]
fn spectrum_plot_is_well_formed_and_complete() {
    let mut model = gravity_like(1);
    let n = kugel::coeffs::packed_len(180);
    model.set_sigmas(vec![1e-12; n], vec![1e-12; n]).unwrap();
    let opts = SpectrumOptions {
        fit_range: Some((10, 150)),
        ..Default::default()
    };
    let s = Spectrum::compute(&model, &opts).unwrap();
    let svg = spectrum_svg(&s, "Test <model> & spectrum");
    let elements = check_well_formed(&svg).unwrap_or_else(|e| panic!("{e}\n{svg}"));
    assert_eq!(elements[0], "svg");
    assert!(svg.contains(r#"viewBox="0 0 820 560""#));
    assert!(svg.contains("Test &lt;model&gt; &amp; spectrum"));
    for class in [
        "degree-variance",
        "confidence-band",
        "power-law",
        "error-degree-variance",
    ] {
        assert!(
            svg.contains(&format!(r#"class="{class}""#)),
            "missing {class}"
        );
    }
    for label in [
        "spherical-harmonic degree l",
        "half-wavelength πR/l (km)",
        "degree variance S_l",
        "95% χ² band",
    ] {
        assert!(svg.contains(label), "missing label {label}");
    }
    // decade labels as 10 with superscript exponents, km labels on the top axis
    assert!(svg.contains(">10⁻¹²<"), "no 10⁻¹² tick label");
    assert!(svg.contains(">1000</text>") && svg.contains(">100</text>"));
    assert!(elements.iter().filter(|e| *e == "polyline").count() >= 3);
}

#[test]
fn lowes_plot_names_the_radius_and_units() {
    let mut model = random_model(13, 3, |l| if l == 0 { 0.0 } else { 1e8 / (l * l) as f64 });
    model = model
        .converted(kugel::Normalization::Schmidt, false)
        .unwrap();
    model.units = "nT".into();
    model.reference_radius_m = 6_371_200.0;
    let opts = SpectrumOptions {
        lowes_radius_m: Some(3_485_000.0),
        ..Default::default()
    };
    let svg = spectrum_svg(&Spectrum::compute(&model, &opts).unwrap(), "magnetic");
    check_well_formed(&svg).unwrap();
    assert!(
        svg.contains("Lowes–Mauersberger power R_l at r = 3485 km (nT²)"),
        "{svg}"
    );
}

#[test]
fn comparison_plot_has_both_panels_and_the_significance_line() {
    let a = gravity_like(4);
    let b = correlated_partner(&a, 5, variance, |l| if l < 100 { 0.99 } else { 0.3 });
    let mut cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    cmp.reference_label = "survey-north.nc".into();
    cmp.other_label = "survey-south.nc".into();
    let svg = comparison_svg(&cmp, "two surveys");
    let elements = check_well_formed(&svg).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        elements.iter().filter(|e| *e == "clipPath").count(),
        2,
        "two panels"
    );
    for class in [
        "reference-power",
        "compared-power",
        "difference-power",
        "correlation",
        "correlation-threshold",
    ] {
        assert!(
            svg.contains(&format!(r#"class="{class}""#)),
            "missing {class}"
        );
    }
    assert!(svg.contains("degree correlation r_l"));
    assert!(svg.contains("95% significance (Student t, 2l dof)"));
    assert!(svg.contains("survey-north.nc (reference)"));
    let agree = cmp.agreement_degree.expect("agreement degree");
    assert!(
        svg.contains(&format!("agree up to l = {agree}")),
        "marker for l = {agree}"
    );
}
