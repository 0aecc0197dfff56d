//! Argument groups shared by several subcommands, so that no subcommand imports from another.

pub mod field;
pub mod on_off;
pub mod points;

pub use on_off::OnOff;
pub use points::PointInputArgs;
