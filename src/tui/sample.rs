//! An invented, self-consistent [`Snapshot`] for screen tests, benchmarks and previews.
//!
//! Scenario: the demo site "Larkfield Meadow (demo)", animal `lm-07`, a protocol of five-minute
//! epochs with arena turns between them, and an animal that holds a world heading near 250°
//! (so its arena heading jumps by minus each turn). Numbers are made up for display only; no
//! statistic here is computed, and nothing here is science.

use crate::engine::snapshot::{
    EpochRow, EpochState, Health, NextTurn, Prompt, Snapshot, TracePoint, TurnRow, TurnState, Watch,
};
use crate::frames::{wrap_360_deg, wrap_signed_deg};
use chrono::{DateTime, Duration, FixedOffset, Offset, TimeZone, Utc};
use std::path::PathBuf;

const CONDITIONS: [&str; 6] = [
    "open sky",
    "open sky",
    "diffuser",
    "polarizer 0°",
    "polarizer 90°",
    "sun blocked",
];
const TURNS_DEG: [f64; 5] = [90.0, -90.0, 180.0, 90.0, -90.0];

/// Builds a realistic mid-session snapshot; every setter returns the builder.
#[derive(Debug, Clone)]
pub struct SnapshotBuilder {
    t_s: f64,
    epoch_s: f64,
    epochs: usize,
    trace_points: usize,
    trace_step_s: f64,
    flying: bool,
    paused: bool,
    sensor_lost: bool,
    sync_age_s: Option<f64>,
    prompt: bool,
    ended: bool,
    held_world_deg: f64,
}

impl Default for SnapshotBuilder {
    fn default() -> Self {
        Self::new()
    }
}

impl SnapshotBuilder {
    /// Twelve and a half minutes into a five-epoch session, flying, archive synced 0.4 s ago.
    pub fn new() -> Self {
        SnapshotBuilder {
            t_s: 750.0,
            epoch_s: 300.0,
            epochs: 5,
            trace_points: 1500,
            trace_step_s: 0.5,
            flying: true,
            paused: false,
            sensor_lost: false,
            sync_age_s: Some(0.4),
            prompt: false,
            ended: false,
            held_world_deg: 250.0,
        }
    }

    /// One hour into a twelve-epoch session with 7200 trace points (the benchmark's case).
    pub fn hour_of_history() -> Self {
        SnapshotBuilder {
            t_s: 3600.0,
            epochs: 13,
            trace_points: 7200,
            ..Self::new()
        }
    }

    /// Session seconds now.
    pub fn t_s(mut self, t_s: f64) -> Self {
        self.t_s = t_s.max(0.0);
        self
    }

    /// Number of epochs in the protocol.
    pub fn epochs(mut self, n: usize) -> Self {
        self.epochs = n.max(1);
        self
    }

    /// Number of trace points (spaced `trace_step_s` apart, ending now).
    pub fn trace_points(mut self, n: usize) -> Self {
        self.trace_points = n;
        self
    }

    /// Whether the animal flies now.
    pub fn flying(mut self, flying: bool) -> Self {
        self.flying = flying;
        self
    }

    /// Whether the operator paused the protocol.
    pub fn paused(mut self, paused: bool) -> Self {
        self.paused = paused;
        self
    }

    /// Whether the sensor is lost now.
    pub fn sensor_lost(mut self, lost: bool) -> Self {
        self.sensor_lost = lost;
        self
    }

    /// Age of the archive's last successful sync (None: never synced).
    pub fn sync_age_s(mut self, age: Option<f64>) -> Self {
        self.sync_age_s = age;
        self
    }

    /// Whether a turn prompt is pending.
    pub fn prompt(mut self, prompt: bool) -> Self {
        self.prompt = prompt;
        self
    }

    /// Whether the session has ended.
    pub fn ended(mut self, ended: bool) -> Self {
        self.ended = ended;
        self
    }

    fn arena_bearing_at(&self, epoch_index0: usize) -> f64 {
        let mut b = 37.0;
        for k in 0..epoch_index0 {
            b += TURNS_DEG[k % TURNS_DEG.len()];
        }
        wrap_360_deg(b)
    }

    /// Deterministic wobble in degrees (sum of incommensurate sines, no random numbers).
    fn wobble_deg(t: f64) -> f64 {
        7.0 * (t * 0.31).sin() + 4.0 * (t * 1.7 + 1.0).sin() + 2.5 * (t * 5.3 + 2.0).sin()
    }

    fn sun_at(t: f64) -> (f64, f64) {
        (118.0 + t / 60.0 * 0.25, 42.0 + t / 60.0 * 0.15)
    }

    fn flying_at(&self, t: f64) -> bool {
        if (self.t_s - t) < 1.0 {
            return self.flying;
        }
        // One flight stop of 30 s in the second epoch.
        !(400.0..430.0).contains(&t)
    }

    /// The snapshot.
    pub fn build(&self) -> Snapshot {
        let t_now = self.t_s;
        let total_s = self.epoch_s * self.epochs as f64;
        let t_clamped = t_now.min(total_s);
        let current0 = ((t_clamped / self.epoch_s).floor() as usize).min(self.epochs - 1);
        let start_utc: DateTime<Utc> = Utc
            .with_ymd_and_hms(2026, 6, 14, 7, 30, 0)
            .single()
            .unwrap_or_default();
        let now_utc = start_utc + Duration::milliseconds((t_now * 1000.0) as i64);
        let (sun_az, sun_el) = Self::sun_at(t_now);
        let arena_bearing = self.arena_bearing_at(current0);

        // Trace.
        let mut trace = Vec::with_capacity(self.trace_points);
        for i in 0..self.trace_points {
            let t = t_now - (self.trace_points - 1 - i) as f64 * self.trace_step_s;
            if t < 0.0 {
                continue;
            }
            let e0 = ((t / self.epoch_s).floor() as usize).min(self.epochs - 1);
            let phi = self.arena_bearing_at(e0);
            let world = wrap_360_deg(self.held_world_deg + Self::wobble_deg(t));
            let (az, _) = Self::sun_at(t);
            trace.push(TracePoint {
                t_s: t,
                arena_deg: wrap_360_deg(world - phi),
                world_deg: world,
                sun_deg: wrap_360_deg(world - az),
                flying: self.flying_at(t),
            });
        }
        let trace_start = trace.first().map(|p| p.t_s).unwrap_or(t_now);
        let turn_marks_s: Vec<f64> = (1..self.epochs)
            .map(|k| k as f64 * self.epoch_s)
            .filter(|&t| t >= trace_start && t <= t_now)
            .collect();

        // Epoch table.
        let mut epochs = Vec::with_capacity(self.epochs);
        for e0 in 0..self.epochs {
            let start = e0 as f64 * self.epoch_s;
            let state = if self.ended {
                if start < t_now {
                    EpochState::Done
                } else {
                    EpochState::Skipped
                }
            } else if e0 < current0 {
                EpochState::Done
            } else if e0 == current0 {
                EpochState::Current
            } else {
                EpochState::Pending
            };
            let run_s = (t_now - start).clamp(0.0, self.epoch_s);
            let stopped = if e0 == 1 { 30.0f64.min(run_s) } else { 0.0 };
            let flying_s = (run_s - stopped).max(0.0);
            let scored = (flying_s - 10.0).max(0.0);
            let n = (scored * 100.0) as u64;
            let has = n > 0;
            let mean_world = self.held_world_deg + 2.0 * (e0 as f64 * 1.3).sin();
            let condition = CONDITIONS[e0 % CONDITIONS.len()].to_string();
            epochs.push(EpochRow {
                index: e0 + 1,
                condition,
                arena_bearing_deg: self.arena_bearing_at(e0),
                duration_s: self.epoch_s,
                flying_s,
                n,
                mean_arena_deg: has.then(|| wrap_360_deg(mean_world - self.arena_bearing_at(e0))),
                mean_world_deg: has.then(|| wrap_360_deg(mean_world)),
                r: if has {
                    0.78 + 0.02 * e0 as f64 % 0.15
                } else {
                    0.0
                },
                // A p only once the epoch has 30 s of flight, as the engine gives it.
                p_oriented: (has && flying_s >= crate::circular::MIN_SCORED_S)
                    .then(|| (1e-4 * (1.0 + e0 as f64)).clamp(crate::circular::P_FLOOR, 1.0)),
                state,
            });
        }
        let turns: Vec<TurnRow> = (1..self.epochs)
            .map(|k| {
                let both = epochs[k - 1].n > 0 && epochs[k].n > 0;
                TurnRow {
                    index: k,
                    turn_deg: TURNS_DEG[(k - 1) % TURNS_DEG.len()],
                    world_shift_deg: both.then(|| {
                        wrap_signed_deg(
                            epochs[k].mean_world_deg.unwrap_or(0.0)
                                - epochs[k - 1].mean_world_deg.unwrap_or(0.0),
                        )
                    }),
                }
            })
            .collect();

        let current_end = (current0 + 1) as f64 * self.epoch_s;
        let has_next = current0 + 1 < self.epochs && !self.ended;
        let latest = trace.last().copied();
        let heading_known = !self.sensor_lost && latest.is_some();
        let local_offset = FixedOffset::east_opt(2 * 3600).unwrap_or_else(|| Utc.fix());
        let session_id = "20260614T073000Z-lm-07".to_string();
        let recent_events = vec![
            "07:30:00 session start, epoch 1 open sky".to_string(),
            "07:35:00 turn 1 commanded +90°".to_string(),
            "07:35:02 turn 1 done".to_string(),
            "07:36:40 flight stop".to_string(),
            "07:37:10 flight start".to_string(),
            "07:40:00 turn 2 commanded -90°".to_string(),
            "07:41:12 note: wind gust, shade cloth adjusted".to_string(),
        ];
        Snapshot {
            session_id: session_id.clone(),
            session_dir: PathBuf::from("sessions").join(session_id),
            animal: "lm-07".to_string(),
            site_name: "Larkfield Meadow (demo)".to_string(),
            site_note: None,
            protocol_name: "demo turns".to_string(),
            now_utc,
            local_offset,
            t_s: t_now,
            remaining_s: (!self.ended).then(|| (total_s - t_now).max(0.0)),
            epoch: current0 + 1,
            epoch_count: self.epochs,
            condition: CONDITIONS[current0 % CONDITIONS.len()].to_string(),
            next_turn_in_s: has_next.then_some(current_end - t_now),
            next_turn_deg: has_next.then(|| TURNS_DEG[current0 % TURNS_DEG.len()]),
            turning: false,
            settling: (t_now - current0 as f64 * self.epoch_s) < 10.0,
            paused: self.paused,
            flying: self.flying,
            arena_bearing_deg: arena_bearing,
            sun_azimuth_deg: sun_az,
            sun_elevation_deg: sun_el,
            zenith_evector_deg: wrap_360_deg(sun_az + 90.0) % 180.0,
            evector_shown_deg: Some(wrap_360_deg(sun_az + 90.0) % 180.0),
            arena_heading_deg: heading_known.then(|| latest.map(|p| p.arena_deg).unwrap_or(0.0)),
            world_heading_deg: heading_known.then(|| latest.map(|p| p.world_deg).unwrap_or(0.0)),
            sun_relative_heading_deg: heading_known
                .then(|| latest.map(|p| p.sun_deg).unwrap_or(0.0)),
            trace,
            turn_marks_s,
            epochs,
            turns,
            r_world: 0.81,
            r_arena: 0.22,
            health: Health {
                rate_hz: 99.8,
                jitter_ms: 0.6,
                malformed: 2,
                lost_periods: u64::from(self.sensor_lost),
                sensor_lost: self.sensor_lost,
                last_sync_utc: self
                    .sync_age_s
                    .map(|a| now_utc - Duration::milliseconds((a * 1000.0) as i64)),
                samples_written: (t_now * 99.8) as u64,
                archive_error: None,
                sensor: "simulated sensor on /dev/pts/4 (100 Hz)".to_string(),
                turntable: "simulated turntable on /dev/pts/5".to_string(),
            },
            prompt: self.prompt.then(|| Prompt {
                text: format!(
                    "Turn the arena {:+.0}° (clockwise seen from above), then press Enter",
                    TURNS_DEG[current0 % TURNS_DEG.len()]
                ),
                waiting_s: 4.0,
                countdown_s: 11.0,
                turn_by_hand: false,
            }),
            recent_events,
            ended: self.ended,
            end_reason: self.ended.then(|| "complete".to_string()),
            watch: Watch {
                next_turn: if has_next {
                    NextTurn {
                        state: if self.paused {
                            TurnState::ClockStopped
                        } else {
                            TurnState::Counting
                        },
                        deg: Some(TURNS_DEG[current0 % TURNS_DEG.len()]),
                        in_s: Some(current_end - t_now),
                    }
                } else {
                    NextTurn::default()
                },
                sample_age_s: Some(if self.sensor_lost { 4.0 } else { 0.01 }),
                heading_stale: self.sensor_lost,
                turntable_faults: 0,
                turns_by_hand: false,
                not_flying_for_s: (!self.flying).then_some(12.0),
                sensor_lost_for_s: self.sensor_lost.then_some(4.0),
                auto_abort: None,
                end_now_status: "aborted".to_string(),
                end_summary: if self.ended {
                    vec![
                        "hold r world 0.81, arena 0.22 (scored samples of the session)".to_string(),
                        "turns kept: 3 of 4 scored".to_string(),
                    ]
                } else {
                    Vec::new()
                },
            },
        }
    }
}
