//! `samples.columns`: a compact copy of the nine columns of `samples.csv` that the analysis
//! reads, so that `batch` over a season of sessions runs at about the speed of reading bytes
//! instead of parsing text. `samples.csv` stays the archive of record; this file is derived
//! from it, by the archive's own general reader, when a session closes and by
//! `check --repair`, and it is used only while it provably matches the CSV it came from.
//!
//! Why (measured 2026-12-02, `bash benches/batch_compare.sh` and `benches/season_compare.sh`;
//! README "Performance"): parsing the CSV was about half of batch's CPU time and held it at
//! 1.5–1.8× the fastest peer (polars). With this file batch reads under a quarter of the bytes
//! and parses no text: 2.0–2.4× faster than `batch --csv-only` on 100 sessions, 3.3–3.8× ahead
//! of polars on the CSV files and 1.2–1.5× ahead of polars on Parquet copies of the same
//! columns; 1,000 sessions in 4.8 s, where `cat` of their CSV files took 8.3 s.
//!
//! Layout (all integers little-endian; the format is this project's own):
//! - 8 bytes magic `SKYBCOL1`, then `u32` format version.
//! - Blocks of up to [`BLOCK_ROWS`] rows: `u32` rows, `u32` byte length of the rest of the
//!   block; then `t_s`, `arena_heading_deg`, `world_heading_deg` as `f64` each row; then
//!   `epoch`, `arena_bearing_deg`, `sun_azimuth_deg`, `sun_elevation_deg`, `flying`, `scored`
//!   as runs (`u32` count of runs, then per run `u64` value bits and `u32` length), since they
//!   repeat from row to row.
//! - A trailer of [`TRAILER_LEN`] bytes: magic `SKYBEND1`, rows (`u64`), and the stamp of the
//!   CSV it was made from: length (`u64`), modification time (`i64` s, `u32` ns, `u32` 1 when
//!   known), xxh3-64 of its bytes (`u64`); last, xxh3-64 of every byte of this file before it.
//!
//! When it is used: its own checksum holds, every block decodes, its row count matches, the
//! CSV has the recorded length, and either the same modification time or (after a copy that
//! did not keep times) the same xxh3 hash of its bytes. On anything else the reader says so
//! and the caller reads `samples.csv`; `check` compares it row by row with the CSV.

use std::fs::File;
use std::io::{BufWriter, Read, Seek, SeekFrom, Write};
use std::path::Path;
use std::time::UNIX_EPOCH;

use xxhash_rust::xxh3::Xxh3;

use super::atomic::sync_dir;
use super::read::{SampleFields, for_each_valid_sample};
use super::{ArchiveError, SAMPLES_FILE};

/// The column file's name in a session folder.
pub const COLUMNS_FILE: &str = "samples.columns";
const MAGIC: &[u8; 8] = b"SKYBCOL1";
const END_MAGIC: &[u8; 8] = b"SKYBEND1";
const VERSION: u32 = 1;
/// Rows per block: bounds the memory of writer and reader, and keeps a block (about 100 KB)
/// in the core's cache between the kernel's copy into the buffer and decoding it.
pub const BLOCK_ROWS: usize = 1 << 12;
/// Bytes of the trailer.
pub const TRAILER_LEN: usize = 8 + 8 + 8 + 8 + 4 + 4 + 8 + 8;
const HEADER_LEN: usize = 12;
const RUN_LEN: usize = 12;

/// The fields of one sample that the analysis uses.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Row {
    /// Seconds since the session started.
    pub t_s: f64,
    /// Epoch index (0 before the first epoch).
    pub epoch: usize,
    /// Heading relative to the arena's 0 mark.
    pub arena_heading_deg: f64,
    /// True bearing of the arena's 0 mark.
    pub arena_bearing_deg: f64,
    /// Heading relative to true north.
    pub world_heading_deg: f64,
    /// Sun azimuth.
    pub sun_azimuth_deg: f64,
    /// Sun elevation.
    pub sun_elevation_deg: f64,
    /// Flying.
    pub flying: bool,
    /// Scored.
    pub scored: bool,
}

impl From<&SampleFields<'_>> for Row {
    fn from(s: &SampleFields<'_>) -> Self {
        Row {
            t_s: s.t_s,
            epoch: s.epoch,
            arena_heading_deg: s.arena_heading_deg,
            arena_bearing_deg: s.arena_bearing_deg,
            world_heading_deg: s.world_heading_deg,
            sun_azimuth_deg: s.sun_azimuth_deg,
            sun_elevation_deg: s.sun_elevation_deg,
            flying: s.flying,
            scored: s.scored,
        }
    }
}

impl Row {
    /// Every field as exact bits, for comparing two readings of the same samples.
    pub fn bits(&self) -> [u64; 9] {
        [
            self.t_s.to_bits(),
            self.epoch as u64,
            self.arena_heading_deg.to_bits(),
            self.arena_bearing_deg.to_bits(),
            self.world_heading_deg.to_bits(),
            self.sun_azimuth_deg.to_bits(),
            self.sun_elevation_deg.to_bits(),
            u64::from(self.flying),
            u64::from(self.scored),
        ]
    }
}

/// What a CSV file was when a column file was made from it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CsvStamp {
    /// Length in bytes.
    pub len: u64,
    /// Modification time (seconds, nanoseconds since 1970), when the file system gives one.
    pub mtime: Option<(i64, u32)>,
}

impl CsvStamp {
    /// Reads the stamp of `path`.
    pub fn of(path: &Path) -> Result<CsvStamp, ArchiveError> {
        let m = std::fs::metadata(path).map_err(|e| ArchiveError::io(path, e))?;
        let mtime = m
            .modified()
            .ok()
            .map(|t| match t.duration_since(UNIX_EPOCH) {
                Ok(d) => (d.as_secs() as i64, d.subsec_nanos()),
                Err(e) => {
                    let d = e.duration();
                    (-(d.as_secs() as i64) - 1, 1_000_000_000 - d.subsec_nanos())
                }
            });
        Ok(CsvStamp {
            len: m.len(),
            mtime,
        })
    }
}

/// xxh3-64 of a file's bytes, read 128 KB at a time.
pub fn hash_file(path: &Path) -> Result<u64, ArchiveError> {
    let mut f = File::open(path).map_err(|e| ArchiveError::io(path, e))?;
    let mut h = Xxh3::new();
    let mut buf = vec![0u8; 1 << 17];
    loop {
        match f.read(&mut buf) {
            Ok(0) => return Ok(h.digest()),
            Ok(n) => h.update(&buf[..n]),
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(ArchiveError::io(path, e)),
        }
    }
}

/// What [`write_columns`] did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Written {
    /// Wrote the file with this many rows.
    Rows(u64),
    /// Did not write it, for this reason (the CSV is not complete: a torn last line, or it
    /// changed while being read). An older column file is removed, so none is left stale.
    Not(String),
}

/// Writes `dir/samples.columns` from `dir/samples.csv`, read by the archive's general reader
/// (so it holds exactly what any reading of the CSV gives), atomically: temporary file, fsync,
/// rename, fsync of the folder. Memory stays at one block whatever the file's length.
/// An unreadable CSV is the reader's error (naming file and line); nothing is written then.
pub fn write_columns(dir: &Path) -> Result<Written, ArchiveError> {
    let csv = dir.join(SAMPLES_FILE);
    let path = dir.join(COLUMNS_FILE);
    let tmp = dir.join(format!(".{COLUMNS_FILE}.tmp"));
    let before = CsvStamp::of(&csv)?;
    let hash = hash_file(&csv)?;
    let file = File::create(&tmp).map_err(|e| ArchiveError::io(&tmp, e))?;
    let mut out = HashingWriter {
        inner: BufWriter::with_capacity(1 << 17, file),
        hash: Xxh3::new(),
    };
    let mut block = Block::default();
    let mut io_err: Option<std::io::Error> = None;
    let mut rows = 0u64;
    let written = out
        .write_all(MAGIC)
        .and_then(|()| out.write_all(&VERSION.to_le_bytes()));
    let read = written
        .map_err(|e| ArchiveError::io(&tmp, e))
        .and_then(|()| {
            for_each_valid_sample(&csv, |s| {
                if io_err.is_some() {
                    return;
                }
                block.push(&Row::from(s));
                rows += 1;
                if block.len() == BLOCK_ROWS
                    && let Err(e) = block.write_to(&mut out)
                {
                    io_err = Some(e);
                }
            })
        });
    let not = |why: String| -> Result<Written, ArchiveError> {
        let _ = std::fs::remove_file(&tmp);
        match std::fs::remove_file(&path) {
            Ok(()) => sync_dir(dir)?,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => return Err(ArchiveError::io(&path, e)),
        }
        Ok(Written::Not(why))
    };
    let stats = match read {
        Ok(s) => s,
        Err(e) => {
            let _ = not(String::new());
            return Err(e);
        }
    };
    if let Some(t) = stats.torn {
        return not(format!("samples.csv ends in a torn line ({})", t.line));
    }
    if CsvStamp::of(&csv)? != before {
        return not("samples.csv changed while it was read".into());
    }
    let tail = match io_err {
        Some(e) => Err(e),
        None => block.write_to(&mut out),
    };
    let finish = tail.and_then(|()| {
        let mut t = Vec::with_capacity(TRAILER_LEN);
        t.extend_from_slice(END_MAGIC);
        t.extend_from_slice(&rows.to_le_bytes());
        t.extend_from_slice(&before.len.to_le_bytes());
        let (s, ns, known) = before.mtime.map_or((0, 0, 0u32), |(s, ns)| (s, ns, 1));
        t.extend_from_slice(&s.to_le_bytes());
        t.extend_from_slice(&ns.to_le_bytes());
        t.extend_from_slice(&known.to_le_bytes());
        t.extend_from_slice(&hash.to_le_bytes());
        out.write_all(&t)?;
        let sum = out.hash.digest();
        out.inner.write_all(&sum.to_le_bytes())?;
        let f = out.inner.into_inner().map_err(|e| e.into_error())?;
        f.sync_all()
    });
    if let Err(e) = finish {
        let _ = std::fs::remove_file(&tmp);
        return Err(ArchiveError::io(&tmp, e));
    }
    std::fs::rename(&tmp, &path).map_err(|e| ArchiveError::io(&path, e))?;
    sync_dir(dir)?;
    Ok(Written::Rows(rows))
}

/// [`write_columns`] for a session that has just closed: None when written, else the line
/// that says why not (batch then reads `samples.csv`; `check` notes it, `--repair` writes it).
pub fn write_at_close(dir: &Path) -> Option<String> {
    match write_columns(dir) {
        Ok(Written::Rows(_)) => None,
        Ok(Written::Not(why)) => Some(format!("{COLUMNS_FILE} not written: {why}")),
        Err(e) => Some(format!("{COLUMNS_FILE} not written: {e}")),
    }
}

struct HashingWriter {
    inner: BufWriter<File>,
    hash: Xxh3,
}

impl Write for HashingWriter {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        let n = self.inner.write(buf)?;
        self.hash.update(&buf[..n]);
        Ok(n)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush()
    }
}

/// Rows of one block, column by column.
#[derive(Default)]
struct Block {
    t_s: Vec<f64>,
    arena_heading: Vec<f64>,
    world_heading: Vec<f64>,
    /// epoch, arena bearing, sun azimuth, sun elevation, flying, scored: value bits and runs.
    runs: [Vec<(u64, u32)>; 6],
}

impl Block {
    fn len(&self) -> usize {
        self.t_s.len()
    }

    fn push(&mut self, r: &Row) {
        self.t_s.push(r.t_s);
        self.arena_heading.push(r.arena_heading_deg);
        self.world_heading.push(r.world_heading_deg);
        let b = r.bits();
        for (runs, v) in self
            .runs
            .iter_mut()
            .zip([b[1], b[3], b[5], b[6], b[7], b[8]])
        {
            match runs.last_mut() {
                Some((last, n)) if *last == v => *n += 1,
                _ => runs.push((v, 1)),
            }
        }
    }

    fn write_to(&mut self, out: &mut impl Write) -> std::io::Result<()> {
        let n = self.len();
        if n == 0 {
            return Ok(());
        }
        let body = 24 * n
            + self
                .runs
                .iter()
                .map(|r| 4 + RUN_LEN * r.len())
                .sum::<usize>();
        let mut buf = Vec::with_capacity(8 + body);
        buf.extend_from_slice(&(n as u32).to_le_bytes());
        buf.extend_from_slice(&(body as u32).to_le_bytes());
        for col in [&self.t_s, &self.arena_heading, &self.world_heading] {
            for x in col {
                buf.extend_from_slice(&x.to_le_bytes());
            }
        }
        for runs in &self.runs {
            buf.extend_from_slice(&(runs.len() as u32).to_le_bytes());
            for (v, len) in runs {
                buf.extend_from_slice(&v.to_le_bytes());
                buf.extend_from_slice(&len.to_le_bytes());
            }
        }
        out.write_all(&buf)?;
        self.t_s.clear();
        self.arena_heading.clear();
        self.world_heading.clear();
        self.runs.iter_mut().for_each(Vec::clear);
        Ok(())
    }
}

/// How reading a column file ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnsRead {
    /// Every row was handed over; this many.
    Done(u64),
    /// There is no column file.
    Missing,
    /// The column file was not used (the reason, for the user). Rows may already have been
    /// handed over: the caller starts again from `samples.csv`.
    Unused(String),
}

/// Streams the rows of `dir/samples.columns` through `f` if it matches `dir/samples.csv`
/// (see the module notes); never an error: anything wrong is a reason to read the CSV.
pub fn read_columns(dir: &Path, mut f: impl FnMut(&Row)) -> ColumnsRead {
    let path = dir.join(COLUMNS_FILE);
    let mut file = match File::open(&path) {
        Ok(file) => file,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return ColumnsRead::Missing,
        Err(e) => return ColumnsRead::Unused(format!("{COLUMNS_FILE}: {e}")),
    };
    match read_inner(dir, &mut file, &mut f) {
        Ok(rows) => ColumnsRead::Done(rows),
        Err(why) => ColumnsRead::Unused(why),
    }
}

fn read_inner(dir: &Path, file: &mut File, f: &mut impl FnMut(&Row)) -> Result<u64, String> {
    let io = |e: std::io::Error| format!("{COLUMNS_FILE}: {e}");
    let len = file.metadata().map_err(io)?.len();
    if len < (HEADER_LEN + TRAILER_LEN) as u64 {
        return Err(format!("{COLUMNS_FILE} is too short to be one"));
    }
    let mut trailer = [0u8; TRAILER_LEN];
    file.seek(SeekFrom::End(-(TRAILER_LEN as i64)))
        .map_err(io)?;
    file.read_exact(&mut trailer).map_err(io)?;
    let t = Trailer::parse(&trailer).ok_or_else(|| format!("{COLUMNS_FILE} has no trailer"))?;
    // Is it still the copy of this samples.csv?
    let csv = dir.join(SAMPLES_FILE);
    let now = CsvStamp::of(&csv).map_err(|e| e.to_string())?;
    if now.len != t.csv.len {
        return Err(format!(
            "samples.csv is {} bytes, {COLUMNS_FILE} was made from {} bytes",
            now.len, t.csv.len
        ));
    }
    if now.mtime.is_none() || now.mtime != t.csv.mtime {
        let h = hash_file(&csv).map_err(|e| e.to_string())?;
        if h != t.csv_hash {
            return Err(format!(
                "samples.csv is not the file {COLUMNS_FILE} was made from (same length, other bytes)"
            ));
        }
    }
    file.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut hash = Xxh3::new();
    let mut head = [0u8; HEADER_LEN];
    file.read_exact(&mut head).map_err(io)?;
    hash.update(&head);
    if &head[..8] != MAGIC || u32_at(&head, 8) != Some(VERSION) {
        return Err(format!("{COLUMNS_FILE} is not format version {VERSION}"));
    }
    let body_end = len - TRAILER_LEN as u64;
    let mut pos = HEADER_LEN as u64;
    let mut rows = 0u64;
    let mut buf = Vec::new();
    let corrupt = |what: &str| format!("{COLUMNS_FILE} is damaged ({what})");
    while pos < body_end {
        let mut bh = [0u8; 8];
        if pos + 8 > body_end {
            return Err(corrupt("a cut block"));
        }
        file.read_exact(&mut bh).map_err(io)?;
        hash.update(&bh);
        let (n, body) = (u32_at(&bh, 0).unwrap_or(0), u32_at(&bh, 4).unwrap_or(0));
        pos += 8 + u64::from(body);
        if pos > body_end || n == 0 || n as usize > BLOCK_ROWS {
            return Err(corrupt("a block's size"));
        }
        buf.resize(body as usize, 0);
        file.read_exact(&mut buf).map_err(io)?;
        hash.update(&buf);
        decode_block(&buf, n as usize, f).ok_or_else(|| corrupt("a block's runs"))?;
        rows += u64::from(n);
    }
    hash.update(&trailer[..TRAILER_LEN - 8]);
    if hash.digest() != t.checksum {
        return Err(corrupt("checksum"));
    }
    if rows != t.rows {
        return Err(corrupt("row count"));
    }
    Ok(rows)
}

struct Trailer {
    rows: u64,
    csv: CsvStamp,
    csv_hash: u64,
    checksum: u64,
}

impl Trailer {
    fn parse(b: &[u8; TRAILER_LEN]) -> Option<Trailer> {
        if &b[..8] != END_MAGIC {
            return None;
        }
        let mtime = (u32_at(b, 36)? == 1).then_some((u64_at(b, 24)? as i64, u32_at(b, 32)?));
        Some(Trailer {
            rows: u64_at(b, 8)?,
            csv: CsvStamp {
                len: u64_at(b, 16)?,
                mtime,
            },
            csv_hash: u64_at(b, 40)?,
            checksum: u64_at(b, 48)?,
        })
    }
}

fn u32_at(b: &[u8], at: usize) -> Option<u32> {
    Some(u32::from_le_bytes(b.get(at..at + 4)?.try_into().ok()?))
}

fn u64_at(b: &[u8], at: usize) -> Option<u64> {
    Some(u64::from_le_bytes(b.get(at..at + 8)?.try_into().ok()?))
}

/// Decodes one block body; `None` if its runs do not add up to `n` rows or run off its end.
fn decode_block(b: &[u8], n: usize, f: &mut impl FnMut(&Row)) -> Option<()> {
    let cols = b.get(..24 * n)?;
    let (t_s, rest) = cols.split_at(8 * n);
    let (arena, world) = rest.split_at(8 * n);
    let mut at = 24 * n;
    let mut runs: [&[u8]; 6] = [&[]; 6];
    for r in &mut runs {
        let count = u32_at(b, at)? as usize;
        let end = at + 4 + RUN_LEN * count;
        *r = b.get(at + 4..end)?;
        at = end;
        let total: u64 = r
            .chunks_exact(RUN_LEN)
            .map(|c| u64::from(u32_at(c, 8).unwrap_or(0)))
            .sum();
        if total != n as u64 {
            return None;
        }
    }
    if at != b.len() {
        return None;
    }
    let mut cursors = runs.map(RunCursor::new);
    let f64_at =
        |c: &[u8], i: usize| f64::from_le_bytes(c[8 * i..8 * i + 8].try_into().unwrap_or([0; 8]));
    for i in 0..n {
        let [e, bearing, az, el, flying, scored] = &mut cursors;
        f(&Row {
            t_s: f64_at(t_s, i),
            epoch: e.next() as usize,
            arena_heading_deg: f64_at(arena, i),
            arena_bearing_deg: f64::from_bits(bearing.next()),
            world_heading_deg: f64_at(world, i),
            sun_azimuth_deg: f64::from_bits(az.next()),
            sun_elevation_deg: f64::from_bits(el.next()),
            flying: flying.next() != 0,
            scored: scored.next() != 0,
        });
    }
    Some(())
}

/// Walks the runs of one column (their lengths were checked to add up to the block's rows).
struct RunCursor<'a> {
    runs: &'a [u8],
    value: u64,
    left: u32,
}

impl<'a> RunCursor<'a> {
    fn new(runs: &'a [u8]) -> Self {
        RunCursor {
            runs,
            value: 0,
            left: 0,
        }
    }

    fn next(&mut self) -> u64 {
        while self.left == 0 {
            let Some((run, rest)) = self.runs.split_at_checked(RUN_LEN) else {
                return self.value;
            };
            self.value = u64_at(run, 0).unwrap_or(0);
            self.left = u32_at(run, 8).unwrap_or(0);
            self.runs = rest;
        }
        self.left -= 1;
        self.value
    }
}

mod verify;
pub(crate) use verify::check_into;
pub use verify::{ColumnsState, refresh_columns, rewrite_columns, verify_columns};

#[cfg(test)]
mod tests;
