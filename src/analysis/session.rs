//! Per-session statistics recomputed from `samples.csv` in one streaming pass.

use super::AnalysisError;
use super::meta::{SessionInfo, read_session_info};
use super::samples::{Sample, for_each_sample};
use super::stats::{VectorAcc, rayleigh};
use crate::frames::{signed_difference_deg, sun_relative_heading_deg};
use std::path::Path;

/// Gaps between consecutive samples longer than this do not count as flying time, seconds
/// (a sensor outage is not flight; common practice).
const MAX_FLYING_STEP_S: f64 = 1.0;

/// Statistics of one epoch.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct EpochStats {
    /// 1-based index.
    pub index: u32,
    /// Condition label ("" when unknown).
    pub condition: String,
    /// Arena mark bearing (the value on the epoch's last scored sample, else its last sample).
    pub arena_bearing_deg: Option<f64>,
    /// All rows of the epoch.
    pub rows: u64,
    /// Scored world headings.
    pub world: VectorAcc,
    /// Scored arena headings.
    pub arena: VectorAcc,
    /// Scored sun-relative headings.
    pub sun: VectorAcc,
    /// First and last t_s of the epoch.
    pub t_start_s: f64,
    /// Last t_s.
    pub t_end_s: f64,
    /// Flying seconds in the epoch.
    pub flying_s: f64,
    /// Mean sun azimuth over the epoch's scored samples (Σ cos, Σ sin).
    pub sun_az: VectorAcc,
    /// Σ sun elevation over scored samples.
    pub sum_sun_elevation_deg: f64,
}

impl EpochStats {
    /// Scored samples.
    pub fn n(&self) -> u64 {
        self.world.n
    }
    /// Rayleigh p on n (world headings).
    pub fn rayleigh_p(&self) -> f64 {
        rayleigh(self.world.n as f64, self.world.r()).1
    }
    /// Effective sample size of the world headings.
    pub fn n_eff(&self) -> f64 {
        self.world.n_eff()
    }
    /// Rayleigh p on n_eff.
    pub fn rayleigh_p_eff(&self) -> f64 {
        rayleigh(self.world.n_eff(), self.world.r()).1
    }
    /// Mean sun elevation of scored samples.
    pub fn mean_sun_elevation_deg(&self) -> Option<f64> {
        (self.world.n > 0).then(|| self.sum_sun_elevation_deg / self.world.n as f64)
    }
}

/// One turn: between epoch `from` and epoch `to`.
#[derive(Debug, Clone, PartialEq)]
pub struct TurnStats {
    /// 1-based turn index (turn k lies between epoch k and k + 1).
    pub index: u32,
    /// Epoch before.
    pub from_epoch: u32,
    /// Epoch after.
    pub to_epoch: u32,
    /// The turn (commanded, from summary.json; else the change of the arena bearing).
    pub turn_deg: Option<f64>,
    /// Mean world heading after minus before, (-180, 180].
    pub world_shift_deg: Option<f64>,
    /// Mean arena heading after minus before, (-180, 180].
    pub arena_shift_deg: Option<f64>,
}

/// Everything the analysis keeps about one session after one pass.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SessionStats {
    /// session.json.
    pub info: SessionInfo,
    /// Epochs in index order (epoch 0, before the first epoch, is left out).
    pub epochs: Vec<EpochStats>,
    /// All scored world headings.
    pub world: VectorAcc,
    /// All scored arena headings.
    pub arena: VectorAcc,
    /// Rows read.
    pub rows: u64,
    /// Flying seconds.
    pub flying_s: f64,
    /// Last t_s.
    pub duration_s: f64,
    /// samples.csv ended in a torn line that was left out.
    pub torn_tail: bool,
}

impl SessionStats {
    /// Turns between consecutive epochs.
    pub fn turns(&self) -> Vec<TurnStats> {
        let mut out = Vec::new();
        for (k, pair) in self.epochs.windows(2).enumerate() {
            let (a, b) = (&pair[0], &pair[1]);
            let from_summary = self.info.summary.as_ref().and_then(|s| {
                s.turns
                    .iter()
                    .find(|t| t.index == a.index as usize)
                    .map(|t| t.turn_deg)
            });
            let from_bearing = match (a.arena_bearing_deg, b.arena_bearing_deg) {
                (Some(x), Some(y)) => Some(signed_difference_deg(x, y)),
                _ => None,
            };
            let shift = |x: Option<f64>, y: Option<f64>| match (x, y) {
                (Some(x), Some(y)) => Some(signed_difference_deg(x, y)),
                _ => None,
            };
            out.push(TurnStats {
                index: k as u32 + 1,
                from_epoch: a.index,
                to_epoch: b.index,
                turn_deg: from_summary.or(from_bearing),
                world_shift_deg: shift(a.world.mean_deg(), b.world.mean_deg()),
                arena_shift_deg: shift(a.arena.mean_deg(), b.arena.mean_deg()),
            });
        }
        out
    }

    /// Distinct conditions in epoch order.
    pub fn conditions(&self) -> Vec<String> {
        let mut v: Vec<String> = Vec::new();
        for e in &self.epochs {
            if !v.contains(&e.condition) {
                v.push(e.condition.clone());
            }
        }
        v
    }
}

/// Streaming per-session accumulation; also used by `report`, which keeps the trace.
pub struct SessionPass {
    stats: SessionStats,
    prev: Option<Sample>,
}

impl SessionPass {
    /// Starts a pass for a session described by `info`.
    pub fn new(info: SessionInfo) -> Self {
        Self {
            stats: SessionStats {
                info,
                ..Default::default()
            },
            prev: None,
        }
    }

    /// Adds one sample.
    #[inline]
    pub fn push(&mut self, s: &Sample) {
        let st = &mut self.stats;
        st.rows += 1;
        st.duration_s = s.t_s;
        let mut dt_fly = 0.0;
        if let Some(p) = &self.prev {
            let dt = s.t_s - p.t_s;
            if p.flying && dt > 0.0 && dt <= MAX_FLYING_STEP_S {
                dt_fly = dt;
                st.flying_s += dt;
            }
        }
        let new_epoch = self.prev.is_none_or(|p| p.epoch != s.epoch);
        self.prev = Some(*s);
        if s.epoch == 0 {
            return;
        }
        if new_epoch && st.epochs.last().is_none_or(|e| e.index != s.epoch) {
            let condition = st.info.condition(s.epoch).to_string();
            // An epoch seen again later (should not happen) continues its own record.
            if let Some(pos) = st.epochs.iter().position(|e| e.index == s.epoch) {
                let e = st.epochs.remove(pos);
                st.epochs.push(e);
            } else {
                st.epochs.push(EpochStats {
                    index: s.epoch,
                    condition,
                    t_start_s: s.t_s,
                    ..Default::default()
                });
            }
            st.world.mark_gap();
            st.arena.mark_gap();
        }
        let Some(e) = st.epochs.last_mut() else {
            return;
        };
        e.rows += 1;
        e.t_end_s = s.t_s;
        e.flying_s += dt_fly;
        if s.scored {
            e.world.push_deg(s.world_heading_deg);
            e.arena.push_deg(s.arena_heading_deg);
            e.sun.push_deg(sun_relative_heading_deg(
                s.world_heading_deg,
                s.sun_azimuth_deg,
            ));
            e.sun_az.push_deg(s.sun_azimuth_deg);
            e.sum_sun_elevation_deg += s.sun_elevation_deg;
            e.arena_bearing_deg = Some(s.arena_bearing_deg);
            st.world.push_deg(s.world_heading_deg);
            st.arena.push_deg(s.arena_heading_deg);
        } else {
            if e.world.n == 0 {
                e.arena_bearing_deg = Some(s.arena_bearing_deg);
            }
            e.world.mark_gap();
            e.arena.mark_gap();
            e.sun.mark_gap();
            st.world.mark_gap();
            st.arena.mark_gap();
        }
    }

    /// Ends the pass.
    pub fn finish(mut self, torn_tail: bool) -> SessionStats {
        self.stats.torn_tail = torn_tail;
        self.stats.epochs.sort_by_key(|e| e.index);
        self.stats
    }
}

/// Reads a session folder: session.json, then one streaming pass over samples.csv.
pub fn analyse_session(dir: &Path) -> Result<SessionStats, AnalysisError> {
    analyse_session_with(dir, |_| {})
}

/// Like [`analyse_session`], also handing every sample to `also` (report keeps a trace).
pub fn analyse_session_with(
    dir: &Path,
    mut also: impl FnMut(&Sample),
) -> Result<SessionStats, AnalysisError> {
    let samples = dir.join("samples.csv");
    if !samples.is_file() {
        return Err(AnalysisError::Missing { path: samples });
    }
    let info = read_session_info(dir)?;
    let mut pass = SessionPass::new(info);
    let out = for_each_sample(&samples, |s| {
        pass.push(s);
        also(s);
    })?;
    Ok(pass.finish(out.torn_tail))
}
