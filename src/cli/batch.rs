//! `skybearing batch`.

use clap::Args;

/// Flags of `skybearing batch`.
#[derive(Debug, Args)]
pub struct BatchArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: BatchArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'batch' is not built yet")
}
