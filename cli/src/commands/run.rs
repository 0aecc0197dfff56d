//! `kugel run CONFIG.toml`: checks the whole config, prints the plan and memory estimate, runs
//! the job and prints a summary table. Exit codes: 0 ok, 3 invalid config or input, 4 I/O
//! failure, 5 not enough memory, 1 anything else.

use std::path::PathBuf;

use super::CommandContext;
use crate::progress_bar::TerminalProgress;
use kugel::pipeline::estimate::human_bytes;
use kugel::pipeline::run::{run_job, RunOptions, RunSummary};
use kugel::pipeline::Job;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// The job's TOML config (see docs/pipeline.md).
    pub config: PathBuf,
    /// Check the config, print the plan and the memory estimate, and stop.
    #[arg(long)]
    pub dry_run: bool,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let job = Job::load(&args.config)?;
    if args.dry_run {
        print!("{}", job.describe());
        println!("dry run: config is valid; nothing was computed or written");
        return Ok(());
    }
    if ctx.verbose && !ctx.quiet {
        eprint!("{}", job.describe());
    } else if !ctx.quiet {
        eprintln!(
            "memory estimate: peak about {}",
            human_bytes(job.memory.peak_bytes)
        );
    }
    let options = RunOptions {
        command_line: ctx.command_line.clone(),
        quiet: ctx.quiet,
        verbose: ctx.verbose,
    };
    let progress = TerminalProgress::new(ctx.quiet);
    let summary = run_job(&job, &options, &progress);
    progress.finish();
    let summary = summary?;
    if !ctx.quiet {
        for n in &summary.notes {
            eprintln!("note: {}: {n}", job.output_dir.display());
        }
        print!("{}", summary_table(&summary, &job));
    }
    Ok(())
}

/// The end-of-run table: steps with their key numbers, then the files written.
pub fn summary_table(s: &RunSummary, job: &Job) -> String {
    let mut out = String::from("\nstep               kind        time   key numbers\n");
    for r in &s.steps {
        let nums = r
            .numbers
            .iter()
            .map(|(k, v)| format!("{k} {v}"))
            .collect::<Vec<_>>()
            .join("; ");
        out.push_str(&format!(
            "{:<18} {:<10} {:>5.1}s  {}\n",
            r.name, r.kind, r.seconds, nums
        ));
    }
    out.push_str(&format!(
        "\n{} files in {}:\n",
        s.files.len(),
        job.output_dir.display()
    ));
    for f in &s.files {
        out.push_str(&format!(
            "  {:>10}  {:<34} {}\n",
            human_bytes(f.bytes),
            f.name,
            f.what
        ));
    }
    out.push_str(&format!("done in {:.1} s\n", s.seconds));
    out
}
