//! Rig files (TOML). (Shared type fixed by the lead; parsing owned by the rig work.)
//!
//! A rig file is parsed in two steps: TOML into a raw form whose every value keeps its place in
//! the text ([`toml::Spanned`]), then checked into a [`Rig`]. Every error is one line naming the
//! file, the line and the field: `rig.toml:7: site.latitude_deg: 123 is outside [-90, 90]`.

use crate::frames::{Direction, SensorCalibration, SensorUnit};
use crate::sky::Site;
use serde::{Deserialize, Serialize};
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
// Raw form

type S<T> = Spanned<T>;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRig {
    name: Option<S<String>>,
    site: Option<S<RawSite>>,
    arena: Option<S<RawArena>>,
    sensor: Option<S<RawSensor>>,
    turntable: Option<S<RawTurntable>>,
    polarizer: Option<S<RawTurntable>>,
    gps: Option<S<RawGps>>,
    settle_s: Option<S<toml::Value>>,
    sessions_dir: Option<S<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSite {
    name: Option<S<String>>,
    latitude_deg: Option<S<f64>>,
    longitude_deg: Option<S<f64>>,
    elevation_m: Option<S<f64>>,
    time_zone: Option<S<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawArena {
    mark_bearing_deg: Option<S<f64>>,
    mark_reference: Option<S<String>>,
    sky_view_min_elevation_deg: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSensor {
    source: Option<S<String>>,
    path: Option<S<String>>,
    baud: Option<S<i64>>,
    pace: Option<S<String>>,
    delimiter: Option<S<String>>,
    value_column: Option<S<i64>>,
    time_column: Option<S<i64>>,
    time_unit: Option<S<String>>,
    unit: Option<S<String>>,
    counts_per_rev: Option<S<f64>>,
    direction: Option<S<String>>,
    zero_offset_deg: Option<S<f64>>,
    lost_after_s: Option<S<f64>>,
    max_abs_revolutions: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTurntable {
    kind: Option<S<String>>,
    path: Option<S<String>>,
    baud: Option<S<i64>>,
    timeout_s: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGps {
    path: Option<S<String>>,
    baud: Option<S<i64>>,
    wait_s: Option<S<f64>>,
}

mod checker;
use checker::{Checker, key_on_line, line_of, table_at};

/// Why "sim" is refused in a rig file: the in-process simulator is wired by `demo` only.
const SIM_IN_RIG_FILE: &str = "\"sim\" is the built-in simulator of `skybearing demo` and cannot be opened by `run`; to rehearse without hardware, start `skybearing sim --write-rig FILE` and use the rig file it writes";

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
    let raw: RawRig = toml::from_str(text).map_err(|e| {
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
    check(raw, text, source_name)
}

fn check(raw: RawRig, text: &str, file: &str) -> Result<Rig, RigFileError> {
    let c = Checker { text, file };
    let top = |name: &str| -> RigFileError { c.err(text.len(), name, "missing table (required)") };

    // [site]
    let site_s = raw.site.as_ref().ok_or_else(|| top("[site]"))?;
    let at = site_s.span().start;
    let site = site_s.get_ref();
    let name = c.req(&site.name, at, "site.name")?;
    if name.get_ref().trim().is_empty() {
        return Err(c.err(name.span().start, "site.name", "empty name"));
    }
    let latitude_deg = c.range(
        c.req(&site.latitude_deg, at, "site.latitude_deg")?,
        "site.latitude_deg",
        -90.0,
        90.0,
    )?;
    let longitude_deg = c.range(
        c.req(&site.longitude_deg, at, "site.longitude_deg")?,
        "site.longitude_deg",
        -180.0,
        180.0,
    )?;
    let elevation_m = c.range(
        c.req(&site.elevation_m, at, "site.elevation_m")?,
        "site.elevation_m",
        -500.0,
        9000.0,
    )?;
    let tz = c.req(&site.time_zone, at, "site.time_zone")?;
    if tz.get_ref().parse::<chrono_tz::Tz>().is_err() {
        return Err(c.err(
            tz.span().start,
            "site.time_zone",
            format!(
                "unknown time zone \"{}\" (expected an IANA name such as \"Europe/Paris\")",
                tz.get_ref()
            ),
        ));
    }

    // [arena]
    let arena_s = raw.arena.as_ref().ok_or_else(|| top("[arena]"))?;
    let at = arena_s.span().start;
    let arena = arena_s.get_ref();
    let mark = c.range(
        c.req(&arena.mark_bearing_deg, at, "arena.mark_bearing_deg")?,
        "arena.mark_bearing_deg",
        -360.0,
        360.0,
    )?;
    let reference = match c.choice(
        c.req(&arena.mark_reference, at, "arena.mark_reference")?,
        "arena.mark_reference",
        "reference",
        &["true", "magnetic"],
    )? {
        "magnetic" => BearingReference::Magnetic,
        _ => BearingReference::True,
    };
    let sky_view_min_elevation_deg = match &arena.sky_view_min_elevation_deg {
        None => 0.0,
        Some(v) => c.range(v, "arena.sky_view_min_elevation_deg", 0.0, 90.0)?,
    };

    // [sensor]
    let sensor_s = raw.sensor.as_ref().ok_or_else(|| top("[sensor]"))?;
    let at = sensor_s.span().start;
    let s = sensor_s.get_ref();
    let kind = c.choice(
        c.req(&s.source, at, "sensor.source")?,
        "sensor.source",
        "source",
        &["serial", "stdin", "replay", "sim"],
    )?;
    if kind == "sim" {
        return Err(c.err(
            s.source.as_ref().map_or(at, |v| v.span().start),
            "sensor.source",
            SIM_IN_RIG_FILE,
        ));
    }
    let mut path_line = None;
    let source = match kind {
        "serial" => {
            let p = c.req(&s.path, at, "sensor.path")?;
            path_line = Some(line_of(text, p.span().start));
            c.not_for(&s.pace, "sensor.pace", "with source = \"serial\"")?;
            SensorSource::Serial {
                path: c.path(p, "sensor.path")?,
                baud: c.baud(c.req(&s.baud, at, "sensor.baud")?, "sensor.baud")?,
            }
        }
        "replay" => {
            let p = c.req(&s.path, at, "sensor.path")?;
            path_line = Some(line_of(text, p.span().start));
            c.not_for(&s.baud, "sensor.baud", "with source = \"replay\"")?;
            let pace = match &s.pace {
                None => ReplayPace::Recorded,
                Some(v) => match c.choice(v, "sensor.pace", "pace", &["recorded", "fast"])? {
                    "fast" => ReplayPace::Fast,
                    _ => ReplayPace::Recorded,
                },
            };
            if pace == ReplayPace::Recorded && s.time_column.is_none() {
                let off = s.pace.as_ref().map_or(at, |p| p.span().start);
                return Err(c.err(
                    off,
                    "sensor.pace",
                    "pace \"recorded\" needs sensor.time_column (or use pace = \"fast\")",
                ));
            }
            SensorSource::Replay {
                path: c.path(p, "sensor.path")?,
                pace,
            }
        }
        other => {
            let why = format!("with source = \"{other}\"");
            c.not_for(&s.path, "sensor.path", &why)?;
            c.not_for(&s.baud, "sensor.baud", &why)?;
            c.not_for(&s.pace, "sensor.pace", &why)?;
            if other == "stdin" {
                SensorSource::Stdin
            } else {
                SensorSource::Sim
            }
        }
    };
    let mut decoder = DecoderConfig::default();
    if let Some(d) = &s.delimiter {
        let mut chars = d.get_ref().chars();
        match (chars.next(), chars.next()) {
            (Some(ch), None)
                if ch != '\n' && ch != '\r' && !ch.is_ascii_digit() && ch != '.' && ch != '-' =>
            {
                decoder.delimiter = ch
            }
            _ => {
                return Err(c.err(
                    d.span().start,
                    "sensor.delimiter",
                    format!(
                        "\"{}\" is not one usable character (such as \",\", \";\", \" \" or \"\\t\")",
                        d.get_ref().escape_debug()
                    ),
                ));
            }
        }
    }
    if let Some(v) = &s.value_column {
        decoder.value_column = c.column(v, "sensor.value_column")?;
    }
    if let Some(v) = &s.time_column {
        let col = c.column(v, "sensor.time_column")?;
        if col == decoder.value_column {
            return Err(c.err(
                v.span().start,
                "sensor.time_column",
                "same column as sensor.value_column",
            ));
        }
        decoder.time_column = Some(col);
    }
    if let Some(v) = &s.time_unit {
        decoder.time_unit = match c.choice(v, "sensor.time_unit", "time unit", &["ms", "us"])? {
            "us" => TimeUnit::Us,
            _ => TimeUnit::Ms,
        };
    }
    if let Some(v) = &s.max_abs_revolutions {
        decoder.max_abs_revolutions = c.positive(v, "sensor.max_abs_revolutions")?;
    }
    let unit_s = c.req(&s.unit, at, "sensor.unit")?;
    let unit = match c.choice(
        unit_s,
        "sensor.unit",
        "unit",
        &["degrees", "radians", "counts"],
    )? {
        "radians" => {
            c.not_for(
                &s.counts_per_rev,
                "sensor.counts_per_rev",
                "with unit = \"radians\"",
            )?;
            SensorUnit::Radians
        }
        "counts" => {
            let v = s.counts_per_rev.as_ref().ok_or_else(|| {
                c.err(
                    unit_s.span().start,
                    "sensor.counts_per_rev",
                    "missing (required with unit = \"counts\")",
                )
            })?;
            SensorUnit::Counts {
                per_rev: c.positive(v, "sensor.counts_per_rev")?,
            }
        }
        _ => {
            c.not_for(
                &s.counts_per_rev,
                "sensor.counts_per_rev",
                "with unit = \"degrees\"",
            )?;
            SensorUnit::Degrees
        }
    };
    let direction = match &s.direction {
        None => Direction::Clockwise,
        Some(v) => match c.choice(
            v,
            "sensor.direction",
            "direction",
            &["clockwise", "counterclockwise"],
        )? {
            "counterclockwise" => Direction::Counterclockwise,
            _ => Direction::Clockwise,
        },
    };
    let zero_offset_deg = match &s.zero_offset_deg {
        None => 0.0,
        Some(v) => c.range(v, "sensor.zero_offset_deg", -360.0, 360.0)?,
    };
    let lost_after_s = match &s.lost_after_s {
        None => 1.0,
        Some(v) => c.range(v, "sensor.lost_after_s", 0.01, 3600.0)?,
    };

    // [turntable]
    let tt_s = raw.turntable.as_ref().ok_or_else(|| top("[turntable]"))?;
    let at = tt_s.span().start;
    let t = tt_s.get_ref();
    let kind_s = c.req(&t.kind, at, "turntable.kind")?;
    let turntable = match c.choice(
        kind_s,
        "turntable.kind",
        "turntable kind",
        &["serial", "manual", "sim"],
    )? {
        "sim" => return Err(c.err(kind_s.span().start, "turntable.kind", SIM_IN_RIG_FILE)),
        "serial" => {
            let p = c.req(&t.path, at, "turntable.path")?;
            TurntableConfig::Serial {
                path: c.path(p, "turntable.path")?,
                baud: c.baud(c.req(&t.baud, at, "turntable.baud")?, "turntable.baud")?,
                timeout_s: match &t.timeout_s {
                    None => 30.0,
                    Some(v) => c.range(v, "turntable.timeout_s", 0.05, 600.0)?,
                },
                path_line: Some(line_of(text, p.span().start)),
            }
        }
        other => {
            let why = format!("with kind = \"{other}\"");
            c.not_for(&t.path, "turntable.path", &why)?;
            c.not_for(&t.baud, "turntable.baud", &why)?;
            c.not_for(&t.timeout_s, "turntable.timeout_s", &why)?;
            if other == "manual" {
                TurntableConfig::Manual
            } else {
                TurntableConfig::Sim
            }
        }
    };

    // [polarizer] (optional): the same fields as the turntable's, without "sim".
    let polarizer = match raw.polarizer.as_ref() {
        None => None,
        Some(p_s) => {
            let at = p_s.span().start;
            let t = p_s.get_ref();
            let kind_s = c.req(&t.kind, at, "polarizer.kind")?;
            match c.choice(
                kind_s,
                "polarizer.kind",
                "polarizer kind",
                &["serial", "manual"],
            )? {
                "serial" => {
                    let p = c.req(&t.path, at, "polarizer.path")?;
                    Some(PolarizerConfig::Serial {
                        path: c.path(p, "polarizer.path")?,
                        baud: c.baud(c.req(&t.baud, at, "polarizer.baud")?, "polarizer.baud")?,
                        timeout_s: match &t.timeout_s {
                            None => 30.0,
                            Some(v) => c.range(v, "polarizer.timeout_s", 0.05, 600.0)?,
                        },
                        path_line: Some(line_of(text, p.span().start)),
                    })
                }
                _ => {
                    let why = "with kind = \"manual\"";
                    c.not_for(&t.path, "polarizer.path", why)?;
                    c.not_for(&t.baud, "polarizer.baud", why)?;
                    c.not_for(&t.timeout_s, "polarizer.timeout_s", why)?;
                    Some(PolarizerConfig::Manual)
                }
            }
        }
    };

    // [gps] (optional): a serial NMEA 0183 receiver.
    let gps = match raw.gps.as_ref() {
        None => None,
        Some(g_s) => {
            let at = g_s.span().start;
            let g = g_s.get_ref();
            let p = c.req(&g.path, at, "gps.path")?;
            Some(super::gps::GpsConfig {
                path: c.path(p, "gps.path")?,
                baud: c.baud(c.req(&g.baud, at, "gps.baud")?, "gps.baud")?,
                wait_s: match &g.wait_s {
                    None => super::gps::DEFAULT_WAIT_S,
                    Some(v) => c.range(v, "gps.wait_s", 0.0, 600.0)?,
                },
                path_line: Some(line_of(text, p.span().start)),
            })
        }
    };

    if let Some(v) = &raw.settle_s {
        return Err(c.err(
            v.span().start,
            "settle_s",
            "not a rig setting: the settle window is the protocol's settle_s (required in every protocol file)",
        ));
    }
    let rig_name = match &raw.name {
        None => None,
        Some(v) => Some(
            validate_rig_name(v.get_ref())
                .map_err(|why| c.err(v.span().start, "name", why))?
                .to_string(),
        ),
    };
    let sessions_dir = match &raw.sessions_dir {
        None => PathBuf::from("sessions"),
        Some(v) => c.path(v, "sessions_dir")?,
    };

    Ok(Rig {
        name: rig_name,
        site: Site {
            name: name.get_ref().clone(),
            latitude_deg,
            longitude_deg,
            elevation_m,
        },
        time_zone: tz.get_ref().clone(),
        arena_mark_bearing_deg: mark,
        arena_mark_reference: reference,
        sky_view_min_elevation_deg,
        calibration: SensorCalibration {
            unit,
            direction,
            zero_offset_deg,
        },
        sessions_dir,
        sensor: SensorConfig {
            source,
            decoder,
            lost_after_s,
            path_line,
        },
        turntable,
        polarizer,
        gps,
        source_name: file.to_string(),
    })
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
