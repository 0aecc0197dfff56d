//! One plotting panel: a frame with a logarithmic degree axis at the bottom, an optional
//! half-wavelength axis in km along the top, a log or linear value axis on the left, and helpers
//! that draw series, shaded bands, reference lines and a legend inside it.

use super::axis::{decade_range, format_km, one_two_five_values, Axis, Scale};
use super::svg::{Anchor, Markup, Stroke, SvgDocument};
use crate::spectral::units::degree_for_half_wavelength;

const GRID: &str = "#d9d9d9";
const INK: &str = "#222222";
const FONT: f64 = 13.0;

/// Pixel rectangle of a panel's plotting area.
#[derive(Debug, Clone, Copy)]
pub struct Frame {
    pub left: f64,
    pub top: f64,
    pub width: f64,
    pub height: f64,
}

/// How a legend entry is drawn.
#[derive(Debug, Clone, Copy)]
pub enum Swatch<'a> {
    Line(Stroke<'a>),
    Area(&'a str, f64),
}

/// Where a legend goes inside the panel.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Corner {
    TopRight,
    BottomLeft,
}

pub struct Panel {
    pub frame: Frame,
    pub x: Axis,
    pub y: Axis,
    clip: String,
}

impl Panel {
    /// A panel over degrees 1..=lmax (log) and the value range [y_min, y_max].
    pub fn new(
        doc: &mut SvgDocument,
        frame: Frame,
        lmax: usize,
        y_min: f64,
        y_max: f64,
        y_scale: Scale,
    ) -> Panel {
        let x = Axis::new(
            1.0,
            (lmax.max(2)) as f64,
            Scale::Log,
            frame.left,
            frame.left + frame.width,
        );
        let y = Axis::new(y_min, y_max, y_scale, frame.top + frame.height, frame.top);
        let clip = doc.clip_rect(frame.left, frame.top, frame.width, frame.height);
        Panel { frame, x, y, clip }
    }

    /// A log value axis covering the positive finite values of `series`, rounded to decades.
    pub fn log_range<'a>(
        series: impl IntoIterator<Item = &'a [f64]>,
        from_degree: usize,
    ) -> (f64, f64) {
        let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
        for s in series {
            for v in s.iter().skip(from_degree) {
                if v.is_finite() && *v > 0.0 {
                    lo = lo.min(*v);
                    hi = hi.max(*v);
                }
            }
        }
        if !lo.is_finite() {
            return (0.1, 10.0);
        }
        // Keep the picture readable: at most 16 decades below the maximum.
        let lo = lo.max(hi * 1e-16);
        decade_range(lo, hi)
    }

    /// Frame, grid, ticks and axis labels. `x_label` None leaves the bottom labels off (for
    /// a panel stacked above another that shares the degree axis).
    pub fn draw_axes(&self, doc: &mut SvgDocument, x_label: Option<&str>, y_label: &Markup) {
        let f = self.frame;
        let bottom = f.top + f.height;
        doc.rect(f.left, f.top, f.width, f.height, "white", None);
        for t in self.y.ticks(false) {
            let py = self.y.pixel(t.value);
            if t.major {
                doc.line(f.left, py, f.left + f.width, py, Stroke::solid(GRID, 0.8));
            }
            let len = if t.major { 6.0 } else { 3.0 };
            doc.line(f.left, py, f.left + len, py, Stroke::solid(INK, 1.0));
            if let Some(label) = &t.label {
                doc.text(
                    f.left - 6.0,
                    py + 4.5,
                    label,
                    FONT - 1.0,
                    Anchor::End,
                    None,
                    "tick-label",
                );
            }
        }
        for t in self.x.ticks(true) {
            let px = self.x.pixel(t.value);
            if t.major {
                doc.line(px, f.top, px, bottom, Stroke::solid(GRID, 0.8));
            }
            let len = if t.major { 6.0 } else { 3.0 };
            doc.line(px, bottom, px, bottom - len, Stroke::solid(INK, 1.0));
            if let (Some(label), Some(_)) = (&t.label, x_label) {
                doc.text(
                    px,
                    bottom + 17.0,
                    label,
                    FONT - 1.0,
                    Anchor::Middle,
                    None,
                    "tick-label",
                );
            }
        }
        doc.rect(
            f.left,
            f.top,
            f.width,
            f.height,
            "none",
            Some(Stroke::solid(INK, 1.2)),
        );
        if let Some(label) = x_label {
            doc.text(
                f.left + f.width / 2.0,
                bottom + 40.0,
                &Markup::plain(label),
                FONT,
                Anchor::Middle,
                None,
                "axis-label",
            );
        }
        doc.text(
            f.left - 62.0,
            f.top + f.height / 2.0,
            y_label,
            FONT,
            Anchor::Middle,
            Some(-90.0),
            "axis-label",
        );
    }

    /// Secondary axis along the top edge: half-wavelength πR/l in km at round values.
    pub fn draw_half_wavelength_axis(&self, doc: &mut SvgDocument, radius_m: f64) {
        let f = self.frame;
        let km_at = |l: f64| std::f64::consts::PI * radius_m / l / 1000.0;
        let (km_min, km_max) = (km_at(self.x.max), km_at(self.x.min));
        for km in one_two_five_values(km_min, km_max) {
            let l = degree_for_half_wavelength(km, radius_m);
            if !self.x.contains(l) {
                continue;
            }
            let px = self.x.pixel(l);
            doc.line(px, f.top, px, f.top + 5.0, Stroke::solid(INK, 1.0));
            doc.text(
                px,
                f.top - 6.0,
                &Markup::plain(&format_km(km)),
                FONT - 2.0,
                Anchor::Middle,
                None,
                "tick-label km",
            );
        }
        doc.text(
            f.left + f.width / 2.0,
            f.top - 24.0,
            &Markup::plain("half-wavelength πR/l (km)"),
            FONT,
            Anchor::Middle,
            None,
            "axis-label km",
        );
    }

    fn usable(&self, v: f64) -> bool {
        v.is_finite() && (self.y.scale == Scale::Linear || v > 0.0)
    }

    /// Runs of consecutive degrees ≥ 1 where `ok(l)` holds.
    fn runs(&self, n: usize, ok: impl Fn(usize) -> bool) -> Vec<std::ops::Range<usize>> {
        let mut out = Vec::new();
        let mut start = None;
        for l in 1..n {
            match (ok(l), start) {
                (true, None) => start = Some(l),
                (false, Some(s)) => {
                    out.push(s..l);
                    start = None;
                }
                _ => {}
            }
        }
        if let Some(s) = start {
            out.push(s..n);
        }
        out
    }

    /// A line through `values[l]` for degrees l ≥ 1 (gaps where a value cannot be drawn).
    pub fn series(&self, doc: &mut SvgDocument, values: &[f64], stroke: Stroke, class: &str) {
        for run in self.runs(values.len(), |l| self.usable(values[l])) {
            let pts: Vec<(f64, f64)> = run
                .map(|l| (self.x.pixel(l as f64), self.y.pixel(values[l])))
                .collect();
            if pts.len() == 1 {
                doc.line(pts[0].0 - 2.0, pts[0].1, pts[0].0 + 2.0, pts[0].1, stroke);
            }
            doc.polyline(&pts, stroke, Some(&self.clip), class);
        }
    }

    /// A shaded band between `lower[l]` and `upper[l]`.
    pub fn band(
        &self,
        doc: &mut SvgDocument,
        lower: &[f64],
        upper: &[f64],
        fill: &str,
        opacity: f64,
        class: &str,
    ) {
        for run in self.runs(lower.len(), |l| {
            self.usable(lower[l]) && self.usable(upper[l])
        }) {
            let mut pts: Vec<(f64, f64)> = run
                .clone()
                .map(|l| (self.x.pixel(l as f64), self.y.pixel(upper[l])))
                .collect();
            pts.extend(
                run.rev()
                    .map(|l| (self.x.pixel(l as f64), self.y.pixel(lower[l]))),
            );
            doc.polygon(&pts, fill, opacity, Some(&self.clip), class);
        }
    }

    /// A vertical marker at degree `l` with a short label at its top.
    pub fn degree_marker(&self, doc: &mut SvgDocument, l: f64, stroke: Stroke, label: &str) {
        if !self.x.contains(l) {
            return;
        }
        let px = self.x.pixel(l);
        let f = self.frame;
        doc.line(px, f.top, px, f.top + f.height, stroke);
        doc.text(
            px - 4.0,
            f.top + f.height - 8.0,
            &Markup::plain(label),
            FONT - 2.0,
            Anchor::End,
            None,
            "marker-label",
        );
    }

    /// A legend box in one corner of the panel (spectra fall with degree, so the top right is
    /// usually empty; correlations start high, so their legend goes bottom left).
    pub fn legend(&self, doc: &mut SvgDocument, entries: &[(String, Swatch)], corner: Corner) {
        if entries.is_empty() {
            return;
        }
        let longest = entries
            .iter()
            .map(|(t, _)| t.chars().count())
            .max()
            .unwrap_or(0) as f64;
        let w = 40.0 + longest * 7.0;
        let h = 8.0 + 18.0 * entries.len() as f64;
        let (x0, y0) = match corner {
            Corner::TopRight => (
                self.frame.left + self.frame.width - w - 10.0,
                self.frame.top + 10.0,
            ),
            Corner::BottomLeft => (
                self.frame.left + 10.0,
                self.frame.top + self.frame.height - h - 10.0,
            ),
        };
        doc.rect(x0, y0, w, h, "white", Some(Stroke::solid("#999999", 0.8)));
        for (i, (text, swatch)) in entries.iter().enumerate() {
            let y = y0 + 16.0 + 18.0 * i as f64;
            match swatch {
                Swatch::Line(s) => doc.line(x0 + 8.0, y - 4.0, x0 + 30.0, y - 4.0, *s),
                Swatch::Area(fill, op) => doc.polygon(
                    &[
                        (x0 + 8.0, y - 9.0),
                        (x0 + 30.0, y - 9.0),
                        (x0 + 30.0, y + 1.0),
                        (x0 + 8.0, y + 1.0),
                    ],
                    fill,
                    *op,
                    None,
                    "legend-swatch",
                ),
            }
            doc.text(
                x0 + 36.0,
                y,
                &Markup::plain(text),
                FONT - 2.0,
                Anchor::Start,
                None,
                "legend",
            );
        }
    }
}
