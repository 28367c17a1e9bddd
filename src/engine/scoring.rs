//! Scoring: which samples count, and the live scores they feed.
//!
//! The scores themselves are the archive's [`SummaryBuilder`] (one code path for live scores
//! and for `summary.json`, also when an archive is repaired); this file decides which samples
//! it sees as scored and words the headless status line.

use super::timeline::{Phase, Timeline};
use crate::archive::{SampleRow, Summary, SummaryBuilder};

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
}

impl Scoring {
    /// Scores of the planned epochs, empty.
    pub(super) fn new(builder: SummaryBuilder) -> Self {
        Self {
            builder,
            unscored_turns: Vec::new(),
        }
    }

    /// Turn `k` (between epochs k and k + 1) gets no world shift, whatever the headings say.
    pub(super) fn unscore_turn(&mut self, k: usize) {
        if !self.unscored_turns.contains(&k) {
            self.unscored_turns.push(k);
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
        let s = self.summary();
        let ep = s.epochs.iter().find(|e| e.index == epoch);
        format!(
            "t {:>6.0} s  epoch {}/{}  n {}  r {:.2}  mean world {}  samples {}",
            now,
            epoch,
            epoch_count,
            ep.map(|e| e.n).unwrap_or(0),
            ep.map(|e| e.r).unwrap_or(0.0),
            ep.and_then(|e| e.mean_world_deg)
                .map(|m| format!("{m:.0}°"))
                .unwrap_or_else(|| "-".into()),
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
