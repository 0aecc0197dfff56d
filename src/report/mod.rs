//! Quick-look pictures and the run report: PNG maps, SVG spectrum plots, HTML. Computes no
//! science.

pub mod canvas;
pub mod colormap;
pub mod font;
pub mod html;
pub mod maps;
pub mod plots;
pub mod ticks;
