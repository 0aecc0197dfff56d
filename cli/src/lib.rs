//! The `kugel` command line over the `kugel` library: one module per subcommand
//! ([`commands`]), argument groups they share ([`args`]), per-degree table outputs ([`tables`]), all-or-nothing outputs ([`outputs`]),
//! the benchmark cases ([`bench`](mod@bench)), the invented demo data set ([`demo`]), terminal progress
//! bars ([`progress_bar`]) and exit codes ([`exit_code`]). No science lives here: every number
//! comes from the library.

pub mod args;
pub mod bench;
pub mod commands;
pub mod demo;
pub mod exit_code;
pub mod interrupt;
pub mod outputs;
pub mod progress_bar;
pub mod tables;

pub use commands::CommandContext;
