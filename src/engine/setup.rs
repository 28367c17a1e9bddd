//! What a session is set up from and how it ends: setup, speed, clock, errors, outcome.

use crate::archive::{self, PlannedEpoch, SessionMeta};
use crate::clock::{Clock, SimClock};
use crate::frames::wrap_360_deg;
use crate::protocol::Protocol;
use crate::rig::config::{BearingReference, Rig};
use chrono::{DateTime, FixedOffset, Offset, TimeZone, Utc};
use std::path::PathBuf;

/// How fast the session's clock runs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Speed {
    /// Real time times a factor (1.0 for real sessions).
    Times(f64),
    /// As fast as the machine allows (simulated rigs only).
    Max,
}

/// Errors that stop a session.
#[derive(Debug, thiserror::Error)]
pub enum EngineError {
    /// The archive could not be written.
    #[error("archive: {0}")]
    Archive(#[from] archive::ArchiveError),
    /// The sun could not be computed for the site.
    #[error("sun: {0}")]
    Sky(#[from] crate::sky::SkyError),
    /// A device failed in a way the session cannot continue from.
    #[error("device: {0}")]
    Rig(#[from] crate::rig::RigError),
    /// The setup is inconsistent.
    #[error("{0}")]
    Setup(String),
    /// A write hit the file-size limit (EFBIG; SIGXFSZ is ignored so this comes back).
    #[error(
        "{0}: the file-size limit was reached (ulimit -f); what was written is kept: raise the limit and run `skybearing check --repair` on the session folder"
    )]
    FileSizeLimit(String),
}

impl EngineError {
    /// A file-size-limit failure reported as such; other errors unchanged.
    pub fn named_limit(self) -> Self {
        match self {
            EngineError::Archive(archive::ArchiveError::Io { path, source })
                if crate::signals::is_file_size_limit(&source) =>
            {
                EngineError::FileSizeLimit(path.display().to_string())
            }
            other => other,
        }
    }
}

/// Everything the engine needs besides the devices.
#[derive(Debug, Clone)]
pub struct SessionSetup {
    /// "demo" or "run".
    pub mode: String,
    /// Animal id (validated by the archive).
    pub animal: String,
    /// Sessions folder.
    pub sessions_dir: PathBuf,
    /// The expanded protocol.
    pub protocol: Protocol,
    /// The checked rig.
    pub rig: Rig,
    /// UTC at session second 0 (the anchor; the wall clock is never read again for stamping).
    pub start_utc: DateTime<Utc>,
    /// Clock speed.
    pub speed: Speed,
    /// Simulator seed, if simulated.
    pub seed: Option<u64>,
    /// Extra fields to record in session.json (simulator settings...).
    pub extra: serde_json::Value,
    /// What the rig's GPS gave at the start (`run` with a `[gps]` section); with a fix,
    /// `rig.site` and `start_utc` already come from it.
    pub gps: Option<crate::rig::gps::GpsStart>,
}

impl SessionSetup {
    /// Checks what must hold before anything is written (a safe animal id, a valid site, at
    /// least one epoch) and resolves the arena mark to a true bearing. Returns the mark's true
    /// bearing and the site's magnetic declination on the start date (World Magnetic Model).
    pub(super) fn checked_mark_bearing(&self) -> Result<(f64, Option<f64>), EngineError> {
        archive::validate_animal_id(&self.animal)?;
        self.rig.site.validate()?;
        if self.protocol.epochs.is_empty() {
            return Err(EngineError::Setup("the protocol has no epochs".into()));
        }
        let site = &self.rig.site;
        let date = self.start_utc.date_naive();
        let declination = crate::sky::magnetic::declination_deg(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            date,
        );
        let mark_true_deg = match self.rig.arena_mark_reference {
            BearingReference::True => wrap_360_deg(self.rig.arena_mark_bearing_deg),
            BearingReference::Magnetic => match declination {
                Some(d) => {
                    crate::frames::true_from_magnetic_deg(self.rig.arena_mark_bearing_deg, d)
                }
                None => {
                    return Err(EngineError::Setup(format!(
                        "rig: arena mark bearing is magnetic but the World Magnetic Model gives no declination for {date}; measure the bearing against true north"
                    )));
                }
            },
        };
        Ok((mark_true_deg, declination))
    }

    /// The `session.json` of a new session `id` (status running).
    pub(super) fn session_meta(
        &self,
        id: String,
        mark_true_deg: f64,
        declination: Option<f64>,
        planned: &[PlannedEpoch],
    ) -> SessionMeta {
        let site = &self.rig.site;
        SessionMeta {
            format_version: archive::FORMAT_VERSION,
            id,
            status: archive::SessionStatus::Running,
            started_utc: self.start_utc,
            ended_utc: None,
            animal: self.animal.clone(),
            site: archive::SiteMeta {
                name: site.name.clone(),
                latitude_deg: site.latitude_deg,
                longitude_deg: site.longitude_deg,
                elevation_m: site.elevation_m,
                source: Some(self.site_source().into()),
            },
            time_zone: self.rig.time_zone.clone(),
            arena_mark_bearing_deg: mark_true_deg,
            arena_mark_bearing_measured_deg: self.rig.arena_mark_bearing_deg,
            arena_mark_reference: match self.rig.arena_mark_reference {
                BearingReference::True => "true".into(),
                BearingReference::Magnetic => "magnetic".into(),
            },
            declination_deg: declination,
            protocol: serde_json::to_value(&self.protocol).unwrap_or(serde_json::Value::Null),
            epochs: planned.to_vec(),
            rig: {
                let mut rig = serde_json::to_value(&self.rig).unwrap_or(serde_json::Value::Null);
                if let (Some(obj), Some(extra)) = (rig.as_object_mut(), self.extra.as_object()) {
                    for (k, v) in extra {
                        obj.insert(k.clone(), v.clone());
                    }
                }
                rig
            },
            program_version: crate::VERSION.to_string(),
            mode: self.mode.clone(),
            seed: self.seed,
            end_reason: None,
            notes: 0,
            clock_offset_s: self.gps.as_ref().and_then(|g| g.clock_offset_s()),
            gps: self.gps.as_ref().and_then(|g| serde_json::to_value(g).ok()),
        }
    }

    /// Where the site's coordinates come from (`site.source` in session.json).
    pub fn site_source(&self) -> &'static str {
        if self.gps.as_ref().is_some_and(|g| g.fix.is_some()) {
            "gps"
        } else if self.rig.source_name == crate::rig::config::demo_rig().source_name {
            "built_in"
        } else {
            "rig_file"
        }
    }
}

/// Why a session ended. Its words (`status`, `text`) are what the archive, the events and the
/// screens show; `demo` and `run` choose their exit status from it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EndReason {
    /// Every epoch ran or was skipped (also when the operator ends after the last one).
    ProtocolFinished,
    /// The flight rules' abort: too long without flight.
    NoFlight,
    /// The sensor-loss rules' abort: too long without data from the heading sensor.
    SensorLost,
    /// The operator ended the session before the protocol was done.
    EndedByOperator,
    /// A termination signal (SIGINT, SIGTERM, SIGHUP) ended it before the protocol was done.
    Signal(crate::signals::StopSignal),
    /// A replay file at full speed ran out before the protocol was done (the end of the file is
    /// noticed like a lost sensor, `sensor.lost_after_s` after its last line).
    EndOfRecording,
    /// The loop stopped without the timeline ending the session.
    Stopped,
}

impl EndReason {
    /// Final status in `session.json`: "complete" or "aborted".
    pub fn status(self) -> &'static str {
        if self.is_complete() {
            "complete"
        } else {
            "aborted"
        }
    }

    /// True when the protocol ran to its end.
    pub fn is_complete(self) -> bool {
        self == EndReason::ProtocolFinished
    }

    /// The reason in words (`end_reason` in `session.json`).
    pub fn text(self) -> &'static str {
        match self {
            EndReason::ProtocolFinished => "protocol finished",
            EndReason::NoFlight => "no flight",
            EndReason::SensorLost => "sensor lost",
            EndReason::EndedByOperator => "ended by the operator",
            EndReason::Signal(s) => match s {
                crate::signals::StopSignal::Int => "ended by SIGINT",
                crate::signals::StopSignal::Term => "ended by SIGTERM",
                crate::signals::StopSignal::Hup => "ended by SIGHUP",
            },
            EndReason::EndOfRecording => "end of the recording",
            EndReason::Stopped => "stopped",
        }
    }

    /// Exit status of `demo` and `run`: 0 when the protocol finished or the operator chose to
    /// end (also by a termination signal, which ends the session properly), 1 when the session
    /// was cut short otherwise (the abort rule).
    pub fn exit_code(self) -> i32 {
        match self {
            EndReason::ProtocolFinished | EndReason::EndedByOperator | EndReason::Signal(_) => 0,
            EndReason::NoFlight
            | EndReason::SensorLost
            | EndReason::EndOfRecording
            | EndReason::Stopped => 1,
        }
    }
}

/// How the session ended.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// The session folder.
    pub dir: PathBuf,
    /// Why it ended (its `status()` is the final status, "complete" or "aborted").
    pub end: EndReason,
    /// Samples written.
    pub samples: u64,
}

/// The clock an engine runs on.
pub enum EngineClock {
    /// Real (or scaled real) time: the loop sleeps between iterations.
    Real(Box<dyn Clock>),
    /// Simulated time the engine advances itself, as fast as possible.
    Sim(SimClock),
}

/// The UTC offset of an IANA time zone at an instant (UTC when the name is unknown).
pub fn local_offset_for(time_zone: &str, at: DateTime<Utc>) -> FixedOffset {
    match time_zone.parse::<chrono_tz::Tz>() {
        Ok(tz) => tz.offset_from_utc_datetime(&at.naive_utc()).fix(),
        Err(_) => FixedOffset::east_opt(0).unwrap_or_else(|| Utc.fix()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn end_reasons_give_the_words_and_exit_status_of_before() {
        // The words are the archive's (session.json `status` and `end_reason`); the exit status
        // is 0 for a finished protocol or an operator's end, 1 for the abort rule.
        let all = [
            (
                EndReason::ProtocolFinished,
                "complete",
                "protocol finished",
                0,
            ),
            (EndReason::NoFlight, "aborted", "no flight", 1),
            (
                EndReason::EndedByOperator,
                "aborted",
                "ended by the operator",
                0,
            ),
            (EndReason::Stopped, "aborted", "stopped", 1),
            (
                EndReason::Signal(crate::signals::StopSignal::Hup),
                "aborted",
                "ended by SIGHUP",
                0,
            ),
        ];
        for (end, status, text, code) in all {
            assert_eq!(
                (end.status(), end.text(), end.exit_code()),
                (status, text, code)
            );
            assert_eq!(
                end.status() == archive::SessionStatus::Complete.as_str(),
                end.is_complete()
            );
        }
    }
}
