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

use crate::engine::snapshot::{EpochRow, EpochState, Snapshot, TurnRow};
use crate::frames::{signed_difference_deg, wrap_360_deg};
use crate::tui::format::{self, count, countdown, deg, deg1, duration, fit, p_value, r_value};
use crate::tui::state::{HeadingFrame, Mode, UiState};
use crate::tui::theme::Theme;
use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::canvas::{Canvas, Circle, Line as CanvasLine};
use ratatui::widgets::{Block, BorderType, Borders, Cell, Clear, Paragraph, Row, Table, Wrap};

/// Archive syncs older than this many seconds are flagged as late.
pub const SYNC_LATE_S: f64 = 3.0;

/// A turn counts as "compensated" on screen when its world shift lies nearer 0 than the turn
/// itself, for turns of at least this size (a display rule of our own, not a statistical test).
pub const VERDICT_MIN_TURN_DEG: f64 = 30.0;

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

// ---------------------------------------------------------------------------------------------
// Text lines

/// One item of a flowed line: spans kept together.
type Item<'a> = Vec<Span<'a>>;

fn item_width(item: &Item) -> usize {
    item.iter().map(|s| s.width()).sum()
}

/// Lays items out left to right with separators, wrapping onto at most `max_lines` lines.
/// Items that do not fit are dropped (items come in priority order).
fn flow<'a>(items: Vec<Item<'a>>, width: u16, max_lines: usize, theme: &Theme) -> Vec<Line<'a>> {
    flow_with(items, width, max_lines, theme, " │ ")
}

/// [`flow`] with a chosen separator.
fn flow_with<'a>(
    items: Vec<Item<'a>>,
    width: u16,
    max_lines: usize,
    theme: &Theme,
    sep: &'static str,
) -> Vec<Line<'a>> {
    let width = width as usize;
    let sep_w = sep.chars().count();
    let mut lines: Vec<Vec<Span<'a>>> = vec![Vec::new()];
    let mut used = 0usize;
    for item in items {
        let iw = item_width(&item);
        if iw == 0 {
            continue;
        }
        let need = if used == 0 { iw } else { used + sep_w + iw };
        if need <= width {
            if used > 0
                && let Some(l) = lines.last_mut()
            {
                l.push(Span::styled(sep, theme.base()));
            }
            if let Some(l) = lines.last_mut() {
                l.extend(item);
            }
            used = need;
        } else if lines.len() < max_lines && iw <= width && used > 0 {
            lines.push(item);
            used = iw;
        } else if used == 0 && iw > width {
            // A single item wider than the screen: cut it.
            let mut left = width;
            let mut cut = Vec::new();
            for s in item {
                if left == 0 {
                    break;
                }
                let text = fit(&s.content, left);
                left = left.saturating_sub(text.chars().count());
                cut.push(Span::styled(text, s.style));
            }
            if let Some(l) = lines.last_mut() {
                l.extend(cut);
            }
            used = width;
        }
    }
    lines
        .into_iter()
        .filter(|l| !l.is_empty())
        .map(Line::from)
        .collect()
}

fn heading_in(snap: &Snapshot, frame: HeadingFrame) -> Option<f64> {
    match frame {
        HeadingFrame::Arena => snap.arena_heading_deg,
        HeadingFrame::World => snap.world_heading_deg,
        HeadingFrame::Sun => snap.sun_relative_heading_deg,
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

/// "kept" when the world heading stayed nearer its old value than the turn (display rule).
fn verdict(turn_deg: f64, shift_deg: f64) -> Option<bool> {
    if turn_deg.abs() < VERDICT_MIN_TURN_DEG || !shift_deg.is_finite() {
        return None;
    }
    Some(shift_deg.abs() <= signed_difference_deg(turn_deg, shift_deg).abs())
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

fn sync_age_s(snap: &Snapshot) -> Option<f64> {
    snap.health
        .last_sync_utc
        .map(|t| (snap.now_utc - t).num_milliseconds() as f64 / 1000.0)
}

fn sync_spans<'a>(snap: &Snapshot, theme: &Theme, short: bool) -> Vec<Span<'a>> {
    if let Some(err) = &snap.health.archive_error {
        return vec![Span::styled(
            format!(" ARCHIVE ERROR: {err} "),
            theme.flag(theme.alarm),
        )];
    }
    match sync_age_s(snap) {
        Some(age) if age > SYNC_LATE_S && !snap.ended => vec![Span::styled(
            format!(" ! LAST SAVE {age:.1} s AGO "),
            theme.flag(theme.alarm),
        )],
        Some(age) => vec![
            Span::styled(
                if short { "saved " } else { "archive saved " },
                theme.base(),
            ),
            Span::styled(format!("{:.1} s ago", age.max(0.0)), theme.strong()),
            Span::styled(" ✓", theme.accent(theme.good)),
        ],
        None if snap.t_s > SYNC_LATE_S && !snap.ended => {
            vec![Span::styled(" ! NOT SAVED YET ", theme.flag(theme.alarm))]
        }
        None => vec![Span::styled("archive: no sync yet", theme.base())],
    }
}

fn health_items<'a>(snap: &Snapshot, theme: &Theme) -> Vec<Item<'a>> {
    let h = &snap.health;
    let mut items: Vec<Item> = vec![sync_spans(snap, theme, true)];
    if h.sensor_lost {
        items.push(vec![Span::styled(
            " SENSOR LOST NOW ",
            theme.flag(theme.alarm),
        )]);
    }
    items.push(vec![
        Span::styled(format!("{:.1} Hz", h.rate_hz), theme.strong()),
        Span::styled(" ±", theme.base()),
        Span::styled(format!("{:.1} ms", h.jitter_ms), theme.strong()),
    ]);
    items.push(vec![
        Span::styled("malformed ", theme.base()),
        Span::styled(count(h.malformed), theme.strong()),
    ]);
    items.push(vec![
        Span::styled("lost ", theme.base()),
        Span::styled(count(h.lost_periods), theme.strong()),
    ]);
    items.push(vec![
        Span::styled(count(h.samples_written), theme.strong()),
        Span::styled(" samples", theme.base()),
    ]);
    items
}

fn health_panel<'a>(snap: &Snapshot, theme: &Theme, width: usize) -> Vec<Line<'a>> {
    let h = &snap.health;
    let kv = |k: &str, v: String| -> Line<'a> {
        Line::from(vec![
            Span::styled(format!("{k:<10}"), theme.base()),
            Span::styled(fit(&v, width.saturating_sub(10)), theme.strong()),
        ])
    };
    let mut lines = vec![Line::from(sync_spans(snap, theme, false))];
    lines.push(kv(
        "written",
        format!("{} samples", count(h.samples_written)),
    ));
    lines.push(kv(
        "rate",
        format!("{:.1} Hz  jitter ±{:.1} ms", h.rate_hz, h.jitter_ms),
    ));
    let mut input = vec![
        Span::styled(format!("{:<10}", "input"), theme.base()),
        Span::styled(
            format!(
                "malformed {}  lost {}",
                count(h.malformed),
                count(h.lost_periods)
            ),
            theme.strong(),
        ),
    ];
    if h.sensor_lost {
        input.push(Span::styled(" ", theme.base()));
        input.push(Span::styled(" LOST NOW ", theme.flag(theme.alarm)));
    }
    lines.push(Line::from(input));
    lines.push(kv("sensor", h.sensor.clone()));
    lines.push(kv("turntable", h.turntable.clone()));
    lines.push(kv(
        "session r",
        format!(
            "world {}  arena {}",
            r_value(snap.r_world),
            r_value(snap.r_arena)
        ),
    ));
    lines.push(kv(
        "arena 0",
        format!("{} true", deg1(snap.arena_bearing_deg)),
    ));
    lines
}

/// Key hints with a priority each (higher stays longer when the screen is narrow).
fn footer_items<'a>(
    snap: &Snapshot,
    ui: &UiState,
    theme: &Theme,
    wide: bool,
) -> Vec<(u8, Item<'a>)> {
    let key = |k: &'a str, what: String| -> Item<'a> {
        vec![
            Span::styled(format!(" {k} "), theme.flag(theme.fg)),
            Span::styled(format!(" {what}"), theme.strong()),
        ]
    };
    let mut items = Vec::new();
    if snap.ended {
        items.push((9, key("any key", "close".to_string())));
        return items;
    }
    if snap.prompt.is_some() {
        items.push((9, key("Enter", "done".to_string())));
    }
    items.push((
        8,
        key(
            "f",
            if snap.flying {
                "flight stop"
            } else {
                "flight start"
            }
            .to_string(),
        ),
    ));
    items.push((7, key("n", "note".to_string())));
    items.push((
        6,
        key(
            "p",
            if snap.paused { "resume" } else { "pause" }.to_string(),
        ),
    ));
    items.push((5, key("w", format!("frame:{}", ui.frame.name()))));
    items.push((6, key("s", "skip".to_string())));
    items.push((9, key("q", "end".to_string())));
    items.push((8, key("?", "help".to_string())));
    if wide {
        items.push((
            2,
            key("z", format!("span {}m", (ui.trace_span_s() / 60.0).round())),
        ));
        items.push((2, key("t", format!("theme:{}", ui.theme.name()))));
        items.push((1, key("m", "marks".to_string())));
    }
    items
}

/// One line of prioritised items: the lowest-priority items go first until the rest fits.
fn footer_line<'a>(
    mut items: Vec<(u8, Item<'a>)>,
    width: u16,
    sep: &'static str,
    theme: &Theme,
) -> Vec<Line<'a>> {
    let sep_w = sep.chars().count();
    let total = |items: &[(u8, Item)]| -> usize {
        items.iter().map(|(_, i)| item_width(i)).sum::<usize>()
            + sep_w * items.len().saturating_sub(1)
    };
    while items.len() > 1 && total(&items) > width as usize {
        let lowest = items.iter().map(|(p, _)| *p).min().unwrap_or(0);
        if let Some(pos) = items.iter().rposition(|(p, _)| *p == lowest) {
            items.remove(pos);
        }
    }
    flow_with(
        items.into_iter().map(|(_, i)| i).collect(),
        width,
        1,
        theme,
        sep,
    )
}

// ---------------------------------------------------------------------------------------------
// Dial

fn polar(r: f64, screen_deg: f64) -> (f64, f64) {
    let a = screen_deg.to_radians();
    (r * a.sin(), r * a.cos())
}

fn draw_dial(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let legend_full = "● heading  A arena 0  * sun  ┄ e-vector";
    let legend_short = "●head A 0 *sun ┄e";
    let inner_w = area.width.saturating_sub(2) as usize;
    let legend = if legend_full.chars().count() <= inner_w {
        legend_full
    } else if legend_short.chars().count() <= inner_w {
        legend_short
    } else {
        ""
    };
    let block = Block::bordered()
        .border_style(theme.border())
        .title(Span::styled(
            format!(" dial · {} ", ui.frame.name()),
            theme.strong(),
        ))
        .title_bottom(Span::styled(legend, theme.strong()));
    let inner = block.inner(area);
    frame.render_widget(block, area);
    if inner.width < 6 || inner.height < 3 {
        return;
    }
    let (w, h) = (inner.width as f64, inner.height as f64);
    let half = 1.45;
    let (xr, yr) = if w >= 2.0 * h {
        (half * w / (2.0 * h), half)
    } else {
        (half, half * 2.0 * h / w)
    };
    // The dial's top is the chosen frame's 0: north, the arena mark, or the sun.
    let top_deg = match ui.frame {
        HeadingFrame::World => 0.0,
        HeadingFrame::Arena => snap.arena_bearing_deg,
        HeadingFrame::Sun => snap.sun_azimuth_deg,
    };
    let screen = |world_deg: f64| wrap_360_deg(world_deg - top_deg);
    let fg = if theme.is_mono() {
        Color::Reset
    } else {
        theme.fg
    };
    let col = |c: Color| if theme.is_mono() { Color::Reset } else { c };

    let heading_world = snap.world_heading_deg;
    let flying = snap.flying && !snap.health.sensor_lost;
    let ev = snap.zenith_evector_deg;
    let canvas = Canvas::default()
        .marker(Marker::Braille)
        .background_color(theme.bg)
        .x_bounds([-xr, xr])
        .y_bounds([-yr, yr])
        .paint(move |ctx| {
            ctx.draw(&Circle {
                x: 0.0,
                y: 0.0,
                radius: 1.0,
                color: fg,
            });
            for k in 0..12 {
                let a = wrap_360_deg(k as f64 * 30.0);
                let r0 = if k % 3 == 0 { 0.82 } else { 0.91 };
                let (x0, y0) = polar(r0, a);
                let (x1, y1) = polar(1.0, a);
                ctx.draw(&CanvasLine::new(x0, y0, x1, y1, fg));
            }
            ctx.layer();
            // Zenith e-vector axis: dashed, through the centre.
            let a = screen(ev);
            let mut r = -0.95;
            while r < 0.95 {
                let (x0, y0) = polar(r, a);
                let (x1, y1) = polar((r + 0.09).min(0.95), a);
                ctx.draw(&CanvasLine::new(x0, y0, x1, y1, col(theme.evector)));
                r += 0.17;
            }
            ctx.layer();
            if let Some(hw) = heading_world {
                let a = screen(hw);
                if flying {
                    let (x1, y1) = polar(0.8, a);
                    ctx.draw(&CanvasLine::new(0.0, 0.0, x1, y1, col(theme.heading)));
                    // A second stroke beside the first makes the needle bolder.
                    let (dx, dy) = polar(0.03, a + 90.0);
                    ctx.draw(&CanvasLine::new(
                        dx,
                        dy,
                        x1 + dx,
                        y1 + dy,
                        col(theme.heading),
                    ));
                } else {
                    let mut r = 0.0;
                    while r < 0.8 {
                        let (x0, y0) = polar(r, a);
                        let (x1, y1) = polar(r + 0.05, a);
                        ctx.draw(&CanvasLine::new(x0, y0, x1, y1, col(theme.heading)));
                        r += 0.15;
                    }
                }
            }
            // Labels (always on top of the dots).
            // Cardinal labels about one row outside the rim, marks about one row inside it.
            let row = 2.0 * yr / h;
            let label_r = (1.0 + 1.2 * row).min(1.3);
            let mark_r = (1.0 - row).clamp(0.8, 0.92);
            for (name, b) in [("N", 0.0), ("E", 90.0), ("S", 180.0), ("W", 270.0)] {
                let (x, y) = polar(label_r, screen(b));
                ctx.print(x, y, Span::styled(name, theme.strong()));
            }
            let (x, y) = polar(mark_r, screen(snap.arena_bearing_deg));
            ctx.print(x, y, Span::styled("A", theme.flag(theme.mark)));
            let (x, y) = polar(mark_r, screen(snap.sun_azimuth_deg));
            ctx.print(x, y, Span::styled("*", theme.flag(theme.sun)));
            if let Some(hw) = heading_world {
                let (x, y) = polar(0.8, screen(hw));
                let tip = if flying { "●" } else { "○" };
                ctx.print(x, y, Span::styled(tip, theme.accent(theme.heading)));
            } else {
                ctx.print(
                    -0.3,
                    0.0,
                    Span::styled("no heading", theme.flag(theme.alarm)),
                );
            }
        });
    frame.render_widget(canvas, inner);
}

// ---------------------------------------------------------------------------------------------
// Trace

fn draw_trace(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let span_s = ui.trace_span_s();
    let block = Block::bordered()
        .border_style(theme.border())
        .title(Span::styled(
            format!(
                " heading trace · {} · last {} min ",
                ui.frame.name(),
                (span_s / 60.0).round()
            ),
            theme.strong(),
        ))
        .title_bottom(Span::styled(
            " ┆ turn  ─ flying  × stopped ",
            theme.strong(),
        ));
    let inner = block.inner(area);
    frame.render_widget(block, area);
    if inner.width < 12 || inner.height < 3 {
        return;
    }
    let axis_w = 4u16;
    let has_strip = inner.height >= 7;
    let bottom_rows = if has_strip { 2 } else { 1 };
    let plot = Rect {
        x: inner.x + axis_w,
        y: inner.y,
        width: inner.width - axis_w,
        height: inner.height - bottom_rows,
    };
    let t1 = snap.t_s;
    let t0 = t1 - span_s;

    // Points of the chosen frame, flying only (stops leave gaps), rasterised straight into the
    // buffer: one pass over the points, one over the cells.
    let start = snap.trace.partition_point(|p| p.t_s < t0);
    let visible = &snap.trace[start..];
    let dx = span_s / (plot.width.max(1) as f64);
    let turns: Vec<f64> = snap
        .turn_marks_s
        .iter()
        .copied()
        .filter(|t| *t >= t0 && *t <= t1)
        .collect();
    let mut raster = Raster::new(plot.width, plot.height, ui.bold_marks);
    let (dots_w, dots_h) = (raster.dots_w() as f64, raster.dots_h() as f64);
    let to_px = |t: f64| ((t - t0) / span_s * dots_w).floor();
    let to_py = |v: f64| ((360.0 - v) / 360.0 * dots_h).floor();
    // Grid lines at 90, 180 and 270: one dot every fourth column of dots.
    for v in [90.0, 180.0, 270.0] {
        let py = to_py(v);
        let mut px = 1.0;
        while px < dots_w {
            raster.dot(px, py, Mark::Grid);
            px += 4.0;
        }
    }
    // Turns: dashed vertical lines.
    for &t in &turns {
        let px = to_px(t);
        let mut py = 0.0;
        while py < dots_h {
            raster.dot(px, py, Mark::Turn);
            raster.dot(px, py + 1.0, Mark::Turn);
            py += 4.0;
        }
    }
    for p in visible.iter().filter(|p| p.flying && p.t_s <= t1) {
        let v = match ui.frame {
            HeadingFrame::Arena => p.arena_deg,
            HeadingFrame::World => p.world_deg,
            HeadingFrame::Sun => p.sun_deg,
        };
        if v.is_finite() {
            raster.dot(to_px(p.t_s), to_py(wrap_360_deg(v)), Mark::Heading);
        }
    }
    raster.paint(frame.buffer_mut(), plot, theme);

    // Y-axis labels, on the rows where the raster puts those headings.
    let buf = frame.buffer_mut();
    let dots_per_row = dots_h / plot.height.max(1) as f64;
    for (label, v) in [
        ("360", 360.0),
        ("270", 270.0),
        ("180", 180.0),
        (" 90", 90.0),
        ("  0", 0.0),
    ] {
        let row = (to_py(v).clamp(0.0, dots_h - 1.0) / dots_per_row).floor() as u16;
        buf.set_string(
            inner.x,
            plot.y + row.min(plot.height - 1),
            label,
            theme.strong(),
        );
    }

    let buf = frame.buffer_mut();
    // Turn labels on the top row, right of their line.
    for &t in &turns {
        let col = ((t - t0) / dx).floor() as i64;
        if col >= 0 && (col as u16) < plot.width {
            let x = plot.x + col as u16;
            let label = "┆";
            buf.set_string(x, plot.y, label, theme.accent(theme.turn));
        }
    }

    let mut row = plot.y + plot.height;
    if has_strip {
        // Flight strip: one cell per column, from the trace's flying flags.
        buf.set_string(inner.x, row, "fly", theme.strong());
        let n = plot.width as usize;
        let mut fly = vec![false; n];
        let mut stop = vec![false; n];
        for p in visible.iter().filter(|p| p.t_s <= t1) {
            let c = (((p.t_s - t0) / dx).floor() as usize).min(n.saturating_sub(1));
            if p.flying {
                fly[c] = true;
            } else {
                stop[c] = true;
            }
        }
        for c in 0..n {
            let (sym, style) = if stop[c] {
                ("×", theme.accent(theme.caution))
            } else if fly[c] {
                ("─", theme.accent(theme.good))
            } else {
                (" ", theme.base())
            };
            buf.set_string(plot.x + c as u16, row, sym, style);
        }
        row += 1;
    }
    // Time labels.
    let left = format!("-{} min", (span_s / 60.0).round());
    let mid = format!("-{} min", format_half(span_s / 120.0));
    buf.set_string(plot.x, row, &left, theme.strong());
    let mid_x = plot.x + plot.width / 2;
    if plot.width as usize > left.len() + mid.len() + 8 {
        buf.set_string(
            mid_x.saturating_sub(mid.len() as u16 / 2),
            row,
            &mid,
            theme.strong(),
        );
    }
    let now = format!("now {}", duration(t1));
    let now_x = (plot.x + plot.width).saturating_sub(now.len() as u16);
    if now_x > plot.x + left.len() as u16 {
        buf.set_string(now_x, row, &now, theme.strong());
    }
}

/// What a dot of the trace shows; a cell takes the colour of its most important dot.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Mark {
    None,
    Grid,
    Turn,
    Heading,
}

/// A small dot raster for the trace: braille (2×4 dots per cell) or half blocks (1×2).
struct Raster {
    w: usize,
    h: usize,
    half_blocks: bool,
    bits: Vec<u8>,
    mark: Vec<Mark>,
}

impl Raster {
    fn new(w: u16, h: u16, half_blocks: bool) -> Self {
        let n = w as usize * h as usize;
        Raster {
            w: w as usize,
            h: h as usize,
            half_blocks,
            bits: vec![0; n],
            mark: vec![Mark::None; n],
        }
    }

    fn dots_w(&self) -> usize {
        if self.half_blocks { self.w } else { self.w * 2 }
    }

    fn dots_h(&self) -> usize {
        if self.half_blocks {
            self.h * 2
        } else {
            self.h * 4
        }
    }

    /// Sets the dot at (`px`, `py`) (dot units, origin top left); outside dots are clamped to
    /// the edge when within one dot, else ignored.
    fn dot(&mut self, px: f64, py: f64, mark: Mark) {
        let (dw, dh) = (self.dots_w() as f64, self.dots_h() as f64);
        if !(px > -1.0 && py > -1.0 && px < dw + 1.0 && py < dh + 1.0) || dw < 1.0 || dh < 1.0 {
            return;
        }
        let x = px.clamp(0.0, dw - 1.0) as usize;
        let y = py.clamp(0.0, dh - 1.0) as usize;
        let (cell, bit) = if self.half_blocks {
            (
                x + (y / 2) * self.w,
                if y.is_multiple_of(2) { 1 } else { 2 },
            )
        } else {
            // Braille dot numbering: left column 1, 2, 3, 7; right column 4, 5, 6, 8.
            const LEFT: [u8; 4] = [0x01, 0x02, 0x04, 0x40];
            const RIGHT: [u8; 4] = [0x08, 0x10, 0x20, 0x80];
            let b = if x.is_multiple_of(2) {
                LEFT[y % 4]
            } else {
                RIGHT[y % 4]
            };
            (x / 2 + (y / 4) * self.w, b)
        };
        self.bits[cell] |= bit;
        if mark > self.mark[cell] {
            self.mark[cell] = mark;
        }
    }

    fn paint(&self, buf: &mut ratatui::buffer::Buffer, area: Rect, theme: &Theme) {
        for row in 0..self.h.min(area.height as usize) {
            for col in 0..self.w.min(area.width as usize) {
                let i = col + row * self.w;
                let bits = self.bits[i];
                if bits == 0 {
                    continue;
                }
                let ch = if self.half_blocks {
                    match bits {
                        1 => '▀',
                        2 => '▄',
                        _ => '█',
                    }
                } else {
                    char::from_u32(0x2800 + u32::from(bits)).unwrap_or('⣿')
                };
                let style = match self.mark[i] {
                    Mark::Heading => theme.accent(theme.heading),
                    Mark::Turn => theme.accent(theme.turn),
                    _ => theme.strong(),
                };
                let cell = &mut buf[(area.x + col as u16, area.y + row as u16)];
                cell.set_char(ch);
                cell.set_style(style);
            }
        }
    }
}

fn format_half(minutes: f64) -> String {
    if (minutes - minutes.round()).abs() < 1e-9 {
        format!("{minutes:.0}")
    } else {
        format!("{minutes:.1}")
    }
}

// ---------------------------------------------------------------------------------------------
// Epoch table

/// The slice of epochs that fits in `rows`, kept around the current one.
fn epoch_window(snap: &Snapshot, rows: usize) -> (usize, usize) {
    let n = snap.epochs.len();
    if rows == 0 {
        return (0, 0);
    }
    if rows >= n {
        return (0, n);
    }
    let cur = snap
        .epochs
        .iter()
        .position(|e| e.state == EpochState::Current)
        .unwrap_or_else(|| snap.epoch.saturating_sub(1).min(n - 1));
    // Show one finished epoch above the current one when possible.
    let above = usize::from(rows >= 3);
    let start = cur.saturating_sub(above).min(n - rows);
    (start, start + rows)
}

fn table_title<'a>(snap: &Snapshot, rows: usize, ui: &UiState) -> Line<'a> {
    let theme = Theme::new(ui.theme);
    let n = snap.epochs.len();
    let (a, b) = epoch_window(snap, rows);
    let range = if b - a < n && b > a {
        format!(" epochs {}–{} of {} ", a + 1, b, n)
    } else {
        format!(" epochs ({n}) ")
    };
    Line::from(vec![
        Span::styled(range, theme.strong()),
        Span::styled(
            format!(
                "· session r world {} arena {} ",
                r_value(snap.r_world),
                r_value(snap.r_arena)
            ),
            theme.strong(),
        ),
    ])
}

fn state_word(state: EpochState) -> &'static str {
    match state {
        EpochState::Pending => "wait",
        EpochState::Current => "► now",
        EpochState::Done => "done",
        EpochState::Skipped => "skip",
    }
}

/// One column of the epoch table.
struct Col<'s> {
    header: &'static str,
    width: u16,
    /// Higher stays longer when the table is narrow.
    prio: u8,
    cell: Box<dyn Fn(&EpochRow) -> String + 's>,
}

fn turn_into<'s>(snap: &'s Snapshot, e: &EpochRow) -> Option<&'s TurnRow> {
    // Turn k lies between epochs k and k + 1, so it leads into epoch k + 1.
    snap.turns.iter().find(|t| t.index + 1 == e.index)
}

fn shift_text(t: &TurnRow, words: bool) -> String {
    match t.world_shift_deg {
        Some(s) => {
            let mark = match (verdict(t.turn_deg, s), words) {
                (Some(true), true) => " ✓ kept",
                (Some(false), true) => " ✗ moved",
                (Some(true), false) => " ✓",
                (Some(false), false) => " ✗",
                (None, _) => "",
            };
            format!("{}{}", format::signed_deg(s), mark)
        }
        None => "…".to_string(),
    }
}

/// The columns for a table `width` cells wide: the full set when it fits, else the short
/// forms, then dropping the least needed columns. Numbers are never cut.
fn epoch_columns<'s>(snap: &'s Snapshot, ui: &UiState, width: u16) -> Vec<Col<'s>> {
    let dash = || "–".to_string();
    let started = |e: &EpochRow| e.state != EpochState::Pending;
    let cond_max = snap
        .epochs
        .iter()
        .map(|e| e.condition.chars().count())
        .max()
        .unwrap_or(9)
        .clamp(9, 18) as u16;
    let build = |full: bool, cond_w: u16| -> Vec<Col<'s>> {
        let mut cols: Vec<Col<'s>> = vec![
            Col {
                header: "#",
                width: 2,
                prio: 10,
                cell: Box::new(|e| e.index.to_string()),
            },
            Col {
                header: "condition",
                width: cond_w,
                prio: 7,
                cell: Box::new(move |e| fit(&e.condition, cond_w as usize)),
            },
            Col {
                header: "bearing",
                width: 7,
                prio: 5,
                cell: Box::new(|e| deg(Some(e.arena_bearing_deg))),
            },
            Col {
                header: "flown",
                width: if full { 9 } else { 5 },
                prio: 4,
                cell: Box::new(move |e| {
                    if !started(e) {
                        dash()
                    } else if full {
                        format!("{}/{}", duration(e.flying_s), duration(e.duration_s))
                    } else {
                        duration(e.flying_s)
                    }
                }),
            },
            Col {
                header: "n",
                width: 6,
                prio: 5,
                cell: Box::new(move |e| if started(e) { e.n.to_string() } else { dash() }),
            },
        ];
        let world = Col {
            header: "world°",
            width: 6,
            prio: 8,
            cell: Box::new(move |e| {
                if e.n > 0 {
                    deg(e.mean_world_deg)
                } else {
                    dash()
                }
            }),
        };
        let arena = Col {
            header: "arena°",
            width: 6,
            prio: 8,
            cell: Box::new(move |e| {
                if e.n > 0 {
                    deg(e.mean_arena_deg)
                } else {
                    dash()
                }
            }),
        };
        if full {
            cols.push(world);
            cols.push(arena);
        } else if ui.frame == HeadingFrame::Arena {
            cols.push(arena);
        } else {
            cols.push(world);
        }
        cols.push(Col {
            header: "r",
            width: 4,
            prio: 9,
            cell: Box::new(move |e| if e.n > 0 { r_value(e.r) } else { dash() }),
        });
        cols.push(Col {
            header: "p eff",
            width: 6,
            prio: 8,
            cell: Box::new(move |e| {
                if e.n > 0 {
                    p_value(e.rayleigh_p_eff)
                } else {
                    dash()
                }
            }),
        });
        cols.push(Col {
            header: "state",
            width: 5,
            prio: 9,
            cell: Box::new(|e| state_word(e.state).to_string()),
        });
        cols.push(Col {
            header: "turn",
            width: 5,
            prio: 6,
            cell: Box::new(move |e| {
                turn_into(snap, e)
                    .map(|t| format::signed_deg(t.turn_deg))
                    .unwrap_or_default()
            }),
        });
        cols.push(Col {
            header: "shift",
            width: if full { 13 } else { 7 },
            prio: 8,
            cell: Box::new(move |e| {
                turn_into(snap, e)
                    .map(|t| shift_text(t, full))
                    .unwrap_or_default()
            }),
        });
        cols
    };
    let total = |cols: &[Col]| -> u16 {
        cols.iter()
            .map(|c| c.width + 1)
            .sum::<u16>()
            .saturating_sub(1)
    };
    let full = build(true, cond_max);
    if total(&full) <= width {
        return full;
    }
    let mut cols = build(false, cond_max.min(12));
    if total(&cols) > width {
        let over = total(&cols) - width;
        cols = build(false, cond_max.min(12).saturating_sub(over).max(6));
    }
    while cols.len() > 1 && total(&cols) > width {
        let lowest = cols.iter().map(|c| c.prio).min().unwrap_or(0);
        if let Some(pos) = cols.iter().rposition(|c| c.prio == lowest) {
            cols.remove(pos);
        }
    }
    cols
}

fn draw_epoch_table(
    frame: &mut Frame,
    area: Rect,
    block: Block,
    snap: &Snapshot,
    ui: &UiState,
    theme: &Theme,
) {
    let inner = block.inner(area);
    frame.render_widget(block, area);
    if inner.height < 2 || inner.width < 20 {
        return;
    }
    let rows_avail = inner.height.saturating_sub(1) as usize;
    let (a, b) = epoch_window(snap, rows_avail);
    let cols = epoch_columns(snap, ui, inner.width);
    let header = Row::new(cols.iter().map(|c| c.header)).style(theme.label());
    let rows: Vec<Row> = snap.epochs[a..b]
        .iter()
        .map(|e| {
            let style = match e.state {
                EpochState::Current => theme.strong().add_modifier(Modifier::REVERSED),
                EpochState::Skipped => theme.base().add_modifier(Modifier::CROSSED_OUT),
                EpochState::Done => theme.strong(),
                EpochState::Pending => theme.base(),
            };
            Row::new(cols.iter().map(|c| Cell::from((c.cell)(e)))).style(style)
        })
        .collect();
    let widths: Vec<Constraint> = cols.iter().map(|c| Constraint::Length(c.width)).collect();
    let table = Table::new(rows, widths)
        .header(header)
        .column_spacing(1)
        .style(theme.base());
    frame.render_widget(table, inner);
}

// ---------------------------------------------------------------------------------------------
// Overlays

/// A centered box of at most `w`×`h`, clipped to `area`, cleared and bordered.
fn dialog(
    frame: &mut Frame,
    area: Rect,
    w: u16,
    h: u16,
    title: Span<'static>,
    theme: &Theme,
    thick: bool,
) -> Rect {
    let w = w.min(area.width);
    let h = h.min(area.height);
    let r = Rect {
        x: area.x + (area.width - w) / 2,
        y: area.y + (area.height - h) / 2,
        width: w,
        height: h,
    };
    frame.render_widget(Clear, r);
    frame.buffer_mut().set_style(r, theme.base());
    let block = Block::bordered()
        .border_type(if thick {
            BorderType::Thick
        } else {
            BorderType::Plain
        })
        .border_style(theme.border())
        .title(title);
    let inner = block.inner(r);
    frame.render_widget(block, r);
    inner
}

fn draw_overlays(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    if snap.ended {
        draw_ended(frame, area, snap, theme);
        return;
    }
    if ui.mode == Mode::Help {
        draw_help(frame, area, snap, ui, theme);
    }
    if let Some(p) = &snap.prompt {
        let w = area.width.saturating_sub(4).min(64);
        let text_w = w.saturating_sub(4).max(1) as usize;
        let text_lines = p.text.chars().count().div_ceil(text_w).max(1) as u16;
        let h = text_lines + 6;
        let inner = dialog(
            frame,
            area,
            w,
            h,
            Span::styled(" ACTION NEEDED ", theme.flag(theme.turn)),
            theme,
            true,
        );
        let due = if p.countdown_s >= 0.0 {
            vec![
                Span::styled("next epoch due in ", theme.base()),
                Span::styled(countdown(p.countdown_s), theme.strong()),
            ]
        } else {
            vec![Span::styled(
                format!(" LATE by {} ", duration(-p.countdown_s)),
                theme.flag(theme.alarm),
            )]
        };
        let mut lines = vec![Line::from(Span::styled(p.text.clone(), theme.strong()))];
        lines.push(Line::from(""));
        let mut l = due;
        l.push(Span::styled(
            format!("   waiting {}", duration(p.waiting_s)),
            theme.base(),
        ));
        lines.push(Line::from(l));
        lines.push(Line::from(vec![
            Span::styled(" Enter ", theme.flag(theme.fg)),
            Span::styled(" when done", theme.strong()),
        ]));
        frame.render_widget(
            Paragraph::new(lines)
                .style(theme.base())
                .wrap(Wrap { trim: true })
                .block(Block::default().padding(ratatui::widgets::Padding::horizontal(1))),
            inner,
        );
    }
    match &ui.mode {
        Mode::ConfirmEnd => {
            let inner = dialog(
                frame,
                area,
                46,
                6,
                Span::styled(" END SESSION? ", theme.flag(theme.alarm)),
                theme,
                true,
            );
            let lines = vec![
                Line::from(Span::styled(
                    "End the session now and save it?",
                    theme.strong(),
                )),
                Line::from(""),
                Line::from(vec![
                    Span::styled(" y ", theme.flag(theme.alarm)),
                    Span::styled(" yes, end   ", theme.strong()),
                    Span::styled("any other key: go on", theme.strong()),
                ]),
            ];
            frame.render_widget(Paragraph::new(lines).style(theme.base()), inner);
        }
        Mode::ConfirmSkip => {
            let inner = dialog(
                frame,
                area,
                50,
                6,
                Span::styled(" SKIP EPOCH? ", theme.flag(theme.caution)),
                theme,
                true,
            );
            let lines = vec![
                Line::from(Span::styled(
                    format!(
                        "Skip the rest of epoch {} ({})?",
                        snap.epoch, snap.condition
                    ),
                    theme.strong(),
                )),
                Line::from(""),
                Line::from(vec![
                    Span::styled(" y ", theme.flag(theme.caution)),
                    Span::styled(" yes, skip   ", theme.strong()),
                    Span::styled("any other key: no", theme.strong()),
                ]),
            ];
            frame.render_widget(
                Paragraph::new(lines)
                    .style(theme.base())
                    .wrap(Wrap { trim: true }),
                inner,
            );
        }
        Mode::Note(text) => {
            let w = area.width.saturating_sub(4).min(72);
            let inner = dialog(
                frame,
                area,
                w,
                5,
                Span::styled(" NOTE ", theme.flag(theme.heading)),
                theme,
                true,
            );
            let room = inner.width.saturating_sub(3) as usize;
            let chars: Vec<char> = text.chars().collect();
            let shown: String = chars[chars.len().saturating_sub(room)..].iter().collect();
            let lines = vec![
                Line::from(vec![
                    Span::styled("> ", theme.strong()),
                    Span::styled(shown, theme.strong()),
                    Span::styled("█", theme.strong()),
                ]),
                Line::from(""),
                Line::from(Span::styled(
                    "Enter: save note   Esc: cancel",
                    theme.strong(),
                )),
            ];
            frame.render_widget(Paragraph::new(lines).style(theme.base()), inner);
        }
        _ => {}
    }
}

fn draw_help(frame: &mut Frame, area: Rect, snap: &Snapshot, ui: &UiState, theme: &Theme) {
    let keys: [(&str, String); 12] = [
        (
            "f",
            format!(
                "mark a flight {} (the animal {})",
                if snap.flying { "stop" } else { "start" },
                if snap.flying {
                    "stopped flying"
                } else {
                    "flies again"
                }
            ),
        ),
        ("n", "write a note (Enter saves, Esc cancels)".into()),
        ("p", "pause / resume the protocol clock".into()),
        (
            "w Tab",
            format!(
                "heading frame: arena → world → sun (now {})",
                ui.frame.name()
            ),
        ),
        ("s", "skip the rest of this epoch (asks first)".into()),
        ("q", "end the session (asks; y confirms)".into()),
        ("Enter", "confirm the pending prompt (turn done)".into()),
        (
            "z",
            format!(
                "trace span (now {} min)",
                (ui.trace_span_s() / 60.0).round()
            ),
        ),
        (
            "t",
            format!("theme: sunlight / dark / mono (now {})", ui.theme.name()),
        ),
        ("m", "trace marks: fine dots / bold blocks".into()),
        ("Ctrl-C", "end the session at once".into()),
        ("?", "this help; any key closes it".into()),
    ];
    let legend = [
        "dial: top = the frame's 0 (N, arena mark or sun)",
        "● heading (○ not flying)  A arena 0 mark  * sun  ┄ zenith e-vector",
        "trace: ┆ turn  ─ flying  × stopped (gap in the dots)",
        "shift: world heading change across a turn; ✓ kept = nearer 0 than the turn",
        "frames: world = true north; arena = arena 0 mark; sun = 0 toward the sun",
    ];
    let h = (keys.len() + legend.len() + 4) as u16;
    let inner = dialog(
        frame,
        area,
        78,
        h,
        Span::styled(" HELP · keys and marks ", theme.flag(theme.fg)),
        theme,
        false,
    );
    let mut lines: Vec<Line> = keys
        .iter()
        .map(|(k, what)| {
            Line::from(vec![
                Span::styled(
                    format!("{k:>7} "),
                    theme.strong().add_modifier(Modifier::REVERSED),
                ),
                Span::styled(format!(" {what}"), theme.strong()),
            ])
        })
        .collect();
    lines.push(Line::from(""));
    for l in legend {
        lines.push(Line::from(Span::styled(l, theme.strong())));
    }
    frame.render_widget(
        Paragraph::new(lines)
            .style(theme.base())
            .wrap(Wrap { trim: false }),
        inner,
    );
}

fn draw_ended(frame: &mut Frame, area: Rect, snap: &Snapshot, theme: &Theme) {
    let dir = snap.session_dir.display().to_string();
    let w = (dir.chars().count() as u16 + 8)
        .max(40)
        .min(area.width.saturating_sub(2).max(1));
    let inner = dialog(
        frame,
        area,
        w,
        7,
        Span::styled(" SESSION ENDED ", theme.flag(theme.good)),
        theme,
        true,
    );
    let reason = snap
        .end_reason
        .clone()
        .unwrap_or_else(|| "ended".to_string());
    let lines = vec![
        Line::from(vec![
            Span::styled("status: ", theme.base()),
            Span::styled(reason, theme.strong()),
        ]),
        Line::from(Span::styled("session saved to", theme.strong())),
        Line::from(Span::styled(dir, theme.accent(theme.heading))),
        Line::from(Span::styled("any key closes", theme.base())),
    ];
    frame.render_widget(
        Paragraph::new(lines)
            .style(theme.base())
            .wrap(Wrap { trim: false }),
        inner,
    );
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

    #[test]
    fn raster_sets_braille_and_half_block_dots() {
        let mut r = Raster::new(2, 1, false);
        r.dot(0.0, 0.0, Mark::Grid); // dot 1
        r.dot(1.0, 3.0, Mark::Heading); // dot 8
        r.dot(3.0, 3.0, Mark::Turn); // second cell, dot 8
        r.dot(9.0, 0.0, Mark::Heading); // far outside: ignored
        assert_eq!(r.bits, vec![0x81, 0x80]);
        assert_eq!(r.mark, vec![Mark::Heading, Mark::Turn]);
        let mut r = Raster::new(1, 2, true);
        r.dot(0.0, 0.0, Mark::Grid);
        r.dot(0.0, 3.0, Mark::Grid);
        r.dot(0.0, 2.0, Mark::Grid);
        assert_eq!(r.bits, vec![1, 3]);
        // Just past the edge clamps onto it (a point exactly at "now").
        let mut r = Raster::new(1, 1, false);
        r.dot(2.0, 4.0, Mark::Heading);
        assert_eq!(r.bits, vec![0x80]);
    }

    #[test]
    fn window_keeps_current_epoch_visible() {
        use crate::tui::sample::SnapshotBuilder;
        let snap = SnapshotBuilder::hour_of_history().build();
        let cur = snap
            .epochs
            .iter()
            .position(|e| e.state == EpochState::Current)
            .unwrap();
        for rows in 1..snap.epochs.len() + 3 {
            let (a, b) = epoch_window(&snap, rows);
            assert!(b <= snap.epochs.len());
            assert!(b - a <= rows, "rows {rows}: {a}..{b}");
            assert!(a <= cur && cur < b, "rows {rows}: {a}..{b} misses {cur}");
        }
    }
}
