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
