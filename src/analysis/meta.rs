//! What the analysis needs from `session.json` (and `summary.json` when present), read by
//! field name so that extra fields written by newer code do not matter.

use super::AnalysisError;
use crate::archive::{FORMAT_VERSION, Summary};
use serde_json::Value;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// One session folder's description.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SessionInfo {
    /// The folder.
    pub dir: PathBuf,
    /// Session id (`id` in session.json; the folder name if absent).
    pub id: String,
    /// Animal id (`animal`/`animal_id`; empty if unknown).
    pub animal: String,
    /// `running`, `complete`, `aborted`, `recovered` (empty if absent).
    pub status: String,
    /// RFC 3339 start (empty if absent).
    pub started_utc: String,
    /// RFC 3339 end (empty if absent).
    pub ended_utc: String,
    /// Protocol name (empty if absent).
    pub protocol: String,
    /// Site name (empty if absent).
    pub site: String,
    /// The archive format version written, if any.
    pub format_version: Option<u64>,
    /// Condition of each epoch (1-based index), from the protocol as run, else summary.json.
    pub conditions: BTreeMap<u32, String>,
    /// Settle window after turns, seconds, if the protocol says.
    pub settle_s: Option<f64>,
    /// summary.json, if the session was closed and it parses.
    pub summary: Option<Summary>,
}

impl SessionInfo {
    /// The condition of epoch `index` ("" when unknown).
    pub fn condition(&self, index: u32) -> &str {
        self.conditions
            .get(&index)
            .map(|s| s.as_str())
            .unwrap_or("")
    }

    /// The UTC date (YYYY-MM-DD) of the start, if readable.
    pub fn started_date(&self) -> Option<chrono::NaiveDate> {
        chrono::DateTime::parse_from_rfc3339(&self.started_utc)
            .ok()
            .map(|d| d.with_timezone(&chrono::Utc).date_naive())
    }

    /// True for a session that ended normally.
    pub fn is_complete(&self) -> bool {
        self.status == "complete"
    }
}

fn str_at<'a>(v: &'a Value, keys: &[&str]) -> Option<&'a str> {
    keys.iter().find_map(|k| v.get(*k).and_then(|x| x.as_str()))
}

/// Reads `dir/session.json` (required) and `dir/summary.json` (optional).
pub fn read_session_info(dir: &Path) -> Result<SessionInfo, AnalysisError> {
    let path = dir.join("session.json");
    let text = std::fs::read_to_string(&path).map_err(|e| AnalysisError::io(&path, e))?;
    let v: Value = serde_json::from_str(&text).map_err(|e| AnalysisError::Format {
        path: path.clone(),
        line: e.line() as u64,
        msg: e.to_string(),
    })?;
    if !v.is_object() {
        return Err(AnalysisError::Format {
            path,
            line: 1,
            msg: "not a JSON object".into(),
        });
    }
    let format_version = v.get("format_version").and_then(|x| x.as_u64());
    if let Some(fv) = format_version
        && fv > FORMAT_VERSION as u64
    {
        return Err(AnalysisError::NewerFormat {
            path,
            found: fv,
            supported: FORMAT_VERSION as u64,
        });
    }
    let folder_name = dir
        .file_name()
        .map(|s| s.to_string_lossy().to_string())
        .unwrap_or_default();
    let mut info = SessionInfo {
        dir: dir.to_path_buf(),
        id: str_at(&v, &["id", "session_id"])
            .map(str::to_string)
            .unwrap_or(folder_name),
        animal: str_at(&v, &["animal", "animal_id"])
            .map(str::to_string)
            .or_else(|| {
                v.get("animal")
                    .and_then(|a| str_at(a, &["id", "name"]))
                    .map(str::to_string)
            })
            .unwrap_or_default(),
        status: str_at(&v, &["status"]).unwrap_or("").to_string(),
        started_utc: str_at(&v, &["started_utc"]).unwrap_or("").to_string(),
        ended_utc: str_at(&v, &["ended_utc"]).unwrap_or("").to_string(),
        site: v
            .get("site")
            .and_then(|s| str_at(s, &["name"]))
            .unwrap_or("")
            .to_string(),
        format_version,
        ..Default::default()
    };
    if let Some(p) = v.get("protocol") {
        info.protocol = str_at(p, &["name"]).unwrap_or("").to_string();
        info.settle_s = p.get("settle_s").and_then(|x| x.as_f64());
        if let Some(eps) = p.get("epochs").and_then(|e| e.as_array()) {
            for (i, e) in eps.iter().enumerate() {
                let idx = e
                    .get("index")
                    .and_then(|x| x.as_u64())
                    .map(|x| x as u32)
                    .unwrap_or(i as u32 + 1);
                if let Some(c) = str_at(e, &["condition"]) {
                    info.conditions.insert(idx, c.to_string());
                }
            }
        }
    }
    let spath = dir.join("summary.json");
    if let Ok(text) = std::fs::read_to_string(&spath)
        && let Ok(summary) = serde_json::from_str::<Summary>(&text)
    {
        for e in &summary.epochs {
            info.conditions
                .entry(e.index as u32)
                .or_insert_with(|| e.condition.clone());
        }
        info.summary = Some(summary);
    }
    Ok(info)
}
