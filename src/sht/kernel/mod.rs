//! Fast transform kernels, private to `sht`: lanes of rings (`lanes`), the per-degree inner
//! loops (`block`), the per-order driver (`order`), the description of the compiled variants
//! (`path`), the column starts a plan finds once (`column_starts`) and the only unsafe code of the layer (`unsafe_parts`: the kernel table chosen
//! once per plan, and the per-order writers into the shared outputs). The scalar reference they
//! are tested against lives in `sht::reference`.

mod block;
mod column_starts;
mod fourier_columns;
mod lanes;
mod order;
mod path;
mod per_thread;
mod point_group;
mod starts;
#[allow(unsafe_code)]
mod unsafe_parts;

pub use path::KernelPath;

pub(crate) use column_starts::ColumnStarts;
pub(crate) use fourier_columns::{staging_bytes, FourierColumns};
pub(crate) use lanes::{build_lanes, is_symmetric, Lane};
pub(crate) use order::{
    analysis_block_bytes, order_major, packed_from_order_major, AnalysisJob, OrderScratch, SynthJob,
};
pub(crate) use point_group::{PointScratch, PointTables};
pub(crate) use unsafe_parts::{CoefficientSums, KernelSet};
