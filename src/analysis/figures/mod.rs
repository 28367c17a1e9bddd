//! Figures for print, drawn with plotters into SVG and PNG of the same physical size.
//!
//! - [`style`]: sizes for one and two journal columns at 300 dpi, type in points, the
//!   Okabe–Ito palette and marker shapes (colour is never the only cue: shapes, dashes and
//!   greys carry the meaning in greyscale too).
//! - [`legend`]: legends in their own strip outside the data.
//! - [`polar`]: dials, roses and arrows for circular plots.
//! - [`report`]: `report`'s figures for one session.
//! - [`batch`]: `batch`'s figures over animals (`DIR/figures/`).

pub mod batch;
pub mod legend;
pub mod polar;
pub mod report;
pub mod style;

pub use batch::write_batch_figures;
pub use report::{CircularPanel, FigureData, Trace, TurnPoint, write_figures};
pub use style::register_font;

use super::AnalysisError;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::{Path, PathBuf};
use style::{DrawResult, FigureSize};

/// A figure that can draw itself on any plotters backend of its size.
pub trait Figure {
    /// Draws the whole figure on `root` (a white canvas of the figure's size in pixels).
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult;
}

/// Replaces the pixel `width`/`height` of plotters' `<svg>` element by millimetres, keeping
/// the pixel `viewBox`: the SVG prints at the figure's physical size.
fn svg_in_mm(svg: &str, (w, h): (u32, u32), size: FigureSize) -> String {
    let px = format!("width=\"{w}\" height=\"{h}\"");
    let mm = format!(
        "width=\"{}mm\" height=\"{}mm\"",
        trim_mm(size.width_mm),
        trim_mm(h as f64 / style::DPI * 25.4)
    );
    svg.replacen(&px, &mm, 1)
}

fn trim_mm(mm: f64) -> String {
    let s = format!("{mm:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Encodes an RGB buffer as PNG with its resolution (`pHYs`) set to [`style::DPI`].
fn encode_png(path: &Path, rgb: &[u8], (w, h): (u32, u32)) -> Result<(), String> {
    let file = std::fs::File::create(path).map_err(style::err)?;
    let mut enc = png::Encoder::new(std::io::BufWriter::new(file), w, h);
    enc.set_color(png::ColorType::Rgb);
    enc.set_depth(png::BitDepth::Eight);
    enc.set_compression(png::Compression::Fast);
    let ppm = (style::DPI / 0.0254).round() as u32;
    enc.set_pixel_dims(Some(png::PixelDimensions {
        xppu: ppm,
        yppu: ppm,
        unit: png::Unit::Meter,
    }));
    let mut writer = enc.write_header().map_err(style::err)?;
    writer.write_image_data(rgb).map_err(style::err)?;
    writer.finish().map_err(style::err)
}

/// Draws `fig` into `dir/<stem>_<1col|2col>.svg` and `.png` (the two at once, on rayon's
/// pool); returns the two files.
pub fn write_figure<F: Figure + Sync>(
    dir: &Path,
    stem: &str,
    size: FigureSize,
    fig: &F,
) -> Result<Vec<PathBuf>, AnalysisError> {
    register_font();
    let name = format!("{stem}_{}", size.suffix());
    let svg_path = dir.join(format!("{name}.svg"));
    let png_path = dir.join(format!("{name}.png"));
    let (svg, png) = rayon::join(
        || write_svg(&svg_path, size, fig),
        || write_png(&png_path, size, fig),
    );
    svg?;
    png?;
    Ok(vec![svg_path, png_path])
}

fn write_svg<F: Figure>(path: &Path, size: FigureSize, fig: &F) -> Result<(), AnalysisError> {
    let px = size.px();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, px).into_drawing_area();
        root.fill(&WHITE)
            .map_err(style::err)
            .and_then(|_| fig.draw(&root))
            .and_then(|_| root.present().map_err(style::err))
            .map_err(|msg| AnalysisError::Draw {
                path: path.to_path_buf(),
                msg,
            })?;
    }
    std::fs::write(path, svg_in_mm(&svg, px, size)).map_err(|e| AnalysisError::io(path, e))
}

fn write_png<F: Figure>(path: &Path, size: FigureSize, fig: &F) -> Result<(), AnalysisError> {
    let px = size.px();
    let draw_err = |msg: String| AnalysisError::Draw {
        path: path.to_path_buf(),
        msg,
    };
    let mut rgb = vec![255u8; px.0 as usize * px.1 as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, px).into_drawing_area();
        root.fill(&WHITE)
            .map_err(style::err)
            .and_then(|_| fig.draw(&root))
            .and_then(|_| root.present().map_err(style::err))
            .map_err(draw_err)?;
    }
    encode_png(path, &rgb, px).map_err(draw_err)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn svg_size_is_given_in_millimetres_over_the_pixel_grid() {
        let size = FigureSize::one_column(60.0);
        let px = size.px();
        assert_eq!(px, (1004, 709));
        let svg = format!(
            "<svg width=\"{}\" height=\"{}\" viewBox=\"0 0 {} {}\" xmlns=\"x\">",
            px.0, px.1, px.0, px.1
        );
        let out = svg_in_mm(&svg, px, size);
        assert!(
            out.starts_with("<svg width=\"85mm\" height=\"60.03mm\" viewBox=\"0 0 1004 709\""),
            "{out}"
        );
        assert_eq!(FigureSize::two_columns(10.0).px().0, 2126);
    }
}
