//! What the analysis needs from `session.json` (read with the archive's [`SessionMeta`]) and
//! `summary.json` when present.

use super::AnalysisError;
use crate::archive::{FORMAT_VERSION, SessionMeta, Summary, format_utc_millis};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// One session folder's description, as the analysis uses it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SessionInfo {
    /// The folder.
    pub dir: PathBuf,
    /// Session id.
    pub id: String,
    /// Animal id.
    pub animal: String,
    /// `running`, `complete`, `aborted` or `recovered`.
    pub status: String,
    /// RFC 3339 start, UTC, milliseconds.
    pub started_utc: String,
    /// The UTC date of the start.
    pub started_date: Option<chrono::NaiveDate>,
    /// Protocol name ("" if the protocol as run has none).
    pub protocol: String,
    /// Site name.
    pub site: String,
    /// Condition of each planned epoch (1-based index).
    pub conditions: BTreeMap<usize, String>,
    /// The planned turn before each epoch (1-based index), degrees.
    pub turn_before_deg: BTreeMap<usize, f64>,
    /// summary.json, if the session was closed and it parses.
    pub summary: Option<Summary>,
    /// The full session.json.
    pub meta: Option<SessionMeta>,
    /// Epochs the operator skipped (`epoch_skipped` in `events.csv`).
    pub skipped_epochs: BTreeSet<usize>,
    /// The events a reader of the tables needs beside the numbers (`note`, `flight_stop`,
    /// `flight_start`, `epoch_skipped`), in file order.
    pub notes: Vec<NoteEvent>,
}

/// One row of `notes.csv`.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct NoteEvent {
    /// `t_utc` as written in `events.csv`.
    pub t_utc: String,
    /// Seconds since the session started.
    pub t_s: f64,
    /// Event kind.
    pub kind: String,
    /// Free text.
    pub detail: String,
}

/// Event kinds exported to `notes.csv`.
pub const NOTE_KINDS: &[&str] = &["note", "flight_stop", "flight_start", "epoch_skipped"];

/// Reads the skipped epochs and the notes from `dir/events.csv`. The events are context, not
/// data: a folder without a readable `events.csv` gives none (`check` reports such a file).
fn read_notes(dir: &Path, info: &mut SessionInfo) {
    let Ok((events, _)) = crate::archive::read::read_events(&dir.join("events.csv")) else {
        return;
    };
    for e in events {
        if e.kind == "epoch_skipped"
            && let Some(i) = e
                .detail
                .strip_prefix("epoch ")
                .and_then(|x| x.trim().parse::<usize>().ok())
        {
            info.skipped_epochs.insert(i);
        }
        if NOTE_KINDS.contains(&e.kind.as_str()) {
            info.notes.push(NoteEvent {
                t_utc: e.t_utc,
                t_s: e.t_s,
                kind: e.kind,
                detail: e.detail,
            });
        }
    }
}

impl SessionInfo {
    /// The condition of epoch `index` ("" when unknown).
    pub fn condition(&self, index: usize) -> &str {
        self.conditions
            .get(&index)
            .map(|s| s.as_str())
            .unwrap_or("")
    }

    /// True for a session that ended normally.
    pub fn is_complete(&self) -> bool {
        self.status == "complete"
    }
}

/// Reads `dir/session.json` (required; a newer `format_version` is refused with its own
/// message before the fields are parsed) and `dir/summary.json` (optional).
pub fn read_session_info(dir: &Path) -> Result<SessionInfo, AnalysisError> {
    let path = dir.join("session.json");
    let text = std::fs::read_to_string(&path).map_err(|e| AnalysisError::io(&path, e))?;
    // Look at the version first: a newer writer may have changed any other field.
    if let Ok(v) = serde_json::from_str::<serde_json::Value>(&text)
        && let Some(found) = v.get("format_version").and_then(|x| x.as_u64())
        && found > FORMAT_VERSION as u64
    {
        return Err(AnalysisError::NewerFormat {
            path,
            found,
            supported: FORMAT_VERSION as u64,
        });
    }
    let meta: SessionMeta = serde_json::from_str(&text).map_err(|e| AnalysisError::Format {
        path: path.clone(),
        line: e.line() as u64,
        msg: e.to_string(),
    })?;
    let mut info = SessionInfo {
        dir: dir.to_path_buf(),
        id: meta.id.clone(),
        animal: meta.animal.clone(),
        status: meta.status.as_str().to_string(),
        started_utc: format_utc_millis(&meta.started_utc),
        started_date: Some(meta.started_utc.date_naive()),
        protocol: meta
            .protocol
            .get("name")
            .and_then(|n| n.as_str())
            .unwrap_or("")
            .to_string(),
        site: meta.site.name.clone(),
        ..Default::default()
    };
    for e in &meta.epochs {
        info.conditions.insert(e.index, e.condition.clone());
        info.turn_before_deg.insert(e.index, e.turn_before_deg);
    }
    info.summary = Summary::load(dir).ok();
    read_notes(dir, &mut info);
    info.meta = Some(meta);
    Ok(info)
}
