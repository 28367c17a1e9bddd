//! `skybearing sim`.

use clap::Args;

/// Flags of `skybearing sim`.
#[derive(Debug, Args)]
pub struct SimArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: SimArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'sim' is not built yet")
}
