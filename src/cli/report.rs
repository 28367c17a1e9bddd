//! `skybearing report`.

use crate::analysis::report::write_report;
use anyhow::Context;
use clap::Args;
use std::path::PathBuf;

/// Flags of `skybearing report`.
#[derive(Debug, Args)]
#[command(
    long_about = "Recomputes one session's statistics from samples.csv and writes epochs.csv, \
turns.csv, session.csv, notes.csv, summary.txt (also printed) and figures for print as SVG \
and PNG (300 dpi; _1col 85 mm or _2col 180 mm wide): heading_trace_2col (turns and \
not-scored stretches marked), epoch_roses_2col (world and arena frame per epoch), \
sun_relative_1col and turn_responses_1col."
)]
pub struct ReportArgs {
    /// The session folder.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Where to write (default: DIR/report).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

/// Runs the command; returns the exit status.
pub fn run(args: ReportArgs) -> anyhow::Result<i32> {
    if !args.dir.is_dir() {
        anyhow::bail!("{}: not a session folder", args.dir.display());
    }
    let out = args.out.unwrap_or_else(|| args.dir.join("report"));
    let rep = write_report(&args.dir, &out)
        .with_context(|| format!("report on {}", args.dir.display()))?;
    print!("{}", rep.summary);
    println!("wrote {} files to {}", rep.files.len(), out.display());
    Ok(0)
}
