//! What the operator and the turntable tell the timeline: the operator's commands, the
//! turntable's replies, prompts to turn by hand, and commanding the turns that are due.

use super::{Phase, PromptKind, Timeline};
use crate::engine::setup::EndReason;
use crate::engine::snapshot::{Command, EpochState};
use crate::rig::{Turntable, TurntableEvent};

impl Timeline {
    /// Turn `next_epoch`'s turn (the one before that epoch) will not be scored, and why.
    fn unscore_turn(&mut self, t: f64, next_epoch: usize, why: &str) {
        let turn = self.epochs[next_epoch].index.saturating_sub(1);
        if turn > 0 && !self.unscored_turns.contains(&turn) {
            self.unscored_turns.push(turn);
            self.event(t, "turn_not_scored", format!("turn {turn}: {why}"));
        }
    }

    pub(in crate::engine) fn on_turntable(&mut self, ev: TurntableEvent) {
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

    pub(in crate::engine) fn on_command(
        &mut self,
        t: f64,
        cmd: Command,
        turntable: &mut dyn Turntable,
    ) {
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
                Phase::Prompt { next, .. }
                | Phase::Turning { next, .. }
                | Phase::Polarizing { next, .. } => {
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
                            self.prepare_epoch(next, t);
                            self.drive_turn(turntable);
                        }
                        PromptKind::ManualPolarizer { axis_deg }
                        | PromptKind::PolarizerFault { axis_deg, .. } => {
                            self.polarizer_set(next, axis_deg, t, " (by hand, confirmed)");
                            self.drive_turn(turntable);
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
    pub(in crate::engine) fn end_requested(&mut self, t: f64, unfinished: EndReason) {
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

    pub(in crate::engine) fn manual_turn_prompt(&mut self, next: usize, by_deg: f64, t: f64) {
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
    pub(in crate::engine) fn drive_turn(&mut self, turntable: &mut dyn Turntable) {
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
