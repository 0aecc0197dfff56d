//! SVG plots of localised (multitaper) spectra and comparisons: the estimate with a ±2σ band
//! from the scatter of the single-taper estimates, the unreliable degrees marked (below L_W and
//! above L − L_W), and optionally the expected localised spectrum of a global one.

use super::axis::Scale;
use super::panel::{Corner, Frame, Panel, Swatch};
use super::svg::{Markup, Stroke, SvgDocument};
use super::{power_label, title_text, BLUE, GREEN, LEFT, ORANGE, PURPLE, RIGHT, SKY, WIDTH};
use crate::regional::{Estimate, LocalisedComparison, LocalisedSpectrum};

/// value ± 2σ, clipped below at a small positive fraction for log axes.
fn band(e: &Estimate, log: bool) -> (Vec<f64>, Vec<f64>) {
    let lower = e
        .value
        .iter()
        .zip(&e.sigma)
        .map(|(v, s)| {
            let lo = v - 2.0 * s;
            if log && lo <= 0.0 {
                v * 1e-3
            } else {
                lo
            }
        })
        .collect();
    let upper = e
        .value
        .iter()
        .zip(&e.sigma)
        .map(|(v, s)| v + 2.0 * s)
        .collect();
    (lower, upper)
}

fn mark_reliable(panel: &Panel, doc: &mut SvgDocument, lmax: usize, lw: usize) {
    let marker = Stroke::dashed(GREEN, 1.2, "3 3");
    panel.degree_marker(doc, lw as f64, marker, &format!("L_W = {lw}"));
    if lmax > lw {
        panel.degree_marker(
            doc,
            (lmax - lw) as f64,
            marker,
            &format!("L − L_W = {}", lmax - lw),
        );
    }
}

/// Log–log plot of a localised spectrum (and, when given, the expected localised spectrum of
/// a global model).
pub fn localised_spectrum_svg(
    s: &LocalisedSpectrum,
    expected: Option<&[f64]>,
    title: &str,
) -> String {
    let height = 560.0;
    let mut doc = SvgDocument::new(WIDTH, height);
    let (lower, upper) = band(&s.power, true);
    let mut ranges: Vec<&[f64]> = vec![&s.power.value, &upper];
    if let Some(e) = expected {
        ranges.push(e);
    }
    let (y_min, y_max) = Panel::log_range(ranges, 1);
    let frame = Frame {
        left: LEFT,
        top: 80.0,
        width: WIDTH - LEFT - RIGHT,
        height: height - 150.0,
    };
    let panel = Panel::new(&mut doc, frame, s.lmax, y_min, y_max, Scale::Log);
    title_text(
        &mut doc,
        title,
        &format!(
            "{}, {} windows of degree {}",
            s.region, s.taper_count, s.lmax_window
        ),
    );
    panel.draw_axes(
        &mut doc,
        Some("spherical-harmonic degree l"),
        &power_label("localised degree variance", &s.units),
    );
    panel.band(&mut doc, &lower, &upper, SKY, 0.35, "uncertainty-band");
    let line = Stroke::solid(BLUE, 1.8);
    panel.series(&mut doc, &s.power.value, line, "localised-power");
    let mut legend = vec![
        ("multitaper estimate".to_string(), Swatch::Line(line)),
        (
            "± 2σ (scatter of the windows)".to_string(),
            Swatch::Area(SKY, 0.35),
        ),
    ];
    if let Some(e) = expected {
        let st = Stroke::dashed(ORANGE, 1.6, "6 4");
        panel.series(&mut doc, e, st, "expected-power");
        legend.push((
            "expected from the global spectrum".to_string(),
            Swatch::Line(st),
        ));
    }
    mark_reliable(&panel, &mut doc, s.lmax, s.lmax_window);
    panel.legend(&mut doc, &legend, Corner::TopRight);
    doc.finish(title)
}

/// Two panels: both localised spectra (log–log) and the localised correlation with its band.
pub fn localised_comparison_svg(c: &LocalisedComparison, title: &str) -> String {
    let height = 820.0;
    let mut doc = SvgDocument::new(WIDTH, height);
    let (la, ua) = band(&c.power_a, true);
    let (lb, ub) = band(&c.power_b, true);
    let (y_min, y_max) = Panel::log_range([&c.power_a.value[..], &c.power_b.value, &ua, &ub], 1);
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
            "{}, {} windows of degree {}",
            c.region, c.taper_count, c.lmax_window
        ),
    );
    top.draw_axes(
        &mut doc,
        None,
        &power_label("localised degree variance", &c.units_a),
    );
    top.band(&mut doc, &la, &ua, SKY, 0.3, "band-a");
    top.band(&mut doc, &lb, &ub, ORANGE, 0.2, "band-b");
    let sa = Stroke::solid(BLUE, 1.6);
    let sb = Stroke::solid(ORANGE, 2.4);
    top.series(&mut doc, &c.power_b.value, sb, "power-b");
    top.series(&mut doc, &c.power_a.value, sa, "power-a");
    mark_reliable(&top, &mut doc, c.lmax, c.lmax_window);
    top.legend(
        &mut doc,
        &[
            ("A (reference)".to_string(), Swatch::Line(sa)),
            ("B".to_string(), Swatch::Line(sb)),
            ("± 2σ".to_string(), Swatch::Area(SKY, 0.3)),
        ],
        Corner::TopRight,
    );
    let bottom = Panel::new(
        &mut doc,
        Frame {
            left: LEFT,
            top: 500.0,
            width,
            height: 250.0,
        },
        c.lmax,
        -1.0,
        1.0,
        Scale::Linear,
    );
    bottom.draw_axes(
        &mut doc,
        Some("spherical-harmonic degree l"),
        &Markup::plain("localised correlation"),
    );
    let (lr, ur) = band(&c.correlation, false);
    bottom.band(&mut doc, &lr, &ur, PURPLE, 0.25, "correlation-band");
    let sr = Stroke::solid(PURPLE, 1.8);
    bottom.series(&mut doc, &c.correlation.value, sr, "correlation");
    mark_reliable(&bottom, &mut doc, c.lmax, c.lmax_window);
    bottom.legend(
        &mut doc,
        &[
            ("correlation".to_string(), Swatch::Line(sr)),
            ("± 2σ (jackknife)".to_string(), Swatch::Area(PURPLE, 0.25)),
        ],
        Corner::BottomLeft,
    );
    doc.finish(title)
}
