//! What a session is set up from and how it ends: setup, speed, clock, errors, outcome.

use crate::archive;
use crate::clock::{Clock, SimClock};
use crate::protocol::Protocol;
use crate::rig::config::Rig;
use chrono::{DateTime, FixedOffset, Offset, TimeZone, Utc};
use std::path::PathBuf;

/// How fast the session's clock runs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Speed {
    /// Real time times a factor (1.0 for real sessions).
    Times(f64),
    /// As fast as the machine allows (simulated rigs only).
    Max,
}

/// Errors that stop a session.
#[derive(Debug, thiserror::Error)]
pub enum EngineError {
    /// The archive could not be written.
    #[error("archive: {0}")]
    Archive(#[from] archive::ArchiveError),
    /// The sun could not be computed for the site.
    #[error("sun: {0}")]
    Sky(#[from] crate::sky::SkyError),
    /// A device failed in a way the session cannot continue from.
    #[error("device: {0}")]
    Rig(#[from] crate::rig::RigError),
    /// The setup is inconsistent.
    #[error("{0}")]
    Setup(String),
}

/// Everything the engine needs besides the devices.
#[derive(Debug, Clone)]
pub struct SessionSetup {
    /// "demo" or "run".
    pub mode: String,
    /// Animal id (validated by the archive).
    pub animal: String,
    /// Sessions folder.
    pub sessions_dir: PathBuf,
    /// The expanded protocol.
    pub protocol: Protocol,
    /// The checked rig.
    pub rig: Rig,
    /// UTC at session second 0 (the anchor; the wall clock is never read again for stamping).
    pub start_utc: DateTime<Utc>,
    /// Clock speed.
    pub speed: Speed,
    /// Simulator seed, if simulated.
    pub seed: Option<u64>,
    /// Extra fields to record in session.json (simulator settings...).
    pub extra: serde_json::Value,
}

/// How the session ended.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// The session folder.
    pub dir: PathBuf,
    /// Final status ("complete" or "aborted").
    pub status: String,
    /// Why it ended.
    pub reason: String,
    /// Samples written.
    pub samples: u64,
}

/// The clock an engine runs on.
pub enum EngineClock {
    /// Real (or scaled real) time: the loop sleeps between iterations.
    Real(Box<dyn Clock>),
    /// Simulated time the engine advances itself, as fast as possible.
    Sim(SimClock),
}

/// The UTC offset of an IANA time zone at an instant (UTC when the name is unknown).
pub fn local_offset_for(time_zone: &str, at: DateTime<Utc>) -> FixedOffset {
    match time_zone.parse::<chrono_tz::Tz>() {
        Ok(tz) => tz.offset_from_utc_datetime(&at.naive_utc()).fix(),
        Err(_) => FixedOffset::east_opt(0).unwrap_or_else(|| Utc.fix()),
    }
}
