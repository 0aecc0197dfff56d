//! Integration tests of the `kugel` command line: each module runs the built binary (or the
//! command functions) on small inputs made in a temporary folder and checks what it writes,
//! prints and exits with. One test binary for all subcommands.

mod analyze_convert;
mod bad_inputs;
mod demo_joint_fit;
mod determinism;
mod evaluate;
mod filter;
mod fit_functionals;
mod grid_fit;
mod interrupts;
mod refusals;
mod regional;
mod run_config;
mod run_end_to_end;
mod spectrum_compare;
mod synthesize;

/// Seeded synthetic models, shared with the library's spectral tests.
#[path = "../../../tests/spectral/support/mod.rs"]
mod support;

/// Runs the built `kugel` binary with `args` and returns what it printed and its exit status.
fn run_kugel(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_kugel"))
        .args(args)
        .output()
        .unwrap()
}
