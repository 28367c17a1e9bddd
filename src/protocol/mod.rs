//! Protocol files (TOML) and the concrete timeline they expand to.
//! (Shared types fixed by the lead; parsing, expansion and planning owned by the protocol work.)
//!
//! - [`parse_protocol`] / [`load_protocol`]: a TOML file (schema in `docs/protocols.md`) into an
//!   expanded [`Protocol`] plus warnings;
//! - [`demo_protocol`], [`smoke_protocol`]: the shipped `protocols/demo.toml` and
//!   `protocols/smoke.toml`, built into the binary;
//! - [`plan::make_plan`]: the concrete timeline of a session with the sun at each epoch.

pub mod cues;
pub mod file;
pub mod plan;
pub mod sequence;

pub use cues::Cues;
pub use file::{ProtocolError, parse_protocol};
pub use sequence::Order;

use serde::Serialize;
use std::path::Path;

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

/// What to do while the heading sensor is lost (no data arrives).
///
/// Defaults: the epoch clock stops (so the epoch is extended by the time lost), turns wait for
/// the sensor, and the session is aborted after [`SENSOR_LOSS_ABORT_DEFAULT_S`] seconds lost
/// in one stretch.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SensorLossRules {
    /// Stop the epoch clock while the sensor is lost (the epoch is extended by the lost time).
    pub pause_clock: bool,
    /// Do not start a turn (nor prompt for a manual one) while the sensor is lost: a turn made
    /// blind has no heading just before or after it.
    pub hold_turns: bool,
    /// Abort the session after this many seconds lost in one stretch (None: never).
    pub abort_after_s: Option<f64>,
}

/// Default of `sensor_loss.abort_after_s`, seconds (our own choice: long enough to re-seat a
/// cable, short enough that a tethered animal is not left for long unobserved).
pub const SENSOR_LOSS_ABORT_DEFAULT_S: f64 = 120.0;

impl Default for SensorLossRules {
    fn default() -> Self {
        SensorLossRules {
            pause_clock: true,
            hold_turns: true,
            abort_after_s: Some(SENSOR_LOSS_ABORT_DEFAULT_S),
        }
    }
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
    /// What the animal can see (default: open sky).
    pub cues: Cues,
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
    /// Sensor-loss rules.
    pub sensor_loss: SensorLossRules,
    /// The epochs, in order.
    pub epochs: Vec<EpochPlan>,
}

impl Protocol {
    /// Sum of the planned epoch durations, seconds (flight-stop pauses and extensions, turn
    /// times and operator prompts not counted).
    pub fn total_duration_s(&self) -> f64 {
        self.epochs.iter().map(|e| e.duration_s).sum()
    }

    /// The epoch with this 1-based index.
    pub fn epoch(&self, epoch_index: usize) -> Option<&EpochPlan> {
        epoch_index.checked_sub(1).and_then(|i| self.epochs.get(i))
    }

    /// The signed turn (degrees, positive = clockwise seen from above) to make before the epoch
    /// with this 1-based index, when the arena currently stands at `current_position_deg`
    /// (degrees from its start position). `None` for an index outside the protocol.
    ///
    /// `Stay` gives 0, `TurnBy` its own angle (even beyond ±180: a relative turn is made as
    /// written), and `GoTo` the shortest way round, `signed_difference_deg(current, target)`, in
    /// (-180, 180]: a target exactly opposite is reached by turning +180 (clockwise).
    pub fn turn_before_deg(&self, epoch_index: usize, current_position_deg: f64) -> Option<f64> {
        let e = self.epoch(epoch_index)?;
        Some(e.arena.turn_from_deg(current_position_deg))
    }

    /// The arena position (degrees from its start position, [0, 360)) during each epoch, in
    /// order, assuming every turn is made as planned from a start at 0.
    pub fn positions_deg(&self) -> Vec<f64> {
        let mut pos = 0.0;
        self.epochs
            .iter()
            .map(|e| {
                pos = crate::frames::wrap_360_deg(pos + e.arena.turn_from_deg(pos));
                pos
            })
            .collect()
    }

    /// Index (1-based) and start offset (seconds from the session start) of each epoch, on the
    /// planned schedule (no pauses, instant turns and prompts).
    pub fn start_offsets_s(&self) -> Vec<f64> {
        let mut t = 0.0;
        self.epochs
            .iter()
            .map(|e| {
                let s = t;
                t += e.duration_s;
                s
            })
            .collect()
    }
}

impl ArenaMove {
    /// The signed turn this move makes from `current_position_deg` (see
    /// [`Protocol::turn_before_deg`]).
    pub fn turn_from_deg(&self, current_position_deg: f64) -> f64 {
        match *self {
            ArenaMove::Stay => 0.0,
            ArenaMove::TurnBy { deg } => deg,
            ArenaMove::GoTo { position_deg } => {
                crate::frames::signed_difference_deg(current_position_deg, position_deg)
            }
        }
    }
}

/// Reads and checks a protocol file; errors and warnings name the file as given.
pub fn load_protocol(path: &Path) -> Result<(Protocol, Vec<String>), ProtocolError> {
    let name = path.display().to_string();
    let text = crate::textfile::read_text_capped(path).map_err(|e| match e {
        crate::textfile::TextFileError::NotUtf8 { line, .. } => ProtocolError::Syntax {
            file: name.clone(),
            line,
            message: e.to_string(),
        },
        other => ProtocolError::Read {
            file: name.clone(),
            message: other.to_string(),
        },
    })?;
    parse_protocol(&text, &name)
}

/// The text of the shipped demo protocol (`protocols/demo.toml`).
pub const DEMO_TOML: &str = include_str!("../../protocols/demo.toml");
/// The text of the shipped smoke protocol (`protocols/smoke.toml`).
pub const SMOKE_TOML: &str = include_str!("../../protocols/smoke.toml");

/// The built-in demo protocol: about 30 minutes of open sky with shuffled turns.
pub fn demo_protocol() -> Protocol {
    // The text is compiled in and checked by the tests below, so it cannot fail at run time.
    #[allow(clippy::expect_used)]
    parse_protocol(DEMO_TOML, "protocols/demo.toml")
        .expect("shipped demo protocol parses")
        .0
}

/// The built-in smoke protocol: three 5-second epochs with turns between them.
pub fn smoke_protocol() -> Protocol {
    #[allow(clippy::expect_used)]
    parse_protocol(SMOKE_TOML, "protocols/smoke.toml")
        .expect("shipped smoke protocol parses")
        .0
}

/// "1 h 05 min 00 s", "3 min 00 s", "5 s": a duration for people.
pub fn format_duration_s(total_s: f64) -> String {
    let t = total_s.max(0.0).round() as u64;
    let (h, m, s) = (t / 3600, (t % 3600) / 60, t % 60);
    if h > 0 {
        format!("{h} h {m:02} min {s:02} s")
    } else if m > 0 {
        format!("{m} min {s:02} s")
    } else {
        format!("{s} s")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn shipped(name: &str) -> (Protocol, Vec<String>) {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("protocols")
            .join(name);
        match load_protocol(&path) {
            Ok(p) => p,
            Err(e) => panic!("{e}"),
        }
    }

    #[test]
    fn smoke_is_three_five_second_epochs_with_turns_between() {
        let p = smoke_protocol();
        assert_eq!(p.epochs.len(), 3);
        assert!(p.epochs.iter().all(|e| e.duration_s == 5.0));
        assert_eq!(p.epochs[0].arena, ArenaMove::Stay);
        assert!(matches!(p.epochs[1].arena, ArenaMove::TurnBy { deg } if deg != 0.0));
        assert!(matches!(p.epochs[2].arena, ArenaMove::TurnBy { deg } if deg != 0.0));
        assert!(p.settle_s < 5.0);
        assert_eq!(p.total_duration_s(), 15.0);
    }

    #[test]
    fn demo_is_about_thirty_minutes_of_open_sky_with_balanced_turns() {
        let p = demo_protocol();
        assert_eq!(p.epochs.len(), 10);
        assert_eq!(p.total_duration_s(), 1800.0);
        assert!(p.epochs.iter().all(|e| e.condition == "open sky"));
        let turns: Vec<f64> = p.epochs[1..]
            .iter()
            .map(|e| e.arena.turn_from_deg(0.0))
            .collect();
        for t in [90.0, -90.0, 180.0] {
            assert_eq!(turns.iter().filter(|&&x| x == t).count(), 3, "{turns:?}");
        }
        // The same file gives the same order every time.
        assert_eq!(demo_protocol(), p);
    }

    #[test]
    fn shipped_files_parse_without_warnings() {
        for name in [
            "smoke.toml",
            "demo.toml",
            "two-conditions.toml",
            "polarizer.toml",
        ] {
            let (p, w) = shipped(name);
            assert!(!p.epochs.is_empty(), "{name}");
            assert!(w.is_empty(), "{name}: {w:?}");
        }
    }

    #[test]
    fn two_conditions_prompts_for_the_diffuser() {
        let (p, _) = shipped("two-conditions.toml");
        let first_diffuser = p
            .epochs
            .iter()
            .find(|e| e.condition == "diffuser")
            .map(|e| e.index);
        assert_eq!(first_diffuser, Some(5));
        let prompt = p
            .epoch(5)
            .and_then(|e| e.prompt.clone())
            .unwrap_or_default();
        assert!(prompt.to_lowercase().contains("diffuser"), "{prompt}");
        assert!(p.epochs.iter().filter(|e| e.prompt.is_some()).count() == 1);
    }

    #[test]
    fn goto_resolves_to_the_shortest_signed_turn() {
        let (p, _) = parse_protocol(
            "name = \"g\"\nsettle_s = 1\n[[epochs]]\nduration_s = 9\ngo_to_deg = 350\n\
             [[epochs]]\nduration_s = 9\ngo_to_deg = 10\n[[epochs]]\nduration_s = 9\ngo_to_deg = 190\n\
             [[epochs]]\nduration_s = 9\nturn_deg = 270\n",
            "g.toml",
        )
        .unwrap();
        assert_eq!(p.turn_before_deg(1, 0.0), Some(-10.0));
        assert_eq!(p.turn_before_deg(2, 350.0), Some(20.0));
        // Exactly opposite: +180 (clockwise), never -180.
        assert_eq!(p.turn_before_deg(3, 10.0), Some(180.0));
        // A relative turn is made as written.
        assert_eq!(p.turn_before_deg(4, 190.0), Some(270.0));
        assert_eq!(p.turn_before_deg(0, 0.0), None);
        assert_eq!(p.turn_before_deg(5, 0.0), None);
        assert_eq!(p.positions_deg(), vec![350.0, 10.0, 190.0, 100.0]);
        assert_eq!(p.start_offsets_s(), vec![0.0, 9.0, 18.0, 27.0]);
    }

    #[test]
    fn load_names_a_missing_file() {
        let e = load_protocol(Path::new("/nonexistent/x.toml")).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("/nonexistent/x.toml: cannot read"),
            "{e}"
        );
    }

    #[test]
    fn durations_for_people() {
        assert_eq!(format_duration_s(5.0), "5 s");
        assert_eq!(format_duration_s(180.0), "3 min 00 s");
        assert_eq!(format_duration_s(3905.0), "1 h 05 min 05 s");
    }

    #[test]
    fn sensor_loss_rules_default_to_hold_and_abort_and_are_configurable() {
        let head = "name = \"s\"\nsettle_s = 1\n";
        let tail = "[[epochs]]\nduration_s = 9\n";
        let (p, _) = parse_protocol(&format!("{head}{tail}"), "t.toml").expect("parses");
        assert_eq!(p.sensor_loss, SensorLossRules::default());
        assert!(p.sensor_loss.pause_clock && p.sensor_loss.hold_turns);
        assert_eq!(
            p.sensor_loss.abort_after_s,
            Some(SENSOR_LOSS_ABORT_DEFAULT_S)
        );
        let text = format!(
            "{head}[sensor_loss]\npause_clock = false\nhold_turns = false\nabort_after_s = 0\n{tail}"
        );
        let (p, _) = parse_protocol(&text, "t.toml").expect("parses");
        assert_eq!(
            p.sensor_loss,
            SensorLossRules {
                pause_clock: false,
                hold_turns: false,
                abort_after_s: None
            }
        );
        let text = format!("{head}[sensor_loss]\nabort_after_s = -3\n{tail}");
        let e = parse_protocol(&text, "t.toml").expect_err("negative");
        let msg = e.to_string();
        assert!(
            msg.contains("sensor_loss.abort_after_s") && msg.contains(":4"),
            "{msg}"
        );
        let text = format!("{head}[sensor_loss]\nabort_after = 3\n{tail}");
        assert!(parse_protocol(&text, "t.toml").is_err(), "unknown key");
    }
}
