//! The epoch table: one row per epoch, kept around the current one, columns fitted to width.

use crate::engine::snapshot::p_held_text;
use crate::engine::snapshot::{EpochRow, EpochState, Snapshot, TurnRow};
use crate::tui::format::{self, deg, duration, fit, r_value};
use crate::tui::panels::verdict;
use crate::tui::state::{HeadingFrame, UiState};
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::{Constraint, Rect};
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Cell, Row, Table, Widget};

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

fn table_title<'a>(snap: &Snapshot, frame: HeadingFrame, rows: usize, theme: &Theme) -> Line<'a> {
    let n = snap.epochs.len();
    let (a, b) = epoch_window(snap, rows);
    let range = if b - a < n && b > a {
        format!(" epochs {}–{} of {} ", a + 1, b, n)
    } else {
        format!(" epochs ({n}) ")
    };
    let mut spans = vec![Span::styled(range, theme.strong())];
    if frame == HeadingFrame::Sun {
        // The snapshot carries no sun-relative mean per epoch, so the table cannot follow the
        // screen into the sun frame: say which frame its means are in instead.
        spans.push(Span::styled(
            "· sun frame, means in world° ",
            theme.flag(theme.caution),
        ));
    }
    spans.push(Span::styled(
        format!(
            "· session r world {} arena {} ",
            r_value(snap.r_world),
            r_value(snap.r_arena)
        ),
        theme.strong(),
    ));
    Line::from(spans)
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
            header: "p held",
            width: 6,
            prio: 8,
            cell: Box::new(move |e| p_held_text(e.p_oriented)),
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

/// The epoch table panel; its title names the epochs in view and the session's r.
pub struct EpochTable<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (the frame picks the mean column on narrow screens).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
    /// A full box (wide layout) instead of a rule above the table (compact layout).
    pub boxed: bool,
}

impl Widget for EpochTable<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let EpochTable {
            snap,
            ui,
            theme,
            boxed,
        } = self;
        let block = if boxed {
            Block::bordered()
        } else {
            Block::default().borders(Borders::TOP)
        }
        .border_style(theme.border());
        // Rows of epochs in view: the block's inner height less the column header.
        let rows = block.inner(area).height.saturating_sub(1) as usize;
        let block = block.title(table_title(snap, ui.frame, rows, theme));
        let inner = block.inner(area);
        block.render(area, buf);
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
        table.render(inner, buf);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
