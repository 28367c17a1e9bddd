//! What the engine publishes for screens, and what screens send back.
//! The screen renders a [`Snapshot`] and nothing else; it never touches devices or files.

use chrono::{DateTime, FixedOffset, Utc};
use serde::Serialize;
use std::path::PathBuf;

/// An operator command sent from a screen (or the headless runner) to the engine.
#[derive(Debug, Clone, PartialEq)]
pub enum Command {
    /// The animal stopped flying.
    FlightStop,
    /// The animal flies again.
    FlightStart,
    /// A free note, stored as an event.
    Note(String),
    /// Pause the protocol clock (samples are still recorded, not scored).
    Pause,
    /// Resume after a pause.
    Resume,
    /// End the current epoch now and go on with the next.
    SkipEpoch,
    /// Confirm the pending prompt (arena turned by hand, condition changed).
    ConfirmPrompt,
    /// End the session (after the operator confirmed).
    EndSession,
}

impl From<crate::rig::sim::OperatorAction> for Command {
    /// The simulated operator's marks are the same commands a person sends with a key.
    fn from(a: crate::rig::sim::OperatorAction) -> Self {
        match a {
            crate::rig::sim::OperatorAction::FlightStop => Command::FlightStop,
            crate::rig::sim::OperatorAction::FlightStart => Command::FlightStart,
        }
    }
}

/// State of an epoch in the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum EpochState {
    /// Not started.
    Pending,
    /// Running now.
    Current,
    /// Finished.
    Done,
    /// Skipped by the operator.
    Skipped,
}

/// One epoch line of the live table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EpochRow {
    /// 1-based index.
    pub index: usize,
    /// Condition label.
    pub condition: String,
    /// True bearing of the arena mark (planned until the epoch starts).
    pub arena_bearing_deg: f64,
    /// Planned duration, s.
    pub duration_s: f64,
    /// Flying seconds so far.
    pub flying_s: f64,
    /// Scored samples.
    pub n: u64,
    /// Mean arena heading.
    pub mean_arena_deg: Option<f64>,
    /// Mean world heading.
    pub mean_world_deg: Option<f64>,
    /// Mean vector length of world headings.
    pub r: f64,
    /// `p_oriented` of the epoch so far, the calibrated test that the heading was held (as in
    /// `summary.json`); None until the epoch holds
    /// [`crate::circular::MIN_SCORED_S`] of scored flight.
    pub p_oriented: Option<f64>,
    /// Pending, current, done, skipped.
    pub state: EpochState,
}

/// `p_oriented` as the screen's `p held` column and the headless progress lines both show it:
/// "–" while the epoch holds too little flight for the test (None), "≤0.001" at the test's
/// floor ([`crate::circular::P_FLOOR`]), else three decimals below 0.1 and two above.
pub fn p_held_text(p: Option<f64>) -> String {
    match p {
        Some(p) if p.is_finite() && p <= crate::circular::P_FLOOR => "≤0.001".into(),
        Some(p) if p.is_finite() && p < 0.1 => format!("{p:.3}"),
        Some(p) if p.is_finite() => format!("{p:.2}"),
        _ => "–".into(),
    }
}

/// One turn line of the live table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TurnRow {
    /// 1-based turn index (between epoch k and k + 1).
    pub index: usize,
    /// Commanded turn, degrees.
    pub turn_deg: f64,
    /// World heading shift across the turn, once both sides have data.
    pub world_shift_deg: Option<f64>,
}

/// One point of the heading trace (decimated for display).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TracePoint {
    /// Session seconds.
    pub t_s: f64,
    /// Arena heading.
    pub arena_deg: f64,
    /// World heading.
    pub world_deg: f64,
    /// Sun-relative heading.
    pub sun_deg: f64,
    /// Flying at this point (false = draw a gap).
    pub flying: bool,
}

/// Device and archive health.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Health {
    /// Measured sample rate, Hz.
    pub rate_hz: f64,
    /// Inter-sample jitter, ms.
    pub jitter_ms: f64,
    /// Malformed lines so far.
    pub malformed: u64,
    /// Sensor-lost periods so far.
    pub lost_periods: u64,
    /// The sensor is lost right now.
    pub sensor_lost: bool,
    /// Last successful fsync of the archive.
    pub last_sync_utc: Option<DateTime<Utc>>,
    /// Samples written so far.
    pub samples_written: u64,
    /// Last archive error, if any (the session goes on recording in memory-free mode? no: the
    /// engine stops and says so).
    pub archive_error: Option<String>,
    /// Sensor description.
    pub sensor: String,
    /// Turntable description.
    pub turntable: String,
}

/// A question to the operator.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Prompt {
    /// What to do ("Turn the arena +90° (clockwise seen from above), then press Enter").
    pub text: String,
    /// Seconds the prompt has been waiting.
    pub waiting_s: f64,
    /// Seconds until the protocol expected the next epoch to start (negative: late).
    pub countdown_s: f64,
}

/// Everything a screen shows, published by the engine (at most ~30 per second).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Snapshot {
    /// Session id.
    pub session_id: String,
    /// Session folder.
    pub session_dir: PathBuf,
    /// Animal id.
    pub animal: String,
    /// Site name.
    pub site_name: String,
    /// Protocol name.
    pub protocol_name: String,
    /// UTC now (anchor + monotonic).
    pub now_utc: DateTime<Utc>,
    /// Local time offset for display.
    #[serde(skip)]
    pub local_offset: FixedOffset,
    /// Session seconds.
    pub t_s: f64,
    /// Seconds left in the protocol as planned (None once ended).
    pub remaining_s: Option<f64>,
    /// Current epoch (1-based; 0 before the first).
    pub epoch: usize,
    /// Number of epochs.
    pub epoch_count: usize,
    /// Current condition.
    pub condition: String,
    /// Seconds until the next turn (None when no turn follows).
    pub next_turn_in_s: Option<f64>,
    /// The next turn, degrees.
    pub next_turn_deg: Option<f64>,
    /// The arena is turning now.
    pub turning: bool,
    /// In a settle window now.
    pub settling: bool,
    /// Paused by the operator.
    pub paused: bool,
    /// The animal is flying.
    pub flying: bool,
    /// True bearing of the arena mark now.
    pub arena_bearing_deg: f64,
    /// Sun azimuth now.
    pub sun_azimuth_deg: f64,
    /// Apparent sun elevation now.
    pub sun_elevation_deg: f64,
    /// Zenith e-vector axis now, [0, 180).
    pub zenith_evector_deg: f64,
    /// Latest arena heading.
    pub arena_heading_deg: Option<f64>,
    /// Latest world heading.
    pub world_heading_deg: Option<f64>,
    /// Latest sun-relative heading.
    pub sun_relative_heading_deg: Option<f64>,
    /// Recent trace (oldest first), decimated.
    pub trace: Vec<TracePoint>,
    /// Turn instants (session seconds) within the trace span.
    pub turn_marks_s: Vec<f64>,
    /// Epoch table.
    pub epochs: Vec<EpochRow>,
    /// Turn table.
    pub turns: Vec<TurnRow>,
    /// Session r in the world frame over all scored samples.
    pub r_world: f64,
    /// Session r in the arena frame over all scored samples.
    pub r_arena: f64,
    /// Devices and archive.
    pub health: Health,
    /// A pending operator prompt.
    pub prompt: Option<Prompt>,
    /// Recent event lines for a log pane (newest last).
    pub recent_events: Vec<String>,
    /// The session has ended (the screen may close).
    pub ended: bool,
    /// How it ended ("complete", "aborted: ..."), once ended.
    pub end_reason: Option<String>,
}

/// Where the engine publishes its latest snapshot and screens read it (latest wins).
#[derive(Debug, Clone, Default)]
pub struct SnapshotCell {
    inner: std::sync::Arc<std::sync::Mutex<Option<std::sync::Arc<Snapshot>>>>,
}

impl SnapshotCell {
    /// An empty cell.
    pub fn new() -> Self {
        Self::default()
    }

    /// Replaces the published snapshot.
    pub fn publish(&self, snapshot: Snapshot) {
        let arc = std::sync::Arc::new(snapshot);
        match self.inner.lock() {
            Ok(mut g) => *g = Some(arc),
            Err(poisoned) => *poisoned.into_inner() = Some(arc),
        }
    }

    /// The latest snapshot, if any was published.
    pub fn latest(&self) -> Option<std::sync::Arc<Snapshot>> {
        match self.inner.lock() {
            Ok(g) => g.clone(),
            Err(poisoned) => poisoned.into_inner().clone(),
        }
    }
}
