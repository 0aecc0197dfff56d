//! Quick-look PNG maps: equirectangular (plate carrée) projection centred on longitude 0,
//! viridis colours, a colour bar with units, a title and the degree range of the field.

use ndarray::Array2;

use super::canvas::{Canvas, Rgb, BLACK, WHITE};
use super::colormap::viridis;
use super::font::{line_height_px, text_width_px};
use crate::report::ticks::{format_tick, nice_ticks};
use crate::report::units_text::units_for_display;

/// How a map is labelled and where its rows and columns lie.
#[derive(Debug, Clone, Default)]
pub struct MapStyle {
    pub title: String,
    pub units: String,
    /// Degree range of the field, e.g. "degrees 2-60, Gaussian 300 km".
    pub degree_range: String,
    /// Latitude of each row in degrees, north to south; `None` = equally spaced row centres.
    pub lat_deg: Option<Vec<f64>>,
    /// Longitude of the first column in degrees (columns run eastwards, 360/nlon apart).
    pub lon0_deg: f64,
}

const MAP_W: usize = 720;
const MAP_H: usize = 360;
const LEFT: usize = 48;
const RIGHT: usize = 24;
const TOP: usize = 58;
const BOTTOM: usize = 90;
/// Text sizes: line-box heights in pixels (see `font`).
const TITLE_PX: f32 = 24.0;
const SUBTITLE_PX: f32 = 16.0;
const LABEL_PX: f32 = 14.0;
const UNITS_PX: f32 = 17.0;
const MASKED: Rgb = [200, 200, 200];

/// Renders `field` (lat × lon, rows north to south; NaN = masked) as a PNG.
///
/// The colour range covers the 0.5th to 99.5th percentile of the finite values so a few
/// extreme values do not wash out the map; the bar's end labels state that range.
pub fn render_map_png(field: &Array2<f64>, style: &MapStyle) -> Vec<u8> {
    let (nlat, nlon) = field.dim();
    let mut canvas = frame_with_title(style);
    let (lo, hi) = colour_range(field.iter().copied());
    let lats = style.lat_deg.clone().unwrap_or_else(|| {
        (0..nlat)
            .map(|j| 90.0 - (j as f64 + 0.5) * 180.0 / nlat as f64)
            .collect()
    });
    for py in 0..MAP_H {
        let lat = 90.0 - (py as f64 + 0.5) * 180.0 / MAP_H as f64;
        let (j0, j1, wj) = bracket_row(&lats, lat);
        for px in 0..MAP_W {
            let lon = -180.0 + (px as f64 + 0.5) * 360.0 / MAP_W as f64;
            let v = if nlat == 0 || nlon == 0 {
                f64::NAN
            } else {
                let k = (lon - style.lon0_deg).rem_euclid(360.0) / 360.0 * nlon as f64;
                let k0 = k.floor() as usize % nlon;
                let k1 = (k0 + 1) % nlon;
                let wk = k - k.floor();
                let row = |j: usize| field[[j, k0]] * (1.0 - wk) + field[[j, k1]] * wk;
                row(j0) * (1.0 - wj) + row(j1) * wj
            };
            let c = scaled_colour(v, lo, hi).unwrap_or(MASKED);
            canvas.set(LEFT + px, TOP + py, c);
        }
    }
    finish(canvas, lo, hi, style)
}

/// Renders scattered points (latitude, longitude in degrees, value) as a coverage map: each
/// point a small dot coloured by its value, on a grey background, with the same frame, bar and
/// labels as [`render_map_png`].
pub fn render_points_png(
    lat_deg: &[f64],
    lon_deg: &[f64],
    value: &[f64],
    style: &MapStyle,
) -> Vec<u8> {
    let mut canvas = frame_with_title(style);
    canvas.fill_rect(LEFT, TOP, MAP_W, MAP_H, [60, 60, 60]);
    let (lo, hi) = colour_range(value.iter().copied());
    for ((&la, &lo_deg), &v) in lat_deg.iter().zip(lon_deg).zip(value) {
        let lon = (lo_deg + 180.0).rem_euclid(360.0) - 180.0;
        let px = ((lon + 180.0) / 360.0 * MAP_W as f64) as usize;
        let py = ((90.0 - la) / 180.0 * MAP_H as f64) as usize;
        let c = scaled_colour(v, lo, hi).unwrap_or(MASKED);
        canvas.fill_rect(LEFT + px.min(MAP_W - 2), TOP + py.min(MAP_H - 2), 2, 2, c);
    }
    finish(canvas, lo, hi, style)
}

fn frame_with_title(style: &MapStyle) -> Canvas {
    let width = LEFT + MAP_W + RIGHT;
    let mut canvas = Canvas::new(width, TOP + MAP_H + BOTTOM, WHITE);
    let usable = (width - 16) as f32;
    canvas.text_centred(
        width as f32 / 2.0,
        8.0,
        &style.title,
        fitting_size(&style.title, TITLE_PX, usable),
        BLACK,
    );
    canvas.text_centred(
        width as f32 / 2.0,
        36.0,
        &style.degree_range,
        fitting_size(&style.degree_range, SUBTITLE_PX, usable),
        BLACK,
    );
    canvas
}

/// `preferred_px`, or the smaller size at which `text` fits `width_px` (not below 8 px, where
/// text stops being legible; longer text is then clipped by the canvas edge).
fn fitting_size(text: &str, preferred_px: f32, width_px: f32) -> f32 {
    let w = text_width_px(text, preferred_px);
    if w <= width_px {
        preferred_px
    } else {
        (preferred_px * width_px / w).max(8.0)
    }
}

/// Latitude label: 30°N, 0°, 60°S.
fn latitude_label(lat: i32) -> String {
    match lat.signum() {
        1 => format!("{lat}°N"),
        -1 => format!("{}°S", -lat),
        _ => "0°".to_string(),
    }
}

/// Longitude label: 60°E, 0°, 120°W.
fn longitude_label(lon: i32) -> String {
    match lon.signum() {
        1 => format!("{lon}°E"),
        -1 => format!("{}°W", -lon),
        _ => "0°".to_string(),
    }
}

fn finish(mut canvas: Canvas, lo: f64, hi: f64, style: &MapStyle) -> Vec<u8> {
    canvas.frame(LEFT - 1, TOP - 1, MAP_W + 2, MAP_H + 2, BLACK);
    let label_h = line_height_px(LABEL_PX);
    // graticule labels every 30° of latitude and 60° of longitude
    for lat in [-60i32, -30, 0, 30, 60] {
        let y = TOP + ((90 - lat) as f64 / 180.0 * MAP_H as f64) as usize;
        canvas.fill_rect(LEFT - 5, y, 4, 1, BLACK);
        canvas.text_right(
            (LEFT - 7) as f32,
            y as f32 - label_h / 2.0,
            &latitude_label(lat),
            LABEL_PX,
            BLACK,
        );
        for px in (0..MAP_W).step_by(4) {
            blend_grid(&mut canvas, LEFT + px, y);
        }
    }
    for lon in [-120i32, -60, 0, 60, 120] {
        let x = LEFT + ((lon + 180) as f64 / 360.0 * MAP_W as f64) as usize;
        canvas.fill_rect(x, TOP + MAP_H + 1, 1, 4, BLACK);
        canvas.text_centred(
            x as f32,
            (TOP + MAP_H + 5) as f32,
            &longitude_label(lon),
            LABEL_PX,
            BLACK,
        );
        for py in (0..MAP_H).step_by(4) {
            blend_grid(&mut canvas, x, TOP + py);
        }
    }
    colour_bar(&mut canvas, lo, hi, &style.units);
    canvas.to_png()
}

/// Light dotted graticule that stays visible on dark and light colours.
fn blend_grid(canvas: &mut Canvas, x: usize, y: usize) {
    let c = canvas.get(x, y);
    let mixed = [
        ((c[0] as u16 + 255) / 2) as u8,
        ((c[1] as u16 + 255) / 2) as u8,
        ((c[2] as u16 + 255) / 2) as u8,
    ];
    canvas.set(x, y, mixed);
}

fn colour_bar(canvas: &mut Canvas, lo: f64, hi: f64, units: &str) {
    let (bx, by, bw, bh) = (LEFT + MAP_W / 2 - 250, TOP + MAP_H + 26, 500, 16);
    for i in 0..bw {
        let t = i as f64 / (bw - 1) as f64;
        let c = viridis(t).unwrap_or(MASKED);
        canvas.fill_rect(bx + i, by, 1, bh, c);
    }
    canvas.frame(bx - 1, by - 1, bw + 2, bh + 2, BLACK);
    let label_top = (by + bh + 5) as f32;
    if hi > lo {
        for t in nice_ticks(lo, hi, 6) {
            let x = bx + ((t - lo) / (hi - lo) * (bw - 1) as f64).round() as usize;
            canvas.fill_rect(x, by + bh + 1, 1, 4, BLACK);
            canvas.text_centred(x as f32, label_top, &tick_label(t), LABEL_PX, BLACK);
        }
    } else {
        canvas.text_centred(
            (bx + bw / 2) as f32,
            label_top,
            &format!("constant {}", tick_label(lo)),
            LABEL_PX,
            BLACK,
        );
    }
    // units to the right of the bar, vertically centred on it, typeset (m² s⁻²)
    let units = &units_for_display(units);
    let room = (canvas.width - (bx + bw + 10) - 4) as f32;
    let size = fitting_size(units, UNITS_PX, room);
    canvas.text(
        (bx + bw + 10) as f32,
        by as f32 + bh as f32 / 2.0 - line_height_px(size) / 2.0,
        units,
        size,
        BLACK,
    );
}

/// A tick label with a true minus sign (U+2212), which the font draws as wide as a plus.
fn tick_label(v: f64) -> String {
    format_tick(v).replace('-', "−")
}

fn scaled_colour(v: f64, lo: f64, hi: f64) -> Option<Rgb> {
    if !v.is_finite() {
        return None;
    }
    let t = if hi > lo { (v - lo) / (hi - lo) } else { 0.5 };
    viridis(t)
}

/// 0.5th and 99.5th percentiles of the finite values ((0, 0) when there are none).
pub fn colour_range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let mut v: Vec<f64> = values.filter(|x| x.is_finite()).collect();
    if v.is_empty() {
        return (0.0, 0.0);
    }
    v.sort_by(f64::total_cmp);
    let at = |q: f64| v[((v.len() - 1) as f64 * q).round() as usize];
    (at(0.005), at(0.995))
}

/// Rows bracketing `lat` in a north-to-south list and the weight of the second one.
fn bracket_row(lats: &[f64], lat: f64) -> (usize, usize, f64) {
    let n = lats.len();
    if n == 0 {
        return (0, 0, 0.0);
    }
    if lat >= lats[0] {
        return (0, 0, 0.0);
    }
    if lat <= lats[n - 1] {
        return (n - 1, n - 1, 0.0);
    }
    let j = lats.iter().position(|&l| l < lat).unwrap_or(n - 1);
    let (a, b) = (lats[j - 1], lats[j]);
    (j - 1, j, (a - lat) / (a - b))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn decode(png_bytes: &[u8]) -> (usize, usize, Vec<u8>) {
        let decoder = png::Decoder::new(png_bytes);
        let mut reader = decoder.read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size()];
        let info = reader.next_frame(&mut buf).unwrap();
        (info.width as usize, info.height as usize, buf)
    }

    #[test]
    fn map_pixels_follow_the_field() {
        // a field increasing from north to south: top of the map dark (viridis start),
        // bottom bright (viridis end)
        let field = Array2::from_shape_fn((18, 36), |(j, _)| j as f64);
        let bytes = render_map_png(
            &field,
            &MapStyle {
                title: "Test".into(),
                units: "m".into(),
                ..Default::default()
            },
        );
        let (w, h, px) = decode(&bytes);
        assert_eq!((w, h), (LEFT + MAP_W + RIGHT, TOP + MAP_H + BOTTOM));
        let at = |x: usize, y: usize| {
            [
                px[(y * w + x) * 3],
                px[(y * w + x) * 3 + 1],
                px[(y * w + x) * 3 + 2],
            ]
        };
        assert_eq!(at(LEFT + 10, TOP + 1), viridis(0.0).unwrap());
        assert_eq!(at(LEFT + 10, TOP + MAP_H - 2), viridis(1.0).unwrap());
    }

    #[test]
    fn masked_cells_are_grey_and_range_ignores_nan() {
        let mut field = Array2::from_elem((10, 20), 1.0);
        field[[0, 0]] = f64::NAN;
        assert_eq!(
            colour_range([1.0, f64::NAN, 3.0, 2.0].into_iter()),
            (1.0, 3.0)
        );
        let bytes = render_map_png(
            &field,
            &MapStyle {
                lon0_deg: 0.0,
                ..Default::default()
            },
        );
        let (w, _, px) = decode(&bytes);
        // longitude 0 column, north-most row: the first pixel right of the map's centre
        let (x, y) = (LEFT + MAP_W / 2 + 1, TOP + 1);
        assert_eq!(&px[(y * w + x) * 3..(y * w + x) * 3 + 3], &MASKED);
    }
}
