//! Polarizer drivers: a motorized polarizer on its own serial port speaking the turntable's
//! line protocol with the command `AXIS <id> <deg>` (docs/turntable-protocol.md, "Polarizer"),
//! and a polarizer the operator sets by hand.
//!
//! The axis is absolute: degrees clockwise from the arena's 0 mark, axial [0, 180), the value a
//! protocol gives as `cues.filter_axis_deg`. The device answers `DONE <id> <axis_deg>` when the
//! filter stands at that axis, or `FAULT <id> <text>`; the host retries once after `timeout_s`
//! with the same id, exactly as for a turn.

use super::config::{PolarizerConfig, Rig};
use super::source::{device_name, open_serial};
use super::turntable::{LineDevice, SerialTurntable};
use super::{RigError, Turntable, TurntableEvent};
use crate::clock::Clock;
use std::sync::Arc;

/// The polarizer's commands.
const POLARIZER_LINES: LineDevice = LineDevice {
    verb: "AXIS",
    who: "polarizer",
    what: "axis command",
};

/// A polarizer that can be set to a filter axis (degrees clockwise from the arena's 0 mark).
pub trait Polarizer: Send {
    /// Starts setting the axis. Returns quickly; completion comes as an event from `poll`.
    fn start_axis(&mut self, now_s: f64, axis_deg: f64) -> Result<(), RigError>;
    /// Moves replies and timeouts stamped at or before `now_s` into `out`.
    fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError>;
    /// True for a polarizer the operator sets by hand (the engine prompts).
    fn is_manual(&self) -> bool {
        false
    }
    /// A short description.
    fn describe(&self) -> String;
}

/// Opens the polarizer a rig describes, `None` when it has none.
pub fn open_polarizer(
    rig: &Rig,
    clock: Arc<dyn Clock>,
) -> Result<Option<Box<dyn Polarizer>>, RigError> {
    match &rig.polarizer {
        None => Ok(None),
        Some(PolarizerConfig::Manual) => Ok(Some(Box::new(ManualPolarizer))),
        Some(PolarizerConfig::Serial {
            path,
            baud,
            timeout_s,
            path_line,
        }) => {
            let port = open_serial(path, *baud).map_err(|e| RigError::Device {
                device: device_name(rig, "polarizer.path", *path_line, path),
                message: format!("cannot open serial port {}: {e}", path.display()),
            })?;
            let inner = SerialTurntable::start(
                path.clone(),
                *baud,
                *timeout_s,
                port,
                clock,
                POLARIZER_LINES,
            )?;
            Ok(Some(Box::new(SerialPolarizer { inner })))
        }
    }
}

/// A polarizer set by hand when prompted.
#[derive(Debug, Default)]
pub struct ManualPolarizer;

impl Polarizer for ManualPolarizer {
    fn start_axis(&mut self, _now_s: f64, _axis_deg: f64) -> Result<(), RigError> {
        Ok(())
    }
    fn poll(&mut self, _now_s: f64, _out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        Ok(())
    }
    fn is_manual(&self) -> bool {
        true
    }
    fn describe(&self) -> String {
        "manual (set by hand when prompted)".into()
    }
}

/// A polarizer controller on a serial port.
pub struct SerialPolarizer {
    inner: SerialTurntable,
}

impl Polarizer for SerialPolarizer {
    fn start_axis(&mut self, now_s: f64, axis_deg: f64) -> Result<(), RigError> {
        self.inner.command(now_s, axis_deg.rem_euclid(180.0))
    }
    fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        Turntable::poll(&mut self.inner, now_s, out)
    }
    fn describe(&self) -> String {
        Turntable::describe(&self.inner)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::clock::RealClock;
    use crate::rig::pty::Pty;
    use std::time::Duration;

    fn rig_with(polarizer: &str) -> (tempfile::TempDir, Rig) {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("rig.toml");
        std::fs::write(
            &f,
            format!("{}\n{polarizer}", crate::rig::template::filled_example()),
        )
        .unwrap();
        let rig = crate::rig::config::load_rig(&f).unwrap();
        (dir, rig)
    }

    fn read_lines(dev: &Pty, wait_ms: u64) -> Vec<String> {
        std::thread::sleep(Duration::from_millis(wait_ms));
        let mut buf = [0u8; 512];
        let n = dev.read_some(&mut buf).unwrap();
        String::from_utf8_lossy(&buf[..n])
            .lines()
            .map(str::to_string)
            .collect()
    }

    #[test]
    fn serial_polarizer_sends_axis_retries_and_reports() {
        // The test plays the device on the master side of a pseudo-terminal.
        let dev = Pty::open().unwrap();
        let (_dir, rig) = rig_with(&format!(
            "[polarizer]\nkind = \"serial\"\npath = \"{}\"\nbaud = 115200\ntimeout_s = 0.3\n",
            dev.slave_path.display()
        ));
        let clock = Arc::new(RealClock::start());
        let mut p = open_polarizer(&rig, clock.clone()).unwrap().unwrap();
        assert!(!p.is_manual());
        assert_eq!(read_lines(&dev, 100), ["POS?"]);
        let t0 = clock.now_s();
        // 225 deg is the axis 45 deg (axial).
        p.start_axis(t0, 225.0).unwrap();
        assert_eq!(read_lines(&dev, 100), ["AXIS 1 45.000"]);
        let mut out = Vec::new();
        while clock.now_s() < t0 + 0.35 {
            std::thread::sleep(Duration::from_millis(10));
            p.poll(clock.now_s(), &mut out).unwrap();
        }
        assert!(out.is_empty(), "{out:?}");
        assert_eq!(
            read_lines(&dev, 50),
            ["AXIS 1 45.000"],
            "the retry keeps id"
        );
        dev.write_some(b"DONE 9 1.0\r\nDONE 1 45.000\r\n").unwrap();
        while out.is_empty() && clock.now_s() < t0 + 2.0 {
            std::thread::sleep(Duration::from_millis(10));
            p.poll(clock.now_s(), &mut out).unwrap();
        }
        assert!(
            matches!(out[..], [TurntableEvent::Done { position_deg: Some(a), .. }] if a == 45.0),
            "{out:?}"
        );
        // The next command has a new id; a fault names the polarizer.
        out.clear();
        p.start_axis(clock.now_s(), 135.0).unwrap();
        assert_eq!(read_lines(&dev, 100), ["AXIS 2 135.000"]);
        dev.write_some(b"FAULT 2 filter jammed\r\n").unwrap();
        let t1 = clock.now_s();
        while out.is_empty() && clock.now_s() < t1 + 2.0 {
            std::thread::sleep(Duration::from_millis(10));
            p.poll(clock.now_s(), &mut out).unwrap();
        }
        let [TurntableEvent::Fault { ref text, .. }] = out[..] else {
            panic!("{out:?}")
        };
        assert_eq!(text, "polarizer reports: filter jammed");
    }

    #[test]
    fn no_section_no_polarizer_and_manual_is_manual() {
        let (_d, rig) = rig_with("");
        assert!(rig.polarizer.is_none());
        let clock = Arc::new(RealClock::start());
        assert!(open_polarizer(&rig, clock.clone()).unwrap().is_none());
        let (_d, rig) = rig_with("[polarizer]\nkind = \"manual\"\n");
        let p = open_polarizer(&rig, clock).unwrap().unwrap();
        assert!(p.is_manual());
    }
}
