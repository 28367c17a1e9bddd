//! A small dot raster (braille or half blocks) painted straight into a buffer.

use crate::tui::theme::Theme;
use ratatui::layout::Rect;

/// What a dot of the trace shows; a cell takes the colour of its most important dot.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub(crate) enum Mark {
    None,
    Grid,
    Turn,
    Heading,
}

/// A small dot raster for the trace: braille (2×4 dots per cell) or half blocks (1×2).
pub(crate) struct Raster {
    w: usize,
    h: usize,
    half_blocks: bool,
    bits: Vec<u8>,
    mark: Vec<Mark>,
}

impl Raster {
    pub(crate) fn new(w: u16, h: u16, half_blocks: bool) -> Self {
        let n = w as usize * h as usize;
        Raster {
            w: w as usize,
            h: h as usize,
            half_blocks,
            bits: vec![0; n],
            mark: vec![Mark::None; n],
        }
    }

    pub(crate) fn dots_w(&self) -> usize {
        if self.half_blocks { self.w } else { self.w * 2 }
    }

    pub(crate) fn dots_h(&self) -> usize {
        if self.half_blocks {
            self.h * 2
        } else {
            self.h * 4
        }
    }

    /// Sets the dot at (`px`, `py`) (dot units, origin top left); outside dots are clamped to
    /// the edge when within one dot, else ignored.
    pub(crate) fn dot(&mut self, px: f64, py: f64, mark: Mark) {
        let (dw, dh) = (self.dots_w() as f64, self.dots_h() as f64);
        if !(px > -1.0 && py > -1.0 && px < dw + 1.0 && py < dh + 1.0) || dw < 1.0 || dh < 1.0 {
            return;
        }
        let x = px.clamp(0.0, dw - 1.0) as usize;
        let y = py.clamp(0.0, dh - 1.0) as usize;
        let (cell, bit) = if self.half_blocks {
            (
                x + (y / 2) * self.w,
                if y.is_multiple_of(2) { 1 } else { 2 },
            )
        } else {
            // Braille dot numbering: left column 1, 2, 3, 7; right column 4, 5, 6, 8.
            const LEFT: [u8; 4] = [0x01, 0x02, 0x04, 0x40];
            const RIGHT: [u8; 4] = [0x08, 0x10, 0x20, 0x80];
            let b = if x.is_multiple_of(2) {
                LEFT[y % 4]
            } else {
                RIGHT[y % 4]
            };
            (x / 2 + (y / 4) * self.w, b)
        };
        self.bits[cell] |= bit;
        if mark > self.mark[cell] {
            self.mark[cell] = mark;
        }
    }

    pub(crate) fn paint(&self, buf: &mut ratatui::buffer::Buffer, area: Rect, theme: &Theme) {
        for row in 0..self.h.min(area.height as usize) {
            for col in 0..self.w.min(area.width as usize) {
                let i = col + row * self.w;
                let bits = self.bits[i];
                if bits == 0 {
                    continue;
                }
                let ch = if self.half_blocks {
                    match bits {
                        1 => '▀',
                        2 => '▄',
                        _ => '█',
                    }
                } else {
                    char::from_u32(0x2800 + u32::from(bits)).unwrap_or('⣿')
                };
                let style = match self.mark[i] {
                    Mark::Heading => theme.accent(theme.heading),
                    Mark::Turn => theme.accent(theme.turn),
                    _ => theme.strong(),
                };
                let cell = &mut buf[(area.x + col as u16, area.y + row as u16)];
                cell.set_char(ch);
                cell.set_style(style);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn raster_sets_braille_and_half_block_dots() {
        let mut r = Raster::new(2, 1, false);
        r.dot(0.0, 0.0, Mark::Grid); // dot 1
        r.dot(1.0, 3.0, Mark::Heading); // dot 8
        r.dot(3.0, 3.0, Mark::Turn); // second cell, dot 8
        r.dot(9.0, 0.0, Mark::Heading); // far outside: ignored
        assert_eq!(r.bits, vec![0x81, 0x80]);
        assert_eq!(r.mark, vec![Mark::Heading, Mark::Turn]);
        let mut r = Raster::new(1, 2, true);
        r.dot(0.0, 0.0, Mark::Grid);
        r.dot(0.0, 3.0, Mark::Grid);
        r.dot(0.0, 2.0, Mark::Grid);
        assert_eq!(r.bits, vec![1, 3]);
        // Just past the edge clamps onto it (a point exactly at "now").
        let mut r = Raster::new(1, 1, false);
        r.dot(2.0, 4.0, Mark::Heading);
        assert_eq!(r.bits, vec![0x80]);
    }
}
