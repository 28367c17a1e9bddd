//! Pure rendering of a [`Snapshot`]: no clock, no I/O, no science beyond picking numbers to show.
//!
//! Layouts:
//! - *tiny* (under 44×14): the few lines that matter most, and a request for a bigger window;
//! - *compact* (80×24 and up): session line, glance line, dial beside the trace, epoch table,
//!   one health line, key footer;
//! - *wide* (120×34 and up): the same with a bordered epoch table, a multi-line health panel
//!   and the recent events.
//!
//! Meaning is never carried by colour alone: every flag carries a word, every mark a symbol
//! that the legend and the help overlay name.

use crate::engine::snapshot::Snapshot;
use crate::tui::panels::devices::{DevicesPanel, health_line};
use crate::tui::panels::dial::Dial;
use crate::tui::panels::epochs::EpochTable;
use crate::tui::panels::events::RecentEvents;
use crate::tui::panels::footer::footer;
use crate::tui::panels::header::{TinyStatus, glance_line, session_line};
use crate::tui::panels::overlays::Overlays;
use crate::tui::panels::trace::Trace;
use crate::tui::state::UiState;
use crate::tui::theme::Theme;
use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};

pub use crate::tui::panels::{SYNC_LATE_S, VERDICT_MIN_TURN_DEG};

/// Smallest size for the compact layout.
pub const COMPACT_MIN: (u16, u16) = (44, 14);
/// Smallest size for the wide layout.
pub const WIDE_MIN: (u16, u16) = (120, 34);

/// Draws the whole screen for `snap` into `frame`.
pub fn draw(frame: &mut Frame, snap: &Snapshot, ui: &UiState) {
    let theme = Theme::new(ui.theme);
    let area = frame.area();
    if area.is_empty() {
        return;
    }
    frame.buffer_mut().set_style(area, theme.base());

    if area.width < COMPACT_MIN.0 || area.height < COMPACT_MIN.1 {
        let theme = &theme;
        frame.render_widget(TinyStatus { snap, ui, theme }, area);
    } else if area.width >= WIDE_MIN.0 && area.height >= WIDE_MIN.1 {
        draw_wide(frame, area, snap, ui, &theme);
    } else {
        draw_compact(frame, area, snap, ui, &theme);
    }
    let theme = &theme;
    frame.render_widget(Overlays { snap, ui, theme }, area);
}

// ---------------------------------------------------------------------------------------------
// Layouts

fn draw_compact(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let w = area.width;
    let session = session_line(snap, theme, false, w);
    let glance = glance_line(snap, ui, theme, w, 1);
    let health = health_line(snap, theme, w);
    let keys = footer(snap, ui, theme, false, w);

    let fixed = [&session, &glance, &health, &keys]
        .iter()
        .map(|l| l.height() as usize)
        .sum::<usize>();
    let avail = (area.height as usize).saturating_sub(fixed);
    let min_middle = 8usize;
    let want_table = snap.epochs.len() + 2;
    let table_h = want_table
        .min(avail.saturating_sub(min_middle).max(3))
        .min(avail);
    let middle_h = avail.saturating_sub(table_h);

    let [
        session_area,
        glance_area,
        middle_area,
        table_area,
        health_area,
        footer_area,
    ] = Layout::vertical([
        Constraint::Length(session.height()),
        Constraint::Length(glance.height()),
        Constraint::Length(middle_h as u16),
        Constraint::Length(table_h as u16),
        Constraint::Length(health.height()),
        Constraint::Length(keys.height()),
    ])
    .areas(area);

    frame.render_widget(session, session_area);
    frame.render_widget(glance, glance_area);
    draw_middle(frame, middle_area, snap, ui, theme);
    let boxed = false;
    frame.render_widget(
        EpochTable {
            snap,
            ui,
            theme,
            boxed,
        },
        table_area,
    );
    frame.render_widget(health, health_area);
    frame.render_widget(keys, footer_area);
}

fn draw_wide(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let w = area.width;
    let session = session_line(snap, theme, true, w);
    let glance = glance_line(snap, ui, theme, w, 2);
    let keys = footer(snap, ui, theme, true, w);
    let fixed = [&session, &glance, &keys]
        .iter()
        .map(|l| l.height() as usize)
        .sum::<usize>();
    let avail = (area.height as usize).saturating_sub(fixed);
    let bottom_want = (snap.epochs.len() + 4).max(16);
    let bottom_h = bottom_want.min(avail * 9 / 20).max(10).min(avail);
    let middle_h = avail.saturating_sub(bottom_h);

    let [
        session_area,
        glance_area,
        middle_area,
        bottom_area,
        footer_area,
    ] = Layout::vertical([
        Constraint::Length(session.height()),
        Constraint::Length(glance.height()),
        Constraint::Length(middle_h as u16),
        Constraint::Length(bottom_h as u16),
        Constraint::Length(keys.height()),
    ])
    .areas(area);
    frame.render_widget(session, session_area);
    frame.render_widget(glance, glance_area);
    draw_middle(frame, middle_area, snap, ui, theme);

    // The bottom band: the epoch table, and beside it the devices panel over recent events.
    let side_w = (w / 3).clamp(40, 64);
    let [table_area, side_area] =
        Layout::horizontal([Constraint::Min(60), Constraint::Length(side_w)]).areas(bottom_area);
    let boxed = true;
    frame.render_widget(
        EpochTable {
            snap,
            ui,
            theme,
            boxed,
        },
        table_area,
    );

    let devices = DevicesPanel::new(snap, theme, side_w);
    let devices_h = devices.height().min(side_area.height);
    let [devices_area, events_area] =
        Layout::vertical([Constraint::Length(devices_h), Constraint::Min(0)]).areas(side_area);
    frame.render_widget(devices, devices_area);
    frame.render_widget(RecentEvents { snap, theme }, events_area);
    frame.render_widget(keys, footer_area);
}

/// Dial beside the trace.
fn draw_middle(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    if area.height < 5 || area.width < 30 {
        return;
    }
    let inner_h = area.height.saturating_sub(2);
    let dial_w = (inner_h * 2 + 4).clamp(20, (area.width * 2 / 5).max(20));
    let [dial_area, trace_area] =
        Layout::horizontal([Constraint::Length(dial_w), Constraint::Min(10)]).areas(area);
    frame.render_widget(Dial { snap, ui, theme }, dial_area);
    frame.render_widget(Trace { snap, ui, theme }, trace_area);
}
