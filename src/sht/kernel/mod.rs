//! Fast transform kernels: lanes of rings (`lanes`), the per-degree inner loops (`block`), the
//! per-order driver (`order`) and runtime instruction-set dispatch (`dispatch`). The scalar
//! reference implementation they are tested against lives in `sht::reference`.

pub mod block;
pub mod dispatch;
pub mod lanes;
pub mod order;

pub use dispatch::KernelPath;
