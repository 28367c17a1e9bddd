//! A wall-clock step of an hour during a live session leaves `t_s` continuous: the session is
//! stamped from one UTC anchor plus a monotonic clock. The step is made for real with
//! libfaketime (Debian package `faketime`): the `run` process sees its wall clock jump by +1 h
//! mid-session while the monotonic clock is left alone. Without libfaketime the test says on
//! stderr that it skipped; `.ci/run` installs it and sets `SKYBEARING_REQUIRE_TOOLS=1`, which
//! makes a missing libfaketime a failure. `SKYBEARING_FAKETIME_LIB` names another path.

use std::process::Stdio;
use std::time::Duration;

mod support;
use support::sim::{headless_smoke_run, start_sim};
use support::{finished_session, skip_without};

/// Where Debian's `faketime` package puts the library.
const FAKETIME_LIB: &str = "/usr/lib/x86_64-linux-gnu/faketime/libfaketime.so.1";

#[test]
fn wall_clock_step_leaves_t_s_continuous() {
    let lib = std::env::var("SKYBEARING_FAKETIME_LIB").unwrap_or_else(|_| FAKETIME_LIB.into());
    if skip_without(
        "wall_clock_step_leaves_t_s_continuous",
        &format!("libfaketime ({lib})"),
        std::path::Path::new(&lib).is_file(),
        "apt-get install faketime",
    ) {
        return;
    }
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(tmp.path(), &["--seed", "9"]);
    let stamp = tmp.path().join("faketime.txt");
    std::fs::write(&stamp, "+0\n").expect("write");
    let sessions = tmp.path().join("sessions");
    let child = headless_smoke_run("lm-12", &rig, &sessions)
        .env("LD_PRELOAD", &lib)
        .env("FAKETIME_TIMESTAMP_FILE", &stamp)
        .env("FAKETIME_NO_CACHE", "1")
        .env("FAKETIME_DONT_FAKE_MONOTONIC", "1")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run");
    std::thread::sleep(Duration::from_secs(4));
    std::fs::write(&stamp, "+1h\n").expect("step the wall clock");
    let out = child.wait_with_output().expect("wait");
    let dir = finished_session(&out);
    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    let mut prev: Option<f64> = None;
    let mut offset: Option<f64> = None;
    let mut rows = 0;
    for line in samples.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let t: f64 = f[1].parse().expect("t_s");
        let utc = chrono::DateTime::parse_from_rfc3339(f[0]).expect("t_utc");
        let o = utc.timestamp_millis() as f64 / 1000.0 - t;
        if let Some(p) = prev {
            assert!(t > p && t - p < 0.5, "t_s jumps from {p} to {t}");
        }
        if let Some(o0) = offset {
            assert!(
                (o - o0).abs() < 0.002,
                "t_utc − t_s moved by {} s at t_s {t}",
                o - o0
            );
        }
        prev = Some(t);
        offset = offset.or(Some(o));
        rows += 1;
    }
    assert!(
        rows > 1000 && prev.is_some_and(|p| p > 15.0),
        "{rows} rows up to {prev:?}"
    );
}
