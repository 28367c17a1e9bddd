//! The session engine: one loop that owns time and state.

pub mod snapshot;

pub use snapshot::{
    AutoAbort, Command, EpochRow, EpochState, Health, NextTurn, Prompt, Snapshot, SnapshotCell,
    TracePoint, TurnRow, TurnState, VERDICT_MIN_TURN_DEG, Watch, summary_lines, turn_kept,
};
mod scoring;
pub mod session;
mod setup;
mod stamp;
mod tally;
#[cfg(test)]
mod testing;
mod timeline;
mod view;
