//! Synthetic session folders for the batch and report command tests: written in the contract's
//! layout with a deterministic heading pattern, so the tests need neither the engine nor
//! Python. (The demo archive under tests/data is checked separately against the reference.)
#![allow(dead_code)]

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// How the synthetic animal steers.
#[derive(Clone, Copy, PartialEq)]
pub enum Mode {
    /// Keeps a world heading.
    Sky,
    /// Keeps an arena heading.
    Arena,
}

/// Writes a session folder `root/id` with `epochs` epochs of `n` samples at 10 Hz; arena turns
/// of +90 between epochs; conditions alternate "open sky" / "diffuser". Returns the folder.
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
    let dir = root.join(id);
    std::fs::create_dir_all(&dir).unwrap();
    let conds = ["open sky", "diffuser"];
    let eps: Vec<String> = (0..epochs)
        .map(|i| {
            format!(
                r#"{{"index":{},"duration_s":{},"condition":"{}","arena":{{"kind":"turn_by","deg":90}},"prompt":null}}"#,
                i + 1,
                n as f64 / 10.0,
                conds[i % 2]
            )
        })
        .collect();
    let meta = format!(
        r#"{{"id":"{id}","animal":"{animal}","status":"{status}","started_utc":"2026-06-0{}T09:00:00.000Z","ended_utc":"2026-06-01T10:00:00.000Z","site":{{"name":"Larkfield Meadow (demo)","latitude_deg":52.1,"longitude_deg":5.2,"elevation_m":10}},"arena_mark_bearing_deg":20.0,"declination_deg":2.0,"format_version":1,"protocol":{{"name":"synthetic","settle_s":2.0,"epochs":[{}]}}}}"#,
        1 + (id.len() % 5),
        eps.join(",")
    );
    std::fs::write(dir.join("session.json"), meta).unwrap();
    let mut s = String::from(
        "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored,sun_relative_heading_deg,zenith_evector_deg,raw\n",
    );
    let mut t = 0.0;
    let mut bearing: f64 = 20.0;
    for e in 0..epochs {
        if e > 0 {
            bearing = (bearing + 90.0) % 360.0;
        }
        for i in 0..n {
            t += 0.1;
            // A deterministic wobble of ±20° around the preferred heading.
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
            let scored = i >= 20;
            let sun = 130.0 + t / 240.0;
            writeln!(
                s,
                "2026-06-01T09:00:00.000Z,{t:.3},{},{arena:.3},{bearing:.3},{world:.3},{sun:.4},35.0000,1,{},{:.3},40.000,{arena:.3}",
                e + 1,
                scored as u8,
                (world - sun).rem_euclid(360.0)
            )
            .unwrap();
        }
    }
    std::fs::write(dir.join("samples.csv"), s).unwrap();
    dir
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
