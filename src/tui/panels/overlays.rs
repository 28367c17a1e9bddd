//! Overlays drawn over the screen: the turn prompt, confirmations, the note line, the end box.

use crate::engine::snapshot::Snapshot;
use crate::tui::format::{countdown, duration};
use crate::tui::panels::help::Help;
use crate::tui::state::{Mode, UiState};
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, BorderType, Clear, Paragraph, Widget, Wrap};

/// Seconds a prompt may wait past its due time before the screen calls it late (a display rule
/// of our own: time to turn the arena by hand or place a filter). The plan counts prompts as
/// instant, so the engine's `countdown_s` turns negative the moment a prompt appears; without
/// this allowance every prompt read `LATE` from its first frame.
pub const PROMPT_GRACE_S: f64 = 60.0;

/// Where a prompt stands against its due time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum PromptDue {
    /// Due in this many seconds.
    In(f64),
    /// Due now or past due, with this many seconds of the allowance left.
    Grace(f64),
    /// Late by this many seconds beyond the allowance.
    Late(f64),
}

/// Classifies a prompt's `countdown_s` (negative: past due) against [`PROMPT_GRACE_S`].
pub(crate) fn prompt_due(countdown_s: f64) -> PromptDue {
    if countdown_s > 0.0 {
        PromptDue::In(countdown_s)
    } else if countdown_s >= -PROMPT_GRACE_S || !countdown_s.is_finite() {
        PromptDue::Grace(PROMPT_GRACE_S + countdown_s.clamp(-PROMPT_GRACE_S, 0.0))
    } else {
        PromptDue::Late(-countdown_s - PROMPT_GRACE_S)
    }
}

/// A centered box of at most `w`×`h`, clipped to `area`, cleared and bordered.
pub(crate) fn dialog(
    buf: &mut Buffer,
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
    Clear.render(r, buf);
    buf.set_style(r, theme.base());
    let block = Block::bordered()
        .border_type(if thick {
            BorderType::Thick
        } else {
            BorderType::Plain
        })
        .border_style(theme.border())
        .title(title);
    let inner = block.inner(r);
    block.render(r, buf);
    inner
}

/// Whatever overlays the moment needs, drawn over the panels: the end box, help, the turn
/// prompt, a confirmation or the note line.
pub struct Overlays<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (keyboard mode).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for Overlays<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let Overlays { snap, ui, theme } = self;
        if snap.ended {
            draw_ended(buf, area, snap, theme);
            return;
        }
        if ui.mode == Mode::Help {
            Help { snap, ui, theme }.render(area, buf);
        }
        if let Some(p) = &snap.prompt {
            let w = area.width.saturating_sub(4).min(64);
            let text_w = w.saturating_sub(4).max(1) as usize;
            let text_lines = p.text.chars().count().div_ceil(text_w).max(1) as u16;
            let h = text_lines + 6;
            let inner = dialog(
                buf,
                area,
                w,
                h,
                Span::styled(" ACTION NEEDED ", theme.flag(theme.turn)),
                theme,
                true,
            );
            let due = match prompt_due(p.countdown_s) {
                PromptDue::In(s) => vec![
                    Span::styled("next epoch due in ", theme.base()),
                    Span::styled(countdown(s), theme.strong()),
                ],
                PromptDue::Grace(left) => vec![
                    Span::styled("next epoch due now ", theme.base()),
                    Span::styled(format!("({} to go)", countdown(left)), theme.strong()),
                ],
                PromptDue::Late(by) => vec![
                    Span::styled(
                        format!(" LATE by {} ", duration(by)),
                        theme.flag(theme.alarm),
                    ),
                    Span::styled(
                        format!(" past the {} allowed", duration(PROMPT_GRACE_S)),
                        theme.strong(),
                    ),
                ],
            };
            let mut lines = vec![Line::from(Span::styled(p.text.clone(), theme.strong()))];
            lines.push(Line::from(""));
            let mut l = due;
            l.push(Span::styled(
                format!("   waiting {}", duration(p.waiting_s)),
                theme.base(),
            ));
            lines.push(Line::from(l));
            let mut keys = vec![
                Span::styled(" Enter ", theme.flag(theme.fg)),
                Span::styled(" when done", theme.strong()),
            ];
            if p.turn_by_hand {
                keys.push(Span::styled(" ", theme.base()));
                keys.push(Span::styled(" x ", theme.flag(theme.fg)));
                keys.push(Span::styled(" could not turn", theme.strong()));
            }
            if snap.watch.turntable_faults > 0 && !snap.watch.turns_by_hand {
                keys.push(Span::styled(" ", theme.base()));
                keys.push(Span::styled(" b ", theme.flag(theme.fg)));
                keys.push(Span::styled(" later turns by hand", theme.strong()));
            }
            lines.push(Line::from(keys));
            Paragraph::new(lines)
                .style(theme.base())
                .wrap(Wrap { trim: true })
                .block(Block::default().padding(ratatui::widgets::Padding::horizontal(1)))
                .render(inner, buf);
        }
        match &ui.mode {
            Mode::ConfirmEnd => {
                let aborted = snap.watch.end_now_status != "complete";
                let inner = dialog(
                    buf,
                    area,
                    62,
                    if aborted { 9 } else { 7 },
                    Span::styled(" END SESSION? ", theme.flag(theme.alarm)),
                    theme,
                    true,
                );
                let mut lines = vec![Line::from(Span::styled(
                    "End the session now and save it?",
                    theme.strong(),
                ))];
                if aborted {
                    lines.push(Line::from(vec![
                        Span::styled("It is recorded as ", theme.strong()),
                        Span::styled(" ABORTED ", theme.flag(theme.caution)),
                        Span::styled(": the protocol is not done.", theme.strong()),
                    ]));
                    lines.push(Line::from(Span::styled(
                        "`batch` leaves aborted sessions out unless given --include-incomplete.",
                        theme.strong(),
                    )));
                } else {
                    lines.push(Line::from(Span::styled(
                        "Every epoch has run: it is recorded as complete.",
                        theme.strong(),
                    )));
                }
                lines.extend([
                    Line::from(""),
                    Line::from(vec![
                        Span::styled(" y ", theme.flag(theme.alarm)),
                        Span::styled(" yes, end   ", theme.strong()),
                        Span::styled("any other key: go on", theme.strong()),
                    ]),
                ]);
                Paragraph::new(lines)
                    .style(theme.base())
                    .wrap(Wrap { trim: true })
                    .render(inner, buf);
            }
            Mode::ConfirmSkip => {
                let inner = dialog(
                    buf,
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
                Paragraph::new(lines)
                    .style(theme.base())
                    .wrap(Wrap { trim: true })
                    .render(inner, buf);
            }
            Mode::Note(text) => {
                let w = area.width.saturating_sub(4).min(72);
                let inner = dialog(
                    buf,
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
                Paragraph::new(lines).style(theme.base()).render(inner, buf);
            }
            _ => {}
        }
    }
}

fn draw_ended(buf: &mut Buffer, area: Rect, snap: &Snapshot, theme: &Theme) {
    let dir = snap.session_dir.display().to_string();
    let summary = &snap.watch.end_summary;
    let widest = summary
        .iter()
        .map(|l| l.chars().count())
        .chain([dir.chars().count()])
        .max()
        .unwrap_or(0) as u16;
    let w = (widest + 6)
        .max(40)
        .min(area.width.saturating_sub(2).max(1));
    let inner = dialog(
        buf,
        area,
        w,
        8 + summary.len() as u16,
        Span::styled(" SESSION ENDED ", theme.flag(theme.good)),
        theme,
        true,
    );
    let reason = snap
        .end_reason
        .clone()
        .unwrap_or_else(|| "ended".to_string());
    let mut lines = vec![Line::from(vec![
        Span::styled("status: ", theme.base()),
        Span::styled(reason, theme.strong()),
    ])];
    lines.extend(
        summary
            .iter()
            .map(|l| Line::from(Span::styled(l.clone(), theme.strong()))),
    );
    lines.extend([
        Line::from(""),
        Line::from(Span::styled("session saved to", theme.strong())),
        Line::from(Span::styled(dir, theme.accent(theme.heading))),
        Line::from(Span::styled("any key closes", theme.base())),
    ]);
    Paragraph::new(lines)
        .style(theme.base())
        .wrap(Wrap { trim: false })
        .render(inner, buf);
}

/// The question before a session whose sky cannot show the sun: the plan's warnings, and
/// `y` to start anyway (anything else: not started, nothing written).
pub struct NoSunConfirm<'a> {
    /// The plan's warnings, one a line.
    pub warnings: &'a [String],
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for NoSunConfirm<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let NoSunConfirm { warnings, theme } = self;
        buf.set_style(area, theme.base());
        let w = area.width.saturating_sub(4).min(76);
        let text_w = w.saturating_sub(2).max(1) as usize;
        let text_h: usize = warnings
            .iter()
            .map(|l| l.chars().count().div_ceil(text_w).max(1))
            .sum();
        let inner = dialog(
            buf,
            area,
            w,
            text_h as u16 + 7,
            Span::styled(" SUN BELOW THE HORIZON ", theme.flag(theme.alarm)),
            theme,
            true,
        );
        let mut lines = vec![Line::from(Span::styled(
            "This open-sky session cannot show the sun:",
            theme.strong(),
        ))];
        lines.extend(
            warnings
                .iter()
                .map(|l| Line::from(Span::styled(l.clone(), theme.accent(theme.caution)))),
        );
        lines.push(Line::from(""));
        lines.push(Line::from(vec![
            Span::styled(" y ", theme.flag(theme.alarm)),
            Span::styled(" start anyway   ", theme.strong()),
            Span::styled("any other key: do not start", theme.strong()),
        ]));
        Paragraph::new(lines)
            .style(theme.base())
            .wrap(Wrap { trim: true })
            .render(inner, buf);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prompts_are_late_only_past_the_allowance() {
        assert_eq!(prompt_due(11.0), PromptDue::In(11.0));
        assert_eq!(prompt_due(0.0), PromptDue::Grace(PROMPT_GRACE_S));
        assert_eq!(prompt_due(-0.0), PromptDue::Grace(PROMPT_GRACE_S));
        assert_eq!(prompt_due(-4.0), PromptDue::Grace(PROMPT_GRACE_S - 4.0));
        assert_eq!(prompt_due(-PROMPT_GRACE_S), PromptDue::Grace(0.0));
        assert_eq!(prompt_due(-PROMPT_GRACE_S - 5.0), PromptDue::Late(5.0));
    }
}
