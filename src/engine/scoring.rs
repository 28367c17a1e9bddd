//! Scoring: which samples count, and the live scores they feed.
//!
//! The scores themselves are the archive's [`SummaryBuilder`] (one code path for live scores
//! and for `summary.json`, also when an archive is repaired); this file decides which samples
//! it sees as scored and words the headless status line.

use super::timeline::{Phase, Timeline};
use crate::archive::{EpochCache, EpochSummary, SampleRow, Summary, SummaryBuilder};
use std::cell::RefCell;

/// Is a sample at session second `t_s` scored? Only while an epoch runs (not while prompting
/// or turning), not paused, with the animal marked flying, and after the settle window that
/// follows a turn.
pub(super) fn is_scored(timeline: &Timeline, t_s: f64) -> bool {
    matches!(timeline.phase, Phase::Running { .. })
        && !timeline.paused
        && timeline.flying
        && t_s >= timeline.settle_until_s
}

/// The live scores of a session.
#[derive(Debug, Clone)]
pub(super) struct Scoring {
    builder: SummaryBuilder,
    /// Turns whose world shift is not scored (not made, or made blind), 1-based.
    unscored_turns: Vec<usize>,
    /// The epoch lines as of the last snapshot: a snapshot recomputes only the epochs that
    /// received samples since (see [`EpochCache`]).
    lines: RefCell<EpochCache>,
}

/// What a snapshot shows of the scores: one line per planned epoch (what `summary.json` will
/// hold), the world shift across each turn, and the session's r.
pub(super) struct LiveScores {
    pub(super) epochs: Vec<EpochSummary>,
    /// (turn index, planned turn, world shift) of each turn.
    pub(super) turns: Vec<(usize, f64, Option<f64>)>,
    pub(super) r_world: f64,
    pub(super) r_arena: f64,
}

impl Scoring {
    /// Scores of the planned epochs, empty.
    pub(super) fn new(builder: SummaryBuilder) -> Self {
        Self {
            builder,
            unscored_turns: Vec::new(),
            lines: RefCell::new(EpochCache::default()),
        }
    }

    /// Turn `k` (between epochs k and k + 1) gets no world shift, whatever the headings say.
    pub(super) fn unscore_turn(&mut self, k: usize) {
        if !self.unscored_turns.contains(&k) {
            self.unscored_turns.push(k);
        }
    }

    /// The scores a snapshot shows, equal to those of [`Scoring::summary`] (unscored turns
    /// without a shift): O(epochs) copies
    /// plus the figures of the epochs that changed since the last call.
    pub(super) fn live(&self) -> LiveScores {
        let mut cache = self.lines.borrow_mut();
        self.builder.refresh_epochs(&mut cache);
        let epochs = cache.epochs.clone();
        let planned: Vec<f64> = self.builder.planned().map(|p| p.turn_before_deg).collect();
        let turns = (1..epochs.len())
            .map(|k| {
                let shift = match (epochs[k - 1].mean_world_deg, epochs[k].mean_world_deg) {
                    _ if self.unscored_turns.contains(&k) => None,
                    (Some(a), Some(b)) => Some(crate::frames::wrap_signed_deg(b - a)),
                    _ => None,
                };
                (k, planned[k], shift)
            })
            .collect();
        LiveScores {
            epochs,
            turns,
            r_world: self.builder.r_world(),
            r_arena: self.builder.r_arena(),
        }
    }

    /// Adds one archived sample (the builder looks at its `scored` flag).
    pub(super) fn push(&mut self, row: &SampleRow) {
        self.builder.push(row);
    }

    /// The scores so far.
    pub(super) fn summary(&self) -> Summary {
        let mut s = self.builder.summary();
        crate::archive::summary::drop_unscored_turns(&mut s, &self.unscored_turns);
        s
    }

    /// The headless status line at `now`: the scores of `epoch` of `epoch_count`.
    pub(super) fn status_line(
        &self,
        now: f64,
        epoch: usize,
        epoch_count: usize,
        samples: u64,
    ) -> String {
        let ep = self.builder.epoch_summary(epoch);
        let ep = ep.as_ref();
        format!(
            "t {:>6.0} s  epoch {}/{}  n {}  r {:.2}  mean world {}  p held {}  samples {}",
            now,
            epoch,
            epoch_count,
            ep.map(|e| e.n).unwrap_or(0),
            ep.map(|e| e.r).unwrap_or(0.0),
            ep.and_then(|e| e.mean_world_deg)
                .map(|m| format!("{m:.0}°"))
                .unwrap_or_else(|| "-".into()),
            super::snapshot::p_held_text(ep.and_then(|e| e.p_oriented)),
            samples
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::testing::{FakeTable, epoch};
    use crate::protocol::{ArenaMove, FlightRules, Protocol};
    use crate::rig::Turntable;

    #[test]
    fn status_line_and_snapshot_show_the_summary_p_oriented_after_30_s() {
        use crate::archive::PlannedEpoch;
        let plan: Vec<PlannedEpoch> = (1..=2)
            .map(|index| PlannedEpoch {
                index,
                condition: "open sky".into(),
                turn_before_deg: 0.0,
                duration_s: 100.0,
            })
            .collect();
        let mut sc = Scoring::new(SummaryBuilder::new(&plan));
        let push_until = |sc: &mut Scoring, from: usize, to: usize| {
            for i in from..to {
                let t = i as f64 * 0.02;
                // A heading held near 40° with a slow ±8° wobble.
                let w = 40.0 + 8.0 * (0.4 * t).sin();
                sc.builder.push_values(1, t, w, 0.0, w, true);
            }
        };
        // 20 s of flight: too little for the test, on both the line and the snapshot.
        push_until(&mut sc, 0, 1000);
        assert!(sc.status_line(20.0, 1, 2, 1000).contains("p held –"));
        assert_eq!(sc.live().epochs[0].p_oriented, None);
        // 80 s: the figure of summary.json, worded the same on both.
        push_until(&mut sc, 1000, 4000);
        let p = sc.summary().epochs[0].p_oriented;
        assert!(p.is_some());
        assert_eq!(sc.live().epochs[0].p_oriented, p);
        let want = format!("p held {}", super::super::snapshot::p_held_text(p));
        assert!(sc.status_line(80.0, 1, 2, 4000).contains(&want), "{want}");
        let live = sc.live();
        assert_eq!(
            serde_json::to_string(&live.epochs).unwrap(),
            serde_json::to_string(&sc.summary().epochs).unwrap()
        );
        assert_eq!(live.turns, vec![(1, 0.0, None)]);
    }

    #[test]
    fn p_held_words() {
        use super::super::snapshot::p_held_text;
        assert_eq!(p_held_text(None), "–");
        assert_eq!(p_held_text(Some(0.001)), "≤0.001");
        assert_eq!(p_held_text(Some(0.0123)), "0.012");
        assert_eq!(p_held_text(Some(0.5)), "0.50");
        assert_eq!(p_held_text(Some(f64::NAN)), "–");
    }

    #[test]
    fn only_settled_flying_unpaused_epoch_samples_are_scored() {
        let protocol = Protocol {
            name: "test".into(),
            description: String::new(),
            settle_s: 2.0,
            flight: FlightRules::default(),
            sensor_loss: Default::default(),
            epochs: vec![epoch(1, 100.0, ArenaMove::TurnBy { deg: 90.0 }, None)],
        };
        let mut tl = Timeline::new(&protocol, 0.0);
        let mut tt = FakeTable::motor(1.0);
        tl.begin_epoch(0, 0.0, false);
        tl.drive_turn(&mut tt);
        assert!(!is_scored(&tl, 0.5), "turning");
        let mut buf = Vec::new();
        tt.poll(1.0, &mut buf).expect("poll");
        for ev in buf {
            tl.on_turntable(ev);
        }
        // Turn done at 1 s: settling until 3 s.
        assert!(!is_scored(&tl, 2.9), "settling");
        assert!(is_scored(&tl, 3.0));
        tl.paused = true;
        assert!(!is_scored(&tl, 4.0), "paused");
        tl.paused = false;
        tl.flying = false;
        assert!(!is_scored(&tl, 4.0), "not flying");
    }
}
