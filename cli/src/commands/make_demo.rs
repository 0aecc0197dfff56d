//! `kugel make-demo`: regenerates the invented demo data set (see `kugel_cli::demo`).

use std::path::PathBuf;

use super::CommandContext;
use crate::demo::{write_demo, Scenario};
use crate::progress_bar::TerminalProgress;
use kugel::pipeline::estimate::human_bytes;
use kugel::progress::Progress;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Folder to write the demo files into (created if missing; files in it are replaced).
    #[arg(long, default_value = "demo-data")]
    pub out: PathBuf,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let scenario = Scenario::oressa();
    let progress = TerminalProgress::new(ctx.quiet);
    progress.stage("writing the demo", 5);
    let report = write_demo(&args.out, &scenario, |stage| {
        progress.note(stage);
        progress.advance(1);
    });
    progress.finish();
    let report = report?;
    if !ctx.quiet {
        for (path, bytes) in &report.files {
            println!("{:>10}  {}", human_bytes(*bytes), path.display());
        }
        println!(
            "{:>10}  in total (invented data: {} and its surveys are not real)",
            human_bytes(report.total_bytes()),
            scenario.body_name
        );
    }
    Ok(())
}
