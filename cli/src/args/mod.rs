//! Argument groups shared by several subcommands, so that no subcommand imports from another.

pub mod data_sets;
pub mod field;
pub mod numbers;
pub mod on_off;
pub mod points;
pub mod region;

pub use numbers::parse_numbers;
pub use on_off::OnOff;
pub use points::PointInputArgs;
pub use region::RegionArgs;
