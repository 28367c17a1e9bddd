//! `batch`'s figures over animals, into `DIR/figures/`: per frame, one dial per condition with
//! each animal's vector and the second-order mean vector (`population_<frame>`); per frame, one
//! dial per pair of conditions measured on the same animals, each animal's heading under the
//! first on the inner ring joined to its heading under the second on the outer ring
//! (`paired_<frame>`); and every turn's world shift against the turn across animals
//! (`turn_responses_1col`). A figure of one dial is one column wide (`_1col`), of more dials
//! two columns (`_2col`, four dials per row).
//!
//! Everything drawn comes from what the tables use: the animals' vectors of
//! [`crate::analysis::population::animal_vectors`] (the rows of `population.csv`,
//! `paired_changes.csv`), the second-order mean of [`crate::circular::second_order_mean`] as in
//! `population.csv`'s `mean_vector_*`, the turns listed in `turns.csv`. Each animal keeps one
//! colour and marker shape in every figure.

use super::legend::{self, Entry, Key, PxRect};
use super::polar::{self, Dial};
use super::report::{draw_turn_chart, hypothesis_entries};
use super::style::{self, DrawResult, FigureSize, err, line, pt};
use super::{Figure, write_figure};
use crate::analysis::AnalysisError;
use crate::analysis::population::{AnimalVector, AnimalVectors, Frame, animal_key};
use crate::analysis::session::SessionStats;
use crate::circular::{describe_deg, second_order_mean};
use crate::frames::{signed_difference_deg, wrap_signed_deg};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Dials per row in the two-column figures.
pub const DIALS_PER_ROW: usize = 4;
/// Largest dial cell, millimetres.
const MAX_CELL_MM: f64 = 70.0;

/// Colour and shape of each animal, by name (animals sorted by name).
#[derive(Debug, Clone, Default)]
pub struct AnimalStyles(BTreeMap<String, usize>);

impl AnimalStyles {
    fn of(&self, animal: &str) -> (RGBColor, style::Shape) {
        style::series_style(self.0.get(animal).copied().unwrap_or(0))
    }

    fn entries(&self) -> Vec<Entry> {
        self.0
            .iter()
            .map(|(a, &i)| {
                let (c, s) = style::series_style(i);
                Entry::new(Key::Marker(s, c), a.clone())
            })
            .collect()
    }
}

fn line_px(pt_size: f64) -> i32 {
    (style::pt_to_px(pt_size) * 1.5).round() as i32
}

fn frame_heading(frame: Frame) -> (&'static str, &'static str) {
    match frame {
        Frame::World => ("World frame (0 = true north)", "N"),
        Frame::Sun => ("Sun-relative frame (0 = sun azimuth)", "sun"),
    }
}

/// Conditions ordered as in the protocol (then by name), as the paired tables order them.
fn ordered<'a>(conds: impl Iterator<Item = &'a String>, order: &[String]) -> Vec<&'a String> {
    let mut v: Vec<&String> = conds.collect();
    let rank = |c: &String| order.iter().position(|o| o == c).unwrap_or(usize::MAX);
    v.sort_by_key(|c| (rank(c), c.to_string()));
    v
}

/// A grid of dials over a legend strip: the layout of the population and paired figures.
#[derive(Debug, Clone, PartialEq)]
pub struct DialGrid {
    /// Figure size.
    pub size: FigureSize,
    /// Heading line.
    pub heading: PxRect,
    /// One cell per dial.
    pub cells: Vec<PxRect>,
    /// Legend strip, below the cells.
    pub legend: PxRect,
}

/// The layout of `n` dials with `footer_lines` lines under each and `entries` in the legend.
pub fn dial_grid(n: usize, footer_lines: i32, entries: &[Entry]) -> DialGrid {
    // One dial fits one column; more take the page width.
    let one = n <= 1;
    let w = if one {
        FigureSize::one_column(1.0).px().0 as i32
    } else {
        FigureSize::two_columns(1.0).px().0 as i32
    };
    let cols = n.clamp(1, DIALS_PER_ROW);
    let cw = w / cols as i32;
    let side = cw.min(style::mm_to_px(MAX_CELL_MM) as i32);
    let cell_h = side + (footer_lines + 1) * line_px(pt::LABEL) - line_px(pt::LABEL) / 2;
    let head = line_px(pt::LABEL) + 10;
    let rows = n.div_ceil(cols).max(1) as i32;
    let body = PxRect {
        x0: 0,
        y0: head,
        x1: w,
        y1: head + rows * cell_h,
    };
    let cells = polar::grid(body, n, cols, cell_h);
    let lh = legend::strip_height(w, entries);
    let h = body.y1 + lh + 10;
    let h_mm = h as f64 / style::DPI * 25.4;
    DialGrid {
        size: if one {
            FigureSize::one_column(h_mm)
        } else {
            FigureSize::two_columns(h_mm)
        },
        heading: PxRect {
            x0: 0,
            y0: 0,
            x1: w,
            y1: head,
        },
        cells,
        legend: PxRect {
            x0: 0,
            y0: body.y1 + 10,
            x1: w,
            y1: body.y1 + 10 + lh,
        },
    }
}

fn draw_heading<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    r: PxRect,
    text: &str,
) -> DrawResult {
    root.draw(&Text::new(
        text.to_string(),
        (r.x0 + 20, r.y0 + 8),
        style::anchored(pt::LABEL, HPos::Left, VPos::Top),
    ))
    .map_err(err)
}

/// The start of a figure of dials in `frame` (the population and paired figures): the layout
/// of `n` dials with `footer_lines` lines of text under each over a legend strip of
/// `entries`, and the heading line drawn, the frame's name followed by `detail` when the
/// figure is two columns wide (one column has no room for it). Returns the layout and the
/// label of the dials' 0.
fn begin_dial_figure<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    frame: Frame,
    n: usize,
    footer_lines: i32,
    entries: &[Entry],
    detail: &str,
) -> Result<(DialGrid, &'static str), String> {
    let g = dial_grid(n, footer_lines, entries);
    let (heading, zero) = frame_heading(frame);
    let wide = g.size.width_mm > style::ONE_COLUMN_MM;
    let text = if wide {
        format!("{heading}: {detail}")
    } else {
        heading.to_string()
    };
    draw_heading(root, g.heading, &text)?;
    Ok((g, zero))
}

/// One frame's population figure: a dial per condition.
struct Population<'a> {
    frame: Frame,
    conditions: Vec<(&'a String, &'a BTreeMap<String, AnimalVector>)>,
    styles: &'a AnimalStyles,
}

fn population_entries(styles: &AnimalStyles) -> Vec<Entry> {
    let mut e = vec![Entry::new(
        Key::Line(BLACK, line::THICK),
        "second-order mean vector",
    )];
    e.extend(styles.entries());
    e
}

impl Figure for Population<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let entries = population_entries(self.styles);
        let (g, zero) = begin_dial_figure(
            root,
            self.frame,
            self.conditions.len(),
            2,
            &entries,
            "each animal's mean vector (point at radius r)",
        )?;
        for ((cond, vs), cell) in self.conditions.iter().zip(&g.cells) {
            let dial = Dial::in_cell(*cell, 2);
            let (mut d, mut l) = (Vec::new(), Vec::new());
            for v in vs.values() {
                if let Some(m) = v.mean_deg {
                    d.push(m);
                    l.push(v.r);
                }
            }
            polar::draw_title(root, *cell, &format!("{cond} ({} animals)", d.len()))?;
            polar::draw_dial(
                root,
                &dial,
                zero,
                &[(0.5, "r 0.5".into()), (1.0, "r 1".into())],
            )?;
            for v in vs.values() {
                if let Some(m) = v.mean_deg {
                    let (c, s) = self.styles.of(&v.animal);
                    style::draw_marker(root, dial.at(m, v.r.min(1.0)), style::MARKER_PX, s, c)?;
                }
            }
            let footer = match second_order_mean(&d, &l) {
                Ok((Some(m), len)) => {
                    polar::draw_arrow(root, &dial, m, len.min(1.0), BLACK, line::THICK)?;
                    vec![
                        format!("second-order mean {m:.0}°"),
                        format!("length {len:.2}"),
                    ]
                }
                _ => vec!["no second-order mean".into(), String::new()],
            };
            polar::draw_footer(root, *cell, &footer)?;
        }
        legend::draw(root, g.legend, &entries)
    }
}

/// One pair of conditions: each animal's headings under a and b.
struct Pair<'a> {
    a: &'a String,
    b: &'a String,
    /// (animal, heading a, heading b).
    animals: Vec<(&'a String, f64, f64)>,
}

/// Radius of the inner ring (first condition) of the paired dials.
const INNER: f64 = 0.55;

struct Paired<'a> {
    frame: Frame,
    pairs: Vec<Pair<'a>>,
    styles: &'a AnimalStyles,
}

impl Figure for Paired<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let entries = self.styles.entries();
        let (g, zero) = begin_dial_figure(
            root,
            self.frame,
            self.pairs.len(),
            3,
            &entries,
            "each animal's heading, first condition inner ring, second outer",
        )?;
        for (p, cell) in self.pairs.iter().zip(&g.cells) {
            let dial = Dial::in_cell(*cell, 3);
            polar::draw_title(root, *cell, &format!("{} → {}", p.a, p.b))?;
            polar::draw_dial(
                root,
                &dial,
                zero,
                &[(INNER, String::new()), (1.0, String::new())],
            )?;
            for &(animal, ha, hb) in &p.animals {
                let (c, s) = self.styles.of(animal);
                root.draw(&PathElement::new(
                    vec![dial.at(ha, INNER), dial.at(hb, 1.0)],
                    c.stroke_width(line::NORMAL),
                ))
                .map_err(err)?;
                style::draw_marker(root, dial.at(ha, INNER), style::MARKER_PX * 3 / 4, s, c)?;
                style::draw_marker(root, dial.at(hb, 1.0), style::MARKER_PX, s, c)?;
            }
            // The change as paired.csv computes it: b − a per animal, their mean and r.
            let changes: Vec<f64> = p
                .animals
                .iter()
                .map(|&(_, ha, hb)| signed_difference_deg(ha, hb))
                .collect();
            let st = describe_deg(&changes);
            let change = st.mean_deg.map_or("mean change -".into(), |m| {
                format!("mean change {:+.0}°, r {:.2}", wrap_signed_deg(m), st.r)
            });
            polar::draw_footer(
                root,
                *cell,
                &[
                    format!("inner: {}; outer: {}", p.a, p.b),
                    change,
                    format!("n = {} animals", p.animals.len()),
                ],
            )?;
        }
        legend::draw(root, g.legend, &entries)
    }
}

/// Every turn across animals.
struct AcrossTurns<'a> {
    /// (turn, world shift, animal).
    turns: Vec<(f64, f64, String)>,
    styles: &'a AnimalStyles,
}

/// Height of the turn chart across animals, millimetres (one column wide).
pub const TURNS_CHART_MM: f64 = 85.0;

fn turns_entries(styles: &AnimalStyles) -> Vec<Entry> {
    let mut e = hypothesis_entries();
    e.extend(styles.entries());
    e
}

/// The layout of the turn figure across animals: chart on top, legend strip below.
pub fn turns_layout(styles: &AnimalStyles) -> (FigureSize, PxRect, PxRect) {
    let w = style::mm_to_px(style::ONE_COLUMN_MM) as i32;
    let ch = style::mm_to_px(TURNS_CHART_MM) as i32;
    let lh = legend::strip_height(w, &turns_entries(styles));
    let size = FigureSize::one_column((ch + lh) as f64 / style::DPI * 25.4);
    (
        size,
        PxRect {
            x0: 0,
            y0: 0,
            x1: w,
            y1: ch,
        },
        PxRect {
            x0: 0,
            y0: ch,
            x1: w,
            y1: ch + lh,
        },
    )
}

impl Figure for AcrossTurns<'_> {
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> DrawResult {
        let (_, chart, leg) = turns_layout(self.styles);
        // Turns of the same angle are spread sideways by animal (at most ±12°) so points of
        // different animals do not hide each other; the spread is drawn, not analysed.
        let n = self.styles.0.len().max(1) as f64;
        let step = (24.0 / n).min(4.0);
        let pts: Vec<_> = self
            .turns
            .iter()
            .map(|(t, w, a)| {
                let i = self.styles.0.get(a).copied().unwrap_or(0) as f64;
                let (c, s) = self.styles.of(a);
                (t + (i - (n - 1.0) / 2.0) * step, *w, s, c)
            })
            .collect();
        let area = root.clone().shrink(
            (chart.x0, chart.y0),
            (chart.width() as u32, chart.height() as u32),
        );
        draw_turn_chart(
            root,
            &area,
            &pts,
            "no turn with scored samples on both sides",
        )?;
        legend::draw(root, leg, &turns_entries(self.styles))
    }
}

/// Writes the batch figures into `dir` (created): `population_world`, `population_sun`,
/// `paired_world` and `paired_sun` (when conditions share animals), each `_1col` or `_2col`
/// (see the module doc), and `turn_responses_1col`; SVG and PNG each. `turns` are the turns listed in
/// `turns.csv`: (session, turn, world shift).
pub fn write_batch_figures(
    dir: &Path,
    sessions: &[&SessionStats],
    vectors: &AnimalVectors,
    order: &[String],
    turns: &[(&SessionStats, f64, f64)],
) -> Result<Vec<PathBuf>, AnalysisError> {
    std::fs::create_dir_all(dir).map_err(|e| AnalysisError::io(dir, e))?;
    let mut names: Vec<String> = sessions.iter().map(|s| animal_key(s)).collect();
    for conds in vectors.values() {
        for vs in conds.values() {
            names.extend(vs.keys().cloned());
        }
    }
    names.sort();
    names.dedup();
    let styles = AnimalStyles(names.into_iter().enumerate().map(|(i, a)| (a, i)).collect());
    let mut files = Vec::new();
    for frame in Frame::ALL {
        let empty = BTreeMap::new();
        let by_cond = vectors.get(&frame).unwrap_or(&empty);
        let conds = ordered(by_cond.keys(), order);
        let fig = Population {
            frame,
            conditions: conds.iter().map(|c| (*c, &by_cond[*c])).collect(),
            styles: &styles,
        };
        let size = dial_grid(fig.conditions.len(), 2, &population_entries(&styles)).size;
        files.extend(write_figure(
            dir,
            &format!("population_{}", frame.name()),
            size,
            &fig,
        )?);
        let mut pairs = Vec::new();
        for (i, a) in conds.iter().enumerate() {
            for b in &conds[i + 1..] {
                let animals: Vec<(&String, f64, f64)> = by_cond[*a]
                    .iter()
                    .filter_map(|(animal, va)| {
                        let vb = by_cond[*b].get(animal)?;
                        Some((animal, va.mean_deg?, vb.mean_deg?))
                    })
                    .collect();
                if !animals.is_empty() {
                    pairs.push(Pair { a, b, animals });
                }
            }
        }
        if !pairs.is_empty() {
            let size = dial_grid(pairs.len(), 3, &styles.entries()).size;
            let fig = Paired {
                frame,
                pairs,
                styles: &styles,
            };
            files.extend(write_figure(
                dir,
                &format!("paired_{}", frame.name()),
                size,
                &fig,
            )?);
        }
    }
    let fig = AcrossTurns {
        turns: turns
            .iter()
            .map(|(s, t, w)| (*t, *w, animal_key(s)))
            .collect(),
        styles: &styles,
    };
    let (size, _, _) = turns_layout(&styles);
    files.extend(write_figure(dir, "turn_responses", size, &fig)?);
    Ok(files)
}
