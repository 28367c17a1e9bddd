//! The help overlay: every key and every mark on the screen, named.

use crate::engine::snapshot::Snapshot;
use crate::tui::panels::overlays::dialog;
use crate::tui::state::UiState;
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget, Wrap};

/// The help overlay, centred in its area.
pub struct Help<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (frame, span, marks).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for Help<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let Help { snap, ui, theme } = self;
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
            buf,
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
        Paragraph::new(lines)
            .style(theme.base())
            .wrap(Wrap { trim: false })
            .render(inner, buf);
    }
}
