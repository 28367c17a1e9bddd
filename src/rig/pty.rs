//! The simulated rig served over pseudo-terminals in real time (`skybearing sim`).
//!
//! Two pseudo-terminal pairs: the simulated heading sensor writes its lines on one, the
//! simulated turntable answers the turntable protocol (docs/turntable-protocol.md) on the
//! other. Each slave is reached through a symbolic link whose path never changes, so an
//! "unplug" (the sensor's pair is closed and, after the pause, a new one made and the link
//! pointed at it) looks to the reader like a USB adapter pulled out and plugged in again.

use super::sim::{SimConfig, SimWorld};
use super::turntable::parse_reply;
use std::io;
use std::os::fd::{AsRawFd, FromRawFd, OwnedFd};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// One pseudo-terminal pair, in raw mode, master non-blocking.
pub struct Pty {
    master: OwnedFd,
    _slave: OwnedFd,
    /// The slave's path (/dev/pts/N).
    pub slave_path: PathBuf,
}

impl Pty {
    /// Opens a new pair.
    pub fn open() -> io::Result<Self> {
        let mut master: libc::c_int = -1;
        let mut slave: libc::c_int = -1;
        // SAFETY: openpty writes two fds into the out-pointers; null name/termios/winsize are
        // allowed.
        let rc = unsafe {
            libc::openpty(
                &mut master,
                &mut slave,
                std::ptr::null_mut(),
                std::ptr::null(),
                std::ptr::null(),
            )
        };
        if rc != 0 {
            return Err(io::Error::last_os_error());
        }
        // SAFETY: both fds were just returned by openpty and are owned by nobody else.
        let (master, slave) =
            unsafe { (OwnedFd::from_raw_fd(master), OwnedFd::from_raw_fd(slave)) };
        // Raw mode on the slave: no echo, no line editing, no CR/LF translation.
        // SAFETY: termios is plain data; tcgetattr fills it from a valid fd.
        unsafe {
            let mut t: libc::termios = std::mem::zeroed();
            if libc::tcgetattr(slave.as_raw_fd(), &mut t) != 0 {
                return Err(io::Error::last_os_error());
            }
            libc::cfmakeraw(&mut t);
            if libc::tcsetattr(slave.as_raw_fd(), libc::TCSANOW, &t) != 0 {
                return Err(io::Error::last_os_error());
            }
            let fl = libc::fcntl(master.as_raw_fd(), libc::F_GETFL);
            if fl < 0 || libc::fcntl(master.as_raw_fd(), libc::F_SETFL, fl | libc::O_NONBLOCK) < 0 {
                return Err(io::Error::last_os_error());
            }
        }
        let mut buf = [0 as libc::c_char; 128];
        // SAFETY: buf is writable for its length.
        let rc = unsafe { libc::ptsname_r(master.as_raw_fd(), buf.as_mut_ptr(), buf.len()) };
        if rc != 0 {
            return Err(io::Error::from_raw_os_error(rc));
        }
        // SAFETY: ptsname_r wrote a NUL-terminated string into buf.
        let name = unsafe { std::ffi::CStr::from_ptr(buf.as_ptr()) };
        Ok(Self {
            master,
            _slave: slave,
            slave_path: PathBuf::from(name.to_string_lossy().into_owned()),
        })
    }

    /// Writes as much as the terminal takes now; returns the bytes written (0 when full).
    pub fn write_some(&self, bytes: &[u8]) -> io::Result<usize> {
        // SAFETY: bytes is valid for reads of its length.
        let n = unsafe { libc::write(self.master.as_raw_fd(), bytes.as_ptr().cast(), bytes.len()) };
        if n < 0 {
            let e = io::Error::last_os_error();
            if e.kind() == io::ErrorKind::WouldBlock {
                return Ok(0);
            }
            return Err(e);
        }
        Ok(n as usize)
    }

    /// Reads what is there now (0 when nothing).
    pub fn read_some(&self, buf: &mut [u8]) -> io::Result<usize> {
        // SAFETY: buf is valid for writes of its length.
        let n = unsafe { libc::read(self.master.as_raw_fd(), buf.as_mut_ptr().cast(), buf.len()) };
        if n < 0 {
            let e = io::Error::last_os_error();
            if matches!(
                e.kind(),
                io::ErrorKind::WouldBlock | io::ErrorKind::Interrupted
            ) {
                return Ok(0);
            }
            // EIO: no slave open at the moment.
            if e.raw_os_error() == Some(libc::EIO) {
                return Ok(0);
            }
            return Err(e);
        }
        Ok(n as usize)
    }
}

/// Points `link` at `target`, replacing any old link atomically.
pub fn relink(link: &Path, target: &Path) -> io::Result<()> {
    let tmp = link.with_extension("tmp-link");
    let _ = std::fs::remove_file(&tmp);
    std::os::unix::fs::symlink(target, &tmp)?;
    std::fs::rename(&tmp, link)
}

/// Something worth a line on the operator's screen.
#[derive(Debug, Clone, PartialEq)]
pub enum SimNotice {
    /// The sensor was unplugged.
    Unplugged,
    /// The sensor is back, on this new slave.
    Replugged(PathBuf),
    /// A turn command arrived.
    TurnCommand {
        /// Turn id.
        id: u64,
        /// Degrees.
        by_deg: f64,
        /// False when the turntable is stalled and will not answer.
        accepted: bool,
    },
    /// The turn finished and DONE was sent.
    TurnDone {
        /// Turn id.
        id: u64,
        /// Position after the turn.
        position_deg: f64,
    },
    /// The animal stopped or restarted flying (for the operator to mark).
    Flight(bool),
    /// A line the turntable did not understand.
    Unknown(String),
}

/// One line the sensor sent, for tests: arrival time, the line, garbage or not.
#[derive(Debug, Clone, PartialEq)]
pub struct SentLine {
    /// Seconds since serving began.
    pub t_s: f64,
    /// The line without terminator.
    pub line: String,
}

/// The simulated rig on pseudo-terminals.
pub struct PtyServer {
    world: SimWorld,
    sensor: Option<Pty>,
    turntable: Pty,
    /// Stable path of the sensor's slave (a symbolic link).
    pub sensor_link: PathBuf,
    /// Stable path of the turntable's slave (a symbolic link).
    pub turntable_link: PathBuf,
    start: Option<Instant>,
    lines: Vec<(f64, String)>,
    rx: Vec<u8>,
    dropped: u64,
    last_flying: bool,
    /// Every line sent, when recording (tests).
    pub record: Option<Vec<SentLine>>,
}

impl PtyServer {
    /// Opens both pairs and their links (`<prefix>-sensor.tty`, `<prefix>-turntable.tty`).
    pub fn new(cfg: SimConfig, link_prefix: &Path) -> io::Result<Self> {
        let sensor = Pty::open()?;
        let turntable = Pty::open()?;
        let name = link_prefix
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "sim".into());
        let dir = link_prefix.parent().unwrap_or(Path::new("."));
        let sensor_link = dir.join(format!("{name}-sensor.tty"));
        let turntable_link = dir.join(format!("{name}-turntable.tty"));
        relink(&sensor_link, &sensor.slave_path)?;
        relink(&turntable_link, &turntable.slave_path)?;
        Ok(Self {
            world: SimWorld::new(cfg),
            sensor: Some(sensor),
            turntable,
            sensor_link,
            turntable_link,
            start: None,
            lines: Vec::new(),
            rx: Vec::new(),
            dropped: 0,
            last_flying: true,
            record: None,
        })
    }

    /// The sensor's current slave path.
    pub fn sensor_slave(&self) -> Option<&Path> {
        self.sensor.as_ref().map(|p| p.slave_path.as_path())
    }

    /// The turntable's slave path.
    pub fn turntable_slave(&self) -> &Path {
        &self.turntable.slave_path
    }

    /// The simulated world (counters, flight state).
    pub fn world(&self) -> &SimWorld {
        &self.world
    }

    /// The simulated world, to change (tests).
    pub fn world_mut(&mut self) -> &mut SimWorld {
        &mut self.world
    }

    /// Lines dropped because nobody read the sensor's terminal.
    pub fn dropped(&self) -> u64 {
        self.dropped
    }

    /// Seconds since serving began.
    pub fn now_s(&self) -> f64 {
        self.start.map_or(0.0, |s| s.elapsed().as_secs_f64())
    }

    /// Does everything due now: sensor lines, unplug and replug, turntable commands and
    /// replies. Notices go to `notices`.
    pub fn step(&mut self, notices: &mut Vec<SimNotice>) -> io::Result<()> {
        let start = *self.start.get_or_insert_with(Instant::now);
        let now = start.elapsed().as_secs_f64();
        // Unplug window.
        let cfg = self.world.config();
        let unplugged = cfg
            .unplug_at_s
            .is_some_and(|at| now >= at && now < at + cfg.unplug_for_s);
        if unplugged && self.sensor.is_some() {
            self.sensor = None;
            let _ = std::fs::remove_file(&self.sensor_link);
            notices.push(SimNotice::Unplugged);
        } else if !unplugged && self.sensor.is_none() {
            let p = Pty::open()?;
            relink(&self.sensor_link, &p.slave_path)?;
            notices.push(SimNotice::Replugged(p.slave_path.clone()));
            self.sensor = Some(p);
        }
        // Sensor lines.
        self.lines.clear();
        self.world.generate_lines(now, &mut self.lines);
        for (t, line) in self.lines.drain(..) {
            let Some(p) = &self.sensor else { continue };
            let bytes = format!("{line}\r\n");
            let n = p.write_some(bytes.as_bytes())?;
            if n < bytes.len() {
                // The terminal is full: nobody reads. A part written stays a partial line.
                self.dropped += 1;
                if n > 0 {
                    let _ = p.write_some(&bytes.as_bytes()[n..]);
                }
                continue;
            }
            if let Some(r) = &mut self.record {
                r.push(SentLine { t_s: t, line });
            }
        }
        if self.world.flying() != self.last_flying {
            self.last_flying = self.world.flying();
            notices.push(SimNotice::Flight(self.last_flying));
        }
        // Turntable commands.
        let mut buf = [0u8; 512];
        loop {
            let n = self.turntable.read_some(&mut buf)?;
            if n == 0 {
                break;
            }
            self.rx.extend_from_slice(&buf[..n]);
        }
        while let Some(i) = self.rx.iter().position(|&b| b == b'\n' || b == b'\r') {
            let line: Vec<u8> = self.rx.drain(..=i).collect();
            let text = String::from_utf8_lossy(&line).trim().to_string();
            if text.is_empty() {
                continue;
            }
            self.command(now, &text, notices)?;
        }
        if self.rx.len() > 1024 {
            self.rx.clear();
        }
        let mut replies = Vec::new();
        self.world.due_replies(now, &mut replies);
        for (_, id, pos) in replies {
            self.turntable
                .write_some(format!("DONE {id} {pos:.3}\r\n").as_bytes())?;
            notices.push(SimNotice::TurnDone {
                id,
                position_deg: pos,
            });
        }
        Ok(())
    }

    fn command(&mut self, now: f64, text: &str, notices: &mut Vec<SimNotice>) -> io::Result<()> {
        let stalled = self.world.config().stall_turntable;
        let mut parts = text.split_whitespace();
        match (parts.next(), parts.next(), parts.next()) {
            (Some("TURN"), Some(id), Some(deg)) => match (id.parse::<u64>(), deg.parse::<f64>()) {
                (Ok(id), Ok(by)) if by.is_finite() && id > 0 => {
                    let accepted = self.world.start_turn(now, id, by);
                    notices.push(SimNotice::TurnCommand {
                        id,
                        by_deg: by,
                        accepted,
                    });
                }
                _ if !stalled => {
                    let id = id.parse::<u64>().unwrap_or(0);
                    self.turntable
                        .write_some(format!("FAULT {id} bad TURN command\r\n").as_bytes())?;
                }
                _ => {}
            },
            (Some("POS?"), None, None) if !stalled => {
                let pos = self.world.rotation_deg(now);
                self.turntable
                    .write_some(format!("POS {pos:.3}\r\n").as_bytes())?;
            }
            _ => {
                if !stalled && parse_reply(text).is_none() {
                    notices.push(SimNotice::Unknown(text.chars().take(60).collect()));
                }
            }
        }
        Ok(())
    }

    /// How long to sleep between steps.
    pub fn pause(&self) -> Duration {
        let rate = self.world.config().rate_hz.max(1.0);
        Duration::from_secs_f64((0.5 / rate).clamp(0.0002, 0.01))
    }

    /// Serves until `stop` is set (or `for_s` seconds have passed), calling `notify` with each
    /// notice.
    pub fn serve(
        &mut self,
        stop: &AtomicBool,
        for_s: Option<f64>,
        mut notify: impl FnMut(f64, &SimNotice),
    ) -> io::Result<()> {
        let mut notices = Vec::new();
        while !stop.load(Ordering::Relaxed) {
            self.step(&mut notices)?;
            let now = self.now_s();
            for n in notices.drain(..) {
                notify(now, &n);
            }
            if for_s.is_some_and(|f| now >= f) {
                break;
            }
            std::thread::sleep(self.pause());
        }
        Ok(())
    }

    /// A rig file (TOML text) whose sensor and turntable are these terminals.
    pub fn rig_text(&self, seed: u64, lost_after_s: f64, timeout_s: f64) -> String {
        let site = crate::sky::demo_site();
        format!(
            r#"# written by skybearing sim (seed {seed}): a simulated rig on pseudo-terminals.
# Valid while `skybearing sim` runs; the .tty paths are links to its terminals.
sessions_dir = "sessions"

[site]
name = "{name}"
latitude_deg = {lat}
longitude_deg = {lon}
elevation_m = {elev}
time_zone = "Europe/Paris"

[arena]
mark_bearing_deg = {mark}
mark_reference = "true"

[sensor]
source = "serial"
path = "{spath}"
baud = 115200
lost_after_s = {lost_after_s}
delimiter = ","
value_column = 1
time_column = 2
time_unit = "ms"
unit = "degrees"
direction = "clockwise"
zero_offset_deg = 0.0

[turntable]
kind = "serial"
path = "{tpath}"
baud = 115200
timeout_s = {timeout_s}
"#,
            name = site.name,
            lat = site.latitude_deg,
            lon = site.longitude_deg,
            elev = site.elevation_m,
            mark = self.world.config().arena_mark_true_bearing_deg,
            spath = self.sensor_link.display(),
            tpath = self.turntable_link.display(),
        )
    }

    /// Removes the links.
    pub fn remove_links(&self) {
        let _ = std::fs::remove_file(&self.sensor_link);
        let _ = std::fs::remove_file(&self.turntable_link);
    }
}

/// Marker on the first line of a rig file written by `skybearing sim` (such a file may be
/// overwritten; any other file is refused).
pub const SIM_RIG_MARKER: &str = "# written by skybearing sim";
