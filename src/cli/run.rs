//! `skybearing run`.

use clap::Args;

/// Flags of `skybearing run`.
#[derive(Debug, Args)]
pub struct RunArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: RunArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'run' is not built yet")
}
