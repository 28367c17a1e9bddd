//! Building the snapshot screens render, and the heading trace kept for it.

use super::session::Engine;
use super::stamp::Stamped;
use super::timeline::Phase;
use crate::engine::snapshot::{
    AutoAbort, EpochRow, EpochState, Health, Prompt, Snapshot, TracePoint, TurnRow, Watch,
};
use crate::sky::polarization::zenith_evector_deg;
use chrono::Duration;
use std::collections::VecDeque;

/// A heading older than this many session seconds is shown as stale, not live (a display rule
/// of our own: ten sample periods of a slow 10 Hz sensor).
pub const HEADING_STALE_S: f64 = 1.0;

/// Spacing of trace points kept for screens, session seconds.
const TRACE_SPACING_S: f64 = 0.25;
/// Length of the trace kept for screens, session seconds.
const TRACE_WINDOW_S: f64 = 15.0 * 60.0;

/// The recent headings (one point every [`TRACE_SPACING_S`]) and turn instants screens draw,
/// over the last [`TRACE_WINDOW_S`].
#[derive(Debug, Clone, Default)]
pub(super) struct Trace {
    pub(super) points: VecDeque<TracePoint>,
    pub(super) turn_marks: VecDeque<f64>,
}

impl Trace {
    /// Marks a finished turn at session second `t_s`.
    pub(super) fn mark_turn(&mut self, t_s: f64) {
        self.turn_marks.push_back(t_s);
    }

    /// Adds a sample if a point is due, and forgets what fell out of the window.
    pub(super) fn push(&mut self, s: &Stamped, flying: bool) {
        let t = s.t_s;
        let due = self
            .points
            .back()
            .is_none_or(|p| t - p.t_s >= TRACE_SPACING_S);
        if !due {
            return;
        }
        self.points.push_back(TracePoint {
            t_s: t,
            arena_deg: s.arena_heading_deg,
            world_deg: s.world_heading_deg,
            sun_deg: s.sun_relative_heading_deg,
            flying,
        });
        while self
            .points
            .front()
            .is_some_and(|p| t - p.t_s > TRACE_WINDOW_S)
        {
            self.points.pop_front();
        }
        while self
            .turn_marks
            .front()
            .is_some_and(|m| t - m > TRACE_WINDOW_S)
        {
            self.turn_marks.pop_front();
        }
    }
}

impl Engine {
    /// The read-only picture of the session for screens.
    pub fn snapshot(&self, now: f64) -> Snapshot {
        let summary = self.scoring.live();
        let sun_now = self.stamper.sun_at(now.max(0.0));
        let pos = self.timeline.position_deg;
        let epochs: Vec<EpochRow> = self
            .timeline
            .epochs
            .iter()
            .enumerate()
            .map(|(at, e)| {
                // The timeline's epochs and the builder's lines are both in plan order.
                let s = summary.epochs.get(at).filter(|x| x.index == e.index);
                EpochRow {
                    index: e.index,
                    condition: e.condition.clone(),
                    arena_bearing_deg: self.stamper.arena_bearing_deg(e.position_deg),
                    duration_s: e.duration_s,
                    flying_s: e.flying_s,
                    n: s.map(|x| x.n).unwrap_or(0),
                    mean_arena_deg: s.and_then(|x| x.mean_arena_deg),
                    mean_world_deg: s.and_then(|x| x.mean_world_deg),
                    r: s.map(|x| x.r).unwrap_or(0.0),
                    p_oriented: s.and_then(|x| x.p_oriented),
                    state: e.state,
                }
            })
            .collect();
        let turns: Vec<TurnRow> = summary
            .turns
            .iter()
            .map(|&(index, turn_deg, world_shift_deg)| TurnRow {
                index,
                turn_deg,
                world_shift_deg,
            })
            .collect();
        let (epoch_left, k_opt) = match &self.timeline.phase {
            Phase::Running { k } => {
                let e = &self.timeline.epochs[*k];
                ((e.duration_s - e.clock_s).max(0.0), Some(*k))
            }
            Phase::Prompt { next, .. }
            | Phase::Turning { next, .. }
            | Phase::Polarizing { next, .. } => (0.0, Some(next.saturating_sub(1))),
            Phase::Finished => (0.0, None),
        };
        let later: f64 = match &self.timeline.phase {
            Phase::Running { k } => self.timeline.epochs[k + 1..]
                .iter()
                .map(|e| e.duration_s)
                .sum(),
            Phase::Prompt { next, .. }
            | Phase::Turning { next, .. }
            | Phase::Polarizing { next, .. } => self.timeline.epochs[*next..]
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
            Phase::Prompt {
                text,
                since_s,
                kind,
                ..
            } => Some(Prompt {
                turn_by_hand: matches!(
                    kind,
                    super::timeline::PromptKind::ManualTurn { .. }
                        | super::timeline::PromptKind::TurntableFault { .. }
                ),
                text: text.clone(),
                waiting_s: now - since_s,
                countdown_s: -(now - since_s),
            }),
            _ => None,
        };
        let condition = match &self.timeline.phase {
            Phase::Running { k } => self.timeline.epochs[*k].condition.clone(),
            Phase::Prompt { next, .. }
            | Phase::Turning { next, .. }
            | Phase::Polarizing { next, .. } => self.timeline.epochs[*next].condition.clone(),
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
            site_note: self.setup.gps.as_ref().map(|g| g.note()),
            protocol_name: self.setup.protocol.name.clone(),
            now_utc: self.stamper.utc_at(now),
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
            arena_bearing_deg: self.stamper.arena_bearing_deg(cur_pos),
            sun_azimuth_deg: sun_now.azimuth_deg,
            sun_elevation_deg: sun_now.elevation_deg,
            zenith_evector_deg: zenith_evector_deg(sun_now.azimuth_deg),
            evector_shown_deg: self
                .stamper
                .shown(
                    &self.timeline.current_cues(),
                    &sun_now,
                    self.stamper.arena_bearing_deg(cur_pos),
                )
                .1,
            arena_heading_deg: self.last_sample.map(|s| s.arena_heading_deg),
            world_heading_deg: self.last_sample.map(|s| s.world_heading_deg),
            sun_relative_heading_deg: self.last_sample.map(|s| s.sun_relative_heading_deg),
            trace: self.trace.points.iter().copied().collect(),
            turn_marks_s: self.trace.turn_marks.iter().copied().collect(),
            epochs,
            turns,
            r_world: summary.r_world,
            r_arena: summary.r_arena,
            health: Health {
                rate_hz: self.health.rate_hz,
                jitter_ms: self.health.jitter_ms,
                malformed: self.health.malformed,
                lost_periods: self.health.lost_periods,
                sensor_lost: self.timeline.sensor_lost,
                // Shown as an age on the session's own time line: now minus the real time since
                // the sync (so an accelerated demo does not look stale).
                last_sync_utc: self.last_sync.map(|i| {
                    self.stamper.utc_at(now)
                        - Duration::milliseconds(i.elapsed().as_millis() as i64)
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
            watch: self.watch(now),
        }
    }

    /// Countdown, staleness, faults and abort timers at `now`.
    fn watch(&self, now: f64) -> Watch {
        let tl = &self.timeline;
        let sample_age_s = self.last_sample.map(|s| (now - s.t_s).max(0.0));
        let all_done = tl
            .epochs
            .iter()
            .all(|e| e.state != EpochState::Pending && e.state != EpochState::Current);
        let at = now.max(tl.t_s);
        Watch {
            next_turn: tl.next_turn(),
            sample_age_s,
            heading_stale: tl.sensor_lost || sample_age_s.is_some_and(|a| a > HEADING_STALE_S),
            turntable_faults: tl.turntable_faults,
            turns_by_hand: tl.turns_by_hand,
            not_flying_for_s: if tl.flying {
                None
            } else {
                tl.stopped_since_s.map(|s| (at - s).max(0.0))
            },
            sensor_lost_for_s: tl.lost_since_s.map(|s| (at - s).max(0.0)),
            auto_abort: tl.abort_at().map(|(t, why)| AutoAbort {
                in_s: (t - at).max(0.0),
                reason: why.text().to_string(),
            }),
            end_now_status: if all_done { "complete" } else { "aborted" }.to_string(),
            end_summary: Vec::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(t_s: f64) -> Stamped {
        Stamped {
            t_s,
            arena_heading_deg: 10.0,
            world_heading_deg: 20.0,
            sun_relative_heading_deg: 30.0,
        }
    }

    #[test]
    fn trace_keeps_one_point_per_spacing_over_the_window() {
        let mut tr = Trace::default();
        tr.mark_turn(0.1);
        // 100 Hz for 16 minutes: one point every 0.25 s, the last 15 minutes kept.
        for i in 0..(16 * 60 * 100) {
            tr.push(&at(f64::from(i) * 0.01), true);
        }
        let first = tr.points.front().expect("points").t_s;
        let last = tr.points.back().expect("points").t_s;
        assert!(last - first <= TRACE_WINDOW_S, "{first} .. {last}");
        assert!(last - first > TRACE_WINDOW_S - 1.0, "{first} .. {last}");
        assert!(
            tr.points
                .iter()
                .zip(tr.points.iter().skip(1))
                .all(|(a, b)| b.t_s - a.t_s >= TRACE_SPACING_S - 1e-9)
        );
        assert!(
            tr.turn_marks.is_empty(),
            "the turn at 0.1 s left the window"
        );
        let p = tr.points.back().expect("points");
        assert_eq!((p.arena_deg, p.world_deg, p.sun_deg), (10.0, 20.0, 30.0));
    }
}
