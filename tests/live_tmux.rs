//! End-to-end test of the live screen: `skybearing demo --speed 30` in tmux. Reads the pane,
//! resizes it, sends `q` (then another key: nothing must happen), then `q` `y`, and checks the
//! session folder. Without tmux on the PATH the tests say on stderr that they skipped (the
//! pseudo-terminal tests in `tui_live.rs` still drive the live screen); `.ci/run` installs
//! tmux and sets `SKYBEARING_REQUIRE_TOOLS=1`, which makes a missing tmux a failure.

mod support;
use support::BIN;
use support::tmux::{Tmux, no_tmux, wait_file};

use std::time::{Duration, Instant};

#[test]
fn live_demo_in_tmux_ends_with_q_then_y() {
    if no_tmux("live_demo_in_tmux_ends_with_q_then_y") {
        return;
    }
    let tmp = tempfile::tempdir().expect("tmp");
    let sessions = tmp.path().join("sessions");
    let done = tmp.path().join("exit.txt");
    let script = format!(
        "'{bin}' demo --speed 30 --seed 4 --start 2026-06-14T07:30:00Z --sessions '{s}' 2> '{o}'; echo $? > '{d}'; sleep 30",
        bin = BIN,
        s = sessions.display(),
        o = tmp.path().join("err.txt").display(),
        d = done.display()
    );
    let tmux = Tmux::start("skybearing-test", &script);

    // 80×24: the session line shows the animal; the screen says how to end.
    let screen = tmux.wait_for("lm-07", 20);
    assert!(
        screen.contains("Larkfield") || screen.contains("lm-07"),
        "{screen}"
    );
    // Bigger window: the screen uses the room.
    tmux.cmd(&["resize-window", "-t", "live", "-x", "160", "-y", "48"]);
    std::thread::sleep(Duration::from_millis(800));
    let big = tmux.capture();
    assert!(
        big.lines().count() >= 40,
        "after resize the pane has {} lines",
        big.lines().count()
    );
    assert!(
        big.lines().any(|l| l.trim_end().len() > 100),
        "the wide screen uses the width:\n{big}"
    );

    // q then anything but y: the session goes on.
    tmux.keys("q");
    tmux.wait_for("END SESSION?", 5);
    tmux.keys("n");
    std::thread::sleep(Duration::from_millis(1000));
    assert!(!done.exists(), "q then n must not end the session");

    // q then y ends it; the archive is closed.
    tmux.keys("q");
    std::thread::sleep(Duration::from_millis(500));
    tmux.keys("y");
    // The end screen with the summary stays until a key.
    tmux.wait_for("SESSION ENDED", 30);
    assert!(!done.exists(), "the end screen closed by itself");
    tmux.keys("x");
    let code = wait_file(&done, 30);
    assert_eq!(
        code.trim(),
        "0",
        "exit status; stderr: {}",
        std::fs::read_to_string(tmp.path().join("err.txt")).unwrap_or_default()
    );
    // The terminal is restored and the folder's path is printed last.
    let after = tmux.capture();
    let dirs: Vec<_> = std::fs::read_dir(&sessions)
        .expect("sessions")
        .map(|e| e.expect("entry").path())
        .collect();
    assert_eq!(dirs.len(), 1);
    let dir = dirs[0].as_path();
    let name = dir.file_name().and_then(|n| n.to_str()).expect("name");
    assert!(
        after.contains(name),
        "the session path is printed after the screen closes:\n{after}"
    );
    let meta: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.join("session.json")).expect("session.json"),
    )
    .expect("json");
    assert_eq!(meta["status"], "aborted", "ended early by the operator");
    assert!(dir.join("summary.json").is_file());
    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    assert!(samples.lines().count() > 100);
}

#[test]
fn closing_the_terminal_ends_the_session_properly() {
    if no_tmux("closing_the_terminal_ends_the_session_properly") {
        return;
    }
    let tmp = tempfile::tempdir().expect("tmp");
    let sessions = tmp.path().join("sessions");
    let script = format!(
        "'{bin}' demo --speed 30 --seed 6 --start 2026-06-14T07:30:00Z --sessions '{s}'",
        bin = BIN,
        s = sessions.display()
    );
    let tmux = Tmux::start("skybearing-hup", &script);
    tmux.wait_for("lm-07", 20);
    // The window goes away (the terminal hangs up) in the middle of the session.
    tmux.cmd(&["kill-server"]);
    let until = Instant::now() + Duration::from_secs(20);
    let meta_path = loop {
        let dirs: Vec<_> = std::fs::read_dir(&sessions)
            .expect("sessions")
            .map(|e| e.expect("e").path())
            .collect();
        assert_eq!(dirs.len(), 1);
        if dirs[0].join("summary.json").is_file() {
            break dirs[0].join("session.json");
        }
        assert!(
            Instant::now() < until,
            "the session was not closed after the terminal hung up"
        );
        std::thread::sleep(Duration::from_millis(200));
    };
    let meta: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(meta_path).expect("json")).expect("json");
    assert_eq!(meta["status"], "aborted");
}
