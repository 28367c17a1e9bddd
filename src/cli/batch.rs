//! `skybearing batch`.

use crate::analysis::batch::{Filters, run_batch, write_tables};
use crate::analysis::session::{ReadFrom, SampleSource, SessionStats};
use anyhow::Context;
use chrono::NaiveDate;
use clap::Args;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::path::PathBuf;

/// Flags of `skybearing batch`.
#[derive(Debug, Args)]
#[command(
    long_about = "Reads many session folders (or folders of session folders), recomputes the \
per-epoch statistics from samples.csv and writes tidy CSV tables: sessions.csv, epochs.csv, \
turns.csv, population.csv (second-order tests, one row per condition), comparisons.csv \
(Watson-Williams between conditions), paired.csv and paired_changes.csv (same animal, two \
conditions, V-test toward no change), animals.csv (consistency across sessions), \
skipped.csv (folders left out, and why) and figures/ (SVG and PNG for print: the animals' \
vectors per condition and frame, paired changes, turn responses across animals)."
)]
pub struct BatchArgs {
    /// Session folders, or folders holding session folders.
    #[arg(required = true, value_name = "DIR")]
    pub dirs: Vec<PathBuf>,
    /// Folder for the tables (created if needed).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Keep only epochs with this condition (repeat for several).
    #[arg(long, value_name = "LABEL")]
    pub condition: Vec<String>,
    /// Keep sessions started on or after this UTC date (YYYY-MM-DD or RFC 3339).
    #[arg(long, value_name = "DATE", value_parser = parse_date)]
    pub from: Option<NaiveDate>,
    /// Keep sessions started on or before this UTC date (YYYY-MM-DD or RFC 3339).
    #[arg(long, value_name = "DATE", value_parser = parse_date)]
    pub to: Option<NaiveDate>,
    /// Keep sessions with at least this many seconds of flight.
    #[arg(long, value_name = "S")]
    pub min_flying_s: Option<f64>,
    /// Keep sessions whose mean vector length of all scored world headings is at least this.
    #[arg(long, value_name = "R")]
    pub min_r: Option<f64>,
    /// Also include sessions that did not end normally (interrupted, recovered, aborted).
    #[arg(long)]
    pub include_incomplete: bool,
    /// Read every session's samples.csv, even where a samples.columns made from it is there
    /// (slower; the same tables).
    #[arg(long)]
    pub csv_only: bool,
    /// Worker threads (default: all cores).
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
}

fn parse_date(s: &str) -> Result<NaiveDate, String> {
    if let Ok(d) = NaiveDate::parse_from_str(s, "%Y-%m-%d") {
        return Ok(d);
    }
    chrono::DateTime::parse_from_rfc3339(s)
        .map(|d| d.with_timezone(&chrono::Utc).date_naive())
        .map_err(|_| format!("'{s}' is not a date (YYYY-MM-DD or RFC 3339)"))
}

/// Runs the command; returns the exit status.
pub fn run(args: BatchArgs) -> anyhow::Result<i32> {
    if let Some(r) = args.min_r
        && !(0.0..=1.0).contains(&r)
    {
        anyhow::bail!("--min-r {r}: must lie in [0, 1]");
    }
    if let Some(s) = args.min_flying_s
        && (s.is_nan() || s < 0.0)
    {
        anyhow::bail!("--min-flying-s {s}: must be 0 or more");
    }
    let filters = Filters {
        conditions: args.condition.clone(),
        from: args.from,
        to: args.to,
        min_flying_s: args.min_flying_s,
        min_r: args.min_r,
        include_incomplete: args.include_incomplete,
    };
    let bar = if std::io::stderr().is_terminal() {
        let b = ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr());
        b.set_style(
            ProgressStyle::with_template("{bar:40} {pos}/{len} sessions {elapsed_precise}")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        b
    } else {
        ProgressBar::hidden()
    };
    let pool = {
        let mut b = rayon::ThreadPoolBuilder::new();
        if let Some(j) = args.jobs {
            b = b.num_threads(j.max(1));
        }
        b.build().context("starting worker threads")?
    };
    let result = pool.install(|| {
        let source = if args.csv_only {
            SampleSource::CsvOnly
        } else {
            SampleSource::ColumnsIfValid
        };
        run_batch(&args.dirs, &filters, source, &|| bar.inc(1), &|n| {
            bar.set_length(n as u64)
        })
    });
    bar.finish_and_clear();
    let result = result?;

    for s in result.skipped.iter().filter(|s| s.kind == "error") {
        eprintln!("skipped {}: {}", s.folder.display(), s.reason);
    }
    for s in result.skipped.iter().filter(|s| s.kind == "duplicate") {
        eprintln!("warning: {}: {}", s.folder.display(), s.reason);
    }
    let filtered = result
        .skipped
        .iter()
        .filter(|s| s.kind == "filtered")
        .count();
    let duplicates = result
        .skipped
        .iter()
        .filter(|s| s.kind == "duplicate")
        .count();
    if result.read_ok == 0 {
        anyhow::bail!(
            "no session could be read in {} (see the lines above)",
            args.dirs
                .iter()
                .map(|d| d.display().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    let names = write_tables(&result, &args.out)
        .with_context(|| format!("writing tables to {}", args.out.display()))?;
    let errors = result.skipped.len() - filtered - duplicates;
    eprintln!(
        "batch: {} sessions in the tables, {} filtered out, {} found twice (counted once), {} unreadable skipped",
        result.sessions.len(),
        filtered,
        duplicates,
        errors
    );
    report_sources(&result.sessions, args.csv_only);
    println!("wrote {} to {}", names.join(", "), args.out.display());
    Ok(0)
}

/// Says where the samples came from: each session whose `samples.columns` was there but not
/// used, and how many were read from each file.
fn report_sources(sessions: &[SessionStats], csv_only: bool) {
    if csv_only {
        eprintln!(
            "batch: samples of {} sessions from samples.csv (--csv-only)",
            sessions.len()
        );
        return;
    }
    let mut columns = 0;
    let mut without = 0;
    for s in sessions {
        match &s.read_from {
            ReadFrom::Columns => columns += 1,
            ReadFrom::Csv(None) => without += 1,
            ReadFrom::Csv(Some(why)) => {
                without += 1;
                eprintln!(
                    "note: {}: samples.columns not used ({why}); read samples.csv instead",
                    s.info.dir.display()
                );
            }
        }
    }
    if without > 0 {
        eprintln!(
            "batch: samples of {columns} sessions from samples.columns, {without} from samples.csv (`skybearing check --repair` writes samples.columns where it is missing or out of date)"
        );
    } else {
        eprintln!("batch: samples of {columns} sessions from samples.columns");
    }
}
