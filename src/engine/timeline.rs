//! The timeline: the epoch clock, turns, prompts and flight rules of a protocol.
//!
//! A plain state machine the engine loop drives: the loop says what time it is
//! ([`Timeline::advance_to`]), what the operator did ([`Timeline::on_command`]) and what the
//! turntable answered ([`Timeline::on_turntable`]); the timeline executes epoch ends and the
//! abort rule at the exact instants they fall on (computed from the epoch clock, not from loop
//! iterations), commands turns through [`Timeline::drive_turn`] and queues the events it wants
//! recorded, which the loop takes with [`Timeline::take_events`] and writes in order. It owns no
//! clock, no device and no file.
//!
//! This file holds the state, the epoch transitions and the turn countdown
//! ([`Timeline::next_turn`]); `clock.rs` advances the epoch clock under the flight and
//! sensor-loss rules, `turns.rs` takes the operator's commands and the turntable's replies and
//! commands the turns.

use super::setup::EndReason;
use crate::engine::snapshot::{EpochState, NextTurn, TurnState};
use crate::frames::arena_bearing_after_rotation_deg;
use crate::protocol::{ArenaMove, FlightRules, Protocol, SensorLossRules};
use crate::rig::Turntable;

mod clock;
mod turns;

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
    /// The rig's polarizer, if it has one.
    pub(super) polarizer: Option<super::polarizing::PolarizerRt>,
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
    /// The operator sets the polarizer's axis by hand.
    ManualPolarizer { axis_deg: f64 },
    /// The polarizer failed: set it by hand or skip.
    PolarizerFault { axis_deg: f64, text: String },
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
    /// The polarizer is setting its axis before epoch `next`.
    Polarizing {
        next: usize,
        axis_deg: f64,
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
            polarizer: None,
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

    pub(super) fn event(&mut self, t_s: f64, kind: &'static str, detail: impl Into<String>) {
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
            Phase::Prompt { next, .. }
            | Phase::Turning { next, .. }
            | Phase::Polarizing { next, .. } => self.epochs.get(*next),
            Phase::Finished => self.epochs.last(),
        };
        e.map(|e| e.cues).unwrap_or_default()
    }

    pub(super) fn current_epoch(&self) -> usize {
        match &self.phase {
            Phase::Running { k } => self.epochs[*k].index,
            Phase::Prompt { next, .. }
            | Phase::Turning { next, .. }
            | Phase::Polarizing { next, .. } => {
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
        self.prepare_epoch(next, t)
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
        // Waiting before epoch `next` (a prompt, the polarizer): its own turn, else the next.
        let before_epoch = |next: usize, state: TurnState, in_s: Option<f64>| {
            let by = self.epochs[next].arena.turn_from_deg(self.position_deg);
            if by.abs() > 1e-9 {
                NextTurn {
                    state,
                    deg: Some(by),
                    in_s,
                }
            } else {
                // A wait that is not a turn: the next turn comes after this epoch.
                let later = first_from(next + 1, self.position_deg, self.epochs[next].duration_s);
                NextTurn {
                    state,
                    deg: later.map(|l| l.0),
                    in_s: later.map(|l| l.1),
                }
            }
        };
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
                PromptKind::Protocol
                | PromptKind::ManualPolarizer { .. }
                | PromptKind::PolarizerFault { .. } => {
                    before_epoch(*next, TurnState::AwaitingOperator, None)
                }
            },
            // The turn of this epoch (if any) follows as soon as the polarizer answers.
            Phase::Polarizing { next, .. } => {
                before_epoch(*next, TurnState::ClockStopped, Some(0.0))
            }
            Phase::Finished => none,
        }
    }
}

#[cfg(test)]
mod tests;
