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
