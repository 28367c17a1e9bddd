//! Rig and protocol files as a new user meets them, and as an attacker feeds them (issue 14,
//! points 8, 11 and 15), run through the binary.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skybearing"))
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

// ---- point 8: the rig template and `run --animal` ---------------------------------------------

#[test]
fn a_fresh_rig_template_is_refused_until_its_placeholders_are_filled() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("rig.toml");
    let out = bin().args(["rig", "init"]).arg(&f).output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let written = std::fs::read_to_string(&f).unwrap();
    assert!(!written.contains("Larkfield"), "{written}");
    assert!(!written.contains("43.2170"), "{written}");
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains(&format!("{}:12: site.name: not filled in", f.display())),
        "{err}"
    );
    // Fill in every value but one: the line and field of the one left are named.
    let almost = skybearing::rig::config::filled_example().replace(
        "mark_reference = \"magnetic\"",
        "mark_reference = \"FILL IN\"",
    );
    std::fs::write(&f, almost).unwrap();
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(":22: arena.mark_reference: not filled in"),
        "{}",
        stderr(&out)
    );
    // `plan --rig` refuses it the same way.
    let out = bin()
        .args(["plan", "--protocol"])
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join("protocols/smoke.toml"))
        .arg("--rig")
        .arg(&f)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("arena.mark_reference: not filled in"));
}

#[test]
fn rig_check_prints_the_sensor_in_words_not_json() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(
        dir.path(),
        "rig.toml",
        &skybearing::rig::config::filled_example(),
    );
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(!text.contains('{') && !text.contains("\"kind\""), "{text}");
    assert!(
        text.contains("sensor     serial port /dev/ttyUSB0 at 115200 baud"),
        "{text}"
    );
    assert!(text.contains("heading in column 1"), "{text}");
    assert!(text.contains("turntable  turned by hand"), "{text}");
}

#[test]
fn a_sim_turntable_or_sensor_in_a_rig_file_is_refused_by_rig_check() {
    let dir = tempfile::tempdir().unwrap();
    for (from, to, field) in [
        (
            "kind = \"manual\"",
            "kind = \"sim\"",
            ":53: turntable.kind: ",
        ),
        (
            "source = \"serial\"",
            "source = \"sim\"",
            ":27: sensor.source: ",
        ),
    ] {
        let text = skybearing::rig::config::filled_example().replace(from, to);
        let f = write(dir.path(), "rig.toml", &text);
        let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
        assert_eq!(out.status.code(), Some(2));
        let err = stderr(&out);
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(field), "{err}");
        assert!(err.contains("skybearing sim --write-rig"), "{err}");
    }
}

#[test]
fn a_settle_window_in_a_rig_file_is_refused_and_the_template_says_why() {
    assert!(!skybearing::rig::config::TEMPLATE.contains("may override"));
    assert!(skybearing::rig::config::TEMPLATE.contains("every protocol file sets its own"));
    let dir = tempfile::tempdir().unwrap();
    let text = format!(
        "settle_s = 5.0\n{}",
        skybearing::rig::config::filled_example()
    );
    let f = write(dir.path(), "rig.toml", &text);
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(":1: settle_s: not a rig setting"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn run_requires_an_animal_id() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(
        dir.path(),
        "rig.toml",
        &skybearing::rig::config::filled_example(),
    );
    let out = bin()
        .arg("run")
        .arg("--rig")
        .arg(&f)
        .arg("--protocol")
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join("protocols/smoke.toml"))
        .arg("--sessions")
        .arg(dir.path().join("s"))
        .arg("--headless")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--animal"), "{}", stderr(&out));
    assert!(!dir.path().join("s").exists());
}

// ---- point 11: replay lines with the stream decoder's limits; capped rig/protocol reads ------

use skybearing::clock::SimClock;
use skybearing::rig::config::{ReplayPace, SensorSource, demo_rig};
use skybearing::rig::{SensorEvent, open_sensor};
use std::sync::Arc;

fn replay(path: &Path) -> Box<dyn skybearing::rig::HeadingSource> {
    let mut rig = demo_rig();
    rig.sensor.decoder.time_column = None;
    rig.sensor.source = SensorSource::Replay {
        path: path.to_path_buf(),
        pace: ReplayPace::Fast,
    };
    open_sensor(&rig, Arc::new(SimClock::new())).unwrap()
}

fn raws(out: &[SensorEvent]) -> Vec<f64> {
    out.iter()
        .filter_map(|e| match e {
            SensorEvent::Sample { raw, .. } => Some(*raw),
            _ => None,
        })
        .collect()
}

#[test]
fn replay_splits_cr_only_and_crlf_lines_and_keeps_a_last_line_without_newline() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "cr.txt", "10\r20\r\r30\r\n40\n50");
    let mut src = replay(&f);
    let mut out = Vec::new();
    src.drain(0.5, &mut out).unwrap();
    assert_eq!(raws(&out), [10.0, 20.0, 30.0, 40.0, 50.0]);
    assert_eq!(src.health().malformed, 0);
}

#[test]
fn replay_of_dev_zero_flags_one_over_long_line_and_returns() {
    let mut src = replay(Path::new("/dev/zero"));
    let mut out = Vec::new();
    for k in 0..5 {
        src.drain(0.1 * f64::from(k), &mut out).unwrap();
    }
    let malformed: Vec<&SensorEvent> = out
        .iter()
        .filter(|e| matches!(e, SensorEvent::Malformed { .. }))
        .collect();
    assert_eq!(malformed.len(), 1, "{out:?}");
    match malformed[0] {
        SensorEvent::Malformed { reason, .. } => {
            assert!(reason.contains("longer than 256 bytes"), "{reason}")
        }
        e => panic!("{e:?}"),
    }
    assert!(raws(&out).is_empty());
}

#[test]
fn stream_decoder_keeps_a_last_line_without_newline_at_end_of_input() {
    use skybearing::rig::decoder::Pipeline;
    let cfg = demo_rig();
    let mut p = Pipeline::new(
        skybearing::rig::config::DecoderConfig::default(),
        cfg.calibration,
        1.0,
        0.0,
    );
    let mut out = Vec::new();
    p.feed(0.1, b"10\r20\n30", &mut out);
    assert_eq!(raws(&out), [10.0, 20.0]);
    p.finish(0.2, &mut out);
    assert_eq!(raws(&out), [10.0, 20.0, 30.0]);
}

/// Runs the binary with its address space capped at 1 GiB, so an unbounded read fails fast
/// instead of taking the machine's memory.
fn capped(cmd: &mut Command) -> Output {
    use std::os::unix::process::CommandExt;
    // SAFETY: setrlimit is async-signal-safe and touches only the child.
    unsafe {
        cmd.pre_exec(|| {
            let lim = libc::rlimit {
                rlim_cur: 1 << 30,
                rlim_max: 1 << 30,
            };
            libc::setrlimit(libc::RLIMIT_AS, &lim);
            Ok(())
        });
    }
    cmd.output().unwrap()
}

#[test]
fn rig_and_protocol_files_that_are_dev_zero_are_refused_with_a_size_error() {
    let out = capped(bin().args(["rig", "check", "/dev/zero"]));
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert_eq!(
        stderr(&out).trim(),
        "skybearing: error: /dev/zero: cannot read rig file: larger than 4 MiB: not a rig or protocol file"
    );
    let out = capped(bin().args(["plan", "--protocol", "/dev/zero"]));
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert_eq!(
        stderr(&out).trim(),
        "skybearing: error: /dev/zero: cannot read protocol file: larger than 4 MiB: not a rig or protocol file"
    );
}

// ---- point 15: capped durations, broken pipes, not-UTF-8 files ---------------------------------

#[test]
fn plan_refuses_huge_durations_and_settle_windows_naming_the_field() {
    let dir = tempfile::tempdir().unwrap();
    for (text, want) in [
        (
            "name = \"x\"\nsettle_s = 1\n[[epochs]]\nduration_s = 1e9\n",
            ":4: epochs[1].duration_s: must be at most 86400 s (24 hours) (got 1000000000)",
        ),
        (
            "name = \"x\"\nsettle_s = 1\n[[epochs]]\nduration_s = 1e300\n",
            ":4: epochs[1].duration_s: must be at most 86400 s",
        ),
        (
            "name = \"x\"\nsettle_s = 1e308\n[[epochs]]\nduration_s = 60\n",
            ":2: settle_s: must be at most 3600 s (1 hour)",
        ),
        (
            "name = \"x\"\nsettle_s = 1\n[[epochs]]\ncount = 4\nduration_s = 86400\n",
            ": epochs: total duration 96 h 00 min 00 s is over the limit of 259200 s (3 days)",
        ),
    ] {
        let p = write(dir.path(), "p.toml", text);
        let out = capped(
            bin()
                .args(["plan", "--start", "2026-06-21T08:00:00Z", "--protocol"])
                .arg(&p),
        );
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "{text}: {err}");
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(want), "{text}: {err}");
    }
    // A whole day is still allowed.
    let p = write(
        dir.path(),
        "p.toml",
        "name = \"x\"\nsettle_s = 1\n[[epochs]]\nduration_s = 86400\n",
    );
    let out = capped(
        bin()
            .args(["plan", "--start", "2026-06-21T08:00:00Z", "--protocol"])
            .arg(&p),
    );
    assert!(out.status.success(), "{}", stderr(&out));
}

#[test]
fn ten_thousand_one_second_epochs_plan() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "p.toml",
        "name = \"many\"\nsettle_s = 0\n[[epochs]]\ncount = 10000\nduration_s = 1\n",
    );
    let out = bin()
        .args([
            "plan",
            "--json",
            "--start",
            "2026-06-21T08:00:00Z",
            "--protocol",
        ])
        .arg(&p)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["epochs"].as_array().unwrap().len(), 10_000);
    assert_eq!(v["total_duration_s"], 10_000.0);
}

/// Runs a command whose standard output is a pipe closed before it writes.
fn into_closed_pipe(cmd: &mut Command) -> std::process::ExitStatus {
    let mut child = cmd
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let mut err = String::new();
    std::io::Read::read_to_string(&mut child.stderr.take().unwrap(), &mut err).unwrap();
    let status = child.wait().unwrap();
    assert!(!err.contains("panicked"), "{err}");
    assert!(!err.contains("Broken pipe"), "{err}");
    status
}

#[test]
fn check_json_and_plan_json_into_a_closed_pipe_exit_quietly() {
    use std::os::unix::process::ExitStatusExt;
    let dir = tempfile::tempdir().unwrap();
    let s = into_closed_pipe(bin().arg("check").arg(dir.path()).arg("--json"));
    assert!(
        s.signal() == Some(libc::SIGPIPE) || s.code() == Some(1),
        "{s:?}"
    );
    let p = write(
        dir.path(),
        "p.toml",
        "name = \"many\"\nsettle_s = 0\n[[epochs]]\ncount = 10000\nduration_s = 1\n",
    );
    let s = into_closed_pipe(
        bin()
            .args([
                "plan",
                "--json",
                "--start",
                "2026-06-21T08:00:00Z",
                "--protocol",
            ])
            .arg(&p),
    );
    assert!(s.signal() == Some(libc::SIGPIPE) || s.success(), "{s:?}");
}

#[test]
fn protocol_and_rig_files_that_are_not_utf8_are_named_by_line() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("p.toml");
    std::fs::write(
        &p,
        b"name = \"x\"\nsettle_s = 1\ndescription = \"caf\xe9\"\n[[epochs]]\nduration_s = 5\n",
    )
    .unwrap();
    let out = bin().args(["plan", "--protocol"]).arg(&p).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(&format!("{}:3: not UTF-8 text at line 3", p.display())),
        "{}",
        stderr(&out)
    );
    let r = dir.path().join("rig.toml");
    let mut bytes = skybearing::rig::config::filled_example().into_bytes();
    let at = String::from_utf8_lossy(&bytes).find("Larkfield").unwrap();
    bytes[at] = 0xff;
    std::fs::write(&r, bytes).unwrap();
    let out = bin().args(["rig", "check"]).arg(&r).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(&format!("{}:12: not UTF-8 text at line 12", r.display())),
        "{}",
        stderr(&out)
    );
}
