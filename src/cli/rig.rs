//! `skybearing rig`.

use clap::Args;

/// Flags of `skybearing rig`.
#[derive(Debug, Args)]
pub struct RigArgs {}

/// Runs the command; returns the exit status.
pub fn run(args: RigArgs) -> anyhow::Result<i32> {
    let _ = args;
    anyhow::bail!("'rig' is not built yet")
}
