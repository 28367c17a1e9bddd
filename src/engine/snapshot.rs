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
    /// Answer to a prompt to turn the arena: it could not be turned (the turn is recorded as
    /// not made and its world shift is not scored).
    CouldNotTurn,
    /// Make every later turn a prompt to turn by hand (after a turntable fault).
    TurnsByHand,
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
    /// The prompt asks for a turn by hand (a manual turntable, turns by hand after a fault,
    /// or a fault): it may be answered "could not turn".
    pub turn_by_hand: bool,
}

/// A turn counts as "kept" (compensated) on screen and in the end summary when its world shift
/// lies nearer 0 than the turn itself, for turns of at least this size (a display rule of our
/// own, not a statistical test).
pub const VERDICT_MIN_TURN_DEG: f64 = 30.0;

/// "kept" (true) when the world heading stayed nearer its old value than the turn, "moved"
/// (false) otherwise; None for small turns or an unknown shift (the display rule above).
pub fn turn_kept(turn_deg: f64, shift_deg: f64) -> Option<bool> {
    if turn_deg.abs() < VERDICT_MIN_TURN_DEG || !shift_deg.is_finite() {
        return None;
    }
    Some(shift_deg.abs() <= crate::frames::signed_difference_deg(turn_deg, shift_deg).abs())
}

/// The session's summary in a few lines for people: hold, turns kept, and the turn test when
/// the summary carries one (`turn_test` in `summary.json`). The end screen shows them and a
/// headless run prints them before the folder path.
pub fn summary_lines(summary: &crate::archive::Summary) -> Vec<String> {
    let mut lines = vec![format!(
        "hold r world {:.3}, arena {:.3} (all scored samples)",
        summary.r_world, summary.r_arena
    )];
    let planned: Vec<_> = summary
        .turns
        .iter()
        .filter(|t| t.turn_deg.abs() > 1e-9)
        .collect();
    if !planned.is_empty() {
        let scored: Vec<_> = planned
            .iter()
            .filter_map(|t| t.world_shift_deg.map(|s| (t.turn_deg, s)))
            .collect();
        let kept = scored
            .iter()
            .filter(|(t, s)| turn_kept(*t, *s) == Some(true))
            .count();
        lines.push(format!(
            "turns kept: {kept} of {} scored ({} of {} turns not scored)",
            scored.len(),
            planned.len() - scored.len(),
            planned.len()
        ));
    }
    // The turn test is read by name so this works whether or not the summary has it yet.
    if let Ok(v) = serde_json::to_value(summary)
        && let Some(tt) = v.get("turn_test").filter(|t| t.is_object())
    {
        let num = |k: &str, digits: usize| {
            tt.get(k)
                .and_then(serde_json::Value::as_f64)
                .map(|x| format!("{x:.digits$}"))
                .unwrap_or_else(|| "–".to_string())
        };
        let mean = match num("mean_world_shift_deg", 1).as_str() {
            "–" => "–".to_string(),
            m => format!("{m}°"),
        };
        lines.push(format!(
            "turn test: {} turns, mean world shift {mean}, p world kept {}, p arena kept {}",
            num("turns", 0),
            num("p_world_kept", 3),
            num("p_arena_kept", 3)
        ));
    }
    lines
}

/// What the next turn is waiting for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum TurnState {
    /// No turn remains in the protocol.
    #[default]
    NoneLeft,
    /// The epoch clock runs: the turn comes when it has run `in_s` more seconds.
    Counting,
    /// The epoch clock is stopped (paused, not flying with the clock rule, sensor lost): the
    /// countdown stands still.
    ClockStopped,
    /// The arena is turning now.
    UnderWay,
    /// An operator prompt waits for an answer before the turn (or before the epoch).
    AwaitingOperator,
    /// The turntable failed: the turn waits for the operator.
    Fault,
    /// The turn waits for the heading sensor to come back (sensor-loss rules).
    HeldSensorLost,
}

/// The next turn and what it waits for: the countdown the operator relies on to keep fingers
/// out of the arena, right in every state.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Default)]
pub struct NextTurn {
    /// What the turn waits for.
    pub state: TurnState,
    /// The turn, degrees (None with [`TurnState::NoneLeft`], or when a prompt is not a turn
    /// and no turn follows).
    pub deg: Option<f64>,
    /// Epoch-clock seconds until the turn is due (None when it is not counted down: under
    /// way, waiting for the operator or the sensor, or none left).
    pub in_s: Option<f64>,
}

/// An abort rule that will end the session unless something changes.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AutoAbort {
    /// Session seconds until it fires.
    pub in_s: f64,
    /// Why ("no flight", "sensor lost").
    pub reason: String,
}

/// What keeps a field day from going wrong: countdown, staleness, faults, abort timers, and
/// what ending now would record.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Watch {
    /// The next turn.
    pub next_turn: NextTurn,
    /// Session seconds since the last sample (None before the first).
    pub sample_age_s: Option<f64>,
    /// The latest heading is too old to be taken as live (the sensor is lost or silent).
    pub heading_stale: bool,
    /// Turntable faults so far.
    pub turntable_faults: u32,
    /// Every later turn is a prompt to turn by hand (chosen after a fault).
    pub turns_by_hand: bool,
    /// Seconds since the animal stopped flying (None while flying).
    pub not_flying_for_s: Option<f64>,
    /// Seconds since the sensor was lost (None while it delivers).
    pub sensor_lost_for_s: Option<f64>,
    /// The abort rule that will fire first, if one runs.
    pub auto_abort: Option<AutoAbort>,
    /// The status ending the session now would record ("complete" or "aborted").
    pub end_now_status: String,
    /// The session's summary in lines, once it has ended (the same lines a headless run
    /// prints before the folder path).
    pub end_summary: Vec<String>,
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
    /// Where the site and the UTC came from, shown beside the site name: `None` for a rig
    /// without a GPS ([`crate::rig::gps::GpsStart::note`]).
    pub site_note: Option<crate::rig::gps::SiteNote>,
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
    /// World axis of the e-vector the animal is shown now (the sky's, or a filter's), [0, 180);
    /// None when the epoch's cues give no polarization.
    pub evector_shown_deg: Option<f64>,
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
    /// Countdown, staleness, faults, abort timers.
    pub watch: Watch,
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
