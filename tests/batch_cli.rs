//! `skybearing batch` as a user runs it, on synthetic session folders.

mod support;
use support::bin;
use support::sessions::{Mode, col, read_csv, write_session};

fn batch(args: &[&str]) -> std::process::Output {
    bin().arg("batch").args(args).output().unwrap()
}

#[test]
fn tables_have_the_contract_columns_and_bad_folders_are_skipped_by_name() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("sessions");
    write_session(&root, "a1", "lm-01", "complete", Mode::Sky, 40.0, 3, 200);
    write_session(&root, "a2", "lm-02", "complete", Mode::Sky, 60.0, 3, 200);
    write_session(&root, "a3", "lm-03", "complete", Mode::Arena, 300.0, 3, 200);
    write_session(
        &root,
        "a4-rec",
        "lm-04",
        "recovered",
        Mode::Sky,
        10.0,
        3,
        200,
    );
    // Bad: no samples.csv.
    let d = write_session(
        &root,
        "bad-missing",
        "lm-05",
        "complete",
        Mode::Sky,
        0.0,
        2,
        50,
    );
    std::fs::remove_file(d.join("samples.csv")).unwrap();
    // Bad: a torn line in the middle.
    let d = write_session(
        &root,
        "bad-torn",
        "lm-06",
        "complete",
        Mode::Sky,
        0.0,
        2,
        50,
    );
    let text = std::fs::read_to_string(d.join("samples.csv")).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    lines[30].truncate(25);
    std::fs::write(d.join("samples.csv"), lines.join("\n") + "\n").unwrap();
    // Bad: written by a newer program.
    let d = write_session(
        &root,
        "bad-newer",
        "lm-07",
        "complete",
        Mode::Sky,
        0.0,
        2,
        50,
    );
    let mut meta: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("session.json")).unwrap()).unwrap();
    meta["format_version"] = 99.into();
    std::fs::write(d.join("session.json"), meta.to_string()).unwrap();

    let out = tmp.path().join("out");
    let o = batch(&[root.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{stderr}");
    for name in ["bad-missing", "bad-torn", "bad-newer"] {
        assert!(
            stderr.contains(name),
            "{name} not named on stderr: {stderr}"
        );
    }
    assert!(
        stderr.contains("samples.csv:31"),
        "torn line number: {stderr}"
    );
    assert!(stderr.contains("format_version 99"), "{stderr}");
    // No progress bar when stderr is not a terminal.
    assert!(!stderr.contains("sessions 0"), "{stderr}");

    let (h, rows) = read_csv(&out.join("sessions.csv"));
    for c in ["session_id", "animal", "started_utc", "r_world", "r_arena"] {
        assert!(h.iter().any(|x| x == c), "sessions.csv lacks {c}");
    }
    let ids: Vec<&str> = rows.iter().map(|r| col(&h, r, "session_id")).collect();
    assert_eq!(ids, ["a1", "a2", "a3"], "recovered left out by default");
    // A sky animal holds its world heading, an arena animal its arena heading.
    let rw = |i: usize| col(&h, &rows[i], "r_world").parse::<f64>().unwrap();
    let ra = |i: usize| col(&h, &rows[i], "r_arena").parse::<f64>().unwrap();
    assert!(rw(0) > 0.9 && ra(0) < 0.5, "{} {}", rw(0), ra(0));
    assert!(ra(2) > 0.9 && rw(2) < 0.5);

    let (h, rows) = read_csv(&out.join("epochs.csv"));
    for c in [
        "session_id",
        "animal",
        "epoch",
        "condition",
        "n",
        "mean_world_deg",
        "r",
    ] {
        assert!(h.iter().any(|x| x == c), "epochs.csv lacks {c}");
    }
    assert_eq!(rows.len(), 9);
    assert_eq!(col(&h, &rows[1], "condition"), "diffuser");
    assert_eq!(col(&h, &rows[0], "n"), "180");

    let (h, rows) = read_csv(&out.join("turns.csv"));
    for c in ["session_id", "turn", "turn_deg", "world_shift_deg"] {
        assert!(h.iter().any(|x| x == c), "turns.csv lacks {c}");
    }
    assert_eq!(rows.len(), 6);
    assert_eq!(col(&h, &rows[0], "turn_deg"), "90");
    let shift: f64 = col(&h, &rows[0], "world_shift_deg").parse().unwrap();
    assert!(shift.abs() < 1e-6, "sky animal compensates: {shift}");
    let shift: f64 = col(&h, &rows[5], "world_shift_deg").parse().unwrap();
    assert!(
        (shift - 90.0).abs() < 1e-6,
        "arena animal follows the turn: {shift}"
    );

    let (h, rows) = read_csv(&out.join("population.csv"));
    for c in [
        "frame",
        "condition",
        "animals",
        "rayleigh_p",
        "moore_r_star",
        "hotelling_f",
    ] {
        assert!(h.iter().any(|x| x == c), "population.csv lacks {c}");
    }
    assert_eq!(rows.len(), 4, "two conditions in two frames");
    assert_eq!(col(&h, &rows[0], "frame"), "world");
    assert_eq!(col(&h, &rows[0], "condition"), "diffuser");
    assert_eq!(col(&h, &rows[0], "animals"), "3");
    assert_eq!(col(&h, &rows[2], "frame"), "sun");
    assert_eq!(col(&h, &rows[2], "animals"), "3");

    let (h, rows) = read_csv(&out.join("skipped.csv"));
    let skipped: Vec<(&str, &str)> = rows
        .iter()
        .map(|r| (col(&h, r, "session_id"), col(&h, r, "kind")))
        .collect();
    assert!(skipped.contains(&("bad-missing", "error")), "{skipped:?}");
    assert!(skipped.contains(&("bad-torn", "error")));
    assert!(skipped.contains(&("bad-newer", "error")));
    assert!(skipped.contains(&("a4-rec", "filtered")));
    for f in ["comparisons.csv", "paired.csv", "animals.csv"] {
        assert!(out.join(f).is_file(), "{f}");
    }
}

#[test]
fn filters_and_include_incomplete() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path();
    write_session(root, "b1", "lm-01", "complete", Mode::Sky, 40.0, 2, 100);
    write_session(root, "b2", "lm-01", "recovered", Mode::Sky, 50.0, 2, 100);
    write_session(root, "b3", "lm-02", "complete", Mode::Arena, 50.0, 2, 100);
    let out = root.join("out");
    let o = batch(&[
        root.join("b1").to_str().unwrap(),
        root.join("b2").to_str().unwrap(),
        root.join("b3").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--include-incomplete",
        "--condition",
        "open sky",
        "--min-r",
        "0.8",
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let ids: Vec<&str> = rows.iter().map(|r| col(&h, r, "session_id")).collect();
    assert_eq!(
        ids,
        ["b1", "b2"],
        "b3 (arena animal, low r_world) filtered by --min-r"
    );
    let (h, rows) = read_csv(&out.join("epochs.csv"));
    assert!(rows.iter().all(|r| col(&h, r, "condition") == "open sky"));
    assert_eq!(rows.len(), 2);
    // --from after every session: nothing kept, but the folders were read: exit 0.
    let o = batch(&[
        root.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--from",
        "2030-01-01",
    ]);
    assert_eq!(o.status.code(), Some(0));
    let (_, rows) = read_csv(&out.join("sessions.csv"));
    assert!(rows.is_empty());
}

#[test]
fn nothing_readable_is_an_error_and_bad_flags_are_named() {
    let tmp = tempfile::tempdir().unwrap();
    let o = batch(&[
        tmp.path().join("nope").to_str().unwrap(),
        "--out",
        tmp.path().join("out").to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("nope"), "{stderr}");
    assert!(stderr.contains("skybearing: error:"), "{stderr}");
    let o = batch(&[
        tmp.path().to_str().unwrap(),
        "--out",
        "x",
        "--from",
        "yesterday",
    ]);
    assert_ne!(o.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&o.stderr).contains("yesterday"));
}

/// An interrupted session (status running, last line torn by the interruption) is left out by
/// default and read, without its torn line, with --include-incomplete; a folder of folders of
/// sessions works.
#[test]
fn interrupted_session_with_a_torn_tail() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("field-days");
    let day1 = root.join("day1");
    write_session(&day1, "c1", "lm-01", "complete", Mode::Sky, 40.0, 2, 100);
    let d = write_session(&day1, "c2", "lm-02", "running", Mode::Sky, 80.0, 2, 100);
    let text = std::fs::read_to_string(d.join("samples.csv")).unwrap();
    let rows_before = text.lines().count() - 1;
    std::fs::write(d.join("samples.csv"), &text[..text.len() - 20]).unwrap();
    write_session(
        &root.join("day2"),
        "c3",
        "lm-03",
        "complete",
        Mode::Arena,
        10.0,
        2,
        100,
    );

    let out = tmp.path().join("out");
    let o = batch(&[root.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let ids: Vec<&str> = rows.iter().map(|r| col(&h, r, "session_id")).collect();
    assert_eq!(ids, ["c1", "c3"]);

    let o = batch(&[
        root.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--include-incomplete",
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let c2 = rows
        .iter()
        .find(|r| col(&h, r, "session_id") == "c2")
        .unwrap();
    assert_eq!(col(&h, c2, "status"), "running");
    assert_eq!(col(&h, c2, "torn_tail"), "1");
    assert_eq!(col(&h, c2, "rows"), (rows_before - 1).to_string());
}

/// The fast path of batch reads what the archive's writer writes (no fall-back to the general
/// reader), and finds the same rows, both for the writer's own files and the demo archive.
#[test]
fn fast_path_reads_archive_files_without_falling_back() {
    use skybearing::analysis::scan::{ScanOutcome, scan_samples};
    let tmp = tempfile::tempdir().unwrap();
    let d = write_session(
        tmp.path(),
        "f1",
        "lm-01",
        "complete",
        Mode::Sky,
        40.0,
        3,
        500,
    );
    let demo = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/sessions/2026-06-21_larkfield-meadow-demo_lm-01_001");
    for dir in [d, demo] {
        let path = dir.join("samples.csv");
        let mut n = 0u64;
        let out = scan_samples(&path, |_| n += 1);
        let general = skybearing::archive::read::for_each_sample(&path, |_| {}).unwrap();
        assert_eq!(out, ScanOutcome::Done(general.rows), "{}", path.display());
        assert_eq!(n, general.rows);
    }
}

/// Issue 14: `report` and `batch` reject the rows that `check` rejects (a duplicated row, rows
/// out of order, a line that is not UTF-8), through the archive's one rule on rows.
#[test]
fn report_and_batch_reject_the_rows_check_rejects() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("sessions");
    write_session(&root, "good", "lm-01", "complete", Mode::Sky, 40.0, 2, 100);
    type Edit = fn(&mut Vec<Vec<u8>>);
    let edits: [(&str, Edit); 3] = [
        ("dup", |l| {
            let row = l[40].clone();
            l.insert(41, row);
        }),
        ("swap", |l| l.swap(40, 41)),
        // The last byte of t_utc ('Z'): a field that batch does not otherwise read.
        ("utf8", |l| l[41][23] = 0xff),
    ];
    for (name, edit) in edits {
        let d = write_session(&root, name, "lm-02", "complete", Mode::Sky, 40.0, 2, 100);
        let p = d.join("samples.csv");
        let mut lines: Vec<Vec<u8>> = std::fs::read(&p)
            .unwrap()
            .split(|&b| b == b'\n')
            .filter(|l| !l.is_empty())
            .map(<[u8]>::to_vec)
            .collect();
        edit(&mut lines);
        let mut bytes = lines.join(&b'\n');
        bytes.push(b'\n');
        std::fs::write(&p, bytes).unwrap();

        let check = bin().args(["check", d.to_str().unwrap()]).output().unwrap();
        let check_out = String::from_utf8_lossy(&check.stdout);
        assert_eq!(check.status.code(), Some(1), "{name}: {check_out}");
        assert!(check_out.contains("samples.csv:42"), "{name}: {check_out}");

        let report = bin()
            .args(["report", d.to_str().unwrap(), "--out"])
            .arg(tmp.path().join(format!("report-{name}")))
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&report.stderr);
        assert_ne!(report.status.code(), Some(0), "{name}: report accepted it");
        assert!(err.contains("samples.csv:42"), "{name}: {err}");
    }
    let out = tmp.path().join("out");
    let o = batch(&[root.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{stderr}");
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let ids: Vec<&str> = rows.iter().map(|r| col(&h, r, "session_id")).collect();
    assert_eq!(ids, ["good"], "{stderr}");
    for name in ["dup", "swap", "utf8"] {
        assert!(
            stderr.contains(name) && stderr.contains("samples.csv:42"),
            "{name}: {stderr}"
        );
    }
}

fn copy_dir(from: &std::path::Path, to: &std::path::Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        std::fs::copy(e.path(), to.join(e.file_name())).unwrap();
    }
}

#[test]
fn a_session_found_twice_counts_once_and_a_reused_id_with_other_samples_is_an_error() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("season");
    let d1 = write_session(&root, "d1", "lm-01", "complete", Mode::Sky, 40.0, 2, 100);
    write_session(&root, "d2", "lm-02", "complete", Mode::Sky, 60.0, 2, 100);
    // The same folder copied to a backup disk, which is given too.
    let backup = tmp.path().join("backup");
    copy_dir(&d1, &backup.join("d1"));
    let out = tmp.path().join("out");
    let o = batch(&[
        root.to_str().unwrap(),
        backup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{err}");
    assert!(
        err.contains("warning:") && err.contains("same session as"),
        "a warning on stderr: {err}"
    );
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let ids: Vec<&str> = rows.iter().map(|r| col(&h, r, "session_id")).collect();
    assert_eq!(ids, ["d1", "d2"], "d1 counted once");
    assert!(col(&h, &rows[0], "folder").contains("backup"));
    let (h, rows) = read_csv(&out.join("population.csv"));
    let world_open = rows
        .iter()
        .find(|r| col(&h, r, "frame") == "world" && col(&h, r, "condition") == "open sky")
        .unwrap();
    assert_eq!(col(&h, world_open, "animals"), "2");
    assert_eq!(
        col(&h, world_open, "sessions"),
        "2",
        "not 3: the copy is left out"
    );
    let (h, rows) = read_csv(&out.join("skipped.csv"));
    let dup: Vec<_> = rows
        .iter()
        .filter(|r| col(&h, r, "kind") == "duplicate")
        .collect();
    assert_eq!(dup.len(), 1);
    assert_eq!(col(&h, dup[0], "session_id"), "d1");
    // The first in path order is kept (backup/ before season/), the other listed.
    assert!(col(&h, dup[0], "folder").contains("season"));
    assert!(col(&h, dup[0], "reason").contains("same samples"));

    // Another recording that reuses the id d1: batch refuses, naming both folders.
    let other = tmp.path().join("other");
    write_session(&other, "d1", "lm-03", "complete", Mode::Sky, 200.0, 2, 100);
    let o = batch(&[
        root.to_str().unwrap(),
        other.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_ne!(o.status.code(), Some(0), "{err}");
    assert!(
        err.contains("'d1'") && err.contains("different samples"),
        "{err}"
    );
    assert!(
        err.contains(&*root.join("d1").to_string_lossy())
            && err.contains(&*other.join("d1").to_string_lossy()),
        "names both folders: {err}"
    );
}

/// A two-epoch session whose protocol planned a third that the operator skipped before it
/// began, with a note and a flight stop in `events.csv`.
fn session_with_a_skipped_epoch(root: &std::path::Path) -> std::path::PathBuf {
    let d = write_session(root, "k1", "lm-01", "complete", Mode::Sky, 40.0, 2, 100);
    let p = d.join("session.json");
    let mut meta: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap();
    let epochs = meta["epochs"].as_array_mut().unwrap();
    let mut third = epochs[0].clone();
    third["index"] = 3.into();
    third["condition"] = "diffuser".into();
    epochs.push(third);
    std::fs::write(&p, serde_json::to_string_pretty(&meta).unwrap()).unwrap();
    let mut ev = std::fs::read_to_string(d.join("events.csv")).unwrap();
    ev.push_str("2026-06-02T09:00:05.000Z,5.0000,note,\"wind gust, animal stopped\"\n");
    ev.push_str("2026-06-02T09:00:06.000Z,6.0000,flight_stop,\"\"\n");
    ev.push_str("2026-06-02T09:00:20.000Z,20.0000,epoch_skipped,epoch 3\n");
    std::fs::write(d.join("events.csv"), ev).unwrap();
    d
}

#[test]
fn epochs_that_never_ran_have_empty_statistics_and_a_skipped_flag() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("s");
    session_with_a_skipped_epoch(&root);
    let out = tmp.path().join("out");
    let o = batch(&[root.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&out.join("epochs.csv"));
    assert_eq!(
        rows.len(),
        3,
        "the planned epoch that never ran has its row"
    );
    assert_eq!(col(&h, &rows[0], "skipped"), "0");
    assert_eq!(col(&h, &rows[1], "skipped"), "0");
    let never = &rows[2];
    assert_eq!(col(&h, never, "epoch"), "3");
    assert_eq!(col(&h, never, "condition"), "diffuser");
    assert_eq!(col(&h, never, "skipped"), "1");
    for c in [
        "n",
        "mean_world_deg",
        "r",
        "rayleigh_z",
        "rayleigh_p",
        "p_oriented",
        "flying_s",
        "t_start_s",
        "mean_sun_relative_deg",
    ] {
        assert_eq!(
            col(&h, never, c),
            "",
            "{c} of an epoch that never ran: empty, not 0 or 1"
        );
    }
    // The report says the same.
    let rep = tmp.path().join("rep");
    let o = bin()
        .arg("report")
        .arg(root.join("k1"))
        .arg("--out")
        .arg(&rep)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&rep.join("epochs.csv"));
    assert_eq!(col(&h, &rows[2], "skipped"), "1");
    assert_eq!(col(&h, &rows[2], "r"), "");
}

#[test]
fn notes_and_flight_stops_are_exported_and_sessions_carry_the_site() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("s");
    let d = session_with_a_skipped_epoch(&root);
    let out = tmp.path().join("out");
    let o = batch(&[root.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&out.join("notes.csv"));
    assert_eq!(h, ["session_id", "t_utc", "t_s", "kind", "detail"]);
    let kinds: Vec<&str> = rows.iter().map(|r| col(&h, r, "kind")).collect();
    assert_eq!(kinds, ["note", "flight_stop", "epoch_skipped"]);
    assert_eq!(col(&h, &rows[0], "detail"), "wind gust, animal stopped");
    assert_eq!(col(&h, &rows[0], "t_s"), "5");
    assert_eq!(col(&h, &rows[0], "session_id"), "k1");

    let meta: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("session.json")).unwrap()).unwrap();
    let (h, rows) = read_csv(&out.join("sessions.csv"));
    let lat: f64 = col(&h, &rows[0], "site_latitude_deg").parse().unwrap();
    let lon: f64 = col(&h, &rows[0], "site_longitude_deg").parse().unwrap();
    assert_eq!(lat, meta["site"]["latitude_deg"].as_f64().unwrap());
    assert_eq!(lon, 5.2);
    assert_eq!(
        col(&h, &rows[0], "time_zone"),
        meta["time_zone"].as_str().unwrap()
    );

    let rep = tmp.path().join("rep");
    let o = bin()
        .arg("report")
        .arg(&d)
        .arg("--out")
        .arg(&rep)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let (h, rows) = read_csv(&rep.join("notes.csv"));
    assert_eq!(rows.len(), 3);
    assert_eq!(col(&h, &rows[1], "kind"), "flight_stop");
}
