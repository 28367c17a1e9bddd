//! Devices and archive: the one-line health summary and the wide layout's health panel.

use crate::engine::snapshot::Snapshot;
use crate::tui::format::{count, deg1, fit, r_value};
use crate::tui::lines::{Item, TextLines, flow};
use crate::tui::panels::{SYNC_LATE_S, sync_age_s};
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Paragraph, Widget};

/// The one-line health summary of the compact layout (at most two rows).
pub fn health_line<'a>(snap: &Snapshot, theme: &Theme, width: u16) -> TextLines<'a> {
    TextLines::new(flow(health_items(snap, theme), width, 2, theme), theme)
}

/// The wide layout's devices and archive panel, laid out for its width.
pub struct DevicesPanel<'a> {
    lines: Vec<Line<'a>>,
    theme: Theme,
}

impl<'a> DevicesPanel<'a> {
    /// The panel for a box `width` cells wide (borders included).
    pub fn new(snap: &Snapshot, theme: &Theme, width: u16) -> Self {
        DevicesPanel {
            lines: health_panel(snap, theme, width.saturating_sub(2) as usize),
            theme: *theme,
        }
    }

    /// Rows the panel wants, borders included.
    pub fn height(&self) -> u16 {
        self.lines.len() as u16 + 2
    }
}

impl Widget for DevicesPanel<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let theme = &self.theme;
        Paragraph::new(self.lines)
            .style(theme.base())
            .block(
                Block::bordered()
                    .border_style(theme.border())
                    .title(Span::styled(" devices · archive ", theme.strong())),
            )
            .render(area, buf);
    }
}

pub(crate) fn sync_spans<'a>(snap: &Snapshot, theme: &Theme, short: bool) -> Vec<Span<'a>> {
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
