//! Whole commands for the field-day safety rules (issue 14, points 2, 3 and 5): headless
//! `demo` runs at full speed on the simulated rig, with its fault options.

mod support;

use std::path::Path;
use support::demo::demo_command;
use support::sessions::{col, read_csv};
use support::{bin, finished_session, read_json};

/// A protocol of three 20-second epochs with two turns, and the given extra tables.
fn protocol(dir: &Path, extra: &str) -> String {
    let p = dir.join("p.toml");
    std::fs::write(
        &p,
        format!(
            "name = \"safety\"\nsettle_s = 1\n{extra}\n[[epochs]]\ncount = 3\nduration_s = 20\nturns = [90, -90]\norder = \"fixed\"\n"
        ),
    )
    .expect("write protocol");
    p.display().to_string()
}

/// (t_s, kind, detail) of every event.
fn events(dir: &Path) -> Vec<(f64, String, String)> {
    let (h, rows) = read_csv(&dir.join("events.csv"));
    rows.iter()
        .map(|r| {
            (
                col(&h, r, "t_s").parse().expect("t_s"),
                col(&h, r, "kind").to_string(),
                col(&h, r, "detail").to_string(),
            )
        })
        .collect()
}

#[test]
fn headless_demo_at_night_refuses_without_allow_no_sun_and_warns_in_plans_words() {
    let tmp = tempfile::tempdir().expect("tmp");
    let sessions = tmp.path().join("s");
    let night = "2026-06-14T23:30:00Z";
    let out = bin()
        .args([
            "demo",
            "--headless",
            "--speed",
            "max",
            "--start",
            night,
            "--sessions",
        ])
        .arg(&sessions)
        .output()
        .expect("run");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "{stderr}");
    let last = stderr.lines().last().unwrap_or_default();
    assert!(
        last.contains("--allow-no-sun"),
        "one-line error names the flag: {stderr}"
    );
    // The same words as `plan`.
    let plan = bin()
        .args([
            "plan",
            "--protocol",
            "protocols/demo.toml",
            "--start",
            night,
        ])
        .output()
        .expect("plan");
    let plan_text = String::from_utf8_lossy(&plan.stdout);
    let first = stderr
        .lines()
        .find(|l| l.contains("below the horizon"))
        .expect("a warning");
    let words = first.trim_start_matches("skybearing: warning: ");
    assert!(
        plan_text.contains(words),
        "{words:?} not in plan:\n{plan_text}"
    );
    assert!(!sessions.exists() || std::fs::read_dir(&sessions).expect("dir").next().is_none());

    let protocol = protocol(tmp.path(), "");
    let out = bin()
        .args([
            "demo",
            "--headless",
            "--speed",
            "max",
            "--allow-no-sun",
            "--protocol",
        ])
        .arg(&protocol)
        .args(["--start", night, "--sessions"])
        .arg(&sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    assert!(String::from_utf8_lossy(&out.stderr).contains("below the horizon"));
    assert_eq!(read_json(&dir.join("session.json"))["status"], "complete");
}

#[test]
fn a_lost_sensor_stops_the_epoch_clock_and_a_long_loss_aborts_the_session() {
    let tmp = tempfile::tempdir().expect("tmp");
    let sessions = tmp.path().join("s");
    let p = protocol(tmp.path(), "[sensor_loss]\nabort_after_s = 30\n");
    // Unplugged for 10 s during epoch 1: the epoch is extended by the time lost.
    let out = demo_command(
        &sessions,
        &[
            "--speed",
            "max",
            "--protocol",
            &p,
            "--unplug-at",
            "5",
            "--unplug-for",
            "10",
        ],
    )
    .output()
    .expect("run");
    let dir = finished_session(&out);
    let ev = events(&dir);
    let lost = ev.iter().find(|e| e.1 == "sensor_lost").expect("lost").0;
    let back = ev.iter().find(|e| e.1 == "sensor_back").expect("back").0;
    let commanded = ev.iter().find(|e| e.1 == "turn_commanded").expect("turn").0;
    assert!(back - lost > 5.0, "lost {lost} .. back {back}");
    assert!(
        (commanded - (20.0 + (back - lost))).abs() < 0.5,
        "epoch 1 extended by the {:.1} s lost: turn at {commanded}",
        back - lost
    );
    assert_eq!(read_json(&dir.join("session.json"))["status"], "complete");

    // Unplugged for good in epoch 2: aborted 30 s later; the turn after it is not scored.
    let out = demo_command(
        &sessions,
        &[
            "--speed",
            "max",
            "--protocol",
            &p,
            "--unplug-at",
            "30",
            "--unplug-for",
            "1000",
        ],
    )
    .output()
    .expect("run");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{stdout}");
    let dir = support::session_folder(&stdout);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "aborted");
    assert_eq!(meta["end_reason"], "sensor lost");
    let ev = events(&dir);
    let lost = ev.iter().find(|e| e.1 == "sensor_lost").expect("lost").0;
    let abort = ev.iter().find(|e| e.1 == "abort").expect("abort");
    assert!(
        (abort.0 - lost - 30.0).abs() < 1e-6,
        "{abort:?} lost at {lost}"
    );
    assert_eq!(
        ev.iter().filter(|e| e.1 == "turn_commanded").count(),
        1,
        "no turn while blind"
    );
    let summary = read_json(&dir.join("summary.json"));
    assert!(
        summary["turns"][1]["world_shift_deg"].is_null(),
        "{summary}"
    );
}

#[test]
fn headless_end_prints_the_summary_lines_before_the_folder() {
    let tmp = tempfile::tempdir().expect("tmp");
    let p = protocol(tmp.path(), "");
    let out = demo_command(&tmp.path().join("s"), &["--speed", "max", "--protocol", &p])
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let stdout = String::from_utf8_lossy(&out.stdout);
    let lines: Vec<&str> = stdout.lines().collect();
    let n = lines.len();
    assert_eq!(lines[n - 1], dir.display().to_string());
    let hold = lines
        .iter()
        .position(|l| l.starts_with("hold r world"))
        .expect("hold line");
    let kept = lines
        .iter()
        .position(|l| l.starts_with("turns kept:"))
        .expect("turns line");
    assert!(hold < kept && kept < n - 1, "{stdout}");
    let summary = read_json(&dir.join("summary.json"));
    let r = summary["r_world"].as_f64().expect("r_world");
    assert!(
        lines[hold].contains(&format!("{r:.3}")),
        "{} vs {r}",
        lines[hold]
    );
}
