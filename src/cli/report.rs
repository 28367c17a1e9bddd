//! `skybearing report`.

use clap::Args;

/// Flags of `skybearing report`.
#[derive(Debug, Args)]
pub struct ReportArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: ReportArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'report' is not built yet")
}
