//! The session engine: one loop that owns time and state.
//!
//! It drains the heading source and the turntable up to the clock's `now`, merges their events
//! in time order, runs the protocol's timeline at the exact instants it prescribes (epoch ends
//! are computed from the epoch clock, not from loop iterations, so a simulated session gives
//! the same archive whatever the loop's pace), stamps every sample (UTC = anchor + monotonic
//! seconds), converts frames, attaches sun geometry, marks settle windows, turns and flight,
//! feeds the summary, appends to the archive and publishes a read-only [`Snapshot`].

use crate::archive::{self, EventRow, SampleRow, SessionMeta, SessionWriter, SummaryBuilder};
use crate::clock::{Clock, SimClock};
use crate::engine::snapshot::{
    Command, EpochRow, EpochState, Health, Prompt, Snapshot, SnapshotCell, TracePoint, TurnRow,
};
use crate::frames::{
    arena_bearing_after_rotation_deg, sun_relative_heading_deg, world_heading_deg, wrap_360_deg,
};
use crate::protocol::{ArenaMove, Protocol};
use crate::rig::config::{BearingReference, Rig};
use crate::rig::sim::SimOperator;
use crate::rig::{HeadingSource, SensorEvent, Turntable, TurntableEvent};
use crate::sky::polarization::zenith_evector_deg;
use crate::sky::sun::SunTrack;
use chrono::{DateTime, Duration, FixedOffset, Offset, TimeZone, Utc};
use std::collections::VecDeque;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::Receiver;

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
}

/// How the session ended.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// The session folder.
    pub dir: PathBuf,
    /// Final status ("complete" or "aborted").
    pub status: String,
    /// Why it ended.
    pub reason: String,
    /// Samples written.
    pub samples: u64,
}

/// Session seconds of sim time advanced per loop iteration at `--speed max`.
const MAX_SPEED_STEP_S: f64 = 0.05;
/// Resolution of `t_s` in the archive (4 decimals): consecutive samples are at least this far
/// apart.
const T_S_RESOLUTION_S: f64 = 1e-4;
/// Spacing of trace points kept for screens, session seconds.
const TRACE_SPACING_S: f64 = 0.25;
/// Length of the trace kept for screens, session seconds.
const TRACE_WINDOW_S: f64 = 15.0 * 60.0;
/// Recent event lines kept for screens.
const RECENT_EVENTS: usize = 12;

/// The clock an engine runs on.
pub enum EngineClock {
    /// Real (or scaled real) time: the loop sleeps between iterations.
    Real(Box<dyn Clock>),
    /// Simulated time the engine advances itself, as fast as possible.
    Sim(SimClock),
}

#[derive(Debug, Clone)]
struct EpochRt {
    index: usize,
    condition: String,
    duration_s: f64,
    arena: ArenaMove,
    prompt: Option<String>,
    /// Planned turn before this epoch (resolved from the plan), degrees.
    planned_turn_deg: f64,
    state: EpochState,
    /// Arena position (degrees from start) during the epoch.
    position_deg: f64,
    started_s: Option<f64>,
    clock_s: f64,
    flying_s: f64,
}

#[derive(Debug, Clone, PartialEq)]
enum PromptKind {
    /// The protocol's prompt before epoch k.
    Protocol,
    /// The operator turns the arena by hand.
    ManualTurn { by_deg: f64 },
    /// The turntable failed: turn by hand or skip.
    TurntableFault { by_deg: f64 },
}

#[derive(Debug, Clone, PartialEq)]
enum Phase {
    /// Waiting for the operator before epoch `next`.
    Prompt {
        next: usize,
        kind: PromptKind,
        text: String,
        since_s: f64,
    },
    /// The turntable is turning before epoch `next`.
    Turning {
        next: usize,
        by_deg: f64,
        from_deg: f64,
        since_s: f64,
        commanded: bool,
    },
    /// Epoch `k` runs.
    Running { k: usize },
    /// All done.
    Finished,
}

/// The session engine.
pub struct Engine {
    setup: SessionSetup,
    meta: SessionMeta,
    writer: Option<SessionWriter>,
    summary: SummaryBuilder,
    sun: SunTrack,
    local_offset: FixedOffset,
    mark_true_deg: f64,
    epochs: Vec<EpochRt>,
    phase: Phase,
    /// Time up to which the timeline has been advanced.
    t_s: f64,
    position_deg: f64,
    settle_until_s: f64,
    flying: bool,
    stopped_since_s: Option<f64>,
    paused: bool,
    sensor_lost: bool,
    samples: u64,
    last_sample: Option<(f64, f64, f64, f64)>,
    trace: VecDeque<TracePoint>,
    turn_marks: VecDeque<f64>,
    recent: VecDeque<String>,
    /// Real (monotonic) instant of the last successful archive sync.
    last_sync: Option<std::time::Instant>,
    end: Option<(String, String)>,
    sensor_desc: String,
    turntable_desc: String,
    health: crate::rig::SensorHealth,
    progress_lines: Vec<String>,
}

impl Engine {
    /// Opens the archive folder and prepares the timeline. Nothing is written when the setup
    /// is invalid (unsafe animal id, magnetic mark with no declination, bad site).
    pub fn new(setup: SessionSetup) -> Result<Self, EngineError> {
        archive::validate_animal_id(&setup.animal)?;
        setup.rig.site.validate()?;
        if setup.protocol.epochs.is_empty() {
            return Err(EngineError::Setup("the protocol has no epochs".into()));
        }
        let site = &setup.rig.site;
        let date = setup.start_utc.date_naive();
        let declination = crate::sky::magnetic::declination_deg(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            date,
        );
        let mark_true_deg = match setup.rig.arena_mark_reference {
            BearingReference::True => wrap_360_deg(setup.rig.arena_mark_bearing_deg),
            BearingReference::Magnetic => match declination {
                Some(d) => {
                    crate::frames::true_from_magnetic_deg(setup.rig.arena_mark_bearing_deg, d)
                }
                None => {
                    return Err(EngineError::Setup(format!(
                        "rig: arena mark bearing is magnetic but the World Magnetic Model gives no declination for {date}; measure the bearing against true north"
                    )));
                }
            },
        };
        let sun = SunTrack::new(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            setup.start_utc,
        )?;
        let local_offset = local_offset_for(&setup.rig.time_zone, setup.start_utc);

        // Resolve the planned turns (GoTo relative to where the arena will be).
        let mut pos = 0.0;
        let mut epochs = Vec::with_capacity(setup.protocol.epochs.len());
        for e in &setup.protocol.epochs {
            let turn = e.arena.turn_from_deg(pos);
            pos += turn;
            epochs.push(EpochRt {
                index: e.index,
                condition: e.condition.clone(),
                duration_s: e.duration_s,
                arena: e.arena,
                prompt: e.prompt.clone(),
                planned_turn_deg: turn,
                state: EpochState::Pending,
                position_deg: pos,
                started_s: None,
                clock_s: 0.0,
                flying_s: 0.0,
            });
        }
        let planned: Vec<archive::PlannedEpoch> = epochs
            .iter()
            .map(|e| archive::PlannedEpoch {
                index: e.index,
                condition: e.condition.clone(),
                turn_before_deg: e.planned_turn_deg,
                duration_s: e.duration_s,
            })
            .collect();
        let id = archive::new_session_id(&setup.sessions_dir, date, &site.name, &setup.animal)?;
        let meta = SessionMeta {
            format_version: archive::FORMAT_VERSION,
            id,
            status: archive::SessionStatus::Running,
            started_utc: setup.start_utc,
            ended_utc: None,
            animal: setup.animal.clone(),
            site: archive::SiteMeta {
                name: site.name.clone(),
                latitude_deg: site.latitude_deg,
                longitude_deg: site.longitude_deg,
                elevation_m: site.elevation_m,
            },
            time_zone: setup.rig.time_zone.clone(),
            arena_mark_bearing_deg: mark_true_deg,
            arena_mark_bearing_measured_deg: setup.rig.arena_mark_bearing_deg,
            arena_mark_reference: match setup.rig.arena_mark_reference {
                BearingReference::True => "true".into(),
                BearingReference::Magnetic => "magnetic".into(),
            },
            declination_deg: declination,
            protocol: serde_json::to_value(&setup.protocol).unwrap_or(serde_json::Value::Null),
            epochs: planned.clone(),
            rig: {
                let mut rig = serde_json::to_value(&setup.rig).unwrap_or(serde_json::Value::Null);
                if let (Some(obj), Some(extra)) = (rig.as_object_mut(), setup.extra.as_object()) {
                    for (k, v) in extra {
                        obj.insert(k.clone(), v.clone());
                    }
                }
                rig
            },
            program_version: crate::VERSION.to_string(),
            mode: setup.mode.clone(),
            seed: setup.seed,
            end_reason: None,
            notes: 0,
        };
        let summary = SummaryBuilder::new(&planned);
        Ok(Self {
            meta,
            writer: None,
            summary,
            sun,
            local_offset,
            mark_true_deg,
            epochs,
            phase: Phase::Finished,
            t_s: 0.0,
            position_deg: 0.0,
            settle_until_s: 0.0,
            flying: true,
            stopped_since_s: None,
            paused: false,
            sensor_lost: false,
            samples: 0,
            last_sample: None,
            trace: VecDeque::new(),
            turn_marks: VecDeque::new(),
            recent: VecDeque::new(),
            last_sync: None,
            end: None,
            sensor_desc: String::new(),
            turntable_desc: String::new(),
            health: Default::default(),
            progress_lines: Vec::new(),
            setup,
        })
    }

    /// The session id.
    pub fn session_id(&self) -> &str {
        &self.meta.id
    }

    /// The session folder (once created).
    pub fn session_dir(&self) -> PathBuf {
        self.setup.sessions_dir.join(&self.meta.id)
    }

    fn utc_at(&self, t_s: f64) -> DateTime<Utc> {
        self.setup.start_utc + Duration::microseconds((t_s * 1e6).round() as i64)
    }

    fn event(
        &mut self,
        t_s: f64,
        kind: &str,
        detail: impl Into<String>,
    ) -> Result<(), EngineError> {
        let detail = detail.into();
        let row = EventRow {
            t_utc: self.utc_at(t_s),
            t_s,
            kind: kind.to_string(),
            detail,
        };
        let local = row
            .t_utc
            .with_timezone(&self.local_offset)
            .format("%H:%M:%S");
        let line = if row.detail.is_empty() {
            format!("{local} {kind}")
        } else {
            format!("{local} {kind}: {}", row.detail)
        };
        if self.recent.len() == RECENT_EVENTS {
            self.recent.pop_front();
        }
        if PROGRESS_KINDS.contains(&kind) {
            self.progress_lines.push(line.clone());
        }
        self.recent.push_back(line);
        if let Some(w) = self.writer.as_mut() {
            w.append_event(&row)?;
        }
        Ok(())
    }

    fn current_epoch(&self) -> usize {
        match &self.phase {
            Phase::Running { k } => self.epochs[*k].index,
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                // Samples while getting ready for epoch `next` belong to it (never scored).
                self.epochs[*next].index
            }
            Phase::Finished => self.epochs.last().map(|e| e.index).unwrap_or(0),
        }
    }

    /// Starts the transition into epoch `next` at `t`: prompt, turn, then the epoch itself.
    fn begin_epoch(&mut self, next: usize, t: f64, prompted: bool) -> Result<(), EngineError> {
        if next >= self.epochs.len() {
            self.finish_timeline(t, "complete", "protocol finished")?;
            return Ok(());
        }
        if !prompted && let Some(text) = self.epochs[next].prompt.clone() {
            self.event(t, "prompt", text.clone())?;
            self.phase = Phase::Prompt {
                next,
                kind: PromptKind::Protocol,
                text,
                since_s: t,
            };
            return Ok(());
        }
        let by_deg = self.epochs[next].arena.turn_from_deg(self.position_deg);
        if by_deg.abs() > 1e-9 {
            return self.start_turn(next, by_deg, t);
        }
        self.start_epoch(next, t, false)
    }

    fn start_turn(&mut self, next: usize, by_deg: f64, t: f64) -> Result<(), EngineError> {
        self.phase = Phase::Turning {
            next,
            by_deg,
            from_deg: self.position_deg,
            since_s: t,
            commanded: false,
        };
        Ok(())
    }

    fn start_epoch(&mut self, k: usize, t: f64, turned: bool) -> Result<(), EngineError> {
        self.epochs[k].state = EpochState::Current;
        self.epochs[k].started_s = Some(t);
        self.epochs[k].position_deg = self.position_deg;
        if turned || k > 0 {
            self.settle_until_s = t + self.setup.protocol.settle_s;
        } else {
            self.settle_until_s = t;
        }
        let e = &self.epochs[k];
        let bearing = arena_bearing_after_rotation_deg(self.mark_true_deg, self.position_deg);
        let detail = format!(
            "epoch {} of {}; condition {}; arena bearing {:.1} deg; {:.0} s",
            e.index,
            self.epochs.len(),
            e.condition,
            bearing,
            e.duration_s
        );
        self.phase = Phase::Running { k };
        self.event(t, "epoch_start", detail)
    }

    fn end_epoch(&mut self, k: usize, t: f64, state: EpochState) -> Result<(), EngineError> {
        self.epochs[k].state = state;
        let kind = if state == EpochState::Skipped {
            "epoch_skipped"
        } else {
            "epoch_end"
        };
        self.event(t, kind, format!("epoch {}", self.epochs[k].index))?;
        self.begin_epoch(k + 1, t, false)
    }

    fn finish_timeline(&mut self, t: f64, status: &str, reason: &str) -> Result<(), EngineError> {
        if self.end.is_none() {
            if let Phase::Running { k } = self.phase
                && self.epochs[k].state == EpochState::Current
            {
                self.epochs[k].state = EpochState::Done;
            }
            self.phase = Phase::Finished;
            self.t_s = self.t_s.max(t);
            self.end = Some((status.to_string(), reason.to_string()));
        }
        Ok(())
    }

    /// Is the epoch clock running right now?
    fn clock_runs(&self) -> bool {
        !self.paused && (self.flying || !self.setup.protocol.flight.pause_clock_when_stopped)
    }

    /// Advances the timeline to `t`, executing epoch ends (and the abort rule) at the exact
    /// instants they fall on.
    fn advance_to(&mut self, t: f64) -> Result<(), EngineError> {
        while t > self.t_s && self.end.is_none() {
            let from = self.t_s;
            // Abort rule: too long without flight.
            let abort_at = match (
                self.setup.protocol.flight.abort_after_stopped_s,
                self.stopped_since_s,
            ) {
                (Some(limit), Some(since)) if !self.flying => Some(since + limit),
                _ => None,
            };
            let end_at = match self.phase {
                Phase::Running { k } => {
                    let e = &self.epochs[k];
                    let runs = self.clock_runs();
                    let need_clock = (e.duration_s - e.clock_s).max(0.0);
                    let need_fly = match self.setup.protocol.flight.min_flying_s {
                        Some(m) => (m - e.flying_s).max(0.0),
                        None => 0.0,
                    };
                    let fly_runs = self.flying && !self.paused;
                    let clock_done_at = if need_clock == 0.0 {
                        Some(from)
                    } else if runs {
                        Some(from + need_clock)
                    } else {
                        None
                    };
                    let fly_done_at = if need_fly == 0.0 {
                        Some(from)
                    } else if fly_runs {
                        Some(from + need_fly)
                    } else {
                        None
                    };
                    match (clock_done_at, fly_done_at) {
                        (Some(a), Some(b)) => Some(a.max(b)),
                        _ => None,
                    }
                }
                _ => None,
            };
            let next_at = [end_at, abort_at]
                .into_iter()
                .flatten()
                .fold(f64::INFINITY, f64::min);
            let step_to = next_at.min(t).max(from);
            self.accrue(from, step_to);
            self.t_s = step_to;
            if step_to >= t && next_at > t {
                break;
            }
            if abort_at.is_some_and(|a| a <= step_to) {
                let limit = self
                    .setup
                    .protocol
                    .flight
                    .abort_after_stopped_s
                    .unwrap_or(0.0);
                self.event(step_to, "abort", format!("no flight for {limit:.0} s"))?;
                self.finish_timeline(step_to, "aborted", "no flight")?;
                break;
            }
            if end_at.is_some_and(|a| a <= step_to)
                && let Phase::Running { k } = self.phase
            {
                self.end_epoch(k, step_to, EpochState::Done)?;
            }
            if step_to >= t {
                break;
            }
        }
        Ok(())
    }

    fn accrue(&mut self, from: f64, to: f64) {
        let dt = to - from;
        if dt <= 0.0 {
            return;
        }
        if let Phase::Running { k } = self.phase {
            let runs = self.clock_runs();
            let e = &mut self.epochs[k];
            if runs {
                e.clock_s += dt;
            }
            if self.flying && !self.paused {
                e.flying_s += dt;
            }
        }
    }

    fn arena_position_at(&self, t: f64, turntable: &dyn Turntable) -> f64 {
        match &self.phase {
            Phase::Turning { .. } => turntable.position_deg(t).unwrap_or(self.position_deg),
            _ => self.position_deg,
        }
    }

    fn on_sample(
        &mut self,
        t: f64,
        raw: f64,
        arena_heading_deg: f64,
        turntable: &dyn Turntable,
    ) -> Result<(), EngineError> {
        let pos = self.arena_position_at(t, turntable);
        let bearing = arena_bearing_after_rotation_deg(self.mark_true_deg, pos);
        let world = world_heading_deg(arena_heading_deg, bearing);
        let sun = self.sun.at(t);
        let sun_rel = sun_relative_heading_deg(world, sun.azimuth_deg);
        let running = matches!(self.phase, Phase::Running { .. });
        let scored = running && !self.paused && self.flying && t >= self.settle_until_s;
        let row = SampleRow {
            t_utc: self.utc_at(t),
            t_s: t,
            epoch: self.current_epoch(),
            arena_heading_deg,
            arena_bearing_deg: bearing,
            world_heading_deg: world,
            sun_azimuth_deg: sun.azimuth_deg,
            sun_elevation_deg: sun.elevation_deg,
            flying: self.flying,
            scored,
            sun_relative_heading_deg: sun_rel,
            zenith_evector_deg: zenith_evector_deg(sun.azimuth_deg),
            raw,
        };
        if let Some(w) = self.writer.as_mut() {
            w.append_sample(&row)?;
        }
        self.summary.push(&row);
        self.samples += 1;
        self.last_sample = Some((t, arena_heading_deg, world, sun_rel));
        let due = self
            .trace
            .back()
            .is_none_or(|p| t - p.t_s >= TRACE_SPACING_S);
        if due {
            self.trace.push_back(TracePoint {
                t_s: t,
                arena_deg: arena_heading_deg,
                world_deg: world,
                sun_deg: sun_rel,
                flying: self.flying,
            });
            while self
                .trace
                .front()
                .is_some_and(|p| t - p.t_s > TRACE_WINDOW_S)
            {
                self.trace.pop_front();
            }
            while self
                .turn_marks
                .front()
                .is_some_and(|m| t - m > TRACE_WINDOW_S)
            {
                self.turn_marks.pop_front();
            }
        }
        Ok(())
    }

    fn set_flying(&mut self, t: f64, flying: bool) -> Result<(), EngineError> {
        if flying == self.flying {
            return Ok(());
        }
        self.advance_to(t)?;
        self.flying = flying;
        if flying {
            self.stopped_since_s = None;
            self.event(t, "flight_start", "")?;
        } else {
            self.stopped_since_s = Some(t);
            self.event(t, "flight_stop", "")?;
        }
        Ok(())
    }

    fn on_turntable(&mut self, ev: TurntableEvent) -> Result<(), EngineError> {
        match ev {
            TurntableEvent::Done { t_s, position_deg } => {
                self.advance_to(t_s)?;
                if let Phase::Turning {
                    next,
                    by_deg,
                    from_deg,
                    ..
                } = self.phase.clone()
                {
                    self.position_deg = from_deg + by_deg;
                    let reported = position_deg
                        .map(|p| format!("; reported position {p:.1} deg"))
                        .unwrap_or_default();
                    self.event(t_s, "turn_done", format!("{by_deg:+.1} deg{reported}"))?;
                    self.turn_marks.push_back(t_s);
                    self.start_epoch(next, t_s, true)?;
                } else {
                    self.event(t_s, "turntable_reply", "unexpected done")?;
                }
            }
            TurntableEvent::Fault { t_s, text } => {
                self.advance_to(t_s)?;
                self.event(t_s, "turn_fault", text.clone())?;
                if let Phase::Turning {
                    next,
                    by_deg,
                    from_deg,
                    ..
                } = self.phase.clone()
                {
                    self.position_deg = from_deg;
                    let prompt = format!(
                        "Turntable fault ({text}). Turn the arena {by_deg:+.0}° by hand (clockwise seen from above is +), then press Enter"
                    );
                    self.event(t_s, "prompt", prompt.clone())?;
                    self.phase = Phase::Prompt {
                        next,
                        kind: PromptKind::TurntableFault { by_deg },
                        text: prompt,
                        since_s: t_s,
                    };
                }
            }
        }
        Ok(())
    }

    fn on_command(
        &mut self,
        t: f64,
        cmd: Command,
        turntable: &mut dyn Turntable,
    ) -> Result<(), EngineError> {
        self.advance_to(t)?;
        match cmd {
            Command::FlightStop => self.set_flying(t, false)?,
            Command::FlightStart => self.set_flying(t, true)?,
            Command::Note(text) => self.event(t, "note", text)?,
            Command::Pause => {
                if !self.paused {
                    self.paused = true;
                    self.event(t, "pause", "")?;
                }
            }
            Command::Resume => {
                if self.paused {
                    self.paused = false;
                    self.event(t, "resume", "")?;
                }
            }
            Command::SkipEpoch => match self.phase.clone() {
                Phase::Running { k } => self.end_epoch(k, t, EpochState::Skipped)?,
                Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                    self.epochs[next].state = EpochState::Skipped;
                    self.event(
                        t,
                        "epoch_skipped",
                        format!("epoch {}", self.epochs[next].index),
                    )?;
                    self.begin_epoch(next + 1, t, false)?;
                }
                Phase::Finished => {}
            },
            Command::ConfirmPrompt => {
                if let Phase::Prompt { next, kind, .. } = self.phase.clone() {
                    self.event(t, "prompt_confirmed", "")?;
                    match kind {
                        PromptKind::Protocol => {
                            let by_deg = self.epochs[next].arena.turn_from_deg(self.position_deg);
                            if by_deg.abs() > 1e-9 {
                                self.start_turn(next, by_deg, t)?;
                                self.drive_turn(turntable)?;
                            } else {
                                self.start_epoch(next, t, false)?;
                            }
                        }
                        PromptKind::ManualTurn { by_deg }
                        | PromptKind::TurntableFault { by_deg } => {
                            self.position_deg += by_deg;
                            self.event(
                                t,
                                "turn_done",
                                format!("{by_deg:+.1} deg (by hand, confirmed)"),
                            )?;
                            self.turn_marks.push_back(t);
                            self.start_epoch(next, t, true)?;
                        }
                    }
                }
            }
            Command::EndSession => {
                self.event(t, "end_requested", "by the operator")?;
                let all_done = self
                    .epochs
                    .iter()
                    .all(|e| e.state != EpochState::Pending && e.state != EpochState::Current);
                if all_done {
                    self.finish_timeline(t, "complete", "protocol finished")?;
                } else {
                    self.finish_timeline(t, "aborted", "ended by the operator")?;
                }
            }
        }
        Ok(())
    }

    fn manual_turn_prompt(&mut self, next: usize, by_deg: f64, t: f64) -> Result<(), EngineError> {
        let text = format!(
            "Turn the arena {by_deg:+.0}° ({}), then press Enter",
            if by_deg >= 0.0 {
                "clockwise seen from above"
            } else {
                "counterclockwise seen from above"
            }
        );
        self.event(t, "prompt", text.clone())?;
        self.phase = Phase::Prompt {
            next,
            kind: PromptKind::ManualTurn { by_deg },
            text,
            since_s: t,
        };
        Ok(())
    }

    /// If the timeline has just entered a turn, command it (or prompt for a manual one).
    fn drive_turn(&mut self, turntable: &mut dyn Turntable) -> Result<(), EngineError> {
        loop {
            let Phase::Turning {
                next,
                by_deg,
                since_s,
                commanded: false,
                ..
            } = self.phase.clone()
            else {
                return Ok(());
            };
            if let Phase::Turning { commanded, .. } = &mut self.phase {
                *commanded = true;
            }
            if turntable.is_manual() {
                return self.manual_turn_prompt(next, by_deg, since_s);
            }
            self.event(
                since_s,
                "turn_commanded",
                format!("{by_deg:+.1} deg before epoch {}", self.epochs[next].index),
            )?;
            if let Err(e) = turntable.start_turn(since_s, by_deg) {
                self.on_turntable(TurntableEvent::Fault {
                    t_s: since_s,
                    text: e.to_string(),
                })?;
            }
            // A fault may have moved us on; loop in case a new turn is pending.
        }
    }
}

/// The UTC offset of an IANA time zone at an instant (UTC when the name is unknown).
pub fn local_offset_for(time_zone: &str, at: DateTime<Utc>) -> FixedOffset {
    match time_zone.parse::<chrono_tz::Tz>() {
        Ok(tz) => tz.offset_from_utc_datetime(&at.naive_utc()).fix(),
        Err(_) => FixedOffset::east_opt(0).unwrap_or_else(|| Utc.fix()),
    }
}

/// What the run loop talks to besides the engine itself.
pub struct Wiring<'a> {
    /// Heading source.
    pub sensor: &'a mut dyn HeadingSource,
    /// Turntable.
    pub turntable: &'a mut dyn Turntable,
    /// The clock.
    pub clock: EngineClock,
    /// Where snapshots go.
    pub cell: &'a SnapshotCell,
    /// Operator commands.
    pub commands: &'a Receiver<Command>,
    /// Set from a signal handler: end the session properly.
    pub stop: &'a AtomicBool,
    /// Progress lines (headless runs print them).
    pub progress: &'a mut dyn FnMut(&str),
    /// Confirm operator prompts by itself after this many session seconds (headless demo).
    pub auto_confirm_after_s: Option<f64>,
    /// The simulated operator who marks flight stops (demo only).
    pub sim_operator: Option<SimOperator>,
}

/// Reused buffers of the run loop.
struct Buffers {
    sensor: Vec<SensorEvent>,
    turntable: Vec<TurntableEvent>,
    marks: Vec<(f64, Command)>,
}

/// Event kinds that also go to the progress output.
const PROGRESS_KINDS: &[&str] = &[
    "session_start",
    "epoch_start",
    "turn_done",
    "turn_fault",
    "prompt",
    "prompt_confirmed",
    "sensor_lost",
    "sensor_back",
    "flight_stop",
    "flight_start",
    "abort",
    "end_requested",
    "session_end",
];

impl Engine {
    fn poll_turntable(
        &mut self,
        t: f64,
        turntable: &mut dyn Turntable,
        buf: &mut Vec<TurntableEvent>,
    ) -> Result<(), EngineError> {
        buf.clear();
        if let Err(e) = turntable.poll(t, buf) {
            self.event(t, "turntable_error", e.to_string())?;
        }
        for ev in std::mem::take(buf) {
            self.on_turntable(ev)?;
            self.drive_turn(turntable)?;
        }
        Ok(())
    }

    /// Runs the session to its end: creates the archive folder, runs the timeline, closes the
    /// archive (summary.json, final session.json). Returns where it went and how it ended.
    pub fn run(mut self, w: Wiring<'_>) -> Result<Outcome, EngineError> {
        let Wiring {
            sensor,
            turntable,
            clock,
            cell,
            commands,
            stop,
            progress,
            auto_confirm_after_s,
            mut sim_operator,
        } = w;
        // Two runs started together may have chosen the same id: take the next counter.
        self.writer = Some(SessionWriter::create_next(
            &self.setup.sessions_dir,
            &mut self.meta,
        )?);
        self.sensor_desc = sensor.describe();
        self.turntable_desc = turntable.describe();
        let mut progress_seen = 0usize;
        self.event(
            0.0,
            "session_start",
            format!(
                "{} at {}; animal {}; protocol {}; sensor {}; turntable {}",
                self.meta.id,
                self.setup.rig.site.name,
                self.setup.animal,
                self.setup.protocol.name,
                self.sensor_desc,
                self.turntable_desc
            ),
        )?;
        self.begin_epoch(0, 0.0, false)?;
        self.drive_turn(turntable)?;

        let mut bufs = Buffers {
            sensor: Vec::with_capacity(4096),
            turntable: Vec::new(),
            marks: Vec::new(),
        };
        let mut last_publish: Option<std::time::Instant> = None;
        let mut next_status_s = 60.0;
        let mut stop_sent = false;
        let mut fatal: Option<EngineError> = None;
        loop {
            let now = match &clock {
                EngineClock::Sim(c) => {
                    let n = c.now_s() + MAX_SPEED_STEP_S;
                    c.advance_to(n);
                    n
                }
                EngineClock::Real(c) => c.now_s(),
            };
            let step = self.step(
                now,
                sensor,
                turntable,
                &mut bufs,
                commands,
                sim_operator.as_mut(),
            );
            if let Err(e) = step {
                fatal = Some(e);
                break;
            }
            if let (Some(after), Phase::Prompt { since_s, .. }) =
                (auto_confirm_after_s, &self.phase)
                && now - since_s >= after
            {
                let t = since_s + after;
                self.event(t, "note", "prompt confirmed by the simulated operator")?;
                self.on_command(t, Command::ConfirmPrompt, turntable)?;
                self.drive_turn(turntable)?;
            }
            if stop.load(Ordering::SeqCst) && !stop_sent {
                stop_sent = true;
                self.on_command(now, Command::EndSession, turntable)?;
            }
            if let Some(wr) = self.writer.as_mut() {
                match wr.sync_if_due() {
                    Ok(Some(_)) => self.last_sync = Some(std::time::Instant::now()),
                    Ok(None) => {}
                    Err(e) => {
                        fatal = Some(e.into());
                        break;
                    }
                }
            }
            // Progress lines: selected events, plus a status line every minute of session time.
            let new_lines: Vec<String> = self.progress_lines.drain(progress_seen..).collect();
            progress_seen = 0;
            for l in new_lines {
                progress(&l);
            }
            if now >= next_status_s && self.end.is_none() {
                next_status_s = (now / 60.0).floor() * 60.0 + 60.0;
                progress(&self.status_line(now));
            }
            let publish_due =
                last_publish.is_none_or(|p| p.elapsed() >= std::time::Duration::from_millis(33));
            if publish_due || self.end.is_some() {
                self.health = sensor.health();
                cell.publish(self.snapshot(now));
                last_publish = Some(std::time::Instant::now());
            }
            if self.end.is_some() {
                break;
            }
            if let EngineClock::Real(_) = clock {
                std::thread::sleep(std::time::Duration::from_millis(5));
            }
        }
        if let Some(e) = fatal {
            // Keep what reached the disk: try to flush, then report.
            if let Some(wr) = self.writer.as_mut() {
                let _ = wr.sync_now();
            }
            return Err(e);
        }
        self.close(cell, progress)
    }

    /// One loop iteration's worth of input up to `now`.
    fn step(
        &mut self,
        now: f64,
        sensor: &mut dyn HeadingSource,
        turntable: &mut dyn Turntable,
        bufs: &mut Buffers,
        commands: &Receiver<Command>,
        mut operator: Option<&mut SimOperator>,
    ) -> Result<(), EngineError> {
        let Buffers {
            sensor: sensor_buf,
            turntable: tt_buf,
            marks,
        } = bufs;
        sensor_buf.clear();
        if let Err(e) = sensor.drain(now, sensor_buf) {
            self.event(self.t_s, "sensor_error", e.to_string())?;
        }
        for ev in sensor_buf.drain(..) {
            let t = match &ev {
                SensorEvent::Sample { t_s, .. }
                | SensorEvent::Malformed { t_s, .. }
                | SensorEvent::Lost { t_s }
                | SensorEvent::Back { t_s } => *t_s,
            };
            // Never let a late stamp bend time backwards. Lines read from a serial port in one
            // burst carry the same arrival stamp: samples are spread by the archive's time
            // resolution (0.1 ms) so that t_s strictly increases.
            let mut t = t.max(self.t_s);
            if matches!(ev, SensorEvent::Sample { .. })
                && let Some((last, ..)) = self.last_sample
            {
                t = t.max(last + T_S_RESOLUTION_S);
            }
            self.poll_turntable(t, turntable, tt_buf)?;
            if let Some(op) = operator.as_deref_mut() {
                marks.clear();
                op.poll(t, marks);
                for (tm, cmd) in marks.drain(..) {
                    self.on_command(tm.max(self.t_s), cmd, turntable)?;
                    self.drive_turn(turntable)?;
                }
            }
            self.advance_to(t)?;
            self.drive_turn(turntable)?;
            if self.end.is_some() {
                return Ok(());
            }
            match ev {
                SensorEvent::Sample {
                    raw,
                    arena_heading_deg,
                    ..
                } => self.on_sample(t, raw, arena_heading_deg, turntable)?,
                SensorEvent::Malformed { reason, text, .. } => {
                    self.event(t, "malformed_line", format!("{reason}: {text}"))?
                }
                SensorEvent::Lost { .. } => {
                    self.sensor_lost = true;
                    self.event(t, "sensor_lost", "no data")?
                }
                SensorEvent::Back { .. } => {
                    self.sensor_lost = false;
                    self.event(t, "sensor_back", "")?
                }
            }
        }
        let now = now.max(self.t_s);
        self.poll_turntable(now, turntable, tt_buf)?;
        self.advance_to(now)?;
        self.drive_turn(turntable)?;
        while self.end.is_none() {
            match commands.try_recv() {
                Ok(cmd) => {
                    self.on_command(now, cmd, turntable)?;
                    self.drive_turn(turntable)?;
                }
                Err(_) => break,
            }
        }
        Ok(())
    }

    fn close(
        mut self,
        cell: &SnapshotCell,
        progress: &mut dyn FnMut(&str),
    ) -> Result<Outcome, EngineError> {
        let (status, reason) = self
            .end
            .clone()
            .unwrap_or_else(|| ("aborted".into(), "stopped".into()));
        let t_end = self.t_s;
        self.event(t_end, "session_end", format!("{status}: {reason}"))?;
        for l in std::mem::take(&mut self.progress_lines) {
            progress(&l);
        }
        let summary = self.summary.summary();
        self.meta.status = if status == "complete" {
            archive::SessionStatus::Complete
        } else {
            archive::SessionStatus::Aborted
        };
        self.meta.ended_utc = Some(self.utc_at(t_end));
        self.meta.end_reason = Some(reason.clone());
        let dir = match self.writer.take() {
            Some(w) => w.finish(&self.meta, &summary)?,
            None => self.session_dir(),
        };
        progress(&format!(
            "session {status} ({reason}): {} samples, r world {:.3}, r arena {:.3}",
            self.samples, summary.r_world, summary.r_arena
        ));
        let mut snap = self.snapshot(t_end);
        snap.ended = true;
        snap.end_reason = Some(format!("{status}: {reason}"));
        cell.publish(snap);
        Ok(Outcome {
            dir,
            status,
            reason,
            samples: self.samples,
        })
    }

    fn status_line(&self, now: f64) -> String {
        let s = self.summary.summary();
        let epoch = self.current_epoch();
        let ep = s.epochs.iter().find(|e| e.index == epoch);
        format!(
            "t {:>6.0} s  epoch {}/{}  n {}  r {:.2}  mean world {}  samples {}",
            now,
            epoch,
            self.epochs.len(),
            ep.map(|e| e.n).unwrap_or(0),
            ep.map(|e| e.r).unwrap_or(0.0),
            ep.and_then(|e| e.mean_world_deg)
                .map(|m| format!("{m:.0}°"))
                .unwrap_or_else(|| "-".into()),
            self.samples
        )
    }

    /// The read-only picture of the session for screens.
    pub fn snapshot(&self, now: f64) -> Snapshot {
        let summary = self.summary.summary();
        let sun_now = self.sun.clone().at(now.max(0.0));
        let pos = self.position_deg;
        let epochs: Vec<EpochRow> = self
            .epochs
            .iter()
            .map(|e| {
                let s = summary.epochs.iter().find(|x| x.index == e.index);
                EpochRow {
                    index: e.index,
                    condition: e.condition.clone(),
                    arena_bearing_deg: arena_bearing_after_rotation_deg(
                        self.mark_true_deg,
                        e.position_deg,
                    ),
                    duration_s: e.duration_s,
                    flying_s: e.flying_s,
                    n: s.map(|x| x.n).unwrap_or(0),
                    mean_arena_deg: s.and_then(|x| x.mean_arena_deg),
                    mean_world_deg: s.and_then(|x| x.mean_world_deg),
                    r: s.map(|x| x.r).unwrap_or(0.0),
                    rayleigh_p_eff: s.map(|x| x.rayleigh_p_eff).unwrap_or(1.0),
                    state: e.state,
                }
            })
            .collect();
        let turns: Vec<TurnRow> = summary
            .turns
            .iter()
            .map(|t| TurnRow {
                index: t.index,
                turn_deg: t.turn_deg,
                world_shift_deg: t.world_shift_deg,
            })
            .collect();
        let (epoch_left, k_opt) = match &self.phase {
            Phase::Running { k } => {
                let e = &self.epochs[*k];
                ((e.duration_s - e.clock_s).max(0.0), Some(*k))
            }
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                (0.0, Some(next.saturating_sub(1)))
            }
            Phase::Finished => (0.0, None),
        };
        let later: f64 = match &self.phase {
            Phase::Running { k } => self.epochs[k + 1..].iter().map(|e| e.duration_s).sum(),
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                self.epochs[*next..].iter().map(|e| e.duration_s).sum()
            }
            Phase::Finished => 0.0,
        };
        let (next_turn_in_s, next_turn_deg) = match (&self.phase, k_opt) {
            (Phase::Running { .. }, Some(k)) if k + 1 < self.epochs.len() => {
                let t = self.epochs[k + 1].arena.turn_from_deg(pos);
                if t.abs() > 1e-9 {
                    (Some(epoch_left), Some(t))
                } else {
                    (None, None)
                }
            }
            _ => (None, None),
        };
        let prompt = match &self.phase {
            Phase::Prompt { text, since_s, .. } => Some(Prompt {
                text: text.clone(),
                waiting_s: now - since_s,
                countdown_s: -(now - since_s),
            }),
            _ => None,
        };
        let condition = match &self.phase {
            Phase::Running { k } => self.epochs[*k].condition.clone(),
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                self.epochs[*next].condition.clone()
            }
            Phase::Finished => String::new(),
        };
        let cur_pos = match &self.phase {
            Phase::Turning { from_deg, .. } => *from_deg,
            _ => pos,
        };
        Snapshot {
            session_id: self.meta.id.clone(),
            session_dir: self.session_dir(),
            animal: self.setup.animal.clone(),
            site_name: self.setup.rig.site.name.clone(),
            protocol_name: self.setup.protocol.name.clone(),
            now_utc: self.utc_at(now),
            local_offset: self.local_offset,
            t_s: now,
            remaining_s: if self.end.is_some() {
                None
            } else {
                Some(epoch_left + later)
            },
            epoch: self.current_epoch(),
            epoch_count: self.epochs.len(),
            condition,
            next_turn_in_s,
            next_turn_deg,
            turning: matches!(self.phase, Phase::Turning { .. }),
            settling: matches!(self.phase, Phase::Running { .. }) && now < self.settle_until_s,
            paused: self.paused,
            flying: self.flying,
            arena_bearing_deg: arena_bearing_after_rotation_deg(self.mark_true_deg, cur_pos),
            sun_azimuth_deg: sun_now.azimuth_deg,
            sun_elevation_deg: sun_now.elevation_deg,
            zenith_evector_deg: zenith_evector_deg(sun_now.azimuth_deg),
            arena_heading_deg: self.last_sample.map(|s| s.1),
            world_heading_deg: self.last_sample.map(|s| s.2),
            sun_relative_heading_deg: self.last_sample.map(|s| s.3),
            trace: self.trace.iter().copied().collect(),
            turn_marks_s: self.turn_marks.iter().copied().collect(),
            epochs,
            turns,
            r_world: summary.r_world,
            r_arena: summary.r_arena,
            health: Health {
                rate_hz: self.health.rate_hz,
                jitter_ms: self.health.jitter_ms,
                malformed: self.health.malformed,
                lost_periods: self.health.lost_periods,
                sensor_lost: self.sensor_lost,
                // Shown as an age on the session's own time line: now minus the real time since
                // the sync (so an accelerated demo does not look stale).
                last_sync_utc: self.last_sync.map(|i| {
                    self.utc_at(now) - Duration::milliseconds(i.elapsed().as_millis() as i64)
                }),
                samples_written: self.samples,
                archive_error: None,
                sensor: self.sensor_desc.clone(),
                turntable: self.turntable_desc.clone(),
            },
            prompt,
            recent_events: self.recent.iter().cloned().collect(),
            ended: false,
            end_reason: None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::protocol::{EpochPlan, FlightRules};

    /// A turntable that replies after a fixed delay, faults, or is turned by hand.
    struct FakeTable {
        manual: bool,
        fail: bool,
        delay_s: f64,
        pending: Option<(f64, f64)>,
        commanded: Vec<f64>,
    }

    impl FakeTable {
        fn motor(delay_s: f64) -> Self {
            Self {
                manual: false,
                fail: false,
                delay_s,
                pending: None,
                commanded: Vec::new(),
            }
        }
    }

    impl Turntable for FakeTable {
        fn start_turn(&mut self, now_s: f64, by_deg: f64) -> Result<(), crate::rig::RigError> {
            self.commanded.push(by_deg);
            self.pending = Some((now_s + self.delay_s, by_deg));
            Ok(())
        }
        fn poll(
            &mut self,
            now_s: f64,
            out: &mut Vec<TurntableEvent>,
        ) -> Result<(), crate::rig::RigError> {
            if let Some((at, _)) = self.pending
                && at <= now_s
            {
                self.pending = None;
                out.push(if self.fail {
                    TurntableEvent::Fault {
                        t_s: at,
                        text: "no reply".into(),
                    }
                } else {
                    TurntableEvent::Done {
                        t_s: at,
                        position_deg: None,
                    }
                });
            }
            Ok(())
        }
        fn is_manual(&self) -> bool {
            self.manual
        }
        fn describe(&self) -> String {
            "fake".into()
        }
    }

    fn epoch(index: usize, duration_s: f64, arena: ArenaMove, prompt: Option<&str>) -> EpochPlan {
        EpochPlan {
            index,
            duration_s,
            condition: "open sky".into(),
            arena,
            prompt: prompt.map(str::to_string),
        }
    }

    fn engine(dir: &std::path::Path, epochs: Vec<EpochPlan>, flight: FlightRules) -> Engine {
        let protocol = Protocol {
            name: "test".into(),
            description: String::new(),
            settle_s: 2.0,
            flight,
            epochs,
        };
        let setup = SessionSetup {
            mode: "demo".into(),
            animal: "t-01".into(),
            sessions_dir: dir.to_path_buf(),
            protocol,
            rig: crate::rig::config::demo_rig(),
            start_utc: "2026-06-14T07:30:00Z".parse().expect("time"),
            speed: Speed::Max,
            seed: None,
            extra: serde_json::Value::Null,
        };
        Engine::new(setup).expect("engine")
    }

    fn started(e: &Engine, k: usize) -> Option<f64> {
        e.epochs[k].started_s
    }

    fn cmd(e: &mut Engine, t: f64, c: Command, tt: &mut FakeTable) {
        e.on_command(t, c, tt).expect("command");
        e.drive_turn(tt).expect("turn");
    }

    fn advance(e: &mut Engine, t: f64, tt: &mut FakeTable) {
        let mut buf = Vec::new();
        e.poll_turntable(t, tt, &mut buf).expect("poll");
        e.advance_to(t).expect("advance");
        e.drive_turn(tt).expect("turn");
    }

    #[test]
    fn epoch_clock_pauses_while_not_flying() {
        let tmp = tempfile::tempdir().expect("tmp");
        let rules = FlightRules {
            pause_clock_when_stopped: true,
            ..Default::default()
        };
        let mut e = engine(
            tmp.path(),
            vec![
                epoch(1, 10.0, ArenaMove::Stay, None),
                epoch(2, 10.0, ArenaMove::Stay, None),
            ],
            rules,
        );
        let mut tt = FakeTable::motor(1.0);
        e.begin_epoch(0, 0.0, false).expect("begin");
        advance(&mut e, 3.0, &mut tt);
        cmd(&mut e, 3.0, Command::FlightStop, &mut tt);
        advance(&mut e, 8.0, &mut tt);
        cmd(&mut e, 8.0, Command::FlightStart, &mut tt);
        advance(&mut e, 14.9, &mut tt);
        assert_eq!(started(&e, 1), None, "3 s + 6.9 s of clock is not yet 10 s");
        advance(&mut e, 20.0, &mut tt);
        // 3 s before the stop + 7 s after it: the epoch ends at exactly 15 s.
        assert!((started(&e, 1).expect("epoch 2") - 15.0).abs() < 1e-9);
        assert_eq!(e.epochs[0].state, EpochState::Done);
    }

    #[test]
    fn epoch_is_extended_until_it_has_enough_flying_time() {
        let tmp = tempfile::tempdir().expect("tmp");
        let rules = FlightRules {
            min_flying_s: Some(8.0),
            ..Default::default()
        };
        let mut e = engine(
            tmp.path(),
            vec![
                epoch(1, 10.0, ArenaMove::Stay, None),
                epoch(2, 5.0, ArenaMove::Stay, None),
            ],
            rules,
        );
        let mut tt = FakeTable::motor(1.0);
        e.begin_epoch(0, 0.0, false).expect("begin");
        cmd(&mut e, 2.0, Command::FlightStop, &mut tt);
        cmd(&mut e, 6.0, Command::FlightStart, &mut tt);
        advance(&mut e, 11.0, &mut tt);
        assert_eq!(started(&e, 1), None, "only 7 flying seconds at 11 s");
        advance(&mut e, 30.0, &mut tt);
        assert!((started(&e, 1).expect("epoch 2") - 12.0).abs() < 1e-9);
    }

    #[test]
    fn session_aborts_after_too_long_without_flight() {
        let tmp = tempfile::tempdir().expect("tmp");
        let rules = FlightRules {
            abort_after_stopped_s: Some(5.0),
            ..Default::default()
        };
        let mut e = engine(
            tmp.path(),
            vec![epoch(1, 60.0, ArenaMove::Stay, None)],
            rules,
        );
        let mut tt = FakeTable::motor(1.0);
        e.begin_epoch(0, 0.0, false).expect("begin");
        cmd(&mut e, 2.0, Command::FlightStop, &mut tt);
        advance(&mut e, 6.9, &mut tt);
        assert!(e.end.is_none());
        advance(&mut e, 9.0, &mut tt);
        assert_eq!(e.end.as_ref().map(|x| x.0.as_str()), Some("aborted"));
        assert!(
            (e.t_s - 7.0).abs() < 1e-9,
            "aborted at exactly 7 s, not {}",
            e.t_s
        );
    }

    #[test]
    fn turns_settle_and_skip() {
        let tmp = tempfile::tempdir().expect("tmp");
        let mut e = engine(
            tmp.path(),
            vec![
                epoch(1, 10.0, ArenaMove::Stay, None),
                epoch(2, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
                epoch(
                    3,
                    10.0,
                    ArenaMove::GoTo {
                        position_deg: 270.0,
                    },
                    None,
                ),
            ],
            FlightRules::default(),
        );
        let mut tt = FakeTable::motor(3.0);
        e.begin_epoch(0, 0.0, false).expect("begin");
        advance(&mut e, 10.5, &mut tt);
        assert!(
            matches!(e.phase, Phase::Turning { .. }),
            "turning after epoch 1"
        );
        assert_eq!(tt.commanded, vec![90.0]);
        // A sample mid-turn is recorded but not scored.
        e.on_sample(11.0, 0.0, 10.0, &tt).expect("sample");
        advance(&mut e, 13.5, &mut tt);
        assert!(
            (started(&e, 1).expect("epoch 2") - 13.0).abs() < 1e-9,
            "epoch 2 starts when the turn is done"
        );
        assert!((e.settle_until_s - 15.0).abs() < 1e-9);
        // GoTo 270 from 90 is the shortest way: +180.
        cmd(&mut e, 16.0, Command::SkipEpoch, &mut tt);
        assert_eq!(e.epochs[1].state, EpochState::Skipped);
        assert_eq!(tt.commanded, vec![90.0, 180.0]);
        let s = e.summary.summary();
        assert_eq!(
            s.epochs.iter().map(|x| x.n).sum::<u64>(),
            0,
            "nothing scored yet"
        );
    }

    #[test]
    fn prompts_manual_turns_and_faults_wait_for_the_operator() {
        let tmp = tempfile::tempdir().expect("tmp");
        let mut e = engine(
            tmp.path(),
            vec![
                epoch(1, 5.0, ArenaMove::Stay, None),
                epoch(
                    2,
                    5.0,
                    ArenaMove::TurnBy { deg: -90.0 },
                    Some("place the diffuser"),
                ),
                epoch(3, 5.0, ArenaMove::TurnBy { deg: 90.0 }, None),
            ],
            FlightRules::default(),
        );
        let mut tt = FakeTable {
            manual: true,
            ..FakeTable::motor(0.0)
        };
        e.begin_epoch(0, 0.0, false).expect("begin");
        advance(&mut e, 6.0, &mut tt);
        assert!(matches!(
            &e.phase,
            Phase::Prompt {
                kind: PromptKind::Protocol,
                ..
            }
        ));
        advance(&mut e, 60.0, &mut tt);
        assert_eq!(started(&e, 1), None, "a prompt waits however long it takes");
        cmd(&mut e, 60.0, Command::ConfirmPrompt, &mut tt);
        assert!(matches!(
            &e.phase,
            Phase::Prompt {
                kind: PromptKind::ManualTurn { .. },
                ..
            }
        ));
        assert!(tt.commanded.is_empty(), "a manual table is never commanded");
        cmd(&mut e, 70.0, Command::ConfirmPrompt, &mut tt);
        assert_eq!(started(&e, 1), Some(70.0));
        assert!((e.position_deg + 90.0).abs() < 1e-9);
        // A motor that faults turns into a question to the operator.
        tt.manual = false;
        tt.fail = true;
        advance(&mut e, 75.5, &mut tt);
        advance(&mut e, 75.6, &mut tt);
        assert!(
            matches!(
                &e.phase,
                Phase::Prompt {
                    kind: PromptKind::TurntableFault { .. },
                    ..
                }
            ),
            "{:?}",
            e.phase
        );
        cmd(&mut e, 80.0, Command::ConfirmPrompt, &mut tt);
        assert_eq!(started(&e, 2), Some(80.0));
        assert!(e.position_deg.abs() < 1e-9);
    }

    #[test]
    fn scored_only_when_flying_running_and_settled() {
        let tmp = tempfile::tempdir().expect("tmp");
        let mut e = engine(
            tmp.path(),
            vec![epoch(1, 100.0, ArenaMove::TurnBy { deg: 90.0 }, None)],
            FlightRules::default(),
        );
        let mut tt = FakeTable::motor(1.0);
        e.begin_epoch(0, 0.0, false).expect("begin");
        e.drive_turn(&mut tt).expect("turn");
        advance(&mut e, 1.5, &mut tt);
        // Turn done at 1 s, settle until 3 s.
        for (t, expect) in [(2.0, false), (3.5, true)] {
            advance(&mut e, t, &mut tt);
            e.on_sample(t, 0.0, 45.0, &tt).expect("sample");
            assert_eq!(e.summary.summary().epochs[0].n, u64::from(expect), "at {t}");
        }
        cmd(&mut e, 4.0, Command::Pause, &mut tt);
        e.on_sample(4.5, 0.0, 45.0, &tt).expect("sample");
        cmd(&mut e, 5.0, Command::Resume, &mut tt);
        cmd(&mut e, 5.0, Command::FlightStop, &mut tt);
        e.on_sample(5.5, 0.0, 45.0, &tt).expect("sample");
        assert_eq!(
            e.summary.summary().epochs[0].n,
            1,
            "paused and stopped samples are not scored"
        );
        // World heading = arena heading + mark bearing (true 0) + arena position (90).
        assert_eq!(e.last_sample.map(|s| s.2), Some(135.0));
    }
}
