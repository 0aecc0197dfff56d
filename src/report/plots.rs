//! SVG plots of spectra and comparisons, written by hand (no plotting crate, no font files):
//! log–log power against degree with the χ² confidence band shaded, the power-law fit and the
//! error degree variance; for comparisons both spectra, their difference and a panel with the
//! degree correlation and its significance threshold. The degree axis carries a secondary
//! half-wavelength axis in km along the top. Colours are the Okabe–Ito palette (Okabe & Ito
//! 2008, "Color Universal Design"), distinguishable with common colour-vision deficiencies.

pub mod axis;
pub mod panel;
pub mod regional;
pub mod svg;

use crate::spectral::spectrum::trim_number;
use crate::spectral::units::squared_units;
use crate::spectral::{Comparison, Spectrum};
use axis::Scale;
use panel::{Corner, Frame, Panel, Swatch};
use svg::{Anchor, Markup, Stroke, SvgDocument};

const BLUE: &str = "#0072B2";
const VERMILLION: &str = "#D55E00";
const GREEN: &str = "#009E73";
const PURPLE: &str = "#CC79A7";
const ORANGE: &str = "#E69F00";
const SKY: &str = "#56B4E9";
const BLACK: &str = "#000000";

const WIDTH: f64 = 820.0;
const LEFT: f64 = 100.0;
const RIGHT: f64 = 30.0;

/// "name (units²)"; "name" when dimensionless.
fn power_label(name: &str, units: &str) -> Markup {
    let sq = squared_units(units);
    if sq == "1" {
        return Markup::plain(name);
    }
    let base = sq.trim_end_matches("^2");
    Markup::plain(&format!("{name} ({base}²)"))
}

fn title_text(doc: &mut SvgDocument, title: &str, subtitle: &str) {
    doc.text(
        LEFT,
        24.0,
        &Markup::plain(title),
        16.0,
        Anchor::Start,
        None,
        "title",
    );
    doc.text(
        WIDTH - RIGHT,
        24.0,
        &Markup::plain(subtitle),
        11.0,
        Anchor::End,
        None,
        "subtitle",
    );
}

/// Log–log plot of one spectrum: degree variance (or the Lowes–Mauersberger spectrum when it
/// was computed) with its χ² confidence band, the power-law fit and the error degree variance.
pub fn spectrum_svg(spectrum: &Spectrum, title: &str) -> String {
    let height = 560.0;
    let mut doc = SvgDocument::new(WIDTH, height);
    let pct = format!("{}%", trim_number(spectrum.confidence * 100.0));
    let (main, main_name, lower, upper): (Vec<f64>, String, Vec<f64>, Vec<f64>) =
        match &spectrum.lowes {
            Some(lowes) => {
                // The χ² band is a multiplicative factor per degree, the same for R_l as for S_l.
                let factor = |band: &[f64]| -> Vec<f64> {
                    (0..=spectrum.lmax)
                        .map(|l| lowes.power[l] * band[l] / spectrum.degree_variance[l])
                        .collect()
                };
                (
                    lowes.power.clone(),
                    format!(
                        "Lowes–Mauersberger power R_l at r = {} km",
                        trim_number(lowes.radius_m / 1000.0)
                    ),
                    factor(&spectrum.band_lower),
                    factor(&spectrum.band_upper),
                )
            }
            None => (
                spectrum.degree_variance.clone(),
                "degree variance S_l".to_string(),
                spectrum.band_lower.clone(),
                spectrum.band_upper.clone(),
            ),
        };
    let fit_line: Option<Vec<f64>> = match (&spectrum.power_law, spectrum.lowes.is_none()) {
        (Some(fit), true) => Some(
            (0..=spectrum.lmax)
                .map(|l| {
                    if l >= fit.lmin && l <= fit.lmax {
                        (2 * l + 1) as f64 * fit.per_coefficient_power(l)
                    } else {
                        f64::NAN
                    }
                })
                .collect(),
        ),
        _ => None,
    };
    let error = spectrum
        .error_degree_variance
        .as_ref()
        .filter(|_| spectrum.lowes.is_none());
    let mut ranges: Vec<&[f64]> = vec![&main, &lower, &upper];
    if let Some(e) = error {
        ranges.push(e);
    }
    let (y_min, y_max) = Panel::log_range(ranges, 1);
    let frame = Frame {
        left: LEFT,
        top: 80.0,
        width: WIDTH - LEFT - RIGHT,
        height: height - 80.0 - 70.0,
    };
    let panel = Panel::new(&mut doc, frame, spectrum.lmax, y_min, y_max, Scale::Log);
    title_text(
        &mut doc,
        title,
        &format!(
            "degrees 1–{}, R = {} km",
            spectrum.lmax,
            trim_number(spectrum.reference_radius_m / 1000.0)
        ),
    );
    panel.draw_axes(
        &mut doc,
        Some("spherical-harmonic degree l"),
        &power_label(&main_name, &spectrum.units),
    );
    panel.draw_half_wavelength_axis(&mut doc, spectrum.reference_radius_m);
    panel.band(&mut doc, &lower, &upper, SKY, 0.35, "confidence-band");
    let mut legend = vec![(format!("{pct} χ² band (2l+1 dof)"), Swatch::Area(SKY, 0.35))];
    if let Some(e) = error {
        let s = Stroke::dashed(VERMILLION, 1.5, "6 4");
        panel.series(&mut doc, e, s, "error-degree-variance");
        legend.push(("error degree variance".to_string(), Swatch::Line(s)));
    }
    let s = Stroke::solid(BLUE, 1.8);
    panel.series(&mut doc, &main, s, "degree-variance");
    legend.insert(0, (main_name.clone(), Swatch::Line(s)));
    if let (Some(line), Some(fit)) = (&fit_line, &spectrum.power_law) {
        let s = Stroke::dashed(BLACK, 1.4, "2 3");
        panel.series(&mut doc, line, s, "power-law");
        legend.push((
            format!(
                "power-law fit (2l+1)·A·l⁻ᵖ, p = {:.3} ± {:.3}",
                fit.exponent, fit.exponent_sigma
            ),
            Swatch::Line(s),
        ));
    }
    panel.legend(&mut doc, &legend, Corner::TopRight);
    doc.finish(title)
}

/// Two stacked panels: both spectra and their difference (log–log), and the degree correlation
/// with its significance threshold; the agreement degree is marked on both.
pub fn comparison_svg(comparison: &Comparison, title: &str) -> String {
    let height = 820.0;
    let mut doc = SvgDocument::new(WIDTH, height);
    let c = comparison;
    let pct = format!("{}%", trim_number(c.confidence * 100.0));
    let (y_min, y_max) = Panel::log_range(
        [
            &c.reference_power[..],
            &c.other_power,
            &c.difference_degree_variance,
            c.difference_error_degree_variance.as_deref().unwrap_or(&[]),
        ],
        1,
    );
    let width = WIDTH - LEFT - RIGHT;
    let top = Panel::new(
        &mut doc,
        Frame {
            left: LEFT,
            top: 80.0,
            width,
            height: 400.0,
        },
        c.lmax,
        y_min,
        y_max,
        Scale::Log,
    );
    title_text(
        &mut doc,
        title,
        &format!(
            "degrees 1–{}, R = {} km",
            c.lmax,
            trim_number(c.reference_radius_m / 1000.0)
        ),
    );
    top.draw_axes(&mut doc, None, &power_label("degree variance", &c.units));
    top.draw_half_wavelength_axis(&mut doc, c.reference_radius_m);
    // The compared model is drawn wide underneath the reference so that both stay visible
    // where they coincide.
    let sa = Stroke::solid(BLUE, 1.4);
    let sb = Stroke::solid(ORANGE, 3.0);
    let sd = Stroke::dashed(VERMILLION, 1.6, "6 4");
    top.series(&mut doc, &c.other_power, sb, "compared-power");
    top.series(&mut doc, &c.reference_power, sa, "reference-power");
    top.series(
        &mut doc,
        &c.difference_degree_variance,
        sd,
        "difference-power",
    );
    let mut legend = vec![
        (
            format!("{} (reference)", c.reference_label),
            Swatch::Line(sa),
        ),
        (c.other_label.clone(), Swatch::Line(sb)),
        ("difference A − B".to_string(), Swatch::Line(sd)),
    ];
    if let Some(e) = &c.difference_error_degree_variance {
        let se = Stroke::dashed(BLACK, 1.2, "2 3");
        top.series(&mut doc, e, se, "difference-error");
        legend.push((
            "error of the difference (from sigmas)".to_string(),
            Swatch::Line(se),
        ));
    }
    let marker = Stroke::dashed(GREEN, 1.2, "3 3");
    if let Some(l) = c.agreement_degree {
        let km = c
            .agreement_half_wavelength_km
            .map(|k| format!(" ({} km)", axis::format_km(k)))
            .unwrap_or_default();
        top.degree_marker(
            &mut doc,
            l as f64,
            marker,
            &format!("agree up to l = {l}{km}"),
        );
    }
    top.legend(&mut doc, &legend, Corner::TopRight);
    let negative = c
        .correlation
        .iter()
        .skip(1)
        .any(|r| r.is_finite() && *r < -0.05);
    let r_min = if negative { -1.0 } else { 0.0 };
    let bottom = Panel::new(
        &mut doc,
        Frame {
            left: LEFT,
            top: 500.0,
            width,
            height: 250.0,
        },
        c.lmax,
        r_min,
        1.0,
        Scale::Linear,
    );
    bottom.draw_axes(
        &mut doc,
        Some("spherical-harmonic degree l"),
        &Markup::plain("degree correlation r_l"),
    );
    let st = Stroke::dashed(BLACK, 1.2, "5 3");
    bottom.series(
        &mut doc,
        &c.correlation_threshold,
        st,
        "correlation-threshold",
    );
    if negative {
        let neg: Vec<f64> = c.correlation_threshold.iter().map(|v| -v).collect();
        bottom.series(&mut doc, &neg, st, "correlation-threshold");
    }
    let sr = Stroke::solid(PURPLE, 1.8);
    bottom.series(&mut doc, &c.correlation, sr, "correlation");
    if let Some(l) = c.agreement_degree {
        bottom.degree_marker(&mut doc, l as f64, marker, "");
    }
    bottom.legend(
        &mut doc,
        &[
            ("degree correlation".to_string(), Swatch::Line(sr)),
            (
                format!("{pct} significance (Student t, 2l dof)"),
                Swatch::Line(st),
            ),
        ],
        Corner::BottomLeft,
    );
    doc.finish(title)
}
