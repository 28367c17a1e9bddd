//! The timeline's polarizer step: before an epoch whose filter axis differs from the axis last
//! set, the engine commands the rig's polarizer (or prompts the operator to set it by hand),
//! waits for its done reply like a turn, and only then turns the arena and starts the epoch.
//! Events: `polarizer_commanded`, `polarizer_done`, `polarizer_fault`.

use super::timeline::{Phase, PromptKind, Timeline};
use crate::protocol::cues::PolarizationCue;
use crate::rig::TurntableEvent;
use crate::rig::polarizer::Polarizer;

/// The rig's polarizer as the timeline knows it.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct PolarizerRt {
    /// The axis last set (degrees from the arena's 0 mark, [0, 180)); `None` before the first.
    pub(super) axis_deg: Option<f64>,
}

/// Axial difference below which two filter axes are the same, degrees.
const SAME_AXIS_DEG: f64 = 1e-6;

impl Timeline {
    /// The axis to set before epoch `next`, when the rig has a polarizer and the epoch's filter
    /// axis differs from the axis last set.
    fn polarizer_axis_for(&self, next: usize) -> Option<f64> {
        let p = self.polarizer.as_ref()?;
        let PolarizationCue::Filter { axis_deg, .. } = self.epochs.get(next)?.cues.polarization
        else {
            return None;
        };
        let axis = axis_deg.rem_euclid(180.0);
        let same = p.axis_deg.is_some_and(|a| {
            let d = (a - axis).rem_euclid(180.0);
            d.min(180.0 - d) < SAME_AXIS_DEG
        });
        (!same).then_some(axis)
    }

    /// After the protocol's prompt (if any): set the polarizer, then turn, then start.
    pub(super) fn prepare_epoch(&mut self, next: usize, t: f64) {
        if let Some(axis_deg) = self.polarizer_axis_for(next) {
            self.phase = Phase::Polarizing {
                next,
                axis_deg,
                since_s: t,
                commanded: false,
            };
            return;
        }
        self.turn_or_start(next, t);
    }

    /// Turns the arena for epoch `next` if its plan says so, else starts it.
    pub(super) fn turn_or_start(&mut self, next: usize, t: f64) {
        let by_deg = self.epochs[next].arena.turn_from_deg(self.position_deg);
        if by_deg.abs() > 1e-9 {
            return self.start_turn(next, by_deg, t);
        }
        self.start_epoch(next, t, false)
    }

    /// Records that the filter stands at `axis_deg` and goes on to epoch `next`.
    pub(super) fn polarizer_set(&mut self, next: usize, axis_deg: f64, t: f64, how: &str) {
        if let Some(p) = &mut self.polarizer {
            p.axis_deg = Some(axis_deg);
        }
        self.event(t, "polarizer_done", format!("axis {axis_deg:.1} deg{how}"));
        self.turn_or_start(next, t);
    }

    fn polarizer_prompt(&mut self, next: usize, axis_deg: f64, t: f64, kind: PromptKind) {
        let why = match &kind {
            PromptKind::PolarizerFault { text, .. } => format!("Polarizer fault ({text}). "),
            _ => String::new(),
        };
        let text = format!(
            "{why}Set the polarizer's axis to {axis_deg:.0}° from the arena's 0 mark (clockwise seen from above), then press Enter"
        );
        self.event(t, "prompt", text.clone());
        self.phase = Phase::Prompt {
            next,
            kind,
            text,
            since_s: t,
        };
    }

    /// A polarizer reply.
    pub(super) fn on_polarizer(&mut self, ev: TurntableEvent) {
        match ev {
            TurntableEvent::Done { t_s, .. } => {
                self.advance_to(t_s);
                if let Phase::Polarizing { next, axis_deg, .. } = self.phase.clone() {
                    self.polarizer_set(next, axis_deg, t_s, "");
                } else {
                    self.event(t_s, "polarizer_reply", "unexpected done");
                }
            }
            TurntableEvent::Fault { t_s, text } => {
                self.advance_to(t_s);
                self.event(t_s, "polarizer_fault", text.clone());
                if let Phase::Polarizing { next, axis_deg, .. } = self.phase.clone() {
                    let kind = PromptKind::PolarizerFault { axis_deg, text };
                    self.polarizer_prompt(next, axis_deg, t_s, kind);
                }
            }
        }
    }

    /// If the timeline has just entered the polarizer step, command it (or prompt).
    pub(super) fn drive_polarizer(&mut self, polarizer: Option<&mut (dyn Polarizer + '_)>) {
        let Phase::Polarizing {
            next,
            axis_deg,
            since_s,
            commanded: false,
        } = self.phase.clone()
        else {
            return;
        };
        if let Phase::Polarizing { commanded, .. } = &mut self.phase {
            *commanded = true;
        }
        let Some(p) = polarizer.filter(|p| !p.is_manual()) else {
            return self.polarizer_prompt(
                next,
                axis_deg,
                since_s,
                PromptKind::ManualPolarizer { axis_deg },
            );
        };
        self.event(
            since_s,
            "polarizer_commanded",
            format!(
                "axis {axis_deg:.1} deg before epoch {}",
                self.epochs[next].index
            ),
        );
        if let Err(e) = p.start_axis(since_s, axis_deg) {
            self.on_polarizer(TurntableEvent::Fault {
                t_s: since_s,
                text: e.to_string(),
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::snapshot::Command;
    use crate::engine::testing::{FakeTable, epoch};
    use crate::protocol::cues::{FilterFrame, SunCue};
    use crate::protocol::{ArenaMove, Cues, EpochPlan, FlightRules, Protocol};
    use crate::rig::{RigError, Turntable};

    /// A polarizer that answers after `delay_s`, or faults.
    struct FakePolarizer {
        manual: bool,
        fail: bool,
        pending: Option<f64>,
        commanded: Vec<f64>,
    }

    impl Polarizer for FakePolarizer {
        fn start_axis(&mut self, now_s: f64, axis_deg: f64) -> Result<(), RigError> {
            self.commanded.push(axis_deg);
            self.pending = Some(now_s + 0.5);
            Ok(())
        }
        fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
            if let Some(at) = self.pending.filter(|at| *at <= now_s) {
                self.pending = None;
                out.push(if self.fail {
                    TurntableEvent::Fault {
                        t_s: at,
                        text: "jammed".into(),
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
            "fake polarizer".into()
        }
    }

    fn filtered(index: usize, axis_deg: f64, arena: ArenaMove) -> EpochPlan {
        EpochPlan {
            cues: Cues {
                sun: SunCue::Blocked,
                polarization: PolarizationCue::Filter {
                    axis_deg,
                    turns_with: FilterFrame::Arena,
                },
            },
            ..epoch(index, 10.0, arena, None)
        }
    }

    fn timeline(epochs: Vec<EpochPlan>) -> Timeline {
        let protocol = Protocol {
            name: "test".into(),
            description: String::new(),
            settle_s: 2.0,
            flight: FlightRules::default(),
            sensor_loss: Default::default(),
            epochs,
        };
        let mut t = Timeline::new(&protocol, 0.0);
        t.polarizer = Some(PolarizerRt { axis_deg: None });
        t
    }

    /// What the engine loop does at `t` (see `Engine::poll_turntable` and `drive_turn`).
    fn advance(e: &mut Timeline, t: f64, tt: &mut FakeTable, p: &mut FakePolarizer) {
        let mut buf = Vec::new();
        tt.poll(t, &mut buf).expect("poll");
        for ev in buf.drain(..) {
            e.on_turntable(ev);
        }
        p.poll(t, &mut buf).expect("poll");
        for ev in buf.drain(..) {
            e.on_polarizer(ev);
        }
        e.advance_to(t);
        for _ in 0..4 {
            e.drive_polarizer(Some(&mut *p));
            e.drive_turn(tt);
        }
    }

    fn kinds(e: &mut Timeline) -> Vec<&'static str> {
        e.take_events().into_iter().map(|e| e.kind).collect()
    }

    #[test]
    fn the_axis_is_set_before_the_turn_and_only_when_it_changes() {
        let mut e = timeline(vec![
            filtered(1, 30.0, ArenaMove::Stay),
            filtered(2, 210.0, ArenaMove::TurnBy { deg: 90.0 }),
            filtered(3, 120.0, ArenaMove::TurnBy { deg: 90.0 }),
            epoch(4, 10.0, ArenaMove::Stay, None),
        ]);
        let mut tt = FakeTable::motor(1.0);
        let mut p = FakePolarizer {
            manual: false,
            fail: false,
            pending: None,
            commanded: Vec::new(),
        };
        e.begin_epoch(0, 0.0, false);
        for i in 1..=500 {
            advance(&mut e, f64::from(i) * 0.1, &mut tt, &mut p);
        }
        // 210 is the axis 30 (axial): no command before epoch 2; none for open sky.
        assert_eq!(p.commanded, [30.0, 120.0]);
        assert_eq!(tt.commanded, [90.0, 90.0]);
        assert_eq!(
            kinds(&mut e),
            [
                "polarizer_commanded",
                "polarizer_done",
                "epoch_start",
                "epoch_end",
                "turn_commanded",
                "turn_done",
                "epoch_start",
                "epoch_end",
                "polarizer_commanded",
                "polarizer_done",
                "turn_commanded",
                "turn_done",
                "epoch_start",
                "epoch_end",
                "epoch_start",
                "epoch_end",
            ]
        );
        // Epoch 1 starts when the polarizer answers (0.5 s), not before.
        assert_eq!(e.epochs[0].started_s, Some(0.5));
    }

    #[test]
    fn manual_or_failed_polarizer_prompts_and_confirming_goes_on() {
        for (manual, fail) in [(true, false), (false, true)] {
            let mut e = timeline(vec![filtered(1, 45.0, ArenaMove::Stay)]);
            let mut tt = FakeTable::motor(1.0);
            let mut p = FakePolarizer {
                manual,
                fail,
                pending: None,
                commanded: Vec::new(),
            };
            e.begin_epoch(0, 0.0, false);
            advance(&mut e, 1.0, &mut tt, &mut p);
            advance(&mut e, 1.5, &mut tt, &mut p);
            let Phase::Prompt { text, .. } = &e.phase else {
                panic!("{:?}", e.phase)
            };
            assert!(text.contains("polarizer's axis to 45°"), "{text}");
            assert_eq!(fail, text.contains("jammed"), "{text}");
            assert_eq!(e.epochs[0].started_s, None);
            e.on_command(2.0, Command::ConfirmPrompt, &mut tt);
            assert_eq!(e.epochs[0].started_s, Some(2.0));
            let ev = e.take_events();
            let done = ev
                .iter()
                .find(|e| e.kind == "polarizer_done")
                .expect("done");
            assert!(done.detail.contains("by hand"), "{}", done.detail);
            assert_eq!(
                fail,
                ev.iter().any(|e| e.kind == "polarizer_fault"),
                "{ev:?}"
            );
        }
    }
}
