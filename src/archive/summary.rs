//! The one place that turns sample rows into a [`Summary`].
//!
//! The engine feeds [`SummaryBuilder`] live, sample by sample; `check --repair` and `check`
//! feed it from `samples.csv`. Every angle is first rounded exactly as the writer writes it
//! (see [`super::fmt`]), so both paths see the same numbers in the same order and give the
//! same summary.

use serde::{Deserialize, Serialize};

use super::cue_scores::EpochCues;
use super::fmt::{quantize_angle_deg, quantize_fixed};
use super::read::SampleFields;
use super::windows::{EdgeWindows, window_shift_deg};
use super::{ANGLE_DECIMALS, EpochSummary, SampleRow, Summary, T_S_DECIMALS, TurnSummary};
use crate::circular::{HeadingAccumulator, OrientationTracker};
use crate::frames::{wrap_360_deg, wrap_signed_deg};
use crate::protocol::{ArenaMove, Protocol};

/// One planned epoch as stored in `session.json` (`epochs`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlannedEpoch {
    /// 1-based index.
    pub index: usize,
    /// Condition label.
    pub condition: String,
    /// Planned turn of the arena before this epoch starts, degrees (positive clockwise seen
    /// from above; 0 for the first epoch and for epochs that keep the bearing).
    pub turn_before_deg: f64,
    /// Planned duration, seconds.
    pub duration_s: f64,
}

impl PlannedEpoch {
    /// The planned epochs of an expanded protocol. `GoTo` moves become the shortest signed turn
    /// from the arena's planned position (0 at the start) to the target position.
    pub fn from_protocol(protocol: &Protocol) -> Vec<PlannedEpoch> {
        let mut position_deg = 0.0f64;
        protocol
            .epochs
            .iter()
            .map(|e| {
                let turn = match e.arena {
                    ArenaMove::Stay => 0.0,
                    ArenaMove::TurnBy { deg } => deg,
                    ArenaMove::GoTo { position_deg: to } => wrap_signed_deg(to - position_deg),
                };
                position_deg = wrap_360_deg(position_deg + turn);
                PlannedEpoch {
                    index: e.index,
                    condition: e.condition.clone(),
                    turn_before_deg: turn,
                    duration_s: e.duration_s,
                }
            })
            .collect()
    }
}

/// An accumulator that breaks its sample chain whenever samples it did not get came between
/// two it got (non-scored samples, other epochs).
#[derive(Debug, Clone, Default)]
struct Chain {
    acc: HeadingAccumulator,
    last_seq: Option<u64>,
}

impl Chain {
    #[inline]
    fn push(&mut self, seq: u64, angle_deg: f64) {
        if let Some(last) = self.last_seq
            && last + 1 != seq
        {
            self.acc.mark_gap();
        }
        self.last_seq = Some(seq);
        self.acc.push_deg(angle_deg);
    }
}

#[derive(Debug, Clone)]
struct EpochAcc {
    /// [`SummaryBuilder`]'s change count when a sample last changed this epoch's figures
    /// (0: none yet).
    changed_seq: u64,
    planned: PlannedEpoch,
    world: Chain,
    arena: Chain,
    bearing_scored_deg: Option<f64>,
    bearing_any_deg: Option<f64>,
    cues: EpochCues,
    /// The orientation test of scored world headings.
    oriented: OrientationTracker,
    /// First and last windows of scored world headings (the turn test).
    edges: EdgeWindows,
}

impl EpochAcc {
    fn own_bearing_deg(&self) -> Option<f64> {
        self.bearing_scored_deg.or(self.bearing_any_deg)
    }
}

/// The epoch lines of a [`Summary`] kept up to date between snapshots by
/// [`SummaryBuilder::refresh_epochs`]: only the epochs that received a sample since the last
/// refresh are recomputed, so a live screen of a 10,000-epoch protocol costs O(epochs)
/// comparisons per snapshot, not O(epochs) orientation tests.
#[derive(Debug, Clone, Default)]
pub struct EpochCache {
    /// `changed_seq` of each epoch when its line was last computed.
    seen: Vec<u64>,
    /// One line per planned epoch, in plan order: what [`SummaryBuilder::summary`] would give.
    pub epochs: Vec<EpochSummary>,
    /// Lines recomputed by all refreshes so far (to pin the cost in tests).
    pub recomputed: u64,
}

/// Builds a [`Summary`] from sample rows, O(1) per sample.
///
/// Only `scored` samples with finite headings count. Per-epoch `r`, `rayleigh_p` and
/// `p_oriented` ([`OrientationTracker`], O(1) per sample, O(20) to evaluate) are of world
/// headings; an epoch with no scored sample has null for every statistic; an epoch's `arena_bearing_deg` is the bearing of its
/// first scored sample (else its first sample, else the previous epoch's bearing plus the
/// planned turn, else NaN, written `null`). Turn k lies between epochs k and k + 1, one per
/// pair of consecutive planned epochs (a pair without a turn has `turn_deg` 0): `turn_deg` is
/// the planned turn before epoch k + 1, `world_shift_deg` the mean world heading of epoch
/// k + 1 minus that of epoch k in (-180, 180], None when either mean is undefined;
/// `window_shift_deg` the same on comparable windows next to the turn (see [`TurnSummary`]),
/// and the session's `turn_test` is [`turn_compensation_test`] of the turns that have one.
/// Samples of an epoch not in the plan count only in the session's `r_world` and `r_arena`.
#[derive(Debug, Clone)]
pub struct SummaryBuilder {
    epochs: Vec<EpochAcc>,
    /// Epoch index → position in `epochs`.
    lookup: Vec<Option<usize>>,
    /// Scored samples of epochs not in the plan (they count only for the session).
    other_world: Chain,
    other_arena: Chain,
    seq: u64,
    /// Changes made to epochs' figures so far (marks which lines [`EpochCache`] must redo).
    changes: u64,
}

impl SummaryBuilder {
    /// A builder for the planned epochs.
    pub fn new(epochs: &[PlannedEpoch]) -> Self {
        let max = epochs.iter().map(|e| e.index).max().unwrap_or(0);
        let mut lookup = vec![None; max + 1];
        for (pos, e) in epochs.iter().enumerate() {
            lookup[e.index] = Some(pos);
        }
        SummaryBuilder {
            epochs: epochs
                .iter()
                .map(|e| EpochAcc {
                    changed_seq: 0,
                    planned: e.clone(),
                    world: Chain::default(),
                    arena: Chain::default(),
                    bearing_scored_deg: None,
                    bearing_any_deg: None,
                    cues: EpochCues::default(),
                    oriented: OrientationTracker::new(),
                    edges: EdgeWindows::default(),
                })
                .collect(),
            lookup,
            other_world: Chain::default(),
            other_arena: Chain::default(),
            seq: 0,
            changes: 0,
        }
    }

    /// Adds one sample as the engine hands it to the writer.
    #[inline]
    pub fn push(&mut self, row: &SampleRow) {
        self.push_values(
            row.epoch,
            row.t_s,
            row.arena_heading_deg,
            row.arena_bearing_deg,
            row.world_heading_deg,
            row.scored,
        );
        self.push_cues(
            row.epoch,
            row.arena_heading_deg,
            row.world_heading_deg,
            row.scored,
            Some(row.sun_in_view),
            row.evector_shown_deg.unwrap_or(f64::NAN),
            row.sun_azimuth_deg,
        );
    }

    /// Adds one sample read back from `samples.csv`.
    #[inline]
    pub fn push_fields(&mut self, s: &SampleFields<'_>) {
        self.push_values(
            s.epoch,
            s.t_s,
            s.arena_heading_deg,
            s.arena_bearing_deg,
            s.world_heading_deg,
            s.scored,
        );
        self.push_cues(
            s.epoch,
            s.arena_heading_deg,
            s.world_heading_deg,
            s.scored,
            s.sun_in_view,
            s.evector_shown_deg,
            s.sun_azimuth_deg,
        );
    }

    /// Adds what the animal was shown at one sample to its epoch's cue scores (see
    /// [`super::cue_scores`]); the same samples count as in [`SummaryBuilder::push_values`].
    #[allow(clippy::too_many_arguments)]
    #[inline]
    pub fn push_cues(
        &mut self,
        epoch: usize,
        arena_heading_deg: f64,
        world_heading_deg: f64,
        scored: bool,
        sun_in_view: Option<bool>,
        evector_shown_deg: f64,
        sun_azimuth_deg: f64,
    ) {
        let arena = quantize_angle_deg(arena_heading_deg, ANGLE_DECIMALS);
        let world = quantize_angle_deg(world_heading_deg, ANGLE_DECIMALS);
        if !(scored && arena.is_finite() && world.is_finite()) {
            return;
        }
        if let Some(pos) = self.lookup.get(epoch).copied().flatten() {
            self.changes += 1;
            let e = &mut self.epochs[pos];
            e.changed_seq = self.changes;
            e.cues
                .push(world, sun_in_view, evector_shown_deg, sun_azimuth_deg);
        }
    }

    /// Adds one sample from its values (rounded first to the archive's angle and time
    /// precision). `t_s`: seconds since the session started.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn push_values(
        &mut self,
        epoch: usize,
        t_s: f64,
        arena_heading_deg: f64,
        arena_bearing_deg: f64,
        world_heading_deg: f64,
        scored: bool,
    ) {
        self.seq += 1;
        let seq = self.seq;
        let arena = quantize_angle_deg(arena_heading_deg, ANGLE_DECIMALS);
        let world = quantize_angle_deg(world_heading_deg, ANGLE_DECIMALS);
        let counts = scored && arena.is_finite() && world.is_finite();
        let pos = self.lookup.get(epoch).copied().flatten();
        if let Some(pos) = pos {
            let e = &mut self.epochs[pos];
            if e.bearing_any_deg.is_none() || (counts && e.bearing_scored_deg.is_none()) {
                self.changes += 1;
                e.changed_seq = self.changes;
                let bearing = quantize_angle_deg(arena_bearing_deg, ANGLE_DECIMALS);
                if bearing.is_finite() {
                    if e.bearing_any_deg.is_none() {
                        e.bearing_any_deg = Some(bearing);
                    }
                    if counts && e.bearing_scored_deg.is_none() {
                        e.bearing_scored_deg = Some(bearing);
                    }
                }
            }
            if counts {
                self.changes += 1;
                e.changed_seq = self.changes;
                if e.world.last_seq.is_some_and(|last| last + 1 != seq) {
                    e.oriented.mark_gap();
                }
                let t = quantize_fixed(t_s, T_S_DECIMALS);
                e.oriented.push_deg(t, world);
                e.edges.push(t, world);
                e.world.push(seq, world);
                e.arena.push(seq, arena);
            }
        } else if counts {
            self.other_world.push(seq, world);
            self.other_arena.push(seq, arena);
        }
    }

    /// The planned epochs.
    pub fn planned(&self) -> impl Iterator<Item = &PlannedEpoch> {
        self.epochs.iter().map(|e| &e.planned)
    }

    /// Accumulators (world, arena) of scored headings of epoch `index`.
    pub fn epoch_accumulators(
        &self,
        index: usize,
    ) -> Option<(&HeadingAccumulator, &HeadingAccumulator)> {
        let pos = self.lookup.get(index).copied().flatten()?;
        let e = &self.epochs[pos];
        Some((&e.world.acc, &e.arena.acc))
    }

    /// Scored samples of epoch `index` (0 if unknown).
    pub fn epoch_n(&self, index: usize) -> u64 {
        self.epoch_accumulators(index)
            .map(|(w, _)| w.n())
            .unwrap_or(0)
    }

    /// Mean world heading of epoch `index`.
    pub fn epoch_mean_world_deg(&self, index: usize) -> Option<f64> {
        self.epoch_accumulators(index)
            .and_then(|(w, _)| w.mean_deg())
    }

    /// The summary line of epoch `index` as it stands now.
    pub fn epoch_summary(&self, index: usize) -> Option<EpochSummary> {
        let pos = self.lookup.get(index).copied().flatten()?;
        Some(self.epoch_summary_at(pos, self.bearing_at(pos)))
    }

    /// World shift across turn k (between epoch k and k + 1) as it stands now.
    pub fn turn_shift_deg(&self, k: usize) -> Option<f64> {
        let before = self.epoch_mean_world_deg(k)?;
        let after = self.epoch_mean_world_deg(k + 1)?;
        Some(wrap_signed_deg(after - before))
    }

    /// All scored world headings of the session: the epochs' accumulators merged (each epoch
    /// a separate chain), O(number of epochs). Each sample is pushed once, into its epoch.
    pub fn world(&self) -> HeadingAccumulator {
        let mut acc = self.other_world.acc.clone();
        for e in &self.epochs {
            acc.merge(&e.world.acc);
        }
        acc
    }

    /// All scored arena headings of the session (see [`SummaryBuilder::world`]).
    pub fn arena(&self) -> HeadingAccumulator {
        let mut acc = self.other_arena.acc.clone();
        for e in &self.epochs {
            acc.merge(&e.arena.acc);
        }
        acc
    }

    /// Mean vector length of all scored world headings.
    pub fn r_world(&self) -> f64 {
        self.world().r()
    }

    /// Mean vector length of all scored arena headings.
    pub fn r_arena(&self) -> f64 {
        self.arena().r()
    }

    /// Samples pushed so far (scored or not).
    pub fn samples_seen(&self) -> u64 {
        self.seq
    }

    /// The bearing of the epoch at `pos`: its own (first scored sample, else first sample),
    /// else the last known bearing before it plus the planned turns since, else NaN. Walks
    /// back only over the epochs without a bearing just before `pos`.
    fn bearing_at(&self, pos: usize) -> f64 {
        let mut k = pos;
        let mut turns = 0.0;
        loop {
            let e = &self.epochs[k];
            if let Some(b) = e.own_bearing_deg() {
                return wrap_360_deg(b + turns);
            }
            if k == 0 {
                return f64::NAN;
            }
            turns += e.planned.turn_before_deg;
            k -= 1;
        }
    }

    /// [`SummaryBuilder::bearing_at`] of every epoch in one forward pass, O(epochs).
    fn bearings(&self) -> Vec<f64> {
        let mut out = Vec::with_capacity(self.epochs.len());
        let mut known: Option<f64> = None;
        let mut turns = 0.0;
        for e in &self.epochs {
            if let Some(b) = e.own_bearing_deg() {
                known = Some(b);
                turns = 0.0;
                out.push(wrap_360_deg(b));
            } else {
                turns += e.planned.turn_before_deg;
                out.push(known.map_or(f64::NAN, |b| wrap_360_deg(b + turns)));
            }
        }
        out
    }

    fn epoch_summary_at(&self, pos: usize, bearing: f64) -> EpochSummary {
        let e = &self.epochs[pos];
        let w = &e.world.acc;
        let empty = w.n() == 0;
        let p_oriented = e.oriented.test().map(|t| t.p);
        EpochSummary {
            index: e.planned.index,
            condition: e.planned.condition.clone(),
            arena_bearing_deg: bearing,
            n: w.n(),
            mean_arena_deg: e.arena.acc.mean_deg(),
            mean_world_deg: w.mean_deg(),
            r: if empty { f64::NAN } else { w.r() },
            rayleigh_p: if empty { f64::NAN } else { w.rayleigh_p() },
            p_oriented,
            cue: e.cues.score(),
        }
    }

    /// Brings `cache` up to date with the samples pushed so far: every line's bearing (one
    /// forward pass) and the figures of the epochs that changed since the last refresh.
    /// Afterwards `cache.epochs` equals `self.summary().epochs`.
    pub fn refresh_epochs(&self, cache: &mut EpochCache) {
        if cache.epochs.len() != self.epochs.len() {
            cache.seen = vec![0; self.epochs.len()];
            cache.epochs = (0..self.epochs.len())
                .map(|pos| self.epoch_summary_at(pos, f64::NAN))
                .collect();
            cache.recomputed += self.epochs.len() as u64;
        }
        for (pos, bearing) in self.bearings().into_iter().enumerate() {
            let changed = self.epochs[pos].changed_seq;
            if cache.seen[pos] != changed {
                cache.seen[pos] = changed;
                cache.epochs[pos] = self.epoch_summary_at(pos, bearing);
                cache.recomputed += 1;
            } else {
                cache.epochs[pos].arena_bearing_deg = bearing;
            }
        }
    }

    /// The summary as it stands now.
    pub fn summary(&self) -> Summary {
        let epochs: Vec<EpochSummary> = self
            .bearings()
            .into_iter()
            .enumerate()
            .map(|(pos, bearing)| self.epoch_summary_at(pos, bearing))
            .collect();
        let turns: Vec<TurnSummary> = (1..self.epochs.len())
            .map(|k| {
                let shift = match (epochs[k - 1].mean_world_deg, epochs[k].mean_world_deg) {
                    (Some(a), Some(b)) => Some(wrap_signed_deg(b - a)),
                    _ => None,
                };
                TurnSummary {
                    index: k,
                    turn_deg: self.epochs[k].planned.turn_before_deg,
                    world_shift_deg: shift,
                    cue: EpochCues::predict(&self.epochs[k - 1].cues, &self.epochs[k].cues),
                    window_shift_deg: window_shift_deg(
                        &self.epochs[k - 1].edges,
                        &self.epochs[k].edges,
                    ),
                }
            })
            .collect();
        Summary {
            epochs,
            turns,
            r_world: self.r_world(),
            r_arena: self.r_arena(),
        }
    }
}

/// Kind of the event that marks a turn whose world shift is not scored (the arena could not be
/// turned, or it was turned while the heading sensor was lost); its detail begins "turn K:".
pub const TURN_NOT_SCORED_EVENT: &str = "turn_not_scored";

/// The turns (1-based) that [`TURN_NOT_SCORED_EVENT`] events mark, in the order recorded
/// (from each event's kind and detail).
pub fn unscored_turns<'a>(events: impl IntoIterator<Item = (&'a str, &'a str)>) -> Vec<usize> {
    let mut out: Vec<usize> = Vec::new();
    for (_, detail) in events
        .into_iter()
        .filter(|(kind, _)| *kind == TURN_NOT_SCORED_EVENT)
    {
        let k = detail
            .strip_prefix("turn ")
            .and_then(|rest| rest.split(':').next())
            .and_then(|k| k.trim().parse().ok());
        if let Some(k) = k
            && !out.contains(&k)
        {
            out.push(k);
        }
    }
    out
}

/// Removes the world shifts (epoch means and windows) of `turns` from `summary`: they are not
/// scored whatever the headings say, and the turn test leaves them out. The engine and `check` both apply it, so they agree.
pub fn drop_unscored_turns(summary: &mut Summary, turns: &[usize]) {
    for t in &mut summary.turns {
        if turns.contains(&t.index) {
            t.world_shift_deg = None;
            t.window_shift_deg = None;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plan() -> Vec<PlannedEpoch> {
        vec![
            PlannedEpoch {
                index: 1,
                condition: "open sky".into(),
                turn_before_deg: 0.0,
                duration_s: 1.0,
            },
            PlannedEpoch {
                index: 2,
                condition: "diffuser".into(),
                turn_before_deg: 90.0,
                duration_s: 1.0,
            },
            PlannedEpoch {
                index: 3,
                condition: "open sky".into(),
                turn_before_deg: -90.0,
                duration_s: 1.0,
            },
        ]
    }

    #[test]
    fn counts_only_scored_samples_per_epoch() {
        let mut b = SummaryBuilder::new(&plan());
        // Epoch 1: world 350 (scored ×3), one unscored sample at 10 with another bearing.
        b.push_values(1, 0.0, 340.0, 5.0, 345.0, false);
        for _ in 0..3 {
            b.push_values(1, 0.0, 340.0, 10.0, 350.0, true);
        }
        // Epoch 2: world 10, i.e. a shift of +20 across the turn, wrapped.
        for _ in 0..4 {
            b.push_values(2, 0.0, 280.0, 90.0, 10.0, true);
        }
        // Epoch 3: nothing scored; an unknown epoch 7 counts only for the session.
        b.push_values(3, 0.0, 0.0, 0.0, 0.0, false);
        b.push_values(7, 0.0, 10.0, 0.0, 10.0, true);
        // Non-finite headings never count.
        b.push_values(2, 0.0, f64::NAN, 90.0, f64::NAN, true);
        let s = b.summary();
        assert_eq!(s.epochs.len(), 3);
        assert_eq!(s.epochs[0].n, 3);
        assert_eq!(s.epochs[0].arena_bearing_deg, 10.0); // first scored, not first sample
        assert!((s.epochs[0].mean_world_deg.unwrap() - 350.0).abs() < 1e-9);
        assert_eq!(s.epochs[1].n, 4);
        assert_eq!(s.epochs[1].condition, "diffuser");
        assert_eq!(s.epochs[2].n, 0);
        assert_eq!(s.epochs[2].mean_world_deg, None);
        // An epoch without scored samples: null for every statistic.
        assert!(s.epochs[2].r.is_nan() && s.epochs[2].rayleigh_p.is_nan());
        assert_eq!(s.epochs[2].p_oriented, None);
        let j = serde_json::to_value(&s).unwrap();
        assert!(j["epochs"][2]["r"].is_null() && j["epochs"][2]["rayleigh_p"].is_null());
        assert!(j["epochs"][2]["p_oriented"].is_null());
        assert!(j["epochs"][0].get("n_eff").is_none());
        assert_eq!(s.epochs[2].arena_bearing_deg, 0.0); // first sample's bearing
        assert_eq!(s.turns.len(), 2);
        assert_eq!(s.turns[0].index, 1);
        assert_eq!(s.turns[0].turn_deg, 90.0);
        assert!((s.turns[0].world_shift_deg.unwrap() - 20.0).abs() < 1e-9);
        assert_eq!(s.turns[1].turn_deg, -90.0);
        assert_eq!(s.turns[1].world_shift_deg, None);
        assert!((b.turn_shift_deg(1).unwrap() - 20.0).abs() < 1e-9);
        assert_eq!(b.world().n(), 8);
        assert_eq!(b.epoch_n(2), 4);
        assert_eq!(b.samples_seen(), 11);
        assert_eq!(
            serde_json::to_string(&b.epoch_summary(2).unwrap()).unwrap(),
            serde_json::to_string(&s.epochs[1]).unwrap()
        );
    }

    #[test]
    fn p_oriented_and_the_turn_test_from_timed_samples() {
        // Three 60 s epochs at 50 Hz of a heading held at 30° in the world (a steady wobble of
        // ±10° at 0.3 Hz), 10 s unscored after each turn: kept world heading, world shift 0.
        let mut b = SummaryBuilder::new(&plan());
        let mut t = 0.0;
        for (epoch, turn) in [(1usize, 0.0f64), (2, 90.0), (3, 0.0)] {
            for k in 0..3500 {
                let world = 30.0 + 10.0 * (0.3 * std::f64::consts::TAU * t).sin();
                b.push_values(epoch, t, world - turn, turn, world, k >= 500);
                t += 0.02;
            }
        }
        let s = b.summary();
        for e in &s.epochs {
            assert!(e.p_oriented.is_some(), "{e:?}");
        }
        assert!(
            s.turns
                .iter()
                .all(|t| t.window_shift_deg.unwrap().abs() < 5.0)
        );
        let tt = s.turn_test();
        assert_eq!(tt.turns, 2);
        assert_eq!(tt.p_world_kept, None); // fewer than 3 turns
        assert!(tt.mean_world_shift_deg.unwrap().abs() < 5.0);
        // Repair reads the same rows back: the same summary (JSON text).
        let mut again = SummaryBuilder::new(&plan());
        let mut t = 0.0;
        for (epoch, turn) in [(1usize, 0.0f64), (2, 90.0), (3, 0.0)] {
            for k in 0..3500 {
                let world = 30.0 + 10.0 * (0.3 * std::f64::consts::TAU * t).sin();
                let q = |x: f64| crate::archive::fmt::quantize_fixed(x, T_S_DECIMALS);
                again.push_values(epoch, q(t), world - turn, turn, world, k >= 500);
                t += 0.02;
            }
        }
        assert_eq!(
            serde_json::to_string(&again.summary()).unwrap(),
            serde_json::to_string(&s).unwrap()
        );
    }

    #[test]
    fn bearing_of_an_empty_epoch_follows_the_plan() {
        let mut b = SummaryBuilder::new(&plan());
        b.push_values(1, 0.0, 0.0, 350.0, 350.0, true);
        let s = b.summary();
        assert_eq!(s.epochs[1].arena_bearing_deg, 80.0);
        assert_eq!(s.epochs[2].arena_bearing_deg, 350.0);
        let empty = SummaryBuilder::new(&plan()).summary();
        assert!(empty.epochs[0].arena_bearing_deg.is_nan());
    }

    #[test]
    fn rounds_like_the_writer() {
        let mut a = SummaryBuilder::new(&plan());
        let mut b = SummaryBuilder::new(&plan());
        a.push_values(1, 0.0, 12.345_678, 0.0, 12.345_678, true);
        b.push_values(1, 0.0, 12.346, 0.0, 12.346, true);
        a.push_values(1, 0.0, 359.999_7, 0.0, 359.999_7, true);
        b.push_values(1, 0.0, 0.0, 0.0, 0.0, true);
        // (JSON text: NaN statistics of empty epochs compare equal as null.)
        let json = |b: &SummaryBuilder| serde_json::to_string(&b.summary()).unwrap();
        assert_eq!(json(&a), json(&b));
    }

    #[test]
    fn planned_epochs_from_a_protocol() {
        let p = crate::protocol::smoke_protocol();
        let planned = PlannedEpoch::from_protocol(&p);
        assert_eq!(planned.len(), p.epochs.len());
        assert_eq!(planned[0].turn_before_deg, 0.0);
        assert!(planned.iter().skip(1).any(|e| e.turn_before_deg != 0.0));
    }

    fn long_plan(epochs: usize) -> Vec<PlannedEpoch> {
        (1..=epochs)
            .map(|index| PlannedEpoch {
                index,
                condition: "open sky".into(),
                turn_before_deg: if index % 3 == 0 { 45.0 } else { 0.0 },
                duration_s: 1.0,
            })
            .collect()
    }

    #[test]
    fn forward_bearings_equal_the_walk_back_for_every_epoch() {
        // Only epochs 1 and 5,000 have samples: every other bearing comes from the plan (the
        // case that made summary() quadratic when each epoch walked back on its own).
        let mut b = SummaryBuilder::new(&long_plan(10_000));
        b.push_values(1, 0.0, 0.0, 350.0, 350.0, false);
        b.push_values(5_000, 1.0, 0.0, 12.5, 12.5, true);
        let fwd = b.bearings();
        assert_eq!(fwd.len(), 10_000);
        for (pos, got) in fwd.iter().enumerate() {
            let want = b.bearing_at(pos);
            assert!(
                crate::frames::wrap_signed_deg(got - want).abs() < 1e-9,
                "epoch {}: {got} vs {want}",
                pos + 1
            );
        }
        assert_eq!(fwd[4_999], 12.5);
        assert_eq!(fwd[2], wrap_360_deg(350.0 + 45.0));
        assert!(SummaryBuilder::new(&long_plan(3)).bearings()[2].is_nan());
    }

    #[test]
    fn refreshed_epoch_lines_equal_the_summary_and_cost_one_line_per_change() {
        // 10,000 one-second epochs at 50 Hz, refreshed every 33 samples like a live screen:
        // the cache always equals summary().epochs, and the lines recomputed grow with the
        // refreshes (each touches one or two epochs), not with refreshes × epochs.
        let epochs = 10_000usize;
        let mut b = SummaryBuilder::new(&long_plan(epochs));
        let mut cache = EpochCache::default();
        let mut refreshes = 0u64;
        let json = |v: &[EpochSummary]| serde_json::to_string(v).unwrap();
        for i in 0..(epochs * 50) {
            let t = i as f64 * 0.02;
            let world = (t * 7.0) % 360.0;
            b.push_values(1 + i / 50, t, world, 0.0, world, i % 50 >= 5);
            if i % 33 == 0 {
                b.refresh_epochs(&mut cache);
                refreshes += 1;
                if refreshes.is_multiple_of(3_001) {
                    assert_eq!(json(&cache.epochs), json(&b.summary().epochs), "after {i}");
                }
            }
        }
        b.refresh_epochs(&mut cache);
        refreshes += 1;
        assert_eq!(json(&cache.epochs), json(&b.summary().epochs));
        assert!(
            cache.recomputed <= epochs as u64 + 2 * refreshes,
            "{} lines recomputed over {refreshes} refreshes",
            cache.recomputed
        );
    }
}
