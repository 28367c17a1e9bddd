//! Per-session statistics recomputed from `samples.csv` in one streaming pass.
//!
//! The rules are those of the archive's `SummaryBuilder`, which writes `summary.json` (scored
//! samples with finite headings count; the lag chain breaks at every sample that does not; an
//! epoch's bearing is that of its first scored sample; turn k lies between epochs k and k + 1),
//! so a batch agrees with the sessions' own summaries. The builder is not used here because it
//! computes each heading's sine and cosine twice (epoch and session) and batch must be fast;
//! this pass adds flying time, each epoch's time span, the sun's mean azimuth and elevation,
//! the sun-relative headings and the time bins of the heading trend. Each scored sample costs
//! two sines and cosines (its world and arena heading): the time bins reuse the world
//! heading's unit vector, and the sun-relative one is that vector rotated back by the sun's
//! azimuth, whose own sine and cosine are computed only when it changes (a few times a second).

use super::AnalysisError;
use super::meta::{SessionInfo, read_session_info};
use super::scan::{Row, ScanOutcome, scan_samples};
use crate::archive::columns::{ColumnsRead, read_columns};
use crate::archive::read::{RowOrder, for_each_valid_sample};
use crate::circular::{HeadingAccumulator, sin_cos_deg};
use crate::frames::{signed_difference_deg, sun_relative_heading_deg};
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
    /// Arena mark bearing during the epoch (that of its first scored sample).
    pub arena_bearing_deg: Option<f64>,
    /// All rows of the epoch.
    pub rows: u64,
    /// Scored world headings.
    pub world: HeadingAccumulator,
    /// Scored arena headings.
    pub arena: HeadingAccumulator,
    /// Scored sun-relative headings (world heading − sun azimuth of the same sample).
    pub sun_relative: HeadingAccumulator,
    /// Sun azimuth of the epoch's first scored sample (the reference for the mean below).
    pub sun_azimuth_ref_deg: Option<f64>,
    /// Σ of the scored samples' sun azimuth minus the reference, in (-180, 180] (the sun moves
    /// a few degrees per epoch at most, so this linear mean is exact and needs no trigonometry).
    pub sum_sun_azimuth_offset_deg: f64,
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
        let n = self.world.n();
        (n > 0).then(|| self.sum_sun_elevation_deg / n as f64)
    }
    /// Mean sun azimuth of scored samples, [0, 360).
    pub fn mean_sun_azimuth_deg(&self) -> Option<f64> {
        let n = self.world.n();
        let r = self.sun_azimuth_ref_deg?;
        (n > 0).then(|| crate::frames::wrap_360_deg(r + self.sum_sun_azimuth_offset_deg / n as f64))
    }
    /// The epoch's mean world heading minus its mean sun azimuth, [0, 360): where the animal
    /// headed relative to the sun (0 = toward it).
    pub fn mean_sun_relative_deg(&self) -> Option<f64> {
        Some(sun_relative_heading_deg(
            self.world.mean_deg()?,
            self.mean_sun_azimuth_deg()?,
        ))
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
    /// Where the samples were read from.
    pub read_from: ReadFrom,
    /// Circular–linear regression of the scored world headings on time (10-s bins).
    pub heading_trend: Option<crate::circular::HeadingTrend>,
    /// The sun's mean azimuth rate over the session, degrees per hour.
    pub sun_azimuth_rate_deg_per_h: Option<f64>,
}

impl SessionStats {
    /// `p_oriented` of epoch `index` from summary.json (the archive's `SummaryBuilder`
    /// computes it; None without a summary or with too little flight).
    pub fn p_oriented(&self, index: usize) -> Option<f64> {
        self.info
            .summary
            .as_ref()?
            .epochs
            .iter()
            .find(|e| e.index == index)?
            .p_oriented
    }

    /// The session's turn test from summary.json.
    pub fn turn_test(&self) -> Option<crate::archive::TurnTest> {
        self.info.summary.as_ref().map(|s| s.turn_test())
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

/// Streaming per-session accumulation: O(1) per sample, two sines and cosines per scored
/// sample (world and arena heading of its epoch; see the module notes). The session totals are the
/// merged epoch accumulators (plus scored samples outside any epoch).
pub struct SessionPass {
    info: SessionInfo,
    epochs: Vec<EpochStats>,
    /// Scored samples of epoch 0 (before the first epoch), which no epoch holds.
    outside_world: HeadingAccumulator,
    outside_arena: HeadingAccumulator,
    prev: Option<(f64, bool, usize, bool)>, // t_s, flying, epoch, scored
    rows: u64,
    flying_s: f64,
    duration_s: f64,
    /// Scored world headings summed per [`TREND_BIN_S`] bin: (bin, Σt_s, Σcos, Σsin, count).
    bins: Vec<(i64, f64, f64, f64, u64)>,
    /// [k, k + 1): the quotients t_s / TREND_BIN_S of the last bin (k its floor).
    bin_q: (f64, f64),
    /// Sun azimuth: (first t_s, last t_s, last azimuth, unwrapped change since the first).
    sun: Option<(f64, f64, f64, f64)>,
    /// The unit vector of the last sun azimuth seen.
    sun_unit: SunUnit,
}

/// The unit vector (cos, sin) of the sun's azimuth, recomputed only when the azimuth differs
/// from the row before (the archive writes it with three decimals, so it changes a few times a
/// second while headings change every sample). Exact: the same azimuth gives the same vector.
struct SunUnit {
    /// Bits of the azimuth (a NaN's at first: no finite azimuth has them).
    azimuth_bits: u64,
    unit: (f64, f64),
}

impl Default for SunUnit {
    fn default() -> Self {
        Self {
            azimuth_bits: f64::NAN.to_bits(),
            unit: (1.0, 0.0),
        }
    }
}

impl SunUnit {
    /// (cos, sin) of `azimuth_deg`; None when it is not finite.
    #[inline(always)]
    fn of(&mut self, azimuth_deg: f64) -> Option<(f64, f64)> {
        if !azimuth_deg.is_finite() {
            return None;
        }
        // Bits, not values: -0 and +0 have sines of different sign.
        if azimuth_deg.to_bits() != self.azimuth_bits {
            let (s, c) = sin_cos_deg(azimuth_deg);
            *self = Self {
                azimuth_bits: azimuth_deg.to_bits(),
                unit: (c, s),
            };
        }
        Some(self.unit)
    }
}

/// Width of the time bins of the heading-on-time regression, seconds.
pub const TREND_BIN_S: f64 = 10.0;

/// The heading trend of the binned headings: each bin's mean direction weighted by its
/// resultant length times its sample count (so a bin of scattered headings counts little).
fn trend_of_bins(bins: &[(i64, f64, f64, f64, u64)]) -> Option<crate::circular::HeadingTrend> {
    let (mut t, mut h, mut w) = (Vec::new(), Vec::new(), Vec::new());
    for &(_, st, c, s, n) in bins {
        if n == 0 {
            continue;
        }
        let Some(m) = crate::circular::mean_direction_from_resultant_deg(c, s, n as f64) else {
            continue;
        };
        t.push(st / n as f64 / 3600.0);
        h.push(m);
        w.push(c.hypot(s));
    }
    crate::circular::heading_trend(&t, &h, &w)
}

impl SessionPass {
    /// Starts a pass for a session described by `info`.
    pub fn new(info: SessionInfo) -> Self {
        Self {
            info,
            epochs: Vec::new(),
            outside_world: HeadingAccumulator::new(),
            outside_arena: HeadingAccumulator::new(),
            prev: None,
            rows: 0,
            flying_s: 0.0,
            duration_s: 0.0,
            bins: Vec::new(),
            bin_q: (f64::NAN, f64::NAN),
            sun: None,
            sun_unit: SunUnit::default(),
        }
    }

    /// Adds one sample.
    #[inline]
    pub fn push(&mut self, s: &Row) {
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
        let counts = s.scored && s.world_heading_deg.is_finite() && s.arena_heading_deg.is_finite();
        // The world heading's unit vector, computed once for its epoch, the session, the time
        // bins and the sun-relative frame.
        let (world_s, world_c) = if counts {
            sin_cos_deg(s.world_heading_deg)
        } else {
            (0.0, 0.0)
        };
        if s.sun_azimuth_deg.is_finite() && s.t_s.is_finite() {
            self.sun = Some(match self.sun {
                None => (s.t_s, s.t_s, s.sun_azimuth_deg, 0.0),
                Some((t0, _, last, total)) => (
                    t0,
                    s.t_s,
                    s.sun_azimuth_deg,
                    total + offset_deg(last, s.sun_azimuth_deg),
                ),
            });
        }
        if counts && s.t_s.is_finite() {
            // The bin is floor(t_s / TREND_BIN_S); the floor (a library call on x86-64's
            // baseline) is taken only when the quotient leaves the last bin's [k, k + 1).
            let q = s.t_s / TREND_BIN_S;
            if !(q >= self.bin_q.0 && q < self.bin_q.1) {
                let k = q.floor();
                self.bin_q = (k, k + 1.0);
                let bin = k as i64;
                if self.bins.last().is_none_or(|b| b.0 != bin) {
                    self.bins.push((bin, 0.0, 0.0, 0.0, 0));
                }
            }
            if let Some(b) = self.bins.last_mut() {
                b.1 += s.t_s;
                b.2 += world_c;
                b.3 += world_s;
                b.4 += 1;
            }
        }
        if s.epoch == 0 {
            if counts {
                self.outside_world.push_unit(world_c, world_s);
                self.outside_arena.push_deg(s.arena_heading_deg);
            }
            return;
        }
        if self.epochs.last().is_none_or(|e| e.index != s.epoch) {
            match self.epochs.iter().position(|e| e.index == s.epoch) {
                // An epoch seen again (not expected): continue its record.
                Some(pos) => {
                    let e = self.epochs.remove(pos);
                    self.epochs.push(e);
                }
                None => self.epochs.push(EpochStats {
                    index: s.epoch,
                    condition: self.info.condition(s.epoch).to_string(),
                    t_start_s: s.t_s,
                    ..Default::default()
                }),
            }
        }
        let Some(e) = self.epochs.last_mut() else {
            return;
        };
        e.rows += 1;
        e.t_end_s = s.t_s;
        e.flying_s += dt_fly;
        if e.arena_bearing_deg.is_none() || (counts && e.world.n() == 0) {
            // The bearing of the epoch's first scored sample (its first sample until then).
            if s.arena_bearing_deg.is_finite() {
                e.arena_bearing_deg = Some(s.arena_bearing_deg);
            }
        }
        if counts {
            if !chained {
                e.world.mark_gap();
                e.arena.mark_gap();
                e.sun_relative.mark_gap();
            }
            e.world.push_unit(world_c, world_s);
            e.arena.push_deg(s.arena_heading_deg);
            // θw − azimuth by rotating the world heading's unit vector back by the sun's.
            match self.sun_unit.of(s.sun_azimuth_deg) {
                Some((sun_c, sun_s)) => e.sun_relative.push_unit(
                    world_c * sun_c + world_s * sun_s,
                    world_s * sun_c - world_c * sun_s,
                ),
                None => e.sun_relative.push_deg(f64::NAN),
            }
            let r = *e.sun_azimuth_ref_deg.get_or_insert(s.sun_azimuth_deg);
            e.sum_sun_azimuth_offset_deg += offset_deg(r, s.sun_azimuth_deg);
            e.sum_sun_elevation_deg += s.sun_elevation_deg;
        }
    }

    /// Ends the pass.
    pub fn finish(mut self, torn_tail: bool) -> SessionStats {
        self.epochs.sort_by_key(|e| e.index);
        let mut turns = Vec::new();
        for pair in self.epochs.windows(2) {
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
        let mut world = self.outside_world;
        let mut arena = self.outside_arena;
        for e in &self.epochs {
            world.merge(&e.world);
            arena.merge(&e.arena);
        }
        let heading_trend = trend_of_bins(&self.bins);
        let sun_azimuth_rate_deg_per_h = self
            .sun
            .and_then(|(t0, t1, _, total)| (t1 > t0).then(|| total / (t1 - t0) * 3600.0));
        SessionStats {
            heading_trend,
            sun_azimuth_rate_deg_per_h,
            world,
            arena,
            info: self.info,
            epochs: self.epochs,
            turns,
            rows: self.rows,
            flying_s: self.flying_s,
            duration_s: self.duration_s,
            torn_tail,
            read_from: ReadFrom::Csv(None),
        }
    }
}

/// `to − from` in (-180, 180]: [`signed_difference_deg`] without its remainder operation for
/// the usual case of two angles in [0, 360) (as the archive writes them).
#[inline]
fn offset_deg(from_deg: f64, to_deg: f64) -> f64 {
    let d = to_deg - from_deg;
    if (-360.0..360.0).contains(&d) {
        if d > 180.0 {
            d - 360.0
        } else if d <= -180.0 {
            d + 360.0
        } else {
            d
        }
    } else {
        signed_difference_deg(from_deg, to_deg)
    }
}

/// Where [`analyse_session`] read a session's samples from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ReadFrom {
    /// `samples.columns`, the compact copy that matched `samples.csv`.
    Columns,
    /// `samples.csv`; with the reason when a `samples.columns` was there and not used (None:
    /// there was none, or it was not to be read).
    Csv(Option<String>),
}

impl Default for ReadFrom {
    fn default() -> Self {
        ReadFrom::Csv(None)
    }
}

/// Which file [`analyse_session`] may take the samples from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SampleSource {
    /// `samples.columns` when it matches `samples.csv` (see [`crate::archive::columns`]),
    /// else `samples.csv`.
    ColumnsIfValid,
    /// Always `samples.csv`, the archive of record.
    CsvOnly,
}

/// Reads a session folder: session.json, then one streaming pass over its samples (memory
/// does not grow with the file), from `samples.columns` when it matches `samples.csv`.
pub fn analyse_session(dir: &Path, source: SampleSource) -> Result<SessionStats, AnalysisError> {
    analyse(dir, source, false, |_| {})
}

/// Like [`analyse_session`], also handing every sample to `also`, in order, once the file is
/// known to be readable (report keeps a trace of one session).
pub fn analyse_session_with(
    dir: &Path,
    also: impl FnMut(&Row),
) -> Result<SessionStats, AnalysisError> {
    analyse(dir, SampleSource::ColumnsIfValid, true, also)
}

fn analyse(
    dir: &Path,
    source: SampleSource,
    want_rows: bool,
    mut also: impl FnMut(&Row),
) -> Result<SessionStats, AnalysisError> {
    let samples = dir.join("samples.csv");
    if !samples.is_file() {
        return Err(AnalysisError::Missing { path: samples });
    }
    let info = read_session_info(dir)?;
    let keep = want_rows;
    let mut seen: Vec<Row> = Vec::new();
    let mut unused = None;
    if source == SampleSource::ColumnsIfValid {
        let mut pass = SessionPass::new(info.clone());
        match read_columns(dir, |r| {
            pass.push(r);
            if keep {
                seen.push(*r);
            }
        }) {
            ColumnsRead::Done(_) => {
                seen.iter().for_each(&mut also);
                let mut stats = pass.finish(false);
                stats.read_from = ReadFrom::Columns;
                return Ok(stats);
            }
            ColumnsRead::Missing => {}
            ColumnsRead::Unused(why) => unused = Some(why),
        }
        seen.clear();
    }
    let mut stats = analyse_csv(&samples, info, keep, &mut seen, also)?;
    stats.read_from = ReadFrom::Csv(unused);
    Ok(stats)
}

/// One pass over `samples.csv`: the fast scan, or the archive's general reader.
fn analyse_csv(
    samples: &Path,
    info: SessionInfo,
    keep: bool,
    seen: &mut Vec<Row>,
    mut also: impl FnMut(&Row),
) -> Result<SessionStats, AnalysisError> {
    let mut pass = SessionPass::new(info.clone());
    // The archive's rule on the order of rows, as `check` applies it: a row that breaks it
    // sends the file to the general reader, whose error names the line.
    let mut order = RowOrder::default();
    let mut in_order = true;
    if let ScanOutcome::Done(_) = scan_samples(samples, |r| {
        in_order &= order.next(r.t_s).is_ok();
        pass.push(r);
        if keep {
            seen.push(*r);
        }
    }) && in_order
    {
        seen.iter().for_each(&mut also);
        return Ok(pass.finish(false));
    }
    // Not a plain file: the archive's general reader (quoted fields, a torn last line, text
    // that is not UTF-8, rows out of order, and the error message naming the line) from the
    // start.
    let mut pass = SessionPass::new(info);
    let stats = for_each_valid_sample(samples, |s| {
        let r = Row::from(s);
        pass.push(&r);
        also(&r);
    })?;
    Ok(pass.finish(stats.torn.is_some()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_heading_that_follows_the_sun_has_the_suns_slope() {
        // Two hours at 10 Hz; the sun moves 15°/h from 120°, the animal holds 40° left of it
        // (time-compensation failing: it follows the sun), scored throughout.
        let mut pass = SessionPass::new(SessionInfo::default());
        for i in 0..72_000 {
            let t_s = i as f64 * 0.1;
            let sun = crate::frames::wrap_360_deg(120.0 + 15.0 * t_s / 3600.0);
            pass.push(&Row {
                t_s,
                epoch: 1,
                world_heading_deg: crate::frames::wrap_360_deg(
                    sun - 40.0 + 5.0 * (i as f64 * 0.37).sin(),
                ),
                arena_heading_deg: 0.0,
                arena_bearing_deg: 0.0,
                sun_azimuth_deg: sun,
                sun_elevation_deg: 30.0,
                flying: true,
                scored: true,
            });
        }
        let st = pass.finish(false);
        let trend = st.heading_trend.unwrap();
        assert!((trend.slope_deg_per_h - 15.0).abs() < 0.1, "{trend:?}");
        let rate = st.sun_azimuth_rate_deg_per_h.unwrap();
        assert!((rate - 15.0).abs() < 1e-6, "{rate}");
    }

    #[test]
    fn rotated_sun_frame_and_bins_agree_with_the_headings_computed_directly() {
        // Headings that do not repeat (0.001° steps), a sun azimuth that changes every 37
        // samples and wraps through 0, a gap of unscored samples and a missing azimuth.
        let mut pass = SessionPass::new(SessionInfo::default());
        let mut direct = HeadingAccumulator::new();
        let mut world = HeadingAccumulator::new();
        let (mut sum_c, mut sum_s) = (0.0, 0.0);
        let mut prev_scored = false;
        for i in 0..20_000u32 {
            let t_s = f64::from(i) * 0.01;
            let w = f64::from((i * 7_919) % 360_000) / 1000.0;
            let sun = match i {
                5_000 => f64::NAN,
                _ => f64::from((359_900 + (i / 37) * 3) % 360_000) / 1000.0,
            };
            let scored = !(8_000..8_100).contains(&i);
            if scored {
                if !prev_scored {
                    direct.mark_gap();
                }
                direct.push_deg(sun_relative_heading_deg(w, sun));
                world.push_deg(w);
                let (sn, cs) = w.to_radians().sin_cos();
                sum_c += cs;
                sum_s += sn;
            }
            prev_scored = scored;
            pass.push(&Row {
                t_s,
                epoch: 1,
                world_heading_deg: w,
                arena_heading_deg: w,
                arena_bearing_deg: 0.0,
                sun_azimuth_deg: sun,
                sun_elevation_deg: 30.0,
                flying: true,
                scored,
            });
        }
        let (bins_c, bins_s, bins_n) = pass
            .bins
            .iter()
            .fold((0.0, 0.0, 0), |(c, s, n), b| (c + b.2, s + b.3, n + b.4));
        let st = pass.finish(false);
        let rotated = &st.epochs[0].sun_relative;
        assert_eq!(
            (rotated.n(), rotated.rejected(), rotated.lag_pairs()),
            (direct.n(), direct.rejected(), direct.lag_pairs())
        );
        assert_eq!(rotated.rejected(), 1);
        let close = |a: (f64, f64), b: (f64, f64)| (a.0 - b.0).abs() + (a.1 - b.1).abs() < 1e-9;
        assert!(close(rotated.resultant(), direct.resultant()));
        assert!((rotated.r() - direct.r()).abs() < 1e-13);
        assert!((rotated.mean_deg().unwrap() - direct.mean_deg().unwrap()).abs() < 1e-9);
        // The world accumulator is the one fed its own sines and cosines, to the bit.
        assert_eq!(
            format!("{:?}", st.epochs[0].world.resultant()),
            format!("{:?}", world.resultant())
        );
        // The bins hold every scored world heading once.
        assert_eq!(bins_n, world.n());
        let bins = (bins_c, bins_s);
        assert!(close(bins, world.resultant()) && close(bins, (sum_c, sum_s)));
    }

    #[test]
    fn offset_matches_signed_difference() {
        for a in [
            0.0, 0.5, 90.0, 179.999, 180.0, 180.001, 270.0, 359.999, -10.0, 725.0,
        ] {
            for b in [
                0.0, 0.5, 90.0, 179.999, 180.0, 180.001, 270.0, 359.999, 400.0,
            ] {
                // Equal up to the rounding of the remainder operation.
                let (x, y) = (offset_deg(a, b), signed_difference_deg(a, b));
                assert!(
                    (x - y).abs() < 1e-9 && x > -180.0 && x <= 180.0,
                    "{a} {b}: {x} {y}"
                );
            }
        }
    }
}
