//! A fast path for reading the nine columns of `samples.csv` that the analysis needs.
//!
//! `batch` reads tens of millions of rows, and [`crate::archive::read::for_each_sample`]
//! parses every column of every row (t_utc, sun-relative heading, e-vector...). This scanner
//! finds the needed columns by header name, parses only those (with the archive's own number
//! parser), and merely counts the commas of the others. It handles only the plain case: every
//! line complete and unquoted, every needed field a plain number. On anything else it gives up
//! with [`ScanOutcome::Fallback`], and the caller reads the file again with the archive's
//! general reader, which owns the rules for quoted fields, torn last lines and error messages.

use crate::archive::fmt::parse_f64;
use std::io::Read;
use std::path::Path;

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

impl From<&crate::archive::read::SampleFields<'_>> for Row {
    fn from(s: &crate::archive::read::SampleFields<'_>) -> Self {
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

/// How a fast scan ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ScanOutcome {
    /// Every line was read; this many rows.
    Done(u64),
    /// Something outside the plain case: read the file with the general reader instead.
    Fallback,
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
const NONE: u8 = u8::MAX;

/// Streams the rows of `samples.csv` through `f` if the file is plain (see the module notes).
/// I/O errors also give `Fallback` (the general reader reports them with their path).
pub fn scan_samples(path: &Path, mut f: impl FnMut(&Row)) -> ScanOutcome {
    let Ok(mut file) = std::fs::File::open(path) else {
        return ScanOutcome::Fallback;
    };
    let mut buf = vec![0u8; 1 << 20];
    let (mut start, mut end) = (0usize, 0usize);
    let mut slots: Option<(Vec<u8>, usize)> = None; // column → NEEDED index; column count
    let mut rows = 0u64;
    loop {
        while let Some(k) = memchr::memchr(b'\n', &buf[start..end]) {
            let mut line = &buf[start..start + k];
            if let [rest @ .., b'\r'] = line {
                line = rest;
            }
            start += k + 1;
            match &slots {
                None => match header_slots(line) {
                    Some(s) => slots = Some(s),
                    None => return ScanOutcome::Fallback,
                },
                Some((slot, ncols)) => match parse_row(line, slot, *ncols) {
                    Some(row) => {
                        rows += 1;
                        f(&row);
                    }
                    None => return ScanOutcome::Fallback,
                },
            }
        }
        buf.copy_within(start..end, 0);
        end -= start;
        start = 0;
        if end == buf.len() {
            buf.resize(buf.len() * 2, 0);
        }
        match file.read(&mut buf[end..]) {
            Ok(0) => break,
            Ok(n) => end += n,
            Err(_) => return ScanOutcome::Fallback,
        }
    }
    if end > 0 || slots.is_none() {
        // A last line without its newline (an interrupted session), or no header at all.
        return ScanOutcome::Fallback;
    }
    ScanOutcome::Done(rows)
}

fn header_slots(line: &[u8]) -> Option<(Vec<u8>, usize)> {
    let text = std::str::from_utf8(line).ok()?;
    if text.contains('"') || text.split(',').count() > MAX_COLS {
        return None;
    }
    let names: Vec<&str> = text.split(',').map(str::trim).collect();
    let mut slot = vec![NONE; names.len()];
    for (k, want) in NEEDED.iter().enumerate() {
        // The first column of that name counts, as in the general reader.
        let col = names.iter().position(|n| n == want)?;
        slot[col] = k as u8;
    }
    Some((slot, names.len()))
}

/// Powers of ten for the decimals of a plain number (as in the archive's parser).
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];
/// Integers below this are exact in an f64.
const EXACT_INT: u64 = 1 << 53;

/// Most columns a line may have on the fast path.
const MAX_COLS: usize = 64;

/// Bit mask (the high bit of each byte) of the bytes of `w` equal to `b`, exactly (no false
/// positives): the SWAR byte comparison of Hacker's Delight §6.1.
#[inline(always)]
fn byte_mask(w: u64, b: u8) -> u64 {
    const LO7: u64 = 0x7f7f_7f7f_7f7f_7f7f;
    let x = w ^ (u64::from(b) * 0x0101_0101_0101_0101);
    !(((x & LO7) + LO7) | x | LO7)
}

/// Counts the commas of `line`, eight bytes at a time, and stores the positions of the first
/// `need` of them (need ≤ `MAX_COLS`); None when the line holds a quote.
#[inline]
fn comma_positions(line: &[u8], out: &mut [usize; MAX_COLS], need: usize) -> Option<usize> {
    let mut k = 0usize;
    let mut base = 0usize;
    let mut chunks = line.chunks_exact(8);
    let mut visit = |w: u64, base: usize, valid: u64| -> Option<()> {
        if byte_mask(w, b'"') & valid != 0 {
            return None;
        }
        let mut m = byte_mask(w, b',') & valid;
        // (A loop, not count_ones: the baseline x86-64 target has no popcount instruction.)
        while m != 0 {
            if k < need {
                out[k] = base + (m.trailing_zeros() / 8) as usize;
            }
            k += 1;
            m &= m - 1;
        }
        Some(())
    };
    for c in &mut chunks {
        let w = u64::from_le_bytes([c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]]);
        visit(w, base, u64::MAX)?;
        base += 8;
    }
    let rest = chunks.remainder();
    if !rest.is_empty() {
        let mut pad = [0u8; 8];
        pad[..rest.len()].copy_from_slice(rest);
        let valid = u64::MAX >> (8 * (8 - rest.len()));
        visit(u64::from_le_bytes(pad), base, valid)?;
    }
    Some(k)
}

/// A plain decimal [-]digits[.digits], parsed as the archive's parser does (integer mantissa
/// divided by a power of ten, exact for up to 15 significant digits); anything else through
/// the archive's parser itself.
#[inline]
fn parse_number(field: &[u8]) -> Option<f64> {
    let (neg, digits) = match field.first() {
        Some(b'-') => (true, &field[1..]),
        _ => (false, field),
    };
    let mut m: u64 = 0;
    let mut decimals = 0usize;
    let mut dot = false;
    for &b in digits {
        if b.is_ascii_digit() {
            m = m.wrapping_mul(10).wrapping_add((b - b'0') as u64);
            decimals += dot as usize;
        } else if b == b'.' && !dot {
            dot = true;
        } else {
            return parse_f64(field);
        }
    }
    let n_digits = digits.len() - dot as usize;
    if n_digits == 0 || n_digits > 19 || decimals > 22 || m >= EXACT_INT {
        return parse_f64(field);
    }
    let x = m as f64 / POW10[decimals];
    Some(if neg { -x } else { x })
}

/// Parses the needed fields of one line. None for anything outside the plain case.
#[inline]
fn parse_row(line: &[u8], slot: &[u8], ncols: usize) -> Option<Row> {
    let mut commas = [0usize; MAX_COLS];
    // Positions are needed up to the comma that ends the last needed column.
    let need = (slot.iter().rposition(|&s| s != NONE).unwrap_or(0) + 1).min(MAX_COLS);
    let k = comma_positions(line, &mut commas, need)?;
    if k + 1 != ncols {
        return None;
    }
    let mut v = [0.0f64; 9];
    let mut epoch = 0usize;
    let mut flags = [false; 2];
    for (col, &s) in slot.iter().enumerate().take(need) {
        if s == NONE {
            continue;
        }
        let start = if col == 0 { 0 } else { commas[col - 1] + 1 };
        let end = if col + 1 == ncols {
            line.len()
        } else {
            commas[col]
        };
        let field = line.get(start..end)?;
        match s {
            1 => epoch = parse_uint(field)?,
            7 | 8 => {
                flags[(s - 7) as usize] = match field {
                    b"0" => false,
                    b"1" => true,
                    _ => return None,
                }
            }
            _ => v[s as usize] = parse_number(field)?,
        }
    }
    Some(Row {
        t_s: v[0],
        epoch,
        arena_heading_deg: v[2],
        arena_bearing_deg: v[3],
        world_heading_deg: v[4],
        sun_azimuth_deg: v[5],
        sun_elevation_deg: v[6],
        flying: flags[0],
        scored: flags[1],
    })
}

#[inline]
fn parse_uint(field: &[u8]) -> Option<usize> {
    if field.is_empty() || field.len() > 9 {
        return None;
    }
    let mut v = 0usize;
    for &b in field {
        if !b.is_ascii_digit() {
            return None;
        }
        v = v * 10 + (b - b'0') as usize;
    }
    Some(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scan(text: &str) -> (ScanOutcome, Vec<Row>) {
        let tmp = tempfile::NamedTempFile::new().unwrap();
        std::fs::write(tmp.path(), text).unwrap();
        let mut rows = Vec::new();
        let out = scan_samples(tmp.path(), |r| rows.push(*r));
        (out, rows)
    }

    const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored,raw\n";

    #[test]
    fn plain_file_is_read_by_header_name() {
        let (out, rows) = scan(&format!(
            "{HEADER}2026-06-01T10:00:00.000Z,0.0100,1,10.500,200.000,210.500,120.250,40.100,1,0,3\n\
             2026-06-01T10:00:00.010Z,0.0200,2,11.000,200.000,211.000,120.250,40.100,0,1,-4.5\n"
        ));
        assert_eq!(out, ScanOutcome::Done(2));
        assert_eq!(
            rows[1],
            Row {
                t_s: 0.02,
                epoch: 2,
                arena_heading_deg: 11.0,
                arena_bearing_deg: 200.0,
                world_heading_deg: 211.0,
                sun_azimuth_deg: 120.25,
                sun_elevation_deg: 40.1,
                flying: false,
                scored: true,
            }
        );
    }

    #[test]
    fn agrees_with_the_archive_reader_field_by_field() {
        let mut text = String::from(HEADER);
        let numbers = [
            "0",
            "359.999",
            "12.5",
            "-0.125",
            "1e-3",
            "7",
            "123456.0001",
            "0.000",
            "+4.5",
        ];
        for i in 0..400usize {
            let f = |k: usize| numbers[(i * 7 + k * 3) % numbers.len()];
            text.push_str(&format!(
                "2026-06-01T10:00:00.000Z,{},{},{},{},{},{},{},{},{},{}\n",
                f(0),
                i % 13,
                f(1),
                f(2),
                f(3),
                f(4),
                f(5),
                i % 2,
                (i / 3) % 2,
                f(6)
            ));
        }
        let (out, fast) = scan(&text);
        assert_eq!(out, ScanOutcome::Done(400));
        let tmp = tempfile::NamedTempFile::new().unwrap();
        std::fs::write(tmp.path(), &text).unwrap();
        let mut general = Vec::new();
        crate::archive::read::for_each_sample(tmp.path(), |s| general.push(Row::from(s))).unwrap();
        assert_eq!(fast.len(), general.len());
        for (a, b) in fast.iter().zip(&general) {
            // Bit-equal numbers: the same parse rule.
            assert_eq!(format!("{a:?}"), format!("{b:?}"));
        }
    }

    #[test]
    fn byte_masks_are_exact() {
        let w = u64::from_le_bytes(*b",a,\",,\x80,");
        let at = |i: &[u32]| i.iter().map(|b| 0x80u64 << (8 * b)).sum::<u64>();
        assert_eq!(byte_mask(w, b','), at(&[0, 2, 4, 5, 7]));
        assert_eq!(byte_mask(w, b'"'), at(&[3]));
        assert_eq!(byte_mask(w, 0x80), at(&[6]));
        let mut out = [0usize; MAX_COLS];
        let k = comma_positions(b"ab,cd,,efghijklmn,op,q", &mut out, 9).unwrap();
        assert_eq!(&out[..k], &[2, 5, 6, 17, 20]);
        assert_eq!(
            comma_positions(b"ab,cd,,efghijklmn,op,q", &mut out, 2),
            Some(5)
        );
        assert!(comma_positions(b"ab,\"cd\"", &mut out, 9).is_none());
        for len in 0..20 {
            let line: Vec<u8> = (0..len)
                .map(|i| if i % 3 == 1 { b',' } else { b'7' })
                .collect();
            let k = comma_positions(&line, &mut out, MAX_COLS).unwrap();
            let want: Vec<usize> = (0..len).filter(|i| i % 3 == 1).collect();
            assert_eq!(&out[..k], &want[..], "{len}");
        }
    }

    #[test]
    fn anything_unusual_falls_back() {
        let good = "2026-06-01T10:00:00.000Z,0.01,1,10.5,200,210.5,120.25,40.1,1,0,3\n";
        for bad in [
            format!("{HEADER}{good}2026-06-01T10:00:00.000Z,0.01,1,10.5\n{good}"), // torn
            format!("{HEADER}{good}{}", good.trim_end()),                          // no newline
            format!("{HEADER}{}", good.replace(",3\n", ",\"3\"\n")),               // quoted
            format!("{HEADER}{}", good.replace("10.5", "x")),                      // not a number
            format!("{HEADER}{}", good.replace(",1,0,", ",1,2,")),                 // bad flag
            format!("{HEADER}{}", good.replace(",3\n", ",3,9\n")),                 // extra field
            "t_s,epoch\n1,1\n".to_string(),                                        // no column
        ] {
            assert_eq!(scan(&bad).0, ScanOutcome::Fallback, "{bad}");
        }
    }
}
