//! `kugel make-demo`: regenerates the invented demo data set (see `pipeline::demo`).

use std::path::PathBuf;

use super::CommandContext;
use crate::pipeline::demo::{write_demo, Scenario};
use crate::pipeline::estimate::human_bytes;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Folder to write the demo files into (created if missing; files in it are replaced).
    #[arg(long, default_value = "demo-data")]
    pub out: PathBuf,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let scenario = Scenario::oressa();
    let progress = crate::pipeline::progress::Progress::new(ctx.quiet, 4);
    let report = write_demo(&args.out, &scenario, |stage| progress.stage(stage))?;
    progress.finish();
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
