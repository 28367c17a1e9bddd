//! The live screen end to end on a pseudo-terminal: keys typed into the terminal become
//! commands, the session ends on `q` `y`, Ctrl-C and SIGTERM, and the terminal is left in
//! cooked mode on the main screen on every way out (normal end, signal, panic).
//!
//! Each test re-runs this test binary as a child process (the ignored `live_child` below) with
//! its standard streams on the slave side of a pty; the child runs `run_live` against a small
//! fake engine thread that logs the commands it receives to a file.
#![cfg(target_os = "linux")]

use skybearing::engine::snapshot::{Command, SnapshotCell};
use skybearing::tui::ScreenOptions;
use skybearing::tui::sample::SnapshotBuilder;
use std::fs::File;
use std::io::{Read, Write};
use std::os::fd::{AsRawFd, FromRawFd, OwnedFd};
use std::os::unix::process::CommandExt;
use std::path::{Path, PathBuf};
use std::process::{Child, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, mpsc};
use std::time::{Duration, Instant};

const CHILD_ENV: &str = "SKYBEARING_TUI_CHILD";
const LOG_ENV: &str = "SKYBEARING_TUI_LOG";

/// The child side: a fake engine and the real screen. Only does anything when started by the
/// tests below (with `CHILD_ENV` set).
#[test]
#[ignore = "child process of the pty tests in this file; they run it"]
fn live_child() {
    let Ok(mode) = std::env::var(CHILD_ENV) else {
        return;
    };
    let log_path = PathBuf::from(std::env::var(LOG_ENV).unwrap());
    let log = Arc::new(Mutex::new(File::create(&log_path).unwrap()));
    let cell = SnapshotCell::new();
    let (tx, rx) = mpsc::channel::<Command>();
    let engine_cell = cell.clone();
    let engine_log = log.clone();
    let engine_mode = mode.clone();
    std::thread::spawn(move || {
        let start = Instant::now();
        let mut flying = true;
        let mut ended = false;
        loop {
            while let Ok(cmd) = rx.try_recv() {
                writeln!(engine_log.lock().unwrap(), "CMD {cmd:?}").unwrap();
                match cmd {
                    Command::FlightStop => flying = false,
                    Command::FlightStart => flying = true,
                    Command::EndSession => ended = true,
                    _ => {}
                }
            }
            let t = 750.0 + start.elapsed().as_secs_f64();
            engine_cell.publish(
                SnapshotBuilder::new()
                    .t_s(t)
                    .flying(flying)
                    .ended(ended)
                    .build(),
            );
            if engine_mode == "panic" && start.elapsed() > Duration::from_millis(600) {
                panic!("fake engine exploded on purpose");
            }
            if ended {
                return;
            }
            std::thread::sleep(Duration::from_millis(20));
        }
    });
    let options = ScreenOptions {
        final_frame_s: 0.3,
        ..ScreenOptions::default()
    };
    let result = skybearing::tui::run_live(cell, tx, options);
    let line = match &result {
        Ok(()) => "RESULT ok".to_string(),
        Err(e) => format!("RESULT err: {e:#}"),
    };
    writeln!(log.lock().unwrap(), "{line}").unwrap();
    if mode == "linger" {
        // After the screen: a SIGTERM must terminate the process the default way.
        writeln!(log.lock().unwrap(), "LINGER").unwrap();
        std::thread::sleep(Duration::from_secs(20));
        writeln!(log.lock().unwrap(), "LINGER survived").unwrap();
    }
}

/// A child running `live_child` on a pty, with everything it wrote to the terminal.
struct PtyChild {
    child: Child,
    master: File,
    slave: OwnedFd,
    output: Arc<Mutex<Vec<u8>>>,
    stop_reader: Arc<AtomicBool>,
    log: PathBuf,
    _dir: tempfile::TempDir,
}

fn open_pty() -> (OwnedFd, OwnedFd) {
    let mut master = -1;
    let mut slave = -1;
    let size = libc::winsize {
        ws_row: 24,
        ws_col: 80,
        ws_xpixel: 0,
        ws_ypixel: 0,
    };
    // SAFETY: valid out-pointers; null name and termios ask for defaults.
    let rc = unsafe {
        libc::openpty(
            &mut master,
            &mut slave,
            std::ptr::null_mut(),
            std::ptr::null(),
            &size,
        )
    };
    assert_eq!(rc, 0, "openpty failed: {}", std::io::Error::last_os_error());
    // SAFETY: openpty returned two fresh descriptors we now own.
    unsafe { (OwnedFd::from_raw_fd(master), OwnedFd::from_raw_fd(slave)) }
}

fn spawn(mode: &str) -> PtyChild {
    let dir = tempfile::tempdir().unwrap();
    let log = dir.path().join("commands.log");
    let (master, slave) = open_pty();
    let exe = std::env::current_exe().unwrap();
    let mut cmd = std::process::Command::new(exe);
    cmd.args([
        "--exact",
        "live_child",
        "--ignored",
        "--nocapture",
        "--test-threads=1",
    ])
    .env(CHILD_ENV, mode)
    .env(LOG_ENV, &log)
    .env_remove("NO_COLOR")
    .stdin(Stdio::from(slave.try_clone().unwrap()))
    .stdout(Stdio::from(slave.try_clone().unwrap()))
    .stderr(Stdio::from(slave.try_clone().unwrap()));
    // SAFETY: only async-signal-safe calls between fork and exec.
    unsafe {
        cmd.pre_exec(|| {
            // A new session with the pty as controlling terminal, so /dev/tty is the pty.
            if libc::setsid() < 0 {
                return Err(std::io::Error::last_os_error());
            }
            if libc::ioctl(0, libc::TIOCSCTTY, 0) < 0 {
                return Err(std::io::Error::last_os_error());
            }
            Ok(())
        });
    }
    let child = cmd.spawn().unwrap();
    let master = File::from(master);
    let output = Arc::new(Mutex::new(Vec::new()));
    let stop_reader = Arc::new(AtomicBool::new(false));
    {
        let mut reader = master.try_clone().unwrap();
        let output = output.clone();
        let stop = stop_reader.clone();
        std::thread::spawn(move || {
            let mut buf = [0u8; 8192];
            while !stop.load(Ordering::SeqCst) {
                let mut pfd = libc::pollfd {
                    fd: reader.as_raw_fd(),
                    events: libc::POLLIN,
                    revents: 0,
                };
                // SAFETY: one valid pollfd.
                let n = unsafe { libc::poll(&mut pfd, 1, 50) };
                if n <= 0 {
                    continue;
                }
                match reader.read(&mut buf) {
                    Ok(0) | Err(_) => break,
                    Ok(k) => output.lock().unwrap().extend_from_slice(&buf[..k]),
                }
            }
        });
    }
    PtyChild {
        child,
        master,
        slave,
        output,
        stop_reader,
        log,
        _dir: dir,
    }
}

impl PtyChild {
    fn output_text(&self) -> String {
        String::from_utf8_lossy(&self.output.lock().unwrap()).into_owned()
    }

    /// Waits until the terminal output contains `needle`.
    fn wait_for(&self, needle: &str, timeout: Duration) {
        let t0 = Instant::now();
        while t0.elapsed() < timeout {
            if self.output_text().contains(needle) {
                return;
            }
            std::thread::sleep(Duration::from_millis(20));
        }
        panic!(
            "{needle:?} never appeared; output tail: {:?}",
            tail(&self.output_text())
        );
    }

    fn type_keys(&mut self, keys: &str) {
        for ch in keys.chars() {
            let mut b = [0u8; 4];
            self.master
                .write_all(ch.encode_utf8(&mut b).as_bytes())
                .unwrap();
            self.master.flush().unwrap();
            std::thread::sleep(Duration::from_millis(60));
        }
    }

    /// Waits for the child to exit (killing it after `timeout`); returns its exit status.
    fn finish(&mut self, timeout: Duration) -> std::process::ExitStatus {
        let t0 = Instant::now();
        loop {
            if let Some(status) = self.child.try_wait().unwrap() {
                // Let the reader drain what is left.
                std::thread::sleep(Duration::from_millis(150));
                self.stop_reader.store(true, Ordering::SeqCst);
                return status;
            }
            if t0.elapsed() > timeout {
                let _ = self.child.kill();
                let _ = self.child.wait();
                self.stop_reader.store(true, Ordering::SeqCst);
                panic!(
                    "child did not exit; output tail: {:?}; log: {}",
                    tail(&self.output_text()),
                    read_log(&self.log)
                );
            }
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    fn commands(&self) -> Vec<String> {
        read_log(&self.log)
            .lines()
            .filter_map(|l| l.strip_prefix("CMD ").map(str::to_string))
            .collect()
    }

    fn result_line(&self) -> String {
        read_log(&self.log)
            .lines()
            .find(|l| l.starts_with("RESULT"))
            .unwrap_or("no RESULT line")
            .to_string()
    }

    /// The terminal is back in cooked mode (canonical input and echo on).
    fn assert_terminal_restored(&self) {
        // SAFETY: zeroed termios is a valid out-buffer; the slave fd is open.
        let mut t: libc::termios = unsafe { std::mem::zeroed() };
        let rc = unsafe { libc::tcgetattr(self.slave.as_raw_fd(), &mut t) };
        assert_eq!(rc, 0);
        assert!(
            t.c_lflag & libc::ICANON != 0,
            "terminal left without ICANON"
        );
        assert!(t.c_lflag & libc::ECHO != 0, "terminal left without ECHO");
        assert!(t.c_lflag & libc::ISIG != 0, "terminal left without ISIG");
        let out = self.output_text();
        let enter = out
            .find("\x1b[?1049h")
            .expect("never entered the alternate screen");
        let leave = out
            .rfind("\x1b[?1049l")
            .expect("never left the alternate screen");
        assert!(leave > enter);
        assert!(
            out[leave..].contains("\x1b[?25h") || out[..leave].rfind("\x1b[?25h") > Some(enter),
            "cursor not shown again"
        );
    }
}

fn read_log(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_default()
}

fn tail(s: &str) -> String {
    let chars: Vec<char> = s.chars().collect();
    chars[chars.len().saturating_sub(400)..].iter().collect()
}

#[test]
fn keys_become_commands_and_q_y_ends() {
    let mut c = spawn("normal");
    c.wait_for("lm-07", Duration::from_secs(20));
    // q then something else: no end.
    c.type_keys("qx");
    c.type_keys("f");
    std::thread::sleep(Duration::from_millis(200));
    c.type_keys("f");
    c.type_keys("nhello\r");
    c.type_keys("q");
    std::thread::sleep(Duration::from_millis(200));
    assert!(
        !c.commands().iter().any(|l| l.contains("EndSession")),
        "ended before y: {:?}",
        c.commands()
    );
    c.type_keys("y");
    let status = c.finish(Duration::from_secs(20));
    assert!(status.success(), "child failed: {status:?}");
    assert_eq!(
        c.commands(),
        vec![
            "FlightStop".to_string(),
            "FlightStart".to_string(),
            "Note(\"hello\")".to_string(),
            "EndSession".to_string(),
        ]
    );
    assert_eq!(c.result_line(), "RESULT ok");
    // The final frame was drawn (its footer is the only place with "any key"; the box text
    // itself may be split by the cell diff, and is checked on TestBackend in tui_render).
    assert!(
        c.output_text().contains("any key"),
        "{:?}",
        tail(&c.output_text())
    );
    c.assert_terminal_restored();
}

#[test]
fn ctrl_c_ends_the_session() {
    let mut c = spawn("normal");
    c.wait_for("lm-07", Duration::from_secs(20));
    c.type_keys("\u{3}");
    let status = c.finish(Duration::from_secs(20));
    assert!(status.success());
    assert_eq!(c.commands(), vec!["EndSession".to_string()]);
    assert_eq!(c.result_line(), "RESULT ok");
    c.assert_terminal_restored();
}

#[test]
fn sigterm_ends_the_session_and_restores() {
    let mut c = spawn("normal");
    c.wait_for("lm-07", Duration::from_secs(20));
    // SAFETY: signalling our own child by pid.
    let rc = unsafe { libc::kill(c.child.id() as libc::pid_t, libc::SIGTERM) };
    assert_eq!(rc, 0);
    let status = c.finish(Duration::from_secs(20));
    assert!(status.success(), "{status:?}");
    assert_eq!(c.commands(), vec!["EndSession".to_string()]);
    assert_eq!(c.result_line(), "RESULT ok");
    c.assert_terminal_restored();
}

#[test]
fn panic_restores_the_terminal_before_the_message() {
    let mut c = spawn("panic");
    c.wait_for("lm-07", Duration::from_secs(20));
    let _ = c.finish(Duration::from_secs(20));
    assert!(
        c.result_line().starts_with("RESULT err"),
        "{}",
        c.result_line()
    );
    c.assert_terminal_restored();
    let out = c.output_text();
    let leave = out.find("\x1b[?1049l").unwrap();
    let msg = out
        .find("fake engine exploded on purpose")
        .expect("panic message lost");
    assert!(
        msg > leave,
        "panic message printed inside the alternate screen"
    );
}

#[test]
fn after_the_screen_sigterm_terminates_as_usual() {
    use std::os::unix::process::ExitStatusExt;
    let mut c = spawn("linger");
    c.wait_for("lm-07", Duration::from_secs(20));
    c.type_keys("qy");
    let t0 = Instant::now();
    while !read_log(&c.log).contains("LINGER") {
        assert!(
            t0.elapsed() < Duration::from_secs(20),
            "screen never returned"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    // SAFETY: signalling our own child by pid.
    let rc = unsafe { libc::kill(c.child.id() as libc::pid_t, libc::SIGTERM) };
    assert_eq!(rc, 0);
    let status = c.finish(Duration::from_secs(10));
    assert_eq!(status.signal(), Some(libc::SIGTERM), "{status:?}");
    assert!(!read_log(&c.log).contains("LINGER survived"));
    c.assert_terminal_restored();
}
