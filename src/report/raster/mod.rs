//! Raster pictures: an RGB canvas with PNG encoding, text from an embedded outline font, the
//! colour map and its table, and the quick-look maps drawn with them.

pub mod canvas;
pub mod colormap;
pub mod font;
pub mod maps;
