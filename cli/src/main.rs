//! The `kugel` command line: parses arguments and hands them to `kugel_cli::commands`.

use clap::{Parser, Subcommand};
use kugel_cli::commands::{self, CommandContext};
use kugel_cli::outputs::all_or_nothing;

/// Large blocks freed by one step are kept for the next request of their size
/// (`kugel::retaining_alloc`, as the Python module does): a pipeline or a benchmark that
/// transforms grids of one shape again and again touches the same pages instead of faulting
/// in fresh ones for every grid.
#[global_allocator]
static ALLOCATOR: kugel::retaining_alloc::RetainingAlloc =
    kugel::retaining_alloc::RetainingAlloc::new();

/// kugel — spherical-field modelling: transforms, fits, spectra, potential fields, NetCDF.
#[derive(Debug, Parser)]
#[command(name = "kugel", version, about, long_about = None)]
struct Cli {
    /// Print nothing but errors.
    #[arg(long, global = true)]
    quiet: bool,
    /// Print more detail about each step.
    #[arg(long, short = 'v', global = true)]
    verbose: bool,
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run a whole job described by a TOML config.
    Run(commands::run::Args),
    /// Spherical-harmonic analysis of a global grid into a coefficient model.
    Analyze(commands::analyze::Args),
    /// Synthesise a coefficient model (or quantities derived from it) on a grid.
    Synthesize(commands::synthesize::Args),
    /// Convert coefficient models between text and NetCDF and between normalisations.
    Convert(commands::convert::Args),
    /// Grid scattered observations onto a Gauss grid.
    Grid(commands::grid::Args),
    /// Least-squares fit of scattered observations straight to coefficients.
    Fit(commands::fit::Args),
    /// Evaluate a model (or derived quantities) at points.
    Evaluate(commands::evaluate::Args),
    /// Degree-variance spectrum of a model, with confidence bands and a power-law fit.
    Spectrum(commands::spectrum::Args),
    /// Compare two models degree by degree.
    Compare(commands::compare::Args),
    /// Apply degree-domain filters to a model.
    Filter(commands::filter::Args),
    /// Rotate a model: move a point to the north pole, or by Euler angles.
    Rotate(commands::rotate::Args),
    /// Windows best concentrated in a spherical cap (spatio-spectral tapers).
    Tapers(commands::tapers::Args),
    /// Speed and accuracy benchmarks.
    Bench(commands::bench::Args),
    /// Regenerate the invented demo data set under demo-data/.
    MakeDemo(commands::make_demo::Args),
}

fn main() {
    let cli = Cli::parse();
    kugel_cli::interrupt::install();
    let ctx = CommandContext {
        command_line: std::env::args().collect::<Vec<_>>().join(" "),
        quiet: cli.quiet,
        verbose: cli.verbose,
    };
    let result = match &cli.command {
        // a run publishes through its own staging folder; the benchmark writes no files
        Command::Run(a) => commands::run::run(a, &ctx),
        Command::Analyze(a) => all_or_nothing(|| commands::analyze::run(a, &ctx)),
        Command::Synthesize(a) => all_or_nothing(|| commands::synthesize::run(a, &ctx)),
        Command::Convert(a) => all_or_nothing(|| commands::convert::run(a, &ctx)),
        Command::Grid(a) => all_or_nothing(|| commands::grid::run(a, &ctx)),
        Command::Fit(a) => all_or_nothing(|| commands::fit::run(a, &ctx)),
        Command::Evaluate(a) => all_or_nothing(|| commands::evaluate::run(a, &ctx)),
        Command::Spectrum(a) => all_or_nothing(|| commands::spectrum::run(a, &ctx)),
        Command::Compare(a) => all_or_nothing(|| commands::compare::run(a, &ctx)),
        Command::Filter(a) => all_or_nothing(|| commands::filter::run(a, &ctx)),
        Command::Rotate(a) => all_or_nothing(|| commands::rotate::run(a, &ctx)),
        Command::Tapers(a) => all_or_nothing(|| commands::tapers::run(a, &ctx)),
        Command::Bench(a) => commands::bench::run(a, &ctx),
        // the demo writer reports the sizes of the files it has put in place
        Command::MakeDemo(a) => commands::make_demo::run(a, &ctx),
    };
    if let Err(err) = result {
        eprintln!("error: {err:#}");
        std::process::exit(kugel_cli::exit_code::exit_code_for(&err));
    }
}
