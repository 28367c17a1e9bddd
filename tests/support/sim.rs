//! Shared by the whole-program tests that run `skybearing run` against `skybearing sim`.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use super::BIN;

/// Kills the simulator when the test ends, however it ends.
pub struct Killer(std::process::Child);

impl Drop for Killer {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

/// Starts `skybearing sim` with `flags`, waits for its rig file in `dir`, returns both.
pub fn start_sim(dir: &Path, flags: &[&str]) -> (Killer, PathBuf) {
    let rig = dir.join("rig.toml");
    let sim = Command::new(BIN)
        .arg("sim")
        .args(flags)
        .arg("--write-rig")
        .arg(&rig)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("spawn sim");
    let killer = Killer(sim);
    let until = Instant::now() + Duration::from_secs(10);
    while !rig.is_file() {
        assert!(
            Instant::now() < until,
            "the simulator never wrote its rig file"
        );
        std::thread::sleep(Duration::from_millis(50));
    }
    std::thread::sleep(Duration::from_millis(200));
    (killer, rig)
}

/// `skybearing run --headless` of the smoke protocol for `animal` on the rig file `rig`, into
/// `sessions`, with stdin closed; ready for more settings, then to run or spawn.
pub fn headless_smoke_run(animal: &str, rig: &Path, sessions: &Path) -> Command {
    headless_run(animal, rig, sessions, "protocols/smoke.toml")
}

/// `skybearing run --headless` of `protocol` (a path) for `animal` on the rig file `rig`, into
/// `sessions`, with stdin closed.
pub fn headless_run(animal: &str, rig: &Path, sessions: &Path, protocol: &str) -> Command {
    let mut c = Command::new(BIN);
    c.args([
        "run",
        "--headless",
        // The simulator uses the real sun at the demo site, which may be down when tests run.
        "--allow-no-sun",
        "--animal",
        animal,
        "--protocol",
        protocol,
    ])
    .arg("--rig")
    .arg(rig)
    .arg("--sessions")
    .arg(sessions)
    .stdin(Stdio::null());
    c
}

/// Starts one `skybearing sim` serving `n` rigs (`rig-1.toml`... in `dir`, so named rig-1...)
/// with `flags`, waits for every rig file, returns the simulator and the files in order.
pub fn start_sims(dir: &Path, n: usize, flags: &[&str]) -> (Killer, Vec<PathBuf>) {
    let rigs: Vec<PathBuf> = (1..=n).map(|k| dir.join(format!("rig-{k}.toml"))).collect();
    let mut c = Command::new(BIN);
    c.arg("sim").args(flags);
    for r in &rigs {
        c.arg("--write-rig").arg(r);
    }
    let sim = c
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("spawn sim");
    let killer = Killer(sim);
    let until = Instant::now() + Duration::from_secs(10);
    while !rigs.iter().all(|r| r.is_file()) {
        assert!(
            Instant::now() < until,
            "the simulator never wrote its rig files"
        );
        std::thread::sleep(Duration::from_millis(50));
    }
    std::thread::sleep(Duration::from_millis(200));
    (killer, rigs)
}

/// `skybearing run --headless` of `protocol` with one `--rig FILE --animal ID` pair per rig,
/// into `sessions`, with stdin closed.
pub fn headless_run_rigs(rigs: &[(&Path, &str)], sessions: &Path, protocol: &str) -> Command {
    let mut c = Command::new(BIN);
    c.args([
        "run",
        "--headless",
        "--allow-no-sun",
        "--protocol",
        protocol,
    ]);
    for (rig, animal) in rigs {
        c.arg("--rig").arg(rig).arg("--animal").arg(animal);
    }
    c.arg("--sessions").arg(sessions).stdin(Stdio::null());
    c
}
