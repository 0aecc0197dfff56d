//! One file per `kugel` subcommand: its arguments (clap) and a `run` that calls the library.
//! `main.rs` only dispatches here.

pub mod analyze;
pub mod bench;
pub mod compare;
pub mod convert;
pub mod evaluate;
pub mod filter;
pub mod fit;
pub mod grid;
pub mod make_demo;
pub mod rotate;
pub mod run;
pub mod spectrum;
pub mod synthesize;
pub mod tapers;

/// Context shared by every command: the command line as typed (for `history` attributes) and
/// the verbosity.
#[derive(Debug, Clone, Default)]
pub struct CommandContext {
    /// The full command line, space-joined, recorded in every output's `history`.
    pub command_line: String,
    pub quiet: bool,
    pub verbose: bool,
}
