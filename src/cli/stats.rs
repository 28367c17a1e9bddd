//! `skybearing stats`.

use clap::Args;

/// Flags of `skybearing stats`.
#[derive(Debug, Args)]
pub struct StatsArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: StatsArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'stats' is not built yet")
}
