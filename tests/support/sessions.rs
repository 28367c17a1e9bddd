//! Synthetic session folders for the batch and report command tests: written in the contract's
//! layout with a deterministic heading pattern, so the tests need neither the engine nor
//! Python. (The demo archive under tests/data is checked separately against the reference.)
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use skybearing::archive::{
    FORMAT_VERSION, LOCK_FILE, PlannedEpoch, SampleRow, SessionMeta, SessionStatus, SessionWriter,
    SiteMeta, SummaryBuilder,
};

/// The metadata of a `running` session of animal lm-07 at the demo site, started
/// 2026-06-14T09:30:00Z, with the arena's 0 mark at 0° true, no declination and no seed; tests
/// set what they need on top.
pub fn session_meta(id: &str, epochs: Vec<PlannedEpoch>) -> SessionMeta {
    SessionMeta {
        format_version: FORMAT_VERSION,
        id: id.into(),
        status: SessionStatus::Running,
        started_utc: "2026-06-14T09:30:00Z".parse().unwrap(),
        ended_utc: None,
        animal: "lm-07".into(),
        site: SiteMeta {
            name: "Larkfield Meadow (demo)".into(),
            latitude_deg: 52.1,
            longitude_deg: 0.4,
            elevation_m: 30.0,
            source: None,
        },
        time_zone: "UTC".into(),
        arena_mark_bearing_deg: 0.0,
        arena_mark_bearing_measured_deg: 0.0,
        arena_mark_reference: "true".into(),
        declination_deg: None,
        protocol: serde_json::json!({"name": "synthetic"}),
        epochs,
        rig: serde_json::json!({}),
        program_version: skybearing::VERSION.into(),
        mode: "demo".into(),
        seed: None,
        end_reason: None,
        notes: 0,
        clock_offset_s: None,
        gps: None,
    }
}

/// Overwrites the lock of `dir` with the pid of a process that has exited, as a writer killed
/// with SIGKILL leaves it.
pub fn make_lock_stale(dir: &Path) {
    let mut child = std::process::Command::new("true").spawn().unwrap();
    let pid = child.id();
    child.wait().unwrap();
    std::fs::write(dir.join(LOCK_FILE), format!("{pid}\n")).unwrap();
}

/// How the synthetic animal steers.
#[derive(Clone, Copy, PartialEq)]
pub enum Mode {
    /// Keeps a world heading.
    Sky,
    /// Keeps an arena heading.
    Arena,
}

/// Writes a session folder `root/id` through the archive's own writer: `epochs` epochs of `n`
/// samples at 10 Hz, arena turns of +90 between epochs, conditions alternating "open sky" /
/// "diffuser", the first 20 samples of each epoch not scored (a settle window). Returns the
/// folder.
#[allow(clippy::too_many_arguments)]
pub fn write_session(
    root: &Path,
    id: &str,
    animal: &str,
    status: &str,
    mode: Mode,
    preferred_deg: f64,
    epochs: usize,
    n: usize,
) -> PathBuf {
    let conds = ["open sky", "diffuser"];
    let planned: Vec<PlannedEpoch> = (0..epochs)
        .map(|i| PlannedEpoch {
            index: i + 1,
            condition: conds[i % 2].to_string(),
            turn_before_deg: if i == 0 { 0.0 } else { 90.0 },
            duration_s: n as f64 / 10.0,
        })
        .collect();
    let day = 1 + (id.len() % 5) as u32;
    let start = chrono::TimeZone::with_ymd_and_hms(&chrono::Utc, 2026, 6, day, 9, 0, 0).unwrap();
    let mut meta = session_meta(id, planned.clone());
    meta.started_utc = start;
    meta.animal = animal.to_string();
    meta.site.longitude_deg = 5.2;
    meta.site.elevation_m = 10.0;
    meta.arena_mark_bearing_deg = 20.0;
    meta.arena_mark_bearing_measured_deg = 20.0;
    meta.declination_deg = Some(2.0);
    let mut w = SessionWriter::create(root, &meta).unwrap();
    let mut summary = SummaryBuilder::new(&planned);
    let mut t = 0.0;
    let mut bearing: f64 = 20.0;
    for e in 0..epochs {
        if e > 0 {
            bearing = (bearing + 90.0) % 360.0;
        }
        for i in 0..n {
            t += 0.1;
            // A deterministic wobble of about ±27° around the preferred heading.
            let wobble = 20.0 * ((i as f64) * 0.37).sin() + 7.0 * ((i as f64) * 1.3).cos();
            let (world, arena) = match mode {
                Mode::Sky => {
                    let w = (preferred_deg + wobble).rem_euclid(360.0);
                    (w, (w - bearing).rem_euclid(360.0))
                }
                Mode::Arena => {
                    let a = (preferred_deg + wobble).rem_euclid(360.0);
                    ((a + bearing).rem_euclid(360.0), a)
                }
            };
            let sun = 130.0 + t / 240.0;
            let row = SampleRow {
                t_utc: start + chrono::Duration::milliseconds((t * 1000.0) as i64),
                t_s: t,
                epoch: e + 1,
                arena_heading_deg: arena,
                arena_bearing_deg: bearing,
                world_heading_deg: world,
                sun_azimuth_deg: sun,
                sun_elevation_deg: 35.0,
                flying: true,
                scored: i >= 20,
                sun_relative_heading_deg: (world - sun).rem_euclid(360.0),
                zenith_evector_deg: (sun + 90.0).rem_euclid(180.0),
                raw: arena,
                sun_in_view: true,
                evector_shown_deg: Some(40.0),
            };
            summary.push(&row);
            w.append_sample(&row).unwrap();
        }
    }
    meta.status = match status {
        "complete" => SessionStatus::Complete,
        "recovered" => SessionStatus::Recovered,
        "aborted" => SessionStatus::Aborted,
        _ => SessionStatus::Running,
    };
    meta.ended_utc = Some(start + chrono::Duration::milliseconds((t * 1000.0) as i64));
    w.finish(&meta, &summary.summary()).unwrap()
}

/// Reads a CSV written by batch into (header, rows) with a small quote-aware splitter.
pub fn read_csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header = split(lines.next().unwrap());
    let rows = lines.map(split).collect();
    (header, rows)
}

fn split(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut q = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if q && chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            '"' => q = !q,
            ',' if !q => out.push(std::mem::take(&mut cur)),
            c => cur.push(c),
        }
    }
    out.push(cur);
    out
}

/// The value of column `name` in `row`.
pub fn col<'a>(header: &[String], row: &'a [String], name: &str) -> &'a str {
    let i = header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"));
    &row[i]
}
