//! Kill the binary with SIGKILL mid-session, then `check` reports the folder interrupted and
//! `check --repair` recovers it with no more than about the last second of samples lost.

use std::io::{BufRead, BufReader};
use std::path::PathBuf;
use std::process::Stdio;
use std::time::{Duration, Instant};

mod support;
use support::demo::demo_command;
use support::{bin, read_json};

fn last_t_s(dir: &std::path::Path) -> (usize, f64) {
    let text = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    let mut n = 0;
    let mut last = 0.0;
    for line in text.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        if f.len() < 10 {
            continue; // a torn last line
        }
        if let Ok(t) = f[1].parse::<f64>() {
            last = t;
            n += 1;
        }
    }
    (n, last)
}

#[test]
fn sigkill_then_check_then_repair() {
    let tmp = tempfile::tempdir().expect("tmp");
    let spawned = Instant::now();
    let mut child = demo_command(
        tmp.path(),
        &["--speed", "1", "--seed", "5", "--rate-hz", "200"],
    )
    .stdin(Stdio::null())
    .stdout(Stdio::piped())
    .stderr(Stdio::null())
    .spawn()
    .expect("spawn");
    // Wait for the session to start (first progress line), then let it record a while.
    let stdout = child.stdout.take().expect("stdout");
    let mut lines = BufReader::new(stdout).lines();
    let first = lines.next().expect("a progress line").expect("utf8");
    assert!(first.contains("session_start"), "{first}");
    std::thread::sleep(Duration::from_millis(4500));
    let killed_after = spawned.elapsed().as_secs_f64();
    child.kill().expect("SIGKILL");
    let _ = child.wait();

    let dirs: Vec<PathBuf> = std::fs::read_dir(tmp.path())
        .expect("dir")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.is_dir())
        .collect();
    assert_eq!(dirs.len(), 1);
    let dir = &dirs[0];
    let (n_before, last_before) = last_t_s(dir);
    // fsync at least once a second: no more than ~1 s (plus start-up) may be missing.
    assert!(
        last_before >= killed_after - 1.8,
        "last sample on disk at {last_before:.2} s, killed after {killed_after:.2} s"
    );

    let check = bin().arg("check").arg(dir).output().expect("check");
    assert!(
        !check.status.success(),
        "check must flag an interrupted session"
    );
    let text = String::from_utf8_lossy(&check.stdout).to_lowercase()
        + &String::from_utf8_lossy(&check.stderr).to_lowercase();
    assert!(text.contains("interrupted"), "{text}");

    let repair = bin()
        .args(["check", "--repair"])
        .arg(dir)
        .output()
        .expect("repair");
    assert!(
        repair.status.success(),
        "{}",
        String::from_utf8_lossy(&repair.stderr)
    );
    let again = bin().arg("check").arg(dir).output().expect("check");
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stdout)
    );
    let (n_after, last_after) = last_t_s(dir);
    assert_eq!(n_after, n_before, "repair must keep every whole sample");
    assert_eq!(last_after, last_before);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "recovered");
    assert!(dir.join("summary.json").is_file());
}

/// Starts a real-time headless demo of the smoke protocol in `sessions` (stdin a pipe kept
/// open, so the session does not read an end of input), waiting for its first progress line.
fn started_demo(sessions: &std::path::Path) -> std::process::Child {
    let mut child = demo_command(
        sessions,
        &[
            "--speed",
            "1",
            "--seed",
            "5",
            "--protocol",
            "protocols/smoke.toml",
        ],
    )
    .stdin(Stdio::piped())
    .stdout(Stdio::piped())
    .stderr(Stdio::piped())
    .spawn()
    .expect("spawn");
    let stdout = child.stdout.take().expect("stdout");
    let mut lines = BufReader::new(stdout).lines();
    let first = lines.next().expect("a progress line").expect("utf8");
    assert!(first.contains("session_start"), "{first}");
    // Keep reading so the child never blocks on a full pipe.
    std::thread::spawn(move || for _ in lines.by_ref() {});
    child
}

#[test]
fn sighup_ends_a_headless_session_properly_and_names_the_signal() {
    // Issue 14 point 13: a headless run died on SIGHUP (rc 129, status left running). It must
    // end the session like SIGTERM, and the end event and end_reason name the signal.
    for (sig, name) in [(libc::SIGHUP, "SIGHUP"), (libc::SIGTERM, "SIGTERM")] {
        let tmp = tempfile::tempdir().expect("tmp");
        let mut child = started_demo(tmp.path());
        std::thread::sleep(Duration::from_millis(500));
        // SAFETY: kill on our own child's pid.
        let rc = unsafe { libc::kill(child.id() as libc::pid_t, sig) };
        assert_eq!(rc, 0);
        let status = child.wait().expect("wait");
        assert_eq!(status.code(), Some(0), "{name}: {status:?}");
        let dir = std::fs::read_dir(tmp.path())
            .expect("dir")
            .map(|e| e.expect("entry").path())
            .find(|p| p.is_dir())
            .expect("a session folder");
        let meta = read_json(&dir.join("session.json"));
        assert_eq!(meta["status"], "aborted", "{name}");
        assert_eq!(meta["end_reason"], format!("ended by {name}"));
        let events = std::fs::read_to_string(dir.join("events.csv")).expect("events");
        assert!(
            events.contains(&format!("end_requested,by {name}")),
            "{events}"
        );
        assert!(
            events.contains(&format!("session_end,aborted: ended by {name}")),
            "{events}"
        );
        let check = bin().arg("check").arg(&dir).output().expect("check");
        assert!(
            check.status.success(),
            "{}",
            String::from_utf8_lossy(&check.stdout)
        );
    }
}

#[test]
fn a_file_size_limit_is_a_clear_error_not_a_signal_death() {
    // Issue 14 point 13: past `ulimit -f` the kernel sends SIGXFSZ, which killed the process
    // mid-write. It is ignored now: the write fails with EFBIG, reported in one clear line, and
    // what reached the disk stays for `check --repair`.
    let tmp = tempfile::tempdir().expect("tmp");
    let exe = env!("CARGO_BIN_EXE_skybearing");
    let out = std::process::Command::new("sh")
        .arg("-c")
        // 64 blocks of 512 bytes: 32 KiB per file, a few seconds of samples.
        .arg("ulimit -f 64 && exec \"$0\" \"$@\"")
        .arg(exe)
        .args(["demo", "--headless", "--speed", "max", "--seed", "5"])
        .args(["--start", support::demo::START, "--sessions"])
        .arg(tmp.path())
        .stdin(Stdio::null())
        .output()
        .expect("run");
    let stderr = String::from_utf8_lossy(&out.stderr);
    // 2: the exit status of every error (main.rs); a death by SIGXFSZ has no code at all.
    assert_eq!(out.status.code(), Some(2), "{:?} {stderr}", out.status);
    assert!(stderr.contains("file-size limit"), "{stderr}");
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    let dir = std::fs::read_dir(tmp.path())
        .expect("dir")
        .map(|e| e.expect("entry").path())
        .find(|p| p.is_dir())
        .expect("a session folder");
    let (n, _) = last_t_s(&dir);
    assert!(n > 100, "{n} samples kept");
    let repair = bin()
        .args(["check", "--repair"])
        .arg(&dir)
        .output()
        .expect("repair");
    assert!(
        repair.status.success(),
        "{}",
        String::from_utf8_lossy(&repair.stdout)
    );
}
