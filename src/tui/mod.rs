//! The live screen: renders engine snapshots, sends operator commands.
//!
//! - [`render::draw`] draws one [`Snapshot`](crate::engine::snapshot::Snapshot) into a ratatui
//!   frame (pure: no clock, no I/O): it picks a layout and splits the screen among the
//!   [`panels`], one ratatui widget each; [`lines`] (flowed text) and [`raster`] (braille or
//!   half-block dots) are the drawing helpers they share;
//! - [`UiState::handle_key`] turns keys into [`Command`](crate::engine::snapshot::Command)s (a
//!   pure state machine);
//! - [`rigs`]: the same for several rigs run at once (a row per rig, one rig's full view
//!   forward on a key, the asking rig named on every view), [`run_live_rigs`] its terminal loop;
//! - [`run_live`] owns the terminal: raw mode, alternate screen, at most ~30 frames per second,
//!   and restores the terminal on every exit path.

pub mod format;
pub mod lines;
pub mod live;
pub mod panels;
pub mod raster;
pub mod render;
pub mod rigs;
pub mod sample;
pub mod state;
pub mod theme;

pub use live::{ScreenOptions, no_color_requested, run_live, run_live_rigs};
pub use render::draw;
pub use state::{HeadingFrame, Mode, UiState};
pub use theme::{Theme, ThemeKind};
