//! `batch`: many session folders → tidy tables and population statistics.
//!
//! Each session is read in one streaming pass (only per-epoch accumulators stay in memory),
//! sessions in parallel with rayon. Unreadable folders are reported and skipped.

use super::AnalysisError;
use super::population::{
    animal_key, animal_vectors, animals_table, comparisons_table, paired_tables, population_table,
    protocol_order,
};
use super::session::{SampleSource, SessionStats, analyse_session};
use super::table::{Cell, Table};
use super::turn_population::{turns_by_animal_table, turns_population_table};
use chrono::NaiveDate;
use rayon::prelude::*;
use std::path::{Path, PathBuf};

/// How deep `batch` looks for session folders below each folder it is given.
const MAX_DEPTH: usize = 4;

/// What to include.
#[derive(Debug, Clone, Default)]
pub struct Filters {
    /// Keep only epochs with one of these conditions (empty: all).
    pub conditions: Vec<String>,
    /// Sessions started on or after this UTC date.
    pub from: Option<NaiveDate>,
    /// Sessions started on or before this UTC date.
    pub to: Option<NaiveDate>,
    /// Sessions with at least this many flying seconds.
    pub min_flying_s: Option<f64>,
    /// Sessions whose r over all scored world headings is at least this.
    pub min_r: Option<f64>,
    /// Also sessions that are not `complete` (running = interrupted, recovered, aborted).
    pub include_incomplete: bool,
}

/// A folder left out, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct Skipped {
    /// The folder.
    pub folder: PathBuf,
    /// Session id if known.
    pub session_id: String,
    /// `error` (unreadable), `filtered` or `duplicate` (the same session found again).
    pub kind: &'static str,
    /// One-line reason.
    pub reason: String,
}

/// The outcome of a batch run.
#[derive(Debug, Default)]
pub struct BatchResult {
    /// Sessions read and kept (filters applied; epochs of other conditions removed).
    pub sessions: Vec<SessionStats>,
    /// Folders read successfully (kept or filtered).
    pub read_ok: usize,
    /// Left out.
    pub skipped: Vec<Skipped>,
}

fn is_session_dir(dir: &Path) -> bool {
    dir.join("session.json").is_file() || dir.join("samples.csv").is_file()
}

/// Finds session folders: a folder that holds `session.json` or `samples.csv` is a session;
/// any other folder is searched (up to a few levels, hidden folders left out). Folders given
/// that do not exist or hold no session are reported in `skipped`.
pub fn find_sessions(roots: &[PathBuf], skipped: &mut Vec<Skipped>) -> Vec<PathBuf> {
    fn walk(dir: &Path, depth: usize, out: &mut Vec<PathBuf>) {
        if is_session_dir(dir) {
            out.push(dir.to_path_buf());
            return;
        }
        if depth >= MAX_DEPTH {
            return;
        }
        let Ok(rd) = std::fs::read_dir(dir) else {
            return;
        };
        let mut kids: Vec<PathBuf> = rd
            .filter_map(|e| e.ok())
            .map(|e| e.path())
            .filter(|p| {
                p.is_dir()
                    && !p
                        .file_name()
                        .is_some_and(|n| n.to_string_lossy().starts_with('.'))
            })
            .collect();
        kids.sort();
        for k in kids {
            walk(&k, depth + 1, out);
        }
    }
    let mut out = Vec::new();
    for root in roots {
        if !root.is_dir() {
            skipped.push(Skipped {
                folder: root.clone(),
                session_id: String::new(),
                kind: "error",
                reason: "not a folder".into(),
            });
            continue;
        }
        let before = out.len();
        walk(root, 0, &mut out);
        if out.len() == before {
            skipped.push(Skipped {
                folder: root.clone(),
                session_id: String::new(),
                kind: "error",
                reason: "no session folders (session.json or samples.csv) found".into(),
            });
        }
    }
    out.sort();
    out.dedup();
    out
}

/// Why a session fails the filters (None: it passes). Condition filtering of epochs is done
/// separately.
fn filter_reason(s: &SessionStats, f: &Filters) -> Option<String> {
    if !f.include_incomplete && !s.info.is_complete() {
        return Some(format!(
            "status '{}' (not complete; use --include-incomplete)",
            s.info.status
        ));
    }
    if f.from.is_some() || f.to.is_some() {
        match s.info.started_date {
            None => return Some("no readable started_utc for --from/--to".into()),
            Some(d) => {
                if f.from.is_some_and(|from| d < from) {
                    return Some(format!("started {d}, before --from"));
                }
                if f.to.is_some_and(|to| d > to) {
                    return Some(format!("started {d}, after --to"));
                }
            }
        }
    }
    if let Some(min) = f.min_flying_s
        && s.flying_s < min
    {
        return Some(format!("flying {:.1} s < --min-flying-s {min}", s.flying_s));
    }
    if let Some(min) = f.min_r
        && s.world.r() < min
    {
        return Some(format!("r_world {:.3} < --min-r {min}", s.world.r()));
    }
    if !f.conditions.is_empty() && !s.epochs.iter().any(|e| f.conditions.contains(&e.condition)) {
        return Some("no epoch with a --condition".into());
    }
    None
}

/// (length of `samples.csv`, rows, bits of the sample statistics).
type Fingerprint = (u64, u64, [u64; 6]);

/// What makes two readings of a session the same session: its id, the length of its
/// `samples.csv`, and the statistics of its samples to the last bit (rows, scored world and
/// arena resultants, duration, flying time). Two folders that agree in all of these hold the
/// same samples (a copy); the same id with any difference is a different recording.
fn fingerprint(s: &SessionStats) -> Fingerprint {
    let len = std::fs::metadata(s.info.dir.join("samples.csv")).map_or(0, |m| m.len());
    let (wc, ws) = s.world.resultant();
    let (ac, asn) = s.arena.resultant();
    (
        len,
        s.rows,
        [
            wc.to_bits(),
            ws.to_bits(),
            ac.to_bits(),
            asn.to_bits(),
            s.duration_s.to_bits(),
            s.flying_s.to_bits(),
        ],
    )
}

/// Keeps the first reading (in folder path order) of a session found more than once with the
/// same samples, and lists the others in `skipped` as `duplicate`. The same session id with
/// different samples is an error naming both folders.
fn drop_duplicates(
    read: Vec<(PathBuf, SessionStats)>,
    skipped: &mut Vec<Skipped>,
) -> Result<Vec<(PathBuf, SessionStats)>, AnalysisError> {
    use std::collections::BTreeMap;
    let mut first: BTreeMap<String, (PathBuf, Fingerprint)> = BTreeMap::new();
    let mut out = Vec::with_capacity(read.len());
    for (dir, s) in read {
        let fp = fingerprint(&s);
        match first.get(&s.info.id) {
            Some((kept, kept_fp)) if *kept_fp == fp => skipped.push(Skipped {
                folder: dir,
                session_id: s.info.id.clone(),
                kind: "duplicate",
                reason: format!(
                    "the same session as {} (same samples); counted once",
                    kept.display()
                ),
            }),
            Some((kept, _)) => {
                return Err(AnalysisError::DuplicateId {
                    id: s.info.id.clone(),
                    first: kept.clone(),
                    second: dir,
                });
            }
            None => {
                first.insert(s.info.id.clone(), (dir.clone(), fp));
                out.push((dir, s));
            }
        }
    }
    Ok(out)
}

/// Reads every session under `roots` (in parallel, samples as `source` allows), drops sessions found twice (see
/// [`drop_duplicates`]), applies the filters.
/// `progress` is called once per session folder finished (from worker threads).
pub fn run_batch(
    roots: &[PathBuf],
    filters: &Filters,
    source: SampleSource,
    progress: &(dyn Fn() + Sync),
    found: &dyn Fn(usize),
) -> Result<BatchResult, AnalysisError> {
    let mut skipped = Vec::new();
    let dirs = find_sessions(roots, &mut skipped);
    found(dirs.len());
    let results: Vec<(PathBuf, Result<SessionStats, AnalysisError>)> = dirs
        .par_iter()
        .map(|d| {
            let r = analyse_session(d, source);
            progress();
            (d.clone(), r)
        })
        .collect();
    let mut out = BatchResult {
        skipped,
        ..Default::default()
    };
    let mut read = Vec::new();
    for (dir, r) in results {
        match r {
            Err(e) => out.skipped.push(Skipped {
                folder: dir.clone(),
                session_id: dir
                    .file_name()
                    .map(|n| n.to_string_lossy().to_string())
                    .unwrap_or_default(),
                kind: "error",
                reason: e.to_string(),
            }),
            Ok(s) => read.push((dir, s)),
        }
    }
    out.read_ok = read.len();
    for (dir, mut s) in drop_duplicates(read, &mut out.skipped)? {
        if let Some(reason) = filter_reason(&s, filters) {
            out.skipped.push(Skipped {
                folder: dir,
                session_id: s.info.id.clone(),
                kind: "filtered",
                reason,
            });
            continue;
        }
        if !filters.conditions.is_empty() {
            s.epochs
                .retain(|e| filters.conditions.contains(&e.condition));
            // Planned epochs of other conditions are not "never ran": leave them out too.
            s.info
                .conditions
                .retain(|_, c| filters.conditions.contains(c));
        }
        out.sessions.push(s);
    }
    out.sessions
        .sort_by(|a, b| (&a.info.id, &a.info.dir).cmp(&(&b.info.id, &b.info.dir)));
    Ok(out)
}

/// Columns of `sessions.csv`.
pub const SESSION_COLUMNS: &[&str] = &[
    "session_id",
    "animal",
    "started_utc",
    "r_world",
    "r_arena",
    "status",
    "protocol",
    "conditions",
    "epochs",
    "n",
    "mean_world_deg",
    "mean_arena_deg",
    "flying_s",
    "duration_s",
    "rows",
    "torn_tail",
    "folder",
    "turn_test_turns",
    "p_world_kept",
    "p_arena_kept",
    "heading_slope_deg_per_h",
    "heading_trend_r",
    "sun_azimuth_rate_deg_per_h",
    "site",
    "site_latitude_deg",
    "site_longitude_deg",
    "site_elevation_m",
    "time_zone",
    "rig",
];

/// Columns of `epochs.csv`.
pub const EPOCH_COLUMNS: &[&str] = &[
    "session_id",
    "animal",
    "epoch",
    "condition",
    "n",
    "mean_world_deg",
    "r",
    "mean_arena_deg",
    "r_arena",
    "rayleigh_z",
    "rayleigh_p",
    "p_oriented",
    "arena_bearing_deg",
    "mean_sun_relative_deg",
    "mean_sun_azimuth_deg",
    "mean_sun_elevation_deg",
    "flying_s",
    "t_start_s",
    "t_end_s",
    "cue",
    "axial_r",
    "mean_evector_rel_deg",
    "skipped",
];

/// Columns of `turns.csv`.
pub const TURN_COLUMNS: &[&str] = &[
    "session_id",
    "animal",
    "turn",
    "from_epoch",
    "to_epoch",
    "condition_before",
    "condition_after",
    "turn_deg",
    "world_shift_deg",
    "arena_shift_deg",
    "cue_predicted_shift_deg",
    "cue_predicted_mod_deg",
];

/// `sessions.csv`. `heading_slope_deg_per_h` and `heading_trend_r` are the circular–linear
/// regression of the session's scored world headings on time (10-s bins;
/// [`crate::circular::heading_trend`]), `sun_azimuth_rate_deg_per_h` the sun's mean azimuth
/// rate over the session: a heading that follows the sun has a slope near that rate, a
/// world-fixed heading a slope near 0.
pub fn sessions_table(sessions: &[SessionStats]) -> Table {
    let mut t = Table::new(SESSION_COLUMNS);
    for s in sessions {
        let n: u64 = s.epochs.iter().map(|e| e.world.n()).sum();
        t.push(vec![
            s.info.id.as_str().into(),
            animal_key(s).into(),
            s.info.started_utc.as_str().into(),
            s.world.r().into(),
            s.arena.r().into(),
            s.info.status.as_str().into(),
            s.info.protocol.as_str().into(),
            s.conditions().join(";").into(),
            s.epochs.len().into(),
            n.into(),
            s.world.mean_deg().into(),
            s.arena.mean_deg().into(),
            s.flying_s.into(),
            s.duration_s.into(),
            s.rows.into(),
            s.torn_tail.into(),
            s.info.dir.display().to_string().into(),
            match s.turn_test() {
                Some(tt) => tt.turns.into(),
                None => Cell::Empty,
            },
            s.turn_test().and_then(|tt| tt.p_world_kept).into(),
            s.turn_test().and_then(|tt| tt.p_arena_kept).into(),
            s.heading_trend.map(|h| h.slope_deg_per_h).into(),
            s.heading_trend.map(|h| h.r).into(),
            s.sun_azimuth_rate_deg_per_h.into(),
            s.info.site.as_str().into(),
            s.info.meta.as_ref().map(|m| m.site.latitude_deg).into(),
            s.info.meta.as_ref().map(|m| m.site.longitude_deg).into(),
            s.info.meta.as_ref().map(|m| m.site.elevation_m).into(),
            s.info
                .meta
                .as_ref()
                .map_or(Cell::Empty, |m| m.time_zone.as_str().into()),
            s.info
                .meta
                .as_ref()
                .and_then(|m| m.rig.get("name").and_then(|v| v.as_str()))
                .map_or(Cell::Empty, Cell::from),
        ]);
    }
    t
}

/// `epochs.csv`: one row per epoch of each session, planned epochs that never ran included
/// (every statistic empty). `skipped` is 1 when the operator skipped the epoch
/// (`epoch_skipped` in `events.csv`; its samples up to then, if any, are still scored) or it
/// never ran (planned in `session.json`, no sample in `samples.csv`).
pub fn epochs_table(sessions: &[SessionStats]) -> Table {
    let mut t = Table::new(EPOCH_COLUMNS);
    for s in sessions {
        let animal = animal_key(s);
        let mut indices: Vec<usize> = s.info.conditions.keys().copied().collect();
        indices.extend(s.epochs.iter().map(|e| e.index));
        indices.sort_unstable();
        indices.dedup();
        for index in indices {
            let Some(e) = s.epochs.iter().find(|e| e.index == index) else {
                // Planned, never ran: no statistic at all, not 0 or 1.
                let mut row = vec![Cell::Empty; EPOCH_COLUMNS.len()];
                row[0] = s.info.id.as_str().into();
                row[1] = animal.as_str().into();
                row[2] = index.into();
                row[3] = s.info.condition(index).into();
                row[EPOCH_COLUMNS.len() - 1] = true.into();
                t.push(row);
                continue;
            };
            let n = e.world.n();
            let has = n > 0;
            let (z, _) = crate::circular::rayleigh_test(n as f64, e.world.r());
            let mut row: Vec<Cell> = vec![
                s.info.id.as_str().into(),
                animal.as_str().into(),
                e.index.into(),
                e.condition.as_str().into(),
                n.into(),
                e.world.mean_deg().into(),
                if has {
                    Cell::Num(e.world.r())
                } else {
                    Cell::Empty
                },
                e.arena.mean_deg().into(),
                if has {
                    Cell::Num(e.arena.r())
                } else {
                    Cell::Empty
                },
                if has { Cell::Num(z) } else { Cell::Empty },
                if has {
                    Cell::Num(e.world.rayleigh_p())
                } else {
                    Cell::Empty
                },
                s.p_oriented(e.index).into(),
                e.arena_bearing_deg.into(),
                e.mean_sun_relative_deg().into(),
                e.mean_sun_azimuth_deg().into(),
                e.mean_sun_elevation_deg().into(),
                e.flying_s.into(),
                e.t_start_s.into(),
                e.t_end_s.into(),
            ];
            // What the epoch showed, and its axial scores, from the session's summary.json.
            let cue = epoch_cue(s, e.index);
            row.push(cue.cue.map_or(Cell::Empty, Cell::from));
            row.push(cue.axial_r.into());
            row.push(cue.mean_evector_rel_deg.into());
            row.push(s.info.skipped_epochs.contains(&e.index).into());
            t.push(row);
        }
    }
    t
}

/// The cue fields of epoch `index` in the session's `summary.json` (empty without one).
fn epoch_cue(s: &SessionStats, index: usize) -> crate::archive::cue_scores::EpochCueScore {
    s.info
        .summary
        .as_ref()
        .and_then(|sm| sm.epochs.iter().find(|e| e.index == index))
        .map(|e| e.cue.clone())
        .unwrap_or_default()
}

/// The turns `turns.csv` lists: those between adjacent epochs (after a condition filter,
/// consecutive kept epochs may not be adjacent).
pub fn listed_turns(s: &SessionStats) -> impl Iterator<Item = &super::session::TurnStats> {
    s.turns.iter().filter(|tr| tr.to_epoch == tr.from_epoch + 1)
}

/// `turns.csv` (a turn is listed when both its epochs are kept).
pub fn turns_table(sessions: &[SessionStats]) -> Table {
    let mut t = Table::new(TURN_COLUMNS);
    for s in sessions {
        let animal = animal_key(s);
        for tr in listed_turns(s) {
            let cond = |i: usize| {
                s.epochs
                    .iter()
                    .find(|e| e.index == i)
                    .map(|e| e.condition.clone())
                    .unwrap_or_default()
            };
            let mut row: Vec<Cell> = vec![
                s.info.id.as_str().into(),
                animal.as_str().into(),
                tr.from_epoch.into(),
                tr.from_epoch.into(),
                tr.to_epoch.into(),
                cond(tr.from_epoch).into(),
                cond(tr.to_epoch).into(),
                tr.turn_deg.into(),
                tr.world_shift_deg.into(),
                tr.arena_shift_deg.into(),
            ];
            let pred = s
                .info
                .summary
                .as_ref()
                .and_then(|sm| sm.turns.iter().find(|x| x.index == tr.from_epoch))
                .map(|x| x.cue.clone())
                .unwrap_or_default();
            row.push(pred.cue_predicted_shift_deg.into());
            row.push(pred.cue_predicted_mod_deg.into());
            t.push(row);
        }
    }
    t
}

/// Columns of `notes.csv`.
pub const NOTE_COLUMNS: &[&str] = &["session_id", "t_utc", "t_s", "kind", "detail"];

/// `notes.csv`: the operator's notes, flight stops and starts and skipped epochs of each
/// session, from its `events.csv` ([`super::meta::NOTE_KINDS`]), in time order per session.
pub fn notes_table(sessions: &[SessionStats]) -> Table {
    let mut t = Table::new(NOTE_COLUMNS);
    for s in sessions {
        for n in &s.info.notes {
            t.push(vec![
                s.info.id.as_str().into(),
                n.t_utc.as_str().into(),
                n.t_s.into(),
                n.kind.as_str().into(),
                n.detail.as_str().into(),
            ]);
        }
    }
    t
}

/// Columns of `skipped.csv`.
pub const SKIPPED_COLUMNS: &[&str] = &["folder", "session_id", "kind", "reason"];

/// `skipped.csv`.
pub fn skipped_table(skipped: &[Skipped]) -> Table {
    let mut t = Table::new(SKIPPED_COLUMNS);
    for s in skipped {
        t.push(vec![
            s.folder.display().to_string().into(),
            s.session_id.as_str().into(),
            s.kind.into(),
            s.reason.as_str().into(),
        ]);
    }
    t
}

/// Writes every table into `out` and returns the file names written.
pub fn write_tables(result: &BatchResult, out: &Path) -> Result<Vec<String>, AnalysisError> {
    std::fs::create_dir_all(out).map_err(|e| AnalysisError::io(out, e))?;
    let refs: Vec<&SessionStats> = result.sessions.iter().collect();
    let vectors = animal_vectors(&refs);
    let order = protocol_order(&refs);
    let (paired, changes) = paired_tables(&vectors, &order);
    let tables: Vec<(&str, Table)> = vec![
        ("sessions.csv", sessions_table(&result.sessions)),
        ("epochs.csv", epochs_table(&result.sessions)),
        ("turns.csv", turns_table(&result.sessions)),
        ("notes.csv", notes_table(&result.sessions)),
        ("population.csv", population_table(&vectors)),
        ("comparisons.csv", comparisons_table(&vectors)),
        ("paired.csv", paired),
        ("paired_changes.csv", changes),
        ("animals.csv", animals_table(&refs)),
        ("turns_by_animal.csv", turns_by_animal_table(&refs)),
        ("turns_population.csv", turns_population_table(&refs)),
        ("skipped.csv", skipped_table(&result.skipped)),
    ];
    let mut names = Vec::new();
    for (name, t) in tables {
        t.write(&out.join(name))?;
        names.push(name.to_string());
    }
    let turns: Vec<(&SessionStats, f64, f64)> = refs
        .iter()
        .flat_map(|s| listed_turns(s).filter_map(|t| Some((*s, t.turn_deg?, t.world_shift_deg?))))
        .collect();
    super::figures::write_batch_figures(&out.join("figures"), &refs, &vectors, &order, &turns)?;
    names.push("figures/".to_string());
    Ok(names)
}
