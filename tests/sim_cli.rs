//! `skybearing sim` run as a user would: it writes a rig file, serves it, and the real serial
//! code path reads it; SIGTERM ends it cleanly.

mod support;
use support::bin;

use skybearing::clock::{Clock, RealClock};
use skybearing::rig::{SensorEvent, open_sensor};
use std::io::{BufRead, BufReader};
use std::process::Stdio;
use std::sync::Arc;
use std::time::Duration;

fn start(dir: &std::path::Path, extra: &[&str]) -> (std::process::Child, std::path::PathBuf) {
    let rig = dir.join("sim-rig.toml");
    let mut child = bin()
        .arg("sim")
        .arg("--write-rig")
        .arg(&rig)
        .args([
            "--seed",
            "9",
            "--sun-azimuth-deg",
            "180",
            "--stops-per-hour",
            "0",
        ])
        .args(extra)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // The first stdout line is the rig path, printed once the terminals are served.
    let mut line = String::new();
    BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .unwrap();
    assert_eq!(line.trim(), rig.display().to_string());
    (child, rig)
}

#[test]
fn sim_serves_a_rig_that_the_serial_reader_reads() {
    let dir = tempfile::tempdir().unwrap();
    let (mut child, rig_path) = start(dir.path(), &["--duration-s", "2.5", "--rate-hz", "50"]);
    let rig = skybearing::rig::config::load_rig(&rig_path).unwrap();
    let clock = Arc::new(RealClock::start());
    let mut src = open_sensor(&rig, clock.clone()).unwrap();
    std::thread::sleep(Duration::from_millis(1000));
    let mut ev = Vec::new();
    src.drain(clock.now_s(), &mut ev).unwrap();
    let samples = ev
        .iter()
        .filter(|e| matches!(e, SensorEvent::Sample { .. }))
        .count();
    assert!(
        (25..=60).contains(&samples),
        "{samples} samples in 1 s at 50 Hz"
    );
    let h = src.health();
    assert!((h.rate_hz - 50.0).abs() < 10.0, "{h:?}");
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(0));
    // The links are gone once it stops.
    assert!(!dir.path().join("sim-rig-sensor.tty").exists());
}

#[test]
fn sim_stops_on_sigterm_and_refuses_a_foreign_rig_file() {
    let dir = tempfile::tempdir().unwrap();
    let (mut child, rig_path) = start(dir.path(), &[]);
    assert!(dir.path().join("sim-rig-sensor.tty").exists());
    std::thread::sleep(Duration::from_millis(300));
    // SAFETY: sending a signal to our own child.
    unsafe {
        libc::kill(child.id() as i32, libc::SIGTERM);
    }
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(0));
    assert!(!dir.path().join("sim-rig-sensor.tty").exists());
    // A rig file sim did not write is not overwritten.
    std::fs::write(&rig_path, "# my own rig\n").unwrap();
    let out = bin()
        .arg("sim")
        .arg("--write-rig")
        .arg(&rig_path)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("not written by `skybearing sim`"), "{err}");
    assert_eq!(err.lines().count(), 1);
}

#[test]
fn sim_flags_are_checked() {
    let dir = tempfile::tempdir().unwrap();
    let out = bin()
        .arg("sim")
        .arg("--write-rig")
        .arg(dir.path().join("r.toml"))
        .args(["--garbage", "1.5"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr).trim(),
        "skybearing: error: --garbage: 1.5 is outside [0, 1]"
    );
}

/// A rig file in a folder that does not exist: a one-line error naming the folder, before any
/// terminal is opened.
#[test]
fn sim_names_a_missing_folder() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("no-such-folder");
    let out = bin()
        .arg("sim")
        .arg("--write-rig")
        .arg(missing.join("r.toml"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(
        err.contains(&format!("folder {} does not exist", missing.display())),
        "{err}"
    );
    assert!(!missing.exists());
}
