//! The status lines: the session line, the glance line (flight state, heading, archive
//! trouble, next turn) and the tiny screen for windows too small for any layout.

use crate::engine::snapshot::{EpochRow, EpochState, Snapshot, TurnRow, TurnState};
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
        let mut heading = vec![Span::styled(
            format!("{} ", ui.frame.name()),
            theme.strong(),
        )];
        heading.extend(heading_spans(snap, ui, theme));
        lines.push(Line::from(heading));
        lines.push(Line::from(next_turn_spans(snap, theme)));
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
        {
            let mut site = vec![Span::styled(snap.site_name.as_str(), theme.strong())];
            if let Some(n) = &snap.site_note {
                site.push(Span::styled(" ", theme.base()));
                site.push(if n.warning {
                    Span::styled(format!(" {} ", n.text), theme.flag(theme.caution))
                } else {
                    Span::styled(n.text.clone(), theme.base())
                });
            }
            site
        },
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
            if snap.sun_elevation_deg < 0.0 {
                // The sky cannot show the sun: never in the colour of a normal reading.
                Span::styled(
                    format!(" {:.1}° BELOW HORIZON ", snap.sun_elevation_deg),
                    theme.flag(theme.alarm),
                )
            } else {
                Span::styled(
                    format!("{:.1}°", snap.sun_elevation_deg),
                    theme.accent(theme.sun),
                )
            },
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
    items.push(next_turn_spans(snap, theme));
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
    let w = &snap.watch;
    let for_s = |t: Option<f64>| t.map(|t| format!("{} ", duration(t))).unwrap_or_default();
    let (word, style) = if snap.ended {
        (" ENDED ".to_string(), theme.flag(theme.fg))
    } else if snap.health.sensor_lost {
        (
            format!(" SENSOR LOST {}", for_s(w.sensor_lost_for_s)),
            theme.flag(theme.alarm),
        )
    } else if snap.flying {
        (" ▲ FLYING ".to_string(), theme.flag(theme.good))
    } else {
        (
            format!(" ▼ NOT FLYING {}", for_s(w.not_flying_for_s)),
            theme.flag(theme.caution),
        )
    };
    spans.push(Span::styled(word, style));
    if !snap.ended
        && let Some(a) = &w.auto_abort
    {
        let at = (snap.now_utc + chrono::Duration::milliseconds((a.in_s * 1000.0) as i64))
            .with_timezone(&snap.local_offset);
        spans.push(Span::styled(" ", theme.base()));
        spans.push(Span::styled(
            format!(
                " ABORT ({}) in {} at {} ",
                a.reason,
                countdown(a.in_s),
                at.format("%H:%M:%S")
            ),
            theme.flag(theme.alarm),
        ));
    }
    if !snap.ended && (w.turntable_faults > 0 || w.turns_by_hand) {
        let badge = match (w.turntable_faults, w.turns_by_hand) {
            (0, _) => " TURNS BY HAND ".to_string(),
            (n, true) => format!(" ! TURNTABLE FAULT ×{n} · BY HAND "),
            (n, false) => format!(" ! TURNTABLE FAULT ×{n} "),
        };
        spans.push(Span::styled(" ", theme.base()));
        spans.push(Span::styled(badge, theme.flag(theme.alarm)));
    }
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

/// The next turn and what it waits for, in words (the countdown keeps fingers out of the
/// arena, so it must be right in every state: "no more turns" only when none is left).
pub(crate) fn next_turn_spans<'a>(snap: &Snapshot, theme: &Theme) -> Vec<Span<'a>> {
    let nt = &snap.watch.next_turn;
    let turn = theme.accent(theme.turn);
    let d = nt.deg.map(format::signed_deg);
    let countdown_spans = |lead: &'static str, d: String, t: f64| {
        vec![
            Span::styled(lead, theme.base()),
            Span::styled(d, turn),
            Span::styled(" in ", theme.base()),
            Span::styled(countdown(t), turn),
        ]
    };
    match (nt.state, d, nt.in_s) {
        (TurnState::Counting, Some(d), Some(t)) => countdown_spans("next turn ", d, t),
        (TurnState::ClockStopped, Some(d), Some(t)) => {
            let mut v = countdown_spans("next turn ", d, t);
            v.push(Span::styled(
                " (clock stopped)",
                theme.accent(theme.caution),
            ));
            v
        }
        (TurnState::UnderWay, Some(d), _) => vec![
            Span::styled("turn ", theme.base()),
            Span::styled(d, turn),
            Span::styled(" under way", turn),
        ],
        (TurnState::AwaitingOperator, Some(d), Some(t)) => {
            countdown_spans("after Enter: next turn ", d, t)
        }
        (TurnState::AwaitingOperator, Some(d), None) => vec![
            Span::styled("turn ", theme.base()),
            Span::styled(d, turn),
            Span::styled(": waiting for you", turn),
        ],
        (TurnState::AwaitingOperator, None, _) => {
            vec![Span::styled("waiting for you; no more turns", theme.base())]
        }
        (TurnState::Fault, Some(d), _) => vec![
            Span::styled("turn ", theme.base()),
            Span::styled(d, turn),
            Span::styled(" by hand: turntable fault", theme.accent(theme.alarm)),
        ],
        (TurnState::HeldSensorLost, Some(d), _) => vec![
            Span::styled("turn ", theme.base()),
            Span::styled(d, turn),
            Span::styled(" held: sensor lost", theme.accent(theme.alarm)),
        ],
        _ => vec![Span::styled("no more turns", theme.base())],
    }
}

/// The latest heading: underlined in the heading colour while live; when stale (the sensor
/// is lost or silent) in plain text with its age, so it never looks live.
fn heading_spans<'a>(snap: &Snapshot, ui: &UiState, theme: &Theme) -> Vec<Span<'a>> {
    let h = deg(heading_in(snap, ui.frame));
    if snap.watch.heading_stale {
        let age = snap
            .watch
            .sample_age_s
            .map(|a| format!(" STALE {} old ", duration(a)))
            .unwrap_or_else(|| " STALE ".to_string());
        vec![
            Span::styled(h, theme.base().add_modifier(Modifier::CROSSED_OUT)),
            Span::styled(" ", theme.base()),
            Span::styled(age, theme.flag(theme.alarm)),
        ]
    } else {
        vec![Span::styled(
            h,
            theme
                .accent(theme.heading)
                .add_modifier(Modifier::UNDERLINED),
        )]
    }
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
    let mut heading = vec![Span::styled(format!("{} ", ui.frame.name()), theme.base())];
    heading.extend(heading_spans(snap, ui, theme));
    items.push(heading);
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
    if snap.watch.next_turn.state != TurnState::NoneLeft {
        items.push(next_turn_spans(snap, theme));
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
