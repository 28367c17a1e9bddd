//! A GPS receiver on a serial port, read at session start for the site and the UTC.
//!
//! `run` opens the port named in the rig file's `[gps]` section, reads NMEA 0183 sentences
//! ([`super::nmea`]) for at most `wait_s` seconds and closes it again. A fix is a valid RMC
//! (status A or D, with date, time and position); a valid GGA (fix quality other than 0) adds
//! the altitude above mean sea level. The fix then gives the session its site (latitude,
//! longitude, elevation) and its UTC; the laptop clock's offset from GPS time is recorded and
//! warned about beyond [`CLOCK_WARN_S`]. No fix in time (no port, no receiver, no sky view,
//! garbage): the rig file's site and the laptop's clock stay, and the session says so. The
//! session never waits longer than `wait_s`, and since the port is closed before the first
//! sample, a receiver that turns to garbage later cannot touch the session.
//!
//! The offset is `laptop UTC when the RMC line arrived − the RMC's UTC`: a receiver sends its
//! sentences some tens to hundreds of milliseconds after the instant they describe (common
//! practice puts the output latency under half a second; not measured here), so the offset
//! is biased upward by that latency. The smallest offset over the RMC lines read is kept, as
//! the latency only adds. A 1 s threshold stays well above that bias.

use super::nmea::{Gga, Rmc, Sentence, parse_sentence};
use chrono::{DateTime, Utc};
use serde::Serialize;
use std::io::Read;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Above this laptop-clock offset from GPS time (absolute, seconds) the session warns.
pub const CLOCK_WARN_S: f64 = 1.0;
/// Default of `gps.wait_s`: how long a session start waits for a fix, seconds.
pub const DEFAULT_WAIT_S: f64 = 10.0;
/// Longest line kept from the receiver, bytes (longer ones are garbage).
const MAX_LINE_BYTES: usize = 256;

/// The `[gps]` section of a rig file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GpsConfig {
    /// Serial port path such as /dev/ttyACM0.
    pub path: PathBuf,
    /// Baud rate (NMEA 0183 receivers: 4800 or 9600 usually).
    pub baud: u32,
    /// How long a session start waits for a fix, seconds.
    pub wait_s: f64,
    /// Line of `gps.path` in the rig file (for messages).
    #[serde(skip)]
    pub path_line: Option<usize>,
}

/// A fix read at session start.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GpsFix {
    /// Degrees north (WGS 84).
    pub latitude_deg: f64,
    /// Degrees east (WGS 84).
    pub longitude_deg: f64,
    /// Altitude above mean sea level from GGA, metres; `None` when no valid GGA came.
    pub elevation_m: Option<f64>,
    /// The UTC of the RMC the offset was measured on.
    pub gps_utc: DateTime<Utc>,
    /// Laptop clock minus GPS time, seconds (positive: the laptop is ahead).
    pub clock_offset_s: f64,
    /// Talker ID of the RMC (GP, GN...).
    pub talker: String,
    /// Satellites used (GGA).
    pub satellites: Option<u32>,
    /// Horizontal dilution of precision (GGA).
    pub hdop: Option<f64>,
}

/// Sentences read so far, until a fix is whole.
#[derive(Debug, Default)]
pub struct FixCollector {
    rmc: Option<(Rmc, f64)>,
    gga: Option<Gga>,
    /// Lines read.
    pub lines: u64,
    /// Lines that were not good sentences (checksum, format, fields).
    pub bad: u64,
    /// RMC or GGA lines that said "no fix".
    pub no_fix: u64,
}

impl FixCollector {
    /// Takes one line that arrived when the laptop clock read `laptop_utc`.
    pub fn feed(&mut self, line: &str, laptop_utc: DateTime<Utc>) {
        if line.trim().is_empty() {
            return;
        }
        self.lines += 1;
        match parse_sentence(line) {
            Ok(Sentence::Rmc(r)) if r.valid => {
                let Some(utc) = r.utc else { return };
                let offset_s = (laptop_utc - utc)
                    .num_microseconds()
                    .map_or((laptop_utc - utc).num_seconds() as f64, |us| {
                        us as f64 * 1e-6
                    });
                let keep = self.rmc.as_ref().is_none_or(|(_, o)| offset_s < *o);
                if keep {
                    self.rmc = Some((r, offset_s));
                }
            }
            Ok(Sentence::Gga(g)) if g.valid => self.gga = Some(g),
            Ok(Sentence::Rmc(_) | Sentence::Gga(_)) => self.no_fix += 1,
            Ok(Sentence::Other) => {}
            Err(_) => self.bad += 1,
        }
    }

    /// True once a valid RMC and a valid GGA have come.
    pub fn complete(&self) -> bool {
        self.rmc.is_some() && self.gga.is_some()
    }

    /// The fix, once a valid RMC has come (with the GGA's altitude if one came).
    pub fn fix(&self) -> Option<GpsFix> {
        let (r, offset_s) = self.rmc.as_ref()?;
        let (latitude_deg, longitude_deg) = r.position_deg?;
        Some(GpsFix {
            latitude_deg,
            longitude_deg,
            elevation_m: self.gga.as_ref().and_then(|g| g.altitude_m),
            gps_utc: r.utc?,
            clock_offset_s: *offset_s,
            talker: r.talker.clone(),
            satellites: self.gga.as_ref().and_then(|g| g.satellites),
            hdop: self.gga.as_ref().and_then(|g| g.hdop),
        })
    }

    /// Why there is no fix, in words.
    pub fn why_no_fix(&self) -> String {
        if self.lines == 0 {
            "no lines from the receiver".into()
        } else if self.no_fix > 0 {
            format!(
                "the receiver reports no fix yet ({} of {} lines said so)",
                self.no_fix, self.lines
            )
        } else {
            format!(
                "no valid RMC sentence in {} lines ({} not NMEA or with a bad checksum)",
                self.lines, self.bad
            )
        }
    }
}

/// A few words beside the site name on the live screen: where the site and the UTC came
/// from, and whether that needs the operator's eye.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SiteNote {
    /// "GPS", "GPS, clock +3.5 s" or "no GPS fix".
    pub text: String,
    /// No fix, or the laptop clock more than [`CLOCK_WARN_S`] off GPS time.
    pub warning: bool,
}

/// What the session start got from the GPS.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GpsStart {
    /// The port read.
    pub port: String,
    /// Seconds spent reading.
    pub waited_s: f64,
    /// The fix, if one came in time.
    pub fix: Option<GpsFix>,
    /// Why not, when none came.
    pub no_fix_reason: Option<String>,
    /// The rig file's site (latitude, longitude, elevation), kept for the record.
    pub rig_file_site: crate::sky::Site,
}

impl GpsStart {
    /// The laptop's clock offset from GPS time, when measured.
    pub fn clock_offset_s(&self) -> Option<f64> {
        self.fix.as_ref().map(|f| f.clock_offset_s)
    }

    /// The site the session runs at: the fix's position and altitude, the rig file's name
    /// (and its elevation when no GGA gave one); the rig file's site without a fix.
    pub fn site(&self) -> crate::sky::Site {
        let mut site = self.rig_file_site.clone();
        if let Some(f) = &self.fix {
            site.latitude_deg = f.latitude_deg;
            site.longitude_deg = f.longitude_deg;
            if let Some(e) = f.elevation_m {
                site.elevation_m = e;
            }
        }
        site
    }

    /// The events the session records at its start: (kind, detail). `gps_fix` or
    /// `gps_no_fix`, and `clock_offset` when the laptop is more than [`CLOCK_WARN_S`] off.
    pub fn events(&self) -> Vec<(&'static str, String)> {
        let mut out = Vec::new();
        match &self.fix {
            Some(f) => {
                let elevation = match f.elevation_m {
                    Some(e) => format!("elevation {e:.1} m"),
                    None => format!(
                        "no altitude (no valid GGA): elevation {:.1} m from the rig file",
                        self.rig_file_site.elevation_m
                    ),
                };
                let away_km = distance_km(
                    (f.latitude_deg, f.longitude_deg),
                    (self.rig_file_site.latitude_deg, self.rig_file_site.longitude_deg),
                );
                out.push((
                    "gps_fix",
                    format!(
                        "site from GPS ({} {}): latitude {:.6}, longitude {:.6} ({away_km:.1} km from the rig file's), {elevation}; {} satellites; GPS time {}; laptop clock {:+.3} s from GPS time; session UTC from GPS time",
                        f.talker,
                        self.port,
                        f.latitude_deg,
                        f.longitude_deg,
                        f.satellites.map_or("?".into(), |s| s.to_string()),
                        crate::archive::format_utc_millis(&f.gps_utc),
                        f.clock_offset_s
                    ),
                ));
                if f.clock_offset_s.abs() > CLOCK_WARN_S {
                    out.push(("clock_offset", clock_warning(f.clock_offset_s)));
                }
            }
            None => out.push((
                "gps_no_fix",
                format!(
                    "no GPS fix in {:.1} s on {}: {}; the rig file's site and the laptop's clock are used",
                    self.waited_s,
                    self.port,
                    self.no_fix_reason.as_deref().unwrap_or("unknown")
                ),
            )),
        }
        out
    }

    /// The live screen's note beside the site name.
    pub fn note(&self) -> SiteNote {
        match &self.fix {
            Some(f) if f.clock_offset_s.abs() > CLOCK_WARN_S => SiteNote {
                text: format!("GPS; laptop clock {:+.1} s off", f.clock_offset_s),
                warning: true,
            },
            Some(_) => SiteNote {
                text: "GPS".into(),
                warning: false,
            },
            None => SiteNote {
                text: "no GPS fix: rig file site".into(),
                warning: true,
            },
        }
    }

    /// The lines a session start prints as warnings (headless and before the screen opens).
    pub fn warnings(&self) -> Vec<String> {
        self.events()
            .into_iter()
            .filter(|(k, _)| *k != "gps_fix")
            .map(|(_, d)| d)
            .collect()
    }
}

/// Great-circle distance between two (latitude, longitude) points in degrees, km: the
/// haversine formula on a sphere of the mean Earth radius 6371.0088 km (IUGG; a sphere errs by
/// up to about 0.5 % against the ellipsoid, enough to tell a wrong rig file from a right one).
pub fn distance_km(a: (f64, f64), b: (f64, f64)) -> f64 {
    let (la1, lo1) = (a.0.to_radians(), a.1.to_radians());
    let (la2, lo2) = (b.0.to_radians(), b.1.to_radians());
    let h = ((la2 - la1) / 2.0).sin().powi(2)
        + la1.cos() * la2.cos() * ((lo2 - lo1) / 2.0).sin().powi(2);
    2.0 * 6371.0088 * h.sqrt().min(1.0).asin()
}

/// The warning about a laptop clock `offset_s` off GPS time.
pub fn clock_warning(offset_s: f64) -> String {
    format!(
        "the laptop clock is {:.1} s {} GPS time (more than {CLOCK_WARN_S} s): this session's UTC follows GPS; set the laptop clock before comparing with its other records",
        offset_s.abs(),
        if offset_s > 0.0 { "ahead of" } else { "behind" }
    )
}

/// The UTC now: the laptop's clock less its measured offset from GPS time, if any.
pub fn utc_now(clock_offset_s: Option<f64>) -> DateTime<Utc> {
    let now = Utc::now();
    match clock_offset_s {
        Some(o) if o.is_finite() => now - chrono::Duration::microseconds((o * 1e6).round() as i64),
        _ => now,
    }
}

/// Reads `reader` until a fix is whole (valid RMC and GGA) or `wait` has passed; each line is
/// stamped with `now()` (the laptop's clock) when it is complete. Read errors other than a
/// timeout end the reading early. Lines longer than [`MAX_LINE_BYTES`] are counted as bad.
pub fn collect_fix(
    reader: &mut dyn Read,
    wait: Duration,
    now: &dyn Fn() -> DateTime<Utc>,
) -> FixCollector {
    let start = Instant::now();
    let mut c = FixCollector::default();
    let mut line: Vec<u8> = Vec::with_capacity(MAX_LINE_BYTES);
    let mut overlong = false;
    let mut buf = [0u8; 512];
    while start.elapsed() < wait && !c.complete() {
        let n = match reader.read(&mut buf) {
            Ok(0) => break,
            Ok(n) => n,
            Err(e)
                if matches!(
                    e.kind(),
                    std::io::ErrorKind::TimedOut
                        | std::io::ErrorKind::WouldBlock
                        | std::io::ErrorKind::Interrupted
                ) =>
            {
                continue;
            }
            Err(_) => break,
        };
        let at = now();
        for &b in &buf[..n] {
            if b == b'\n' || b == b'\r' {
                if overlong {
                    c.lines += 1;
                    c.bad += 1;
                } else if !line.is_empty() {
                    c.feed(&String::from_utf8_lossy(&line), at);
                }
                line.clear();
                overlong = false;
            } else if line.len() < MAX_LINE_BYTES {
                line.push(b);
            } else {
                overlong = true;
            }
        }
        if c.complete() {
            break;
        }
    }
    c
}

/// Opens the receiver's port and reads it for at most `cfg.wait_s` seconds. Never fails: a
/// port that cannot be opened is a start without a fix, with the reason.
pub fn acquire(cfg: &GpsConfig, rig_file_site: &crate::sky::Site, rig_file: &str) -> GpsStart {
    let port = match cfg.path_line {
        Some(l) => format!("{} ({rig_file}:{l}: gps.path)", cfg.path.display()),
        None => cfg.path.display().to_string(),
    };
    let start = Instant::now();
    let wait = Duration::from_secs_f64(cfg.wait_s.max(0.0));
    let (fix, reason) = match super::source::open_serial(&cfg.path, cfg.baud) {
        Err(e) => (None, Some(format!("cannot open the port: {e}"))),
        Ok(mut p) => {
            let c = collect_fix(&mut p, wait, &Utc::now);
            match c.fix() {
                Some(f) => (Some(f), None),
                None => (None, Some(c.why_no_fix())),
            }
        }
    };
    GpsStart {
        port,
        waited_s: start.elapsed().as_secs_f64(),
        fix,
        no_fix_reason: reason,
        rig_file_site: rig_file_site.clone(),
    }
}

#[cfg(test)]
mod tests;
