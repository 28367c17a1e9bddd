//! The session engine: one loop that owns time and state.
//!
//! It drains the heading source and the turntable up to the clock's `now`, merges their events
//! in time order, runs the protocol's timeline at the exact instants it prescribes (epoch ends
//! are computed from the epoch clock, not from loop iterations, so a simulated session gives
//! the same archive whatever the loop's pace), stamps every sample (UTC = anchor + monotonic
//! seconds), converts frames, attaches sun geometry, marks settle windows, turns and flight,
//! feeds the summary, appends to the archive and publishes a read-only
//! [`Snapshot`](crate::engine::Snapshot).
//!
//! The loop is the one owner of time; what it calls are plain parts: the protocol's
//! `Timeline` (`timeline.rs`), the `Stamper` of samples (`stamp.rs`), the live
//! `Scoring` (`scoring.rs`) and the snapshot builder and trace (`view.rs`); `setup.rs` holds
//! what a session is made from and how it ends.

use super::scoring::{Scoring, is_scored};
pub use super::setup::{
    EndReason, EngineClock, EngineError, Outcome, SessionSetup, Speed, local_offset_for,
};
use super::stamp::{SampleContext, Stamped, Stamper, session_time_s};
use super::tally::SecondTally;
use super::timeline::{Phase, Timeline};
use super::view::Trace;
use crate::archive::{self, EventRow, SessionMeta, SessionWriter, SummaryBuilder};
use crate::clock::Clock;
use crate::engine::snapshot::{Command, SnapshotCell};
use crate::rig::polarizer::Polarizer;
use crate::rig::sim::{OperatorAction, SimOperator};
use crate::rig::{HeadingSource, SensorEvent, Turntable, TurntableEvent};
use crate::signals::{StopSignal, stop_signal};
use crate::sky::sun::SunTrack;
use chrono::FixedOffset;
use std::collections::VecDeque;
use std::path::PathBuf;
use std::sync::atomic::AtomicUsize;
use std::sync::mpsc::Receiver;

/// Session seconds of sim time advanced per loop iteration at `--speed max`.
const MAX_SPEED_STEP_S: f64 = 0.05;
/// Suspended time, seconds, that makes a gap worth an event (the boot-time and monotonic
/// clocks drift apart by far less).
const SUSPEND_GAP_MIN_S: f64 = 0.5;
/// Recent event lines kept for screens.
const RECENT_EVENTS: usize = 12;

/// The session engine.
pub struct Engine {
    pub(super) setup: SessionSetup,
    pub(super) meta: SessionMeta,
    pub(super) writer: Option<SessionWriter>,
    /// Live scores.
    pub(super) scoring: Scoring,
    /// UTC stamps, frames and sun geometry of samples.
    pub(super) stamper: Stamper,
    pub(super) local_offset: FixedOffset,
    /// Epoch clock, turns, prompts and flight rules.
    pub(super) timeline: Timeline,
    /// Samples a burst could not stamp at or before the clock, counted per second.
    pub(super) dropped: SecondTally,
    /// Malformed sensor lines, counted per second (the lines go to `malformed.csv`).
    pub(super) malformed: SecondTally,
    /// Suspended seconds already marked as events.
    pub(super) suspended_seen_s: f64,
    pub(super) samples: u64,
    /// The last sample's frames.
    pub(super) last_sample: Option<Stamped>,
    /// Heading trace and turn marks for screens.
    pub(super) trace: Trace,
    pub(super) recent: VecDeque<String>,
    /// Real (monotonic) instant of the last successful archive sync.
    pub(super) last_sync: Option<std::time::Instant>,
    pub(super) sensor_desc: String,
    pub(super) turntable_desc: String,
    /// The rig's polarizer, if it has one ([`Engine::with_polarizer`]).
    pub(super) polarizer: Option<Box<dyn Polarizer>>,
    pub(super) health: crate::rig::SensorHealth,
    pub(super) progress_lines: Vec<String>,
}

impl Engine {
    /// Opens the archive folder and prepares the timeline. Nothing is written when the setup
    /// is invalid (unsafe animal id, magnetic mark with no declination, bad site).
    pub fn new(setup: SessionSetup) -> Result<Self, EngineError> {
        let (mark_true_deg, declination) = setup.checked_mark_bearing()?;
        let site = &setup.rig.site;
        let date = setup.start_utc.date_naive();
        let sun = SunTrack::new(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            setup.start_utc,
        )?;
        let local_offset = local_offset_for(&setup.rig.time_zone, setup.start_utc);

        let timeline = Timeline::new(&setup.protocol, mark_true_deg);
        let planned: Vec<archive::PlannedEpoch> = timeline
            .epochs
            .iter()
            .map(|e| archive::PlannedEpoch {
                index: e.index,
                condition: e.condition.clone(),
                turn_before_deg: e.planned_turn_deg,
                duration_s: e.duration_s,
            })
            .collect();
        let id = archive::new_rig_session_id(
            &setup.sessions_dir,
            date,
            &site.name,
            setup.rig.name.as_deref(),
            &setup.animal,
        )?;
        let meta = setup.session_meta(id, mark_true_deg, declination, &planned);
        Ok(Self {
            meta,
            writer: None,
            scoring: Scoring::new(SummaryBuilder::new(&planned)),
            stamper: Stamper::new(
                setup.start_utc,
                mark_true_deg,
                sun,
                setup.rig.sky_view_min_elevation_deg,
            ),
            local_offset,
            timeline,
            dropped: SecondTally::default(),
            malformed: SecondTally::default(),
            suspended_seen_s: 0.0,
            samples: 0,
            last_sample: None,
            trace: Trace::default(),
            recent: VecDeque::new(),
            last_sync: None,
            sensor_desc: String::new(),
            turntable_desc: String::new(),
            polarizer: None,
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

    pub(super) fn event(
        &mut self,
        t_s: f64,
        kind: &str,
        detail: impl Into<String>,
    ) -> Result<(), EngineError> {
        self.close_seconds(Some(t_s))?;
        self.write_event(t_s, kind, detail.into())
    }

    /// Writes the per-second counts whose second lies before `t_s` (all of them at the end,
    /// `None`), so that `events.csv` stays in time order.
    fn close_seconds(&mut self, t_s: Option<f64>) -> Result<(), EngineError> {
        let at_most = t_s.unwrap_or(self.timeline.t_s);
        let closed = match t_s {
            Some(t) => self.malformed.due(t),
            None => self.malformed.close(),
        };
        if let Some(c) = closed {
            self.write_event(
                c.row_time_s(at_most),
                "malformed_lines",
                format!(
                    "{} malformed sensor line{} in {:.0}-{:.0} s (the lines are in malformed.csv)",
                    c.count,
                    if c.count == 1 { "" } else { "s" },
                    c.start_s,
                    c.start_s + 1.0
                ),
            )?;
        }
        let closed = match t_s {
            Some(t) => self.dropped.due(t),
            None => self.dropped.close(),
        };
        if let Some(c) = closed {
            self.write_event(
                c.row_time_s(at_most),
                "samples_dropped",
                format!(
                    "{} samples in {:.0}-{:.0} s came faster than the archive's 1 µs resolution can stamp them",
                    c.count,
                    c.start_s,
                    c.start_s + 1.0
                ),
            )?;
        }
        Ok(())
    }

    fn write_event(&mut self, t_s: f64, kind: &str, detail: String) -> Result<(), EngineError> {
        let row = EventRow {
            t_utc: self.stamper.utc_at(t_s),
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

    /// Records the events the timeline queued, in order (and marks finished turns on the
    /// trace).
    fn record_timeline(&mut self) -> Result<(), EngineError> {
        for e in self.timeline.take_events() {
            if e.kind == "turn_done" {
                self.trace.mark_turn(e.t_s);
            }
            self.event(e.t_s, e.kind, e.detail)?;
        }
        for &k in &self.timeline.unscored_turns {
            self.scoring.unscore_turn(k);
        }
        Ok(())
    }

    /// Starts the transition into epoch `next` (see [`Timeline::begin_epoch`]).
    pub(super) fn begin_epoch(
        &mut self,
        next: usize,
        t: f64,
        prompted: bool,
    ) -> Result<(), EngineError> {
        self.timeline.begin_epoch(next, t, prompted);
        self.record_timeline()
    }

    /// Advances the timeline to `t` (see [`Timeline::advance_to`]).
    pub(super) fn advance_to(&mut self, t: f64) -> Result<(), EngineError> {
        self.timeline.advance_to(t);
        self.record_timeline()
    }

    /// Hands an operator command to the timeline.
    pub(super) fn on_command(
        &mut self,
        t: f64,
        cmd: Command,
        turntable: &mut dyn Turntable,
    ) -> Result<(), EngineError> {
        self.timeline.on_command(t, cmd, turntable);
        self.record_timeline()
    }

    /// Hands a turntable reply to the timeline.
    pub(super) fn on_turntable(&mut self, ev: TurntableEvent) -> Result<(), EngineError> {
        self.timeline.on_turntable(ev);
        self.record_timeline()
    }

    /// Gives the session the rig's polarizer: before an epoch whose filter axis differs from
    /// the last one set, the engine sets it (see [`crate::rig::polarizer`]).
    pub fn with_polarizer(mut self, polarizer: Box<dyn Polarizer>) -> Self {
        self.timeline.polarizer = Some(super::polarizing::PolarizerRt { axis_deg: None });
        self.polarizer = Some(polarizer);
        self
    }

    /// Commands a polarizer step or a turn the timeline has just entered (see
    /// [`Timeline::drive_turn`]).
    pub(super) fn drive_turn(&mut self, turntable: &mut dyn Turntable) -> Result<(), EngineError> {
        // A polarizer step may end at once (a failed command becomes a prompt) and a turn may
        // follow it: drive until neither has anything new to command.
        for _ in 0..4 {
            self.timeline.drive_polarizer(self.polarizer.as_deref_mut());
            self.timeline.drive_turn(turntable);
        }
        self.record_timeline()
    }

    /// Marks a suspend of the computer as an event when the clock reports more suspended time
    /// than already marked (`suspended_total_s` since the session started). The real clock
    /// counts suspended time, so `t_s` and `t_utc` stay true; the event says why no samples
    /// came in the gap.
    pub(super) fn note_suspend(
        &mut self,
        now: f64,
        suspended_total_s: f64,
    ) -> Result<(), EngineError> {
        let gap = suspended_total_s - self.suspended_seen_s;
        if gap < SUSPEND_GAP_MIN_S {
            return Ok(());
        }
        self.suspended_seen_s = suspended_total_s;
        let t = now.max(self.timeline.t_s);
        self.event(
            t,
            "suspended",
            format!(
                "the computer was suspended for {gap:.1} s before this; session time counted it, no samples were taken in the gap"
            ),
        )
    }

    /// Stamps, converts, archives and scores one sample at `t` (already monotonic).
    pub(super) fn on_sample(
        &mut self,
        t: f64,
        raw: f64,
        arena_heading_deg: f64,
        turntable: &dyn Turntable,
    ) -> Result<(), EngineError> {
        let ctx = SampleContext {
            epoch: self.timeline.current_epoch(),
            arena_position_deg: self.timeline.arena_position_at(t, turntable),
            flying: self.timeline.flying,
            scored: is_scored(&self.timeline, t),
            cues: self.timeline.current_cues(),
        };
        let (row, stamped) = self.stamper.row(t, raw, arena_heading_deg, ctx);
        if let Some(w) = self.writer.as_mut() {
            w.append_sample(&row)?;
        }
        self.scoring.push(&row);
        self.samples += 1;
        self.last_sample = Some(stamped);
        self.trace.push(&stamped, self.timeline.flying);
        Ok(())
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
    /// Set from a signal handler to the signal's number: end the session properly and record
    /// which signal it was ([`crate::signals::received`]).
    pub stop: &'a AtomicUsize,
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
    marks: Vec<(f64, OperatorAction)>,
}

/// Event kinds that also go to the progress output.
const PROGRESS_KINDS: &[&str] = &[
    "session_start",
    "gps_fix",
    "gps_no_fix",
    "clock_offset",
    "epoch_start",
    "turn_done",
    "turn_fault",
    "turn_held",
    "turn_not_made",
    "turn_not_scored",
    "turns_by_hand",
    "polarizer_done",
    "polarizer_fault",
    "prompt",
    "prompt_confirmed",
    "sensor_lost",
    "sensor_back",
    "suspended",
    "flight_stop",
    "flight_start",
    "abort",
    "end_requested",
    "session_end",
];

impl Engine {
    pub(super) fn poll_turntable(
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
        if let Some(p) = self.polarizer.as_mut() {
            if let Err(e) = p.poll(t, buf) {
                self.event(t, "polarizer_error", e.to_string())?;
            }
            for ev in std::mem::take(buf) {
                self.timeline.on_polarizer(ev);
                self.record_timeline()?;
                self.drive_turn(turntable)?;
            }
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
        if let Some(p) = &self.polarizer {
            self.turntable_desc = format!("{}; polarizer {}", self.turntable_desc, p.describe());
        }
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
        let gps_events = self
            .setup
            .gps
            .as_ref()
            .map(|g| g.events())
            .unwrap_or_default();
        for (kind, detail) in gps_events {
            self.event(0.0, kind, detail)?;
        }
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
                    let mut n = c.now_s() + MAX_SPEED_STEP_S;
                    // A replay file that ran out: step exactly onto the moment it is noticed.
                    if let Some(t_end) = sensor.exhausted_at_s() {
                        n = n.min(t_end.max(c.now_s()));
                    }
                    c.advance_to(n);
                    n
                }
                EngineClock::Real(c) => {
                    let now = c.now_s();
                    self.note_suspend(now, c.suspended_s())?;
                    now
                }
            };
            let step = self.step(
                now,
                sensor,
                turntable,
                &mut bufs,
                (commands, stop),
                sim_operator.as_mut(),
            );
            if let Err(e) = step {
                fatal = Some(e);
                break;
            }
            if let EngineClock::Sim(_) = clock
                && let Some(t_end) = sensor.exhausted_at_s()
                && now >= t_end
                && self.timeline.end.is_none()
            {
                self.end_of_recording(t_end, turntable, &mut bufs)?;
            }
            if let (Some(after), Phase::Prompt { since_s, .. }) =
                (auto_confirm_after_s, &self.timeline.phase)
                && now - since_s >= after
            {
                let t = since_s + after;
                let who = if self.setup.mode == "demo" {
                    "prompt confirmed by the simulated operator"
                } else {
                    "prompt confirmed at once (replay at full speed: the recording went on)"
                };
                self.event(t, "note", who)?;
                self.on_command(t, Command::ConfirmPrompt, turntable)?;
                self.drive_turn(turntable)?;
            }
            if !stop_sent && let Some(sig) = stop_signal(stop) {
                stop_sent = true;
                self.end_by_signal(now, sig)?;
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
            if now >= next_status_s && self.timeline.end.is_none() {
                next_status_s = (now / 60.0).floor() * 60.0 + 60.0;
                progress(&self.scoring.status_line(
                    now,
                    self.timeline.current_epoch(),
                    self.timeline.epochs.len(),
                    self.samples,
                ));
            }
            let publish_due =
                last_publish.is_none_or(|p| p.elapsed() >= std::time::Duration::from_millis(33));
            if publish_due || self.timeline.end.is_some() {
                self.health = sensor.health();
                cell.publish(self.snapshot(now));
                last_publish = Some(std::time::Instant::now());
            }
            if self.timeline.end.is_some() {
                break;
            }
            if let EngineClock::Real(_) = clock {
                std::thread::sleep(std::time::Duration::from_millis(5));
            }
        }
        if let Some(e) = fatal.map(EngineError::named_limit) {
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
        (commands, stop): (&Receiver<Command>, &AtomicUsize),
        mut operator: Option<&mut SimOperator>,
    ) -> Result<(), EngineError> {
        let Buffers {
            sensor: sensor_buf,
            turntable: tt_buf,
            marks,
        } = bufs;
        sensor_buf.clear();
        // The simulated operator keeps over the arena what the current epoch's cues say (the
        // shade, diffuser or filter a person places at the prompt), before the animal moves on.
        if let Some(op) = operator.as_deref_mut() {
            op.show(self.timeline.current_cues());
        }
        if let Err(e) = sensor.drain(now, sensor_buf) {
            self.event(self.timeline.t_s, "sensor_error", e.to_string())?;
        }
        for ev in sensor_buf.drain(..) {
            let t = match &ev {
                SensorEvent::Sample { t_s, .. }
                | SensorEvent::Malformed { t_s, .. }
                | SensorEvent::Lost { t_s }
                | SensorEvent::Back { t_s } => *t_s,
            };
            let Some(t) = session_time_s(
                t,
                self.timeline.t_s,
                self.last_sample.map(|s| s.t_s),
                matches!(ev, SensorEvent::Sample { .. }),
                now,
            ) else {
                // No stamp of its own at or before the clock: dropped and counted, never
                // stamped in the future.
                let t = self.timeline.t_s;
                self.close_seconds(Some(t))?;
                self.dropped.add(t);
                continue;
            };
            self.poll_turntable(t, turntable, tt_buf)?;
            if let Some(op) = operator.as_deref_mut() {
                marks.clear();
                op.poll(t, marks);
                for (tm, cmd) in marks.drain(..) {
                    self.on_command(tm.max(self.timeline.t_s), cmd.into(), turntable)?;
                    self.drive_turn(turntable)?;
                }
            }
            self.advance_to(t)?;
            self.drive_turn(turntable)?;
            if self.timeline.end.is_some() {
                return Ok(());
            }
            match ev {
                SensorEvent::Sample {
                    raw,
                    arena_heading_deg,
                    ..
                } => self.on_sample(t, raw, arena_heading_deg, turntable)?,
                SensorEvent::Malformed { reason, line, .. } => {
                    self.close_seconds(Some(t))?;
                    self.malformed.add(t);
                    if let Some(w) = self.writer.as_mut() {
                        w.append_malformed(&archive::MalformedRow {
                            t_utc: self.stamper.utc_at(t),
                            t_s: t,
                            reason,
                            line,
                        })?;
                    }
                }
                SensorEvent::Lost { .. } => {
                    self.timeline.set_sensor_lost(t, true);
                    self.record_timeline()?;
                    self.event(t, "sensor_lost", "no data")?
                }
                SensorEvent::Back { .. } => {
                    self.timeline.set_sensor_lost(t, false);
                    self.record_timeline()?;
                    self.event(t, "sensor_back", "")?
                }
            }
        }
        let now = now.max(self.timeline.t_s);
        self.poll_turntable(now, turntable, tt_buf)?;
        self.advance_to(now)?;
        self.drive_turn(turntable)?;
        while self.timeline.end.is_none() {
            match commands.try_recv() {
                // A screen forwards a signal as EndSession: record the signal itself.
                Ok(Command::EndSession) if let Some(sig) = stop_signal(stop) => {
                    self.end_by_signal(now, sig)?;
                }
                Ok(cmd) => {
                    self.on_command(now, cmd, turntable)?;
                    self.drive_turn(turntable)?;
                }
                Err(_) => break,
            }
        }
        Ok(())
    }

    /// A replay file ran out at `t` (its last line + `sensor.lost_after_s`): the timeline is
    /// brought to `t` (the protocol may finish by then), else the session ends there.
    fn end_of_recording(
        &mut self,
        t: f64,
        turntable: &mut dyn Turntable,
        bufs: &mut Buffers,
    ) -> Result<(), EngineError> {
        let t = t.max(self.timeline.t_s);
        self.poll_turntable(t, turntable, &mut bufs.turntable)?;
        self.advance_to(t)?;
        self.drive_turn(turntable)?;
        if self.timeline.end.is_none() {
            self.event(t, "note", "end of the replay file")?;
            self.timeline.finish_timeline(t, EndReason::EndOfRecording);
            self.record_timeline()?;
        }
        Ok(())
    }

    /// Ends the session on a termination signal, naming it in the events and `end_reason`.
    fn end_by_signal(&mut self, t: f64, sig: StopSignal) -> Result<(), EngineError> {
        self.timeline
            .end_requested(t, super::setup::EndReason::Signal(sig));
        self.record_timeline()
    }

    fn close(
        mut self,
        cell: &SnapshotCell,
        progress: &mut dyn FnMut(&str),
    ) -> Result<Outcome, EngineError> {
        let end = self.timeline.end.unwrap_or(EndReason::Stopped);
        let (status, reason) = (end.status(), end.text());
        let t_end = self.timeline.t_s;
        self.close_seconds(None)?;
        self.event(t_end, "session_end", format!("{status}: {reason}"))?;
        for l in std::mem::take(&mut self.progress_lines) {
            progress(&l);
        }
        let summary = self.scoring.summary();
        self.meta.status = if end.is_complete() {
            archive::SessionStatus::Complete
        } else {
            archive::SessionStatus::Aborted
        };
        self.meta.ended_utc = Some(self.stamper.utc_at(t_end));
        self.meta.end_reason = Some(reason.to_string());
        let dir = match self.writer.take() {
            Some(w) => {
                let dir = w.finish(&self.meta, &summary)?;
                if self.samples >= 1_000_000 {
                    // About 0.3 s a million samples: say why the end takes a moment.
                    progress(&format!(
                        "writing samples.columns (batch's compact copy of {} samples)",
                        self.samples
                    ));
                }
                // The session is closed and whole; the compact copy for batch is a
                // convenience: if it cannot be written, batch reads samples.csv.
                if let Some(why) = archive::columns::write_at_close(&dir) {
                    progress(&why);
                }
                dir
            }
            None => self.session_dir(),
        };
        progress(&format!(
            "session {status} ({reason}): {} samples, r world {:.3}, r arena {:.3}",
            self.samples, summary.r_world, summary.r_arena
        ));
        let lines = crate::engine::snapshot::summary_lines(&summary);
        for l in &lines {
            progress(l);
        }
        let mut snap = self.snapshot(t_end);
        snap.ended = true;
        snap.end_reason = Some(format!("{status}: {reason}"));
        snap.watch.end_summary = lines;
        cell.publish(snap);
        Ok(Outcome {
            dir,
            end,
            samples: self.samples,
        })
    }
}

#[cfg(test)]
mod tests;
