//! The dial: heading needle, arena mark, sun and zenith e-vector on a compass rim.

use crate::engine::snapshot::Snapshot;
use crate::frames::wrap_360_deg;
use crate::tui::state::{HeadingFrame, UiState};
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::style::Color;
use ratatui::symbols::Marker;
use ratatui::text::Span;
use ratatui::widgets::canvas::{Canvas, Circle, Line as CanvasLine};
use ratatui::widgets::{Block, Widget};

fn polar(r: f64, screen_deg: f64) -> (f64, f64) {
    let a = screen_deg.to_radians();
    (r * a.sin(), r * a.cos())
}

/// The dial panel: the chosen frame's 0 at the top, marks and labels on the rim.
pub struct Dial<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (frame, span, marks).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for Dial<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let Dial { snap, ui, theme } = self;
        let legend_full = "█● heading  A arena 0  * sun  ┄ e-vector";
        let legend_short = "█●head A 0 *sun ┄e";
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
        block.render(area, buf);
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
        let flying = snap.flying && !snap.health.sensor_lost && !snap.watch.heading_stale;
        // The e-vector the animal is shown (the sky's or a filter's); none under a diffuser.
        let ev = snap.evector_shown_deg;
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
                // E-vector axis shown: dashed, through the centre.
                if let Some(ev) = ev {
                    let a = screen(ev);
                    let mut r = -0.95;
                    while r < 0.95 {
                        let (x0, y0) = polar(r, a);
                        let (x1, y1) = polar((r + 0.09).min(0.95), a);
                        ctx.draw(&CanvasLine::new(x0, y0, x1, y1, col(theme.evector)));
                        r += 0.17;
                    }
                }
                if heading_world.is_none() {
                    ctx.print(
                        -0.3,
                        0.0,
                        Span::styled("no heading", theme.flag(theme.alarm)),
                    );
                }
            });
        canvas.render(inner, buf);

        // Cells, not dots, from here on: the needle and the labels are glyphs of their own, so
        // the needle (solid blocks) never looks like the e-vector (thin dashed dots), in colour
        // or not, and no two labels share or touch a cell.
        let cell_of = |x: f64, y: f64| -> (u16, u16) {
            let c = ((x + xr) / (2.0 * xr) * w).floor().clamp(0.0, w - 1.0) as u16;
            let r = ((yr - y) / (2.0 * yr) * h).floor().clamp(0.0, h - 1.0) as u16;
            (inner.x + c, inner.y + r)
        };
        let needle_style = theme.accent(theme.heading);
        if let Some(hw) = heading_world {
            let a = screen(hw);
            let centre = cell_of(0.0, 0.0);
            let mut cells: Vec<(u16, u16)> = Vec::new();
            let mut r = 0.0;
            while r <= 0.8 {
                let (x, y) = polar(r, a);
                let c = cell_of(x, y);
                if cells.last() != Some(&c) {
                    cells.push(c);
                }
                r += 0.01;
            }
            for (i, &(x, y)) in cells.iter().enumerate() {
                // Not flying: a dashed needle of the same blocks (the tip says ○ as well).
                if flying || i % 2 == 0 || (x, y) == centre {
                    buf[(x, y)].set_char('█').set_style(needle_style);
                }
            }
        }
        let mut labels: Vec<(&str, ratatui::style::Style, f64, f64)> = Vec::new();
        if let Some(hw) = heading_world {
            let (x, y) = polar(0.8, screen(hw));
            labels.push((if flying { "●" } else { "○" }, needle_style, x, y));
        }
        let row = 2.0 * yr / h;
        let label_r = (1.0 + 1.2 * row).min(1.3);
        let mark_r = (1.0 - row).clamp(0.8, 0.92);
        let (x, y) = polar(mark_r, screen(snap.arena_bearing_deg));
        labels.push(("A", theme.flag(theme.mark), x, y));
        let (x, y) = polar(mark_r, screen(snap.sun_azimuth_deg));
        labels.push(("*", theme.flag(theme.sun), x, y));
        for (name, b) in [("N", 0.0), ("E", 90.0), ("S", 180.0), ("W", 270.0)] {
            let (x, y) = polar(label_r, screen(b));
            labels.push((name, theme.strong(), x, y));
        }
        place_labels(buf, inner, &labels, cell_of);
    }
}

/// Nearby cells tried, in order, when a label's own cell is taken (column, row offsets).
const NUDGES: [(i32, i32); 21] = [
    (0, 0),
    (-1, 0),
    (1, 0),
    (0, -1),
    (0, 1),
    (-1, -1),
    (1, -1),
    (-1, 1),
    (1, 1),
    (-2, 0),
    (2, 0),
    (-2, -1),
    (2, -1),
    (-2, 1),
    (2, 1),
    (-3, 0),
    (3, 0),
    (0, -2),
    (0, 2),
    (-3, -1),
    (3, 1),
];

/// Writes one-cell `labels` (most important first) into `buf`, each in the nearest free cell
/// to where it belongs: a cell is free when no label already sits in it or beside it on its
/// row. A label with no free cell within the nudges is left out rather than overlapped.
fn place_labels(
    buf: &mut Buffer,
    inner: Rect,
    labels: &[(&str, ratatui::style::Style, f64, f64)],
    cell_of: impl Fn(f64, f64) -> (u16, u16),
) {
    let mut taken: Vec<(u16, u16)> = Vec::new();
    for &(text, style, x, y) in labels {
        let (cx, cy) = cell_of(x, y);
        let spot = NUDGES.iter().find_map(|&(dx, dy)| {
            let c = i32::from(cx) + dx;
            let r = i32::from(cy) + dy;
            let inside = c >= i32::from(inner.x)
                && c < i32::from(inner.x + inner.width)
                && r >= i32::from(inner.y)
                && r < i32::from(inner.y + inner.height);
            if !inside {
                return None;
            }
            let (c, r) = (c as u16, r as u16);
            let clear = taken.iter().all(|&(tc, tr)| tr != r || tc.abs_diff(c) > 1);
            clear.then_some((c, r))
        });
        if let Some((c, r)) = spot {
            buf.set_string(c, r, text, style);
            taken.push((c, r));
        }
    }
}
