//! Turntable drivers: a serial motor controller speaking our line protocol
//! (docs/turntable-protocol.md) and the manual turntable the operator turns by hand.
//!
//! Protocol in short (ASCII lines, '\n' terminated, '\r' ignored):
//! - host → device `TURN <id> <deg>`: turn by `<deg>` (positive clockwise seen from above);
//!   `<id>` is a positive integer that grows with every new turn. A repeated `<id>` (the host's
//!   retry) must not turn again: the device answers again with the outcome or keeps going.
//! - device → host `DONE <id> <position_deg>` when the turn is finished, or
//!   `FAULT <id> <text>` when it cannot be done.
//! - host → device `POS?`, device → host `POS <position_deg>` (the device may also send `POS`
//!   lines by itself while it moves).
//!
//! The host waits `timeout_s` for the reply, sends the same `TURN` once more, waits `timeout_s`
//! again and then reports a `Fault`.

use super::config::{Rig, TurntableConfig};
use super::source::{REOPEN_EVERY, device_name, open_serial};
use super::{RigError, Turntable, TurntableEvent};
use crate::clock::Clock;
use std::collections::VecDeque;
use std::io::{Read, Write};
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};

/// Opens the turntable a rig describes (serial or manual). The simulated turntable is made by
/// [`crate::rig::sim::in_process`] instead.
pub fn open_turntable(rig: &Rig, clock: Arc<dyn Clock>) -> Result<Box<dyn Turntable>, RigError> {
    match &rig.turntable {
        TurntableConfig::Serial {
            path,
            baud,
            timeout_s,
            path_line,
        } => {
            let port = open_serial(path, *baud).map_err(|e| RigError::Device {
                device: device_name(rig, "turntable.path", *path_line, path),
                message: format!("cannot open serial port {}: {e}", path.display()),
            })?;
            Ok(Box::new(SerialTurntable::start(
                path.clone(),
                *baud,
                *timeout_s,
                port,
                clock,
            )?))
        }
        TurntableConfig::Manual => Ok(Box::new(ManualTurntable::default())),
        TurntableConfig::Sim => Err(RigError::Device {
            device: "turntable.kind".into(),
            message: "the simulated turntable is made by rig::sim::in_process, not open_turntable"
                .into(),
        }),
    }
}

/// A turntable turned by hand: the engine prompts the operator.
#[derive(Debug, Default)]
pub struct ManualTurntable {
    turned_deg: f64,
}

impl Turntable for ManualTurntable {
    fn start_turn(&mut self, _now_s: f64, by_deg: f64) -> Result<(), RigError> {
        self.turned_deg += by_deg;
        Ok(())
    }

    fn poll(&mut self, _now_s: f64, _out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        Ok(())
    }

    fn is_manual(&self) -> bool {
        true
    }

    fn describe(&self) -> String {
        "manual (turned by hand when prompted)".into()
    }
}

/// The turntable of a replay at full speed: the turns were made when the file was recorded,
/// so each commanded turn is reported done at the instant it is commanded.
#[derive(Debug, Default)]
pub struct ReplayTurntable {
    turned_deg: f64,
    done: Vec<f64>,
}

impl Turntable for ReplayTurntable {
    fn start_turn(&mut self, now_s: f64, by_deg: f64) -> Result<(), RigError> {
        self.turned_deg += by_deg;
        self.done.push(now_s);
        Ok(())
    }

    fn poll(&mut self, _now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        for t_s in self.done.drain(..) {
            out.push(TurntableEvent::Done {
                t_s,
                position_deg: None,
            });
        }
        Ok(())
    }

    fn describe(&self) -> String {
        "replay (turns are in the recording: each reported done at once)".into()
    }
}

/// A reply line from the device, parsed.
#[derive(Debug, Clone, PartialEq)]
pub enum Reply {
    /// `DONE <id> <pos>`.
    Done {
        /// Turn id.
        id: u64,
        /// Position after the turn, degrees.
        position_deg: Option<f64>,
    },
    /// `FAULT <id> <text>`.
    Fault {
        /// Turn id.
        id: u64,
        /// The device's text.
        text: String,
    },
    /// `POS <deg>`.
    Pos(f64),
}

/// Parses one reply line; `None` for anything else (ignored, the device may print banners).
pub fn parse_reply(line: &str) -> Option<Reply> {
    let line = line.trim();
    let mut parts = line.splitn(3, char::is_whitespace);
    let word = parts.next()?;
    match word {
        "DONE" => {
            let id = parts.next()?.trim().parse().ok()?;
            let position_deg = parts
                .next()
                .and_then(|p| p.trim().parse::<f64>().ok())
                .filter(|p| p.is_finite());
            Some(Reply::Done { id, position_deg })
        }
        "FAULT" => {
            let id = parts.next()?.trim().parse().ok()?;
            let text = parts.next().unwrap_or("").trim().to_string();
            Some(Reply::Fault { id, text })
        }
        "POS" => {
            let p: f64 = parts.next()?.trim().parse().ok()?;
            p.is_finite().then_some(Reply::Pos(p))
        }
        _ => None,
    }
}

struct TtShared {
    replies: VecDeque<(f64, String)>,
    writer: Option<serialport::TTYPort>,
    status: String,
}

fn lock(m: &Mutex<TtShared>) -> MutexGuard<'_, TtShared> {
    m.lock().unwrap_or_else(|e| e.into_inner())
}

#[derive(Debug, Clone)]
struct PendingTurn {
    id: u64,
    command: String,
    deadline_s: f64,
    attempts: u32,
}

/// A motor controller on a serial port.
pub struct SerialTurntable {
    shared: Arc<Mutex<TtShared>>,
    stop: Arc<AtomicBool>,
    timeout_s: f64,
    next_id: u64,
    pending: Option<PendingTurn>,
    position_deg: Option<f64>,
    what: String,
    join: Option<std::thread::JoinHandle<()>>,
}

impl SerialTurntable {
    fn start(
        path: PathBuf,
        baud: u32,
        timeout_s: f64,
        port: serialport::TTYPort,
        clock: Arc<dyn Clock>,
    ) -> Result<Self, RigError> {
        let reader = port.try_clone_native().map_err(|e| RigError::Device {
            device: path.display().to_string(),
            message: format!("cannot clone port handle: {e}"),
        })?;
        let shared = Arc::new(Mutex::new(TtShared {
            replies: VecDeque::new(),
            writer: Some(port),
            status: String::new(),
        }));
        let stop = Arc::new(AtomicBool::new(false));
        let (sh, st) = (shared.clone(), stop.clone());
        let p2 = path.clone();
        let join = std::thread::Builder::new()
            .name("turntable-serial".into())
            .spawn(move || reply_thread(p2, baud, Some(reader), sh, st, clock))?;
        let mut me = Self {
            shared,
            stop,
            timeout_s,
            next_id: 0,
            pending: None,
            position_deg: None,
            what: format!("serial {} @ {baud}", path.display()),
            join: Some(join),
        };
        me.send("POS?\n");
        Ok(me)
    }

    fn send(&mut self, line: &str) {
        let mut g = lock(&self.shared);
        let failed = match g.writer.as_mut() {
            Some(w) => w.write_all(line.as_bytes()).and_then(|_| w.flush()).err(),
            None => Some(std::io::Error::other("port not open")),
        };
        if let Some(e) = failed {
            g.status = format!("write failed: {e}");
        }
    }
}

fn reply_thread(
    path: PathBuf,
    baud: u32,
    mut port: Option<serialport::TTYPort>,
    shared: Arc<Mutex<TtShared>>,
    stop: Arc<AtomicBool>,
    clock: Arc<dyn Clock>,
) {
    let mut buf = [0u8; 512];
    let mut line: Vec<u8> = Vec::new();
    while !stop.load(Ordering::Relaxed) {
        match port.as_mut() {
            Some(p) => match p.read(&mut buf) {
                Ok(0) => port = None,
                Ok(n) => {
                    let t = clock.now_s();
                    for &b in &buf[..n] {
                        if b == b'\n' || b == b'\r' {
                            if !line.is_empty() {
                                let text = String::from_utf8_lossy(&line).into_owned();
                                lock(&shared).replies.push_back((t, text));
                                line.clear();
                            }
                        } else if line.len() < 256 {
                            line.push(b);
                        }
                    }
                }
                Err(e)
                    if matches!(
                        e.kind(),
                        std::io::ErrorKind::TimedOut
                            | std::io::ErrorKind::Interrupted
                            | std::io::ErrorKind::WouldBlock
                    ) => {}
                Err(e) => {
                    let mut g = lock(&shared);
                    g.writer = None;
                    g.status = format!("disconnected ({e}), reopening");
                    port = None;
                }
            },
            None => {
                line.clear();
                std::thread::sleep(REOPEN_EVERY);
                if let Ok(p) = open_serial(&path, baud)
                    && let Ok(w) = p.try_clone_native()
                {
                    let mut g = lock(&shared);
                    g.writer = Some(w);
                    g.status = "reopened".into();
                    port = Some(p);
                }
            }
        }
    }
}

impl Drop for SerialTurntable {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.join.take() {
            let _ = h.join();
        }
    }
}

impl Turntable for SerialTurntable {
    fn start_turn(&mut self, now_s: f64, by_deg: f64) -> Result<(), RigError> {
        if !by_deg.is_finite() {
            return Err(RigError::Device {
                device: self.what.clone(),
                message: format!("turn of {by_deg} deg is not a number"),
            });
        }
        if let Some(p) = &self.pending {
            return Err(RigError::Device {
                device: self.what.clone(),
                message: format!("turn {} is still running", p.id),
            });
        }
        self.next_id += 1;
        let command = format!("TURN {} {by_deg:.3}\n", self.next_id);
        self.send(&command);
        self.pending = Some(PendingTurn {
            id: self.next_id,
            command,
            deadline_s: now_s + self.timeout_s,
            attempts: 1,
        });
        Ok(())
    }

    fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        let replies: Vec<(f64, String)> = {
            let mut g = lock(&self.shared);
            let mut v = Vec::new();
            while g.replies.front().is_some_and(|(t, _)| *t <= now_s) {
                if let Some(r) = g.replies.pop_front() {
                    v.push(r);
                }
            }
            v
        };
        for (t_s, text) in replies {
            match parse_reply(&text) {
                Some(Reply::Pos(p)) => self.position_deg = Some(p),
                Some(Reply::Done { id, position_deg })
                    if self.pending.as_ref().is_some_and(|p| p.id == id) =>
                {
                    self.pending = None;
                    if position_deg.is_some() {
                        self.position_deg = position_deg;
                    }
                    out.push(TurntableEvent::Done { t_s, position_deg });
                }
                Some(Reply::Fault { id, text })
                    if self.pending.as_ref().is_some_and(|p| p.id == id) =>
                {
                    self.pending = None;
                    out.push(TurntableEvent::Fault {
                        t_s,
                        text: format!("turntable reports: {text}"),
                    });
                }
                _ => {}
            }
        }
        if let Some(p) = self.pending.clone()
            && now_s >= p.deadline_s
        {
            if p.attempts < 2 {
                self.send(&p.command);
                self.pending = Some(PendingTurn {
                    deadline_s: p.deadline_s + self.timeout_s,
                    attempts: p.attempts + 1,
                    ..p
                });
            } else {
                self.pending = None;
                out.push(TurntableEvent::Fault {
                    t_s: p.deadline_s,
                    text: format!(
                        "no reply to turn {} within {} s, nor to the retry",
                        p.id, self.timeout_s
                    ),
                });
            }
        }
        Ok(())
    }

    fn position_deg(&self, _now_s: f64) -> Option<f64> {
        self.position_deg
    }

    fn describe(&self) -> String {
        let g = lock(&self.shared);
        if g.status.is_empty() {
            self.what.clone()
        } else {
            format!("{} ({})", self.what, g.status)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replies_parse() {
        assert_eq!(
            parse_reply("DONE 3 90.000\r"),
            Some(Reply::Done {
                id: 3,
                position_deg: Some(90.0)
            })
        );
        assert_eq!(
            parse_reply("DONE 4"),
            Some(Reply::Done {
                id: 4,
                position_deg: None
            })
        );
        assert_eq!(
            parse_reply("FAULT 5 motor stalled"),
            Some(Reply::Fault {
                id: 5,
                text: "motor stalled".into()
            })
        );
        assert_eq!(parse_reply("POS -12.5"), Some(Reply::Pos(-12.5)));
        assert_eq!(parse_reply("POS nan"), None);
        assert_eq!(parse_reply("hello"), None);
        assert_eq!(parse_reply("DONE x 1"), None);
    }

    #[test]
    fn manual_is_manual() {
        let mut m = ManualTurntable::default();
        m.start_turn(0.0, 90.0).unwrap();
        let mut out = Vec::new();
        m.poll(100.0, &mut out).unwrap();
        assert!(out.is_empty());
        assert!(m.is_manual());
    }
}
