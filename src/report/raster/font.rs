//! Text for the PNG maps, rasterised from an embedded outline font with anti-aliased coverage
//! (`ab_glyph`). The font is DejaVu Sans (Bitstream Vera licence, DejaVu changes public domain;
//! `fonts/DejaVuSans-LICENSE.txt`), compiled into the binary with `include_bytes!` so nothing is
//! read from the system at run time. It covers Latin, Greek (χ², σ), degree and plus-minus
//! signs and the superscript digits and minus of units such as m² s⁻².
//!
//! Convention: a line of text is placed by the top of its line box; the baseline lies
//! [`ascent_px`] below that top, and descenders (g, p, y) reach below the baseline. A text size
//! `size_px` is the height of the line box (ascent + descent), so one line takes `size_px`
//! pixels; for this font the em is about 0.86 of it.

use std::sync::OnceLock;

use ab_glyph::{point, Font, FontRef, GlyphId, PxScale, ScaleFont};

static FONT_BYTES: &[u8] = include_bytes!("fonts/DejaVuSans.ttf");

fn font() -> &'static FontRef<'static> {
    static FONT: OnceLock<FontRef<'static>> = OnceLock::new();
    FONT.get_or_init(|| {
        // the bytes are a fixed, tested file of the tree: failing to parse them is a build defect
        FontRef::try_from_slice(FONT_BYTES).expect("embedded DejaVu Sans parses")
    })
}

/// Whether the embedded font has a glyph for `ch` (missing ones draw as the font's empty box).
pub fn has_glyph(ch: char) -> bool {
    font().glyph_id(ch) != GlyphId(0)
}

/// Distance from the top of the line box to the baseline, in pixels, at `size_px`.
pub fn ascent_px(size_px: f32) -> f32 {
    font().as_scaled(PxScale::from(size_px)).ascent()
}

/// Height of one line box (ascent + descent), in pixels, at `size_px`.
pub fn line_height_px(size_px: f32) -> f32 {
    let f = font().as_scaled(PxScale::from(size_px));
    f.ascent() - f.descent()
}

/// Advance width of `text` at `size_px`, kerning included, in pixels.
pub fn text_width_px(text: &str, size_px: f32) -> f32 {
    let f = font().as_scaled(PxScale::from(size_px));
    let mut width = 0.0;
    let mut previous: Option<GlyphId> = None;
    for ch in text.chars() {
        let id = f.glyph_id(ch);
        if let Some(p) = previous {
            width += f.kern(p, id);
        }
        width += f.h_advance(id);
        previous = Some(id);
    }
    width
}

/// Rasterises `text` with the top of its line box at (`x_px`, `top_px`), calling
/// `plot(x, y, coverage)` for every pixel the glyphs touch (coverage in (0, 1]).
pub fn rasterise(
    text: &str,
    x_px: f32,
    top_px: f32,
    size_px: f32,
    mut plot: impl FnMut(i64, i64, f32),
) {
    let scale = PxScale::from(size_px);
    let f = font().as_scaled(scale);
    let baseline = top_px + f.ascent();
    let mut caret = x_px;
    let mut previous: Option<GlyphId> = None;
    for ch in text.chars() {
        let id = f.glyph_id(ch);
        if let Some(p) = previous {
            caret += f.kern(p, id);
        }
        let glyph = id.with_scale_and_position(scale, point(caret, baseline));
        caret += f.h_advance(id);
        previous = Some(id);
        if let Some(outlined) = font().outline_glyph(glyph) {
            let bounds = outlined.px_bounds();
            outlined.draw(|gx, gy, coverage| {
                if coverage > 0.0 {
                    plot(
                        bounds.min.x as i64 + i64::from(gx),
                        bounds.min.y as i64 + i64::from(gy),
                        coverage.min(1.0),
                    );
                }
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Inked rows (y) of `text` drawn with its line top at y = 0.
    fn inked_rows(text: &str, size_px: f32) -> Vec<i64> {
        let mut rows = Vec::new();
        rasterise(text, 0.0, 0.0, size_px, |_, y, c| {
            if c > 0.25 {
                rows.push(y);
            }
        });
        rows
    }

    #[test]
    fn descender_of_g_reaches_below_the_baseline_and_a_does_not() {
        // common practice (typography): g, p, y descend below the baseline, a and x sit on it
        let size = 40.0;
        let baseline = ascent_px(size);
        let g_bottom = *inked_rows("g", size).iter().max().unwrap() as f32;
        let a_bottom = *inked_rows("a", size).iter().max().unwrap() as f32;
        assert!(
            g_bottom > baseline + 0.15 * size,
            "g ends at {g_bottom}, baseline {baseline}"
        );
        assert!(
            a_bottom <= baseline + 1.0,
            "a ends at {a_bottom}, baseline {baseline}"
        );
        // and the x-height letters start well below the line top, the capitals near it
        let a_top = *inked_rows("a", size).iter().min().unwrap() as f32;
        let h_top = *inked_rows("H", size).iter().min().unwrap() as f32;
        assert!(h_top < a_top - 0.1 * size, "H top {h_top}, a top {a_top}");
    }

    #[test]
    fn superscripts_sit_above_the_x_height() {
        let size = 40.0;
        let two_bottom = *inked_rows("²", size).iter().max().unwrap() as f32;
        let baseline = ascent_px(size);
        // common practice: a superscript's foot is raised well above the baseline
        assert!(
            two_bottom < baseline - 0.25 * size,
            "² ends at {two_bottom}"
        );
    }

    #[test]
    fn symbols_of_titles_and_units_have_glyphs() {
        for ch in "χ²σ°±⁻¹²³μ−·–gravity mGal m² s⁻²".chars() {
            assert!(has_glyph(ch), "no glyph for {ch:?}");
        }
        assert!(
            !has_glyph('\u{e000}'),
            "private-use code point must be missing"
        );
    }

    #[test]
    fn width_grows_with_text_and_size() {
        let w = text_width_px("mGal", 12.0);
        assert!(w > 0.0);
        assert!((text_width_px("mGal", 24.0) - 2.0 * w).abs() < 0.5);
        assert!(text_width_px("mGal mGal", 12.0) > 2.0 * w);
        assert!((line_height_px(12.0) - 12.0).abs() < 1e-3);
    }
}
