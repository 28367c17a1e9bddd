//! Stamping and frame conversion of samples.

use super::session::*;
use super::setup::EngineError;
use super::timeline::Phase;
use crate::archive::SampleRow;
use crate::engine::snapshot::TracePoint;
use crate::frames::{
    arena_bearing_after_rotation_deg, sun_relative_heading_deg, world_heading_deg,
};
use crate::rig::Turntable;
use crate::sky::polarization::zenith_evector_deg;

impl Engine {
    pub(super) fn arena_position_at(&self, t: f64, turntable: &dyn Turntable) -> f64 {
        match &self.timeline.phase {
            Phase::Turning { .. } => turntable
                .position_deg(t)
                .unwrap_or(self.timeline.position_deg),
            _ => self.timeline.position_deg,
        }
    }

    pub(super) fn on_sample(
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
        let running = matches!(self.timeline.phase, Phase::Running { .. });
        let scored = running
            && !self.timeline.paused
            && self.timeline.flying
            && t >= self.timeline.settle_until_s;
        let row = SampleRow {
            t_utc: self.utc_at(t),
            t_s: t,
            epoch: self.timeline.current_epoch(),
            arena_heading_deg,
            arena_bearing_deg: bearing,
            world_heading_deg: world,
            sun_azimuth_deg: sun.azimuth_deg,
            sun_elevation_deg: sun.elevation_deg,
            flying: self.timeline.flying,
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
                flying: self.timeline.flying,
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
}
