//! Headless demo sessions through the binary, all starting at one fixed instant.

use std::path::{Path, PathBuf};
use std::process::Command;

use super::{bin, session_folder};

/// The start instant of the demo sessions (a June morning at the demo site).
pub const START: &str = "2026-06-14T07:30:00Z";

/// `skybearing demo --headless <args> --start START --sessions <sessions>`, ready to run.
pub fn demo_command(sessions: &Path, args: &[&str]) -> Command {
    let mut c = bin();
    c.args(["demo", "--headless"])
        .args(args)
        .args(["--start", START])
        .arg("--sessions")
        .arg(sessions);
    c
}

/// Runs a whole demo session at full speed with seed 11 (and `extra` flags) into `dir`;
/// returns its folder.
pub fn headless_demo(dir: &Path, extra: &[&str]) -> PathBuf {
    let mut args = vec!["--speed", "max", "--seed", "11"];
    args.extend_from_slice(extra);
    let out = demo_command(dir, &args).output().expect("run demo");
    assert!(
        out.status.success(),
        "demo failed: {}\n{}",
        String::from_utf8_lossy(&out.stderr),
        String::from_utf8_lossy(&out.stdout)
    );
    let stdout = String::from_utf8(out.stdout).expect("utf8");
    let p = session_folder(&stdout);
    assert!(
        p.join("session.json").is_file(),
        "last line is not a session folder: {}",
        p.display()
    );
    p
}
