//! The wide layout's recent events: the latest lines of the event log that fit.

use crate::engine::snapshot::Snapshot;
use crate::tui::format::fit;
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Paragraph, Widget};

/// The recent events panel; draws nothing in fewer than three rows.
pub struct RecentEvents<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for RecentEvents<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let RecentEvents { snap, theme } = self;
        if area.height < 3 {
            return;
        }
        let rows = area.height.saturating_sub(2) as usize;
        let width = area.width.saturating_sub(2) as usize;
        let skip = snap.recent_events.len().saturating_sub(rows);
        let lines: Vec<Line> = snap.recent_events[skip..]
            .iter()
            .map(|e| Line::from(Span::styled(fit(e, width), theme.base())))
            .collect();
        Paragraph::new(lines)
            .style(theme.base())
            .block(
                Block::bordered()
                    .border_style(theme.border())
                    .title(Span::styled(" recent events ", theme.strong())),
            )
            .render(area, buf);
    }
}
