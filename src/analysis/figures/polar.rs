//! Circular plots in device pixels: the dial (outer circle, labelled rings, compass labels),
//! roses (circular histograms), arrows and markers at a direction and radius. Headings are
//! drawn compass style: 0 at the top, clockwise.

use super::legend::PxRect;
use super::style::{self, DrawResult, err, line};
use crate::circular::HeadingAccumulator;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

/// A dial: centre and outer radius in pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dial {
    /// Centre x.
    pub cx: f64,
    /// Centre y.
    pub cy: f64,
    /// Radius of the outer circle.
    pub radius: f64,
}

impl Dial {
    /// The largest dial in `cell` below a title line and above `footer_lines` lines of text,
    /// leaving room for the compass labels around it.
    pub fn in_cell(cell: PxRect, footer_lines: i32) -> Self {
        let line_px = style::pt_to_px(style::pt::LABEL) * 1.5;
        let top = cell.y0 as f64 + line_px;
        let bottom = cell.y1 as f64 - footer_lines as f64 * line_px;
        let label = style::pt_to_px(style::pt::SMALL) * 1.8;
        let w = cell.width() as f64 - 2.0 * label - 2.0 * style::pt_to_px(style::pt::SMALL) * 1.2;
        let h = bottom - top - 2.0 * label;
        Self {
            cx: (cell.x0 + cell.x1) as f64 / 2.0,
            cy: (top + bottom) / 2.0,
            radius: (w.min(h) / 2.0).max(10.0),
        }
    }

    /// Pixel of compass direction `deg` at `frac` of the radius.
    pub fn at(&self, deg: f64, frac: f64) -> (i32, i32) {
        let a = deg.to_radians();
        let r = frac * self.radius;
        (
            (self.cx + r * a.sin()).round() as i32,
            (self.cy - r * a.cos()).round() as i32,
        )
    }
}

fn circle_pts(d: &Dial, frac: f64) -> Vec<(i32, i32)> {
    (0..=180).map(|i| d.at(i as f64 * 2.0, frac)).collect()
}

/// The dial: the outer circle (solid), rings at `rings` (fraction of the radius, label; dashed
/// grey, labels along the 135° line), ticks and labels at 0 (`zero_label`), 90, 180 and 270.
pub fn draw_dial<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    d: &Dial,
    zero_label: &str,
    rings: &[(f64, String)],
) -> DrawResult {
    for (frac, label) in rings {
        if *frac < 1.0 {
            root.draw(&DashedPathElement::new(
                circle_pts(d, *frac),
                6,
                6,
                style::GREY.stroke_width(line::THIN),
            ))
            .map_err(err)?;
        }
        if !label.is_empty() {
            let (x, y) = d.at(135.0, *frac);
            root.draw(&Text::new(
                label.clone(),
                (x + 6, y + 4),
                style::anchored(style::pt::SMALL, HPos::Left, VPos::Top),
            ))
            .map_err(err)?;
        }
    }
    root.draw(&PathElement::new(
        circle_pts(d, 1.0),
        BLACK.stroke_width(line::THIN),
    ))
    .map_err(err)?;
    let tick = style::pt_to_px(3.0) / d.radius;
    for (deg, label) in [
        (0.0, zero_label),
        (90.0, "90"),
        (180.0, "180"),
        (270.0, "270"),
    ] {
        root.draw(&PathElement::new(
            vec![d.at(deg, 1.0), d.at(deg, 1.0 + tick)],
            BLACK.stroke_width(line::THIN),
        ))
        .map_err(err)?;
        let (x, y) = d.at(deg, 1.0 + tick * 1.6);
        let (h, v) = match deg as i32 {
            0 => (HPos::Center, VPos::Bottom),
            90 => (HPos::Left, VPos::Center),
            180 => (HPos::Center, VPos::Top),
            _ => (HPos::Right, VPos::Center),
        };
        root.draw(&Text::new(
            label.to_string(),
            (x, y),
            style::anchored(style::pt::SMALL, h, v),
        ))
        .map_err(err)?;
    }
    Ok(())
}

/// Bins of a rose.
pub const ROSE_BINS: usize = 36;

/// Counts of headings in [`ROSE_BINS`] bins of 10°, and their accumulator.
pub fn rose_counts(headings_deg: &[f64]) -> ([u64; ROSE_BINS], HeadingAccumulator) {
    let mut counts = [0u64; ROSE_BINS];
    let mut acc = HeadingAccumulator::new();
    for &h in headings_deg {
        let b = ((crate::frames::wrap_360_deg(h) / 360.0 * ROSE_BINS as f64) as usize)
            .min(ROSE_BINS - 1);
        counts[b] += 1;
        acc.push_deg(h);
    }
    (counts, acc)
}

/// A "nice" ring value at or above `max` (1, 2, 2.5 or 5 × 10^k).
pub fn nice_ceiling(max: f64) -> f64 {
    if max <= 0.0 {
        return 1.0;
    }
    let k = 10f64.powf(max.log10().floor());
    for m in [1.0, 2.0, 2.5, 5.0, 10.0] {
        if m * k >= max {
            return m * k;
        }
    }
    10.0 * k
}

/// Wedges of a rose: wedge length ∝ count on a scale whose outer circle is `full` samples.
pub fn draw_rose<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    d: &Dial,
    counts: &[u64; ROSE_BINS],
    full: f64,
) -> DrawResult {
    let width = 360.0 / ROSE_BINS as f64;
    for (i, &c) in counts.iter().enumerate() {
        if c == 0 {
            continue;
        }
        let frac = (c as f64 / full).min(1.0);
        let a0 = i as f64 * width;
        let mut pts = vec![d.at(0.0, 0.0)];
        for k in 0..=4 {
            pts.push(d.at(a0 + width * k as f64 / 4.0, frac));
        }
        root.draw(&Polygon::new(pts.clone(), style::FILL.filled()))
            .map_err(err)?;
        pts.push(pts[0]);
        root.draw(&PathElement::new(pts, BLACK.stroke_width(1)))
            .map_err(err)?;
    }
    Ok(())
}

/// An arrow from the centre toward `deg`, `frac` of the radius long, with a head.
pub fn draw_arrow<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    d: &Dial,
    deg: f64,
    frac: f64,
    colour: RGBColor,
    width: u32,
) -> DrawResult {
    let tip = d.at(deg, frac);
    root.draw(&PathElement::new(
        vec![d.at(0.0, 0.0), tip],
        colour.stroke_width(width),
    ))
    .map_err(err)?;
    // Head: a triangle 5 widths long (at most half the arrow), pointing along the arrow.
    let a = deg.to_radians();
    let (ux, uy) = (a.sin(), -a.cos());
    let head = (width as f64 * 5.0).min(frac * d.radius * 0.5);
    if head < 2.0 {
        return Ok(());
    }
    let (tx, ty) = (tip.0 as f64, tip.1 as f64);
    let (bx, by) = (tx - ux * head, ty - uy * head);
    let (px, py) = (-uy * head * 0.45, ux * head * 0.45);
    root.draw(&Polygon::new(
        vec![
            (tip.0, tip.1),
            ((bx + px).round() as i32, (by + py).round() as i32),
            ((bx - px).round() as i32, (by - py).round() as i32),
        ],
        colour.filled(),
    ))
    .map_err(err)?;
    Ok(())
}

/// A panel title centred above the dial in `cell`.
pub fn draw_title<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    cell: PxRect,
    title: &str,
) -> DrawResult {
    root.draw(&Text::new(
        title.to_string(),
        ((cell.x0 + cell.x1) / 2, cell.y0 + 4),
        style::anchored(style::pt::LABEL, HPos::Center, VPos::Top),
    ))
    .map_err(err)
}

/// Lines of small text centred below the dial in `cell`, the last at the cell's bottom.
pub fn draw_footer<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    cell: PxRect,
    lines: &[String],
) -> DrawResult {
    let lh = (style::pt_to_px(style::pt::LABEL) * 1.5).round() as i32;
    let n = lines.len() as i32;
    for (i, l) in lines.iter().enumerate() {
        let y = cell.y1 - (n - i as i32) * lh + lh / 2;
        root.draw(&Text::new(
            l.clone(),
            ((cell.x0 + cell.x1) / 2, y),
            style::centred(style::pt::SMALL),
        ))
        .map_err(err)?;
    }
    Ok(())
}

/// Splits `area` into `cols` columns of square-ish cells `cell_h` high, row by row.
pub fn grid(area: PxRect, n: usize, cols: usize, cell_h: i32) -> Vec<PxRect> {
    let cols = cols.max(1);
    let cw = area.width() / cols as i32;
    (0..n)
        .map(|i| {
            let (r, c) = ((i / cols) as i32, (i % cols) as i32);
            PxRect {
                x0: area.x0 + c * cw,
                y0: area.y0 + r * cell_h,
                x1: area.x0 + (c + 1) * cw,
                y1: area.y0 + (r + 1) * cell_h,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compass_directions_map_clockwise_from_the_top() {
        let d = Dial {
            cx: 100.0,
            cy: 100.0,
            radius: 50.0,
        };
        assert_eq!(d.at(0.0, 1.0), (100, 50));
        assert_eq!(d.at(90.0, 1.0), (150, 100));
        assert_eq!(d.at(180.0, 0.5), (100, 125));
        assert_eq!(d.at(270.0, 1.0), (50, 100));
    }

    #[test]
    fn ring_values_are_round_numbers_at_or_above_the_largest_count() {
        assert_eq!(nice_ceiling(7.0), 10.0);
        assert_eq!(nice_ceiling(13.0), 20.0);
        assert_eq!(nice_ceiling(240.0), 250.0);
        assert_eq!(nice_ceiling(400.0), 500.0);
        assert_eq!(nice_ceiling(1.0), 1.0);
        assert_eq!(nice_ceiling(0.0), 1.0);
    }

    #[test]
    fn rose_bins_wrap_and_count_every_heading() {
        let (c, acc) = rose_counts(&[-5.0, 355.0, 0.0, 9.9, 360.0, 185.0]);
        assert_eq!(c[35], 2);
        assert_eq!(c[0], 3);
        assert_eq!(c[18], 1);
        assert_eq!(acc.n(), 6);
    }
}
