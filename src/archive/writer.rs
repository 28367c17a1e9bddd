//! The session writer: append-only CSV with periodic fsync, atomic JSON, a lock file.
//!
//! Number formats in the CSV files: angles with 3 decimals (directions reduced to [0, 360),
//! axes to [0, 180)), `sun_elevation_deg` with 3 decimals, `t_s` with 6 decimals, `raw` as the
//! shortest text that reads back to the exact value, instants RFC 3339 UTC with milliseconds.

use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use chrono::{DateTime, Utc};

use super::atomic::{sync_dir, write_json_atomic};
use super::fmt::{
    UtcStamper, push_angle_deg, push_axial_deg, push_csv_field, push_exact, push_fixed, push_uint,
};
use super::lock::{lock_text, read_lock};
use super::{
    ANGLE_DECIMALS, ArchiveError, EVENT_COLUMNS, EVENTS_FILE, EventRow, LOCK_FILE,
    MALFORMED_COLUMNS, MALFORMED_FILE, MalformedRow, SAMPLE_COLUMNS, SAMPLES_FILE, SESSION_FILE,
    SUMMARY_FILE, SampleRow, SessionMeta, Summary, T_S_DECIMALS, validate_session_id,
};

/// Buffered bytes written to the file once this many have piled up.
const FLUSH_AT_BYTES: usize = 1 << 20;
/// Real time between two fsyncs by [`SessionWriter::sync_if_due`].
const SYNC_EVERY: Duration = Duration::from_secs(1);

/// Writes one session folder. Create it with [`SessionWriter::create`], append rows, call
/// [`SessionWriter::sync_if_due`] from the engine loop, and close with
/// [`SessionWriter::finish`]. Dropping it without `finish` flushes what it can and leaves the
/// session `running` with its lock: `skybearing check` then reports it as interrupted once the
/// process is gone, and `check --repair` makes it whole.
#[derive(Debug)]
pub struct SessionWriter {
    dir: PathBuf,
    id: String,
    samples: File,
    events: File,
    /// `malformed.csv`, opened with the first malformed line.
    malformed: Option<File>,
    sample_buf: Vec<u8>,
    event_buf: Vec<u8>,
    malformed_buf: Vec<u8>,
    stamper: UtcStamper,
    event_stamper: UtcStamper,
    last_sync: Instant,
    samples_written: u64,
    events_written: u64,
    finished: bool,
}

fn create_new(path: &Path) -> Result<File, ArchiveError> {
    OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)
        .map_err(|e| ArchiveError::io(path, e))
}

/// The id without its trailing `_NNN` counter, if it has one.
fn counter_prefix(id: &str) -> Option<&str> {
    let (prefix, num) = id.rsplit_once('_')?;
    (num.len() == 3 && num.bytes().all(|b| b.is_ascii_digit())).then_some(prefix)
}

/// The id with its trailing `_NNN` counter raised by one (None past 999 or without a counter).
fn next_counter(id: &str) -> Option<String> {
    let prefix = counter_prefix(id)?;
    let k: u32 = id[prefix.len() + 1..].parse().ok()?;
    (k < 999).then(|| format!("{prefix}_{:03}", k + 1))
}

impl SessionWriter {
    /// Creates `sessions_dir/<meta.id>/` (the folder must not exist; `sessions_dir` is created
    /// if missing), takes its lock, writes `session.json` atomically and the CSV headers.
    pub fn create(sessions_dir: &Path, meta: &SessionMeta) -> Result<SessionWriter, ArchiveError> {
        validate_session_id(&meta.id)?;
        std::fs::create_dir_all(sessions_dir).map_err(|e| ArchiveError::io(sessions_dir, e))?;
        let dir = sessions_dir.join(&meta.id);
        match std::fs::create_dir(&dir) {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                return Err(ArchiveError::Exists { path: dir });
            }
            Err(e) => return Err(ArchiveError::io(&dir, e)),
        }
        let lock_path = dir.join(LOCK_FILE);
        let mut lock = match OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&lock_path)
        {
            Ok(f) => f,
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                let pid = read_lock(&dir).map(|l| l.pid).unwrap_or(0);
                return Err(ArchiveError::Locked {
                    path: lock_path,
                    pid,
                });
            }
            Err(e) => return Err(ArchiveError::io(&lock_path, e)),
        };
        lock.write_all(lock_text().as_bytes())
            .and_then(|()| lock.sync_all())
            .map_err(|e| ArchiveError::io(&lock_path, e))?;
        write_json_atomic(&dir, SESSION_FILE, meta)?;

        let samples_path = dir.join(SAMPLES_FILE);
        let mut samples = create_new(&samples_path)?;
        let mut header = SAMPLE_COLUMNS.join(",");
        header.push('\n');
        samples
            .write_all(header.as_bytes())
            .and_then(|()| samples.sync_data())
            .map_err(|e| ArchiveError::io(&samples_path, e))?;

        let events_path = dir.join(EVENTS_FILE);
        let mut events = create_new(&events_path)?;
        let mut header = EVENT_COLUMNS.join(",");
        header.push('\n');
        events
            .write_all(header.as_bytes())
            .and_then(|()| events.sync_data())
            .map_err(|e| ArchiveError::io(&events_path, e))?;
        sync_dir(&dir)?;

        Ok(SessionWriter {
            dir,
            id: meta.id.clone(),
            samples,
            events,
            malformed: None,
            sample_buf: Vec::with_capacity(FLUSH_AT_BYTES + 4096),
            event_buf: Vec::with_capacity(4096),
            malformed_buf: Vec::new(),
            stamper: UtcStamper::new(),
            event_stamper: UtcStamper::new(),
            last_sync: Instant::now(),
            samples_written: 0,
            events_written: 0,
            finished: false,
        })
    }

    /// Like [`SessionWriter::create`], but when the folder is already taken (another run
    /// started at the same moment chose the same id) takes the next free counter: the id's
    /// trailing `_NNN` is raised by one and the folder created again, until `create_dir`
    /// succeeds (it is atomic, so two runs never share a folder) or the counter passes 999.
    /// `meta.id` is updated to the id that was taken.
    pub fn create_next(
        sessions_dir: &Path,
        meta: &mut SessionMeta,
    ) -> Result<SessionWriter, ArchiveError> {
        loop {
            match SessionWriter::create(sessions_dir, meta) {
                Err(ArchiveError::Exists { path }) => match next_counter(&meta.id) {
                    Some(id) => meta.id = id,
                    None if counter_prefix(&meta.id).is_some() => {
                        return Err(ArchiveError::NoFreeCounter {
                            dir: sessions_dir.to_path_buf(),
                            prefix: counter_prefix(&meta.id).unwrap_or_default().to_string(),
                        });
                    }
                    None => return Err(ArchiveError::Exists { path }),
                },
                other => return other,
            }
        }
    }

    /// The session folder.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Sample rows appended so far.
    pub fn samples_written(&self) -> u64 {
        self.samples_written
    }

    /// Event rows appended so far.
    pub fn events_written(&self) -> u64 {
        self.events_written
    }

    /// Appends one sample row (buffered; written to the file every ~1 MiB and on sync).
    #[inline]
    pub fn append_sample(&mut self, row: &SampleRow) -> Result<(), ArchiveError> {
        let b = &mut self.sample_buf;
        self.stamper.push(b, &row.t_utc);
        b.push(b',');
        push_fixed(b, row.t_s, T_S_DECIMALS);
        b.push(b',');
        push_uint(b, row.epoch as u64);
        b.push(b',');
        push_angle_deg(b, row.arena_heading_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_angle_deg(b, row.arena_bearing_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_angle_deg(b, row.world_heading_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_angle_deg(b, row.sun_azimuth_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_fixed(b, row.sun_elevation_deg, ANGLE_DECIMALS);
        b.push(b',');
        b.push(if row.flying { b'1' } else { b'0' });
        b.push(b',');
        b.push(if row.scored { b'1' } else { b'0' });
        b.push(b',');
        push_angle_deg(b, row.sun_relative_heading_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_axial_deg(b, row.zenith_evector_deg, ANGLE_DECIMALS);
        b.push(b',');
        push_exact(b, row.raw);
        b.push(b',');
        b.push(if row.sun_in_view { b'1' } else { b'0' });
        b.push(b',');
        if let Some(e) = row.evector_shown_deg {
            push_axial_deg(b, e, ANGLE_DECIMALS);
        }
        b.push(b'\n');
        self.samples_written += 1;
        if self.sample_buf.len() >= FLUSH_AT_BYTES {
            self.write_samples()?;
        }
        Ok(())
    }

    /// Appends one event row (buffered).
    pub fn append_event(&mut self, row: &EventRow) -> Result<(), ArchiveError> {
        let b = &mut self.event_buf;
        self.event_stamper.push(b, &row.t_utc);
        b.push(b',');
        push_fixed(b, row.t_s, T_S_DECIMALS);
        b.push(b',');
        push_csv_field(b, &row.kind);
        b.push(b',');
        push_csv_field(b, &row.detail);
        b.push(b'\n');
        self.events_written += 1;
        if self.event_buf.len() >= FLUSH_AT_BYTES {
            self.write_events()?;
        }
        Ok(())
    }

    /// Appends one raw malformed line to `malformed.csv` (buffered; the file is created with
    /// its header on the first one).
    pub fn append_malformed(&mut self, row: &MalformedRow) -> Result<(), ArchiveError> {
        let b = &mut self.malformed_buf;
        self.event_stamper.push(b, &row.t_utc);
        b.push(b',');
        push_fixed(b, row.t_s, T_S_DECIMALS);
        b.push(b',');
        push_csv_field(b, &row.reason);
        b.push(b',');
        push_csv_field(b, &row.line);
        b.push(b'\n');
        if self.malformed_buf.len() >= FLUSH_AT_BYTES {
            self.write_malformed()?;
        }
        Ok(())
    }

    fn write_malformed(&mut self) -> Result<(), ArchiveError> {
        if self.malformed_buf.is_empty() {
            return Ok(());
        }
        let path = self.dir.join(MALFORMED_FILE);
        if self.malformed.is_none() {
            let mut f = create_new(&path)?;
            let mut header = MALFORMED_COLUMNS.join(",");
            header.push('\n');
            f.write_all(header.as_bytes())
                .and_then(|()| f.sync_data())
                .map_err(|e| ArchiveError::io(&path, e))?;
            sync_dir(&self.dir)?;
            self.malformed = Some(f);
        }
        let r = match self.malformed.as_mut() {
            Some(f) => f.write_all(&self.malformed_buf),
            None => Ok(()),
        };
        self.malformed_buf.clear();
        r.map_err(|e| ArchiveError::io(path, e))
    }

    fn write_samples(&mut self) -> Result<(), ArchiveError> {
        if !self.sample_buf.is_empty() {
            let r = self.samples.write_all(&self.sample_buf);
            self.sample_buf.clear();
            r.map_err(|e| ArchiveError::io(self.dir.join(SAMPLES_FILE), e))?;
        }
        Ok(())
    }

    fn write_events(&mut self) -> Result<(), ArchiveError> {
        if !self.event_buf.is_empty() {
            let r = self.events.write_all(&self.event_buf);
            self.event_buf.clear();
            r.map_err(|e| ArchiveError::io(self.dir.join(EVENTS_FILE), e))?;
        }
        Ok(())
    }

    /// Writes out the buffers (no fsync).
    pub fn flush(&mut self) -> Result<(), ArchiveError> {
        self.write_samples()?;
        self.write_events()?;
        self.write_malformed()
    }

    /// Writes out and fsyncs the CSV files if at least 1 s of real (monotonic) time has
    /// passed since the last sync; returns the wall-clock UTC of the sync when it synced.
    pub fn sync_if_due(&mut self) -> Result<Option<DateTime<Utc>>, ArchiveError> {
        if self.last_sync.elapsed() >= SYNC_EVERY {
            self.sync_now().map(Some)
        } else {
            Ok(None)
        }
    }

    /// Writes out and fsyncs the CSV files now; returns the wall-clock UTC of the sync.
    pub fn sync_now(&mut self) -> Result<DateTime<Utc>, ArchiveError> {
        // Whatever happens, do not retry at loop speed.
        self.last_sync = Instant::now();
        self.flush()?;
        self.samples
            .sync_data()
            .map_err(|e| ArchiveError::io(self.dir.join(SAMPLES_FILE), e))?;
        self.events
            .sync_data()
            .map_err(|e| ArchiveError::io(self.dir.join(EVENTS_FILE), e))?;
        if let Some(f) = &self.malformed {
            f.sync_data()
                .map_err(|e| ArchiveError::io(self.dir.join(MALFORMED_FILE), e))?;
        }
        Ok(Utc::now())
    }

    /// Closes the session: flushes and fsyncs the CSV files, writes `summary.json` and the
    /// final `session.json` atomically, removes the lock. Returns the folder.
    pub fn finish(
        mut self,
        meta: &SessionMeta,
        summary: &Summary,
    ) -> Result<PathBuf, ArchiveError> {
        if meta.id != self.id {
            return Err(ArchiveError::Format {
                path: self.dir.join(SESSION_FILE),
                line: 0,
                message: format!(
                    "finish with session id {:?}, but the folder was created for {:?}",
                    meta.id, self.id
                ),
            });
        }
        self.sync_now()?;
        write_json_atomic(&self.dir, SUMMARY_FILE, summary)?;
        write_json_atomic(&self.dir, SESSION_FILE, meta)?;
        let lock = self.dir.join(LOCK_FILE);
        std::fs::remove_file(&lock).map_err(|e| ArchiveError::io(&lock, e))?;
        sync_dir(&self.dir)?;
        self.finished = true;
        Ok(self.dir.clone())
    }
}

impl Drop for SessionWriter {
    fn drop(&mut self) {
        if !self.finished {
            // Best effort: get what we have onto the disk; the session stays `running` with
            // its lock, for `check --repair`.
            let _ = self.flush();
            let _ = self.samples.sync_data();
            let _ = self.events.sync_data();
            if let Some(f) = &self.malformed {
                let _ = f.sync_data();
            }
        }
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::archive::{PlannedEpoch, SessionStatus, SiteMeta, read};

    /// A session.json for tests.
    pub(crate) fn test_meta(id: &str) -> SessionMeta {
        SessionMeta {
            format_version: crate::archive::FORMAT_VERSION,
            id: id.into(),
            status: SessionStatus::Running,
            started_utc: "2026-06-14T09:30:00Z".parse().unwrap(),
            ended_utc: None,
            animal: "lm-07".into(),
            site: SiteMeta {
                name: "Larkfield Meadow (demo)".into(),
                latitude_deg: 52.1,
                longitude_deg: 0.4,
                elevation_m: 30.0,
                source: None,
            },
            time_zone: "UTC".into(),
            arena_mark_bearing_deg: 12.5,
            arena_mark_bearing_measured_deg: 12.5,
            arena_mark_reference: "true".into(),
            declination_deg: Some(1.2),
            protocol: serde_json::json!({"name": "test"}),
            epochs: vec![
                PlannedEpoch {
                    index: 1,
                    condition: "open sky".into(),
                    turn_before_deg: 0.0,
                    duration_s: 1.0,
                },
                PlannedEpoch {
                    index: 2,
                    condition: "open sky".into(),
                    turn_before_deg: 90.0,
                    duration_s: 1.0,
                },
            ],
            rig: serde_json::json!({}),
            program_version: crate::VERSION.into(),
            mode: "demo".into(),
            seed: Some(7),
            end_reason: None,
            notes: 0,
            clock_offset_s: None,
            gps: None,
        }
    }

    pub(crate) fn test_row(k: u64) -> SampleRow {
        let t_s = k as f64 * 0.01;
        let epoch = if t_s < 1.0 { 1 } else { 2 };
        let bearing = if epoch == 1 { 12.5 } else { 102.5 };
        let world = 200.0 + (k % 7) as f64 * 0.37;
        SampleRow {
            t_utc: "2026-06-14T09:30:00Z".parse::<DateTime<Utc>>().unwrap()
                + chrono::Duration::milliseconds((k * 10) as i64),
            t_s,
            epoch,
            arena_heading_deg: crate::frames::wrap_360_deg(world - bearing),
            arena_bearing_deg: bearing,
            world_heading_deg: world,
            sun_azimuth_deg: 120.0 + t_s * 0.004,
            sun_elevation_deg: 40.0,
            flying: true,
            scored: k % 50 > 5,
            sun_relative_heading_deg: crate::frames::wrap_360_deg(world - 120.0 - t_s * 0.004),
            zenith_evector_deg: 30.0,
            raw: 0.1 * k as f64,
            sun_in_view: true,
            evector_shown_deg: Some(30.0),
        }
    }

    #[test]
    fn writes_and_reads_back() {
        let d = tempfile::tempdir().unwrap();
        let meta = test_meta("s1");
        let mut w = SessionWriter::create(d.path(), &meta).unwrap();
        for k in 0..200 {
            w.append_sample(&test_row(k)).unwrap();
        }
        w.append_event(&EventRow {
            t_utc: "2026-06-14T09:30:00.5Z".parse().unwrap(),
            t_s: 0.5,
            kind: "note".into(),
            detail: "wind, \"gusty\"".into(),
        })
        .unwrap();
        assert!(w.sync_if_due().unwrap().is_none());
        w.sync_now().unwrap();
        let dir = w.dir().to_path_buf();
        assert!(dir.join(LOCK_FILE).exists());
        let mut n = 0u64;
        let st = read::for_each_sample(&dir.join(SAMPLES_FILE), |s| {
            let want = test_row(n);
            assert_eq!(s.epoch, want.epoch);
            assert!((s.world_heading_deg - want.world_heading_deg).abs() < 6e-4);
            assert!((s.t_s - want.t_s).abs() < 6e-5);
            assert_eq!(s.scored, want.scored);
            n += 1;
        })
        .unwrap();
        assert_eq!(st.rows, 200);
        let (ev, _) = read::read_events(&dir.join(EVENTS_FILE)).unwrap();
        assert_eq!(ev[0].detail, "wind, \"gusty\"");

        // A second writer on the same folder fails.
        assert!(matches!(
            SessionWriter::create(d.path(), &meta),
            Err(ArchiveError::Exists { .. })
        ));
        let summary = Summary {
            epochs: vec![],
            turns: vec![],
            r_world: 0.0,
            r_arena: 0.0,
        };
        let mut done = meta.clone();
        done.status = SessionStatus::Complete;
        let out = w.finish(&done, &summary).unwrap();
        assert!(!out.join(LOCK_FILE).exists());
        assert_eq!(
            SessionMeta::load(&out).unwrap().status,
            SessionStatus::Complete
        );
    }

    #[test]
    fn refuses_bad_session_ids() {
        let d = tempfile::tempdir().unwrap();
        for bad in ["../x", "a/b", ".hidden", ""] {
            assert!(SessionWriter::create(d.path(), &test_meta(bad)).is_err());
        }
        assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0);
    }
}
