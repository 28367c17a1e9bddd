//! `report`'s figures for one session: the heading trace (two columns), the epoch roses (a
//! grid, two columns), the sun-relative rose and the turn responses (one column each).

use super::legend::{self, Entry, Key, PxRect};
use super::polar::{self, Dial};
use super::style::{self, DrawResult, FigureSize, err, line, pt};
use super::{Figure, write_figure};
use crate::analysis::AnalysisError;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};
use std::path::{Path, PathBuf};

/// Headings of one rose.
#[derive(Debug, Clone, Default)]
pub struct CircularPanel {
    /// Title above the rose, e.g. "E2 diffuser".
    pub title: String,
    /// Headings in degrees.
    pub headings_deg: Vec<f64>,
    /// Label drawn at 0 (top), e.g. "N", "0 mark" or "sun".
    pub zero_label: String,
}

/// The heading trace to draw.
#[derive(Debug, Clone, Default)]
pub struct Trace {
    /// (minutes, world heading, arena heading, scored), already thinned for drawing.
    pub points: Vec<(f64, f64, f64, bool)>,
    /// Stretches not scored (settle windows, turns, flight stops), minutes.
    pub excluded: Vec<(f64, f64)>,
    /// Turns: (minute, label).
    pub turns: Vec<(f64, String)>,
    /// Epoch labels: (minute at the epoch's middle, label).
    pub epochs: Vec<(f64, String)>,
    /// Session length, minutes.
    pub end_min: f64,
}

/// One turn for the turn-response figure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TurnPoint {
    /// The turn, degrees.
    pub turn_deg: f64,
    /// World shift, degrees.
    pub world_shift_deg: f64,
    /// Arena shift, degrees.
    pub arena_shift_deg: f64,
}

/// Everything `report` draws.
#[derive(Debug, Clone, Default)]
pub struct FigureData {
    /// Per epoch: (arena rose, world rose).
    pub epoch_panels: Vec<(CircularPanel, CircularPanel)>,
    /// Trace.
    pub trace: Trace,
    /// Sun-relative headings.
    pub sun: CircularPanel,
    /// Turns.
    pub turns: Vec<TurnPoint>,
}

/// Size of the heading trace: two columns, 120 mm high.
pub const TRACE_SIZE: FigureSize = FigureSize {
    width_mm: style::TWO_COLUMN_MM,
    height_mm: 120.0,
};
/// Size of the turn-response figure: one column, 95 mm high.
pub const TURNS_SIZE: FigureSize = FigureSize {
    width_mm: style::ONE_COLUMN_MM,
    height_mm: 95.0,
};
/// Size of the sun-relative rose: one column, 90 mm high.
pub const SUN_SIZE: FigureSize = FigureSize {
    width_mm: style::ONE_COLUMN_MM,
    height_mm: 90.0,
};
/// Roses per row in the epoch grid (two columns wide: 36 mm per rose).
pub const ROSES_PER_ROW: usize = 5;

/// Where the parts of a figure with a legend strip go, in device pixels.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// The legend strip.
    pub legend: PxRect,
    /// The chart panels (each holds its data area, axes and labels).
    pub panels: Vec<PxRect>,
}

fn trace_legend() -> Vec<Entry> {
    vec![
        Entry::new(
            Key::Marker(style::Shape::Circle, style::BLUE),
            "scored sample",
        ),
        Entry::new(Key::Cross(style::GREY), "sample not scored"),
        Entry::new(
            Key::Swatch(style::SHADE),
            "not scored (settle, turn, flight stop)",
        ),
        Entry::new(Key::Dashed(BLACK, line::THIN + 1), "arena turn"),
    ]
}

/// The heading trace's layout: the legend strip on top, then the world and the arena panel.
pub fn trace_layout() -> Layout {
    let (w, h) = TRACE_SIZE.px();
    let (w, h) = (w as i32, h as i32);
    let lh = legend::strip_height(w, &trace_legend());
    let rest = h - lh;
    let top = rest * 47 / 100;
    Layout {
        legend: PxRect {
            x0: 0,
            y0: 0,
            x1: w,
            y1: lh,
        },
        panels: vec![
            PxRect {
                x0: 0,
                y0: lh,
                x1: w,
                y1: lh + top,
            },
            PxRect {
                x0: 0,
                y0: lh + top,
                x1: w,
                y1: h,
            },
        ],
    }
}

fn sub<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, r: PxRect) -> DrawingArea<DB, Shift> {
    root.clone()
        .shrink((r.x0, r.y0), (r.width() as u32, r.height() as u32))
}

fn line_px(pt_size: f64) -> i32 {
    (style::pt_to_px(pt_size) * 1.5).round() as i32
}

impl Figure for Trace {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let layout = trace_layout();
        legend::draw(root, layout.legend, &trace_legend())?;
        draw_trace_panel(root, &sub(root, layout.panels[0]), self, true)?;
        draw_trace_panel(root, &sub(root, layout.panels[1]), self, false)
    }
}

fn draw_trace_panel<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    area: &DrawingArea<DB, Shift>,
    trace: &Trace,
    world: bool,
) -> DrawResult {
    let end = trace.end_min.max(1e-3);
    let ylabel = if world {
        "world heading (° from N)"
    } else {
        "arena heading (° from 0 mark)"
    };
    let small = line_px(pt::SMALL);
    let mut chart = ChartBuilder::on(area)
        .margin_top(if world { 2 * small + 10 } else { 20 })
        .margin_right(40)
        .margin_left(40)
        .x_label_area_size(if world { small + 30 } else { 2 * small + 40 })
        .y_label_area_size(small * 2 + 70)
        .build_cartesian_2d(0f64..end, 0f64..360f64)
        .map_err(err)?;
    let mut mesh = chart.configure_mesh();
    mesh.disable_x_mesh()
        .disable_y_mesh()
        .y_labels(0)
        .x_labels(0)
        .y_desc(ylabel)
        .label_style(style::font(pt::SMALL))
        .axis_desc_style(style::font(pt::LABEL))
        .axis_style(BLACK.stroke_width(line::THIN))
        .bold_line_style(style::SHADE.stroke_width(1))
        .light_line_style(TRANSPARENT)
        .set_all_tick_mark_size(12);
    if !world {
        mesh.x_desc("time since start (min)");
    }
    mesh.draw().map_err(err)?;
    y_ticks(root, &chart, (0.0, end), &[0.0, 90.0, 180.0, 270.0, 360.0])?;
    let step = nice_step(end / 8.0);
    let minutes: Vec<f64> = (0..)
        .map(|i| i as f64 * step)
        .take_while(|m| *m <= end + 1e-9)
        .collect();
    x_ticks(root, &chart, (0.0, 360.0), &minutes, false)?;
    chart
        .draw_series(
            trace
                .excluded
                .iter()
                .map(|&(a, b)| Rectangle::new([(a, 0.0), (b, 360.0)], style::SHADE.filled())),
        )
        .map_err(err)?;
    let y = |p: &(f64, f64, f64, bool)| if world { p.1 } else { p.2 };
    chart
        .draw_series(
            trace
                .points
                .iter()
                .filter(|p| !p.3)
                .map(|p| Cross::new((p.0, y(p)), 4, style::GREY.stroke_width(1))),
        )
        .map_err(err)?;
    chart
        .draw_series(
            trace
                .points
                .iter()
                .filter(|p| p.3)
                .map(|p| Circle::new((p.0, y(p)), 3, style::BLUE.filled())),
        )
        .map_err(err)?;
    for (m, _) in &trace.turns {
        chart
            .draw_series(std::iter::once(DashedPathElement::new(
                vec![(*m, 0.0), (*m, 360.0)],
                14,
                8,
                BLACK.stroke_width(line::THIN + 1),
            )))
            .map_err(err)?;
    }
    if world {
        // Epoch labels on the upper line and turn labels on the lower line of the band above
        // the data, so neither covers a sample.
        // A label that would run into the one before it is left out (many short epochs).
        let width = |t: &str| {
            style::font(pt::SMALL)
                .font
                .box_size(t)
                .map_or(t.len() as i32 * 18, |(w, _)| w as i32)
        };
        let mut right = i32::MIN;
        for (m, label) in &trace.epochs {
            let (x, top) = chart.backend_coord(&(*m, 360.0));
            let w = width(label);
            if x - w / 2 < right + 16 {
                continue;
            }
            right = x + w / 2;
            root.draw(&Text::new(
                label.clone(),
                (x, top - small - 8),
                style::anchored(pt::SMALL, HPos::Center, VPos::Bottom),
            ))
            .map_err(err)?;
        }
        let mut right = i32::MIN;
        for (m, label) in &trace.turns {
            let (x, top) = chart.backend_coord(&(*m, 360.0));
            let label = label.trim();
            if x + 6 < right + 16 {
                continue;
            }
            right = x + 6 + width(label);
            root.draw(&Text::new(
                label.to_string(),
                (x + 6, top - 6),
                style::anchored(pt::SMALL, HPos::Left, VPos::Bottom),
            ))
            .map_err(err)?;
        }
    }
    Ok(())
}

type Chart<'a, DB> = ChartContext<
    'a,
    DB,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// Y ticks at exactly `values` (plotters picks its own round steps): a light grid line across
/// the data, a tick mark and a label left of the axis.
fn y_ticks<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    chart: &Chart<'_, DB>,
    (x0, x1): (f64, f64),
    values: &[f64],
) -> DrawResult {
    for &v in values {
        let (l, y) = chart.backend_coord(&(x0, v));
        let (r, _) = chart.backend_coord(&(x1, v));
        root.draw(&PathElement::new(
            vec![(l, y), (r, y)],
            style::SHADE.stroke_width(1),
        ))
        .map_err(err)?;
        root.draw(&PathElement::new(
            vec![(l - 12, y), (l, y)],
            BLACK.stroke_width(line::THIN),
        ))
        .map_err(err)?;
        root.draw(&Text::new(
            format!("{v:.0}"),
            (l - 18, y),
            style::anchored(pt::SMALL, HPos::Right, VPos::Center),
        ))
        .map_err(err)?;
    }
    Ok(())
}

/// A round tick step (1, 2 or 5 × 10^k) at or above `raw`.
pub fn nice_step(raw: f64) -> f64 {
    if raw.is_nan() || raw <= 0.0 {
        return 1.0;
    }
    let k = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * k)
        .find(|s| *s >= raw * (1.0 - 1e-9))
        .unwrap_or(10.0 * k)
}

fn tick_label(v: f64, step: f64) -> String {
    let digits = if step >= 1.0 {
        0
    } else {
        (-step.log10().floor()) as usize
    };
    format!("{v:.digits$}")
}

/// X ticks at exactly `values` (a grid line across the data only with `grid`), as
/// [`y_ticks`].
fn x_ticks<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    chart: &Chart<'_, DB>,
    (y0, y1): (f64, f64),
    values: &[f64],
    grid: bool,
) -> DrawResult {
    let step = if values.len() > 1 {
        values[1] - values[0]
    } else {
        1.0
    };
    for &v in values {
        let (x, b) = chart.backend_coord(&(v, y0));
        let (_, t) = chart.backend_coord(&(v, y1));
        if grid {
            root.draw(&PathElement::new(
                vec![(x, b), (x, t)],
                style::SHADE.stroke_width(1),
            ))
            .map_err(err)?;
        }
        root.draw(&PathElement::new(
            vec![(x, b), (x, b + 12)],
            BLACK.stroke_width(line::THIN),
        ))
        .map_err(err)?;
        root.draw(&Text::new(
            tick_label(v, step),
            (x, b + 18),
            style::anchored(pt::SMALL, HPos::Center, VPos::Top),
        ))
        .map_err(err)?;
    }
    Ok(())
}

/// The epoch roses: a block of world-frame roses, then a block of arena-frame roses,
/// [`ROSES_PER_ROW`] per row.
struct EpochRoses<'a>(&'a [(CircularPanel, CircularPanel)]);

fn rose_cell_h() -> i32 {
    let (w, _) = FigureSize::two_columns(1.0).px();
    w as i32 / ROSES_PER_ROW as i32 + 2 * line_px(pt::LABEL)
}

fn roses_size(epochs: usize) -> FigureSize {
    if epochs == 0 {
        return FigureSize::two_columns(20.0);
    }
    let rows = epochs.div_ceil(ROSES_PER_ROW) as i32;
    let h = 2 * (line_px(pt::LABEL) + rows * rose_cell_h());
    FigureSize::two_columns(h as f64 / style::DPI * 25.4)
}

impl Figure for EpochRoses<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let (w, _) = root.dim_in_pixel();
        if self.0.is_empty() {
            return root
                .draw(&Text::new(
                    "no epochs with scored samples",
                    (40, 40),
                    style::font(pt::LABEL),
                ))
                .map_err(err);
        }
        let rows = self.0.len().div_ceil(ROSES_PER_ROW) as i32;
        let block = line_px(pt::LABEL) + rows * rose_cell_h();
        for (b, heading) in [
            "World frame (0 = true north)",
            "Arena frame (0 = arena mark)",
        ]
        .iter()
        .enumerate()
        {
            let y0 = b as i32 * block;
            root.draw(&Text::new(
                heading.to_string(),
                (20, y0 + 6),
                style::anchored(pt::LABEL, HPos::Left, VPos::Top),
            ))
            .map_err(err)?;
            let area = PxRect {
                x0: 0,
                y0: y0 + line_px(pt::LABEL),
                x1: w as i32,
                y1: y0 + block,
            };
            let cells = polar::grid(area, self.0.len(), ROSES_PER_ROW, rose_cell_h());
            for ((arena, world), cell) in self.0.iter().zip(cells) {
                draw_rose_panel(root, cell, if b == 0 { world } else { arena })?;
            }
        }
        Ok(())
    }
}

/// One rose in `cell`: title, dial with rings labelled in samples, wedges, the mean vector
/// (arrow, length r on the scale outer circle = 1) and n, mean and r below.
fn draw_rose_panel<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    cell: PxRect,
    panel: &CircularPanel,
) -> DrawResult {
    let dial = Dial::in_cell(cell, 2);
    let (counts, acc) = polar::rose_counts(&panel.headings_deg);
    let max = counts.iter().copied().max().unwrap_or(0) as f64;
    let full = polar::nice_ceiling(max);
    polar::draw_title(root, cell, &panel.title)?;
    polar::draw_rose(root, &dial, &counts, full)?;
    let ring = |v: f64| format!("{v}");
    polar::draw_dial(
        root,
        &dial,
        &panel.zero_label,
        &[(0.5, ring(full / 2.0)), (1.0, ring(full))],
    )?;
    let footer = match acc.mean_deg() {
        Some(m) => {
            polar::draw_arrow(root, &dial, m, acc.r(), BLACK, line::NORMAL)?;
            vec![
                format!("n = {}, r = {:.2}", acc.n(), acc.r()),
                format!("mean {m:.0}°"),
            ]
        }
        None => vec![format!("n = {}", acc.n()), String::new()],
    };
    polar::draw_footer(root, cell, &footer)
}

struct SunRose<'a>(&'a CircularPanel);

impl Figure for SunRose<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let (w, h) = root.dim_in_pixel();
        let cell = PxRect {
            x0: 0,
            y0: 0,
            x1: w as i32,
            y1: h as i32,
        };
        draw_rose_panel(root, cell, self.0)
    }
}

fn turn_legend(with_points: bool) -> Vec<Entry> {
    let mut v = hypothesis_entries();
    if with_points {
        v.push(Entry::new(
            Key::Marker(style::Shape::Circle, BLACK),
            "one turn",
        ));
    }
    v
}

/// The turn-response figure's layout: the legend strip on top, the chart below.
pub fn turns_layout() -> Layout {
    let (w, h) = TURNS_SIZE.px();
    let lh = legend::strip_height(w as i32, &turn_legend(true));
    Layout {
        legend: PxRect {
            x0: 0,
            y0: 0,
            x1: w as i32,
            y1: lh,
        },
        panels: vec![PxRect {
            x0: 0,
            y0: lh,
            x1: w as i32,
            y1: h as i32,
        }],
    }
}

/// The legend entries of the two hypotheses' lines that [`draw_turn_chart`] draws (same colours
/// and dashes), for every figure that shows the chart.
pub fn hypothesis_entries() -> Vec<Entry> {
    vec![
        Entry::new(
            Key::Line(style::BLUE, line::NORMAL),
            "world heading kept: shift = 0",
        ),
        Entry::new(
            Key::Dashed(style::VERMILLION, line::NORMAL),
            "arena heading kept: shift = turn",
        ),
    ]
}

/// A turn-response chart in `area`: world shift against the turn, both hypotheses' lines, and
/// the points drawn by `points` (given the chart's pixel mapping).
pub fn draw_turn_chart<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    area: &DrawingArea<DB, Shift>,
    points: &[(f64, f64, style::Shape, RGBColor)],
    empty_note: &str,
) -> DrawResult {
    let small = line_px(pt::SMALL);
    let ticks = vec![-180.0, -90.0, 0.0, 90.0, 180.0];
    let mut chart = ChartBuilder::on(area)
        .margin_top(20)
        .margin_right(40)
        .margin_left(40)
        .x_label_area_size(2 * small + 40)
        .y_label_area_size(2 * small + 90)
        .build_cartesian_2d(-200f64..200f64, -200f64..200f64)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_labels(0)
        .y_labels(0)
        .x_desc("arena turn (°, clockwise +)")
        .y_desc("world heading shift (°)")
        .label_style(style::font(pt::SMALL))
        .axis_desc_style(style::font(pt::LABEL))
        .axis_style(BLACK.stroke_width(line::THIN))
        .bold_line_style(style::SHADE.stroke_width(1))
        .light_line_style(TRANSPARENT)
        .set_all_tick_mark_size(12)
        .draw()
        .map_err(err)?;
    y_ticks(root, &chart, (-200.0, 200.0), &ticks)?;
    x_ticks(root, &chart, (-200.0, 200.0), &ticks, true)?;
    chart
        .draw_series(std::iter::once(PathElement::new(
            vec![(-180.0, 0.0), (180.0, 0.0)],
            style::BLUE.stroke_width(line::NORMAL),
        )))
        .map_err(err)?;
    chart
        .draw_series(std::iter::once(DashedPathElement::new(
            vec![(-180.0, -180.0), (180.0, 180.0)],
            16,
            10,
            style::VERMILLION.stroke_width(line::NORMAL),
        )))
        .map_err(err)?;
    for &(x, y, shape, colour) in points {
        let p = chart.backend_coord(&(x, y));
        style::draw_marker(root, p, style::MARKER_PX, shape, colour)?;
    }
    if points.is_empty() {
        let p = chart.backend_coord(&(0.0, -120.0));
        root.draw(&Text::new(
            empty_note.to_string(),
            p,
            style::centred(pt::SMALL),
        ))
        .map_err(err)?;
    }
    Ok(())
}

struct Turns<'a>(&'a [TurnPoint]);

impl Figure for Turns<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let layout = turns_layout();
        legend::draw(root, layout.legend, &turn_legend(true))?;
        let pts: Vec<_> = self
            .0
            .iter()
            .map(|t| (t.turn_deg, t.world_shift_deg, style::Shape::Circle, BLACK))
            .collect();
        draw_turn_chart(
            root,
            &sub(root, layout.panels[0]),
            &pts,
            "no turn with scored samples on both sides",
        )
    }
}

/// Writes `report`'s four figures (SVG and PNG each) into `out`; returns the files written:
/// `heading_trace_2col`, `epoch_roses_2col`, `sun_relative_1col`, `turn_responses_1col`.
pub fn write_figures(out: &Path, data: &FigureData) -> Result<Vec<PathBuf>, AnalysisError> {
    let mut files = Vec::new();
    files.extend(write_figure(out, "heading_trace", TRACE_SIZE, &data.trace)?);
    files.extend(write_figure(
        out,
        "epoch_roses",
        roses_size(data.epoch_panels.len()),
        &EpochRoses(&data.epoch_panels),
    )?);
    files.extend(write_figure(
        out,
        "sun_relative",
        SUN_SIZE,
        &SunRose(&data.sun),
    )?);
    files.extend(write_figure(
        out,
        "turn_responses",
        TURNS_SIZE,
        &Turns(&data.turns),
    )?);
    Ok(files)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tick_steps_are_round_and_labels_show_their_decimals() {
        assert_eq!(nice_step(0.6), 1.0);
        assert_eq!(nice_step(1.2), 2.0);
        assert_eq!(nice_step(3.0), 5.0);
        assert_eq!(nice_step(7.5), 10.0);
        assert_eq!(nice_step(0.03), 0.05);
        assert_eq!(tick_label(1.5, 0.5), "1.5");
        assert_eq!(tick_label(20.0, 10.0), "20");
    }

    #[test]
    fn legends_lie_outside_every_panel() {
        style::register_font();
        for layout in [trace_layout(), turns_layout()] {
            assert!(layout.legend.height() > 0);
            for p in &layout.panels {
                assert!(!layout.legend.intersects(p), "{layout:?}");
            }
        }
        let t = trace_layout();
        assert!(!t.panels[0].intersects(&t.panels[1]));
        assert_eq!(t.panels[1].y1, TRACE_SIZE.px().1 as i32);
    }
}
