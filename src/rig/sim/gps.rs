//! The simulator's GPS receiver: RMC and GGA sentences once a second on a pseudo-terminal, as a
//! USB receiver sends them (`skybearing sim --gps`).
//!
//! Each pair is sent just after a whole second of the receiver's clock, stamped with that
//! second, like a receiver that outputs once per fix. The receiver's clock is the laptop's less
//! [`SimGpsConfig::laptop_ahead_s`], so a laptop clock that is off can be rehearsed. It can also
//! report no fix (status V, quality 0) or turn to garbage after a while.

use crate::rig::nmea::with_checksum;
use crate::rig::pty::{Pty, relink};
use chrono::{DateTime, Timelike, Utc};
use std::io;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// What the simulated receiver reports.
#[derive(Debug, Clone, PartialEq)]
pub struct SimGpsConfig {
    /// Degrees north.
    pub latitude_deg: f64,
    /// Degrees east.
    pub longitude_deg: f64,
    /// Altitude above mean sea level, metres.
    pub altitude_m: f64,
    /// How far the laptop's clock is ahead of GPS time, seconds (negative: behind).
    pub laptop_ahead_s: f64,
    /// Never a fix: status V and fix quality 0 (no sky view).
    pub no_fix: bool,
    /// From this many seconds after the start on, lines of garbage instead of sentences.
    pub garbage_after_s: Option<f64>,
}

/// `value` as NMEA `ddmm.mmmmm,H` (`deg_digits` 2 for latitude, 3 for longitude).
fn degrees_minutes(value: f64, deg_digits: usize, pos: char, neg: char) -> String {
    let a = value.abs();
    let mut d = a.trunc();
    let mut m = ((a - d) * 60.0 * 1e5).round() / 1e5;
    if m >= 60.0 {
        d += 1.0;
        m -= 60.0;
    }
    let h = if value < 0.0 { neg } else { pos };
    format!("{:0w$}{:08.5},{h}", d as u32, m, w = deg_digits)
}

/// The RMC and GGA sentences (with checksums, without CR LF) of a receiver with a
/// multi-constellation talker (GN) reporting `cfg`'s position at `utc`.
pub fn sentences(cfg: &SimGpsConfig, utc: DateTime<Utc>) -> [String; 2] {
    let time = format!(
        "{:02}{:02}{:02}.{:02}",
        utc.hour(),
        utc.minute(),
        utc.second(),
        utc.nanosecond() / 10_000_000
    );
    let date = utc.format("%d%m%y");
    if cfg.no_fix {
        return [
            with_checksum(&format!("GNRMC,{time},V,,,,,,,{date},,,N")),
            with_checksum(&format!("GNGGA,{time},,,,,0,00,99.99,,,,,,")),
        ];
    }
    let lat = degrees_minutes(cfg.latitude_deg, 2, 'N', 'S');
    let lon = degrees_minutes(cfg.longitude_deg, 3, 'E', 'W');
    [
        with_checksum(&format!("GNRMC,{time},A,{lat},{lon},0.012,,{date},,,A")),
        with_checksum(&format!(
            "GNGGA,{time},{lat},{lon},1,09,0.92,{:.1},M,49.6,M,,",
            cfg.altitude_m
        )),
    ]
}

/// The simulated receiver on its pseudo-terminal.
pub struct SimGps {
    pty: Pty,
    /// Stable path of the receiver's slave (a symbolic link).
    pub link: PathBuf,
    cfg: SimGpsConfig,
    last_second: Option<i64>,
    start: Instant,
}

impl SimGps {
    /// Opens the terminal and its link `<prefix>-gps.tty`.
    pub fn new(cfg: SimGpsConfig, link_prefix: &Path) -> io::Result<Self> {
        let pty = Pty::open()?;
        let name = link_prefix
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "sim".into());
        let dir = link_prefix.parent().unwrap_or(Path::new("."));
        let link = dir.join(format!("{name}-gps.tty"));
        relink(&link, &pty.slave_path)?;
        Ok(Self {
            pty,
            link,
            cfg,
            last_second: None,
            start: Instant::now(),
        })
    }

    /// The `[gps]` section of a rig file for this receiver.
    pub fn rig_section(&self, wait_s: f64) -> String {
        format!(
            "\n[gps]\npath = \"{}\"\nbaud = 9600\nwait_s = {wait_s:?}\n",
            self.link.display()
        )
    }

    /// Sends what is due now: a pair of sentences at each new whole second of the receiver's
    /// clock. Nobody reading: the lines are dropped (a full terminal takes no more).
    pub fn step(&mut self) -> io::Result<()> {
        let gps_now = Utc::now()
            - chrono::Duration::microseconds((self.cfg.laptop_ahead_s * 1e6).round() as i64);
        let second = gps_now.timestamp();
        if self.last_second == Some(second) {
            return Ok(());
        }
        self.last_second = Some(second);
        let stamp = DateTime::from_timestamp(second, 0).unwrap_or(gps_now);
        let garbage = self
            .cfg
            .garbage_after_s
            .is_some_and(|g| self.start.elapsed().as_secs_f64() >= g);
        let lines: Vec<String> = if garbage {
            let [rmc, gga] = sentences(&self.cfg, stamp);
            // A checksum that no longer matches, a line cut short, bytes of noise.
            vec![
                format!("{}00", &rmc[..rmc.len() - 2]),
                gga[..gga.len() / 2].to_string(),
                "\u{1}\u{7f}~~garbage~~".into(),
            ]
        } else {
            sentences(&self.cfg, stamp).to_vec()
        };
        for l in lines {
            let _ = self.pty.write_some(format!("{l}\r\n").as_bytes())?;
        }
        Ok(())
    }

    /// Serves until `stop` is set or `for_s` seconds have passed.
    pub fn serve(&mut self, stop: &AtomicBool, for_s: Option<f64>) -> io::Result<()> {
        while !stop.load(Ordering::Relaxed) {
            self.step()?;
            if for_s.is_some_and(|f| self.start.elapsed().as_secs_f64() >= f) {
                break;
            }
            std::thread::sleep(Duration::from_millis(10));
        }
        Ok(())
    }

    /// Removes the link.
    pub fn remove_link(&self) {
        let _ = std::fs::remove_file(&self.link);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rig::gps::FixCollector;

    fn cfg() -> SimGpsConfig {
        SimGpsConfig {
            latitude_deg: -43.2170,
            longitude_deg: -5.4420,
            altitude_m: 210.0,
            laptop_ahead_s: 0.0,
            no_fix: false,
            garbage_after_s: None,
        }
    }

    #[test]
    fn the_sentences_read_back_through_the_parser() {
        let at: DateTime<Utc> = "2026-06-14T09:30:07Z".parse().unwrap();
        let mut c = FixCollector::default();
        for s in sentences(&cfg(), at) {
            c.feed(&s, at + chrono::Duration::milliseconds(40));
        }
        let f = c.fix().expect("fix");
        assert!((f.latitude_deg + 43.2170).abs() < 1e-6);
        assert!((f.longitude_deg + 5.4420).abs() < 1e-6);
        assert!((f.elevation_m.unwrap() - 210.0).abs() < 1e-3);
        assert_eq!(f.gps_utc, at);
        assert!((f.clock_offset_s - 0.040).abs() < 1e-9);
        assert_eq!(f.talker, "GN");
        let mut c = FixCollector::default();
        for s in sentences(
            &SimGpsConfig {
                no_fix: true,
                ..cfg()
            },
            at,
        ) {
            c.feed(&s, at);
        }
        assert!(c.fix().is_none());
        assert_eq!(c.no_fix, 2);
    }

    #[test]
    fn minutes_never_round_up_to_60() {
        assert_eq!(degrees_minutes(43.9999999999, 2, 'N', 'S'), "4400.00000,N");
        assert_eq!(degrees_minutes(-5.5, 3, 'E', 'W'), "00530.00000,W");
    }
}
