//! Protocol files (TOML) and the concrete timeline they expand to.
//! (Shared types fixed by the lead; parsing, expansion and planning owned by the protocol work.)

use serde::Serialize;

/// What to do about flight stops.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Default)]
pub struct FlightRules {
    /// Stop the epoch clock while the animal is not flying.
    pub pause_clock_when_stopped: bool,
    /// Extend an epoch until it holds this many flying seconds (None: no extension).
    pub min_flying_s: Option<f64>,
    /// Abort the session after this many seconds without flight (None: never).
    pub abort_after_stopped_s: Option<f64>,
}

/// How the arena gets to an epoch's bearing.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum ArenaMove {
    /// No change from the previous epoch.
    Stay,
    /// Turn by this many degrees (positive = clockwise seen from above).
    TurnBy {
        /// Relative turn.
        deg: f64,
    },
    /// Go to this position, degrees from the arena's start position (the engine computes the
    /// shortest signed turn).
    GoTo {
        /// Absolute position.
        position_deg: f64,
    },
}

/// One epoch of an expanded protocol.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EpochPlan {
    /// 1-based index.
    pub index: usize,
    /// Planned duration, seconds (> 0).
    pub duration_s: f64,
    /// Free condition label ("open sky", "diffuser"...).
    pub condition: String,
    /// What happens to the arena before this epoch starts.
    pub arena: ArenaMove,
    /// A prompt the operator must confirm before the epoch starts (None: no prompt).
    pub prompt: Option<String>,
}

/// An expanded protocol.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Protocol {
    /// Name.
    pub name: String,
    /// Free description.
    pub description: String,
    /// Default settle window after each turn, seconds.
    pub settle_s: f64,
    /// Flight-stop rules.
    pub flight: FlightRules,
    /// The epochs, in order.
    pub epochs: Vec<EpochPlan>,
}
