//! `skybearing plan`.

use clap::Args;

/// Flags of `skybearing plan`.
#[derive(Debug, Args)]
pub struct PlanArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: PlanArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'plan' is not built yet")
}
