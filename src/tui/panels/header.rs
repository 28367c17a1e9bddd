//! The status lines: the session line, the glance line (flight state, heading, archive
//! trouble, next turn) and the tiny screen for windows too small for any layout.

use crate::engine::snapshot::{EpochRow, EpochState, Snapshot, TurnRow};
use crate::tui::format::{self, countdown, deg, deg1, duration, fit, r_value};
use crate::tui::lines::{Item, TextLines, flow};
use crate::tui::panels::devices::sync_spans;
use crate::tui::panels::{SYNC_LATE_S, heading_in, sync_age_s, verdict};
use crate::tui::state::UiState;
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

/// The session line (at most two rows): animal, site, clocks, sun, time left, next turn, epoch
/// and protocol; the wide layout adds the UTC offset and the session id.
pub fn session_line<'a>(
    snap: &'a Snapshot,
    theme: &Theme,
    wide: bool,
    width: u16,
) -> TextLines<'a> {
    TextLines::new(
        flow(session_items(snap, theme, wide), width, 2, theme),
        theme,
    )
}

/// The glance line (at most `max_lines` rows): flight state, heading, archive trouble,
/// operator feedback, next turn, hold and last turn, what does not fit dropped from the end.
pub fn glance_line<'a>(
    snap: &Snapshot,
    ui: &UiState,
    theme: &Theme,
    width: u16,
    max_lines: usize,
) -> TextLines<'a> {
    TextLines::new(
        flow(glance_items(snap, ui, theme), width, max_lines, theme),
        theme,
    )
}

/// The whole screen when the window is too small for the compact layout: the few lines that
/// matter most, and a request for a bigger window.
pub struct TinyStatus<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (frame).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for TinyStatus<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let TinyStatus { snap, ui, theme } = self;
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
        Paragraph::new(lines).style(theme.base()).render(area, buf);
    }
}

fn session_items<'a>(snap: &'a Snapshot, theme: &Theme, wide: bool) -> Vec<Item<'a>> {
    let local = snap.now_utc.with_timezone(&snap.local_offset);
    let mut items: Vec<Item> = vec![
        vec![
            Span::styled("animal ", theme.base()),
            Span::styled(snap.animal.as_str(), theme.strong()),
        ],
        vec![Span::styled(snap.site_name.as_str(), theme.strong())],
        vec![
            Span::styled(local.format("%H:%M:%S").to_string(), theme.strong()),
            Span::styled(
                format!(
                    " local{}",
                    if wide {
                        local.format(" (%:z)").to_string()
                    } else {
                        String::new()
                    }
                ),
                theme.base(),
            ),
        ],
        vec![
            Span::styled(snap.now_utc.format("%H:%M:%S").to_string(), theme.strong()),
            Span::styled(" UTC", theme.base()),
        ],
        vec![
            Span::styled("sun ", theme.base()),
            Span::styled("az ", theme.base()),
            Span::styled(deg1(snap.sun_azimuth_deg), theme.accent(theme.sun)),
            Span::styled(" el ", theme.base()),
            Span::styled(
                format!("{:.1}°", snap.sun_elevation_deg),
                theme.accent(theme.sun),
            ),
        ],
        vec![
            Span::styled("elapsed ", theme.base()),
            Span::styled(duration(snap.t_s), theme.strong()),
        ],
    ];
    if let Some(rem) = snap.remaining_s {
        items.push(vec![
            Span::styled("left ", theme.base()),
            Span::styled(duration(rem), theme.strong()),
        ]);
    }
    match (snap.next_turn_in_s, snap.next_turn_deg) {
        (Some(t), Some(d)) => items.push(vec![
            Span::styled("next turn ", theme.base()),
            Span::styled(format::signed_deg(d), theme.accent(theme.turn)),
            Span::styled(" in ", theme.base()),
            Span::styled(countdown(t), theme.accent(theme.turn)),
        ]),
        _ => items.push(vec![Span::styled("no more turns", theme.base())]),
    }
    let epoch_text = if snap.epoch == 0 {
        "before epoch 1".to_string()
    } else {
        format!(
            "epoch {}/{} {}",
            snap.epoch, snap.epoch_count, snap.condition
        )
    };
    items.push(vec![Span::styled(epoch_text, theme.strong())]);
    items.push(vec![
        Span::styled("protocol ", theme.base()),
        Span::styled(snap.protocol_name.as_str(), theme.strong()),
    ]);
    if wide {
        items.push(vec![
            Span::styled("session ", theme.base()),
            Span::styled(snap.session_id.as_str(), theme.strong()),
        ]);
    }
    items
}

/// The main state flag and its modifiers: words, so it reads without colour.
fn state_spans<'a>(snap: &Snapshot, theme: &Theme) -> Vec<Span<'a>> {
    let mut spans = Vec::new();
    let (word, style) = if snap.ended {
        (" ENDED ", theme.flag(theme.fg))
    } else if snap.health.sensor_lost {
        (" SENSOR LOST ", theme.flag(theme.alarm))
    } else if snap.flying {
        (" ▲ FLYING ", theme.flag(theme.good))
    } else {
        (" ▼ NOT FLYING ", theme.flag(theme.caution))
    };
    spans.push(Span::styled(word, style));
    if snap.paused {
        spans.push(Span::styled(" ", theme.base()));
        spans.push(Span::styled(" ‖ PAUSED ", theme.flag(theme.caution)));
    }
    if snap.turning {
        spans.push(Span::styled(" ", theme.base()));
        spans.push(Span::styled(" ↻ TURNING ", theme.flag(theme.turn)));
    } else if snap.settling {
        spans.push(Span::styled(" settling", theme.accent(theme.caution)));
    }
    spans
}

fn current_epoch(snap: &Snapshot) -> Option<&EpochRow> {
    snap.epochs
        .iter()
        .find(|e| e.state == EpochState::Current)
        .or_else(|| snap.epochs.iter().find(|e| e.index == snap.epoch))
}

/// The latest turn whose world shift is known.
fn last_scored_turn(snap: &Snapshot) -> Option<(&TurnRow, f64)> {
    snap.turns
        .iter()
        .rev()
        .find_map(|t| t.world_shift_deg.map(|s| (t, s)))
}

/// The glance line, most important first (what does not fit is dropped from the end):
/// flight state, heading, archive trouble, operator feedback, next turn, hold, last turn.
fn glance_items<'a>(snap: &Snapshot, ui: &UiState, theme: &Theme) -> Vec<Item<'a>> {
    let mut items: Vec<Item> = Vec::new();
    items.push(state_spans(snap, theme));
    items.push(vec![
        Span::styled(format!("{} ", ui.frame.name()), theme.base()),
        Span::styled(
            deg(heading_in(snap, ui.frame)),
            theme
                .accent(theme.heading)
                .add_modifier(Modifier::UNDERLINED),
        ),
    ]);
    if let Some(alarm) = archive_alarm(snap) {
        items.push(vec![Span::styled(alarm, theme.flag(theme.alarm))]);
    }
    if let Some(text) = ui.flash() {
        items.push(vec![Span::styled(
            format!("» {text}"),
            theme.strong().add_modifier(Modifier::ITALIC),
        )]);
    } else if ui.end_requested && !snap.ended {
        items.push(vec![Span::styled(
            "ending: waiting for the engine…",
            theme.strong(),
        )]);
    }
    if let (Some(t), Some(d)) = (snap.next_turn_in_s, snap.next_turn_deg) {
        items.push(vec![
            Span::styled("turn ", theme.base()),
            Span::styled(format::signed_deg(d), theme.accent(theme.turn)),
            Span::styled(" in ", theme.base()),
            Span::styled(countdown(t), theme.accent(theme.turn)),
        ]);
    }
    if let Some(e) = current_epoch(snap)
        && e.n > 0
    {
        items.push(vec![
            Span::styled("hold r ", theme.base()),
            Span::styled(r_value(e.r), theme.strong()),
        ]);
    }
    if let Some((t, s)) = last_scored_turn(snap) {
        let mut item = vec![
            Span::styled(format!("turn {} ", t.index), theme.base()),
            Span::styled(format::signed_deg(t.turn_deg), theme.strong()),
            Span::styled(" shift ", theme.base()),
            Span::styled(format::signed_deg(s), theme.strong()),
        ];
        match verdict(t.turn_deg, s) {
            Some(true) => item.push(Span::styled(" ✓ kept", theme.accent(theme.good))),
            Some(false) => item.push(Span::styled(" ✗ moved", theme.accent(theme.caution))),
            None => {}
        }
        items.push(item);
    }
    items
}

/// Archive trouble worth a flag on the glance line.
fn archive_alarm(snap: &Snapshot) -> Option<String> {
    if let Some(err) = &snap.health.archive_error {
        return Some(format!(" ARCHIVE ERROR: {} ", fit(err, 40)));
    }
    if snap.ended {
        return None;
    }
    match sync_age_s(snap) {
        Some(age) if age > SYNC_LATE_S => Some(format!(" ! SAVED {age:.0} s AGO ")),
        None if snap.t_s > SYNC_LATE_S => Some(" ! NOT SAVED YET ".to_string()),
        _ => None,
    }
}
