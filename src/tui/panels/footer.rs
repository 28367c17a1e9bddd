//! The key footer: hints with priorities, the least needed dropped first on narrow screens.

use crate::engine::snapshot::Snapshot;
use crate::tui::lines::{Item, TextLines, flow_with, item_width};
use crate::tui::state::UiState;
use crate::tui::theme::Theme;
use ratatui::text::{Line, Span};

/// The key footer for a screen `width` cells wide; the wide layout adds the view keys.
pub fn footer<'a>(
    snap: &Snapshot,
    ui: &UiState,
    theme: &Theme,
    wide: bool,
    width: u16,
) -> TextLines<'a> {
    let sep = if wide { "  " } else { " " };
    TextLines::new(
        footer_line(footer_items(snap, ui, theme, wide), width, sep, theme),
        theme,
    )
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
