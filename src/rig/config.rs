//! Rig files (TOML): the checked types here, the raw form and its checks in `config/raw.rs`.
//!
//! A rig file is parsed in two steps: TOML into a raw form whose every value keeps its place in
//! the text ([`toml::Spanned`]), then checked into a [`Rig`]. Every error is one line naming the
//! file, the line and the field: `rig.toml:7: site.latitude_deg: 123 is outside [-90, 90]`.

use crate::frames::SensorCalibration;
use crate::sky::Site;
use serde::Serialize;
use std::path::{Path, PathBuf};
use toml::Spanned;

pub use super::template::{PLACEHOLDER, TEMPLATE, filled_example};

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
    /// The rig's own name (top-level `name`, optional; [`validate_rig_name`]): it goes into
    /// session ids so that sessions of rigs run side by side never collide.
    pub name: Option<String>,
    /// Where the rig stands.
    pub site: Site,
    /// Time zone for local display (IANA name such as "Europe/Paris").
    pub time_zone: String,
    /// The arena 0 mark bearing as measured.
    pub arena_mark_bearing_deg: f64,
    /// What the measured bearing refers to.
    pub arena_mark_reference: BearingReference,
    /// The lowest elevation the animal sees over the arena's wall, degrees (0 when the file
    /// gives none: the horizon). Below it the sun's disc is out of view.
    pub sky_view_min_elevation_deg: f64,
    /// Sensor calibration (units, direction, zero offset).
    pub calibration: SensorCalibration,
    /// Where sessions go.
    pub sessions_dir: PathBuf,
    /// The heading sensor: where its lines come from and how they are read.
    pub sensor: SensorConfig,
    /// The turntable that turns the arena.
    pub turntable: TurntableConfig,
    /// The motorized polarizer that sets a filter's axis between epochs, if the rig has one.
    pub polarizer: Option<PolarizerConfig>,
    /// A GPS receiver read at session start for the site and the UTC (`[gps]`, optional).
    pub gps: Option<super::gps::GpsConfig>,
    /// The file the rig was read from (for error messages), "built-in demo rig" otherwise.
    #[serde(skip)]
    pub source_name: String,
}

/// Where heading lines come from.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum SensorSource {
    /// A serial port (USB adapter, microcontroller).
    Serial {
        /// Port path such as /dev/ttyUSB0.
        path: PathBuf,
        /// Baud rate.
        baud: u32,
    },
    /// Lines on standard input.
    Stdin,
    /// A recorded file of lines.
    Replay {
        /// The file.
        path: PathBuf,
        /// Whether lines come at their recorded times or as fast as they can be read.
        pace: ReplayPace,
    },
    /// The built-in simulator (in-process).
    Sim,
}

/// How fast a replay file is played.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ReplayPace {
    /// Each line at its recorded device time (needs a time column).
    Recorded,
    /// As fast as lines can be read, each stamped when read.
    Fast,
}

/// Unit of the device time column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum TimeUnit {
    /// Milliseconds.
    #[default]
    Ms,
    /// Microseconds.
    Us,
}

impl TimeUnit {
    /// Seconds per unit.
    pub fn seconds(self) -> f64 {
        match self {
            TimeUnit::Ms => 1e-3,
            TimeUnit::Us => 1e-6,
        }
    }
}

/// How one line of the sensor becomes a value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DecoderConfig {
    /// Column separator; a space or tab means "any run of blanks".
    pub delimiter: char,
    /// 1-based column of the heading value.
    pub value_column: usize,
    /// 1-based column of the device's own time stamp, if any.
    pub time_column: Option<usize>,
    /// Unit of the device time column.
    pub time_unit: TimeUnit,
    /// Largest accepted magnitude of a value, in revolutions (anything larger is out of range).
    pub max_abs_revolutions: f64,
}

impl Default for DecoderConfig {
    fn default() -> Self {
        Self {
            delimiter: ',',
            value_column: 1,
            time_column: None,
            time_unit: TimeUnit::Ms,
            max_abs_revolutions: 1000.0,
        }
    }
}

/// The heading sensor as configured.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SensorConfig {
    /// Where lines come from.
    pub source: SensorSource,
    /// How lines are read.
    pub decoder: DecoderConfig,
    /// No line for this long declares the sensor lost, seconds.
    pub lost_after_s: f64,
    /// Line of `sensor.path` in the rig file (for open-time errors).
    #[serde(skip)]
    pub path_line: Option<usize>,
}

/// The turntable as configured.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum TurntableConfig {
    /// A motor controller on a serial port speaking docs/turntable-protocol.md.
    Serial {
        /// Port path.
        path: PathBuf,
        /// Baud rate.
        baud: u32,
        /// Seconds to wait for a reply before the one retry, and again before a fault.
        timeout_s: f64,
        /// Line of `turntable.path` in the rig file (for open-time errors).
        #[serde(skip)]
        path_line: Option<usize>,
    },
    /// Turned by hand: the engine prompts the operator.
    Manual,
    /// The built-in simulator (in-process).
    Sim,
}

/// The polarizer as configured (`[polarizer]`, optional).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum PolarizerConfig {
    /// A controller on a serial port speaking the polarizer part of docs/turntable-protocol.md.
    Serial {
        /// Port path.
        path: PathBuf,
        /// Baud rate.
        baud: u32,
        /// Seconds to wait for a reply before the one retry, and again before a fault.
        timeout_s: f64,
        /// Line of `polarizer.path` in the rig file (for open-time errors).
        #[serde(skip)]
        path_line: Option<usize>,
    },
    /// Set by hand: the engine prompts the operator.
    Manual,
}

/// A rig file that could not be read or checked. Always one line.
#[derive(Debug, thiserror::Error)]
pub enum RigFileError {
    /// The file could not be read.
    #[error("{file}: cannot read rig file: {message}")]
    Read {
        /// The file.
        file: String,
        /// Why.
        message: String,
    },
    /// A field is missing, unknown or wrong.
    #[error("{file}:{line}: {field}: {message}")]
    Field {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// Dotted field name such as `site.latitude_deg`.
        field: String,
        /// What is wrong.
        message: String,
    },
    /// The TOML itself is broken (no field to name).
    #[error("{file}:{line}: {message}")]
    Syntax {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// What is wrong.
        message: String,
    },
}

// ---------------------------------------------------------------------------------------------
// Raw form (`config/raw.rs`, with its check into a `Rig`) and positions in the text
// (`config/checker.rs`)

type S<T> = Spanned<T>;

mod checker;
mod raw;
use checker::{key_on_line, line_of, table_at};

/// Reads and checks a rig file.
pub fn load_rig(path: &Path) -> Result<Rig, RigFileError> {
    let name = path.display().to_string();
    let text = crate::textfile::read_text_capped(path).map_err(|e| match e {
        crate::textfile::TextFileError::NotUtf8 { line, .. } => RigFileError::Syntax {
            file: name.clone(),
            line,
            message: e.to_string(),
        },
        other => RigFileError::Read {
            file: name.clone(),
            message: other.to_string(),
        },
    })?;
    parse_rig(&text, &name)
}

/// Parses and checks the text of a rig file; `source_name` names it in errors.
pub fn parse_rig(text: &str, source_name: &str) -> Result<Rig, RigFileError> {
    if let Some((line, field)) = super::template::first_placeholder(text) {
        return Err(RigFileError::Field {
            file: source_name.to_string(),
            line,
            field,
            message: format!(
                "not filled in (still the template's \"{PLACEHOLDER}\"): write this rig's own value"
            ),
        });
    }
    let raw: raw::RawRig = toml::from_str(text).map_err(|e| {
        let offset = e.span().map_or(0, |s| s.start);
        let line = line_of(text, offset);
        let mut message = e.message().trim().replace('\n', " ");
        // Name the field: the table in force plus the key on that line (or the key named in the
        // message for unknown/missing fields).
        let table = table_at(text, offset);
        let key = if message.starts_with("unknown field") {
            message.split('`').nth(1).map(str::to_string)
        } else {
            key_on_line(text, offset)
        };
        if message.starts_with("unknown field") {
            message = format!("unknown key ({})", message.replace('`', "\""));
        }
        match key {
            Some(k) => RigFileError::Field {
                file: source_name.to_string(),
                line,
                field: if table.is_empty() {
                    k
                } else {
                    format!("{table}.{k}")
                },
                message,
            },
            None if !table.is_empty() => RigFileError::Field {
                file: source_name.to_string(),
                line,
                field: table,
                message,
            },
            None => RigFileError::Syntax {
                file: source_name.to_string(),
                line,
                message,
            },
        }
    })?;
    raw::check(raw, text, source_name)
}

/// Longest rig name, characters (it is part of every session id of the rig).
pub const RIG_NAME_MAX_LEN: usize = 24;

/// Checks a rig name: 1 to [`RIG_NAME_MAX_LEN`] ASCII letters, digits and `-`, starting with a
/// letter or digit, so it is safe in a folder name and keeps the `_`-separated fields of a
/// session id apart. Returns the name, or why it is refused.
pub fn validate_rig_name(name: &str) -> Result<&str, String> {
    let ok_chars = name
        .chars()
        .all(|ch| ch.is_ascii_alphanumeric() || ch == '-');
    let first_ok = name
        .chars()
        .next()
        .is_some_and(|ch| ch.is_ascii_alphanumeric());
    if name.len() > RIG_NAME_MAX_LEN || !ok_chars || !first_ok {
        return Err(format!(
            "\"{}\" is not a rig name: 1 to {RIG_NAME_MAX_LEN} ASCII letters, digits and '-', starting with a letter or digit (such as \"rig-2\"); it becomes part of every session id",
            name.escape_debug()
        ));
    }
    Ok(name)
}

/// The built-in demo rig: the demo site, time zone Europe/Paris, arena mark at true 0,
/// simulated sensor and turntable.
pub fn demo_rig() -> Rig {
    Rig {
        name: None,
        site: crate::sky::demo_site(),
        time_zone: "Europe/Paris".to_string(),
        arena_mark_bearing_deg: 0.0,
        arena_mark_reference: BearingReference::True,
        sky_view_min_elevation_deg: 0.0,
        calibration: SensorCalibration::default(),
        sessions_dir: PathBuf::from("sessions"),
        sensor: SensorConfig {
            source: SensorSource::Sim,
            decoder: DecoderConfig {
                time_column: Some(2),
                ..DecoderConfig::default()
            },
            lost_after_s: 1.0,
            path_line: None,
        },
        turntable: TurntableConfig::Sim,
        polarizer: None,
        gps: None,
        source_name: "built-in demo rig".to_string(),
    }
}

#[cfg(test)]
mod tests;
