//! A private tmux server for the whole-program tests of the live screen (`live_tmux.rs`,
//! `multi_rig_live.rs`): start a script in a window, read the pane, send keys.

use super::{on_path, skip_without};

/// Skips the calling test (saying so) when tmux is not installed.
pub fn no_tmux(test: &str) -> bool {
    skip_without(test, "tmux", on_path("tmux"), "apt-get install tmux")
}

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

pub struct Tmux {
    socket: String,
}

impl Tmux {
    pub fn cmd(&self, args: &[&str]) -> std::process::Output {
        Command::new("tmux")
            .arg("-L")
            .arg(&self.socket)
            .args(args)
            .output()
            .expect("tmux runs")
    }
    pub fn capture(&self) -> String {
        String::from_utf8_lossy(&self.cmd(&["capture-pane", "-p", "-t", "live"]).stdout)
            .into_owned()
    }
    pub fn wait_for(&self, what: &str, secs: u64) -> String {
        let until = Instant::now() + Duration::from_secs(secs);
        loop {
            let screen = self.capture();
            if screen.contains(what) {
                return screen;
            }
            assert!(
                Instant::now() < until,
                "'{what}' never appeared; screen:\n{screen}"
            );
            std::thread::sleep(Duration::from_millis(200));
        }
    }
    pub fn keys(&self, keys: &str) {
        self.cmd(&["send-keys", "-t", "live", keys]);
    }
}

impl Tmux {
    /// A private tmux server running `script` in an 80×24 window named "live".
    pub fn start(name: &str, script: &str) -> Tmux {
        assert!(
            Command::new("tmux")
                .arg("-V")
                .output()
                .is_ok_and(|o| o.status.success()),
            "tmux is needed for this test (.ci/run installs it)"
        );
        let tmux = Tmux {
            socket: format!("{name}-{}", std::process::id()),
        };
        let out = tmux.cmd(&[
            "new-session",
            "-d",
            "-s",
            "live",
            "-x",
            "80",
            "-y",
            "24",
            "sh",
            "-c",
            script,
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        tmux
    }
}

impl Drop for Tmux {
    fn drop(&mut self) {
        let _ = Command::new("tmux")
            .arg("-L")
            .arg(&self.socket)
            .arg("kill-server")
            .output();
    }
}

pub fn wait_file(p: &Path, secs: u64) -> String {
    let until = Instant::now() + Duration::from_secs(secs);
    loop {
        if let Ok(s) = std::fs::read_to_string(p)
            && s.ends_with('\n')
        {
            return s;
        }
        assert!(Instant::now() < until, "{} never appeared", p.display());
        std::thread::sleep(Duration::from_millis(200));
    }
}
