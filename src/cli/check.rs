//! `skybearing check`.

use clap::Args;

/// Flags of `skybearing check`.
#[derive(Debug, Args)]
pub struct CheckArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: CheckArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'check' is not built yet")
}
