//! The session engine: one loop that owns time and state.

pub mod snapshot;

pub use snapshot::{
    Command, EpochRow, EpochState, Health, Prompt, Snapshot, SnapshotCell, TracePoint, TurnRow,
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
