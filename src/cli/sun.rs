//! `skybearing sun`.

use clap::Args;

/// Flags of `skybearing sun`.
#[derive(Debug, Args)]
pub struct SunArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: SunArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'sun' is not built yet")
}
