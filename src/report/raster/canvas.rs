//! An RGB raster with the few drawing operations the quick-look pictures need, and PNG
//! encoding (`png` crate).

use super::font;

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

    /// Mixes `c` into the pixel at (x, y) with weight `coverage` ∈ [0, 1] (linear in the 8-bit
    /// values; anti-aliased text edges). Pixels outside the canvas are ignored.
    pub fn blend(&mut self, x: i64, y: i64, c: Rgb, coverage: f32) {
        if x < 0 || y < 0 || x as usize >= self.width || y as usize >= self.height {
            return;
        }
        let (x, y) = (x as usize, y as usize);
        let a = coverage.clamp(0.0, 1.0);
        let old = self.get(x, y);
        let mix = |o: u8, n: u8| (f32::from(o) * (1.0 - a) + f32::from(n) * a).round() as u8;
        self.set(
            x,
            y,
            [mix(old[0], c[0]), mix(old[1], c[1]), mix(old[2], c[2])],
        );
    }

    /// Draws `text` at `size_px` with the top of its line box at (x, y).
    pub fn text(&mut self, x: f32, y: f32, text: &str, size_px: f32, c: Rgb) {
        font::rasterise(text, x, y, size_px, |px, py, coverage| {
            self.blend(px, py, c, coverage)
        });
    }

    /// Draws `text` centred horizontally on `cx`.
    pub fn text_centred(&mut self, cx: f32, y: f32, text: &str, size_px: f32, c: Rgb) {
        let w = font::text_width_px(text, size_px);
        self.text(cx - w / 2.0, y, text, size_px, c);
    }

    /// Draws `text` ending at `right_x`.
    pub fn text_right(&mut self, right_x: f32, y: f32, text: &str, size_px: f32, c: Rgb) {
        let w = font::text_width_px(text, size_px);
        self.text(right_x - w, y, text, size_px, c);
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
