//! A small streaming, header-driven reader of `samples.csv` for the analysis commands.
//!
//! Columns are found by header name (the contract's names), so extra or reordered columns are
//! fine. One pass, one line buffer: memory does not grow with the file.

use super::AnalysisError;
use std::io::{BufRead, BufReader, Read};
use std::path::Path;

/// The fields of one sample that the analysis uses.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Sample {
    /// Seconds since the session started.
    pub t_s: f64,
    /// 1-based epoch (0 before the first epoch).
    pub epoch: u32,
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
    /// Counts in scores.
    pub scored: bool,
}

/// What the pass saw besides the samples.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ReadOutcome {
    /// Data rows delivered.
    pub rows: u64,
    /// The last line was cut short (no newline and unreadable) and was left out, as after an
    /// interrupted session.
    pub torn_tail: bool,
}

const NEEDED: [&str; 9] = [
    "t_s",
    "epoch",
    "arena_heading_deg",
    "arena_bearing_deg",
    "world_heading_deg",
    "sun_azimuth_deg",
    "sun_elevation_deg",
    "flying",
    "scored",
];

/// Streams `samples.csv` at `path`, calling `f` for every row in order.
///
/// A malformed line in the middle of the file is an error naming the file, line and field;
/// a malformed last line without a trailing newline is a torn tail and is left out.
pub fn for_each_sample(
    path: &Path,
    mut f: impl FnMut(&Sample),
) -> Result<ReadOutcome, AnalysisError> {
    let file = std::fs::File::open(path).map_err(|e| AnalysisError::io(path, e))?;
    read_samples(BufReader::with_capacity(1 << 20, file), path, &mut f)
}

fn read_samples<R: Read>(
    mut reader: BufReader<R>,
    path: &Path,
    f: &mut dyn FnMut(&Sample),
) -> Result<ReadOutcome, AnalysisError> {
    let mut line: Vec<u8> = Vec::with_capacity(256);
    let n = reader
        .read_until(b'\n', &mut line)
        .map_err(|e| AnalysisError::io(path, e))?;
    if n == 0 {
        return Err(AnalysisError::Format {
            path: path.to_path_buf(),
            line: 1,
            msg: "empty file (no header)".into(),
        });
    }
    let header = std::str::from_utf8(trim_eol(&line)).map_err(|_| AnalysisError::Format {
        path: path.to_path_buf(),
        line: 1,
        msg: "header is not UTF-8".into(),
    })?;
    let names: Vec<String> = header
        .trim_start_matches('\u{feff}')
        .split(',')
        .map(|s| s.trim().trim_matches('"').to_string())
        .collect();
    // slot[col] = which NEEDED field column `col` holds (or usize::MAX).
    let mut slot = vec![usize::MAX; names.len()];
    for (k, want) in NEEDED.iter().enumerate() {
        match names.iter().position(|n| n == want) {
            Some(col) => slot[col] = k,
            None => {
                return Err(AnalysisError::Format {
                    path: path.to_path_buf(),
                    line: 1,
                    msg: format!("header has no column '{want}'"),
                });
            }
        }
    }
    let ncols = names.len();

    let mut out = ReadOutcome::default();
    let mut lineno: u64 = 1;
    let mut pending: Option<(u64, AnalysisError)> = None;
    loop {
        line.clear();
        let n = reader
            .read_until(b'\n', &mut line)
            .map_err(|e| AnalysisError::io(path, e))?;
        if n == 0 {
            break;
        }
        lineno += 1;
        if let Some((_, err)) = pending.take() {
            // A bad line followed by more data: torn in the middle.
            return Err(err);
        }
        let complete = line.last() == Some(&b'\n');
        let body = trim_eol(&line);
        if body.is_empty() {
            continue;
        }
        match parse_line(body, &slot, ncols) {
            Ok(s) => {
                out.rows += 1;
                f(&s);
            }
            Err((col, msg)) => {
                let err = AnalysisError::Parse {
                    path: path.to_path_buf(),
                    line: lineno,
                    field: names.get(col).map(|s| s.to_string()).unwrap_or_default(),
                    msg,
                };
                if complete {
                    pending = Some((lineno, err));
                } else {
                    out.torn_tail = true;
                }
            }
        }
    }
    if let Some((_, err)) = pending {
        // The last line ended with a newline but is unreadable: also torn (a partial write
        // that happened to stop after a newline is impossible, so this is real damage).
        return Err(err);
    }
    Ok(out)
}

fn trim_eol(line: &[u8]) -> &[u8] {
    let mut end = line.len();
    while end > 0 && (line[end - 1] == b'\n' || line[end - 1] == b'\r') {
        end -= 1;
    }
    &line[..end]
}

/// Parses the needed fields of one data line. Err((column, message)).
#[inline]
fn parse_line(body: &[u8], slot: &[usize], ncols: usize) -> Result<Sample, (usize, String)> {
    let mut vals = [0.0f64; 9];
    let mut col = 0usize;
    let mut start = 0usize;
    let mut i = 0usize;
    let len = body.len();
    let mut in_quotes = false;
    loop {
        let at_end = i == len;
        if !at_end {
            let b = body[i];
            if b == b'"' {
                in_quotes = !in_quotes;
                i += 1;
                continue;
            }
            if b != b',' || in_quotes {
                i += 1;
                continue;
            }
        }
        // field [start, i)
        if col < slot.len() && slot[col] != usize::MAX {
            let field = &body[start..i];
            vals[slot[col]] = parse_f64(field).ok_or_else(|| {
                (
                    col,
                    format!("not a number: '{}'", String::from_utf8_lossy(field)),
                )
            })?;
        }
        col += 1;
        if at_end {
            break;
        }
        i += 1;
        start = i;
    }
    if col < ncols {
        return Err((
            col.min(ncols.saturating_sub(1)),
            format!("{col} fields, header has {ncols}"),
        ));
    }
    if col > ncols {
        return Err((ncols - 1, format!("{col} fields, header has {ncols}")));
    }
    let epoch = vals[1];
    if !(0.0..=u32::MAX as f64).contains(&epoch) || epoch.fract() != 0.0 {
        return Err((
            slot.iter().position(|&s| s == 1).unwrap_or(0),
            "epoch is not a whole number".into(),
        ));
    }
    Ok(Sample {
        t_s: vals[0],
        epoch: epoch as u32,
        arena_heading_deg: vals[2],
        arena_bearing_deg: vals[3],
        world_heading_deg: vals[4],
        sun_azimuth_deg: vals[5],
        sun_elevation_deg: vals[6],
        flying: vals[7] != 0.0,
        scored: vals[8] != 0.0,
    })
}

/// Parses a decimal number quickly ("-12.345", "7", "0.5"); falls back to the standard parser
/// for anything else (exponents, "NaN"...). None for an empty or unreadable field.
#[inline]
pub fn parse_f64(field: &[u8]) -> Option<f64> {
    let field = trim_spaces(field);
    if field.is_empty() {
        return None;
    }
    let (neg, digits) = match field[0] {
        b'-' => (true, &field[1..]),
        b'+' => (false, &field[1..]),
        _ => (false, field),
    };
    let mut int: u64 = 0;
    let mut frac_digits: i32 = 0;
    let mut seen_dot = false;
    let mut ndig = 0;
    for &b in digits {
        match b {
            b'0'..=b'9' => {
                ndig += 1;
                if ndig > 18 {
                    return slow(field);
                }
                int = int * 10 + (b - b'0') as u64;
                if seen_dot {
                    frac_digits += 1;
                }
            }
            b'.' if !seen_dot => seen_dot = true,
            _ => return slow(field),
        }
    }
    if ndig == 0 {
        return slow(field);
    }
    const POW10: [f64; 19] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
        1e17, 1e18,
    ];
    // int < 2^63 and a power of ten ≤ 1e18 are exact only up to 2^53: beyond that use the
    // correctly rounded standard parser.
    if int >= (1u64 << 53) {
        return slow(field);
    }
    let v = int as f64 / POW10[frac_digits as usize];
    Some(if neg { -v } else { v })
}

fn slow(field: &[u8]) -> Option<f64> {
    std::str::from_utf8(field).ok()?.parse::<f64>().ok()
}

fn trim_spaces(mut f: &[u8]) -> &[u8] {
    while let [b' ' | b'"', rest @ ..] = f {
        f = rest;
    }
    while let [rest @ .., b' ' | b'"'] = f {
        f = rest;
    }
    f
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Cursor;

    const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored,raw\n";

    fn read(text: &str) -> Result<(Vec<Sample>, ReadOutcome), AnalysisError> {
        let mut v = Vec::new();
        let out = read_samples(
            BufReader::new(Cursor::new(text.as_bytes().to_vec())),
            Path::new("x/samples.csv"),
            &mut |s| v.push(*s),
        )?;
        Ok((v, out))
    }

    #[test]
    fn parses_by_header_and_skips_torn_tail() {
        let text = format!(
            "{HEADER}2026-06-01T10:00:00.000Z,0.01,1,10.5,200,210.5,120.25,40.1,1,0,3\n2026-06-01T10:00:00.010Z,0.02,1,11,200,211,120.25,40.1,1,1,4\n2026-06-01T10:00:00.020Z,0.0"
        );
        let (v, out) = read(&text).unwrap();
        assert_eq!(v.len(), 2);
        assert!(out.torn_tail);
        assert_eq!(v[1].world_heading_deg, 211.0);
        assert!(v[1].scored && !v[0].scored);
        assert_eq!(v[0].arena_heading_deg, 10.5);
    }

    #[test]
    fn torn_line_in_the_middle_is_an_error_naming_line_and_field() {
        let text = format!(
            "{HEADER}2026-06-01T10:00:00.000Z,0.01,1,10.5,200,210.5,120.25,40.1,1,0,3\n2026-06-01T10:00:00.010Z,0.02,1,1\n2026-06-01T10:00:00.020Z,0.03,1,11,200,211,120.25,40.1,1,1,4\n"
        );
        let err = read(&text).unwrap_err().to_string();
        assert!(err.contains("line 3"), "{err}");
        assert!(err.contains("samples.csv"), "{err}");
    }

    #[test]
    fn missing_column_is_named() {
        let err = read("t_s,epoch\n1,1\n").unwrap_err().to_string();
        assert!(err.contains("arena_heading_deg"), "{err}");
    }

    #[test]
    fn fast_parser_agrees_with_std() {
        for s in [
            "0",
            "-0.5",
            "359.999",
            "12.3456789",
            "1e-3",
            "NaN",
            "+7.25",
            "123456789.123456",
        ] {
            let want: f64 = s.parse().unwrap();
            let got = parse_f64(s.as_bytes()).unwrap();
            assert!(
                (want.is_nan() && got.is_nan()) || (got - want).abs() <= 1e-12 * want.abs(),
                "{s}"
            );
        }
        assert!(parse_f64(b"").is_none());
        assert!(parse_f64(b"abc").is_none());
    }
}
