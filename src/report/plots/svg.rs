//! A minimal SVG document builder: elements are written as text with escaped content and
//! attributes, into a `viewBox` so that the picture scales in browsers and papers. Fonts are
//! named generically (no font files are embedded or needed).

use std::fmt::Write;

use crate::report::markup::escape;

/// Text already made of escaped text and `<tspan>` markup (e.g. a superscript exponent).
#[derive(Debug, Clone, PartialEq)]
pub struct Markup(pub String);

impl Markup {
    pub fn plain(text: &str) -> Markup {
        Markup(escape(text))
    }
}

/// Horizontal anchoring of a text element.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

impl Anchor {
    fn name(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

/// Stroke style of a line or path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stroke<'a> {
    pub colour: &'a str,
    pub width: f64,
    pub dash: Option<&'a str>,
}

impl<'a> Stroke<'a> {
    pub fn solid(colour: &'a str, width: f64) -> Self {
        Stroke {
            colour,
            width,
            dash: None,
        }
    }

    pub fn dashed(colour: &'a str, width: f64, dash: &'a str) -> Self {
        Stroke {
            colour,
            width,
            dash: Some(dash),
        }
    }

    fn attributes(&self) -> String {
        let mut s = format!(
            r#"stroke="{}" stroke-width="{}""#,
            self.colour,
            fmt(self.width)
        );
        if let Some(d) = self.dash {
            let _ = write!(s, r#" stroke-dasharray="{d}""#);
        }
        s
    }
}

/// Coordinates written with two decimals: enough for any screen or print, compact files.
pub fn fmt(v: f64) -> String {
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// An SVG document being assembled.
#[derive(Debug, Clone)]
pub struct SvgDocument {
    width: f64,
    height: f64,
    body: String,
    clip_count: usize,
}

impl SvgDocument {
    pub fn new(width: f64, height: f64) -> Self {
        SvgDocument {
            width,
            height,
            body: String::new(),
            clip_count: 0,
        }
    }

    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, stroke: Option<Stroke>) {
        let stroke = stroke
            .map(|s| s.attributes())
            .unwrap_or_else(|| r#"stroke="none""#.into());
        let _ = writeln!(
            self.body,
            r#"<rect x="{}" y="{}" width="{}" height="{}" fill="{fill}" {stroke}/>"#,
            fmt(x),
            fmt(y),
            fmt(w),
            fmt(h)
        );
    }

    pub fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, stroke: Stroke) {
        let _ = writeln!(
            self.body,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" {}/>"#,
            fmt(x1),
            fmt(y1),
            fmt(x2),
            fmt(y2),
            stroke.attributes()
        );
    }

    /// An open polyline through `points` (already in pixels), clipped to clip region `clip`.
    pub fn polyline(
        &mut self,
        points: &[(f64, f64)],
        stroke: Stroke,
        clip: Option<&str>,
        class: &str,
    ) {
        if points.len() < 2 {
            return;
        }
        let _ = writeln!(
            self.body,
            r#"<polyline class="{class}" fill="none" {} stroke-linejoin="round"{} points="{}"/>"#,
            stroke.attributes(),
            clip_attribute(clip),
            point_list(points)
        );
    }

    /// A filled polygon (used for confidence bands).
    pub fn polygon(
        &mut self,
        points: &[(f64, f64)],
        fill: &str,
        opacity: f64,
        clip: Option<&str>,
        class: &str,
    ) {
        if points.len() < 3 {
            return;
        }
        let _ = writeln!(
            self.body,
            r#"<polygon class="{class}" fill="{fill}" fill-opacity="{}" stroke="none"{} points="{}"/>"#,
            fmt(opacity),
            clip_attribute(clip),
            point_list(points)
        );
    }

    /// Text at (x, y); `rotate` in degrees about the anchor point.
    // The arguments are the SVG text attributes themselves; a style struct would only rename them.
    #[allow(clippy::too_many_arguments)]
    pub fn text(
        &mut self,
        x: f64,
        y: f64,
        content: &Markup,
        size: f64,
        anchor: Anchor,
        rotate: Option<f64>,
        class: &str,
    ) {
        let transform = rotate
            .map(|r| format!(r#" transform="rotate({} {} {})""#, fmt(r), fmt(x), fmt(y)))
            .unwrap_or_default();
        let _ = writeln!(
            self.body,
            r#"<text class="{class}" x="{}" y="{}" font-size="{}" text-anchor="{}"{transform}>{}</text>"#,
            fmt(x),
            fmt(y),
            fmt(size),
            anchor.name(),
            content.0
        );
    }

    /// Declares a rectangular clip region and returns its id.
    pub fn clip_rect(&mut self, x: f64, y: f64, w: f64, h: f64) -> String {
        self.clip_count += 1;
        let id = format!("clip{}", self.clip_count);
        let _ = writeln!(
            self.body,
            r#"<defs><clipPath id="{id}"><rect x="{}" y="{}" width="{}" height="{}"/></clipPath></defs>"#,
            fmt(x),
            fmt(y),
            fmt(w),
            fmt(h)
        );
        id
    }

    /// Free-standing comment (e.g. the data source), escaped.
    pub fn comment(&mut self, text: &str) {
        let safe = text.replace("--", "- -");
        let _ = writeln!(self.body, "<!-- {safe} -->");
    }

    pub fn finish(self, title: &str) -> String {
        format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n\
             <svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" \
             font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\">\n<title>{t}</title>\n\
             <rect x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"white\"/>\n{body}</svg>\n",
            w = fmt(self.width),
            h = fmt(self.height),
            t = escape(title),
            body = self.body
        )
    }
}

fn clip_attribute(clip: Option<&str>) -> String {
    clip.map(|id| format!(r#" clip-path="url(#{id})""#))
        .unwrap_or_default()
}

fn point_list(points: &[(f64, f64)]) -> String {
    let mut s = String::with_capacity(points.len() * 14);
    for (i, (x, y)) in points.iter().enumerate() {
        if i > 0 {
            s.push(' ');
        }
        let _ = write!(s, "{},{}", fmt(*x), fmt(*y));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_round() {
        assert_eq!(fmt(1.005), "1");
        assert_eq!(fmt(-0.001), "0");
        assert_eq!(fmt(12.5), "12.5");
    }
}
