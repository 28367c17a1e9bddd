//! Reading `events.csv`: RFC 4180 records, the torn-tail rule of the sample reader, and
//! resynchronisation at the next line after a malformed record.

use super::{ReadStats, TornTail, split_csv_record, strip_cr};
use crate::archive::fmt::parse_f64;
use crate::archive::{ArchiveError, EVENT_COLUMNS};
use std::path::Path;

/// One row of `events.csv`.
#[derive(Debug, Clone, PartialEq)]
pub struct EventRecord {
    /// 1-based line number where the record starts.
    pub line: u64,
    /// `t_utc` as written.
    pub t_utc: String,
    /// Seconds since the session started.
    pub t_s: f64,
    /// Event kind.
    pub kind: String,
    /// Free text.
    pub detail: String,
}

/// The end of the record that starts at `pos` (a newline outside quotes, or the end of the
/// bytes), whether a newline ended it, and how many line breaks it holds inside quotes.
fn record_end(bytes: &[u8], pos: usize) -> (usize, bool, u64) {
    let mut in_quotes = false;
    let mut inner = 0u64;
    for (i, &b) in bytes.iter().enumerate().skip(pos) {
        match b {
            b'"' => in_quotes = !in_quotes,
            b'\n' if in_quotes => inner += 1,
            b'\n' => return (i, true, inner),
            _ => {}
        }
    }
    (bytes.len(), false, inner)
}

/// All rows of an `events.csv` (RFC 4180: quoted fields may hold commas, quotes and line
/// breaks), with the same torn-tail rule as [`for_each_sample`].
///
/// A malformed record before the last line does not stop the read: when it spans several
/// lines (a stray `"` opened a quote that never closed where it should), only its first line
/// is taken as malformed and reading resynchronises at the next line, so one bad line never
/// swallows the rest of the file. Each such line is listed in [`ReadStats::set_aside`].
pub fn read_events(path: &Path) -> Result<(Vec<EventRecord>, ReadStats), ArchiveError> {
    let bytes = std::fs::read(path).map_err(|e| ArchiveError::io(path, e))?;
    let fmt_err = |line: u64, message: String| ArchiveError::Format {
        path: path.to_path_buf(),
        line,
        message,
    };
    let mut stats = ReadStats::default();
    let (he, terminated, inner) = record_end(&bytes, 0);
    if !terminated {
        return Err(fmt_err(1, "no complete header line".into()));
    }
    let header = (inner == 0)
        .then(|| std::str::from_utf8(strip_cr(&bytes[..he])).ok())
        .flatten()
        .and_then(split_csv_record)
        .ok_or_else(|| fmt_err(1, "header is not valid CSV".into()))?;
    let header: Vec<String> = header.into_iter().map(|c| c.trim().to_string()).collect();
    let mut idx = [0usize; 4];
    for (k, name) in EVENT_COLUMNS.iter().enumerate() {
        idx[k] = header
            .iter()
            .position(|c| c == name)
            .ok_or_else(|| fmt_err(1, format!("missing column {name:?}")))?;
    }
    stats.columns = header.clone();
    stats.good_bytes = he as u64 + 1;
    let parse = |rline: u64, rec: &[u8]| {
        std::str::from_utf8(strip_cr(rec))
            .map_err(|_| "not UTF-8".to_string())
            .and_then(|t| split_csv_record(t).ok_or_else(|| "malformed quoted field".to_string()))
            .and_then(|fields| {
                if fields.len() != header.len() {
                    return Err(format!(
                        "{} fields, the header has {}",
                        fields.len(),
                        header.len()
                    ));
                }
                let t_s = parse_f64(fields[idx[1]].as_bytes())
                    .ok_or_else(|| format!("column t_s: not a number: {:?}", fields[idx[1]]))?;
                if fields[idx[2]].is_empty() {
                    return Err("column kind: empty".into());
                }
                Ok(EventRecord {
                    line: rline,
                    t_utc: fields[idx[0]].clone(),
                    t_s,
                    kind: fields[idx[2]].clone(),
                    detail: fields[idx[3]].clone(),
                })
            })
    };
    let mut out = Vec::new();
    let (mut pos, mut rline) = (he + 1, 2u64);
    while pos < bytes.len() {
        let (e, terminated, inner) = record_end(&bytes, pos);
        match parse(rline, &bytes[pos..e]) {
            Ok(r) if terminated => {
                out.push(r);
                stats.rows += 1;
                stats.good_bytes = e as u64 + 1;
                pos = e + 1;
                rline += 1 + inner;
            }
            Ok(_) => {
                stats.torn = Some(TornTail {
                    line: rline,
                    offset: pos as u64,
                    len: (e - pos) as u64,
                    reason: "no newline at the end of the file".into(),
                });
                break;
            }
            Err(msg) => {
                // Only the record's first line is malformed for sure: resynchronise after it.
                let line_end = memchr::memchr(b'\n', &bytes[pos..]).map(|k| pos + k);
                match line_end {
                    Some(le) if le + 1 < bytes.len() => {
                        stats.set_aside.push(TornTail {
                            line: rline,
                            offset: pos as u64,
                            len: (le + 1 - pos) as u64,
                            reason: msg,
                        });
                        pos = le + 1;
                        rline += 1;
                    }
                    _ => {
                        stats.torn = Some(TornTail {
                            line: rline,
                            offset: pos as u64,
                            len: (bytes.len() - pos) as u64,
                            reason: format!("last line does not parse: {msg}"),
                        });
                        break;
                    }
                }
            }
        }
    }
    Ok((out, stats))
}
