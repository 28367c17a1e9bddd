//! Rig files (TOML). (Shared type fixed by the lead; parsing owned by the rig work.)

use crate::frames::SensorCalibration;
use crate::sky::Site;
use serde::Serialize;
use std::path::PathBuf;

/// Whether the arena mark bearing was measured against magnetic or true north.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BearingReference {
    /// Measured with a magnetic compass: corrected with the WMM declination.
    Magnetic,
    /// Already true.
    True,
}

/// A checked rig, ready to open devices.
#[derive(Debug, Clone, Serialize)]
pub struct Rig {
    /// Where the rig stands.
    pub site: Site,
    /// Time zone for local display (IANA name such as "Europe/Paris").
    pub time_zone: String,
    /// The arena 0 mark bearing as measured.
    pub arena_mark_bearing_deg: f64,
    /// What the measured bearing refers to.
    pub arena_mark_reference: BearingReference,
    /// Sensor calibration (units, direction, zero offset).
    pub calibration: SensorCalibration,
    /// Settle window after each turn, seconds (a protocol may override).
    pub settle_s: f64,
    /// Where sessions go.
    pub sessions_dir: PathBuf,
}
