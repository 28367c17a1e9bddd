//! The panels of the live screen, one module each, and the few rules they share.

pub mod devices;
pub mod dial;
pub mod epochs;
pub mod events;
pub mod footer;
pub mod header;
pub mod help;
pub mod overlays;
pub mod trace;

use crate::engine::snapshot::Snapshot;
use crate::tui::state::HeadingFrame;

/// Archive syncs older than this many seconds are flagged as late.
pub const SYNC_LATE_S: f64 = 3.0;

/// A turn counts as "compensated" on screen when its world shift lies nearer 0 than the turn
/// itself, for turns of at least this size (a display rule of our own, not a statistical test).
pub const VERDICT_MIN_TURN_DEG: f64 = crate::engine::snapshot::VERDICT_MIN_TURN_DEG;

/// The heading in `frame` (None while no heading is known).
pub(crate) fn heading_in(snap: &Snapshot, frame: HeadingFrame) -> Option<f64> {
    match frame {
        HeadingFrame::Arena => snap.arena_heading_deg,
        HeadingFrame::World => snap.world_heading_deg,
        HeadingFrame::Sun => snap.sun_relative_heading_deg,
    }
}

/// "kept" when the world heading stayed nearer its old value than the turn (display rule).
pub(crate) fn verdict(turn_deg: f64, shift_deg: f64) -> Option<bool> {
    crate::engine::snapshot::turn_kept(turn_deg, shift_deg)
}

/// Seconds since the archive's last successful sync (None: never synced).
pub(crate) fn sync_age_s(snap: &Snapshot) -> Option<f64> {
    snap.health
        .last_sync_utc
        .map(|t| (snap.now_utc - t).num_milliseconds() as f64 / 1000.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn verdict_follows_nearer_side() {
        // Turn +90: a shift of -3 keeps the world heading, +88 follows the arena.
        assert_eq!(verdict(90.0, -3.0), Some(true));
        assert_eq!(verdict(90.0, 88.0), Some(false));
        assert_eq!(verdict(180.0, 175.0), Some(false));
        assert_eq!(verdict(-90.0, 10.0), Some(true));
        assert_eq!(verdict(10.0, 5.0), None);
    }
}
