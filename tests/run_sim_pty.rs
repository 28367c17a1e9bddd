//! `skybearing sim --write-rig` serves a simulated rig on pseudo-terminals; `skybearing run
//! --headless` then completes the smoke protocol through the real serial code path, with
//! malformed lines and an unplugged sensor recorded as events (issue "Done when").

mod support;
use support::sim::{headless_smoke_run, start_sim};
use support::{bin, finished_session, read_json};

#[test]
fn run_completes_against_the_pty_simulator_with_faults() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(
        tmp.path(),
        &[
            "--seed",
            "3",
            "--garbage",
            "0.05",
            "--unplug-at",
            "7",
            "--unplug-for",
            "2",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let out = headless_smoke_run("lm-11", &rig, &sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "complete");
    let events = std::fs::read_to_string(dir.join("events.csv")).expect("events");
    for kind in [
        ",malformed_lines,",
        ",sensor_lost,",
        ",sensor_back,",
        ",turn_done,",
        ",session_end,",
    ] {
        assert!(events.contains(kind), "no {kind} event:\n{events}");
    }
    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    // About 15 s of epochs plus two turns at 100 Hz, minus the 2 s unplugged gap.
    let n = samples.lines().count() - 1;
    assert!(n > 1000, "{n} samples");
    let check = bin().arg("check").arg(&dir).output().expect("check");
    assert!(
        check.status.success(),
        "{}",
        String::from_utf8_lossy(&check.stdout)
    );
}
