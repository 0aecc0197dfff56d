//! Quick-look pictures and the run report: PNG maps, SVG spectrum plots, HTML. Computes no
//! science.
pub mod plots;
