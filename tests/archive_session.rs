//! The session archive end to end through the library: write with `SessionWriter` and a live
//! `SummaryBuilder`, read back, check, tear, repair, and a writer killed with SIGKILL.

mod support;
use support::sessions::{make_lock_stale, session_meta};

use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use skybearing::archive::check::{check_session, compare_summaries, repair_session};
use skybearing::archive::read::{for_each_sample, read_events};
use skybearing::archive::{
    EventRow, LOCK_FILE, PlannedEpoch, SAMPLES_FILE, SampleRow, SessionMeta, SessionStatus,
    SessionWriter, Summary, SummaryBuilder,
};

fn epochs() -> Vec<PlannedEpoch> {
    (1..=3)
        .map(|i| PlannedEpoch {
            index: i,
            condition: if i == 2 {
                "diffuser".into()
            } else {
                "open sky".into()
            },
            turn_before_deg: if i == 1 { 0.0 } else { 90.0 },
            duration_s: 10.0,
        })
        .collect()
}

fn meta(id: &str) -> SessionMeta {
    SessionMeta {
        arena_mark_bearing_deg: 12.5,
        arena_mark_bearing_measured_deg: 11.0,
        arena_mark_reference: "magnetic".into(),
        declination_deg: Some(1.5),
        protocol: serde_json::json!({"name": "archive test"}),
        rig: serde_json::json!({"sensor": "simulated"}),
        seed: Some(3),
        ..session_meta(id, epochs())
    }
}

/// Sample k at 100 Hz: three 10 s epochs, a 1 s settle window after each turn, an animal that
/// holds a world heading near 200° with some wobble.
fn row(k: u64) -> SampleRow {
    let t_s = k as f64 * 0.01 + 0.003;
    let epoch = ((t_s / 10.0) as usize + 1).min(3);
    let bearing = 12.5 + 90.0 * (epoch as f64 - 1.0);
    let world = (200.0 + 25.0 * ((k as f64) * 0.013).sin() + (k % 11) as f64 * 0.0917) % 360.0;
    let start: DateTime<Utc> = "2026-06-14T09:30:00Z".parse().unwrap();
    SampleRow {
        t_utc: start + chrono::Duration::microseconds((t_s * 1e6).round() as i64),
        t_s,
        epoch,
        arena_heading_deg: (world - bearing).rem_euclid(360.0),
        arena_bearing_deg: bearing % 360.0,
        world_heading_deg: world,
        sun_azimuth_deg: 120.0 + t_s * 0.004,
        sun_elevation_deg: 41.25,
        flying: k % 400 < 390,
        scored: k % 400 < 390 && (t_s % 10.0) > 1.0,
        sun_relative_heading_deg: (world - 120.0 - t_s * 0.004).rem_euclid(360.0),
        zenith_evector_deg: (120.0 + t_s * 0.004 + 90.0).rem_euclid(180.0),
        raw: world,
        sun_in_view: true,
        evector_shown_deg: Some(30.0),
    }
}

fn event(t_s: f64, kind: &str, detail: &str) -> EventRow {
    let start: DateTime<Utc> = "2026-06-14T09:30:00Z".parse().unwrap();
    EventRow {
        t_utc: start + chrono::Duration::microseconds((t_s * 1e6).round() as i64),
        t_s,
        kind: kind.into(),
        detail: detail.into(),
    }
}

/// Writes `n` samples; returns the writer (still open) and the live builder.
fn write_session(sessions: &Path, id: &str, n: u64) -> (SessionWriter, SummaryBuilder) {
    let m = meta(id);
    let mut w = SessionWriter::create(sessions, &m).unwrap();
    let mut b = SummaryBuilder::new(&m.epochs);
    w.append_event(&event(0.0, "epoch_start", "1")).unwrap();
    for k in 0..n {
        let r = row(k);
        w.append_sample(&r).unwrap();
        b.push(&r);
        if k == 500 {
            w.append_event(&event(r.t_s, "note", "gust, \"strong\"\nfrom the west"))
                .unwrap();
        }
    }
    (w, b)
}

fn finish(w: SessionWriter, b: &SummaryBuilder, id: &str) -> PathBuf {
    let mut m = meta(id);
    m.status = SessionStatus::Complete;
    m.ended_utc = Some("2026-06-14T09:30:30Z".parse().unwrap());
    m.end_reason = Some("protocol done".into());
    let mut w = w;
    w.append_event(&event(30.0, "session_end", "complete"))
        .unwrap();
    w.finish(&m, &b.summary()).unwrap()
}

fn count_rows(dir: &Path) -> u64 {
    for_each_sample(&dir.join(SAMPLES_FILE), |_| {})
        .unwrap()
        .rows
}

#[test]
fn written_session_reads_back_and_checks_clean() {
    let tmp = tempfile::tempdir().unwrap();
    let (w, b) = write_session(tmp.path(), "s_ok", 3000);
    let dir = finish(w, &b, "s_ok");
    let report = check_session(&dir);
    assert!(report.ok(), "{:?}", report.problems);
    assert_eq!(report.samples, 3000);
    assert_eq!(report.events, 3);
    let mut k = 0u64;
    for_each_sample(&dir.join(SAMPLES_FILE), |s| {
        let want = row(k);
        assert_eq!(s.line, k + 2);
        assert_eq!(s.epoch, want.epoch);
        assert_eq!(s.scored, want.scored);
        assert!((s.t_s - want.t_s).abs() <= 5e-5);
        let d = (s.world_heading_deg - want.world_heading_deg + 540.0).rem_euclid(360.0) - 180.0;
        assert!(d.abs() <= 5e-4, "{k}: {d}");
        k += 1;
    })
    .unwrap();
    // The stored summary is what the builder said live, and what the samples give.
    let stored = Summary::load(&dir).unwrap();
    let live = b.summary();
    assert!(compare_summaries(&stored, &live).is_empty());
    assert_eq!(stored.epochs.len(), 3);
    assert_eq!(stored.turns.len(), 2);
    assert_eq!(stored.turns[0].turn_deg, 90.0);
    assert_eq!(stored.epochs[1].condition, "diffuser");
    assert_eq!(stored.epochs[1].arena_bearing_deg, 102.5);
    let (ev, _) = read_events(&dir.join("events.csv")).unwrap();
    assert_eq!(ev[1].detail, "gust, \"strong\"\nfrom the west");
}

#[test]
fn summary_mismatch_is_reported() {
    let tmp = tempfile::tempdir().unwrap();
    let (w, b) = write_session(tmp.path(), "s_bad", 1500);
    let dir = finish(w, &b, "s_bad");
    let mut s = Summary::load(&dir).unwrap();
    s.epochs[0].r += 0.01;
    std::fs::write(dir.join("summary.json"), serde_json::to_vec(&s).unwrap()).unwrap();
    let report = check_session(&dir);
    assert!(
        report.problems.iter().any(|p| p.contains("epochs[1].r ")),
        "{:?}",
        report.problems
    );
}

#[test]
fn torn_last_line_is_repaired_without_losing_a_complete_row() {
    let tmp = tempfile::tempdir().unwrap();
    let (mut w, b) = write_session(tmp.path(), "s_torn", 2222);
    w.sync_now().unwrap();
    let dir = w.dir().to_path_buf();
    // The writer dies without finishing: nothing more is written by it.
    std::mem::forget(w);
    make_lock_stale(&dir);
    let torn = b"2026-06-14T09:30:22.223Z,22.2230,3,1";
    {
        use std::io::Write;
        let mut f = std::fs::OpenOptions::new()
            .append(true)
            .open(dir.join(SAMPLES_FILE))
            .unwrap();
        f.write_all(torn).unwrap();
    }
    let before = check_session(&dir);
    assert!(before.interrupted);
    assert!(
        before.problems.iter().any(|p| p.contains("torn last line")),
        "{:?}",
        before.problems
    );
    assert_eq!(before.samples, 2222);

    let out = repair_session(&dir).unwrap();
    assert!(!out.actions.is_empty());
    let after = check_session(&dir);
    assert!(after.ok(), "{:?}", after.problems);
    assert_eq!(after.status, Some(SessionStatus::Recovered));
    assert_eq!(count_rows(&dir), 2222);
    assert_eq!(std::fs::read(dir.join("samples.csv.torn")).unwrap(), torn);
    assert!(!dir.join(LOCK_FILE).exists());
    let m = SessionMeta::load(&dir).unwrap();
    assert_eq!(m.ended_utc, Some(row(2221).t_utc.with_nanosecond_millis()));
    let (ev, _) = read_events(&dir.join("events.csv")).unwrap();
    let last = ev.last().unwrap();
    assert_eq!(
        (last.kind.as_str(), last.detail.as_str()),
        ("session_end", "recovered")
    );
    // The recovered summary is the one the live builder had.
    assert!(compare_summaries(&Summary::load(&dir).unwrap(), &b.summary()).is_empty());
    // A second repair finds nothing to do and changes nothing.
    let again = repair_session(&dir).unwrap();
    assert!(again.actions.is_empty(), "{:?}", again.actions);
}

trait Millis {
    fn with_nanosecond_millis(self) -> Self;
}
impl Millis for DateTime<Utc> {
    /// Truncated to milliseconds, as written.
    fn with_nanosecond_millis(self) -> Self {
        use chrono::Timelike;
        let ns = self.nanosecond() / 1_000_000 * 1_000_000;
        self.with_nanosecond(ns).unwrap()
    }
}

#[test]
fn repair_refuses_while_the_writer_lives() {
    let tmp = tempfile::tempdir().unwrap();
    let (mut w, _) = write_session(tmp.path(), "s_live", 500);
    w.sync_now().unwrap();
    let dir = w.dir().to_path_buf();
    let report = check_session(&dir);
    assert!(
        report.live && !report.interrupted && report.ok(),
        "{report:?}"
    );
    let e = repair_session(&dir).unwrap_err().to_string();
    assert!(e.contains("locked by process"), "{e}");
    assert_eq!(
        SessionMeta::load(&dir).unwrap().status,
        SessionStatus::Running
    );
    drop(w);
}

#[test]
fn second_writer_on_one_folder_fails() {
    let tmp = tempfile::tempdir().unwrap();
    let (w, _) = write_session(tmp.path(), "s_two", 10);
    let e = SessionWriter::create(tmp.path(), &meta("s_two"))
        .unwrap_err()
        .to_string();
    assert!(e.contains("already exists"), "{e}");
    drop(w);
}

#[test]
fn bad_animal_ids_are_refused() {
    let date = chrono::NaiveDate::from_ymd_opt(2026, 6, 14).unwrap();
    let tmp = tempfile::tempdir().unwrap();
    for bad in ["../x", "a/b", ".hidden", ""] {
        let e = skybearing::archive::new_session_id(tmp.path(), date, "Larkfield Meadow", bad)
            .unwrap_err()
            .to_string();
        assert!(e.contains(&format!("{bad:?}")), "{e}");
    }
    assert_eq!(std::fs::read_dir(tmp.path()).unwrap().count(), 0);
}

/// Helper run in a child process by `killed_writer_is_recovered`: writes until killed.
#[test]
#[ignore = "helper: run by killed_writer_is_recovered in a child process"]
fn helper_writer_until_killed() {
    let Ok(sessions) = std::env::var("SKYBEARING_TEST_SESSIONS") else {
        return;
    };
    let sessions = PathBuf::from(sessions);
    let m = meta("s_killed");
    let mut w = SessionWriter::create(&sessions, &m).unwrap();
    let mut k = 0u64;
    let mut synced = false;
    loop {
        // Slow enough that the data spans several syncs before the kill.
        for _ in 0..100 {
            w.append_sample(&row(k)).unwrap();
            k += 1;
        }
        if w.sync_if_due().unwrap().is_some() && !synced {
            synced = true;
            std::fs::write(sessions.join("synced"), k.to_string()).unwrap();
        }
        std::thread::sleep(std::time::Duration::from_millis(5));
    }
}

#[test]
fn killed_writer_is_recovered() {
    let tmp = tempfile::tempdir().unwrap();
    let exe = std::env::current_exe().unwrap();
    let mut child = std::process::Command::new(exe)
        .args([
            "--ignored",
            "--exact",
            "helper_writer_until_killed",
            "--nocapture",
        ])
        .env("SKYBEARING_TEST_SESSIONS", tmp.path())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(60);
    while !tmp.path().join("synced").exists() {
        assert!(std::time::Instant::now() < deadline, "child never synced");
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    std::thread::sleep(std::time::Duration::from_millis(300));
    child.kill().unwrap(); // SIGKILL
    child.wait().unwrap();
    let synced: u64 = std::fs::read_to_string(tmp.path().join("synced"))
        .unwrap()
        .parse()
        .unwrap();
    let dir = tmp.path().join("s_killed");
    let before = check_session(&dir);
    assert!(before.interrupted, "{before:?}");
    assert!(before.samples >= synced);
    let out = repair_session(&dir).unwrap();
    let after = check_session(&dir);
    assert!(after.ok(), "{:?} after {:?}", after.problems, out.actions);
    // Every complete row that was on the disk is still there.
    assert_eq!(after.samples, before.samples);
    let m = SessionMeta::load(&dir).unwrap();
    assert_eq!(m.status, SessionStatus::Recovered);
    let s = Summary::load(&dir).unwrap();
    assert_eq!(s.epochs.len(), 3);
    assert!(s.epochs[0].n > 0);
}

#[test]
fn frame_violation_is_reported() {
    let tmp = tempfile::tempdir().unwrap();
    let (w, b) = write_session(tmp.path(), "s_frame", 300);
    let dir = finish(w, &b, "s_frame");
    let p = dir.join(SAMPLES_FILE);
    let text = std::fs::read_to_string(&p).unwrap();
    let mut lines: Vec<String> = text.lines().map(String::from).collect();
    // Line 6: shift the world heading by 1° (and keep everything else).
    let mut f: Vec<String> = lines[5].split(',').map(String::from).collect();
    let w: f64 = f[5].parse().unwrap();
    f[5] = format!("{:.3}", (w + 1.0) % 360.0);
    lines[5] = f.join(",");
    std::fs::write(&p, lines.join("\n") + "\n").unwrap();
    let report = check_session(&dir);
    assert!(
        report.problems.iter().any(|p| p.starts_with(
            "samples.csv:6: world_heading_deg differs from arena_heading_deg + arena_bearing_deg (1 row"
        )),
        "{:?}",
        report.problems
    );
}

#[test]
fn an_empty_fresh_lock_is_a_writer_starting_up() {
    let tmp = tempfile::tempdir().unwrap();
    let (mut w, _) = write_session(tmp.path(), "s_young", 50);
    w.sync_now().unwrap();
    let dir = w.dir().to_path_buf();
    std::mem::forget(w);
    std::fs::write(dir.join(LOCK_FILE), "").unwrap();
    let report = check_session(&dir);
    assert!(report.live && !report.interrupted, "{report:?}");
    assert!(repair_session(&dir).is_err());
    assert!(dir.join(LOCK_FILE).exists());
}

/// Issue 14: two runs started together choose the same id; the second takes the next
/// counter instead of failing with "folder already exists".
#[test]
fn runs_started_together_take_the_next_counter() {
    let tmp = tempfile::tempdir().unwrap();
    let sessions = tmp.path().to_path_buf();
    let date = chrono::NaiveDate::from_ymd_opt(2026, 6, 14).unwrap();
    let id =
        skybearing::archive::new_session_id(&sessions, date, "Larkfield Meadow (demo)", "lm-07")
            .unwrap();
    // Both chose the id before either created its folder.
    let ids: Vec<String> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..6)
            .map(|_| {
                let (sessions, id) = (&sessions, id.clone());
                s.spawn(move || {
                    let mut m = meta(&id);
                    let w = SessionWriter::create_next(sessions, &mut m).expect("create");
                    assert_eq!(w.dir(), sessions.join(&m.id));
                    std::mem::forget(w);
                    m.id
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    let mut sorted = ids.clone();
    sorted.sort();
    let want: Vec<String> = (1..=6)
        .map(|k| format!("2026-06-14_larkfield-meadow-demo_lm-07_{k:03}"))
        .collect();
    assert_eq!(sorted, want);
    for id in &ids {
        let m = SessionMeta::load(&sessions.join(id)).unwrap();
        assert_eq!(&m.id, id, "session.json names its own folder");
    }
    // Plain `create` still refuses a taken folder.
    assert!(matches!(
        SessionWriter::create(&sessions, &meta(&id)),
        Err(skybearing::archive::ArchiveError::Exists { .. })
    ));
}
