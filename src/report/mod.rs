//! Quick-look pictures and the run report: PNG maps, SVG spectrum plots, HTML. Computes no
//! science.

pub mod html;
pub mod markup;
pub mod plots;
pub mod raster;
pub mod ticks;
pub mod units_text;
