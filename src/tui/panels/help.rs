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
        let keys: [(&str, String); 14] = [
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
            ("x", "at a turn prompt: could not turn (not scored)".into()),
            ("b", "every later turn by hand (after a fault)".into()),
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
            (
                "?",
                "this help (Space: next page); other keys close it".into(),
            ),
        ];
        let legend = [
            "dial: top = the frame's 0 (N, arena mark or sun)",
            "█● heading (dashed, ○: not flying)  A arena 0  * sun  ┄ zenith e-vector",
            "trace: ┆ turn  ─ flying  × stopped (gap in the dots)",
            "shift: world heading change across a turn; ✓ kept = nearer 0 than the turn",
            "frames: world = true north; arena = arena 0 mark; sun = 0 toward the sun",
        ];
        // Every column and abbreviation on the screen, in the order the eye meets them.
        let words: [(&str, &str); 12] = [
            (
                "az el",
                "sun azimuth (from true north, clockwise) and elevation",
            ),
            (
                "hold r",
                "r of the current epoch so far: how well the heading is held",
            ),
            (
                "bearing",
                "true bearing of the arena's 0 mark during the epoch",
            ),
            ("flown", "flying time so far / planned epoch length"),
            ("n", "headings scored (flying, after the settle time)"),
            (
                "world°",
                "mean heading of the epoch from true north (arena°: from 0 mark)",
            ),
            (
                "r",
                "mean vector length: 0 = no preferred heading, 1 = all alike",
            ),
            (
                "session r",
                "r over all epochs so far, world and arena frames",
            ),
            (
                "p held",
                "p of a held heading; – until 30 s of flight: too short to tell",
            ),
            (
                "state",
                "wait · ► now · done · skip (skipped by the operator)",
            ),
            (
                "turn",
                "commanded arena turn into the epoch (+ = clockwise from above)",
            ),
            (
                "health",
                "saved = last write to disk · malformed / lost = bad lines, gaps",
            ),
        ];
        let key_lines: Vec<Line> = keys
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
        let mut mark_lines: Vec<Line> = legend
            .iter()
            .map(|l| Line::from(Span::styled(*l, theme.strong())))
            .collect();
        mark_lines.push(Line::from(""));
        mark_lines.push(Line::from(Span::styled("words and columns", theme.label())));
        mark_lines.extend(words.iter().map(|(w, what)| {
            Line::from(vec![
                Span::styled(format!("{w:>9} "), theme.strong()),
                Span::styled(format!(" {what}"), theme.base()),
            ])
        }));

        // One page when everything fits, else keys first and marks and words on the next.
        let all_h = key_lines.len() + 1 + mark_lines.len();
        let room = area.height.saturating_sub(2) as usize;
        let mut pages: Vec<Vec<Line>> = if all_h <= room {
            let mut all = key_lines;
            all.push(Line::from(""));
            all.extend(mark_lines);
            vec![all]
        } else {
            vec![key_lines, mark_lines]
        };
        let n_pages = pages.len();
        let page = ui.help_page % n_pages;
        let mut lines = std::mem::take(&mut pages[page]);
        if n_pages > 1 {
            lines.push(Line::from(""));
            lines.push(Line::from(Span::styled(
                if page == 0 {
                    "Space: next page (marks, columns, words) · any other key closes"
                } else {
                    "Space: back to the keys · any other key closes"
                },
                theme.strong(),
            )));
        }
        let h = (lines.len() + 2) as u16;
        let title = if n_pages > 1 {
            format!(" HELP · page {} of {n_pages} ", page + 1)
        } else {
            " HELP · keys and marks ".to_string()
        };
        let inner = dialog(
            buf,
            area,
            78,
            h,
            Span::styled(title, theme.flag(theme.fg)),
            theme,
            false,
        );
        Paragraph::new(lines)
            .style(theme.base())
            .wrap(Wrap { trim: false })
            .render(inner, buf);
    }
}
