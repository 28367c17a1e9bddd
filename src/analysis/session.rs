//! Per-session statistics recomputed from `samples.csv` in one streaming pass.
//!
//! The per-epoch world/arena statistics come from the archive's [`SummaryBuilder`] (the same
//! code that writes `summary.json`, so a report and a batch agree with the session's own
//! summary); this module adds what the analysis needs besides: flying time, the time span of
//! each epoch, sun-relative headings and sun elevation.

use super::AnalysisError;
use super::meta::{SessionInfo, read_session_info};
use crate::archive::read::{SampleFields, for_each_sample};
use crate::archive::summary::SummaryBuilder;
use crate::circular::HeadingAccumulator;
use crate::frames::{signed_difference_deg, sun_relative_heading_deg};
use std::collections::BTreeMap;
use std::path::Path;

/// Gaps between consecutive samples longer than this do not count as flying time, seconds
/// (a sensor outage is not flight; common practice).
const MAX_FLYING_STEP_S: f64 = 1.0;

/// Statistics of one epoch.
#[derive(Debug, Clone, Default)]
pub struct EpochStats {
    /// 1-based index.
    pub index: usize,
    /// Condition label ("" when unknown).
    pub condition: String,
    /// Arena mark bearing during the epoch (its first scored sample's; see [`SummaryBuilder`]).
    pub arena_bearing_deg: Option<f64>,
    /// All rows of the epoch.
    pub rows: u64,
    /// Scored world headings.
    pub world: HeadingAccumulator,
    /// Scored arena headings.
    pub arena: HeadingAccumulator,
    /// Scored sun-relative headings (world heading − sun azimuth).
    pub sun: HeadingAccumulator,
    /// First t_s of the epoch.
    pub t_start_s: f64,
    /// Last t_s of the epoch.
    pub t_end_s: f64,
    /// Flying seconds in the epoch.
    pub flying_s: f64,
    /// Σ sun elevation over scored samples.
    pub sum_sun_elevation_deg: f64,
}

impl EpochStats {
    /// Scored samples.
    pub fn n(&self) -> u64 {
        self.world.n()
    }
    /// Mean sun elevation of scored samples.
    pub fn mean_sun_elevation_deg(&self) -> Option<f64> {
        (self.world.n() > 0).then(|| self.sum_sun_elevation_deg / self.sun.n().max(1) as f64)
    }
}

/// One turn: between epoch `from_epoch` and epoch `from_epoch + 1`.
#[derive(Debug, Clone, PartialEq)]
pub struct TurnStats {
    /// 1-based turn index k: the turn between epoch k and k + 1.
    pub index: usize,
    /// Epoch before.
    pub from_epoch: usize,
    /// Epoch after.
    pub to_epoch: usize,
    /// The turn: from summary.json, else the planned turn in session.json.
    pub turn_deg: Option<f64>,
    /// Mean world heading after minus before, (-180, 180].
    pub world_shift_deg: Option<f64>,
    /// Mean arena heading after minus before, (-180, 180].
    pub arena_shift_deg: Option<f64>,
}

/// Everything the analysis keeps about one session after one pass (small: accumulators only).
#[derive(Debug, Clone, Default)]
pub struct SessionStats {
    /// session.json.
    pub info: SessionInfo,
    /// Epochs that have samples, in index order.
    pub epochs: Vec<EpochStats>,
    /// Turns between consecutive epochs that both have samples.
    pub turns: Vec<TurnStats>,
    /// All scored world headings.
    pub world: HeadingAccumulator,
    /// All scored arena headings.
    pub arena: HeadingAccumulator,
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

#[derive(Debug, Clone, Default)]
struct Extra {
    rows: u64,
    t_start_s: f64,
    t_end_s: f64,
    flying_s: f64,
    sun: HeadingAccumulator,
    sum_sun_elevation_deg: f64,
}

/// Streaming per-session accumulation (O(1) per sample).
pub struct SessionPass {
    info: SessionInfo,
    builder: SummaryBuilder,
    extras: BTreeMap<usize, Extra>,
    prev: Option<(f64, bool, usize, bool)>, // t_s, flying, epoch, scored
    rows: u64,
    flying_s: f64,
    duration_s: f64,
}

impl SessionPass {
    /// Starts a pass for a session described by `info`.
    pub fn new(info: SessionInfo) -> Self {
        let planned = info
            .meta
            .as_ref()
            .map(|m| m.epochs.clone())
            .unwrap_or_default();
        Self {
            info,
            builder: SummaryBuilder::new(&planned),
            extras: BTreeMap::new(),
            prev: None,
            rows: 0,
            flying_s: 0.0,
            duration_s: 0.0,
        }
    }

    /// Adds one sample.
    #[inline]
    pub fn push(&mut self, s: &SampleFields<'_>) {
        self.builder.push_fields(s);
        self.rows += 1;
        self.duration_s = s.t_s;
        let mut dt_fly = 0.0;
        let mut chained = false;
        if let Some((t, flying, epoch, scored)) = self.prev {
            let dt = s.t_s - t;
            if flying && dt > 0.0 && dt <= MAX_FLYING_STEP_S {
                dt_fly = dt;
                self.flying_s += dt;
            }
            chained = epoch == s.epoch && scored;
        }
        self.prev = Some((s.t_s, s.flying, s.epoch, s.scored));
        if s.epoch == 0 {
            return;
        }
        let e = self.extras.entry(s.epoch).or_insert_with(|| Extra {
            t_start_s: s.t_s,
            ..Default::default()
        });
        e.rows += 1;
        e.t_end_s = s.t_s;
        e.flying_s += dt_fly;
        if s.scored && s.world_heading_deg.is_finite() && s.arena_heading_deg.is_finite() {
            if !chained {
                e.sun.mark_gap();
            }
            e.sun.push_deg(sun_relative_heading_deg(
                s.world_heading_deg,
                s.sun_azimuth_deg,
            ));
            e.sum_sun_elevation_deg += s.sun_elevation_deg;
        }
    }

    /// Ends the pass.
    pub fn finish(self, torn_tail: bool) -> SessionStats {
        let mut epochs = Vec::new();
        for (&index, x) in &self.extras {
            let Some((w, a)) = self.builder.epoch_accumulators(index) else {
                continue; // an epoch the plan does not know: counted in the session totals only
            };
            let bearing = self
                .builder
                .epoch_summary(index)
                .map(|s| s.arena_bearing_deg)
                .filter(|b| b.is_finite());
            epochs.push(EpochStats {
                index,
                condition: self.info.condition(index).to_string(),
                arena_bearing_deg: bearing,
                rows: x.rows,
                world: w.clone(),
                arena: a.clone(),
                sun: x.sun.clone(),
                t_start_s: x.t_start_s,
                t_end_s: x.t_end_s,
                flying_s: x.flying_s,
                sum_sun_elevation_deg: x.sum_sun_elevation_deg,
            });
        }
        let mut turns = Vec::new();
        for pair in epochs.windows(2) {
            let (a, b) = (&pair[0], &pair[1]);
            if b.index != a.index + 1 {
                continue;
            }
            let from_summary = self.info.summary.as_ref().and_then(|s| {
                s.turns
                    .iter()
                    .find(|t| t.index == a.index)
                    .map(|t| t.turn_deg)
            });
            let planned = self.info.turn_before_deg.get(&b.index).copied();
            let shift = |x: Option<f64>, y: Option<f64>| Some(signed_difference_deg(x?, y?));
            turns.push(TurnStats {
                index: a.index,
                from_epoch: a.index,
                to_epoch: b.index,
                turn_deg: from_summary.or(planned),
                world_shift_deg: shift(a.world.mean_deg(), b.world.mean_deg()),
                arena_shift_deg: shift(a.arena.mean_deg(), b.arena.mean_deg()),
            });
        }
        SessionStats {
            world: self.builder.world().clone(),
            arena: self.builder.arena().clone(),
            info: self.info,
            epochs,
            turns,
            rows: self.rows,
            flying_s: self.flying_s,
            duration_s: self.duration_s,
            torn_tail,
        }
    }
}

/// Reads a session folder: session.json, then one streaming pass over samples.csv.
pub fn analyse_session(dir: &Path) -> Result<SessionStats, AnalysisError> {
    analyse_session_with(dir, |_| {})
}

/// Like [`analyse_session`], also handing every sample to `also` (report keeps a trace).
pub fn analyse_session_with(
    dir: &Path,
    mut also: impl FnMut(&SampleFields<'_>),
) -> Result<SessionStats, AnalysisError> {
    let samples = dir.join("samples.csv");
    if !samples.is_file() {
        return Err(AnalysisError::Missing { path: samples });
    }
    let info = read_session_info(dir)?;
    let mut pass = SessionPass::new(info);
    let stats = for_each_sample(&samples, |s| {
        pass.push(s);
        also(s);
    })?;
    Ok(pass.finish(stats.torn.is_some()))
}
