//! `report`: one session → per-epoch and per-turn tables, a text summary and figures.

use super::AnalysisError;
use super::batch::{epochs_table, notes_table, sessions_table, turns_table};
use super::figures::{CircularPanel, FigureData, TurnPoint, write_figures};
use super::population::animal_key;
use super::scan::Row;
use super::session::{SessionStats, analyse_session_with};
use crate::frames::sun_relative_heading_deg;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Most points drawn in the heading trace (the trace is thinned evenly beyond this).
const MAX_TRACE_POINTS: usize = 8000;

/// What `report` wrote.
#[derive(Debug, Clone)]
pub struct ReportOutput {
    /// The statistics.
    pub stats: SessionStats,
    /// The text summary.
    pub summary: String,
    /// Files written.
    pub files: Vec<PathBuf>,
}

#[derive(Clone, Copy)]
struct TracePoint {
    t_s: f64,
    epoch: usize,
    world: f64,
    arena: f64,
    sun: f64,
    scored: bool,
}

/// Reads the session in `dir` and writes tables, `summary.txt` and figures into `out`.
pub fn write_report(dir: &Path, out: &Path) -> Result<ReportOutput, AnalysisError> {
    let mut trace: Vec<TracePoint> = Vec::new();
    let stats = analyse_session_with(dir, |s: &Row| {
        trace.push(TracePoint {
            t_s: s.t_s,
            epoch: s.epoch,
            world: s.world_heading_deg,
            arena: s.arena_heading_deg,
            sun: sun_relative_heading_deg(s.world_heading_deg, s.sun_azimuth_deg),
            scored: s.scored,
        })
    })?;
    std::fs::create_dir_all(out).map_err(|e| AnalysisError::io(out, e))?;
    let mut files = Vec::new();
    let one = std::slice::from_ref(&stats);
    for (name, table) in [
        ("epochs.csv", epochs_table(one)),
        ("turns.csv", turns_table(one)),
        ("session.csv", sessions_table(one)),
        ("notes.csv", notes_table(one)),
    ] {
        let p = out.join(name);
        table.write(&p)?;
        files.push(p);
    }
    let summary = summary_text(&stats);
    let sp = out.join("summary.txt");
    std::fs::write(&sp, &summary).map_err(|e| AnalysisError::io(&sp, e))?;
    files.push(sp);
    let data = figure_data(&stats, &trace);
    files.extend(write_figures(out, &data)?);
    Ok(ReportOutput {
        stats,
        summary,
        files,
    })
}

fn figure_data(stats: &SessionStats, trace: &[TracePoint]) -> FigureData {
    let mut data = FigureData::default();
    for e in &stats.epochs {
        let pick = |f: fn(&TracePoint) -> f64| -> Vec<f64> {
            trace
                .iter()
                .filter(|p| p.scored && p.epoch == e.index)
                .map(f)
                .collect()
        };
        let title = format!("E{} {}", e.index, e.condition).trim().to_string();
        data.epoch_panels.push((
            CircularPanel {
                title: title.clone(),
                headings_deg: pick(|p| p.arena),
                zero_label: "0 mark".into(),
            },
            CircularPanel {
                title,
                headings_deg: pick(|p| p.world),
                zero_label: "N".into(),
            },
        ));
    }
    data.sun = CircularPanel {
        title: "Sun-relative heading, scored samples".into(),
        headings_deg: trace.iter().filter(|p| p.scored).map(|p| p.sun).collect(),
        zero_label: "sun".into(),
    };
    // Trace, thinned evenly for drawing; not-scored stretches from the full trace.
    let step = trace.len().div_ceil(MAX_TRACE_POINTS).max(1);
    data.trace.points = trace
        .iter()
        .step_by(step)
        .map(|p| (p.t_s / 60.0, p.world, p.arena, p.scored))
        .collect();
    let mut start: Option<f64> = None;
    for (i, p) in trace.iter().enumerate() {
        match (p.scored, start) {
            (false, None) => start = Some(p.t_s),
            (true, Some(s)) => {
                data.trace.excluded.push((s / 60.0, p.t_s / 60.0));
                start = None;
            }
            _ => {}
        }
        if i + 1 == trace.len()
            && let Some(s) = start
        {
            data.trace.excluded.push((s / 60.0, p.t_s / 60.0));
        }
    }
    data.trace.end_min = trace.last().map_or(1.0, |p| p.t_s / 60.0);
    let turns = &stats.turns;
    for t in turns {
        if let Some(e) = stats.epochs.iter().find(|e| e.index == t.to_epoch) {
            let label = match t.turn_deg {
                Some(d) => format!(" turn {d:+.0}°"),
                None => " turn".into(),
            };
            data.trace.turns.push((e.t_start_s / 60.0, label));
        }
    }
    for e in &stats.epochs {
        let label = if e.condition.is_empty() {
            format!("E{}", e.index)
        } else {
            format!("E{} {}", e.index, e.condition)
        };
        data.trace
            .epochs
            .push(((e.t_start_s + e.t_end_s) / 120.0, label));
    }
    data.turns = turns
        .iter()
        .filter_map(|t| {
            Some(TurnPoint {
                turn_deg: t.turn_deg?,
                world_shift_deg: t.world_shift_deg?,
                arena_shift_deg: t.arena_shift_deg?,
            })
        })
        .collect();
    data
}

fn fmt_opt(x: Option<f64>, digits: usize) -> String {
    x.map_or("-".into(), |v| format!("{v:.digits$}"))
}

/// The short text summary printed by `report` and saved as `summary.txt`.
pub fn summary_text(s: &SessionStats) -> String {
    let mut t = String::new();
    let i = &s.info;
    let _ = writeln!(t, "Session {}  animal {}", i.id, animal_key(s));
    let _ = writeln!(
        t,
        "status {}  started {}  protocol {}  site {}",
        or_dash(&i.status),
        or_dash(&i.started_utc),
        or_dash(&i.protocol),
        or_dash(&i.site)
    );
    let _ = writeln!(
        t,
        "{} samples, {:.1} min, flying {:.1} min{}",
        s.rows,
        s.duration_s / 60.0,
        s.flying_s / 60.0,
        if s.torn_tail {
            " (torn last line left out)"
        } else {
            ""
        }
    );
    let _ = writeln!(
        t,
        "all scored samples: world mean {}°, r_world {:.3}; arena mean {}°, r_arena {:.3}",
        fmt_opt(s.world.mean_deg(), 1),
        s.world.r(),
        fmt_opt(s.arena.mean_deg(), 1),
        s.arena.r()
    );
    let verdict = if s.world.n() == 0 {
        "no scored samples"
    } else if s.world.r() > s.arena.r() + 0.1 {
        "world heading held better than arena heading (consistent with steering by the sky)"
    } else if s.arena.r() > s.world.r() + 0.1 {
        "arena heading held better than world heading (consistent with steering by the arena)"
    } else {
        "no clear difference between world and arena hold"
    };
    let _ = writeln!(t, "{verdict}");
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "{:>5}  {:<16} {:>7} {:>7} {:>6} {:>7} {:>9} {:>10}",
        "epoch", "condition", "n", "world°", "r", "arena°", "p", "p_oriented"
    );
    for e in &s.epochs {
        let has = e.world.n() > 0;
        let _ = writeln!(
            t,
            "{:>5}  {:<16} {:>7} {:>7} {:>6} {:>7} {:>9} {:>10}",
            e.index,
            truncate(&e.condition, 16),
            e.world.n(),
            fmt_opt(e.world.mean_deg(), 1),
            if has {
                format!("{:.3}", e.world.r())
            } else {
                "-".into()
            },
            fmt_opt(e.arena.mean_deg(), 1),
            if has {
                fmt_p(e.world.rayleigh_p())
            } else {
                "-".into()
            },
            s.p_oriented(e.index).map_or("-".into(), fmt_p),
        );
    }
    let turns = &s.turns;
    if !turns.is_empty() {
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "{:>4}  {:>9} {:>13} {:>13}",
            "turn", "turn°", "world shift°", "arena shift°"
        );
        for tr in turns {
            let _ = writeln!(
                t,
                "{:>4}  {:>9} {:>13} {:>13}",
                tr.index,
                fmt_opt(tr.turn_deg, 1),
                fmt_opt(tr.world_shift_deg, 1),
                fmt_opt(tr.arena_shift_deg, 1)
            );
        }
    }
    if let Some(tt) = s.turn_test() {
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "turn test ({} turns with headings on both sides, windows of up to {:.0} s of scored \
             flight next to each turn): mean world shift {}°, world heading kept p = {}, arena \
             heading kept p = {}",
            tt.turns,
            crate::archive::TURN_WINDOW_S,
            fmt_opt(tt.mean_world_shift_deg, 1),
            tt.p_world_kept
                .map_or("- (fewer than 3 turns)".into(), fmt_p),
            tt.p_arena_kept
                .map_or("- (fewer than 3 turns)".into(), fmt_p),
        );
    }
    cue_text(s, &mut t);
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "p: Rayleigh test taking every scored sample as independent (naive; headings are \
         autocorrelated). p_oriented: the calibrated test that the animal held a heading against \
         an unoriented walk with its own turning rate (from summary.json; - with less than 30 s \
         of flight). Report p_oriented, not p."
    );
    t
}

/// What each epoch showed, the axial scores of polarization-only epochs and each turn's
/// prediction under the cue shown (from `summary.json`; nothing for archives without cues).
fn cue_text(s: &SessionStats, t: &mut String) {
    let Some(sm) = s.info.summary.as_ref() else {
        return;
    };
    if sm.epochs.iter().all(|e| e.cue.cue.is_none()) {
        return;
    }
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "{:>5}  {:<13} {:>8} {:>11}",
        "epoch", "cue", "axial r", "rel e-vec°"
    );
    for e in &sm.epochs {
        let _ = writeln!(
            t,
            "{:>5}  {:<13} {:>8} {:>11}",
            e.index,
            e.cue.cue.as_deref().unwrap_or("-"),
            fmt_opt(e.cue.axial_r, 3),
            fmt_opt(e.cue.mean_evector_rel_deg, 1)
        );
    }
    let _ = writeln!(
        t,
        "cue: what the scored samples showed (sun in view; polarization only; none; mixed). \
         Under polarization only, headings are also scored as axial data relative to the \
         e-vector shown (angles doubled; 0 = along it, 90 = across it)."
    );
    let preds: Vec<String> = sm
        .turns
        .iter()
        .filter_map(|tr| {
            let p = tr.cue.cue_predicted_shift_deg?;
            let m = tr.cue.cue_predicted_mod_deg.unwrap_or(360.0);
            Some(format!("turn {}: {p:.1}° (mod {m:.0})", tr.index))
        })
        .collect();
    if !preds.is_empty() {
        let _ = writeln!(
            t,
            "world shift expected when steering by the cue shown: {}",
            preds.join(", ")
        );
    }
}

fn or_dash(s: &str) -> &str {
    if s.is_empty() { "-" } else { s }
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut out: String = s.chars().take(n - 1).collect();
        out.push('…');
        out
    }
}

fn fmt_p(p: f64) -> String {
    if p < 1e-300 {
        "<1e-300".into()
    } else if p < 0.001 {
        format!("{p:.1e}")
    } else {
        format!("{p:.3}")
    }
}
