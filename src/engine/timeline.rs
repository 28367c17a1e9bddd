//! The timeline: epoch clock, turns, prompts and flight rules.

use super::session::Engine;
use super::setup::EngineError;
use crate::engine::snapshot::{Command, EpochState};
use crate::frames::arena_bearing_after_rotation_deg;
use crate::protocol::ArenaMove;
use crate::rig::{Turntable, TurntableEvent};

#[derive(Debug, Clone)]
pub(super) struct EpochRt {
    pub(super) index: usize,
    pub(super) condition: String,
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

impl Engine {
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
    pub(super) fn begin_epoch(
        &mut self,
        next: usize,
        t: f64,
        prompted: bool,
    ) -> Result<(), EngineError> {
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

    pub(super) fn start_turn(
        &mut self,
        next: usize,
        by_deg: f64,
        t: f64,
    ) -> Result<(), EngineError> {
        self.phase = Phase::Turning {
            next,
            by_deg,
            from_deg: self.position_deg,
            since_s: t,
            commanded: false,
        };
        Ok(())
    }

    pub(super) fn start_epoch(
        &mut self,
        k: usize,
        t: f64,
        turned: bool,
    ) -> Result<(), EngineError> {
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

    pub(super) fn end_epoch(
        &mut self,
        k: usize,
        t: f64,
        state: EpochState,
    ) -> Result<(), EngineError> {
        self.epochs[k].state = state;
        let kind = if state == EpochState::Skipped {
            "epoch_skipped"
        } else {
            "epoch_end"
        };
        self.event(t, kind, format!("epoch {}", self.epochs[k].index))?;
        self.begin_epoch(k + 1, t, false)
    }

    pub(super) fn finish_timeline(
        &mut self,
        t: f64,
        status: &str,
        reason: &str,
    ) -> Result<(), EngineError> {
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
    pub(super) fn clock_runs(&self) -> bool {
        !self.paused && (self.flying || !self.setup.protocol.flight.pause_clock_when_stopped)
    }

    /// Advances the timeline to `t`, executing epoch ends (and the abort rule) at the exact
    /// instants they fall on.
    pub(super) fn advance_to(&mut self, t: f64) -> Result<(), EngineError> {
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

    pub(super) fn accrue(&mut self, from: f64, to: f64) {
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

    pub(super) fn set_flying(&mut self, t: f64, flying: bool) -> Result<(), EngineError> {
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

    pub(super) fn on_turntable(&mut self, ev: TurntableEvent) -> Result<(), EngineError> {
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

    pub(super) fn on_command(
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

    pub(super) fn manual_turn_prompt(
        &mut self,
        next: usize,
        by_deg: f64,
        t: f64,
    ) -> Result<(), EngineError> {
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
    pub(super) fn drive_turn(&mut self, turntable: &mut dyn Turntable) -> Result<(), EngineError> {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::session::{SessionSetup, Speed};
    use crate::protocol::{EpochPlan, FlightRules, Protocol};

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
