//! Whether a column file holds what its `samples.csv` reads as, row for row: for `check`,
//! which reports it, and `check --repair`, which writes it again when it does not.

use xxhash_rust::xxh3::Xxh3;

use super::{BLOCK_ROWS, COLUMNS_FILE, ColumnsRead, Row, Written, read_columns, write_columns};
use crate::archive::read::for_each_valid_sample;
use crate::archive::{ArchiveError, SAMPLES_FILE};
use std::path::Path;

/// How a session's column file stands against its `samples.csv`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnsState {
    /// It matches and holds, row for row and bit for bit, what the CSV reads as.
    Current,
    /// There is none.
    Missing,
    /// `batch` would not use it (the reason).
    Unused(String),
    /// `batch` would use it, but its rows are not the CSV's (where they first differ).
    Differs(String),
}

/// Compares `dir/samples.columns` with `dir/samples.csv` row by row (each block of
/// [`BLOCK_ROWS`] rows by an xxh3 digest of its bits). An unreadable CSV is its reader's error.
pub fn verify_columns(dir: &Path) -> Result<ColumnsState, ArchiveError> {
    let mut from_columns = BlockDigests::default();
    match read_columns(dir, |r| from_columns.push(r)) {
        ColumnsRead::Missing => return Ok(ColumnsState::Missing),
        ColumnsRead::Unused(why) => return Ok(ColumnsState::Unused(why)),
        ColumnsRead::Done(_) => {}
    }
    let mut from_csv = BlockDigests::default();
    let stats = for_each_valid_sample(&dir.join(SAMPLES_FILE), |s| from_csv.push(&Row::from(s)))?;
    if stats.torn.is_some() {
        return Ok(ColumnsState::Unused(
            "samples.csv ends in a torn line".into(),
        ));
    }
    let (a, b) = (from_columns.finish(), from_csv.finish());
    if a == b {
        return Ok(ColumnsState::Current);
    }
    let first = a
        .iter()
        .zip(&b)
        .position(|(x, y)| x != y)
        .unwrap_or(a.len().min(b.len()));
    let from_row = first * BLOCK_ROWS + 1;
    Ok(ColumnsState::Differs(format!(
        "differs from samples.csv in rows {from_row}–{} (data rows; {} rows in samples.csv)",
        from_row + BLOCK_ROWS - 1,
        stats.rows
    )))
}

impl ColumnsState {
    /// Why the column file must be written again; None when it is current.
    fn reason(self) -> Option<String> {
        match self {
            ColumnsState::Current => None,
            ColumnsState::Missing => Some("it was missing".to_string()),
            ColumnsState::Unused(why) => Some(why),
            ColumnsState::Differs(what) => Some(format!("it {what}")),
        }
    }
}

/// Writes the column file unless it is [`ColumnsState::Current`]; returns what it did, as a
/// line for the user (None: nothing to do).
pub fn refresh_columns(dir: &Path) -> Result<Option<String>, ArchiveError> {
    match verify_columns(dir)?.reason() {
        None => Ok(None),
        Some(why) => rewrite_columns(dir, &why).map(Some),
    }
}

/// Writes the column file, already known to be out of step for `why`; returns what it did, as
/// a line for the user.
pub fn rewrite_columns(dir: &Path, why: &str) -> Result<String, ArchiveError> {
    Ok(match write_columns(dir)? {
        Written::Rows(n) => format!("{COLUMNS_FILE}: written from {n} samples ({why})"),
        Written::Not(reason) => format!("{COLUMNS_FILE}: not written: {reason}"),
    })
}

/// `check`'s part: a note when the column file is missing or would not be used, a problem
/// when it would be used and holds other rows; either way `--repair` writes it.
pub(crate) fn check_into(dir: &Path, r: &mut crate::archive::check::CheckReport) {
    let repair = "'skybearing check --repair' writes it";
    let Ok(state) = verify_columns(dir) else {
        return;
    };
    match &state {
        ColumnsState::Current => return,
        ColumnsState::Missing => r.notes.push(format!(
            "{COLUMNS_FILE} is missing: batch reads samples.csv (slower); {repair}"
        )),
        ColumnsState::Unused(why) => r.notes.push(format!(
            "{COLUMNS_FILE} is out of step with samples.csv ({why}): batch reads samples.csv; {repair}"
        )),
        ColumnsState::Differs(what) => r.problems.push(format!(
            "{COLUMNS_FILE} {what}: batch would read those rows from it; {repair} again"
        )),
    }
    r.columns_to_write = state.reason();
}

/// Digests of consecutive blocks of rows, plus the count.
#[derive(Default)]
struct BlockDigests {
    done: Vec<u64>,
    open: Option<Xxh3>,
    in_open: usize,
}

impl BlockDigests {
    fn push(&mut self, r: &Row) {
        let h = self.open.get_or_insert_with(Xxh3::new);
        for b in r.bits() {
            h.update(&b.to_le_bytes());
        }
        self.in_open += 1;
        if self.in_open == BLOCK_ROWS {
            self.close();
        }
    }

    fn close(&mut self) {
        if let Some(h) = self.open.take() {
            self.done.push(h.digest() ^ self.in_open as u64);
            self.in_open = 0;
        }
    }

    fn finish(mut self) -> Vec<u64> {
        self.close();
        self.done
    }
}
