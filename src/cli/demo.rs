//! `skybearing demo`.

use clap::Args;

/// Flags of `skybearing demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: DemoArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'demo' is not built yet")
}
