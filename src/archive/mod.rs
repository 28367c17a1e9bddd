//! The session archive: one folder per session, append-only CSV files, atomic JSON.
//! (Shared types fixed by the lead; bodies owned by the archive work.)
//!
//! Layout (see shared/contract.md): `sessions/<id>/` with
//! - `session.json` ([`SessionMeta`]): written atomically (temporary file, fsync, rename,
//!   fsync of the folder) at the start with status `running`, and again when the session ends;
//! - `samples.csv` ([`SAMPLE_COLUMNS`]): one row per sample. `t_utc` RFC 3339 UTC with
//!   milliseconds (truncated), `t_s` with 6 decimals (microseconds), angles with 3 decimals
//!   (directions in [0, 360), `zenith_evector_deg` in [0, 180)), `sun_elevation_deg` with 3
//!   decimals, `flying` and `scored` 0/1, `raw` the shortest text that reads back to the exact
//!   value received;
//! - `events.csv` ([`EVENT_COLUMNS`]): `detail` (and `kind`) quoted per RFC 4180 when needed;
//!   malformed sensor lines are counted there per second (`malformed_lines`);
//! - `malformed.csv` ([`MALFORMED_COLUMNS`]), only when the sensor sent any: one row per
//!   malformed line with its reason and the line itself (`rig::decoder::escape_raw_line`);
//! - `summary.json` ([`Summary`], built by [`SummaryBuilder`]) once the session is closed;
//!   statistics that are undefined (an empty epoch) are written `null`;
//! - `.lock` while a writer has the folder: its pid (and process start time on Linux).
//!
//! Both CSV files are appended through a buffer and fsynced at least once a second of real
//! time, so an interruption loses at most the last second and can tear only the last line.
//! `skybearing check` ([`check::check_session`]) validates a folder; `check --repair`
//! ([`check::repair_session`]) drops a torn last line (keeping the bytes in `<file>.torn`),
//! recomputes `summary.json` and marks the session `recovered`; it never rewrites the summary
//! of a closed session from fewer samples than it counts (a loss is reported instead). A last line without its
//! newline is always treated as torn (its last field may be cut short), even if it parses.

pub mod atomic;
pub mod check;
pub mod columns;
mod compare;
pub mod cue_scores;
pub mod fmt;
pub mod lock;
pub mod malformed;
pub mod read;
pub mod summary;
mod windows;
pub mod writer;

use std::path::{Path, PathBuf};

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

pub use summary::{EpochCache, PlannedEpoch, SummaryBuilder};
pub use windows::{MIN_TURN_WINDOW_S, TURN_WINDOW_S};
pub use writer::SessionWriter;

/// The archive format version written into `session.json` as `format_version`.
pub const FORMAT_VERSION: u32 = 1;

/// The header of `samples.csv`, in column order. The first ten columns are the contract's.
pub const SAMPLE_COLUMNS: &[&str] = &[
    "t_utc",
    "t_s",
    "epoch",
    "arena_heading_deg",
    "arena_bearing_deg",
    "world_heading_deg",
    "sun_azimuth_deg",
    "sun_elevation_deg",
    "flying",
    "scored",
    "sun_relative_heading_deg",
    "zenith_evector_deg",
    "raw",
    "sun_in_view",
    "evector_shown_deg",
];

/// The header of `events.csv`.
pub const EVENT_COLUMNS: &[&str] = &["t_utc", "t_s", "kind", "detail"];
/// Columns of `malformed.csv`, in order.
pub const MALFORMED_COLUMNS: &[&str] = &["t_utc", "t_s", "reason", "line"];

/// One row of `samples.csv`.
#[derive(Debug, Clone, PartialEq)]
pub struct SampleRow {
    /// UTC of the sample (anchor + monotonic t_s), written RFC 3339 with milliseconds.
    pub t_utc: DateTime<Utc>,
    /// Seconds since the session started (monotonic).
    pub t_s: f64,
    /// 1-based epoch index (0 before the first epoch starts).
    pub epoch: usize,
    /// Heading relative to the arena's 0 mark.
    pub arena_heading_deg: f64,
    /// True bearing of the arena's 0 mark at this sample.
    pub arena_bearing_deg: f64,
    /// Heading relative to true north.
    pub world_heading_deg: f64,
    /// Sun azimuth.
    pub sun_azimuth_deg: f64,
    /// Apparent sun elevation.
    pub sun_elevation_deg: f64,
    /// The animal was flying.
    pub flying: bool,
    /// The sample counts in scores (not in a settle window, a turn, a prompt or a flight stop).
    pub scored: bool,
    /// World heading minus sun azimuth.
    pub sun_relative_heading_deg: f64,
    /// Zenith e-vector axis, [0, 180).
    pub zenith_evector_deg: f64,
    /// The raw sensor value as received.
    pub raw: f64,
    /// The sun's disc was in the animal's view (cue visible, above the horizon and the arena's
    /// sky view limit).
    pub sun_in_view: bool,
    /// World axis [0, 180) of the e-vector the animal was shown (sky or filter); None without
    /// polarization (written empty).
    pub evector_shown_deg: Option<f64>,
}

/// One row of `events.csv`.
#[derive(Debug, Clone, PartialEq)]
pub struct EventRow {
    /// UTC.
    pub t_utc: DateTime<Utc>,
    /// Seconds since the session started.
    pub t_s: f64,
    /// Event kind (snake_case word: epoch_start, turn_commanded, turn_done, turn_fault,
    /// flight_stop, flight_start, note, pause, resume, epoch_skipped, prompt, prompt_confirmed,
    /// sensor_lost, sensor_back, malformed_lines, samples_dropped, session_end...).
    pub kind: String,
    /// Free text (quoted as CSV needs).
    pub detail: String,
}

/// One row of `malformed.csv`: a sensor line that was not a sample.
#[derive(Debug, Clone, PartialEq)]
pub struct MalformedRow {
    /// UTC of arrival.
    pub t_utc: DateTime<Utc>,
    /// Session seconds of arrival.
    pub t_s: f64,
    /// Why it was rejected.
    pub reason: String,
    /// The line as received, escaped by `rig::decoder::escape_raw_line`.
    pub line: String,
}

/// Statistics of one epoch in `summary.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(from = "EpochSummaryFile")]
pub struct EpochSummary {
    /// 1-based epoch index.
    pub index: usize,
    /// Condition label.
    pub condition: String,
    /// True bearing of the arena mark during the epoch.
    #[serde(with = "nan_as_null")]
    pub arena_bearing_deg: f64,
    /// Scored samples.
    pub n: u64,
    /// Mean arena heading (None with no scored samples).
    pub mean_arena_deg: Option<f64>,
    /// Mean world heading.
    pub mean_world_deg: Option<f64>,
    /// Mean vector length of world headings (NaN, written null, with no scored samples).
    #[serde(with = "nan_as_null")]
    pub r: f64,
    /// Rayleigh p on n, the naive figure that takes every sample as independent (NaN, written
    /// null, with no scored samples).
    #[serde(with = "nan_as_null")]
    pub rayleigh_p: f64,
    /// The calibrated orientation test of the world headings
    /// ([`crate::circular::OrientationTracker`]); None with too little flight to say.
    pub p_oriented: Option<f64>,
    /// What the animal was shown, and the axial scores under polarization only.
    #[serde(flatten)]
    pub cue: cue_scores::EpochCueScore,
}

/// `EpochSummary` as stored (archives written before `p_oriented` existed read as None).
#[derive(Deserialize)]
struct EpochSummaryFile {
    index: usize,
    condition: String,
    #[serde(with = "nan_as_null")]
    arena_bearing_deg: f64,
    n: u64,
    mean_arena_deg: Option<f64>,
    mean_world_deg: Option<f64>,
    #[serde(with = "nan_as_null")]
    r: f64,
    #[serde(with = "nan_as_null")]
    rayleigh_p: f64,
    #[serde(default)]
    p_oriented: Option<f64>,
    /// Archives written before cues were recorded read as no cue scores.
    #[serde(flatten)]
    cue: cue_scores::EpochCueScore,
}

impl From<EpochSummaryFile> for EpochSummary {
    fn from(f: EpochSummaryFile) -> Self {
        EpochSummary {
            index: f.index,
            condition: f.condition,
            arena_bearing_deg: f.arena_bearing_deg,
            n: f.n,
            mean_arena_deg: f.mean_arena_deg,
            mean_world_deg: f.mean_world_deg,
            r: f.r,
            rayleigh_p: f.rayleigh_p,
            p_oriented: f.p_oriented,
            cue: f.cue,
        }
    }
}

/// One turn in `summary.json`: turn k lies between epoch k and epoch k + 1.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TurnSummary {
    /// 1-based turn index.
    pub index: usize,
    /// Commanded turn, degrees (positive clockwise seen from above).
    #[serde(with = "nan_as_null")]
    pub turn_deg: f64,
    /// Mean world heading after minus before, (-180, 180]; None if either side has no data.
    pub world_shift_deg: Option<f64>,
    /// What steering by the cue shown predicts for the shift.
    #[serde(flatten)]
    pub cue: cue_scores::TurnCuePrediction,
    /// World shift on comparable windows: the mean of the first W scored seconds after the
    /// turn (after the settle window) minus that of the last W scored seconds before, W =
    /// min(TURN_WINDOW_S, the scored flight of either epoch); None below MIN_TURN_WINDOW_S.
    /// What the turn test uses.
    #[serde(default)]
    pub window_shift_deg: Option<f64>,
}

/// The session's turn-compensation test ([`crate::circular::turn_compensation_test`]) over
/// the turns with a `window_shift_deg`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct TurnTest {
    /// Turns with headings on both sides.
    pub turns: usize,
    /// Mean of their world shifts, (-180, 180].
    pub mean_world_shift_deg: Option<f64>,
    /// V-test p of the world shifts toward 0 (kept the world heading); None below 3 turns.
    pub p_world_kept: Option<f64>,
    /// V-test p of world shift − turn toward 0 (kept the arena heading); None below 3 turns.
    pub p_arena_kept: Option<f64>,
}

/// `summary.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(into = "SummaryFile", from = "SummaryFile")]
pub struct Summary {
    /// Per epoch.
    pub epochs: Vec<EpochSummary>,
    /// Per turn.
    pub turns: Vec<TurnSummary>,
    /// r of all scored world headings.
    #[serde(with = "nan_as_null")]
    pub r_world: f64,
    /// r of all scored arena headings.
    #[serde(with = "nan_as_null")]
    pub r_arena: f64,
}

/// `Summary` as written: the fields plus `turn_test`, which is derived from the turns
/// ([`Summary::turn_test`]) and so not stored in the struct.
#[derive(Serialize, Deserialize)]
struct SummaryFile {
    epochs: Vec<EpochSummary>,
    turns: Vec<TurnSummary>,
    #[serde(with = "nan_as_null")]
    r_world: f64,
    #[serde(with = "nan_as_null")]
    r_arena: f64,
    #[serde(default)]
    turn_test: TurnTest,
    /// The lag window, seconds, of the diffusion fit behind every `p_oriented`
    /// ([`crate::circular::LAG_MIN_S`], [`crate::circular::LAG_MAX_S`]); absent in archives
    /// written while the window was 1–5 s.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    p_oriented_lags_s: Option<[f64; 2]>,
}

/// The lag window of the diffusion fit behind `p_oriented` as this program computes it.
pub const P_ORIENTED_LAGS_S: [f64; 2] = [crate::circular::LAG_MIN_S, crate::circular::LAG_MAX_S];

impl From<Summary> for SummaryFile {
    fn from(s: Summary) -> Self {
        let turn_test = s.turn_test();
        SummaryFile {
            epochs: s.epochs,
            turns: s.turns,
            r_world: s.r_world,
            r_arena: s.r_arena,
            turn_test,
            p_oriented_lags_s: Some(P_ORIENTED_LAGS_S),
        }
    }
}

impl From<SummaryFile> for Summary {
    fn from(f: SummaryFile) -> Self {
        Summary {
            epochs: f.epochs,
            turns: f.turns,
            r_world: f.r_world,
            r_arena: f.r_arena,
        }
    }
}

impl Summary {
    /// The session's turn test ([`crate::circular::turn_compensation_test`]) over the turns
    /// that have a `window_shift_deg`.
    pub fn turn_test(&self) -> TurnTest {
        let (shifts, turned): (Vec<f64>, Vec<f64>) = self
            .turns
            .iter()
            .filter_map(|t| t.window_shift_deg.map(|d| (d, t.turn_deg)))
            .unzip();
        let r = crate::circular::turn_compensation_test(&shifts, &turned);
        TurnTest {
            turns: r.turns,
            mean_world_shift_deg: r.mean_world_shift_deg,
            p_world_kept: r.p_world_kept,
            p_arena_kept: r.p_arena_kept,
        }
    }
}

/// File names inside a session folder.
pub const SESSION_FILE: &str = "session.json";
/// Sample rows.
pub const SAMPLES_FILE: &str = "samples.csv";
/// Event rows.
pub const EVENTS_FILE: &str = "events.csv";
/// Malformed sensor lines, raw (created with the first one).
pub const MALFORMED_FILE: &str = "malformed.csv";
/// Written once the session is closed.
pub const SUMMARY_FILE: &str = "summary.json";
/// Held (O_EXCL, holding the writer's pid) while a writer has the folder open.
pub const LOCK_FILE: &str = ".lock";

/// Decimals written for angles (degrees) in `samples.csv`: 3 (a thousandth of a degree).
pub const ANGLE_DECIMALS: u32 = 3;
/// Decimals written for `t_s` (seconds) in the CSV files: 6 (a microsecond, so a sensor
/// faster than 10 kHz keeps its own arrival times).
pub const T_S_DECIMALS: u32 = 6;

/// Everything that can go wrong in the archive. Every variant names the file (and line or
/// field) it is about.
#[derive(Debug, thiserror::Error)]
pub enum ArchiveError {
    /// An I/O error on a path.
    #[error("{path}: {source}")]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// An animal id that cannot be part of a folder name.
    #[error(
        "animal id {id:?} is not allowed: use 1-40 letters, digits, '-', '_' or '.', not starting with '.'"
    )]
    BadAnimalId {
        /// The id as given.
        id: String,
    },
    /// A session id that cannot be a folder name.
    #[error(
        "session id {id:?} is not allowed: use 1-120 letters, digits, '-', '_' or '.', not starting with '.'"
    )]
    BadSessionId {
        /// The id as given.
        id: String,
    },
    /// The session folder already exists.
    #[error("{path}: session folder already exists")]
    Exists {
        /// The folder.
        path: PathBuf,
    },
    /// Another writer holds the folder.
    #[error("{path}: session is locked by process {pid}")]
    Locked {
        /// The lock file.
        path: PathBuf,
        /// The holder's pid (0 if unreadable).
        pid: u32,
    },
    /// No free counter left for a session id.
    #[error("{dir}: no free session counter for {prefix}_NNN")]
    NoFreeCounter {
        /// The sessions folder.
        dir: PathBuf,
        /// The id prefix.
        prefix: String,
    },
    /// Data of a closed session is gone: repair refuses to paper over it.
    #[error("{path}: {message}")]
    Lost {
        /// The file that lost data.
        path: PathBuf,
        /// What was lost and what was kept.
        message: String,
    },
    /// A malformed file: a CSV line, a JSON field.
    #[error("{path}:{line}: {message}")]
    Format {
        /// The file.
        path: PathBuf,
        /// 1-based line (0 when not about one line).
        line: u64,
        /// What is wrong.
        message: String,
    },
    /// A JSON file that does not parse as what it should be.
    #[error("{path}: {source}")]
    Json {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: serde_json::Error,
    },
}

impl ArchiveError {
    /// Wraps an I/O error with its path.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        ArchiveError::Io {
            path: path.into(),
            source,
        }
    }
}

/// Whether `c` may appear in an animal or session id.
fn id_char_ok(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.'
}

fn id_ok(id: &str, max_len: usize) -> bool {
    !id.is_empty() && id.len() <= max_len && !id.starts_with('.') && id.chars().all(id_char_ok)
}

/// Checks an animal id: 1–40 ASCII letters, digits, `-`, `_` or `.`, not starting with `.`
/// (so it can never name a hidden file, a parent folder or a path with separators).
pub fn validate_animal_id(id: &str) -> Result<(), ArchiveError> {
    if id_ok(id, 40) {
        Ok(())
    } else {
        Err(ArchiveError::BadAnimalId { id: id.to_string() })
    }
}

/// Checks a session id (a single folder name): 1–120 of the same characters as an animal id.
pub fn validate_session_id(id: &str) -> Result<(), ArchiveError> {
    if id_ok(id, 120) {
        Ok(())
    } else {
        Err(ArchiveError::BadSessionId { id: id.to_string() })
    }
}

/// Lower-case slug of a site name: ASCII letters and digits kept, every other run of
/// characters becomes one `-` ("Larkfield Meadow (demo)" → "larkfield-meadow-demo").
/// Empty names give "site". At most 40 characters.
pub fn site_slug(site_name: &str) -> String {
    let mut out = String::new();
    let mut dash = false;
    for c in site_name.chars() {
        if c.is_ascii_alphanumeric() {
            if dash && !out.is_empty() {
                out.push('-');
            }
            dash = false;
            out.push(c.to_ascii_lowercase());
        } else {
            dash = true;
        }
        if out.len() >= 40 {
            break;
        }
    }
    let out = out.trim_end_matches('-').to_string();
    if out.is_empty() { "site".into() } else { out }
}

/// A new session id `<date>_<site slug>_<animal>_<NNN>` whose counter (001–999) does not
/// collide with any existing entry of `sessions_dir` with the same prefix (the folder may not
/// exist yet). The animal id is validated first.
pub fn new_session_id(
    sessions_dir: &Path,
    date: NaiveDate,
    site_name: &str,
    animal: &str,
) -> Result<String, ArchiveError> {
    new_rig_session_id(sessions_dir, date, site_name, None, animal)
}

/// [`new_session_id`] for a named rig: `<date>_<site slug>_<rig>_<animal>_<NNN>`, so sessions
/// of rigs run side by side (the same day, site and animal id) never share an id, even when
/// their archives are merged later. Without a rig name, the id of [`new_session_id`].
pub fn new_rig_session_id(
    sessions_dir: &Path,
    date: NaiveDate,
    site_name: &str,
    rig_name: Option<&str>,
    animal: &str,
) -> Result<String, ArchiveError> {
    validate_animal_id(animal)?;
    let rig = rig_name.map(|r| format!("_{r}")).unwrap_or_default();
    let prefix = format!(
        "{}_{}{rig}_{}",
        date.format("%Y-%m-%d"),
        site_slug(site_name),
        animal
    );
    let mut max_used = 0u32;
    match std::fs::read_dir(sessions_dir) {
        Ok(entries) => {
            for entry in entries {
                let entry = entry.map_err(|e| ArchiveError::io(sessions_dir, e))?;
                let name = entry.file_name();
                let Some(name) = name.to_str() else { continue };
                if let Some(rest) = name.strip_prefix(prefix.as_str())
                    && let Some(num) = rest.strip_prefix('_')
                    && num.len() == 3
                    && let Ok(k) = num.parse::<u32>()
                {
                    max_used = max_used.max(k);
                }
            }
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
        Err(e) => return Err(ArchiveError::io(sessions_dir, e)),
    }
    let next = max_used + 1;
    if next > 999 {
        return Err(ArchiveError::NoFreeCounter {
            dir: sessions_dir.to_path_buf(),
            prefix,
        });
    }
    let id = format!("{prefix}_{next:03}");
    validate_session_id(&id)?;
    Ok(id)
}

/// The state of a session folder, as written in `session.json`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SessionStatus {
    /// A writer has (or had, if it died) the folder open.
    Running,
    /// Ended normally.
    Complete,
    /// Ended early by the operator or a rule.
    Aborted,
    /// Made whole by `check --repair` after an interruption.
    Recovered,
}

impl SessionStatus {
    /// The word written in `session.json`.
    pub fn as_str(self) -> &'static str {
        match self {
            SessionStatus::Running => "running",
            SessionStatus::Complete => "complete",
            SessionStatus::Aborted => "aborted",
            SessionStatus::Recovered => "recovered",
        }
    }
    /// Closed sessions carry a `summary.json`.
    pub fn is_closed(self) -> bool {
        self != SessionStatus::Running
    }
}

/// The site of a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SiteMeta {
    /// Name.
    pub name: String,
    /// Latitude, degrees north.
    pub latitude_deg: f64,
    /// Longitude, degrees east.
    pub longitude_deg: f64,
    /// Elevation above sea level, metres.
    pub elevation_m: f64,
    /// Where the coordinates came from: "gps" (a fix at the session start), "rig_file" or
    /// "built_in" (the demo rig). `None` in sessions written before it was recorded.
    #[serde(default)]
    pub source: Option<String>,
}

/// `session.json`: everything about a session except its samples and events.
/// Instants are RFC 3339 UTC with milliseconds.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SessionMeta {
    /// [`FORMAT_VERSION`].
    pub format_version: u32,
    /// The session id (the folder name).
    pub id: String,
    /// Running, complete, aborted or recovered.
    pub status: SessionStatus,
    /// UTC at t_s = 0.
    #[serde(with = "utc_millis")]
    pub started_utc: DateTime<Utc>,
    /// UTC of the end (None while running).
    #[serde(with = "utc_millis_opt")]
    pub ended_utc: Option<DateTime<Utc>>,
    /// Animal id.
    pub animal: String,
    /// Site.
    pub site: SiteMeta,
    /// IANA time zone for display (times in the files are UTC).
    pub time_zone: String,
    /// True bearing of the arena's 0 mark at the start.
    pub arena_mark_bearing_deg: f64,
    /// The bearing as measured at setup (true or magnetic, see `arena_mark_reference`).
    pub arena_mark_bearing_measured_deg: f64,
    /// "true" or "magnetic".
    pub arena_mark_reference: String,
    /// Magnetic declination (WMM) at the site and date, east positive; None if not known.
    pub declination_deg: Option<f64>,
    /// The expanded protocol as run.
    pub protocol: serde_json::Value,
    /// The planned epochs (conditions and turn sizes: repair and check read these).
    pub epochs: Vec<PlannedEpoch>,
    /// The rig as run.
    pub rig: serde_json::Value,
    /// Program version that wrote the session.
    pub program_version: String,
    /// "demo" or "run".
    pub mode: String,
    /// Simulation seed (demo mode).
    #[serde(default)]
    pub seed: Option<u64>,
    /// Why the session ended (None while running).
    #[serde(default)]
    pub end_reason: Option<String>,
    /// Notes taken during the session.
    #[serde(default)]
    pub notes: u64,
    /// The laptop clock minus GPS time at the start, seconds (positive: the laptop was
    /// ahead); `None` when no GPS fix measured it.
    #[serde(default)]
    pub clock_offset_s: Option<f64>,
    /// What the rig's GPS gave at the start ([`crate::rig::gps::GpsStart`]); absent for a rig
    /// without `[gps]`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gps: Option<serde_json::Value>,
}

impl SessionMeta {
    /// Reads and parses `session.json` from a session folder.
    pub fn load(dir: &Path) -> Result<SessionMeta, ArchiveError> {
        read_json(&dir.join(SESSION_FILE))
    }
}

/// Reads a JSON file into `T`.
pub fn read_json<T: serde::de::DeserializeOwned>(path: &Path) -> Result<T, ArchiveError> {
    let bytes = std::fs::read(path).map_err(|e| ArchiveError::io(path, e))?;
    serde_json::from_slice(&bytes).map_err(|source| ArchiveError::Json {
        path: path.to_path_buf(),
        source,
    })
}

impl Summary {
    /// Reads `summary.json` from a session folder.
    pub fn load(dir: &Path) -> Result<Summary, ArchiveError> {
        read_json(&dir.join(SUMMARY_FILE))
    }
}

/// Formats an instant as RFC 3339 UTC with milliseconds (`2026-06-14T09:30:00.123Z`).
pub fn format_utc_millis(t: &DateTime<Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Millis, true)
}

/// Parses an RFC 3339 instant into UTC.
pub fn parse_utc(s: &str) -> Option<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(s)
        .ok()
        .map(|t| t.with_timezone(&Utc))
}

mod utc_millis {
    use chrono::{DateTime, Utc};
    use serde::{Deserialize, Deserializer, Serializer};

    pub fn serialize<S: Serializer>(t: &DateTime<Utc>, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&super::format_utc_millis(t))
    }
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<DateTime<Utc>, D::Error> {
        let s = String::deserialize(d)?;
        super::parse_utc(&s)
            .ok_or_else(|| serde::de::Error::custom(format!("not an RFC 3339 instant: {s:?}")))
    }
}

mod utc_millis_opt {
    use chrono::{DateTime, Utc};
    use serde::{Deserialize, Deserializer, Serializer};

    pub fn serialize<S: Serializer>(t: &Option<DateTime<Utc>>, s: S) -> Result<S::Ok, S::Error> {
        match t {
            Some(t) => s.serialize_str(&super::format_utc_millis(t)),
            None => s.serialize_none(),
        }
    }
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Option<DateTime<Utc>>, D::Error> {
        let s = Option::<String>::deserialize(d)?;
        match s {
            None => Ok(None),
            Some(s) => super::parse_utc(&s)
                .map(Some)
                .ok_or_else(|| serde::de::Error::custom(format!("not an RFC 3339 instant: {s:?}"))),
        }
    }
}

/// Writes non-finite numbers as JSON `null` and reads `null` back as NaN, so an empty epoch's
/// statistics survive a round trip through `summary.json`.
mod nan_as_null {
    use serde::{Deserialize, Deserializer, Serializer};

    pub fn serialize<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
        if x.is_finite() {
            s.serialize_f64(*x)
        } else {
            s.serialize_none()
        }
    }
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
        Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
    }
}

#[cfg(test)]
mod tests;
