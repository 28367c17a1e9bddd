//! The print style every figure shares: physical sizes for one and two journal columns, type
//! sizes in points, line widths, the colour-blind-safe palette and marker shapes.
//!
//! Figures are drawn in device pixels at [`DPI`] (300 dots per inch, the usual minimum for
//! line art in print). The PNG has exactly those pixels (and says 300 dpi in its `pHYs`
//! chunk); the SVG uses the same pixel grid as its `viewBox` and gives `width`/`height` in
//! millimetres, so both print at the same size. Type is given in points: [`font_pt`] turns
//! points into the size plotters asks for, so that the SVG's `font-size` is exactly that many
//! points at print size (plotters writes `font-size` = size / 1.24; its bitmap text is
//! slightly larger for the same size).

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::sync::Once;

/// Dots per inch of the PNG files and of the SVG's `viewBox` grid.
pub const DPI: f64 = 300.0;
/// One journal column, millimetres (common practice: 80–90 mm).
pub const ONE_COLUMN_MM: f64 = 85.0;
/// Two journal columns (a full page width), millimetres (common practice: 170–180 mm).
pub const TWO_COLUMN_MM: f64 = 180.0;
/// The smallest type in any figure, points (common practice for journal figures: 6–8 pt at
/// print size).
pub const MIN_TYPE_PT: f64 = 7.0;

/// Millimetres → device pixels at [`DPI`], rounded.
pub fn mm_to_px(mm: f64) -> u32 {
    (mm / 25.4 * DPI).round() as u32
}

/// Points (1/72 inch) → device pixels at [`DPI`].
pub fn pt_to_px(pt: f64) -> f64 {
    pt / 72.0 * DPI
}

/// The physical size of a figure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FigureSize {
    /// Width, millimetres.
    pub width_mm: f64,
    /// Height, millimetres.
    pub height_mm: f64,
}

impl FigureSize {
    /// One column wide, `height_mm` high.
    pub fn one_column(height_mm: f64) -> Self {
        Self {
            width_mm: ONE_COLUMN_MM,
            height_mm,
        }
    }

    /// Two columns wide, `height_mm` high.
    pub fn two_columns(height_mm: f64) -> Self {
        Self {
            width_mm: TWO_COLUMN_MM,
            height_mm,
        }
    }

    /// Width and height in device pixels at [`DPI`].
    pub fn px(self) -> (u32, u32) {
        (mm_to_px(self.width_mm), mm_to_px(self.height_mm))
    }

    /// The file name suffix: `1col` or `2col`.
    pub fn suffix(self) -> &'static str {
        if self.width_mm > ONE_COLUMN_MM {
            "2col"
        } else {
            "1col"
        }
    }
}

/// The font embedded in the binary (DejaVu Sans, Bitstream Vera licence: assets/).
static FONT: &[u8] = include_bytes!("../../../assets/DejaVuSans.ttf");
/// The family name the figures ask for.
pub const FAMILY: &str = "sans-serif";

/// Registers the embedded font once, so no system font is needed.
pub fn register_font() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // The bytes are a valid TrueType file checked in tests; a failure here would only lose
        // the text, not the figure, so it is ignored.
        let _ = plotters::style::register_font(FAMILY, FontStyle::Normal, FONT);
    });
}

/// Type sizes, points at print size.
pub mod pt {
    /// Tick labels, ring labels, legend entries.
    pub const SMALL: f64 = super::MIN_TYPE_PT;
    /// Axis titles and panel titles.
    pub const LABEL: f64 = 8.0;
}

/// The size plotters asks for to print type of `pt` points (see the module doc).
pub fn font_pt(pt: f64) -> f64 {
    pt_to_px(pt) * 1.24
}

/// Black text of `pt` points.
pub fn font(pt: f64) -> TextStyle<'static> {
    (FAMILY, font_pt(pt)).into_font().color(&BLACK)
}

/// Black text of `pt` points anchored at its centre.
pub fn centred(pt: f64) -> TextStyle<'static> {
    font(pt).pos(Pos::new(HPos::Center, VPos::Center))
}

/// Black text of `pt` points with the given anchor.
pub fn anchored(pt: f64, h: HPos, v: VPos) -> TextStyle<'static> {
    font(pt).pos(Pos::new(h, v))
}

/// Line widths, device pixels (0.5 pt hairline, 1 pt, 1.5 pt).
pub mod line {
    /// Axes, rings, reference lines.
    pub const THIN: u32 = 2;
    /// Data lines and reference hypotheses.
    pub const NORMAL: u32 = 4;
    /// Mean vectors.
    pub const THICK: u32 = 7;
}

/// The 8-colour set of Okabe & Ito (2008), "Color Universal Design (CUD): how to make figures
/// and presentations that are friendly to colorblind people", in their order: black, orange,
/// sky blue, bluish green, yellow, blue, vermillion, reddish purple. The same hex values as
/// R's `grDevices::palette.colors(palette = "Okabe-Ito")` (R ≥ 4.0).
pub const OKABE_ITO: [RGBColor; 8] = [
    RGBColor(0x00, 0x00, 0x00),
    RGBColor(0xE6, 0x9F, 0x00),
    RGBColor(0x56, 0xB4, 0xE9),
    RGBColor(0x00, 0x9E, 0x73),
    RGBColor(0xF0, 0xE4, 0x42),
    RGBColor(0x00, 0x72, 0xB2),
    RGBColor(0xD5, 0x5E, 0x00),
    RGBColor(0xCC, 0x79, 0xA7),
];

/// Okabe & Ito's names of [`OKABE_ITO`], same order.
pub const OKABE_ITO_NAMES: [&str; 8] = [
    "black",
    "orange",
    "sky blue",
    "bluish green",
    "yellow",
    "blue",
    "vermillion",
    "reddish purple",
];

/// Okabe–Ito blue.
pub const BLUE: RGBColor = OKABE_ITO[5];
/// Okabe–Ito vermillion.
pub const VERMILLION: RGBColor = OKABE_ITO[6];

/// The order in which series (animals) take colours: the darkest and most distinct first,
/// yellow (weak on white) last.
const SERIES_ORDER: [usize; 8] = [5, 6, 3, 1, 7, 2, 0, 4];

/// Greys for shading and reference marks (neutral, so they read in greyscale and never
/// compete with the palette).
pub const SHADE: RGBColor = RGBColor(0xE4, 0xE4, 0xE4);
/// Mid grey for rings, grid and not-scored samples.
pub const GREY: RGBColor = RGBColor(0x80, 0x80, 0x80);
/// Grey for wedge fills of roses.
pub const FILL: RGBColor = RGBColor(0xB4, 0xB4, 0xB4);

/// Marker shapes, so that series differ in shape as well as colour (greyscale still reads).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Shape {
    /// Filled circle.
    Circle,
    /// Filled upward triangle.
    Triangle,
    /// Filled square.
    Square,
    /// Filled diamond.
    Diamond,
    /// Open circle.
    OpenCircle,
    /// Open upward triangle.
    OpenTriangle,
}

const SHAPES: [Shape; 6] = [
    Shape::Circle,
    Shape::Triangle,
    Shape::Square,
    Shape::Diamond,
    Shape::OpenCircle,
    Shape::OpenTriangle,
];

/// The look of series `i` (an animal): colour and shape; unique for the first 48 series.
pub fn series_style(i: usize) -> (RGBColor, Shape) {
    (
        OKABE_ITO[SERIES_ORDER[i % 8]],
        SHAPES[(i % 8 + 5 * (i / 8)) % SHAPES.len()],
    )
}

/// Marker radius for data points, device pixels (about 1 mm across).
pub const MARKER_PX: i32 = 12;

/// Draws a marker of `shape` centred at pixel (x, y) of `area` (radius `r` pixels), with a
/// thin black outline on filled shapes so light colours still show on white.
pub fn draw_marker<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    (x, y): (i32, i32),
    r: i32,
    shape: Shape,
    colour: RGBColor,
) -> DrawResult {
    let open = matches!(shape, Shape::OpenCircle | Shape::OpenTriangle);
    let outline = if open {
        colour.stroke_width(line::THIN + 1)
    } else {
        BLACK.stroke_width(1)
    };
    let rf = r as f64;
    let poly: Option<Vec<(i32, i32)>> = match shape {
        Shape::Circle | Shape::OpenCircle => None,
        Shape::Triangle | Shape::OpenTriangle => Some(
            [90.0f64, 210.0, 330.0]
                .iter()
                .map(|a| {
                    let a = a.to_radians();
                    (
                        x + (1.2 * rf * a.cos()).round() as i32,
                        y - (1.2 * rf * a.sin()).round() as i32,
                    )
                })
                .collect(),
        ),
        Shape::Square => {
            let h = (rf * 0.85).round() as i32;
            Some(vec![
                (x - h, y - h),
                (x + h, y - h),
                (x + h, y + h),
                (x - h, y + h),
            ])
        }
        Shape::Diamond => {
            let h = (rf * 1.2).round() as i32;
            Some(vec![(x, y - h), (x + h, y), (x, y + h), (x - h, y)])
        }
    };
    match poly {
        None => {
            if !open {
                area.draw(&Circle::new((x, y), r, colour.filled()))
                    .map_err(err)?;
            }
            area.draw(&Circle::new((x, y), r, outline)).map_err(err)?;
        }
        Some(pts) => {
            if !open {
                area.draw(&Polygon::new(pts.clone(), colour.filled()))
                    .map_err(err)?;
            }
            let mut closed = pts.clone();
            closed.push(pts[0]);
            area.draw(&PathElement::new(closed, outline)).map_err(err)?;
        }
    }
    Ok(())
}

/// What a drawing function returns: plotters' errors as text.
pub type DrawResult = Result<(), String>;

/// Any displayable error as the text of a [`DrawResult`].
pub fn err<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_palette_is_okabe_and_itos_eight_colours() {
        // Okabe & Ito (2008), Color Universal Design; the same hex values as R's
        // grDevices::palette.colors(palette = "Okabe-Ito").
        let published = [
            "#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7",
        ];
        for (c, hex) in OKABE_ITO.iter().zip(published) {
            assert_eq!(format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2), hex);
        }
        assert_eq!(OKABE_ITO_NAMES[5], "blue");
        assert_eq!(BLUE, OKABE_ITO[5]);
        assert_eq!(VERMILLION, OKABE_ITO[6]);
    }

    #[test]
    fn series_differ_in_colour_or_shape_for_48_animals() {
        let styles: Vec<(RGBColor, Shape)> = (0..48).map(series_style).collect();
        for i in 0..48 {
            for j in i + 1..48 {
                assert_ne!(styles[i], styles[j], "series {i} and {j}");
            }
        }
        // Neighbours differ in both colour and shape.
        for i in 0..47 {
            assert_ne!(styles[i].0, styles[i + 1].0);
            assert_ne!(styles[i].1, styles[i + 1].1);
        }
    }

    #[test]
    fn sizes_at_300_dpi() {
        // 85 mm / 25.4 mm per inch × 300 = 1003.9 px; 180 mm → 2126.0 px; 7 pt = 29.17 px.
        assert_eq!(mm_to_px(ONE_COLUMN_MM), 1004);
        assert_eq!(mm_to_px(TWO_COLUMN_MM), 2126);
        assert!((pt_to_px(7.0) - 29.1667).abs() < 1e-3);
        assert_eq!(FigureSize::one_column(50.0).suffix(), "1col");
        assert_eq!(FigureSize::two_columns(50.0).suffix(), "2col");
    }
}
