//! The session archive: one folder per session, append-only CSV files, atomic JSON.
//! (Shared types fixed by the lead; bodies owned by the archive work.)
//!
//! Layout (see shared/contract.md): `session.json`, `samples.csv`, `events.csv`,
//! `summary.json` once closed.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

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
];

/// The header of `events.csv`.
pub const EVENT_COLUMNS: &[&str] = &["t_utc", "t_s", "kind", "detail"];

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
    /// sensor_lost, sensor_back, malformed_line, session_end...).
    pub kind: String,
    /// Free text (quoted as CSV needs).
    pub detail: String,
}

/// Statistics of one epoch in `summary.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EpochSummary {
    /// 1-based epoch index.
    pub index: usize,
    /// Condition label.
    pub condition: String,
    /// True bearing of the arena mark during the epoch.
    pub arena_bearing_deg: f64,
    /// Scored samples.
    pub n: u64,
    /// Mean arena heading (None with no scored samples).
    pub mean_arena_deg: Option<f64>,
    /// Mean world heading.
    pub mean_world_deg: Option<f64>,
    /// Mean vector length of world headings.
    pub r: f64,
    /// Rayleigh p on n.
    pub rayleigh_p: f64,
    /// Effective sample size.
    pub n_eff: f64,
    /// Rayleigh p on n_eff.
    pub rayleigh_p_eff: f64,
}

/// One turn in `summary.json`: turn k lies between epoch k and epoch k + 1.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TurnSummary {
    /// 1-based turn index.
    pub index: usize,
    /// Commanded turn, degrees (positive clockwise seen from above).
    pub turn_deg: f64,
    /// Mean world heading after minus before, (-180, 180]; None if either side has no data.
    pub world_shift_deg: Option<f64>,
}

/// `summary.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    /// Per epoch.
    pub epochs: Vec<EpochSummary>,
    /// Per turn.
    pub turns: Vec<TurnSummary>,
    /// r of all scored world headings.
    pub r_world: f64,
    /// r of all scored arena headings.
    pub r_arena: f64,
}
