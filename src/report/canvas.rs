//! An RGB raster with the few drawing operations the quick-look pictures need, and PNG
//! encoding (`png` crate).

use super::font::{glyph, text_width, GLYPH_H, GLYPH_W};

pub type Rgb = [u8; 3];

pub const WHITE: Rgb = [255, 255, 255];
pub const BLACK: Rgb = [0, 0, 0];
pub const GREY: Rgb = [150, 150, 150];

/// Row-major RGB pixels, (0, 0) at the top left.
pub struct Canvas {
    pub width: usize,
    pub height: usize,
    pixels: Vec<u8>,
}

impl Canvas {
    pub fn new(width: usize, height: usize, background: Rgb) -> Canvas {
        let mut pixels = Vec::with_capacity(width * height * 3);
        for _ in 0..width * height {
            pixels.extend_from_slice(&background);
        }
        Canvas {
            width,
            height,
            pixels,
        }
    }

    pub fn set(&mut self, x: usize, y: usize, c: Rgb) {
        if x < self.width && y < self.height {
            let i = (y * self.width + x) * 3;
            self.pixels[i..i + 3].copy_from_slice(&c);
        }
    }

    pub fn get(&self, x: usize, y: usize) -> Rgb {
        let i = (y * self.width + x) * 3;
        [self.pixels[i], self.pixels[i + 1], self.pixels[i + 2]]
    }

    pub fn fill_rect(&mut self, x: usize, y: usize, w: usize, h: usize, c: Rgb) {
        for yy in y..(y + h).min(self.height) {
            for xx in x..(x + w).min(self.width) {
                self.set(xx, yy, c);
            }
        }
    }

    /// One-pixel rectangle outline.
    pub fn frame(&mut self, x: usize, y: usize, w: usize, h: usize, c: Rgb) {
        self.fill_rect(x, y, w, 1, c);
        self.fill_rect(x, y + h - 1, w, 1, c);
        self.fill_rect(x, y, 1, h, c);
        self.fill_rect(x + w - 1, y, 1, h, c);
    }

    /// Draws `text` with its top-left corner at (x, y), each font pixel `scale` pixels wide.
    pub fn text(&mut self, x: usize, y: usize, text: &str, scale: usize, c: Rgb) {
        for (i, ch) in text.chars().enumerate() {
            let rows = glyph(ch);
            let x0 = x + i * (GLYPH_W + 1) * scale;
            for (r, bits) in rows.iter().enumerate() {
                for col in 0..GLYPH_W {
                    if bits & (1 << (GLYPH_W - 1 - col)) != 0 {
                        self.fill_rect(x0 + col * scale, y + r * scale, scale, scale, c);
                    }
                }
            }
        }
    }

    /// Draws `text` centred horizontally on `cx`.
    pub fn text_centred(&mut self, cx: usize, y: usize, text: &str, scale: usize, c: Rgb) {
        let w = text_width(text) * scale;
        self.text(cx.saturating_sub(w / 2), y, text, scale, c);
    }

    /// Height in pixels of one line of text at `scale`.
    pub fn line_height(scale: usize) -> usize {
        GLYPH_H * scale
    }

    /// Encodes the canvas as an 8-bit RGB PNG.
    pub fn to_png(&self) -> Vec<u8> {
        let mut out = Vec::new();
        {
            let mut enc = png::Encoder::new(&mut out, self.width as u32, self.height as u32);
            enc.set_color(png::ColorType::Rgb);
            enc.set_depth(png::BitDepth::Eight);
            // writing into a Vec cannot fail for a correctly sized buffer
            let mut writer = enc.write_header().expect("PNG header into memory");
            writer
                .write_image_data(&self.pixels)
                .expect("PNG data into memory");
        }
        out
    }
}
