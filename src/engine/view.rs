//! Building the snapshot screens render.

use super::session::Engine;
use super::timeline::Phase;
use crate::engine::snapshot::{EpochRow, Health, Prompt, Snapshot, TurnRow};
use crate::frames::arena_bearing_after_rotation_deg;
use crate::sky::polarization::zenith_evector_deg;
use chrono::Duration;

impl Engine {
    pub(super) fn status_line(&self, now: f64) -> String {
        let s = self.summary.summary();
        let epoch = self.timeline.current_epoch();
        let ep = s.epochs.iter().find(|e| e.index == epoch);
        format!(
            "t {:>6.0} s  epoch {}/{}  n {}  r {:.2}  mean world {}  samples {}",
            now,
            epoch,
            self.timeline.epochs.len(),
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
        let pos = self.timeline.position_deg;
        let epochs: Vec<EpochRow> = self
            .timeline
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
        let (epoch_left, k_opt) = match &self.timeline.phase {
            Phase::Running { k } => {
                let e = &self.timeline.epochs[*k];
                ((e.duration_s - e.clock_s).max(0.0), Some(*k))
            }
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                (0.0, Some(next.saturating_sub(1)))
            }
            Phase::Finished => (0.0, None),
        };
        let later: f64 = match &self.timeline.phase {
            Phase::Running { k } => self.timeline.epochs[k + 1..]
                .iter()
                .map(|e| e.duration_s)
                .sum(),
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => self.timeline.epochs
                [*next..]
                .iter()
                .map(|e| e.duration_s)
                .sum(),
            Phase::Finished => 0.0,
        };
        let (next_turn_in_s, next_turn_deg) = match (&self.timeline.phase, k_opt) {
            (Phase::Running { .. }, Some(k)) if k + 1 < self.timeline.epochs.len() => {
                let t = self.timeline.epochs[k + 1].arena.turn_from_deg(pos);
                if t.abs() > 1e-9 {
                    (Some(epoch_left), Some(t))
                } else {
                    (None, None)
                }
            }
            _ => (None, None),
        };
        let prompt = match &self.timeline.phase {
            Phase::Prompt { text, since_s, .. } => Some(Prompt {
                text: text.clone(),
                waiting_s: now - since_s,
                countdown_s: -(now - since_s),
            }),
            _ => None,
        };
        let condition = match &self.timeline.phase {
            Phase::Running { k } => self.timeline.epochs[*k].condition.clone(),
            Phase::Prompt { next, .. } | Phase::Turning { next, .. } => {
                self.timeline.epochs[*next].condition.clone()
            }
            Phase::Finished => String::new(),
        };
        let cur_pos = match &self.timeline.phase {
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
            remaining_s: if self.timeline.end.is_some() {
                None
            } else {
                Some(epoch_left + later)
            },
            epoch: self.timeline.current_epoch(),
            epoch_count: self.timeline.epochs.len(),
            condition,
            next_turn_in_s,
            next_turn_deg,
            turning: matches!(self.timeline.phase, Phase::Turning { .. }),
            settling: matches!(self.timeline.phase, Phase::Running { .. })
                && now < self.timeline.settle_until_s,
            paused: self.timeline.paused,
            flying: self.timeline.flying,
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
