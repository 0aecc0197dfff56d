//! Axes: logarithmic and linear mappings from data to pixels, tick positions and tick labels
//! (powers of ten written as 10 with a superscript exponent in SVG text, no fonts needed).

use super::svg::Markup;
use crate::report::ticks::{multiples_inside, nice_step};

/// Scale of an axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scale {
    Linear,
    Log,
}

/// A data range [min, max] mapped onto the pixel range [p0, p1] (p1 < p0 for a y axis).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Axis {
    pub min: f64,
    pub max: f64,
    pub scale: Scale,
    pub p0: f64,
    pub p1: f64,
}

/// One tick: data value, whether it is labelled, and its label.
#[derive(Debug, Clone, PartialEq)]
pub struct Tick {
    pub value: f64,
    pub major: bool,
    pub label: Option<Markup>,
}

impl Axis {
    pub fn new(min: f64, max: f64, scale: Scale, p0: f64, p1: f64) -> Self {
        debug_assert!(max > min);
        debug_assert!(scale == Scale::Linear || min > 0.0);
        Axis {
            min,
            max,
            scale,
            p0,
            p1,
        }
    }

    fn unit(&self, v: f64) -> f64 {
        match self.scale {
            Scale::Linear => (v - self.min) / (self.max - self.min),
            Scale::Log => (v / self.min).ln() / (self.max / self.min).ln(),
        }
    }

    /// Pixel position of `v` (values outside the range map outside the pixel range).
    pub fn pixel(&self, v: f64) -> f64 {
        self.p0 + self.unit(v) * (self.p1 - self.p0)
    }

    pub fn contains(&self, v: f64) -> bool {
        let tolerance = 1e-9 * (self.max - self.min).abs();
        v >= self.min - tolerance && v <= self.max + tolerance
    }

    /// Ticks of this axis: decades (with 2–9 as minor ticks, labelled 2 and 5 when the range
    /// spans less than two decades) for log axes; a 1–2–5 step for linear ones.
    pub fn ticks(&self, integer_labels: bool) -> Vec<Tick> {
        match self.scale {
            Scale::Log => self.log_ticks(integer_labels),
            Scale::Linear => self.linear_ticks(),
        }
    }

    fn log_ticks(&self, integer_labels: bool) -> Vec<Tick> {
        let lo = self.min.log10().floor() as i32;
        let hi = self.max.log10().ceil() as i32;
        let decades = hi - lo;
        let label_minor = (self.max / self.min).log10() < 2.0;
        // Very wide ranges: label every k-th decade only, so labels do not collide.
        let stride = ((decades as f64) / 8.0).ceil().max(1.0) as i32;
        let mut out = Vec::new();
        for e in lo..=hi {
            for k in 1..=9 {
                let v = k as f64 * 10f64.powi(e);
                if !self.contains(v) {
                    continue;
                }
                let major = k == 1;
                let labelled =
                    (major && e.rem_euclid(stride) == 0) || (label_minor && (k == 2 || k == 5));
                let label = labelled.then(|| {
                    if integer_labels && (0..=6).contains(&e) {
                        Markup::plain(&format!("{}", v.round() as i64))
                    } else if major {
                        power_of_ten(e)
                    } else {
                        Markup(format!("{k}×{}", power_of_ten(e).0))
                    }
                });
                out.push(Tick {
                    value: v,
                    major,
                    label,
                });
            }
        }
        out
    }

    fn linear_ticks(&self) -> Vec<Tick> {
        let step = nice_step((self.max - self.min) / 5.0);
        multiples_inside(self.min, self.max, step)
            .into_iter()
            .map(|v| Tick {
                value: v,
                major: true,
                label: Some(Markup::plain(&format_linear(v, step))),
            })
            .collect()
    }
}

fn format_linear(v: f64, step: f64) -> String {
    let decimals = (-step.log10().floor()).max(0.0) as usize;
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s.trim_start_matches(['-', '0', '.']).is_empty() {
        return s.trim_start_matches('-').to_string();
    }
    s.replace('-', "−")
}

/// "10" with the exponent in superscript characters (10⁻⁶).
pub fn power_of_ten(exponent: i32) -> Markup {
    if exponent == 0 {
        return Markup::plain("1");
    }
    if exponent == 1 {
        return Markup::plain("10");
    }
    Markup::plain(&format!("10{}", superscript_digits(exponent)))
}

/// An integer in Unicode superscript characters (⁻¹²). One plain text run: every SVG renderer
/// anchors and sizes it correctly, unlike raised `<tspan>`s.
pub fn superscript_digits(value: i32) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut out = String::new();
    if value < 0 {
        out.push('⁻');
    }
    for d in value.unsigned_abs().to_string().bytes() {
        out.push(DIGITS[(d - b'0') as usize]);
    }
    out
}

/// Rounds a log range outwards to whole decades (at least one decade wide).
pub fn decade_range(min: f64, max: f64) -> (f64, f64) {
    let lo = 10f64.powf(min.log10().floor());
    let mut hi = 10f64.powf(max.log10().ceil());
    if hi <= lo {
        hi = lo * 10.0;
    }
    (lo, hi)
}

/// Round numbers of the 1–2–5 sequence between `min` and `max` (for the km axis).
pub fn one_two_five_values(min: f64, max: f64) -> Vec<f64> {
    let mut out = Vec::new();
    if !(min > 0.0 && max > min) {
        return out;
    }
    let lo = min.log10().floor() as i32;
    let hi = max.log10().ceil() as i32;
    let wide = (max / min).log10() > 2.5;
    for e in lo..=hi {
        for k in [1.0, 2.0, 5.0] {
            if wide && k != 1.0 && (max / min).log10() > 4.0 {
                continue;
            }
            let v = k * 10f64.powi(e);
            if v >= min && v <= max {
                out.push(v);
            }
        }
    }
    out
}

/// A km value as a compact label (12000, 500, 2.5, 0.01).
pub fn format_km(v: f64) -> String {
    if v >= 1.0 {
        format!("{}", v.round() as i64)
    } else {
        let s = format!("{v:.6}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_axis_maps_decades_evenly() {
        let a = Axis::new(1.0, 1000.0, Scale::Log, 0.0, 300.0);
        assert!((a.pixel(10.0) - 100.0).abs() < 1e-9);
        assert!((a.pixel(100.0) - 200.0).abs() < 1e-9);
        let labels: Vec<String> = a
            .ticks(true)
            .into_iter()
            .filter_map(|t| t.label.map(|m| m.0))
            .collect();
        assert_eq!(labels, ["1", "10", "100", "1000"]);
    }

    #[test]
    fn small_powers_are_superscripts() {
        assert_eq!(power_of_ten(-6).0, "10⁻⁶");
        assert_eq!(power_of_ten(12).0, "10¹²");
        let a = Axis::new(1e-12, 1e-4, Scale::Log, 400.0, 0.0);
        let n = a.ticks(false).iter().filter(|t| t.label.is_some()).count();
        assert_eq!(n, 9);
    }

    #[test]
    fn linear_ticks_use_round_steps() {
        let a = Axis::new(-1.0, 1.0, Scale::Linear, 0.0, 100.0);
        let labels: Vec<String> = a
            .ticks(false)
            .into_iter()
            .filter_map(|t| t.label.map(|m| m.0))
            .collect();
        assert_eq!(labels, ["−1.0", "−0.5", "0.0", "0.5", "1.0"]);
        assert_eq!(
            one_two_five_values(30.0, 700.0),
            vec![50.0, 100.0, 200.0, 500.0]
        );
    }
}
