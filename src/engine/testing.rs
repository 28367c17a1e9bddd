//! Test doubles shared by the engine's unit tests.

use crate::protocol::{ArenaMove, EpochPlan};
use crate::rig::{Turntable, TurntableEvent};

/// A turntable that replies after a fixed delay, faults, or is turned by hand.
pub(super) struct FakeTable {
    pub(super) manual: bool,
    pub(super) fail: bool,
    pub(super) delay_s: f64,
    pub(super) pending: Option<(f64, f64)>,
    pub(super) commanded: Vec<f64>,
}

impl FakeTable {
    pub(super) fn motor(delay_s: f64) -> Self {
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

/// A plain epoch of the plan under open sky.
pub(super) fn epoch(
    index: usize,
    duration_s: f64,
    arena: ArenaMove,
    prompt: Option<&str>,
) -> EpochPlan {
    EpochPlan {
        index,
        duration_s,
        condition: "open sky".into(),
        arena,
        prompt: prompt.map(str::to_string),
        cues: crate::protocol::Cues::OPEN_SKY,
    }
}
