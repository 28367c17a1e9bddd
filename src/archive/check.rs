//! Checking and repairing session folders (`skybearing check`).

use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

use serde::Serialize;

use super::atomic::{sync_dir, write_atomic, write_json_atomic};
pub use super::compare::{
    SUMMARY_TOLERANCE, StoredKeys, compare_stored_summary, compare_summaries, read_stored_summary,
};
use super::fmt::push_fixed;
use super::lock::{LockState, lock_state};
use super::read::{self, ReadStats};
use super::{
    ArchiveError, EVENT_COLUMNS, EVENTS_FILE, FORMAT_VERSION, LOCK_FILE, PlannedEpoch,
    SAMPLE_COLUMNS, SAMPLES_FILE, SESSION_FILE, SUMMARY_FILE, SessionMeta, SessionStatus, Summary,
    SummaryBuilder, T_S_DECIMALS, format_utc_millis, parse_utc, read_json,
};

/// The findings of [`check_session`] on one folder.
#[derive(Debug, Clone, Serialize)]
pub struct CheckReport {
    /// The folder.
    pub dir: PathBuf,
    /// Session id from `session.json`.
    pub id: Option<String>,
    /// Status from `session.json`.
    pub status: Option<SessionStatus>,
    /// Good sample rows.
    pub samples: u64,
    /// Good event rows.
    pub events: u64,
    /// The session is `running` and its writer is alive.
    pub live: bool,
    /// The session is `running` and no live writer holds it.
    pub interrupted: bool,
    /// What is wrong (empty: the folder is fine).
    pub problems: Vec<String>,
    /// Remarks that do not make the folder bad.
    pub notes: Vec<String>,
    /// Why `samples.columns` is to be written again (missing or out of step with
    /// `samples.csv`): `--repair` writes it. None when it is current or not checked.
    #[serde(skip)]
    pub columns_to_write: Option<String>,
}

impl CheckReport {
    /// The report on a folder that `check --repair` removed (see [`repair_session`]).
    pub fn removed(dir: &Path) -> CheckReport {
        CheckReport {
            dir: dir.to_path_buf(),
            id: None,
            status: None,
            samples: 0,
            events: 0,
            live: false,
            interrupted: false,
            problems: Vec::new(),
            notes: vec!["removed by --repair: nothing was recorded in it".into()],
            columns_to_write: None,
        }
    }

    /// True when nothing is wrong.
    pub fn ok(&self) -> bool {
        self.problems.is_empty()
    }
}

/// The contract's fields of `session.json` (nested `site.*` included).
const CONTRACT_SESSION_FIELDS: &[&str] = &[
    "id",
    "status",
    "started_utc",
    "ended_utc",
    "site",
    "site.name",
    "site.latitude_deg",
    "site.longitude_deg",
    "site.elevation_m",
    "arena_mark_bearing_deg",
    "declination_deg",
    "protocol",
    "rig",
    "program_version",
];

fn missing_contract_fields(v: &serde_json::Value) -> Vec<&'static str> {
    CONTRACT_SESSION_FIELDS
        .iter()
        .copied()
        .filter(|f| {
            let mut cur = Some(v);
            for part in f.split('.') {
                cur = cur.and_then(|c| c.get(part));
            }
            cur.is_none()
        })
        .collect()
}

/// Everything a pass over `samples.csv` learns.
#[derive(Debug, Default)]
struct SamplePass {
    stats: ReadStats,
    last_t_utc: String,
    first_t_utc: String,
    first_t_s: f64,
    last_t_s: f64,
    problems: Vec<String>,
    notes: Vec<String>,
    summary: Option<Summary>,
}

/// Frames tolerance: world = arena + bearing within rounding of three 3-decimal numbers.
const FRAME_TOLERANCE_DEG: f64 = 0.0016;

/// The column names of a CSV file's header line (empty when it cannot be read).
fn header_columns(path: &Path) -> Vec<String> {
    use std::io::{BufRead, BufReader, Read};
    let mut line = Vec::new();
    let read =
        File::open(path).map(|f| BufReader::new(f.take(1 << 16)).read_until(b'\n', &mut line));
    match (read, std::str::from_utf8(&line)) {
        (Ok(Ok(_)), Ok(text)) => read::split_csv_record(text.trim_end())
            .unwrap_or_default()
            .into_iter()
            .map(|c| c.trim().to_string())
            .collect(),
        _ => Vec::new(),
    }
}

fn sample_pass(dir: &Path, epochs: Option<&[PlannedEpoch]>) -> Result<SamplePass, ArchiveError> {
    let path = dir.join(SAMPLES_FILE);
    let mut pass = SamplePass {
        first_t_s: f64::NAN,
        last_t_s: f64::NAN,
        ..Default::default()
    };
    let mut builder = epochs.map(SummaryBuilder::new);
    let max_epoch = epochs
        .map(|e| e.iter().map(|e| e.index).max().unwrap_or(0))
        .unwrap_or(usize::MAX);
    let columns = header_columns(&path);
    let has = |name: &str| columns.iter().any(|c| c == name);
    let (has_evector, has_raw) = (has("zenith_evector_deg"), has("raw"));
    let mut utc_bad: (u64, Option<u64>) = (0, None);
    let mut frame_bad: (u64, Option<u64>) = (0, None);
    let mut epoch_bad: (u64, Option<u64>) = (0, None);
    let mut sun_range_bad: (u64, Option<u64>) = (0, None);
    let mut sun_rel_bad: (u64, Option<u64>) = (0, None);
    let mut evector_bad: (u64, Option<u64>) = (0, None);
    let mut raw_bad: (u64, Option<u64>) = (0, None);
    let note = |c: &mut (u64, Option<u64>), line: u64| {
        c.0 += 1;
        c.1.get_or_insert(line);
    };
    // Parsing, UTF-8 and the order of rows (t_s strictly increasing) are the reader's rules,
    // shared with `report` and `batch`; a row breaking them is an error naming its line.
    let stats = read::for_each_valid_sample(&path, |s| {
        if !read::is_utc_millis(s.t_utc.as_bytes()) || s.t_utc < pass.last_t_utc.as_str() {
            note(&mut utc_bad, s.line);
        }
        let d = crate::frames::wrap_signed_deg(
            s.arena_heading_deg + s.arena_bearing_deg - s.world_heading_deg,
        );
        // A sample without a heading (both NaN) has nothing to compare.
        let no_heading = !s.arena_heading_deg.is_finite() && !s.world_heading_deg.is_finite();
        if !no_heading && (d.is_nan() || d.abs() > FRAME_TOLERANCE_DEG) {
            note(&mut frame_bad, s.line);
        }
        let az = s.sun_azimuth_deg;
        if !(0.0..360.0).contains(&az) || !(-90.0..=90.0).contains(&s.sun_elevation_deg) {
            note(&mut sun_range_bad, s.line);
        }
        // The sun-relative heading is world − azimuth (NaN with no heading).
        if s.world_heading_deg.is_finite() || s.sun_relative_heading_deg.is_finite() {
            let d = crate::frames::wrap_signed_deg(
                s.world_heading_deg - az - s.sun_relative_heading_deg,
            );
            if d.is_nan() || d.abs() > FRAME_TOLERANCE_DEG {
                note(&mut sun_rel_bad, s.line);
            }
        }
        // Single-scattering Rayleigh sky: the zenith e-vector is perpendicular to the solar
        // meridian, an axis in [0, 180).
        if has_evector {
            let e = s.zenith_evector_deg;
            let d = crate::frames::wrap_axial_deg(az + 90.0 - e);
            if !(0.0..180.0).contains(&e) || d.min(180.0 - d) > FRAME_TOLERANCE_DEG {
                note(&mut evector_bad, s.line);
            }
        }
        if !s.raw.is_finite() && has_raw {
            note(&mut raw_bad, s.line);
        }
        if s.epoch > max_epoch {
            note(&mut epoch_bad, s.line);
        }
        if pass.first_t_utc.is_empty() {
            pass.first_t_utc.push_str(s.t_utc);
            pass.first_t_s = s.t_s;
        }
        pass.last_t_utc.clear();
        pass.last_t_utc.push_str(s.t_utc);
        pass.last_t_s = s.t_s;
        if let Some(b) = builder.as_mut() {
            b.push_fields(s);
        }
    })?;
    let mut report = |c: (u64, Option<u64>), what: &str| {
        if let (n, Some(first)) = c {
            let rows = if n == 1 { "row" } else { "rows" };
            pass.problems
                .push(format!("samples.csv:{first}: {what} ({n} {rows} in all)"));
        }
    };
    report(
        utc_bad,
        "t_utc is not RFC 3339 UTC with milliseconds or goes back in time",
    );
    report(
        frame_bad,
        "world_heading_deg differs from arena_heading_deg + arena_bearing_deg",
    );
    report(
        sun_range_bad,
        "sun_azimuth_deg outside [0, 360) or sun_elevation_deg outside [-90, 90]",
    );
    report(
        sun_rel_bad,
        "sun_relative_heading_deg differs from world_heading_deg - sun_azimuth_deg",
    );
    report(
        evector_bad,
        "zenith_evector_deg is not the axis perpendicular to sun_azimuth_deg in [0, 180)",
    );
    report(raw_bad, "raw is not a finite number");
    if let (n, Some(first)) = epoch_bad {
        pass.notes.push(format!(
            "samples.csv:{first}: epoch is not in the plan of session.json ({n} rows; they count only for r_world and r_arena)"
        ));
    }
    pass.stats = stats;
    pass.summary = builder.map(|b| b.summary());
    Ok(pass)
}

/// Total scored samples over the epochs of a summary.
fn scored_total(s: &Summary) -> u64 {
    s.epochs.iter().map(|e| e.n).sum()
}

/// When `samples.csv` holds fewer scored samples than a closed session's `summary.json`
/// counts, samples were lost after the session closed: the message saying so.
fn lost_samples(stored: &Summary, computed: &Summary) -> Option<String> {
    let (had, has) = (scored_total(stored), scored_total(computed));
    (has < had).then(|| {
        format!(
            "{has} scored samples but summary.json counts {had}: {} were lost after the session closed (truncated or replaced file); summary.json is the record of the session as run and is kept",
            had - has
        )
    })
}

/// Files a writer leaves in a folder before `session.json` exists: the lock and the temporary
/// file of the atomic write.
const STARTUP_FILES: &[&str] = &[LOCK_FILE, ".session.json.tmp"];

/// When `dir` has no `session.json` and holds nothing but what a writer creates before it (a
/// run killed between creating the folder and writing `session.json`), why it is empty; None
/// otherwise (also while the writer is alive: it may be about to write).
fn started_but_empty(dir: &Path) -> Option<String> {
    if dir.join(SESSION_FILE).exists() || matches!(lock_state(dir), LockState::Alive(_)) {
        return None;
    }
    let mut has_lock = false;
    for entry in std::fs::read_dir(dir).ok()? {
        let name = entry.ok()?.file_name();
        let name = name.to_str()?;
        if !STARTUP_FILES.contains(&name) {
            return None;
        }
        has_lock |= name == LOCK_FILE;
    }
    has_lock.then(|| {
        "no session.json: the run was killed before it wrote one (only .lock is left)".into()
    })
}

/// Checks one session folder against the archive contract.
pub fn check_session(dir: &Path) -> CheckReport {
    let mut r = CheckReport {
        dir: dir.to_path_buf(),
        id: None,
        status: None,
        samples: 0,
        events: 0,
        live: false,
        interrupted: false,
        problems: Vec::new(),
        notes: Vec::new(),
        columns_to_write: None,
    };
    if !dir.is_dir() {
        r.problems.push("not a folder".into());
        return r;
    }
    if let Some(why) = started_but_empty(dir) {
        r.problems.push(format!(
            "{why}; nothing was recorded in it: 'skybearing check --repair' removes the folder"
        ));
        return r;
    }
    // session.json
    let session_path = dir.join(SESSION_FILE);
    let meta: Option<SessionMeta> = match read_json::<serde_json::Value>(&session_path) {
        Err(e) => {
            r.problems.push(e.to_string());
            None
        }
        Ok(v) => {
            let missing = missing_contract_fields(&v);
            if !missing.is_empty() {
                r.problems.push(format!(
                    "session.json: missing field(s) {}",
                    missing.join(", ")
                ));
            }
            match serde_json::from_value::<SessionMeta>(v) {
                Ok(m) => Some(m),
                Err(e) => {
                    r.problems.push(format!("session.json: {e}"));
                    None
                }
            }
        }
    };
    if let Some(m) = &meta {
        r.id = Some(m.id.clone());
        if m.format_version > FORMAT_VERSION {
            r.notes.push(format!(
                "written in archive format {} by a newer program (this one reads format {FORMAT_VERSION})",
                m.format_version
            ));
        }
        r.status = Some(m.status);
        if dir.file_name().and_then(|n| n.to_str()) != Some(m.id.as_str()) {
            r.notes.push(format!(
                "folder name differs from the session id {:?}",
                m.id
            ));
        }
        if m.status.is_closed() && m.ended_utc.is_none() {
            r.problems.push(format!(
                "session.json: status {} but no ended_utc",
                m.status.as_str()
            ));
        }
    }
    // Lock and liveness.
    let lock = lock_state(dir);
    match (meta.as_ref().map(|m| m.status), lock) {
        (Some(SessionStatus::Running), LockState::Alive(l)) => {
            r.live = true;
            r.notes
                .push(format!("being recorded now by process {}", l.pid));
        }
        (Some(SessionStatus::Running), other) => {
            r.interrupted = true;
            let why = match other {
                LockState::Dead(l) => format!("writer process {} is gone", l.pid),
                LockState::Unreadable => "lock file unreadable".into(),
                _ => "no lock file".into(),
            };
            r.problems.push(format!(
                "interrupted: status running but {why}; 'skybearing check --repair' makes it whole"
            ));
        }
        (Some(_), LockState::Alive(l)) => r.problems.push(format!(
            "closed session still locked by live process {}",
            l.pid
        )),
        (Some(_), LockState::Dead(_) | LockState::Unreadable) => r
            .problems
            .push("stale lock file (.lock) in a closed session".into()),
        _ => {}
    }
    // samples.csv
    let pass = match sample_pass(dir, meta.as_ref().map(|m| m.epochs.as_slice())) {
        Ok(p) => Some(p),
        Err(e) => {
            r.problems.push(e.to_string());
            None
        }
    };
    if let Some(p) = &pass {
        r.samples = p.stats.rows;
        r.problems.extend(p.problems.iter().cloned());
        r.notes.extend(p.notes.iter().cloned());
        if let Some(t) = &p.stats.torn {
            let what = format!(
                "samples.csv:{}: torn last line ({} bytes): {}",
                t.line, t.len, t.reason
            );
            // A live writer's last line may simply be in flight.
            if r.live {
                r.notes.push(what);
            } else {
                r.problems.push(what);
            }
        }
        if let Some(m) = &meta
            && !p.first_t_utc.is_empty()
        {
            for (t_utc, t_s) in [(&p.first_t_utc, p.first_t_s), (&p.last_t_utc, p.last_t_s)] {
                if let Some(t) = parse_utc(t_utc) {
                    let want =
                        m.started_utc + chrono::Duration::microseconds((t_s * 1e6).round() as i64);
                    let off_ms = (t - want).num_milliseconds().abs();
                    if off_ms > 2 {
                        r.notes.push(format!(
                            "samples.csv: t_utc {t_utc} is {off_ms} ms off started_utc + t_s"
                        ));
                    }
                }
            }
        }
    }
    let closed = meta.as_ref().is_some_and(|m| m.status.is_closed());
    if closed && !r.live && pass.as_ref().is_some_and(|p| p.stats.torn.is_none()) {
        super::columns::check_into(dir, &mut r);
    }
    // events.csv
    let mut unscored = Vec::new();
    match read::read_events(&dir.join(EVENTS_FILE)) {
        Err(e) => r.problems.push(e.to_string()),
        Ok((ev, st)) => {
            r.events = st.rows;
            unscored = super::summary::unscored_turns(
                ev.iter().map(|e| (e.kind.as_str(), e.detail.as_str())),
            );
            for b in &st.set_aside {
                r.problems.push(format!(
                    "events.csv:{}: malformed line ({}); 'skybearing check --repair' sets it aside in events.csv.torn and keeps the lines after it",
                    b.line, b.reason
                ));
            }
            if let Some(t) = &st.torn {
                let what = format!(
                    "events.csv:{}: torn last line ({} bytes): {}",
                    t.line, t.len, t.reason
                );
                if r.live {
                    r.notes.push(what);
                } else {
                    r.problems.push(what);
                }
            }
            if closed && !ev.iter().any(|e| e.kind == "session_end") {
                r.notes.push("events.csv has no session_end event".into());
            }
        }
    }
    // malformed.csv (only when the sensor sent malformed lines)
    if let Some(m) = super::malformed::check_malformed(dir) {
        r.problems.extend(m.problems);
        r.notes.extend(m.notes);
    }
    // summary.json
    let summary_path = dir.join(SUMMARY_FILE);
    if let Some(m) = &meta {
        if m.status.is_closed() {
            match read_stored_summary(&summary_path) {
                Err(e) => r.problems.push(e.to_string()),
                Ok((stored, keys)) => {
                    if keys.p_oriented_other_window {
                        r.notes.push(
                            "summary.json: p_oriented was computed with an earlier lag window \
                             (1–5 s; see p_oriented_lags_s in docs/files.md); not compared"
                                .into(),
                        );
                    }
                    if let Some(computed) = pass.as_ref().and_then(|p| p.summary.as_ref()) {
                        let mut computed = computed.clone();
                        super::summary::drop_unscored_turns(&mut computed, &unscored);
                        if let Some(loss) = lost_samples(&stored, &computed) {
                            r.problems.push(format!("samples.csv: {loss}"));
                        }
                        for d in compare_stored_summary(&stored, &keys, &computed) {
                            r.problems.push(format!("summary.json: {d}"));
                        }
                    }
                }
            }
        } else if summary_path.exists() {
            r.problems
                .push("summary.json exists but the session is not closed".into());
        }
    }
    r
}

/// What [`repair_session`] did.
#[derive(Debug, Clone, Default, Serialize)]
pub struct RepairOutcome {
    /// One line per action.
    pub actions: Vec<String>,
    /// The folder was removed: it held nothing but the lock of a run killed before it wrote
    /// `session.json`.
    pub removed: bool,
}

fn torn_copy_path(path: &Path) -> PathBuf {
    let base = format!("{}.torn", path.display());
    let mut candidate = PathBuf::from(&base);
    let mut k = 2;
    while candidate.exists() {
        candidate = PathBuf::from(format!("{base}.{k}"));
        k += 1;
    }
    candidate
}

/// Cuts a file at `good_bytes`, first saving the dropped bytes to `<file>.torn` (or
/// `.torn.2`...). Returns the copy's path.
fn cut_torn_tail(path: &Path, good_bytes: u64) -> Result<PathBuf, ArchiveError> {
    let bytes = std::fs::read(path).map_err(|e| ArchiveError::io(path, e))?;
    let start = usize::try_from(good_bytes)
        .unwrap_or(usize::MAX)
        .min(bytes.len());
    let copy = torn_copy_path(path);
    {
        let mut f = File::create(&copy).map_err(|e| ArchiveError::io(&copy, e))?;
        f.write_all(&bytes[start..])
            .and_then(|()| f.sync_all())
            .map_err(|e| ArchiveError::io(&copy, e))?;
    }
    let f = OpenOptions::new()
        .write(true)
        .open(path)
        .map_err(|e| ArchiveError::io(path, e))?;
    f.set_len(start as u64)
        .and_then(|()| f.sync_all())
        .map_err(|e| ArchiveError::io(path, e))?;
    Ok(copy)
}

/// Takes the byte spans `lines` (in file order, not overlapping) out of `dir/name`: they go
/// to `<file>.torn` (or `.torn.2`...), and the rest replaces the file atomically. Returns the
/// copy's path.
fn set_aside_lines(
    dir: &Path,
    name: &str,
    lines: &[&read::TornTail],
) -> Result<PathBuf, ArchiveError> {
    let path = dir.join(name);
    let bytes = std::fs::read(&path).map_err(|e| ArchiveError::io(&path, e))?;
    let (mut kept, mut dropped) = (Vec::with_capacity(bytes.len()), Vec::new());
    let mut at = 0usize;
    for t in lines {
        let s = usize::try_from(t.offset)
            .unwrap_or(usize::MAX)
            .min(bytes.len())
            .max(at);
        let e = usize::try_from(t.offset + t.len)
            .unwrap_or(usize::MAX)
            .min(bytes.len())
            .max(s);
        kept.extend_from_slice(&bytes[at..s]);
        dropped.extend_from_slice(&bytes[s..e]);
        at = e;
    }
    kept.extend_from_slice(&bytes[at..]);
    let copy = torn_copy_path(&path);
    {
        let mut f = File::create(&copy).map_err(|e| ArchiveError::io(&copy, e))?;
        f.write_all(&dropped)
            .and_then(|()| f.sync_all())
            .map_err(|e| ArchiveError::io(&copy, e))?;
    }
    write_atomic(dir, name, &kept)?;
    Ok(copy)
}

fn ensure_csv(path: &Path, columns: &[&str]) -> Result<bool, ArchiveError> {
    if path.exists() {
        return Ok(false);
    }
    let mut f = File::create(path).map_err(|e| ArchiveError::io(path, e))?;
    let mut header = columns.join(",");
    header.push('\n');
    f.write_all(header.as_bytes())
        .and_then(|()| f.sync_all())
        .map_err(|e| ArchiveError::io(path, e))?;
    Ok(true)
}

/// Makes an interrupted session whole: drops torn last lines (keeping `.torn` copies of the
/// dropped bytes), sets malformed lines of `events.csv` aside the same way (the lines after
/// one are kept), recomputes and writes `summary.json`, sets status `recovered` with
/// `ended_utc` the last sample's t_utc, appends a `session_end` event with detail `recovered`
/// and removes the stale lock. A closed session only gets its torn tails cut, a missing or
/// wrong `summary.json` rewritten and a stale lock removed.
///
/// Refuses (nothing is changed, [`ArchiveError::Lost`]) a closed session whose `samples.csv`
/// is missing or holds fewer scored samples than its `summary.json` counts: the summary is the
/// record of the session as run and is never rewritten from what is left, and no empty
/// `samples.csv` is made under it. Refuses a session whose writer is alive, and one whose
/// `samples.csv` has a bad line before the last. A folder that holds only what a writer makes
/// before `session.json` (`.lock`, the atomic write's temporary file) and whose writer is gone
/// is removed ([`RepairOutcome::removed`]): nothing was recorded in it.
/// Never drops a complete sample row.
pub fn repair_session(dir: &Path) -> Result<RepairOutcome, ArchiveError> {
    let mut out = RepairOutcome::default();
    let lock_path = dir.join(LOCK_FILE);
    let lock = lock_state(dir);
    if let LockState::Alive(l) = lock {
        return Err(ArchiveError::Locked {
            path: lock_path,
            pid: l.pid,
        });
    }
    if let Some(why) = started_but_empty(dir) {
        // Nothing was recorded: remove exactly the files a writer makes before session.json,
        // then the (now empty) folder.
        for name in STARTUP_FILES {
            let p = dir.join(name);
            match std::fs::remove_file(&p) {
                Ok(()) => {}
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
                Err(e) => return Err(ArchiveError::io(&p, e)),
            }
        }
        std::fs::remove_dir(dir).map_err(|e| ArchiveError::io(dir, e))?;
        if let Some(parent) = dir.parent().filter(|p| !p.as_os_str().is_empty()) {
            sync_dir(parent)?;
        }
        out.actions.push(format!(
            "removed the folder: {why}; nothing was recorded in it"
        ));
        out.removed = true;
        return Ok(out);
    }
    let mut meta = SessionMeta::load(dir)?;
    let samples_path = dir.join(SAMPLES_FILE);
    let events_path = dir.join(EVENTS_FILE);
    let closed = meta.status.is_closed();
    // Read everything first: refuse before changing anything.
    if closed && !samples_path.exists() {
        return Err(ArchiveError::Lost {
            path: samples_path,
            message: format!(
                "missing from a {} session: its samples are lost; summary.json is kept as the record of the session as run (restore samples.csv from a copy); nothing was changed",
                meta.status.as_str()
            ),
        });
    }
    let samples_created = !samples_path.exists();
    if samples_created {
        ensure_csv(&samples_path, SAMPLE_COLUMNS)?;
        out.actions
            .push("samples.csv was missing: created it with its header".into());
    }
    let pass = sample_pass(dir, Some(&meta.epochs))?;
    if !events_path.exists() {
        ensure_csv(&events_path, EVENT_COLUMNS)?;
        out.actions
            .push("events.csv was missing: created it with its header".into());
    }
    let (events, ev_stats) = read::read_events(&events_path)?;
    let mut computed = pass
        .summary
        .clone()
        .unwrap_or_else(|| SummaryBuilder::new(&meta.epochs).summary());
    let unscored =
        super::summary::unscored_turns(events.iter().map(|e| (e.kind.as_str(), e.detail.as_str())));
    super::summary::drop_unscored_turns(&mut computed, &unscored);
    let stored = read_stored_summary(&dir.join(SUMMARY_FILE));
    if closed
        && let Ok((stored, _)) = &stored
        && let Some(loss) = lost_samples(stored, &computed)
    {
        return Err(ArchiveError::Lost {
            path: samples_path,
            message: format!("{loss}; nothing was changed"),
        });
    }

    if let Some(t) = &pass.stats.torn {
        let copy = cut_torn_tail(&samples_path, pass.stats.good_bytes)?;
        out.actions.push(format!(
            "samples.csv: dropped torn line {} ({} bytes, kept in {})",
            t.line,
            t.len,
            copy.display()
        ));
    }
    if !ev_stats.set_aside.is_empty() {
        let spans: Vec<&read::TornTail> = ev_stats.set_aside.iter().chain(&ev_stats.torn).collect();
        let copy = set_aside_lines(dir, EVENTS_FILE, &spans)?;
        for t in &spans {
            out.actions.push(format!(
                "events.csv: set aside malformed line {} ({} bytes, kept in {}): {}",
                t.line,
                t.len,
                copy.display(),
                t.reason
            ));
        }
    } else if let Some(t) = &ev_stats.torn {
        let copy = cut_torn_tail(&events_path, ev_stats.good_bytes)?;
        out.actions.push(format!(
            "events.csv: dropped torn line {} ({} bytes, kept in {})",
            t.line,
            t.len,
            copy.display()
        ));
    }

    let last_sample_utc = parse_utc(&pass.last_t_utc);
    let last_event = events.last();
    let write_summary = match (meta.status, stored) {
        (SessionStatus::Running, _) => true,
        (_, Err(_)) => true,
        (_, Ok((stored, keys))) => !compare_stored_summary(&stored, &keys, &computed).is_empty(),
    };

    if meta.status == SessionStatus::Running {
        let ended = last_sample_utc
            .or_else(|| last_event.and_then(|e| parse_utc(&e.t_utc)))
            .unwrap_or(meta.started_utc);
        let already =
            last_event.is_some_and(|e| e.kind == "session_end" && e.detail == "recovered");
        if !already {
            let mut t_s = if pass.last_t_s.is_finite() {
                pass.last_t_s
            } else {
                0.0
            };
            if let Some(e) = last_event
                && e.t_s.is_finite()
            {
                t_s = t_s.max(e.t_s);
            }
            let mut line = Vec::new();
            line.extend_from_slice(format_utc_millis(&ended).as_bytes());
            line.push(b',');
            push_fixed(&mut line, t_s, T_S_DECIMALS);
            line.extend_from_slice(b",session_end,recovered\n");
            let mut f = OpenOptions::new()
                .append(true)
                .open(&events_path)
                .map_err(|e| ArchiveError::io(&events_path, e))?;
            f.write_all(&line)
                .and_then(|()| f.sync_all())
                .map_err(|e| ArchiveError::io(&events_path, e))?;
            out.actions
                .push("events.csv: appended session_end (recovered)".into());
        }
        write_json_atomic(dir, SUMMARY_FILE, &computed)?;
        out.actions.push(format!(
            "summary.json: written from {} samples",
            pass.stats.rows
        ));
        meta.status = SessionStatus::Recovered;
        meta.ended_utc = Some(ended);
        if meta.end_reason.is_none() {
            meta.end_reason = Some("interrupted; recovered by skybearing check --repair".into());
        }
        write_json_atomic(dir, SESSION_FILE, &meta)?;
        out.actions.push(format!(
            "session.json: status recovered, ended_utc {}",
            format_utc_millis(&ended)
        ));
    } else {
        if write_summary {
            write_json_atomic(dir, SUMMARY_FILE, &computed)?;
            out.actions.push(format!(
                "summary.json: rewritten from {} samples",
                pass.stats.rows
            ));
        }
        if meta.ended_utc.is_none() {
            meta.ended_utc = Some(last_sample_utc.unwrap_or(meta.started_utc));
            write_json_atomic(dir, SESSION_FILE, &meta)?;
            out.actions.push("session.json: ended_utc set".into());
        }
    }
    if !matches!(lock, LockState::Free) {
        std::fs::remove_file(&lock_path).map_err(|e| ArchiveError::io(&lock_path, e))?;
        sync_dir(dir)?;
        out.actions.push("removed the stale lock".into());
    }
    out.actions.extend(super::columns::refresh_columns(dir)?);
    Ok(out)
}
