//! The heading trace: recent headings over time, turn lines and the flight strip.

use crate::engine::snapshot::Snapshot;
use crate::frames::wrap_360_deg;
use crate::tui::format::duration;
use crate::tui::raster::{Mark, Raster};
use crate::tui::state::{HeadingFrame, UiState};
use crate::tui::theme::Theme;
use ratatui::buffer::Buffer;
use ratatui::layout::Rect;
use ratatui::text::Span;
use ratatui::widgets::{Block, Widget};

/// The trace panel: the chosen frame's heading over the chosen span, flying points only.
pub struct Trace<'a> {
    /// What to draw.
    pub snap: &'a Snapshot,
    /// The screen's own state (frame, span, marks).
    pub ui: &'a UiState,
    /// Colours.
    pub theme: &'a Theme,
}

impl Widget for Trace<'_> {
    fn render(self, area: Rect, buf: &mut Buffer) {
        let Trace { snap, ui, theme } = self;
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
        block.render(area, buf);
        if inner.width < 12 || inner.height < 3 {
            return;
        }
        // Axis labels are angles with their unit ("270°") and a space before the plot.
        let axis_w = 5u16;
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
        raster.paint(buf, plot, theme);

        // Y-axis labels, on the rows where the raster puts those headings.
        let dots_per_row = dots_h / plot.height.max(1) as f64;
        for (label, v) in [
            ("360°", 360.0),
            ("270°", 270.0),
            ("180°", 180.0),
            (" 90°", 90.0),
            ("  0°", 0.0),
        ] {
            let row = (to_py(v).clamp(0.0, dots_h - 1.0) / dots_per_row).floor() as u16;
            buf.set_string(
                inner.x,
                plot.y + row.min(plot.height - 1),
                label,
                theme.strong(),
            );
        }
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
}

fn format_half(minutes: f64) -> String {
    if (minutes - minutes.round()).abs() < 1e-9 {
        format!("{minutes:.0}")
    } else {
        format!("{minutes:.1}")
    }
}
