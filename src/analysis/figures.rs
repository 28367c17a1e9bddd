//! Figures for `report`, drawn with plotters into SVG and PNG.
//!
//! Meant to read in print and in greyscale: black outlines, grey fills, dashed and solid
//! lines and different marker shapes carry the meaning, never colour alone. Headings are drawn
//! compass style: 0 at the top, clockwise.

use super::AnalysisError;
use crate::circular::HeadingAccumulator;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::{Path, PathBuf};
use std::sync::Once;

/// The font embedded in the binary (DejaVu Sans, Bitstream Vera licence: assets/).
static FONT: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");
/// The family name the figures ask for.
const FAMILY: &str = "sans-serif";

/// Registers the embedded font once, so no system font is needed.
pub fn register_font() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // The bytes are a valid TrueType file checked in tests; a failure here would only lose
        // the text, not the figure, so it is ignored.
        let _ = plotters::style::register_font(FAMILY, FontStyle::Normal, FONT);
    });
}

const GREY_FILL: RGBColor = RGBColor(170, 170, 170);
const LIGHT: RGBColor = RGBColor(225, 225, 225);
const MID: RGBColor = RGBColor(120, 120, 120);

fn font(size: f64) -> TextStyle<'static> {
    (FAMILY, size).into_font().color(&BLACK)
}

fn centred(size: f64) -> TextStyle<'static> {
    font(size).pos(Pos::new(HPos::Center, VPos::Center))
}

type DrawResult = Result<(), String>;

fn err<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

/// Headings of one panel of a circular histogram.
#[derive(Debug, Clone, Default)]
pub struct CircularPanel {
    /// Title above the panel.
    pub title: String,
    /// Headings in degrees.
    pub headings_deg: Vec<f64>,
    /// Label drawn at 0 (top), e.g. "N" or "0 (arena mark)" or "sun".
    pub zero_label: String,
}

/// x, y of a compass direction at radius `r` (0 at the top, clockwise).
fn polar(deg: f64, r: f64) -> (f64, f64) {
    let a = deg.to_radians();
    (r * a.sin(), r * a.cos())
}

/// Draws one circular histogram (10° bins, wedge length ∝ count / largest count) with the
/// mean vector (length r) as a thick arrow.
fn draw_circular<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    panel: &CircularPanel,
) -> DrawResult {
    let mut chart = ChartBuilder::on(area)
        .caption(&panel.title, font(16.0))
        .margin(6)
        .build_cartesian_2d(-1.3f64..1.3f64, -1.3f64..1.3f64)
        .map_err(err)?;
    // Reference rings at r = 0.5 and 1 and the four axes.
    for ring in [0.5, 1.0] {
        let pts: Vec<(f64, f64)> = (0..=120).map(|i| polar(i as f64 * 3.0, ring)).collect();
        chart
            .draw_series(std::iter::once(PathElement::new(pts, MID.stroke_width(1))))
            .map_err(err)?;
    }
    for deg in [0.0, 90.0, 180.0, 270.0] {
        let (x, y) = polar(deg, 1.0);
        chart
            .draw_series(std::iter::once(DashedPathElement::new(
                vec![(0.0, 0.0), (x, y)],
                3,
                3,
                MID.stroke_width(1),
            )))
            .map_err(err)?;
    }
    const BINS: usize = 36;
    let mut counts = [0u64; BINS];
    let mut acc = HeadingAccumulator::new();
    for &h in &panel.headings_deg {
        let b = ((crate::frames::wrap_360_deg(h) / 360.0 * BINS as f64) as usize).min(BINS - 1);
        counts[b] += 1;
        acc.push_deg(h);
    }
    let max = counts.iter().copied().max().unwrap_or(0).max(1) as f64;
    let width = 360.0 / BINS as f64;
    let wedges: Vec<Polygon<(f64, f64)>> = counts
        .iter()
        .enumerate()
        .filter(|(_, c)| **c > 0)
        .map(|(i, &c)| {
            let r = c as f64 / max;
            let a0 = i as f64 * width;
            let mut pts = vec![(0.0, 0.0)];
            for k in 0..=4 {
                pts.push(polar(a0 + width * k as f64 / 4.0, r));
            }
            Polygon::new(pts, GREY_FILL.filled())
        })
        .collect();
    chart.draw_series(wedges).map_err(err)?;
    // Wedge outlines in black so they survive greyscale printing.
    let outlines: Vec<PathElement<(f64, f64)>> = counts
        .iter()
        .enumerate()
        .filter(|(_, c)| **c > 0)
        .map(|(i, &c)| {
            let r = c as f64 / max;
            let a0 = i as f64 * width;
            let mut pts = vec![(0.0, 0.0)];
            for k in 0..=4 {
                pts.push(polar(a0 + width * k as f64 / 4.0, r));
            }
            pts.push((0.0, 0.0));
            PathElement::new(pts, BLACK.stroke_width(1))
        })
        .collect();
    chart.draw_series(outlines).map_err(err)?;
    // Mean vector: length r on the outer ring's scale.
    if let Some(m) = acc.mean_deg() {
        let tip = polar(m, acc.r());
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(0.0, 0.0), tip],
                BLACK.stroke_width(3),
            )))
            .map_err(err)?;
        chart
            .draw_series(std::iter::once(Circle::new(tip, 5, BLACK.filled())))
            .map_err(err)?;
    }
    // Direction labels.
    for (deg, label) in [
        (0.0, panel.zero_label.as_str()),
        (90.0, "90"),
        (180.0, "180"),
        (270.0, "270"),
    ] {
        let (x, y) = polar(deg, 1.16);
        chart
            .draw_series(std::iter::once(Text::new(
                label.to_string(),
                (x, y),
                centred(13.0),
            )))
            .map_err(err)?;
    }
    let stats = match acc.mean_deg() {
        Some(m) => format!("n={}  mean={:.0}°  r={:.2}", acc.n(), m, acc.r()),
        None => format!("n={}", acc.n()),
    };
    chart
        .draw_series(std::iter::once(Text::new(
            stats,
            (0.0, -1.24),
            centred(13.0),
        )))
        .map_err(err)?;
    Ok(())
}

/// Circular histograms: one row per epoch, arena frame on the left, world frame on the right.
pub fn draw_epoch_histograms<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    rows: &[(CircularPanel, CircularPanel)],
) -> DrawResult {
    root.fill(&WHITE).map_err(err)?;
    if rows.is_empty() {
        root.draw(&Text::new(
            "no epochs with scored samples",
            (20, 20),
            font(16.0),
        ))
        .map_err(err)?;
        return Ok(());
    }
    let cells = root.split_evenly((rows.len(), 2));
    for (i, (a, w)) in rows.iter().enumerate() {
        draw_circular(&cells[2 * i], a)?;
        draw_circular(&cells[2 * i + 1], w)?;
    }
    Ok(())
}

/// One circular histogram filling the area.
pub fn draw_single_circular<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    panel: &CircularPanel,
) -> DrawResult {
    root.fill(&WHITE).map_err(err)?;
    draw_circular(root, panel)
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

fn draw_trace_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    trace: &Trace,
    world: bool,
) -> DrawResult {
    let end = trace.end_min.max(1e-3);
    let (title, ylabel) = if world {
        ("World heading", "world heading (° from true north)")
    } else {
        ("Arena heading", "arena heading (° from arena mark)")
    };
    let mut chart = ChartBuilder::on(area)
        .caption(title, font(18.0))
        .margin(10)
        .x_label_area_size(42)
        .y_label_area_size(60)
        .build_cartesian_2d(0f64..end, 0f64..360f64)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .y_labels(5)
        .y_label_formatter(&|v| format!("{v:.0}"))
        .x_desc("time since start (min)")
        .y_desc(ylabel)
        .label_style(font(13.0))
        .axis_desc_style(font(14.0))
        .light_line_style(WHITE)
        .bold_line_style(LIGHT)
        .draw()
        .map_err(err)?;
    chart
        .draw_series(
            trace
                .excluded
                .iter()
                .map(|&(a, b)| Rectangle::new([(a, 0.0), (b, 360.0)], LIGHT.filled())),
        )
        .map_err(err)?
        .label("not scored")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], LIGHT.filled()));
    chart
        .draw_series(
            trace
                .points
                .iter()
                .filter(|p| p.3)
                .map(|p| Circle::new((p.0, if world { p.1 } else { p.2 }), 1, BLACK.filled())),
        )
        .map_err(err)?
        .label("scored sample")
        .legend(|(x, y)| Circle::new((x + 7, y), 3, BLACK.filled()));
    chart
        .draw_series(
            trace
                .points
                .iter()
                .filter(|p| !p.3)
                .map(|p| Cross::new((p.0, if world { p.1 } else { p.2 }), 1, MID.stroke_width(1))),
        )
        .map_err(err)?
        .label("sample not scored")
        .legend(|(x, y)| Cross::new((x + 7, y), 3, MID.stroke_width(1)));
    for (m, label) in &trace.turns {
        chart
            .draw_series(std::iter::once(DashedPathElement::new(
                vec![(*m, 0.0), (*m, 360.0)],
                6,
                4,
                BLACK.stroke_width(2),
            )))
            .map_err(err)?;
        chart
            .draw_series(std::iter::once(Text::new(
                label.clone(),
                (*m, 352.0),
                font(12.0).pos(Pos::new(HPos::Left, VPos::Top)),
            )))
            .map_err(err)?;
    }
    if world {
        for (m, label) in &trace.epochs {
            chart
                .draw_series(std::iter::once(Text::new(
                    label.clone(),
                    (*m, 8.0),
                    font(12.0).pos(Pos::new(HPos::Center, VPos::Bottom)),
                )))
                .map_err(err)?;
        }
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(font(12.0))
        .draw()
        .map_err(err)?;
    Ok(())
}

/// The heading trace: world heading above, arena heading below, not-scored stretches shaded,
/// turns as dashed vertical lines.
pub fn draw_trace<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, trace: &Trace) -> DrawResult {
    root.fill(&WHITE).map_err(err)?;
    let (top, bottom) = root.split_vertically(root.dim_in_pixel().1 / 2);
    draw_trace_panel(&top, trace, true)?;
    draw_trace_panel(&bottom, trace, false)?;
    Ok(())
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

/// Turn responses: world shift (filled circles) and arena shift (open triangles) against the
/// turn, with the lines a sky-steering animal (world shift 0, solid) and an arena-steering
/// animal (world shift = turn, dashed) would follow.
pub fn draw_turns<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    turns: &[TurnPoint],
) -> DrawResult {
    root.fill(&WHITE).map_err(err)?;
    let mut chart = ChartBuilder::on(root)
        .caption("Turn responses", font(18.0))
        .margin(12)
        .x_label_area_size(44)
        .y_label_area_size(64)
        .build_cartesian_2d(-200f64..200f64, -200f64..200f64)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_labels(9)
        .y_labels(9)
        .x_label_formatter(&|v| format!("{v:.0}"))
        .y_label_formatter(&|v| format!("{v:.0}"))
        .x_desc("arena turn (°, clockwise +)")
        .y_desc("heading shift across the turn (°)")
        .label_style(font(13.0))
        .axis_desc_style(font(14.0))
        .light_line_style(WHITE)
        .bold_line_style(LIGHT)
        .draw()
        .map_err(err)?;
    chart
        .draw_series(std::iter::once(PathElement::new(
            vec![(-180.0, 0.0), (180.0, 0.0)],
            BLACK.stroke_width(2),
        )))
        .map_err(err)?
        .label("world heading kept (sky compass)")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK.stroke_width(2)));
    chart
        .draw_series(std::iter::once(DashedPathElement::new(
            vec![(-180.0, -180.0), (180.0, 180.0)],
            8,
            5,
            BLACK.stroke_width(2),
        )))
        .map_err(err)?
        .label("arena heading kept (world shift = turn)")
        .legend(|(x, y)| {
            DashedPathElement::new(vec![(x, y), (x + 20, y)], 5, 3, BLACK.stroke_width(2))
        });
    chart
        .draw_series(
            turns
                .iter()
                .map(|t| Circle::new((t.turn_deg, t.world_shift_deg), 6, BLACK.filled())),
        )
        .map_err(err)?
        .label("world heading shift")
        .legend(|(x, y)| Circle::new((x + 10, y), 5, BLACK.filled()));
    chart
        .draw_series(turns.iter().map(|t| {
            TriangleMarker::new((t.turn_deg, t.arena_shift_deg), 7, BLACK.stroke_width(2))
        }))
        .map_err(err)?
        .label("arena heading shift")
        .legend(|(x, y)| TriangleMarker::new((x + 10, y), 6, BLACK.stroke_width(2)));
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .label_font(font(13.0))
        .draw()
        .map_err(err)?;
    if turns.is_empty() {
        chart
            .draw_series(std::iter::once(Text::new(
                "no turn with scored samples on both sides".to_string(),
                (0.0, -120.0),
                centred(14.0),
            )))
            .map_err(err)?;
    }
    Ok(())
}

/// Draws a figure into `<stem>.svg` and `<stem>.png` with the same drawing function.
macro_rules! both {
    ($stem:expr, $size:expr, $draw:ident, $data:expr) => {{
        let stem: &Path = $stem;
        let svg = stem.with_extension("svg");
        let png = stem.with_extension("png");
        {
            let root = SVGBackend::new(&svg, $size).into_drawing_area();
            $draw(&root, $data).map_err(|msg| AnalysisError::Draw {
                path: svg.clone(),
                msg,
            })?;
            root.present().map_err(|e| AnalysisError::Draw {
                path: svg.clone(),
                msg: e.to_string(),
            })?;
        }
        {
            let root = BitMapBackend::new(&png, $size).into_drawing_area();
            $draw(&root, $data).map_err(|msg| AnalysisError::Draw {
                path: png.clone(),
                msg,
            })?;
            root.present().map_err(|e| AnalysisError::Draw {
                path: png.clone(),
                msg: e.to_string(),
            })?;
        }
        vec![svg, png]
    }};
}

/// Everything `report` draws.
#[derive(Debug, Clone, Default)]
pub struct FigureData {
    /// Per epoch: (arena panel, world panel).
    pub epoch_panels: Vec<(CircularPanel, CircularPanel)>,
    /// Trace.
    pub trace: Trace,
    /// Sun-relative headings.
    pub sun: CircularPanel,
    /// Turns.
    pub turns: Vec<TurnPoint>,
}

/// Writes the four figures (SVG and PNG each) into `out`; returns the files written.
pub fn write_figures(out: &Path, data: &FigureData) -> Result<Vec<PathBuf>, AnalysisError> {
    register_font();
    let mut files = Vec::new();
    let rows = data.epoch_panels.len().max(1) as u32;
    files.extend(both!(
        &out.join("epoch_histograms"),
        (900u32, 440 * rows),
        draw_epoch_histograms,
        &data.epoch_panels
    ));
    files.extend(both!(
        &out.join("heading_trace"),
        (1400u32, 900u32),
        draw_trace,
        &data.trace
    ));
    files.extend(both!(
        &out.join("sun_relative"),
        (600u32, 620u32),
        draw_single_circular,
        &data.sun
    ));
    files.extend(both!(
        &out.join("turn_responses"),
        (800u32, 760u32),
        draw_turns,
        &data.turns
    ));
    Ok(files)
}
