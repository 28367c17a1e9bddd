//! Flowed text lines: items of spans laid out left to right with separators, wrapped onto a
//! few lines, dropping what does not fit (items come in priority order).

use crate::tui::format::fit;
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Widget};

/// One item of a flowed line: spans kept together.
pub(crate) type Item<'a> = Vec<Span<'a>>;

pub(crate) fn item_width(item: &Item) -> usize {
    item.iter().map(|s| s.width()).sum()
}

/// Lays items out left to right with separators, wrapping onto at most `max_lines` lines.
/// Items that do not fit are dropped (items come in priority order).
pub(crate) fn flow<'a>(
    items: Vec<Item<'a>>,
    width: u16,
    max_lines: usize,
    theme: &Theme,
) -> Vec<Line<'a>> {
    flow_with(items, width, max_lines, theme, " │ ")
}

/// [`flow`] with a chosen separator.
pub(crate) fn flow_with<'a>(
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

/// Lines laid out for one width, ready to draw: a layout reads their height before it splits
/// the screen, then draws them into the area it gave them.
pub struct TextLines<'a> {
    lines: Vec<Line<'a>>,
    style: Style,
}

impl<'a> TextLines<'a> {
    /// `lines` on the theme's base style.
    pub fn new(lines: Vec<Line<'a>>, theme: &Theme) -> Self {
        TextLines {
            lines,
            style: theme.base(),
        }
    }

    /// Rows the lines take.
    pub fn height(&self) -> u16 {
        self.lines.len() as u16
    }
}

impl Widget for TextLines<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        Paragraph::new(self.lines)
            .style(self.style)
            .render(area, buf);
    }
}
