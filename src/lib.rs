//! skybearing: plan, run, archive and analyse tethered sky-compass heading sessions.
//!
//! The science core (`sky`, `circular`, `frames`) is pure functions over numbers: no I/O, no
//! clock. Everything that touches devices, files or the terminal lives in the other modules.

pub mod analysis;
pub mod archive;
pub mod circular;
pub mod cli;
pub mod clock;
pub mod engine;
pub mod frames;
pub mod protocol;
pub mod rig;
pub mod signals;
pub mod sky;
pub mod textfile;
pub mod tui;

/// The program version written into every session folder.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
