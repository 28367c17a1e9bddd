//! Rig I/O: heading sources, turntable drivers, rig files and the simulated rig.
//!
//! (Shared types fixed by the lead; bodies owned by the rig work.)
//!
//! Every event carries `t_s`, seconds on the session's monotonic clock ([`crate::clock::Clock`]),
//! stamped when the line arrived (real devices) or when it was generated (simulator).

pub mod config;
pub mod decoder;
pub mod gps;
pub mod nmea;
pub mod polarizer;
pub mod pty;
pub mod sim;
pub mod source;
pub mod template;
pub mod turntable;

pub use source::open_sensor;
pub use turntable::open_turntable;

use serde::Serialize;

/// Errors of the rig layer.
#[derive(Debug, thiserror::Error)]
pub enum RigError {
    /// A device could not be opened or used.
    #[error("{device}: {message}")]
    Device {
        /// Which device (port path, "stdin", replay file...).
        device: String,
        /// What went wrong.
        message: String,
    },
    /// I/O error.
    #[error(transparent)]
    Io(#[from] std::io::Error),
}

/// What the heading sensor path produced.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum SensorEvent {
    /// One heading sample.
    Sample {
        /// Session monotonic time of arrival.
        t_s: f64,
        /// The raw value as the device sent it (sensor units).
        raw: f64,
        /// Arena heading after calibration, [0, 360).
        arena_heading_deg: f64,
        /// Device time column, if configured, in seconds.
        device_time_s: Option<f64>,
    },
    /// A line that was not a sample (garbage, NaN, out of range, too many or few columns).
    Malformed {
        /// Session monotonic time of arrival.
        t_s: f64,
        /// Why it was rejected.
        reason: String,
        /// The offending text, truncated (for screens).
        text: String,
        /// The whole line as received (at most [`decoder::MAX_LINE_BYTES`] bytes of an
        /// overlong one), escaped by [`decoder::escape_raw_line`].
        line: String,
    },
    /// No data for the configured time.
    Lost {
        /// When the loss was declared.
        t_s: f64,
    },
    /// Data flows again after a loss.
    Back {
        /// When the first new line arrived.
        t_s: f64,
    },
}

/// Live health figures of the sensor path.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct SensorHealth {
    /// Measured sample rate over the last few seconds, Hz.
    pub rate_hz: f64,
    /// Standard deviation of inter-sample intervals, ms.
    pub jitter_ms: f64,
    /// Malformed lines so far.
    pub malformed: u64,
    /// Sensor-lost periods so far.
    pub lost_periods: u64,
    /// True while the sensor is declared lost.
    pub lost: bool,
}

/// A source of heading samples (serial port, standard input, replay file, simulator).
pub trait HeadingSource: Send {
    /// Moves every event stamped at or before `now_s` into `out`, in time order.
    fn drain(&mut self, now_s: f64, out: &mut Vec<SensorEvent>) -> Result<(), RigError>;
    /// Live health.
    fn health(&self) -> SensorHealth;
    /// A short description for screens and archives ("serial /dev/ttyUSB0 @ 115200").
    fn describe(&self) -> String;
    /// For a source that can run out (a replay file): the session second at which it is known
    /// to have no more lines, once it has none. `None` while lines remain, or for live devices.
    fn exhausted_at_s(&self) -> Option<f64> {
        None
    }
}

/// What the turntable path produced.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum TurntableEvent {
    /// The turntable reports it has finished the commanded turn.
    Done {
        /// When the reply arrived.
        t_s: f64,
        /// Reported position (degrees from its home), if the device reports it.
        position_deg: Option<f64>,
    },
    /// A fault reply or a timeout after the retry.
    Fault {
        /// When.
        t_s: f64,
        /// What happened.
        text: String,
    },
}

/// A turntable that can be commanded to turn by a relative angle (positive = clockwise seen
/// from above).
pub trait Turntable: Send {
    /// Starts a relative turn. Returns quickly; completion comes as an event from `poll`.
    fn start_turn(&mut self, now_s: f64, by_deg: f64) -> Result<(), RigError>;
    /// Moves replies and timeouts stamped at or before `now_s` into `out`.
    fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError>;
    /// True for a turntable the operator turns by hand: the engine then prompts and waits for
    /// the operator's confirmation instead of a `Done` event.
    fn is_manual(&self) -> bool {
        false
    }
    /// Where the arena is (degrees from its start position, clockwise) at `now_s`, if the
    /// driver knows it mid-turn (simulator, position-reporting devices).
    fn position_deg(&self, now_s: f64) -> Option<f64> {
        let _ = now_s;
        None
    }
    /// A short description.
    fn describe(&self) -> String;
}
