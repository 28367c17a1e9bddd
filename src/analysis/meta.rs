//! What the analysis needs from `session.json` (read with the archive's [`SessionMeta`]) and
//! `summary.json` when present.

use super::AnalysisError;
use crate::archive::{FORMAT_VERSION, SessionMeta, Summary, format_utc_millis};
use std::collections::BTreeMap;
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
    info.meta = Some(meta);
    Ok(info)
}
