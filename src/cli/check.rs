//! `skybearing check`: validate session folders, and make interrupted ones whole.

use std::path::{Path, PathBuf};

use anyhow::Context;
use clap::Args;
use serde::Serialize;

use crate::archive::check::{CheckReport, RepairOutcome, check_session, repair_session};
use crate::archive::{SESSION_FILE, SessionStatus};

/// Flags of `skybearing check`.
#[derive(Debug, Args)]
#[command(
    after_help = "Exit status: 0 when every folder is fine, 1 when any is not, 2 on usage errors.\n\
A folder without session.json that holds session folders is checked folder by folder."
)]
pub struct CheckArgs {
    /// Session folders (or a folder of session folders).
    #[arg(required = true, value_name = "DIR")]
    pub dirs: Vec<PathBuf>,
    /// Make interrupted sessions whole: drop a torn last line (kept in a .torn file),
    /// recompute summary.json, set status "recovered", remove the stale lock.
    #[arg(long)]
    pub repair: bool,
    /// Print one JSON array with a record per folder instead of text.
    #[arg(long)]
    pub json: bool,
}

#[derive(Debug, Serialize)]
struct FolderResult {
    #[serde(flatten)]
    report: CheckReport,
    ok: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    repair: Option<RepairOutcome>,
    #[serde(skip_serializing_if = "Option::is_none")]
    repair_error: Option<String>,
}

/// The session folders named by the arguments: a folder with `session.json` is itself; a
/// folder without one stands for its sub-folders that have one (sorted by name).
fn expand(dirs: &[PathBuf]) -> anyhow::Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for d in dirs {
        if d.is_dir() && !d.join(SESSION_FILE).exists() {
            let mut subs: Vec<PathBuf> = std::fs::read_dir(d)
                .with_context(|| format!("{}", d.display()))?
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.join(SESSION_FILE).is_file())
                .collect();
            if !subs.is_empty() {
                subs.sort();
                out.extend(subs);
                continue;
            }
        }
        out.push(d.clone());
    }
    Ok(out)
}

fn status_word(r: &CheckReport) -> String {
    let status = r.status.map_or("unknown", SessionStatus::as_str);
    if r.interrupted {
        "interrupted".into()
    } else if r.live {
        "running (live)".into()
    } else {
        status.into()
    }
}

fn print_text(res: &FolderResult) {
    let r = &res.report;
    if let Some(rep) = &res.repair {
        for a in &rep.actions {
            println!("repaired {}: {a}", r.dir.display());
        }
        if rep.actions.is_empty() {
            println!("nothing to repair in {}", r.dir.display());
        }
    }
    if let Some(e) = &res.repair_error {
        println!("not repaired {}: {e}", r.dir.display());
    }
    println!(
        "{:<4} {}  {}, {} samples, {} events",
        if res.ok { "ok" } else { "FAIL" },
        r.dir.display(),
        status_word(r),
        r.samples,
        r.events
    );
    for p in &r.problems {
        println!("     - {p}");
    }
    for n in &r.notes {
        println!("     note: {n}");
    }
}

fn check_one(dir: &Path, repair: bool) -> FolderResult {
    let mut repair_out = None;
    let mut repair_error = None;
    if repair {
        let before = check_session(dir);
        if before.ok() {
            // Only the column file (a copy of samples.csv for batch) may be left to write.
            // `before` has just compared it with samples.csv: write it, without comparing again.
            let columns = before
                .columns_to_write
                .as_deref()
                .map(|why| crate::archive::columns::rewrite_columns(dir, why))
                .transpose();
            match columns {
                Ok(line) => {
                    repair_out = Some(RepairOutcome {
                        actions: line.into_iter().collect(),
                        removed: false,
                    })
                }
                Err(e) => repair_error = Some(e.to_string()),
            }
        } else {
            match repair_session(dir) {
                Ok(o) => repair_out = Some(o),
                Err(e) => repair_error = Some(e.to_string()),
            }
        }
    }
    if repair_out.as_ref().is_some_and(|o| o.removed) {
        // Nothing was recorded in it: gone is the whole repair.
        return FolderResult {
            ok: true,
            report: CheckReport::removed(dir),
            repair: repair_out,
            repair_error,
        };
    }
    let report = check_session(dir);
    FolderResult {
        ok: report.ok(),
        report,
        repair: repair_out,
        repair_error,
    }
}

/// Runs the command; returns the exit status.
pub fn run(args: CheckArgs) -> anyhow::Result<i32> {
    let dirs = expand(&args.dirs)?;
    let mut all_ok = true;
    let mut results = Vec::new();
    for d in &dirs {
        let res = check_one(d, args.repair);
        all_ok &= res.ok;
        if args.json {
            results.push(res);
        } else {
            print_text(&res);
        }
    }
    if args.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&results).context("writing the JSON report")?
        );
    }
    Ok(if all_ok { 0 } else { 1 })
}
