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
        out.contains("samples.csv:12: t_s") && out.contains("out of order"),
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

/// Issue 14: a closed session whose samples.csv was deleted keeps its summary.json, is
/// reported as having lost its samples (non-zero exit) and gets no empty samples.csv.
#[test]
fn repair_keeps_the_summary_of_a_closed_session_whose_samples_were_deleted() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "lost_all", 400, true);
    let summary = std::fs::read(dir.join("summary.json")).unwrap();
    std::fs::remove_file(dir.join("samples.csv")).unwrap();
    let (code, out, _) = run(&["check", "--repair", dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("not repaired") && out.contains("samples are lost"),
        "{out}"
    );
    assert!(out.contains("FAIL"), "{out}");
    assert!(!out.contains("ok   "), "{out}");
    assert!(
        !dir.join("samples.csv").exists(),
        "an empty samples.csv was made"
    );
    assert_eq!(std::fs::read(dir.join("summary.json")).unwrap(), summary);
}

/// Issue 14: a closed session whose samples.csv was truncated keeps its summary.json (never
/// rewritten from what is left) and the loss is reported.
#[test]
fn repair_keeps_the_summary_of_a_closed_session_whose_samples_were_truncated() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "lost_half", 400, true);
    let summary = std::fs::read(dir.join("summary.json")).unwrap();
    let p = dir.join("samples.csv");
    let bytes = std::fs::read(&p).unwrap();
    std::fs::write(&p, &bytes[..bytes.len() / 2]).unwrap();
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(out.contains("were lost after the session closed"), "{out}");
    let (code, out, _) = run(&["check", "--repair", dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("not repaired") && out.contains("nothing was changed"),
        "{out}"
    );
    assert_eq!(std::fs::read(dir.join("summary.json")).unwrap(), summary);
    assert_eq!(std::fs::read(&p).unwrap(), &bytes[..bytes.len() / 2]);
}

/// Writes a closed session with `n` events whose details are plain words.
fn session_with_events(sessions: &Path, id: &str, n: u64) -> PathBuf {
    let m = meta(id);
    let mut w = SessionWriter::create(sessions, &m).unwrap();
    let mut b = SummaryBuilder::new(&m.epochs);
    let start: DateTime<Utc> = "2026-06-14T09:30:00Z".parse().unwrap();
    for k in 0..300 {
        w.append_sample(&row(k)).unwrap();
        b.push(&row(k));
    }
    for k in 0..n {
        w.append_event(&skybearing::archive::EventRow {
            t_utc: start + chrono::Duration::milliseconds((k * 20) as i64),
            t_s: k as f64 * 0.02,
            kind: "note".into(),
            detail: format!("note number {k}"),
        })
        .unwrap();
    }
    let mut m = m;
    m.status = SessionStatus::Complete;
    m.ended_utc = Some(row(299).t_utc);
    w.finish(&m, &b.summary()).unwrap()
}

/// Issue 14: one stray `"` in events.csv sets aside only its own line; the events after it
/// are read, and repair keeps them (before: the rest of the file was one torn last line).
#[test]
fn one_stray_quote_in_events_sets_aside_only_its_line() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session_with_events(tmp.path(), "stray_quote", 218);
    let p = dir.join("events.csv");
    let text = std::fs::read_to_string(&p).unwrap();
    let bad = text.replacen("note number 3\n", "note \"number 3\n", 1);
    assert_ne!(bad, text);
    std::fs::write(&p, &bad).unwrap();
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(out.contains("events.csv:5: malformed line"), "{out}");
    assert!(out.contains("217 events"), "{out}");
    assert!(!out.contains("torn last line"), "{out}");
    let (code, out, _) = run(&["check", "--repair", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("set aside malformed line 5"), "{out}");
    assert!(out.contains("217 events"), "{out}");
    let torn = std::fs::read_to_string(dir.join("events.csv.torn")).unwrap();
    assert!(
        torn.starts_with("2026-06-14T09:30:00.060Z") && torn.ends_with("note \"number 3\n"),
        "{torn:?}"
    );
    assert_eq!(torn.lines().count(), 1);
    let kept = std::fs::read_to_string(&p).unwrap();
    assert_eq!(kept.lines().count(), 1 + 217);
    assert!(kept.contains("note number 217\n"));
}

/// Issue 14: a folder holding only `.lock` (a run killed before it wrote session.json) is
/// reported with the rule, and `check --repair` removes it (nothing was recorded in it).
#[test]
fn a_folder_holding_only_a_stale_lock_is_removed_by_repair() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp
        .path()
        .join("2026-06-14_larkfield-meadow-demo_lm-07_001");
    std::fs::create_dir(&dir).unwrap();
    std::fs::write(dir.join(".lock"), "").unwrap();
    make_lock_stale(&dir);
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("killed before it wrote one") && out.contains("removes the folder"),
        "{out}"
    );
    let (code, out, _) = run(&["check", "--repair", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("removed the folder"), "{out}");
    assert!(!dir.exists());

    // A folder with anything else in it is not removed.
    std::fs::create_dir(&dir).unwrap();
    make_lock_stale(&dir);
    std::fs::write(dir.join("notes.txt"), "mine").unwrap();
    let (code, _, _) = run(&["check", "--repair", dir.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(dir.join("notes.txt").exists());
}

/// Replaces field `col` of data row `k` (0-based, header excluded) of a session's samples.csv.
fn set_field(dir: &Path, k: usize, col: &str, value: &str) {
    let p = dir.join("samples.csv");
    let text = std::fs::read_to_string(&p).unwrap();
    let mut lines: Vec<String> = text.lines().map(String::from).collect();
    let c = lines[0].split(',').position(|h| h == col).unwrap();
    let mut f: Vec<String> = lines[k + 1].split(',').map(String::from).collect();
    f[c] = value.into();
    lines[k + 1] = f.join(",");
    std::fs::write(&p, lines.join("\n") + "\n").unwrap();
}

/// Issue 14: `check` validates the sun, e-vector and raw columns, not only the headings.
#[test]
fn check_validates_the_sun_evector_and_raw_columns() {
    let tmp = tempfile::tempdir().unwrap();
    for (name, col, value, what) in [
        (
            "az",
            "sun_azimuth_deg",
            "400.000",
            "sun_azimuth_deg outside [0, 360)",
        ),
        (
            "el",
            "sun_elevation_deg",
            "-91.000",
            "sun_elevation_deg outside [-90, 90]",
        ),
        (
            "rel",
            "sun_relative_heading_deg",
            "12.000",
            "sun_relative_heading_deg differs from world_heading_deg - sun_azimuth_deg",
        ),
        (
            "ev",
            "zenith_evector_deg",
            "130.000",
            "zenith_evector_deg is not the axis perpendicular to sun_azimuth_deg",
        ),
        ("raw", "raw", "NaN", "raw is not a finite number"),
        ("rawtext", "raw", "abc", "raw is not a finite number"),
    ] {
        let dir = session(tmp.path(), &format!("cols_{name}"), 200, true);
        let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
        assert_eq!(code, 0, "{name}: {out}");
        set_field(&dir, 20, col, value);
        let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
        assert_eq!(code, 1, "{name}: {out}");
        assert!(
            out.contains("samples.csv:22") && out.contains(what),
            "{name}: {out}"
        );
    }
}

fn edit_summary(dir: &Path, edit: impl FnOnce(&mut serde_json::Value)) {
    let path = dir.join("summary.json");
    let mut v: serde_json::Value = serde_json::from_slice(&std::fs::read(&path).unwrap()).unwrap();
    edit(&mut v);
    std::fs::write(&path, serde_json::to_vec_pretty(&v).unwrap()).unwrap();
}

/// Issue 11: check compares `p_oriented` and `turn_test` with what the samples give; an older
/// archive written before those keys existed is not faulted for lacking them.
#[test]
fn check_compares_p_oriented_and_turn_test_unless_the_archive_predates_them() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = session(tmp.path(), "c_inf", 500, true);
    edit_summary(&dir, |v| {
        v["epochs"][0]["p_oriented"] = serde_json::json!(0.5)
    });
    let (code, out, err) = run(&["check", dir.to_str().unwrap()]);
    assert_ne!(code, 0, "{out}{err}");
    assert!(
        out.contains("epochs[1].p_oriented is 0.5 but the samples give null"),
        "{out}"
    );
    edit_summary(&dir, |v| {
        v["epochs"][0]["p_oriented"] = serde_json::Value::Null;
        v["turn_test"]["turns"] = serde_json::json!(4);
    });
    let (code, out, _) = run(&["check", dir.to_str().unwrap()]);
    assert_ne!(code, 0, "{out}");
    assert!(
        out.contains("turn_test.turns is 4 but the samples give"),
        "{out}"
    );
    // The same archive as written before p_oriented, window_shift_deg and turn_test.
    edit_summary(&dir, |v| {
        for e in v["epochs"].as_array_mut().unwrap() {
            e.as_object_mut().unwrap().remove("p_oriented");
        }
        for t in v["turns"].as_array_mut().unwrap() {
            t.as_object_mut().unwrap().remove("window_shift_deg");
        }
        v.as_object_mut().unwrap().remove("turn_test");
    });
    let (code, out, err) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.starts_with("ok "), "{out}");
}

/// The committed demo archive was written while `p_oriented` fitted its diffusion over 1–5 s:
/// check keeps it ok, says so, and does not compare those figures with today's 0.5–2.5 s test.
#[test]
fn check_notes_p_oriented_of_the_earlier_lag_window() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/sessions/2026-06-21_larkfield-meadow-demo_lm-01_001");
    let (code, out, err) = run(&["check", dir.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.starts_with("ok "), "{out}");
    assert!(
        out.contains("p_oriented was computed with an earlier lag window"),
        "{out}"
    );
}
