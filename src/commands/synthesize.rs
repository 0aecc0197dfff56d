//! `kugel synthesize`.

use super::CommandContext;

#[derive(Debug, clap::Args)]
pub struct Args {}

pub fn run(_args: &Args, _ctx: &CommandContext) -> anyhow::Result<()> {
    super::not_yet("synthesize")
}
