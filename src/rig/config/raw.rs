//! The raw form of a rig file (TOML values that keep their place in the text) and its check
//! into a [`Rig`]: every required field, range, choice and combination, each refusal one
//! `file:line: field: message` error through [`Checker`].

use super::checker::{Checker, line_of};
use super::*;
use crate::frames::{Direction, SensorUnit};
use serde::Deserialize;

/// A rig file as TOML reads it: every value optional and spanned, so that a missing or wrong
/// one is refused by [`check`] with its line.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawRig {
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

/// Why "sim" is refused in a rig file: the in-process simulator is wired by `demo` only.
const SIM_IN_RIG_FILE: &str = "\"sim\" is the built-in simulator of `skybearing demo` and cannot be opened by `run`; to rehearse without hardware, start `skybearing sim --write-rig FILE` and use the rig file it writes";

/// Checks a rig file's raw form into a [`Rig`]; `text` is the file's text (for lines), `file`
/// names it in errors.
pub(super) fn check(raw: RawRig, text: &str, file: &str) -> Result<Rig, RigFileError> {
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
            Some(crate::rig::gps::GpsConfig {
                path: c.path(p, "gps.path")?,
                baud: c.baud(c.req(&g.baud, at, "gps.baud")?, "gps.baud")?,
                wait_s: match &g.wait_s {
                    None => crate::rig::gps::DEFAULT_WAIT_S,
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
