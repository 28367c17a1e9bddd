//! The timeline: the epoch clock, turns, prompts and flight rules of a protocol.
//!
//! A plain state machine the engine loop drives: the loop says what time it is
//! ([`Timeline::advance_to`]), what the operator did ([`Timeline::on_command`]) and what the
//! turntable answered ([`Timeline::on_turntable`]); the timeline executes epoch ends and the
//! abort rule at the exact instants they fall on (computed from the epoch clock, not from loop
//! iterations), commands turns through [`Timeline::drive_turn`] and queues the events it wants
//! recorded, which the loop takes with [`Timeline::take_events`] and writes in order. It owns no
//! clock, no device and no file.

use super::setup::EndReason;
use crate::engine::snapshot::{Command, EpochState, NextTurn, TurnState};
use crate::frames::arena_bearing_after_rotation_deg;
use crate::protocol::{ArenaMove, FlightRules, Protocol, SensorLossRules};
use crate::rig::{Turntable, TurntableEvent};

/// An event the timeline asks the loop to record (in the order queued).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct TimelineEvent {
    /// Session seconds.
    pub(super) t_s: f64,
    /// Event kind (`epoch_start`, `turn_done`, `prompt`...).
    pub(super) kind: &'static str,
    /// Free text.
    pub(super) detail: String,
}

/// The protocol's timeline and the operator-visible state it depends on.
#[derive(Debug, Clone)]
pub(super) struct Timeline {
    pub(super) epochs: Vec<EpochRt>,
    pub(super) phase: Phase,
    /// Time up to which the timeline has been advanced.
    pub(super) t_s: f64,
    /// Arena position (degrees from start) after the last completed turn.
    pub(super) position_deg: f64,
    pub(super) settle_until_s: f64,
    pub(super) flying: bool,
    pub(super) stopped_since_s: Option<f64>,
    pub(super) paused: bool,
    /// Set once the session has ended.
    pub(super) end: Option<EndReason>,
    /// The heading sensor is lost (no data) right now, and since when.
    pub(super) sensor_lost: bool,
    pub(super) lost_since_s: Option<f64>,
    /// Every later turn is a prompt to turn by hand (chosen by the operator after a fault).
    pub(super) turns_by_hand: bool,
    /// Turntable faults so far.
    pub(super) turntable_faults: u32,
    /// Turns (1-based: turn k lies between epochs k and k + 1) whose world shift must not be
    /// scored: the arena could not be turned, or the turn was made while the sensor was lost.
    pub(super) unscored_turns: Vec<usize>,
    /// The pending turn's "held" event was recorded.
    hold_noted: bool,
    settle_s: f64,
    pub(super) flight: FlightRules,
    pub(super) sensor_loss: SensorLossRules,
    /// True bearing of the arena's 0 mark (for the epoch_start line).
    mark_true_deg: f64,
    events: Vec<TimelineEvent>,
}

#[derive(Debug, Clone)]
pub(super) struct EpochRt {
    pub(super) index: usize,
    pub(super) condition: String,
    /// What the animal can see.
    pub(super) cues: crate::protocol::Cues,
    pub(super) duration_s: f64,
    pub(super) arena: ArenaMove,
    pub(super) prompt: Option<String>,
    /// Planned turn before this epoch (resolved from the plan), degrees.
    pub(super) planned_turn_deg: f64,
    pub(super) state: EpochState,
    /// Arena position (degrees from start) during the epoch.
    pub(super) position_deg: f64,
    pub(super) started_s: Option<f64>,
    pub(super) clock_s: f64,
    pub(super) flying_s: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub(super) enum PromptKind {
    /// The protocol's prompt before epoch k.
    Protocol,
    /// The operator turns the arena by hand.
    ManualTurn { by_deg: f64 },
    /// The turntable failed: turn by hand or skip.
    TurntableFault { by_deg: f64 },
}

#[derive(Debug, Clone, PartialEq)]
pub(super) enum Phase {
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

impl Timeline {
    /// The timeline of `protocol`, before its first epoch (call [`Timeline::begin_epoch`] with
    /// 0 to start). Planned turns are resolved here (GoTo relative to where the arena will be).
    pub(super) fn new(protocol: &Protocol, mark_true_deg: f64) -> Self {
        let mut pos = 0.0;
        let mut epochs = Vec::with_capacity(protocol.epochs.len());
        for e in &protocol.epochs {
            let turn = e.arena.turn_from_deg(pos);
            pos += turn;
            epochs.push(EpochRt {
                index: e.index,
                condition: e.condition.clone(),
                cues: e.cues,
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
        Self {
            epochs,
            phase: Phase::Finished,
            t_s: 0.0,
            position_deg: 0.0,
            settle_until_s: 0.0,
            flying: true,
            stopped_since_s: None,
            paused: false,
            end: None,
            sensor_lost: false,
            lost_since_s: None,
            turns_by_hand: false,
            turntable_faults: 0,
            unscored_turns: Vec::new(),
            hold_noted: false,
            settle_s: protocol.settle_s,
            flight: protocol.flight,
            sensor_loss: protocol.sensor_loss,
            mark_true_deg,
            events: Vec::new(),
        }
    }

    /// Arena position (degrees from start) at `t`: mid-turn, what the turntable says (if it
    /// can tell), else the last completed position.
    pub(super) fn arena_position_at(&self, t: f64, turntable: &dyn Turntable) -> f64 {
        match &self.phase {
            Phase::Turning { .. } => turntable.position_deg(t).unwrap_or(self.position_deg),
            _ => self.position_deg,
        }
    }

    /// The events queued since the last call, oldest first.
    pub(super) fn take_events(&mut self) -> Vec<TimelineEvent> {
        std::mem::take(&mut self.events)
    }

    fn event(&mut self, t_s: f64, kind: &'static str, detail: impl Into<String>) {
        self.events.push(TimelineEvent {
            t_s,
            kind,
            detail: detail.into(),
        });
    }

    /// The cues of the epoch that samples now belong to (see [`Timeline::current_epoch`]).
    pub(super) fn current_cues(&self) -> crate::protocol::Cues {
        let e = match &self.phase {
            Phase::Running { k } => self.epochs.get(*k),
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => self.epochs.get(*next),
            Phase::Finished => self.epochs.last(),
        };
        e.map(|e| e.cues).unwrap_or_default()
    }

    pub(super) fn current_epoch(&self) -> usize {
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
    pub(super) fn begin_epoch(&mut self, next: usize, t: f64, prompted: bool) {
        if next >= self.epochs.len() {
            self.finish_timeline(t, EndReason::ProtocolFinished);
            return;
        }
        if !prompted && let Some(text) = self.epochs[next].prompt.clone() {
            self.event(t, "prompt", text.clone());
            self.phase = Phase::Prompt {
                next,
                kind: PromptKind::Protocol,
                text,
                since_s: t,
            };
            return;
        }
        let by_deg = self.epochs[next].arena.turn_from_deg(self.position_deg);
        if by_deg.abs() > 1e-9 {
            return self.start_turn(next, by_deg, t);
        }
        self.start_epoch(next, t, false)
    }

    pub(super) fn start_turn(&mut self, next: usize, by_deg: f64, t: f64) {
        self.phase = Phase::Turning {
            next,
            by_deg,
            from_deg: self.position_deg,
            since_s: t,
            commanded: false,
        };
    }

    pub(super) fn start_epoch(&mut self, k: usize, t: f64, turned: bool) {
        self.epochs[k].state = EpochState::Current;
        self.epochs[k].started_s = Some(t);
        self.epochs[k].position_deg = self.position_deg;
        if turned || k > 0 {
            self.settle_until_s = t + self.settle_s;
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

    pub(super) fn end_epoch(&mut self, k: usize, t: f64, state: EpochState) {
        self.epochs[k].state = state;
        let kind = if state == EpochState::Skipped {
            "epoch_skipped"
        } else {
            "epoch_end"
        };
        self.event(t, kind, format!("epoch {}", self.epochs[k].index));
        self.begin_epoch(k + 1, t, false)
    }

    pub(super) fn finish_timeline(&mut self, t: f64, end: EndReason) {
        if self.end.is_none() {
            if let Phase::Running { k } = self.phase
                && self.epochs[k].state == EpochState::Current
            {
                self.epochs[k].state = EpochState::Done;
            }
            self.phase = Phase::Finished;
            self.t_s = self.t_s.max(t);
            self.end = Some(end);
        }
    }

    /// The next turn and what it waits for, in every phase: never "none left" while a turn
    /// remains. `in_s` counts epoch-clock seconds (it stands still while the clock is stopped).
    pub(super) fn next_turn(&self) -> NextTurn {
        // The first turn at or after epoch `from` (the arena at `pos`), and the epoch-clock
        // seconds until it, starting from `in_s`.
        let first_from = |from: usize, mut pos: f64, mut in_s: f64| -> Option<(f64, f64)> {
            for e in self.epochs.iter().skip(from) {
                let t = e.arena.turn_from_deg(pos);
                if t.abs() > 1e-9 {
                    return Some((t, in_s));
                }
                pos += t;
                in_s += e.duration_s;
            }
            None
        };
        let none = NextTurn::default();
        match &self.phase {
            Phase::Running { k } => {
                let e = &self.epochs[*k];
                let left = (e.duration_s - e.clock_s).max(0.0);
                match first_from(k + 1, self.position_deg, left) {
                    Some((deg, in_s)) => NextTurn {
                        state: if self.clock_runs() {
                            TurnState::Counting
                        } else {
                            TurnState::ClockStopped
                        },
                        deg: Some(deg),
                        in_s: Some(in_s),
                    },
                    None => none,
                }
            }
            Phase::Turning {
                by_deg, commanded, ..
            } => NextTurn {
                state: if *commanded {
                    TurnState::UnderWay
                } else {
                    TurnState::HeldSensorLost
                },
                deg: Some(*by_deg),
                in_s: None,
            },
            Phase::Prompt { next, kind, .. } => match kind {
                PromptKind::ManualTurn { by_deg } => NextTurn {
                    state: TurnState::AwaitingOperator,
                    deg: Some(*by_deg),
                    in_s: None,
                },
                PromptKind::TurntableFault { by_deg } => NextTurn {
                    state: TurnState::Fault,
                    deg: Some(*by_deg),
                    in_s: None,
                },
                PromptKind::Protocol => {
                    let by = self.epochs[*next].arena.turn_from_deg(self.position_deg);
                    if by.abs() > 1e-9 {
                        NextTurn {
                            state: TurnState::AwaitingOperator,
                            deg: Some(by),
                            in_s: None,
                        }
                    } else {
                        // A prompt that is not a turn: the next turn comes after this epoch.
                        let later =
                            first_from(next + 1, self.position_deg, self.epochs[*next].duration_s);
                        NextTurn {
                            state: TurnState::AwaitingOperator,
                            deg: later.map(|l| l.0),
                            in_s: later.map(|l| l.1),
                        }
                    }
                }
            },
            Phase::Finished => none,
        }
    }

    /// Is the epoch clock running right now?
    pub(super) fn clock_runs(&self) -> bool {
        let stopped_by_flight = !self.flying && self.flight.pause_clock_when_stopped;
        let stopped_by_loss = self.sensor_lost && self.sensor_loss.pause_clock;
        !self.paused && !stopped_by_flight && !stopped_by_loss
    }

    /// Do flying seconds count right now? (Not while paused, and not while the sensor is lost:
    /// seconds without headings are no flight data.)
    fn flight_counts(&self) -> bool {
        self.flying && !self.paused && !self.sensor_lost
    }

    /// When the session will be aborted if nothing changes, and why: the flight rules' limit
    /// on time without flight, or the sensor-loss rules' limit on time without data.
    pub(super) fn abort_at(&self) -> Option<(f64, EndReason)> {
        let no_flight = match (self.flight.abort_after_stopped_s, self.stopped_since_s) {
            (Some(limit), Some(since)) if !self.flying => {
                Some((since + limit, EndReason::NoFlight))
            }
            _ => None,
        };
        let lost = match (self.sensor_loss.abort_after_s, self.lost_since_s) {
            (Some(limit), Some(since)) if self.sensor_lost => {
                Some((since + limit, EndReason::SensorLost))
            }
            _ => None,
        };
        match (no_flight, lost) {
            (Some(a), Some(b)) => Some(if b.0 < a.0 { b } else { a }),
            (a, b) => a.or(b),
        }
    }

    /// Advances the timeline to `t`, executing epoch ends (and the abort rule) at the exact
    /// instants they fall on.
    pub(super) fn advance_to(&mut self, t: f64) {
        while t > self.t_s && self.end.is_none() {
            let from = self.t_s;
            // Abort rules: too long without flight, or without data from the sensor.
            let abort = self.abort_at();
            let abort_at = abort.map(|(at, _)| at);
            let end_at = match self.phase {
                Phase::Running { k } => {
                    let e = &self.epochs[k];
                    let runs = self.clock_runs();
                    let need_clock = (e.duration_s - e.clock_s).max(0.0);
                    let need_fly = match self.flight.min_flying_s {
                        Some(m) => (m - e.flying_s).max(0.0),
                        None => 0.0,
                    };
                    let fly_runs = self.flight_counts();
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
            if let Some((at, why)) = abort
                && at <= step_to
            {
                let detail = match why {
                    EndReason::SensorLost => format!(
                        "sensor lost for {:.0} s",
                        self.sensor_loss.abort_after_s.unwrap_or(0.0)
                    ),
                    _ => format!(
                        "no flight for {:.0} s",
                        self.flight.abort_after_stopped_s.unwrap_or(0.0)
                    ),
                };
                self.event(step_to, "abort", detail);
                self.finish_timeline(step_to, why);
                break;
            }
            if end_at.is_some_and(|a| a <= step_to)
                && let Phase::Running { k } = self.phase
            {
                self.end_epoch(k, step_to, EpochState::Done);
            }
            if step_to >= t {
                break;
            }
        }
    }

    pub(super) fn accrue(&mut self, from: f64, to: f64) {
        let dt = to - from;
        if dt <= 0.0 {
            return;
        }
        if let Phase::Running { k } = self.phase {
            let runs = self.clock_runs();
            let counts = self.flight_counts();
            let e = &mut self.epochs[k];
            if runs {
                e.clock_s += dt;
            }
            if counts {
                e.flying_s += dt;
            }
        }
    }

    /// The sensor was lost (or came back) at `t`. While it is lost the sensor-loss rules apply:
    /// the epoch clock may stop, a due turn waits ([`Timeline::drive_turn`]) and the abort
    /// limit runs. A turn held while the sensor was lost starts when it is back.
    pub(super) fn set_sensor_lost(&mut self, t: f64, lost: bool) {
        if lost == self.sensor_lost {
            return;
        }
        self.advance_to(t);
        self.sensor_lost = lost;
        if lost {
            self.lost_since_s = Some(t);
        } else {
            self.lost_since_s = None;
            if let Phase::Turning {
                since_s,
                commanded: false,
                ..
            } = &mut self.phase
            {
                *since_s = t;
            }
        }
    }

    /// Turn `next_epoch`'s turn (the one before that epoch) will not be scored, and why.
    fn unscore_turn(&mut self, t: f64, next_epoch: usize, why: &str) {
        let turn = self.epochs[next_epoch].index.saturating_sub(1);
        if turn > 0 && !self.unscored_turns.contains(&turn) {
            self.unscored_turns.push(turn);
            self.event(t, "turn_not_scored", format!("turn {turn}: {why}"));
        }
    }

    pub(super) fn set_flying(&mut self, t: f64, flying: bool) {
        if flying == self.flying {
            return;
        }
        self.advance_to(t);
        self.flying = flying;
        if flying {
            self.stopped_since_s = None;
            self.event(t, "flight_start", "");
        } else {
            self.stopped_since_s = Some(t);
            self.event(t, "flight_stop", "");
        }
    }

    pub(super) fn on_turntable(&mut self, ev: TurntableEvent) {
        match ev {
            TurntableEvent::Done { t_s, position_deg } => {
                self.advance_to(t_s);
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
                    self.event(t_s, "turn_done", format!("{by_deg:+.1} deg{reported}"));
                    if self.sensor_lost {
                        self.unscore_turn(t_s, next, "made while the sensor was lost");
                    }
                    // A reply stamped before the loop got to it (the timeline already stands
                    // later): the epoch began at the reply, so its clock runs from there.
                    let now = self.t_s;
                    self.start_epoch(next, t_s, true);
                    self.accrue(t_s, now);
                } else {
                    self.event(t_s, "turntable_reply", "unexpected done");
                }
            }
            TurntableEvent::Fault { t_s, text } => {
                self.advance_to(t_s);
                self.turntable_faults += 1;
                self.event(t_s, "turn_fault", text.clone());
                if let Phase::Turning {
                    next,
                    by_deg,
                    from_deg,
                    ..
                } = self.phase.clone()
                {
                    self.position_deg = from_deg;
                    let prompt = format!(
                        "Turntable fault ({text}). Turn the arena {by_deg:+.0}° by hand (clockwise seen from above is +), then press Enter (b: every later turn by hand; x: could not turn)"
                    );
                    self.event(t_s, "prompt", prompt.clone());
                    self.phase = Phase::Prompt {
                        next,
                        kind: PromptKind::TurntableFault { by_deg },
                        text: prompt,
                        since_s: t_s,
                    };
                }
            }
        }
    }

    pub(super) fn on_command(&mut self, t: f64, cmd: Command, turntable: &mut dyn Turntable) {
        self.advance_to(t);
        match cmd {
            Command::FlightStop => self.set_flying(t, false),
            Command::FlightStart => self.set_flying(t, true),
            Command::Note(text) => self.event(t, "note", text),
            Command::Pause => {
                if !self.paused {
                    self.paused = true;
                    self.event(t, "pause", "");
                }
            }
            Command::Resume => {
                if self.paused {
                    self.paused = false;
                    self.event(t, "resume", "");
                }
            }
            Command::SkipEpoch => match self.phase.clone() {
                Phase::Running { k } => self.end_epoch(k, t, EpochState::Skipped),
                Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                    self.epochs[next].state = EpochState::Skipped;
                    self.event(
                        t,
                        "epoch_skipped",
                        format!("epoch {}", self.epochs[next].index),
                    );
                    self.begin_epoch(next + 1, t, false);
                }
                Phase::Finished => {}
            },
            Command::ConfirmPrompt => {
                if let Phase::Prompt { next, kind, .. } = self.phase.clone() {
                    self.event(t, "prompt_confirmed", "");
                    match kind {
                        PromptKind::Protocol => {
                            let by_deg = self.epochs[next].arena.turn_from_deg(self.position_deg);
                            if by_deg.abs() > 1e-9 {
                                self.start_turn(next, by_deg, t);
                                self.drive_turn(turntable);
                            } else {
                                self.start_epoch(next, t, false);
                            }
                        }
                        PromptKind::ManualTurn { by_deg }
                        | PromptKind::TurntableFault { by_deg } => {
                            self.position_deg += by_deg;
                            self.event(
                                t,
                                "turn_done",
                                format!("{by_deg:+.1} deg (by hand, confirmed)"),
                            );
                            if self.sensor_lost {
                                self.unscore_turn(t, next, "made while the sensor was lost");
                            }
                            self.start_epoch(next, t, true);
                        }
                    }
                }
            }
            Command::CouldNotTurn => {
                if let Phase::Prompt {
                    next,
                    kind: PromptKind::ManualTurn { by_deg } | PromptKind::TurntableFault { by_deg },
                    ..
                } = self.phase.clone()
                {
                    self.event(
                        t,
                        "turn_not_made",
                        format!(
                            "{by_deg:+.1} deg before epoch {}: could not turn; the arena stays",
                            self.epochs[next].index
                        ),
                    );
                    self.unscore_turn(t, next, "the arena could not be turned");
                    self.start_epoch(next, t, true);
                }
            }
            Command::TurnsByHand => {
                if !self.turns_by_hand {
                    self.turns_by_hand = true;
                    self.event(
                        t,
                        "turns_by_hand",
                        "every later turn is a prompt to turn the arena by hand",
                    );
                }
            }
            Command::EndSession => self.end_requested(t, EndReason::EndedByOperator),
        }
    }

    /// Ends the session at `t` on a request (the operator's, or a signal's): "protocol
    /// finished" when every epoch is done, else `unfinished`.
    pub(super) fn end_requested(&mut self, t: f64, unfinished: EndReason) {
        let by = match unfinished {
            EndReason::Signal(s) => s.name(),
            _ => "the operator",
        };
        self.event(t, "end_requested", format!("by {by}"));
        let all_done = self
            .epochs
            .iter()
            .all(|e| e.state != EpochState::Pending && e.state != EpochState::Current);
        if all_done {
            self.finish_timeline(t, EndReason::ProtocolFinished);
        } else {
            self.finish_timeline(t, unfinished);
        }
    }

    pub(super) fn manual_turn_prompt(&mut self, next: usize, by_deg: f64, t: f64) {
        let text = format!(
            "Turn the arena {by_deg:+.0}° ({}), then press Enter (x: could not turn)",
            if by_deg >= 0.0 {
                "clockwise seen from above"
            } else {
                "counterclockwise seen from above"
            }
        );
        self.event(t, "prompt", text.clone());
        self.phase = Phase::Prompt {
            next,
            kind: PromptKind::ManualTurn { by_deg },
            text,
            since_s: t,
        };
    }

    /// If the timeline has just entered a turn, command it (or prompt for a manual one).
    pub(super) fn drive_turn(&mut self, turntable: &mut dyn Turntable) {
        loop {
            let Phase::Turning {
                next,
                by_deg,
                since_s,
                commanded: false,
                ..
            } = self.phase.clone()
            else {
                return;
            };
            if self.sensor_lost && self.sensor_loss.hold_turns {
                if !self.hold_noted {
                    self.hold_noted = true;
                    self.event(
                        since_s,
                        "turn_held",
                        format!(
                            "{by_deg:+.1} deg before epoch {}: waits for the sensor",
                            self.epochs[next].index
                        ),
                    );
                }
                return;
            }
            self.hold_noted = false;
            if let Phase::Turning { commanded, .. } = &mut self.phase {
                *commanded = true;
            }
            if turntable.is_manual() || self.turns_by_hand {
                return self.manual_turn_prompt(next, by_deg, since_s);
            }
            self.event(
                since_s,
                "turn_commanded",
                format!("{by_deg:+.1} deg before epoch {}", self.epochs[next].index),
            );
            if let Err(e) = turntable.start_turn(since_s, by_deg) {
                self.on_turntable(TurntableEvent::Fault {
                    t_s: since_s,
                    text: e.to_string(),
                });
            }
            // A fault may have moved us on; loop in case a new turn is pending.
        }
    }
}

#[cfg(test)]
mod tests;
