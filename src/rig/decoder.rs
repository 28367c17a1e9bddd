//! The heading line decoder, live health figures and loss detection.
//!
//! One line per sample, '\n', '\r' or "\r\n" terminated; columns split by the configured
//! delimiter. Blank lines are skipped (counted in [`DecoderStats::blank`], not reported); every
//! other line becomes either a [`SensorEvent::Sample`] or a [`SensorEvent::Malformed`] carrying
//! the reason and the offending text truncated to [`MAX_SHOWN_CHARS`] characters. Nothing is
//! ever fatal and nothing is interpolated.

use super::config::DecoderConfig;
use super::{SensorEvent, SensorHealth};
use crate::frames::SensorCalibration;
use std::collections::VecDeque;

/// Longest accepted line in bytes; anything longer is one malformed line.
pub const MAX_LINE_BYTES: usize = 256;
/// Characters of an offending line kept in a `Malformed` event.
pub const MAX_SHOWN_CHARS: usize = 60;

/// Counters of the decoder.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct DecoderStats {
    /// Non-blank lines seen.
    pub lines: u64,
    /// Lines that gave a sample.
    pub samples: u64,
    /// Lines rejected.
    pub malformed: u64,
    /// Blank lines skipped.
    pub blank: u64,
}

/// Splits a byte stream into lines and decodes each line.
#[derive(Debug, Clone)]
pub struct LineDecoder {
    cfg: DecoderConfig,
    cal: SensorCalibration,
    max_abs_deg: f64,
    buf: Vec<u8>,
    /// Discarding the rest of an overlong line.
    skipping: bool,
    /// The last terminator was '\r' (so a '\n' right after it ends nothing).
    after_cr: bool,
    stats: DecoderStats,
}

/// A received line as text with nothing lost: valid UTF-8 as is, a backslash as `\\`,
/// control characters and bytes that are not UTF-8 as `\xNN` (one per byte).
pub fn escape_raw_line(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len());
    let hex = |out: &mut String, b: u8| out.push_str(&format!("\\x{b:02x}"));
    for chunk in bytes.utf8_chunks() {
        for c in chunk.valid().chars() {
            match c {
                '\\' => out.push_str("\\\\"),
                c if c.is_control() => {
                    let mut buf = [0u8; 4];
                    for b in c.encode_utf8(&mut buf).bytes() {
                        hex(&mut out, b);
                    }
                }
                c => out.push(c),
            }
        }
        for &b in chunk.invalid() {
            hex(&mut out, b);
        }
    }
    out
}

/// The offending text for a `Malformed` event: lossy UTF-8, control characters shown as '?',
/// at most [`MAX_SHOWN_CHARS`] characters (an ellipsis marks a cut).
pub fn shown_text(bytes: &[u8]) -> String {
    let s = String::from_utf8_lossy(bytes);
    let mut out: String = s
        .chars()
        .take(MAX_SHOWN_CHARS)
        .map(|c| if c.is_control() { '?' } else { c })
        .collect();
    if s.chars().nth(MAX_SHOWN_CHARS).is_some() {
        out.push('…');
    }
    out
}

impl LineDecoder {
    /// A decoder for one rig's line format and calibration.
    pub fn new(cfg: DecoderConfig, cal: SensorCalibration) -> Self {
        let max_abs_deg = cfg.max_abs_revolutions * 360.0;
        Self {
            cfg,
            cal,
            max_abs_deg,
            buf: Vec::with_capacity(MAX_LINE_BYTES),
            skipping: false,
            after_cr: false,
            stats: DecoderStats::default(),
        }
    }

    /// Counters so far.
    pub fn stats(&self) -> DecoderStats {
        self.stats
    }

    /// True when a partial line is waiting for its end.
    pub fn has_partial(&self) -> bool {
        !self.buf.is_empty() || self.skipping
    }

    /// Feeds bytes that arrived at `t_s`; every line they complete is decoded into `out`.
    pub fn feed(&mut self, t_s: f64, bytes: &[u8], out: &mut Vec<SensorEvent>) {
        let mut rest = bytes;
        while !rest.is_empty() {
            match rest.iter().position(|&b| b == b'\n' || b == b'\r') {
                Some(i) => {
                    let (head, tail) = rest.split_at(i);
                    rest = &tail[1..];
                    let is_cr = tail[0] == b'\r';
                    let crlf = !is_cr && self.after_cr && head.is_empty();
                    self.after_cr = is_cr;
                    if crlf {
                        continue;
                    }
                    if self.skipping {
                        self.skipping = false;
                        continue;
                    }
                    if self.buf.is_empty() {
                        if head.len() > MAX_LINE_BYTES {
                            self.too_long(t_s, head, out);
                        } else if let Some(ev) = self.decode_line(t_s, head) {
                            out.push(ev);
                        }
                    } else {
                        self.append(t_s, head, out);
                        if !self.skipping {
                            let line = std::mem::take(&mut self.buf);
                            if let Some(ev) = self.decode_line(t_s, &line) {
                                out.push(ev);
                            }
                            self.buf = line;
                            self.buf.clear();
                        } else {
                            self.skipping = false;
                        }
                    }
                }
                None => {
                    self.after_cr = false;
                    if !self.skipping {
                        self.append(t_s, rest, out);
                    }
                    rest = &[];
                }
            }
        }
    }

    fn append(&mut self, t_s: f64, bytes: &[u8], out: &mut Vec<SensorEvent>) {
        if self.buf.len() + bytes.len() > MAX_LINE_BYTES {
            let mut all = std::mem::take(&mut self.buf);
            all.extend_from_slice(&bytes[..bytes.len().min(MAX_LINE_BYTES)]);
            self.too_long(t_s, &all, out);
            self.buf = all;
            self.buf.clear();
            self.skipping = true;
        } else {
            self.buf.extend_from_slice(bytes);
        }
    }

    /// Counts and reports a line longer than [`MAX_LINE_BYTES`] (`bytes`: its first bytes).
    pub fn too_long(&mut self, t_s: f64, bytes: &[u8], out: &mut Vec<SensorEvent>) {
        self.stats.lines += 1;
        self.stats.malformed += 1;
        out.push(SensorEvent::Malformed {
            t_s,
            reason: format!("line longer than {MAX_LINE_BYTES} bytes"),
            text: shown_text(bytes),
            line: escape_raw_line(&bytes[..bytes.len().min(MAX_LINE_BYTES)]),
        });
    }

    /// Drops a partial line (for example cut off by a disconnect); returns it as a malformed
    /// event if there was one.
    pub fn discard_partial(&mut self, t_s: f64, why: &str) -> Option<SensorEvent> {
        let skipping = std::mem::replace(&mut self.skipping, false);
        if self.buf.is_empty() {
            return None;
        }
        let ev = if skipping {
            None
        } else {
            self.stats.lines += 1;
            self.stats.malformed += 1;
            Some(SensorEvent::Malformed {
                t_s,
                reason: why.to_string(),
                text: shown_text(&self.buf),
                line: escape_raw_line(&self.buf),
            })
        };
        self.buf.clear();
        ev
    }

    /// The end of the input: a partial last line (no terminator) is decoded as a whole line.
    pub fn finish(&mut self, t_s: f64, out: &mut Vec<SensorEvent>) {
        if std::mem::replace(&mut self.skipping, false) {
            self.buf.clear();
            return;
        }
        self.after_cr = false;
        let line = std::mem::take(&mut self.buf);
        if let Some(ev) = self.decode_line(t_s, &line) {
            out.push(ev);
        }
        self.buf = line;
        self.buf.clear();
    }

    fn malformed(&mut self, t_s: f64, reason: String, line: &[u8]) -> Option<SensorEvent> {
        self.stats.malformed += 1;
        Some(SensorEvent::Malformed {
            t_s,
            reason,
            text: shown_text(line),
            line: escape_raw_line(line),
        })
    }

    /// Decodes one line without its terminator. `None` for a blank line (skipped).
    pub fn decode_line(&mut self, t_s: f64, line: &[u8]) -> Option<SensorEvent> {
        if line.iter().all(|b| b.is_ascii_whitespace()) {
            self.stats.blank += 1;
            return None;
        }
        self.stats.lines += 1;
        let Ok(text) = std::str::from_utf8(line) else {
            return self.malformed(t_s, "not text (invalid UTF-8)".into(), line);
        };
        let text = text.trim();
        let want_value = self.cfg.value_column - 1;
        let want_time = self.cfg.time_column.map(|c| c - 1);
        let last = want_value.max(want_time.unwrap_or(0));
        let mut value_s: Option<&str> = None;
        let mut time_s: Option<&str> = None;
        let mut count = 0usize;
        let mut ws_iter;
        let mut delim_iter;
        let fields: &mut dyn Iterator<Item = &str> =
            if self.cfg.delimiter == ' ' || self.cfg.delimiter == '\t' {
                ws_iter = text.split_ascii_whitespace();
                &mut ws_iter
            } else {
                delim_iter = text.split(self.cfg.delimiter);
                &mut delim_iter
            };
        for (i, f) in fields.enumerate() {
            if i == want_value {
                value_s = Some(f.trim());
            }
            if Some(i) == want_time {
                time_s = Some(f.trim());
            }
            count = i + 1;
            if i >= last {
                break;
            }
        }
        let Some(value_s) = value_s else {
            return self.malformed(
                t_s,
                format!("no column {} (line has {count})", want_value + 1),
                line,
            );
        };
        let raw: f64 = match value_s.parse() {
            Ok(v) => v,
            Err(_) => {
                return self.malformed(
                    t_s,
                    format!("column {} is not a number", want_value + 1),
                    line,
                );
            }
        };
        if !raw.is_finite() {
            return self.malformed(t_s, "value is not a finite number".into(), line);
        }
        let deg = self.cal.raw_to_deg(raw);
        if !deg.is_finite() || deg.abs() > self.max_abs_deg {
            return self.malformed(t_s, "value out of range".into(), line);
        }
        let device_time_s = match (want_time, time_s) {
            (None, _) => None,
            (Some(c), None) => {
                return self.malformed(
                    t_s,
                    format!("no time column {} (line has {count})", c + 1),
                    line,
                );
            }
            (Some(c), Some(ts)) => match ts.parse::<f64>() {
                Ok(v) if v.is_finite() => Some(v * self.cfg.time_unit.seconds()),
                _ => {
                    return self.malformed(
                        t_s,
                        format!("time column {} is not a finite number", c + 1),
                        line,
                    );
                }
            },
        };
        self.stats.samples += 1;
        Some(SensorEvent::Sample {
            t_s,
            raw,
            arena_heading_deg: self.cal.arena_heading_deg(raw),
            device_time_s,
        })
    }
}

/// Live sample rate and jitter over the last few seconds, and fault counters.
#[derive(Debug, Clone, Default)]
pub struct HealthTracker {
    times: VecDeque<f64>,
    health: SensorHealth,
}

/// Seconds of samples the rate and jitter are measured over.
pub const HEALTH_WINDOW_S: f64 = 2.0;
const HEALTH_MAX_TIMES: usize = 8192;

impl HealthTracker {
    /// Counts one event.
    pub fn record(&mut self, ev: &SensorEvent) {
        match ev {
            SensorEvent::Sample { t_s, .. } => {
                self.times.push_back(*t_s);
                while self.times.len() > HEALTH_MAX_TIMES
                    || self
                        .times
                        .front()
                        .is_some_and(|&f| *t_s - f > HEALTH_WINDOW_S)
                {
                    self.times.pop_front();
                }
            }
            SensorEvent::Malformed { .. } => self.health.malformed += 1,
            SensorEvent::Lost { .. } => {
                self.health.lost_periods += 1;
                self.health.lost = true;
                self.times.clear();
            }
            SensorEvent::Back { .. } => self.health.lost = false,
        }
    }

    /// The figures now.
    pub fn health(&self) -> SensorHealth {
        let mut h = self.health;
        let n = self.times.len();
        if n >= 2 {
            let span = self.times[n - 1] - self.times[0];
            h.rate_hz = if span > 0.0 {
                (n - 1) as f64 / span
            } else {
                0.0
            };
            let mean = span / (n - 1) as f64;
            let var = self
                .times
                .iter()
                .zip(self.times.iter().skip(1))
                .map(|(a, b)| (b - a - mean).powi(2))
                .sum::<f64>()
                / (n - 1) as f64;
            h.jitter_ms = var.sqrt() * 1000.0;
        } else {
            h.rate_hz = 0.0;
            h.jitter_ms = 0.0;
        }
        h
    }
}

/// Declares the sensor lost after `lost_after_s` without a line, and back at the next line.
#[derive(Debug, Clone)]
pub struct LossWatch {
    lost_after_s: f64,
    last_s: f64,
    lost_at_s: Option<f64>,
}

impl LossWatch {
    /// A watch whose silence starts counting at `start_s`.
    pub fn new(lost_after_s: f64, start_s: f64) -> Self {
        Self {
            lost_after_s,
            last_s: start_s,
            lost_at_s: None,
        }
    }

    /// If the silence has lasted longer than the limit at `now_s`: the `Lost` event, stamped at
    /// the moment the limit was crossed (last line + `lost_after_s`).
    pub fn check(&mut self, now_s: f64) -> Option<SensorEvent> {
        if self.lost_at_s.is_none() && now_s - self.last_s > self.lost_after_s {
            let t_s = self.last_s + self.lost_after_s;
            self.lost_at_s = Some(t_s);
            Some(SensorEvent::Lost { t_s })
        } else {
            None
        }
    }

    /// A line arrived at `t_s`: `Back` if the sensor was lost.
    pub fn on_line(&mut self, t_s: f64) -> Option<SensorEvent> {
        if t_s > self.last_s {
            self.last_s = t_s;
        }
        self.lost_at_s
            .take()
            .map(|lost| SensorEvent::Back { t_s: t_s.max(lost) })
    }
}

/// Decoder, loss watch and health together: what every heading source runs its bytes through.
#[derive(Debug, Clone)]
pub struct Pipeline {
    /// The line decoder.
    pub decoder: LineDecoder,
    /// Loss detection.
    pub watch: LossWatch,
    /// Health figures.
    pub health: HealthTracker,
    scratch: Vec<SensorEvent>,
}

impl Pipeline {
    /// A pipeline whose silence counts from `start_s`.
    pub fn new(
        cfg: DecoderConfig,
        cal: SensorCalibration,
        lost_after_s: f64,
        start_s: f64,
    ) -> Self {
        Self {
            decoder: LineDecoder::new(cfg, cal),
            watch: LossWatch::new(lost_after_s, start_s),
            health: HealthTracker::default(),
            scratch: Vec::new(),
        }
    }

    /// Bytes arrived at `t_s`.
    pub fn feed(&mut self, t_s: f64, bytes: &[u8], out: &mut impl Extend<SensorEvent>) {
        if bytes.is_empty() {
            return;
        }
        self.tick(t_s, out);
        self.scratch.clear();
        let mut scratch = std::mem::take(&mut self.scratch);
        self.decoder.feed(t_s, bytes, &mut scratch);
        if !scratch.is_empty()
            && let Some(back) = self.watch.on_line(t_s)
        {
            self.health.record(&back);
            out.extend(std::iter::once(back));
        }
        for ev in &scratch {
            self.health.record(ev);
        }
        out.extend(scratch.drain(..));
        self.scratch = scratch;
    }

    /// One whole line (no terminator) arrived at `t_s`.
    pub fn line(&mut self, t_s: f64, line: &[u8], out: &mut impl Extend<SensorEvent>) {
        self.tick(t_s, out);
        if let Some(ev) = self.decoder.decode_line(t_s, line) {
            if let Some(back) = self.watch.on_line(t_s) {
                self.health.record(&back);
                out.extend(std::iter::once(back));
            }
            self.health.record(&ev);
            out.extend(std::iter::once(ev));
        }
    }

    /// Time passes: a `Lost` event if the silence is too long at `now_s`.
    pub fn tick(&mut self, now_s: f64, out: &mut impl Extend<SensorEvent>) {
        if let Some(lost) = self.watch.check(now_s) {
            self.health.record(&lost);
            out.extend(std::iter::once(lost));
        }
    }

    /// A line longer than the limit arrived at `t_s` (`head`: its first bytes).
    pub fn too_long(&mut self, t_s: f64, head: &[u8], out: &mut impl Extend<SensorEvent>) {
        self.tick(t_s, out);
        self.scratch.clear();
        let mut scratch = std::mem::take(&mut self.scratch);
        self.decoder.too_long(t_s, head, &mut scratch);
        self.emit(t_s, &mut scratch, out);
        self.scratch = scratch;
    }

    /// The input ended at `t_s`: a last line without a terminator is decoded.
    pub fn finish(&mut self, t_s: f64, out: &mut impl Extend<SensorEvent>) {
        self.scratch.clear();
        let mut scratch = std::mem::take(&mut self.scratch);
        self.decoder.finish(t_s, &mut scratch);
        self.emit(t_s, &mut scratch, out);
        self.scratch = scratch;
    }

    fn emit(
        &mut self,
        t_s: f64,
        scratch: &mut Vec<SensorEvent>,
        out: &mut impl Extend<SensorEvent>,
    ) {
        if !scratch.is_empty()
            && let Some(back) = self.watch.on_line(t_s)
        {
            self.health.record(&back);
            out.extend(std::iter::once(back));
        }
        for ev in scratch.iter() {
            self.health.record(ev);
        }
        out.extend(scratch.drain(..));
    }

    /// The connection went away: a partial line is reported as malformed.
    pub fn disconnected(&mut self, t_s: f64, out: &mut impl Extend<SensorEvent>) {
        if let Some(ev) = self
            .decoder
            .discard_partial(t_s, "line cut off by a disconnect")
        {
            self.health.record(&ev);
            out.extend(std::iter::once(ev));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frames::{Direction, SensorUnit};
    use proptest::prelude::*;

    fn dec() -> LineDecoder {
        LineDecoder::new(
            DecoderConfig {
                time_column: Some(2),
                ..DecoderConfig::default()
            },
            SensorCalibration::default(),
        )
    }

    fn kinds(evs: &[SensorEvent]) -> String {
        evs.iter()
            .map(|e| match e {
                SensorEvent::Sample { .. } => 'S',
                SensorEvent::Malformed { .. } => 'M',
                SensorEvent::Lost { .. } => 'L',
                SensorEvent::Back { .. } => 'B',
            })
            .collect()
    }

    #[test]
    fn crlf_blank_partial_garbage_nan_range() {
        let mut d = dec();
        let mut out = Vec::new();
        d.feed(1.0, b"12.5,100\r\n\r\n\n13.", &mut out);
        assert_eq!(kinds(&out), "S");
        d.feed(
            2.0,
            b"5,110\nxyz\nNaN,1\n1e9,2\n5\n\xff\xfe,1\n7;8\n",
            &mut out,
        );
        assert_eq!(kinds(&out), "SSMMMMMM");
        match &out[1] {
            SensorEvent::Sample {
                t_s,
                raw,
                device_time_s,
                ..
            } => {
                assert_eq!(*t_s, 2.0);
                assert_eq!(*raw, 13.5);
                assert!((device_time_s.unwrap() - 0.110).abs() < 1e-12);
            }
            e => panic!("{e:?}"),
        }
        let s = d.stats();
        assert_eq!((s.samples, s.malformed, s.blank), (2, 6, 2));
    }

    #[test]
    fn overlong_line_is_one_fault_and_truncated() {
        let mut d = dec();
        let mut out = Vec::new();
        let long = vec![b'7'; 1000];
        d.feed(0.0, &long[..300], &mut out);
        d.feed(0.1, &long[300..], &mut out);
        d.feed(0.2, b"\n1,2\n", &mut out);
        assert_eq!(kinds(&out), "MS");
        if let SensorEvent::Malformed { text, .. } = &out[0] {
            assert_eq!(text.chars().count(), MAX_SHOWN_CHARS + 1);
        }
    }

    #[test]
    fn counts_mirrored_whitespace_columns() {
        let mut d = LineDecoder::new(
            DecoderConfig {
                delimiter: ' ',
                value_column: 3,
                ..DecoderConfig::default()
            },
            SensorCalibration {
                unit: SensorUnit::Counts { per_rev: 4096.0 },
                direction: Direction::Counterclockwise,
                zero_offset_deg: 10.0,
            },
        );
        match d.decode_line(0.0, b"  a   b  1024 ") {
            Some(SensorEvent::Sample {
                arena_heading_deg, ..
            }) => assert!((arena_heading_deg - 280.0).abs() < 1e-9),
            e => panic!("{e:?}"),
        }
    }

    #[test]
    fn loss_and_back() {
        let mut p = Pipeline::new(
            DecoderConfig::default(),
            SensorCalibration::default(),
            1.0,
            0.0,
        );
        let mut out = Vec::new();
        p.feed(0.5, b"1\n", &mut out);
        p.tick(1.4, &mut out);
        p.tick(1.6, &mut out);
        p.tick(3.0, &mut out);
        p.feed(3.2, b"2\n", &mut out);
        assert_eq!(kinds(&out), "SLBS");
        assert_eq!(out[1], SensorEvent::Lost { t_s: 1.5 });
        assert_eq!(out[2], SensorEvent::Back { t_s: 3.2 });
        let h = p.health.health();
        assert_eq!(h.lost_periods, 1);
        assert!(!h.lost);
    }

    #[test]
    fn health_rate_and_jitter() {
        let mut h = HealthTracker::default();
        for i in 0..300 {
            let jitter = if i % 2 == 0 { 0.001 } else { -0.001 };
            h.record(&SensorEvent::Sample {
                t_s: i as f64 * 0.01 + jitter,
                raw: 0.0,
                arena_heading_deg: 0.0,
                device_time_s: None,
            });
        }
        let hh = h.health();
        assert!((hh.rate_hz - 100.0).abs() < 1.0, "{hh:?}");
        assert!((hh.jitter_ms - 2.0).abs() < 0.1, "{hh:?}");
    }

    proptest! {
        #[test]
        fn arbitrary_bytes_never_panic_and_every_line_is_counted(
            chunks in proptest::collection::vec(proptest::collection::vec(any::<u8>(), 0..80), 0..20)
        ) {
            let mut d = dec();
            let mut out = Vec::new();
            let mut all = Vec::new();
            for (i, c) in chunks.iter().enumerate() {
                d.feed(i as f64, c, &mut out);
                all.extend_from_slice(c);
            }
            all.push(b'\n');
            d.feed(99.0, b"\n", &mut out);
            let s = d.stats();
            // Every non-blank line is a sample or a counted fault, and each gave one event.
            prop_assert_eq!(s.lines, s.samples + s.malformed);
            prop_assert_eq!(out.len() as u64, s.lines);
            let samples = out.iter().filter(|e| matches!(e, SensorEvent::Sample { .. })).count() as u64;
            prop_assert_eq!(samples, s.samples);
            // Count the lines independently (lines of at most MAX_LINE_BYTES).
            let expected_nonblank = all
                .split(|&b| b == b'\n' || b == b'\r')
                .filter(|l| !l.iter().all(|b| b.is_ascii_whitespace()) || l.len() > MAX_LINE_BYTES)
                .count() as u64;
            prop_assert_eq!(s.lines, expected_nonblank);
            for e in &out {
                if let SensorEvent::Malformed { text, .. } = e {
                    prop_assert!(text.chars().count() <= MAX_SHOWN_CHARS + 1);
                }
                if let SensorEvent::Sample { arena_heading_deg, .. } = e {
                    prop_assert!((0.0..360.0).contains(arena_heading_deg));
                }
            }
        }
    }
}
