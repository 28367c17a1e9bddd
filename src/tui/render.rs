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
use crate::tui::format::{self, countdown, deg, fit};
use crate::tui::lines::flow;
use crate::tui::panels::devices::{health_items, health_panel, sync_spans};
use crate::tui::panels::dial::draw_dial;
use crate::tui::panels::epochs::{draw_epoch_table, table_title};
use crate::tui::panels::footer::{footer_items, footer_line};
use crate::tui::panels::header::{glance_items, session_items, state_spans};
use crate::tui::panels::heading_in;
use crate::tui::panels::overlays::draw_overlays;
use crate::tui::panels::trace::draw_trace;
use crate::tui::state::UiState;
use crate::tui::theme::Theme;
use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph};

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
        draw_tiny(frame, area, snap, ui, &theme);
    } else if area.width >= WIDE_MIN.0 && area.height >= WIDE_MIN.1 {
        draw_wide(frame, area, snap, ui, &theme);
    } else {
        draw_compact(frame, area, snap, ui, &theme);
    }
    draw_overlays(frame, area, snap, ui, &theme);
}

// ---------------------------------------------------------------------------------------------
// Layouts

fn draw_tiny(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let mut lines = Vec::new();
    lines.push(Line::from(state_spans(snap, theme)));
    lines.push(Line::from(vec![
        Span::styled(format!("{} ", ui.frame.name()), theme.strong()),
        Span::styled(deg(heading_in(snap, ui.frame)), theme.accent(theme.heading)),
    ]));
    if let (Some(t), Some(d)) = (snap.next_turn_in_s, snap.next_turn_deg) {
        lines.push(Line::from(Span::styled(
            format!("turn {} in {}", format::signed_deg(d), countdown(t)),
            theme.strong(),
        )));
    }
    lines.push(Line::from(sync_spans(snap, theme, true)));
    lines.push(Line::from(Span::styled("enlarge: 80x24+", theme.strong())));
    lines.push(Line::from(Span::styled("? help  q end", theme.strong())));
    frame.render_widget(Paragraph::new(lines).style(theme.base()), area);
}

fn draw_compact(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let w = area.width;
    let session = flow(session_items(snap, theme, false), w, 2, theme);
    let glance = flow(glance_items(snap, ui, theme), w, 1, theme);
    let health = flow(health_items(snap, theme), w, 2, theme);
    let footer = footer_line(footer_items(snap, ui, theme, false), w, " ", theme);

    let fixed = session.len() + glance.len() + health.len() + footer.len();
    let avail = (area.height as usize).saturating_sub(fixed);
    let min_middle = 8usize;
    let want_table = snap.epochs.len() + 2;
    let table_h = want_table
        .min(avail.saturating_sub(min_middle).max(3))
        .min(avail);
    let middle_h = avail.saturating_sub(table_h);

    let [r_session, r_glance, r_middle, r_table, r_health, r_footer] = Layout::vertical([
        Constraint::Length(session.len() as u16),
        Constraint::Length(glance.len() as u16),
        Constraint::Length(middle_h as u16),
        Constraint::Length(table_h as u16),
        Constraint::Length(health.len() as u16),
        Constraint::Length(footer.len() as u16),
    ])
    .areas(area);

    frame.render_widget(Paragraph::new(session).style(theme.base()), r_session);
    frame.render_widget(Paragraph::new(glance).style(theme.base()), r_glance);
    draw_middle(frame, r_middle, snap, ui, theme);
    let block = Block::default()
        .borders(Borders::TOP)
        .border_style(theme.border())
        .title(table_title(
            snap,
            r_table.height.saturating_sub(2) as usize,
            ui,
        ));
    draw_epoch_table(frame, r_table, block, snap, ui, theme);
    frame.render_widget(Paragraph::new(health).style(theme.base()), r_health);
    frame.render_widget(Paragraph::new(footer).style(theme.base()), r_footer);
}

fn draw_wide(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let w = area.width;
    let session = flow(session_items(snap, theme, true), w, 2, theme);
    let glance = flow(glance_items(snap, ui, theme), w, 2, theme);
    let footer = footer_line(footer_items(snap, ui, theme, true), w, "  ", theme);
    let fixed = session.len() + glance.len() + footer.len();
    let avail = (area.height as usize).saturating_sub(fixed);
    let bottom_want = (snap.epochs.len() + 4).max(16);
    let bottom_h = bottom_want.min(avail * 9 / 20).max(10).min(avail);
    let middle_h = avail.saturating_sub(bottom_h);

    let [r_session, r_glance, r_middle, r_bottom, r_footer] = Layout::vertical([
        Constraint::Length(session.len() as u16),
        Constraint::Length(glance.len() as u16),
        Constraint::Length(middle_h as u16),
        Constraint::Length(bottom_h as u16),
        Constraint::Length(footer.len() as u16),
    ])
    .areas(area);
    frame.render_widget(Paragraph::new(session).style(theme.base()), r_session);
    frame.render_widget(Paragraph::new(glance).style(theme.base()), r_glance);
    draw_middle(frame, r_middle, snap, ui, theme);

    let right_w = (w / 3).clamp(40, 64);
    let [r_table, r_right] =
        Layout::horizontal([Constraint::Min(60), Constraint::Length(right_w)]).areas(r_bottom);
    let block = Block::bordered()
        .border_style(theme.border())
        .title(table_title(
            snap,
            r_table.height.saturating_sub(3) as usize,
            ui,
        ));
    draw_epoch_table(frame, r_table, block, snap, ui, theme);

    let health_lines = health_panel(snap, theme, right_w.saturating_sub(2) as usize);
    let health_h = (health_lines.len() as u16 + 2).min(r_right.height);
    let [r_health, r_events] =
        Layout::vertical([Constraint::Length(health_h), Constraint::Min(0)]).areas(r_right);
    frame.render_widget(
        Paragraph::new(health_lines).style(theme.base()).block(
            Block::bordered()
                .border_style(theme.border())
                .title(Span::styled(" devices · archive ", theme.strong())),
        ),
        r_health,
    );
    if r_events.height >= 3 {
        let rows = r_events.height.saturating_sub(2) as usize;
        let width = r_events.width.saturating_sub(2) as usize;
        let skip = snap.recent_events.len().saturating_sub(rows);
        let lines: Vec<Line> = snap.recent_events[skip..]
            .iter()
            .map(|e| Line::from(Span::styled(fit(e, width), theme.base())))
            .collect();
        frame.render_widget(
            Paragraph::new(lines).style(theme.base()).block(
                Block::bordered()
                    .border_style(theme.border())
                    .title(Span::styled(" recent events ", theme.strong())),
            ),
            r_events,
        );
    }
    frame.render_widget(Paragraph::new(footer).style(theme.base()), r_footer);
}

/// Dial beside the trace.
fn draw_middle(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    if area.height < 5 || area.width < 30 {
        return;
    }
    let inner_h = area.height.saturating_sub(2);
    let dial_w = (inner_h * 2 + 4).clamp(20, (area.width * 2 / 5).max(20));
    let [r_dial, r_trace] =
        Layout::horizontal([Constraint::Length(dial_w), Constraint::Min(10)]).areas(area);
    draw_dial(frame, r_dial, snap, ui, theme);
    draw_trace(frame, r_trace, snap, ui, theme);
}
