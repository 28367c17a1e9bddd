//! `skybearing check` as a user runs it: exit codes, text and JSON output, --repair.

mod support;
use support::run;
use support::sessions::{make_lock_stale, session_meta};

use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use skybearing::archive::{
    PlannedEpoch, SampleRow, SessionMeta, SessionStatus, SessionWriter, SummaryBuilder,
};

fn meta(id: &str) -> SessionMeta {
    SessionMeta {
        arena_mark_bearing_deg: 40.0,
        arena_mark_bearing_measured_deg: 40.0,
        protocol: serde_json::json!({"name": "check test"}),
        ..session_meta(
            id,
            vec![
                PlannedEpoch {
                    index: 1,
                    condition: "open sky".into(),
                    turn_before_deg: 0.0,
                    duration_s: 5.0,
                },
                PlannedEpoch {
                    index: 2,
                    condition: "open sky".into(),
                    turn_before_deg: -90.0,
                    duration_s: 5.0,
                },
            ],
        )
    }
}

fn row(k: u64) -> SampleRow {
    let t_s = k as f64 * 0.02;
    let epoch = if t_s < 5.0 { 1 } else { 2 };
    let bearing = if epoch == 1 { 40.0 } else { 310.0 };
    let world = 75.0 + ((k * 37) % 29) as f64;
    let start: DateTime<Utc> = "2026-06-14T09:30:00Z".parse().unwrap();
    SampleRow {
        t_utc: start + chrono::Duration::milliseconds((k * 20) as i64),
        t_s,
        epoch,
        arena_heading_deg: (world - bearing).rem_euclid(360.0),
        arena_bearing_deg: bearing,
        world_heading_deg: world,
        sun_azimuth_deg: 130.0,
        sun_elevation_deg: 45.0,
        flying: true,
        scored: (t_s % 5.0) > 0.5,
        sun_relative_heading_deg: (world - 130.0).rem_euclid(360.0),
        zenith_evector_deg: 40.0,
        raw: world,
        sun_in_view: true,
        evector_shown_deg: Some(40.0),
    }
}

/// A session with `n` samples; closed when `close`, else left as a killed writer leaves it.
fn session(sessions: &Path, id: &str, n: u64, close: bool) -> PathBuf {
    let m = meta(id);
    let mut w = SessionWriter::create(sessions, &m).unwrap();
    let mut b = SummaryBuilder::new(&m.epochs);
    for k in 0..n {
        w.append_sample(&row(k)).unwrap();
        b.push(&row(k));
    }
    if close {
        let mut m = m;
        m.status = SessionStatus::Complete;
        m.ended_utc = Some(row(n - 1).t_utc);
        w.finish(&m, &b.summary()).unwrap()
    } else {
        w.sync_now().unwrap();
        let dir = w.dir().to_path_buf();
        std::mem::forget(w);
        make_lock_stale(&dir);
        dir
    }
}

#[test]
fn clean_session_exits_0() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "c_ok", 500, true);
    let (code, out, err) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.starts_with("ok "), "{out}");
    assert!(out.contains("complete, 500 samples"), "{out}");
}

#[test]
fn usage_errors_exit_2() {
    let (code, _, err) = run(&["check"]);
    assert_eq!(code, 2, "{err}");
    let (code, _, _) = run(&["check", "--no-such-flag", "x"]);
    assert_eq!(code, 2);
}

#[test]
fn interrupted_session_is_reported_then_repaired() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "c_cut", 400, false);
    {
        use std::io::Write;
        let mut f = std::fs::OpenOptions::new()
            .append(true)
            .open(dir.join("samples.csv"))
            .unwrap();
        f.write_all(b"2026-06-14T09:30:08.000Z,8.00").unwrap();
    }
    let d = dir.to_str().unwrap();
    let (code, out, _) = run(&["check", d]);
    assert_eq!(code, 1, "{out}");
    assert!(out.starts_with("FAIL"), "{out}");
    assert!(out.contains("interrupted"), "{out}");
    assert!(out.contains("samples.csv:402: torn last line"), "{out}");

    let (code, out, err) = run(&["check", "--repair", d]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.contains("dropped torn line 402"), "{out}");
    assert!(out.contains("ok "), "{out}");
    assert!(out.contains("recovered, 400 samples"), "{out}");

    let (code, out, _) = run(&["check", d, "--json"]);
    assert_eq!(code, 0, "{out}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v[0]["ok"], true);
    assert_eq!(v[0]["status"], "recovered");
    assert_eq!(v[0]["samples"], 400);
}

#[test]
fn folder_of_sessions_and_json_output() {
    let tmp = tempfile::tempdir().unwrap();
    session(tmp.path(), "a_ok", 300, true);
    session(tmp.path(), "b_cut", 300, false);
    let (code, out, _) = run(&["check", "--json", tmp.path().to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let arr = v.as_array().unwrap();
    assert_eq!(arr.len(), 2);
    assert_eq!(arr[0]["id"], "a_ok");
    assert_eq!(arr[0]["ok"], true);
    assert_eq!(arr[1]["ok"], false);
    assert_eq!(arr[1]["interrupted"], true);
}

#[test]
fn contract_violations_are_named() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "c_cols", 200, true);
    let p = dir.join("samples.csv");
    let text = std::fs::read_to_string(&p).unwrap();
    std::fs::write(&p, text.replacen("sun_elevation_deg", "sun_el", 1)).unwrap();
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(
        out.contains("missing column \"sun_elevation_deg\""),
        "{out}"
    );

    let dir = session(tmp.path(), "c_order", 200, true);
    let p = dir.join("samples.csv");
    let mut lines: Vec<String> = std::fs::read_to_string(&p)
        .unwrap()
        .lines()
        .map(String::from)
        .collect();
    lines.swap(10, 11);
    std::fs::write(&p, lines.join("\n") + "\n").unwrap();
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(
        out.contains("samples.csv:12: t_s does not increase strictly"),
        "{out}"
    );

    let dir = session(tmp.path(), "c_meta", 200, true);
    let p = dir.join("session.json");
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap();
    v["site"].as_object_mut().unwrap().remove("elevation_m");
    std::fs::write(&p, v.to_string()).unwrap();
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(out.contains("missing field(s) site.elevation_m"), "{out}");

    let (code, out, _) = run(&["check", tmp.path().join("nope").to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(out.contains("not a folder"), "{out}");
}
