//! Legends drawn in their own strip beside the data, never over it: entries flow left to
//! right and wrap into rows; the layout is computed from the text sizes before drawing, so a
//! figure can reserve the strip and tests can check that it lies outside every data area.

use super::style::{self, DrawResult, Shape, draw_marker, err, line};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

/// A rectangle in device pixels, `x0..x1` × `y0..y1` (ends exclusive).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PxRect {
    /// Left.
    pub x0: i32,
    /// Top.
    pub y0: i32,
    /// Right (exclusive).
    pub x1: i32,
    /// Bottom (exclusive).
    pub y1: i32,
}

impl PxRect {
    /// Whether the two rectangles share any pixel.
    pub fn intersects(&self, o: &PxRect) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }

    /// Whether `o` lies inside this rectangle.
    pub fn contains(&self, o: &PxRect) -> bool {
        o.x0 >= self.x0 && o.x1 <= self.x1 && o.y0 >= self.y0 && o.y1 <= self.y1
    }

    /// Height in pixels.
    pub fn height(&self) -> i32 {
        self.y1 - self.y0
    }

    /// Width in pixels.
    pub fn width(&self) -> i32 {
        self.x1 - self.x0
    }
}

/// The sample drawn before a legend label.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Key {
    /// A marker.
    Marker(Shape, RGBColor),
    /// A solid line of the given width.
    Line(RGBColor, u32),
    /// A dashed line of the given width.
    Dashed(RGBColor, u32),
    /// A filled box (a shaded stretch).
    Swatch(RGBColor),
    /// A small cross.
    Cross(RGBColor),
}

/// One legend entry.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    /// The sample.
    pub key: Key,
    /// The text.
    pub label: String,
}

impl Entry {
    /// An entry.
    pub fn new(key: Key, label: impl Into<String>) -> Self {
        Self {
            key,
            label: label.into(),
        }
    }
}

/// Width of the sample before a label, pixels.
const KEY_W: i32 = 70;
/// Gap between sample and label, and between entries, pixels.
const GAP: i32 = 14;
const ENTRY_GAP: i32 = 44;
/// Padding inside the strip, pixels.
const PAD: i32 = 10;

fn text_size(label: &str) -> (i32, i32) {
    let f = style::font(style::pt::SMALL);
    let (w, h) = f
        .font
        .box_size(label)
        .unwrap_or((label.len() as u32 * 20, 36));
    (w as i32, h as i32)
}

fn row_height() -> i32 {
    (style::pt_to_px(style::pt::SMALL) * 1.6).round() as i32
}

/// Where each entry goes in a strip `width` pixels wide: (row, x offset) per entry.
fn flow(width: i32, entries: &[Entry]) -> Vec<(i32, i32)> {
    let mut out = Vec::with_capacity(entries.len());
    let (mut row, mut x) = (0, PAD);
    for e in entries {
        let w = KEY_W + GAP + text_size(&e.label).0;
        if x > PAD && x + w > width - PAD {
            row += 1;
            x = PAD;
        }
        out.push((row, x));
        x += w + ENTRY_GAP;
    }
    out
}

/// The height in pixels of a legend strip `width` pixels wide holding `entries`
/// (0 when there are none).
pub fn strip_height(width: i32, entries: &[Entry]) -> i32 {
    let rows = flow(width, entries).last().map_or(0, |r| r.0 + 1);
    if rows == 0 {
        0
    } else {
        rows * row_height() + 2 * PAD
    }
}

/// Draws the entries into `rect` of `root` (a drawing area at the canvas origin).
pub fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    rect: PxRect,
    entries: &[Entry],
) -> DrawResult {
    let rh = row_height();
    for (e, (row, x)) in entries.iter().zip(flow(rect.width(), entries)) {
        let cx = rect.x0 + x;
        let cy = rect.y0 + PAD + row * rh + rh / 2;
        match e.key {
            Key::Marker(shape, colour) => {
                draw_marker(root, (cx + KEY_W / 2, cy), style::MARKER_PX, shape, colour)?
            }
            Key::Line(colour, w) => root
                .draw(&PathElement::new(
                    vec![(cx, cy), (cx + KEY_W, cy)],
                    colour.stroke_width(w),
                ))
                .map_err(err)?,
            Key::Dashed(colour, w) => root
                .draw(&DashedPathElement::new(
                    vec![(cx, cy), (cx + KEY_W, cy)],
                    14,
                    8,
                    colour.stroke_width(w),
                ))
                .map_err(err)?,
            Key::Swatch(colour) => {
                root.draw(&Rectangle::new(
                    [(cx, cy - rh / 3), (cx + KEY_W, cy + rh / 3)],
                    colour.filled(),
                ))
                .map_err(err)?;
                root.draw(&Rectangle::new(
                    [(cx, cy - rh / 3), (cx + KEY_W, cy + rh / 3)],
                    style::GREY.stroke_width(1),
                ))
                .map_err(err)?;
            }
            Key::Cross(colour) => root
                .draw(&Cross::new(
                    (cx + KEY_W / 2, cy),
                    8,
                    colour.stroke_width(line::THIN),
                ))
                .map_err(err)?,
        }
        root.draw(&Text::new(
            e.label.clone(),
            (cx + KEY_W + GAP, cy),
            style::anchored(style::pt::SMALL, HPos::Left, VPos::Center),
        ))
        .map_err(err)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn entries_wrap_into_rows_that_fit_the_strip() {
        style::register_font();
        let entries: Vec<Entry> = (0..12)
            .map(|i| Entry::new(Key::Line(BLACK, 2), format!("animal lm-{i:02}")))
            .collect();
        let wide = strip_height(4000, &entries);
        let narrow = strip_height(1004, &entries);
        assert!(narrow > wide, "{narrow} {wide}");
        for (row, x) in flow(1004, &entries) {
            assert!(row >= 0 && x >= PAD);
        }
        // Every entry ends inside the strip.
        for (e, (_, x)) in entries.iter().zip(flow(1004, &entries)) {
            assert!(x + KEY_W + GAP + text_size(&e.label).0 <= 1004 - PAD);
        }
        assert_eq!(strip_height(1004, &[]), 0);
    }
}
