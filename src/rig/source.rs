//! Real heading sources: serial port, standard input, replay file.
//!
//! Serial and standard input are read on a background thread that stamps every chunk of bytes
//! with `clock.now_s()` when it arrives and runs it through the [`Pipeline`] (decoder, loss
//! watch, health). `drain(now_s)` hands over the events stamped at or before `now_s`. A serial
//! port that disappears (USB unplugged) is closed and reopened at the same path by the thread
//! itself; the silence in between raises `Lost`, the first line after it `Back`.

use super::config::{ReplayPace, Rig, SensorSource};
use super::decoder::{LineDecoder, MAX_LINE_BYTES, Pipeline};
use super::{HeadingSource, RigError, SensorEvent, SensorHealth};
use crate::clock::Clock;
use std::collections::VecDeque;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::Duration;

/// How long one blocking serial read waits before the thread looks at the clock again.
pub const SERIAL_READ_TIMEOUT: Duration = Duration::from_millis(100);
/// Pause between attempts to reopen a vanished serial port.
pub const REOPEN_EVERY: Duration = Duration::from_millis(200);

/// Names a device for an error: the rig file line of its path when known.
pub(crate) fn device_name(rig: &Rig, field: &str, line: Option<usize>, path: &Path) -> String {
    match line {
        Some(l) => format!("{}:{l}: {field}", rig.source_name),
        None => format!("{field} {}", path.display()),
    }
}

/// Opens a serial port for line I/O (raw mode, input flushed so stale bytes are not stamped
/// as new).
pub fn open_serial(path: &Path, baud: u32) -> Result<serialport::TTYPort, serialport::Error> {
    let p = path.to_string_lossy();
    let port = serialport::new(p.as_ref(), baud)
        .timeout(SERIAL_READ_TIMEOUT)
        .open_native()?;
    let _ = serialport::SerialPort::clear(&port, serialport::ClearBuffer::Input);
    Ok(port)
}

/// Opens the heading source a rig describes (serial, stdin or replay). The simulated source is
/// made by [`crate::rig::sim::in_process`] instead.
pub fn open_sensor(rig: &Rig, clock: Arc<dyn Clock>) -> Result<Box<dyn HeadingSource>, RigError> {
    let s = &rig.sensor;
    let pipe = Pipeline::new(
        s.decoder.clone(),
        rig.calibration,
        s.lost_after_s,
        clock.now_s(),
    );
    match &s.source {
        SensorSource::Serial { path, baud } => {
            let port = open_serial(path, *baud).map_err(|e| RigError::Device {
                device: device_name(rig, "sensor.path", s.path_line, path),
                message: format!("cannot open serial port {}: {e}", path.display()),
            })?;
            Ok(Box::new(ThreadSource::serial(
                path.clone(),
                *baud,
                port,
                pipe,
                clock,
            )))
        }
        SensorSource::Stdin => Ok(Box::new(ThreadSource::stdin(pipe, clock))),
        SensorSource::Replay { path, pace } => {
            let f = std::fs::File::open(path).map_err(|e| RigError::Device {
                device: device_name(rig, "sensor.path", s.path_line, path),
                message: format!("cannot open replay file {}: {e}", path.display()),
            })?;
            Ok(Box::new(ReplaySource {
                lines: BoundedLines::new(Box::new(f)),
                probe: LineDecoder::new(s.decoder.clone(), rig.calibration),
                pipe,
                pace: *pace,
                t0_s: clock.now_s(),
                first_device_s: None,
                last_stamp_s: clock.now_s(),
                pending: None,
                eof: false,
                lost_after_s: s.lost_after_s,
                what: format!("replay {} ({:?})", path.display(), pace).to_lowercase(),
            }))
        }
        SensorSource::Sim => Err(RigError::Device {
            device: "sensor.source".into(),
            message: "the simulated sensor is made by rig::sim::in_process, not open_sensor".into(),
        }),
    }
}

struct Shared {
    queue: VecDeque<SensorEvent>,
    pipe: Pipeline,
    status: String,
}

fn lock(m: &Mutex<Shared>) -> MutexGuard<'_, Shared> {
    m.lock().unwrap_or_else(|e| e.into_inner())
}

/// A source read on a background thread.
pub struct ThreadSource {
    shared: Arc<Mutex<Shared>>,
    stop: Arc<AtomicBool>,
    what: String,
    /// Joined on drop (serial: the port is closed before a new open of the same path).
    join: Option<std::thread::JoinHandle<()>>,
}

impl ThreadSource {
    fn new(pipe: Pipeline, what: String) -> (Self, Arc<Mutex<Shared>>, Arc<AtomicBool>) {
        let shared = Arc::new(Mutex::new(Shared {
            queue: VecDeque::new(),
            pipe,
            status: String::new(),
        }));
        let stop = Arc::new(AtomicBool::new(false));
        (
            Self {
                shared: shared.clone(),
                stop: stop.clone(),
                what,
                join: None,
            },
            shared,
            stop,
        )
    }

    fn serial(
        path: PathBuf,
        baud: u32,
        port: serialport::TTYPort,
        pipe: Pipeline,
        clock: Arc<dyn Clock>,
    ) -> Self {
        let (mut me, shared, stop) = Self::new(pipe, format!("serial {} @ {baud}", path.display()));
        match std::thread::Builder::new()
            .name("sensor-serial".into())
            .spawn(move || serial_thread(path, baud, Some(port), shared, stop, clock))
        {
            Ok(h) => me.join = Some(h),
            Err(e) => eprintln!("skybearing: cannot start the sensor thread: {e}"),
        }
        me
    }

    fn stdin(pipe: Pipeline, clock: Arc<dyn Clock>) -> Self {
        let (me, shared, stop) = Self::new(pipe, "stdin".into());
        std::thread::Builder::new()
            .name("sensor-stdin".into())
            .spawn(move || {
                let mut stdin = std::io::stdin().lock();
                let mut buf = [0u8; 4096];
                while !stop.load(Ordering::Relaxed) {
                    match stdin.read(&mut buf) {
                        Ok(0) => {
                            // A last line without a newline is still a line.
                            let t = clock.now_s();
                            let mut g = lock(&shared);
                            let Shared {
                                queue,
                                pipe,
                                status,
                            } = &mut *g;
                            pipe.finish(t, queue);
                            *status = "end of input".into();
                            break;
                        }
                        Ok(n) => {
                            let t = clock.now_s();
                            let mut g = lock(&shared);
                            let Shared { queue, pipe, .. } = &mut *g;
                            pipe.feed(t, &buf[..n], queue);
                        }
                        Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                        Err(e) => {
                            lock(&shared).status = format!("read error: {e}");
                            break;
                        }
                    }
                }
            })
            .map(|_| ())
            .unwrap_or_else(|e| eprintln!("skybearing: cannot start the stdin thread: {e}"));
        me
    }
}

/// A serial port read with one system call per wake-up: the terminal is set to VMIN = 0,
/// VTIME = 1, so `read` returns with the first bytes that arrive, or with none after 0.1 s.
/// (serialport's own `read` polls first and then reads: two calls per line.) A read that
/// returns nothing long before 0.1 s is an end of file: the device went away.
struct TimedPort {
    port: serialport::TTYPort,
}

impl TimedPort {
    fn new(port: serialport::TTYPort) -> std::io::Result<Self> {
        use std::os::fd::AsRawFd;
        let fd = port.as_raw_fd();
        // SAFETY: termios is plain data filled by tcgetattr from an open fd.
        unsafe {
            let mut t: libc::termios = std::mem::zeroed();
            if libc::tcgetattr(fd, &mut t) != 0 {
                return Err(std::io::Error::last_os_error());
            }
            t.c_cc[libc::VMIN] = 0;
            t.c_cc[libc::VTIME] = 1;
            if libc::tcsetattr(fd, libc::TCSANOW, &t) != 0 {
                return Err(std::io::Error::last_os_error());
            }
        }
        Ok(Self { port })
    }

    /// Bytes read; `TimedOut` when none came within 0.1 s; any other error: gone.
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        use std::os::fd::AsRawFd;
        let start = std::time::Instant::now();
        // SAFETY: buf is valid for writes of its length; the fd is owned by self.port.
        let n = unsafe { libc::read(self.port.as_raw_fd(), buf.as_mut_ptr().cast(), buf.len()) };
        if n < 0 {
            return Err(std::io::Error::last_os_error());
        }
        if n == 0 {
            if start.elapsed() < Duration::from_millis(50) {
                return Err(std::io::Error::new(
                    std::io::ErrorKind::UnexpectedEof,
                    "end of file (device gone)",
                ));
            }
            return Err(std::io::Error::new(std::io::ErrorKind::TimedOut, "no data"));
        }
        Ok(n as usize)
    }
}

fn open_timed(path: &Path, baud: u32) -> Option<TimedPort> {
    open_serial(path, baud)
        .ok()
        .and_then(|p| TimedPort::new(p).ok())
}

fn serial_thread(
    path: PathBuf,
    baud: u32,
    port: Option<serialport::TTYPort>,
    shared: Arc<Mutex<Shared>>,
    stop: Arc<AtomicBool>,
    clock: Arc<dyn Clock>,
) {
    let mut buf = [0u8; 4096];
    let mut port = port.and_then(|p| TimedPort::new(p).ok());
    while !stop.load(Ordering::Relaxed) {
        match port.as_mut() {
            Some(p) => match p.read(&mut buf) {
                Ok(0) => {
                    disconnect(&shared, &clock, "end of data");
                    port = None;
                }
                Ok(n) => {
                    let t = clock.now_s();
                    let mut g = lock(&shared);
                    let Shared { queue, pipe, .. } = &mut *g;
                    pipe.feed(t, &buf[..n], queue);
                }
                Err(e)
                    if matches!(
                        e.kind(),
                        std::io::ErrorKind::TimedOut
                            | std::io::ErrorKind::Interrupted
                            | std::io::ErrorKind::WouldBlock
                    ) => {}
                Err(e) => {
                    disconnect(&shared, &clock, &e.to_string());
                    port = None;
                }
            },
            None => {
                std::thread::sleep(REOPEN_EVERY);
                if let Some(p) = open_timed(&path, baud) {
                    lock(&shared).status = "reopened".into();
                    port = Some(p);
                }
            }
        }
    }
}

fn disconnect(shared: &Mutex<Shared>, clock: &Arc<dyn Clock>, why: &str) {
    let t = clock.now_s();
    let mut g = lock(shared);
    let Shared {
        queue,
        pipe,
        status,
    } = &mut *g;
    pipe.disconnected(t, queue);
    *status = format!("disconnected ({why}), reopening");
}

impl Drop for ThreadSource {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.join.take() {
            let _ = h.join();
        }
    }
}

fn drain_queue(queue: &mut VecDeque<SensorEvent>, now_s: f64, out: &mut Vec<SensorEvent>) {
    while let Some(ev) = queue.front() {
        if event_time(ev) > now_s {
            break;
        }
        if let Some(ev) = queue.pop_front() {
            out.push(ev);
        }
    }
}

/// The time stamp of any sensor event.
pub fn event_time(ev: &SensorEvent) -> f64 {
    match ev {
        SensorEvent::Sample { t_s, .. }
        | SensorEvent::Malformed { t_s, .. }
        | SensorEvent::Lost { t_s }
        | SensorEvent::Back { t_s } => *t_s,
    }
}

impl HeadingSource for ThreadSource {
    fn drain(&mut self, now_s: f64, out: &mut Vec<SensorEvent>) -> Result<(), RigError> {
        let mut g = lock(&self.shared);
        let Shared { queue, pipe, .. } = &mut *g;
        pipe.tick(now_s, queue);
        drain_queue(queue, now_s, out);
        Ok(())
    }

    fn health(&self) -> SensorHealth {
        lock(&self.shared).pipe.health.health()
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

/// One line read by [`BoundedLines`].
#[derive(Debug, Clone, PartialEq)]
pub enum ReadLine {
    /// A whole line without its terminator.
    Line(Vec<u8>),
    /// A line longer than [`MAX_LINE_BYTES`]: its first bytes (the rest is skipped).
    TooLong(Vec<u8>),
    /// Bytes of an over-long line were skipped and it has not ended yet: call again.
    Skipping,
    /// End of input.
    End,
}

/// Lines of a byte stream with the stream decoder's limits: split on '\n', "\r\n" and a lone
/// '\r'; a line holds at most [`MAX_LINE_BYTES`] bytes (a longer one is reported once as
/// [`ReadLine::TooLong`] and skipped to its end, so `/dev/zero` never grows memory); a last line
/// without a terminator is returned at the end of input. Each call consumes at most one buffer
/// of input, so a never-ending line cannot hold the caller.
pub struct BoundedLines {
    reader: BufReader<Box<dyn Read + Send>>,
    line: Vec<u8>,
    skipping: bool,
    after_cr: bool,
    end: bool,
}

impl BoundedLines {
    /// Lines of `reader`.
    pub fn new(reader: Box<dyn Read + Send>) -> Self {
        Self {
            reader: BufReader::new(reader),
            line: Vec::with_capacity(MAX_LINE_BYTES + 1),
            skipping: false,
            after_cr: false,
            end: false,
        }
    }

    /// The next line (or a step through an over-long one).
    pub fn next_line(&mut self) -> std::io::Result<ReadLine> {
        loop {
            if self.end {
                return Ok(ReadLine::End);
            }
            let buf = match self.reader.fill_buf() {
                Ok(b) => b,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(e),
            };
            if buf.is_empty() {
                self.end = true;
                if self.skipping {
                    self.skipping = false;
                    return Ok(ReadLine::End);
                }
                if self.line.is_empty() {
                    return Ok(ReadLine::End);
                }
                return Ok(ReadLine::Line(std::mem::take(&mut self.line)));
            }
            // A '\n' right after a '\r' (maybe across reads) ends nothing.
            if self.after_cr && buf[0] == b'\n' {
                self.after_cr = false;
                self.reader.consume(1);
                continue;
            }
            self.after_cr = false;
            let (n, ended) = match buf.iter().position(|&b| b == b'\n' || b == b'\r') {
                Some(i) => {
                    self.after_cr = buf[i] == b'\r';
                    (i, true)
                }
                None => (buf.len(), false),
            };
            let mut reported = None;
            if !self.skipping {
                let room = MAX_LINE_BYTES + 1 - self.line.len();
                self.line.extend_from_slice(&buf[..n.min(room)]);
                if self.line.len() > MAX_LINE_BYTES {
                    self.line.truncate(MAX_LINE_BYTES);
                    reported = Some(ReadLine::TooLong(std::mem::take(&mut self.line)));
                    self.skipping = !ended;
                }
            }
            self.reader.consume(if ended { n + 1 } else { n });
            if let Some(r) = reported {
                return Ok(r);
            }
            if ended {
                if std::mem::replace(&mut self.skipping, false) {
                    continue;
                }
                return Ok(ReadLine::Line(std::mem::take(&mut self.line)));
            }
            if self.skipping {
                return Ok(ReadLine::Skipping);
            }
        }
    }
}

/// A recorded file of lines, played at its recorded device times or as fast as it is read.
pub struct ReplaySource {
    lines: BoundedLines,
    probe: LineDecoder,
    pipe: Pipeline,
    pace: ReplayPace,
    t0_s: f64,
    first_device_s: Option<f64>,
    last_stamp_s: f64,
    pending: Option<(f64, ReadLine)>,
    eof: bool,
    lost_after_s: f64,
    what: String,
}

/// Lines handed over per `drain` call at `pace = "fast"`.
pub const FAST_REPLAY_LINES_PER_DRAIN: usize = 10_000;

/// Steps through an over-long line allowed per `drain` call (each at most one read buffer):
/// a never-ending line (`/dev/zero`) costs a bounded amount of work per call.
pub const REPLAY_SKIPS_PER_DRAIN: usize = 64;

impl ReplaySource {
    /// The next line or over-long line; `None` at the end of the file or when the skip budget
    /// of this call is spent.
    fn next_line(&mut self, skips: &mut usize) -> Result<Option<ReadLine>, RigError> {
        if self.eof {
            return Ok(None);
        }
        loop {
            match self.lines.next_line()? {
                ReadLine::End => {
                    self.eof = true;
                    return Ok(None);
                }
                ReadLine::Skipping => {
                    *skips += 1;
                    if *skips >= REPLAY_SKIPS_PER_DRAIN {
                        return Ok(None);
                    }
                }
                other => return Ok(Some(other)),
            }
        }
    }

    fn feed(&mut self, t_s: f64, line: &ReadLine, out: &mut Vec<SensorEvent>) {
        match line {
            ReadLine::Line(l) => self.pipe.line(t_s, l, out),
            ReadLine::TooLong(head) => self.pipe.too_long(t_s, head, out),
            ReadLine::Skipping | ReadLine::End => {}
        }
    }
}

impl HeadingSource for ReplaySource {
    fn drain(&mut self, now_s: f64, out: &mut Vec<SensorEvent>) -> Result<(), RigError> {
        match self.pace {
            ReplayPace::Fast => {
                let mut skips = 0;
                for _ in 0..FAST_REPLAY_LINES_PER_DRAIN {
                    let Some(line) = self.next_line(&mut skips)? else {
                        break;
                    };
                    self.feed(now_s, &line, out);
                    self.last_stamp_s = now_s;
                }
            }
            ReplayPace::Recorded => {
                let mut skips = 0;
                loop {
                    if self.pending.is_none() {
                        let Some(line) = self.next_line(&mut skips)? else {
                            break;
                        };
                        let probed = match &line {
                            ReadLine::Line(l) => self.probe.decode_line(0.0, l),
                            _ => None,
                        };
                        let stamp = match probed {
                            Some(SensorEvent::Sample {
                                device_time_s: Some(d),
                                ..
                            }) => {
                                let first = *self.first_device_s.get_or_insert(d);
                                (self.t0_s + d - first).max(self.last_stamp_s)
                            }
                            _ => self.last_stamp_s,
                        };
                        self.last_stamp_s = stamp;
                        self.pending = Some((stamp, line));
                    }
                    match self.pending.take() {
                        Some((stamp, line)) if stamp <= now_s => self.feed(stamp, &line, out),
                        other => {
                            self.pending = other;
                            break;
                        }
                    }
                }
            }
        }
        self.pipe.tick(now_s, out);
        Ok(())
    }

    fn health(&self) -> SensorHealth {
        self.pipe.health.health()
    }

    fn exhausted_at_s(&self) -> Option<f64> {
        // Noticed like a lost sensor: `lost_after_s` after the last line's stamp.
        (self.eof && self.pending.is_none()).then_some(self.last_stamp_s + self.lost_after_s)
    }

    fn describe(&self) -> String {
        if self.eof && self.pending.is_none() {
            format!("{} (end of file)", self.what)
        } else {
            self.what.clone()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::clock::SimClock;
    use crate::rig::config::{ReplayPace, demo_rig};

    #[test]
    fn replay_recorded_pace_and_loss_at_gap() {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("r.csv");
        std::fs::write(&f, "10,1000\n20,1100\nbad\n30,1200\n40,3500\n").unwrap();
        let mut rig = demo_rig();
        rig.sensor.source = SensorSource::Replay {
            path: f,
            pace: ReplayPace::Recorded,
        };
        let clock = SimClock::new();
        clock.advance_to(5.0);
        let mut src = open_sensor(&rig, Arc::new(clock)).unwrap();
        let mut out = Vec::new();
        src.drain(5.15, &mut out).unwrap();
        assert_eq!(out.len(), 3);
        src.drain(8.0, &mut out).unwrap();
        let ts: Vec<(f64, &str)> = out
            .iter()
            .map(|e| {
                (
                    event_time(e),
                    match e {
                        SensorEvent::Sample { .. } => "S",
                        SensorEvent::Malformed { .. } => "M",
                        SensorEvent::Lost { .. } => "L",
                        SensorEvent::Back { .. } => "B",
                    },
                )
            })
            .collect();
        let want = [
            (5.0, "S"),
            (5.1, "S"),
            (5.1, "M"),
            (5.2, "S"),
            (6.2, "L"),
            (7.5, "B"),
            (7.5, "S"),
            (8.5, "L"),
        ];
        assert_eq!(ts.len(), want.len() - 1, "{ts:?}");
        for (a, b) in ts.iter().zip(want.iter()) {
            assert!((a.0 - b.0).abs() < 1e-9 && a.1 == b.1, "{ts:?}");
        }
    }

    #[test]
    fn replay_fast_pace_stamps_when_read() {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("r.txt");
        std::fs::write(&f, "10\r\n\r\n20\nnan\n30").unwrap();
        let mut rig = demo_rig();
        rig.sensor.decoder.time_column = None;
        rig.sensor.source = SensorSource::Replay {
            path: f,
            pace: ReplayPace::Fast,
        };
        let mut src = open_sensor(&rig, Arc::new(SimClock::new())).unwrap();
        let mut out = Vec::new();
        src.drain(0.5, &mut out).unwrap();
        let raws: Vec<f64> = out
            .iter()
            .filter_map(|e| match e {
                SensorEvent::Sample { raw, t_s, .. } if *t_s == 0.5 => Some(*raw),
                _ => None,
            })
            .collect();
        assert_eq!(raws, [10.0, 20.0, 30.0]);
        assert_eq!(src.health().malformed, 1);
        assert!(src.describe().ends_with("(end of file)"));
        out.clear();
        src.drain(2.0, &mut out).unwrap();
        assert_eq!(out, [SensorEvent::Lost { t_s: 1.5 }]);
    }

    #[test]
    fn unreadable_port_names_file_line_field() {
        let text =
            crate::rig::config::filled_example().replace("/dev/ttyUSB0", "/nonexistent/ttyNOPE");
        let rig = crate::rig::config::parse_rig(&text, "rig.toml").unwrap();
        let e = open_sensor(&rig, Arc::new(SimClock::new()))
            .err()
            .unwrap()
            .to_string();
        assert!(
            e.starts_with("rig.toml:28: sensor.path: cannot open serial port /nonexistent/ttyNOPE"),
            "{e}"
        );
        assert!(!e.contains('\n'));
    }
}
