//! `skybearing run --speed max --start UTC` with a replay sensor: a recorded file runs on its own
//! clock into the same epochs, turns and scores it filled live.
//!
//! The recording is a headless demo session: its `raw` column and `t_s` (as the device's time
//! column, microseconds) written as a replay file, with a rig file that describes the demo rig
//! (demo site, arena mark at true 0, degrees clockwise, no offset). A sensor file holds no turn
//! times, so a replay turns the arena at once; the demo's turntable took |turn| / 30 °/s. The
//! test therefore takes each turn's seconds (turn_commanded to turn_done in `events.csv`) out of
//! the recording, as a turntable that turned at once would have recorded it.

mod support;
use support::demo::{START, demo_command};
use support::sessions::{col, read_csv};
use support::{bin, finished_session, read_json};

use std::path::Path;

const PROTOCOL: &str = r#"
name = "replay check"
settle_s = 1
[[epochs]]
count = 4
duration_s = 40
condition = "open sky"
turns = [90, 180, -90]
order = "fixed"
"#;

/// The demo rig as a rig file whose sensor replays `file` (raw degrees, device time in µs).
fn replay_rig(file: &Path, time_column: bool) -> String {
    let time = if time_column {
        "time_column = 2\ntime_unit = \"us\""
    } else {
        "pace = \"fast\""
    };
    format!(
        r#"[site]
name = "Larkfield Meadow (demo)"
latitude_deg = 43.2170
longitude_deg = 5.4420
elevation_m = 210.0
time_zone = "Europe/Paris"
[arena]
mark_bearing_deg = 0.0
mark_reference = "true"
[sensor]
source = "replay"
path = "{}"
{time}
unit = "degrees"
direction = "clockwise"
zero_offset_deg = 0.0
[turntable]
kind = "manual"
"#,
        file.display()
    )
}

/// (turn_commanded, turn_done) session seconds of every turn in a session's events.csv.
fn turn_windows(session: &Path) -> Vec<(f64, f64)> {
    let (h, rows) = read_csv(&session.join("events.csv"));
    let mut out = Vec::new();
    let mut since = None;
    for r in &rows {
        let t: f64 = col(&h, r, "t_s").parse().unwrap();
        match col(&h, r, "kind") {
            "turn_commanded" => since = Some(t),
            "turn_done" => out.push((since.take().expect("a commanded turn"), t)),
            _ => {}
        }
    }
    out
}

/// Writes the session's samples as a replay file, each turn's seconds taken out.
fn write_replay(session: &Path, out: &Path) -> usize {
    let turns = turn_windows(session);
    let (h, rows) = read_csv(&session.join("samples.csv"));
    let mut text = String::new();
    let mut n = 0;
    for r in &rows {
        let t: f64 = col(&h, r, "t_s").parse().unwrap();
        if turns.iter().any(|&(a, b)| a < t && t <= b) {
            continue;
        }
        let shift: f64 = turns.iter().filter(|w| t > w.1).map(|w| w.1 - w.0).sum();
        let us = ((t - shift) * 1e6).round() as i64;
        text.push_str(&format!("{},{us}\n", col(&h, r, "raw")));
        n += 1;
    }
    std::fs::write(out, text).unwrap();
    n
}

fn circular_diff_deg(a: f64, b: f64) -> f64 {
    ((a - b + 540.0).rem_euclid(360.0) - 180.0).abs()
}

#[test]
fn a_recording_replays_at_full_speed_into_the_epochs_it_filled_live() {
    let dir = tempfile::tempdir().unwrap();
    let protocol = dir.path().join("p.toml");
    std::fs::write(&protocol, PROTOCOL).unwrap();
    let live_dir = dir.path().join("live");
    let p = protocol.to_str().unwrap();
    let live = finished_session(
        &demo_command(
            &live_dir,
            &["--speed", "max", "--seed", "5", "--protocol", p],
        )
        .output()
        .unwrap(),
    );
    // The replay has no operator marks: the demo session must have flown throughout.
    let events = std::fs::read_to_string(live.join("events.csv")).unwrap();
    assert!(!events.contains("flight_stop"), "seed 5 has a flight stop");
    assert_eq!(turn_windows(&live).len(), 3);

    let file = dir.path().join("recording.csv");
    assert!(write_replay(&live, &file) > 10_000);
    let rig = dir.path().join("rig.toml");
    std::fs::write(&rig, replay_rig(&file, true)).unwrap();
    let live_meta = read_json(&live.join("session.json"));
    let started = live_meta["started_utc"].as_str().unwrap();
    assert_eq!(started, "2026-06-14T07:30:00.000Z");
    assert!(START.starts_with("2026-06-14T07:30:00"));
    let out = bin()
        .args(["run", "--headless", "--speed", "max", "--animal", "lm-07"])
        .args(["--start", started])
        .arg("--rig")
        .arg(&rig)
        .arg("--protocol")
        .arg(&protocol)
        .arg("--sessions")
        .arg(dir.path().join("replayed"))
        .stdin(std::process::Stdio::null())
        .output()
        .unwrap();
    let replayed = finished_session(&out);

    let meta = read_json(&replayed.join("session.json"));
    assert_eq!(meta["status"], "complete", "{meta}");
    assert_eq!(meta["end_reason"], "protocol finished");
    assert_eq!(meta["started_utc"], started);
    let events = std::fs::read_to_string(replayed.join("events.csv")).unwrap();
    assert!(events.contains("turntable replay (turns are in the recording"));
    assert_eq!(events.matches(",turn_done,").count(), 3, "{events}");

    let a = read_json(&live.join("summary.json"));
    let b = read_json(&replayed.join("summary.json"));
    let (ea, eb) = (
        a["epochs"].as_array().unwrap(),
        b["epochs"].as_array().unwrap(),
    );
    assert_eq!(ea.len(), 4);
    assert_eq!(ea.len(), eb.len());
    for (x, y) in ea.iter().zip(eb) {
        let (na, nb) = (x["n"].as_i64().unwrap(), y["n"].as_i64().unwrap());
        assert!(
            na > 3000 && (na - nb).abs() <= 2,
            "n {na} live, {nb} replayed"
        );
        assert_eq!(x["arena_bearing_deg"], y["arena_bearing_deg"]);
        let (ma, mb) = (
            x["mean_world_deg"].as_f64().unwrap(),
            y["mean_world_deg"].as_f64().unwrap(),
        );
        assert!(
            circular_diff_deg(ma, mb) < 0.5,
            "epoch {}: mean world {ma:.2} live, {mb:.2} replayed",
            x["index"]
        );
    }
}

#[test]
fn full_speed_replay_needs_start_and_a_time_column() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("recording.csv");
    std::fs::write(&file, "10,0\n20,10000\n").unwrap();
    let protocol = dir.path().join("p.toml");
    std::fs::write(&protocol, PROTOCOL).unwrap();
    let run = |rig_text: String, start: Option<&str>| {
        let rig = dir.path().join("rig.toml");
        std::fs::write(&rig, rig_text).unwrap();
        let mut c = bin();
        c.args(["run", "--headless", "--speed", "max", "--animal", "lm-07"])
            .arg("--rig")
            .arg(&rig)
            .arg("--protocol")
            .arg(&protocol)
            .arg("--sessions")
            .arg(dir.path().join("s"))
            .stdin(std::process::Stdio::null());
        if let Some(s) = start {
            c.args(["--start", s]);
        }
        let out = c.output().unwrap();
        (
            out.status.code().unwrap_or(-1),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    let (code, err) = run(replay_rig(&file, true), None);
    assert_ne!(code, 0);
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains("--start"), "{err}");
    let (code, err) = run(replay_rig(&file, false), Some("2026-06-14T07:30:00Z"));
    assert_ne!(code, 0);
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains("sensor.time_column"), "{err}");
    assert!(
        !dir.path().join("s").exists(),
        "no session folder for a refused run"
    );
}

#[test]
fn a_recording_that_ends_early_ends_the_session() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("recording.csv");
    // 50 s at 10 Hz: the protocol wants 160 s.
    let text: String = (0..500)
        .map(|i| format!("{},{}\n", (i % 360), i * 100_000))
        .collect();
    std::fs::write(&file, text).unwrap();
    let protocol = dir.path().join("p.toml");
    std::fs::write(&protocol, PROTOCOL).unwrap();
    let rig = dir.path().join("rig.toml");
    std::fs::write(&rig, replay_rig(&file, true)).unwrap();
    let out = bin()
        .args(["run", "--headless", "--speed", "max", "--animal", "lm-07"])
        .args(["--start", "2026-06-14T07:30:00Z"])
        .arg("--rig")
        .arg(&rig)
        .arg("--protocol")
        .arg(&protocol)
        .arg("--sessions")
        .arg(dir.path().join("s"))
        .stdin(std::process::Stdio::null())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let stdout = String::from_utf8_lossy(&out.stdout);
    let session = support::session_folder(&stdout);
    let meta = read_json(&session.join("session.json"));
    assert_eq!(meta["status"], "aborted");
    assert_eq!(meta["end_reason"], "end of the recording");
    // Noticed like a lost sensor: lost_after_s (1 s) after the last line at 49.9 s.
    let (h, rows) = read_csv(&session.join("events.csv"));
    let end = rows
        .iter()
        .find(|r| col(&h, r, "kind") == "session_end")
        .unwrap();
    let t: f64 = col(&h, end, "t_s").parse().unwrap();
    assert!((t - 50.9).abs() < 1e-6, "{t}");
}
