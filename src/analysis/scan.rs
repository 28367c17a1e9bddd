//! A fast path for reading the nine columns of `samples.csv` that the analysis needs.
//!
//! Why hand-written, measured (2026-12-02, `bash benches/library_variants.sh`, 100 demo
//! sessions, 18.4 M rows, 1.77 GB, 2 cores, warm page cache, CPU time of the whole `batch`
//! command, median of 3 interleaved runs): rebuilt on the `csv` crate's `ByteRecord` reader
//! (csv-core inside, numbers by the archive's `parse_f64`), batch took 1.9× the CPU time of
//! this scan on 0.1° headings (2.31 s against 1.22 s) and 1.7× on 0.001° headings (2.47 s
//! against 1.43 s); through the archive's general reader alone, 1.9× and 1.6×. A table of
//! numbers seen before bought 0–16% on repeating headings (two runs) and nothing on others,
//! and is gone.
//!
//! `batch` reads tens of millions of rows, and [`crate::archive::read::for_each_sample`]
//! parses every column of every row (t_utc, sun-relative heading, e-vector...). This scanner
//! finds the needed columns by header name and reads the file 64 bytes at a time: byte
//! compares mark the commas, newlines and quotes of a block at once, a walk over the marks
//! notes where each needed field ends (the commas after them are only counted), and only the
//! needed fields are parsed. A number in the archive's own form (`[-]digits[.digits]`, up to
//! fifteen digits, so also `t_s` with its six decimals) is parsed without a loop and bit for
//! bit as the archive's parser does; a field that repeats the row above it (the
//! sun's position, the arena's bearing, on any sensor) is not parsed again. It handles only
//! the plain case: every line complete and unquoted, every needed field a plain number. On
//! anything else it gives up with [`ScanOutcome::Fallback`], and the caller reads the file
//! again with the archive's general reader, which owns the rules for quoted fields, torn last
//! lines and error messages.

use crate::archive::fmt::{POW10, parse_f64};
use std::io::Read;
use std::path::Path;

pub use crate::archive::columns::Row;

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

/// Bytes read from the file at a time (a longer line doubles the buffer): small enough that
/// the kernel's copy into the buffer is still in the core's cache (1 MB of L2 on the build
/// machine) when the scan reads it.
const CHUNK: usize = 1 << 17;
/// Bytes kept past the filled part of the buffer, so that a 64-byte block or a 16-byte field
/// window that starts inside it never runs off its end (their bytes past the filled part are
/// masked off).
const SLACK: usize = 64;

/// Streams the rows of `samples.csv` through `f` if the file is plain (see the module notes).
/// I/O errors also give `Fallback` (the general reader reports them with their path).
pub fn scan_samples(path: &Path, f: impl FnMut(&Row)) -> ScanOutcome {
    scan_in_chunks(path, CHUNK, f)
}

fn scan_in_chunks(path: &Path, chunk: usize, mut f: impl FnMut(&Row)) -> ScanOutcome {
    let Ok(mut file) = std::fs::File::open(path) else {
        return ScanOutcome::Fallback;
    };
    let mut cap = chunk.max(1);
    let mut buf = vec![0u8; cap + SLACK];
    // Not yet scanned: buf[start..filled], where `start` is always the start of a line.
    let (mut start, mut filled) = (0usize, 0usize);
    let mut layout: Option<Layout> = None;
    let mut memo = Memo::default();
    let mut rows = 0u64;
    let mut emit = |r: &Row| {
        rows += 1;
        f(r);
    };
    loop {
        buf.copy_within(start..filled, 0);
        filled -= start;
        start = 0;
        if filled == cap {
            cap *= 2;
            buf.resize(cap + SLACK, 0);
        }
        match file.read(&mut buf[filled..cap]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(_) => return ScanOutcome::Fallback,
        }
        let layout = match &layout {
            Some(l) => l,
            None => {
                let Some(nl) = memchr::memchr(b'\n', &buf[..filled]) else {
                    continue;
                };
                let header = buf[..nl].strip_suffix(b"\r").unwrap_or(&buf[..nl]);
                let Some(l) = Layout::from_header(header) else {
                    return ScanOutcome::Fallback;
                };
                start = nl + 1;
                layout.insert(l)
            }
        };
        match layout.scan(&buf, start, filled, &mut memo, &mut emit) {
            Some(next) => start = next,
            None => return ScanOutcome::Fallback,
        }
    }
    if start != filled || layout.is_none() {
        // A last line without its newline (an interrupted session), or no header at all.
        return ScanOutcome::Fallback;
    }
    ScanOutcome::Done(rows)
}

/// Where the needed columns are, from the header line.
struct Layout {
    /// Column of each NEEDED name (each below [`MAX_LEAD`]).
    cols: [usize; 9],
    /// Columns per line.
    ncols: usize,
    /// Leading columns that hold every needed one (at most [`MAX_LEAD`]).
    need: usize,
}

/// The fast path handles files whose needed columns are all among the first 64 (the archive
/// writes 13); the general reader takes any other.
const MAX_LEAD: usize = 64;
/// Field bounds of one line (see [`Layout::scan`]): a fixed array, indexed modulo its length
/// (every index is below it), so that no index needs a bounds check.
type Bounds = [usize; 2 * MAX_LEAD];
const BOUNDS_MASK: usize = 2 * MAX_LEAD - 1;

impl Layout {
    fn from_header(line: &[u8]) -> Option<Self> {
        let text = std::str::from_utf8(line).ok()?;
        if text.contains('"') {
            return None;
        }
        let names: Vec<&str> = text.split(',').map(str::trim).collect();
        let mut cols = [0usize; 9];
        for (col, want) in cols.iter_mut().zip(NEEDED) {
            // The first column of that name counts, as in the general reader.
            *col = names.iter().position(|n| *n == want)?;
        }
        let need = cols.iter().max()? + 1;
        (need <= MAX_LEAD).then_some(Self {
            cols,
            ncols: names.len(),
            need,
        })
    }

    /// Scans the complete lines of `buf[from..to]` (`from` at a line start) 64 bytes at a
    /// time: one pass of byte compares marks every comma, newline and quote of a block, a walk
    /// over the marks notes where each of the line's first `need` fields ends, and the needed
    /// fields are then parsed in place. Returns where the first incomplete line starts (`to`
    /// when there is none); None outside the plain case. `buf` holds at least [`SLACK`] bytes
    /// past `to`.
    #[inline]
    fn scan(
        &self,
        buf: &[u8],
        from: usize,
        to: usize,
        memo: &mut Memo,
        emit: &mut impl FnMut(&Row),
    ) -> Option<usize> {
        // bounds[c + 1]: where field c of the current line ends (its comma, or its newline
        // less a carriage return); bounds[0]: the byte before the line. Field c is then
        // buf[bounds[c] + 1..bounds[c + 1]].
        let mut bounds: Bounds = [0; 2 * MAX_LEAD];
        let (mut line_start, mut col) = (from, 0usize);
        let mut base = from;
        while base < to {
            let block = buf.get(base..base + 64)?.first_chunk::<64>()?;
            let valid = if to - base >= 64 {
                u64::MAX
            } else {
                (1u64 << (to - base)) - 1
            };
            let (commas, newlines, maybe_quote) = masks_64(block);
            // Quoted fields, and text that is not ASCII (the general reader rejects a line
            // that is not UTF-8, as `check` does), are left to the general reader.
            if maybe_quote
                && block[..(to - base).min(64)]
                    .iter()
                    .any(|&b| b == b'"' || !b.is_ascii())
            {
                return None;
            }
            let (mut commas, mut newlines) = (commas & valid, newlines & valid);
            loop {
                // The current line's commas in this block: those before its newline (all of
                // them when the line goes on past the block).
                let nl = newlines.trailing_zeros();
                let before = if nl < 64 { (1u64 << nl) - 1 } else { u64::MAX };
                let mut line_commas = commas & before;
                // Where the first `need` fields end is noted; the fields after are counted.
                while line_commas != 0 && col < self.need {
                    bounds[(col + 1) & BOUNDS_MASK] = base + line_commas.trailing_zeros() as usize;
                    line_commas &= line_commas - 1;
                    col += 1;
                }
                col += line_commas.count_ones() as usize;
                if nl >= 64 {
                    break;
                }
                let at = base + nl as usize;
                if col < self.need {
                    let cr = at > line_start && buf[at - 1] == b'\r';
                    bounds[(col + 1) & BOUNDS_MASK] = at - usize::from(cr);
                }
                if col + 1 != self.ncols {
                    return None;
                }
                bounds[0] = line_start.wrapping_sub(1);
                emit(&self.row(buf, &bounds, memo)?);
                col = 0;
                line_start = at + 1;
                commas &= !before;
                newlines &= newlines - 1;
            }
            base += 64;
        }
        Some(line_start)
    }

    /// The needed fields of the line whose fields are bounded by `bounds` (see
    /// [`Layout::scan`]); None when one is not plain.
    #[inline(always)]
    fn row(&self, buf: &[u8], bounds: &Bounds, memo: &mut Memo) -> Option<Row> {
        let span = |k: usize| {
            let c = self.cols[k];
            (
                bounds[c & BOUNDS_MASK].wrapping_add(1),
                bounds[(c + 1) & BOUNDS_MASK],
            )
        };
        let number = |memo: &mut Memo, k: usize| {
            let (start, end) = span(k);
            memo.number(k, buf, start, end)
        };
        let field = |k: usize| {
            let (start, end) = span(k);
            buf.get(start..end)
        };
        let flag = |k: usize| match field(k)? {
            b"0" => Some(false),
            b"1" => Some(true),
            _ => None,
        };
        let (start, end) = span(1);
        Some(Row {
            t_s: number(memo, 0)?,
            epoch: memo.epoch(buf, start, end)?,
            arena_heading_deg: number(memo, 2)?,
            arena_bearing_deg: number(memo, 3)?,
            world_heading_deg: number(memo, 4)?,
            sun_azimuth_deg: number(memo, 5)?,
            sun_elevation_deg: number(memo, 6)?,
            flying: flag(7)?,
            scored: flag(8)?,
        })
    }
}

/// Bit masks of the commas and newlines among 64 bytes (bit i for byte i), and whether any
/// of the 64 is a quote or not ASCII: 16-byte compares and byte-mask moves on x86-64 (SSE2, its
/// baseline), the quote compares merged before their one mask move; a plain loop elsewhere.
#[cfg(target_arch = "x86_64")]
#[inline(always)]
fn masks_64(bytes: &[u8; 64]) -> (u64, u64, bool) {
    use std::arch::x86_64::{
        __m128i, _mm_cmpeq_epi8, _mm_loadu_si128, _mm_movemask_epi8, _mm_or_si128, _mm_set1_epi8,
        _mm_setzero_si128,
    };
    let (mut commas, mut newlines) = (0u64, 0u64);
    // SAFETY: SSE2 is part of the x86-64 baseline, so these instructions exist on every
    // target this compiles for; each load reads the 16 bytes of one `chunk` (unaligned loads
    // are allowed).
    unsafe {
        let mut quotes = _mm_setzero_si128();
        for (k, chunk) in bytes.chunks_exact(16).enumerate() {
            let v = _mm_loadu_si128(chunk.as_ptr().cast::<__m128i>());
            let eq = |b: u8| _mm_cmpeq_epi8(v, _mm_set1_epi8(b as i8));
            commas |= u64::from(_mm_movemask_epi8(eq(b',')) as u16) << (16 * k);
            newlines |= u64::from(_mm_movemask_epi8(eq(b'\n')) as u16) << (16 * k);
            // A quote, or a byte past ASCII (its high bit): not the plain case.
            quotes = _mm_or_si128(quotes, _mm_or_si128(eq(b'"'), v));
        }
        (commas, newlines, _mm_movemask_epi8(quotes) != 0)
    }
}

#[cfg(not(target_arch = "x86_64"))]
#[inline(always)]
fn masks_64(bytes: &[u8; 64]) -> (u64, u64, bool) {
    let (mut commas, mut newlines) = (0u64, 0u64);
    for (i, &b) in bytes.iter().enumerate() {
        commas |= u64::from(b == b',') << i;
        newlines |= u64::from(b == b'\n') << i;
    }
    (
        commas,
        newlines,
        bytes.iter().any(|&b| b == b'"' || !b.is_ascii()),
    )
}

/// Bit mask (the high bit of each byte) of the bytes of `w` equal to `b`, exactly (no false
/// positives): the SWAR byte comparison of Hacker's Delight §6.1.
#[inline(always)]
fn byte_mask(w: u64, b: u8) -> u64 {
    const LO7: u64 = 0x7f7f_7f7f_7f7f_7f7f;
    let x = w ^ (u64::from(b) * 0x0101_0101_0101_0101);
    !(((x & LO7) + LO7) | x | LO7)
}

/// `KEEP[n]`: the low n bytes of a word.
const KEEP: [u64; 9] = [
    0,
    0xff,
    0xffff,
    0xff_ffff,
    0xffff_ffff,
    0xff_ffff_ffff,
    0xffff_ffff_ffff,
    0xff_ffff_ffff_ffff,
    u64::MAX,
];

/// The first sixteen bytes of the field `buf[start..start + len]` (len ≤ 16) as two
/// little-endian words, zero past the field's end.
#[inline(always)]
fn field_words(buf: &[u8], start: usize, len: usize) -> (u64, u64) {
    let (lo, hi) = match buf.get(start..).and_then(|t| t.first_chunk::<16>()) {
        Some(w) => {
            let (lo, hi) = w.split_at(8);
            (word(lo), word(hi))
        }
        None => padded_words(buf, start),
    };
    (
        lo & KEEP[len.min(8)],
        hi & KEEP[len.saturating_sub(8).min(8)],
    )
}

#[inline(always)]
fn word(b: &[u8]) -> u64 {
    b.first_chunk::<8>().map_or(0, |b| u64::from_le_bytes(*b))
}

/// [`field_words`] near the end of `buf` (only in tests: the scanner keeps [`SLACK`] bytes).
#[cold]
fn padded_words(buf: &[u8], start: usize) -> (u64, u64) {
    let mut pad = [0u8; 16];
    let tail = buf.get(start..).unwrap_or_default();
    let n = tail.len().min(16);
    pad[..n].copy_from_slice(&tail[..n]);
    let (lo, hi) = pad.split_at(8);
    (word(lo), word(hi))
}

/// The archive's common number form, `[-]digits[.digits]` with one to fifteen digits, parsed
/// without a loop: the field's sixteen bytes are two 64-bit words, the dot is taken out by a
/// mask and a shift, and each word of up to eight digits is combined pairwise in three
/// multiply-and-mask steps (the SWAR eight-digit parse, common practice in fast number
/// parsers; the tests below check it against the archive's parser). The value is the same
/// integer mantissa (below 10^15, so exact in an f64) divided by the same power of ten as in
/// the archive's parser, so the two agree bit for bit. `lo` and `hi` hold the field's bytes
/// (see [`field_words`]), `len` its length; None for any other form.
#[inline(always)]
fn fixed_decimal(lo: u64, hi: u64, len: usize) -> Option<f64> {
    let neg = lo as u8 == b'-';
    let (lo, hi, len) = if neg {
        ((lo >> 8) | (hi << 56), hi >> 8, len.wrapping_sub(1))
    } else {
        (lo, hi, len)
    };
    if len == 0 || len > 16 {
        return None;
    }
    // Bytes past the field are zero, never a dot. With the dot taken out, `d0` holds the
    // first eight digits and `d1` the rest.
    let (dot_lo, dot_hi) = (byte_mask(lo, b'.'), byte_mask(hi, b'.'));
    let (d0, d1, n_digits, decimals) = if dot_lo | dot_hi == 0 {
        (lo, hi, len, 0)
    } else if dot_hi == 0 {
        if dot_lo & (dot_lo - 1) != 0 {
            return None;
        }
        let d = (dot_lo.trailing_zeros() / 8) as usize; // 0..=7
        let below = (1u64 << (8 * d)) - 1;
        let d0 = (lo & below) | ((lo >> 8) & !below) | (hi << 56);
        (d0, hi >> 8, len - 1, len - 1 - d)
    } else {
        if dot_lo != 0 || dot_hi & (dot_hi - 1) != 0 {
            return None;
        }
        let d = (dot_hi.trailing_zeros() / 8) as usize; // 0..=7, counted from byte 8
        let below = (1u64 << (8 * d)) - 1;
        (
            lo,
            (hi & below) | ((hi >> 8) & !below),
            len - 1,
            len - 9 - d,
        )
    };
    if n_digits == 0 || n_digits > 15 {
        return None;
    }
    const ZEROS: u64 = 0x3030_3030_3030_3030;
    const SIXES: u64 = 0x0606_0606_0606_0606;
    const HI4: u64 = 0xf0f0_f0f0_f0f0_f0f0;
    let x0 = d0 ^ (ZEROS & KEEP[n_digits.min(8)]);
    let x1 = d1 ^ (ZEROS & KEEP[n_digits.saturating_sub(8)]);
    // A byte that is not a digit (bytes past the digits are zero in both words).
    if (x0 & HI4) | (x0.wrapping_add(SIXES) & HI4) | (x1 & HI4) | (x1.wrapping_add(SIXES) & HI4)
        != 0
    {
        return None;
    }
    let m = if n_digits <= 8 {
        eight_digits(x0, n_digits)
    } else {
        eight_digits(x0, 8) * POW10_U64[n_digits - 8] + eight_digits(x1, n_digits - 8)
    };
    // m < 10^15: as a signed integer it converts in one instruction, to the same exact value.
    let x = m as i64 as f64 / POW10[decimals];
    Some(if neg { -x } else { x })
}

/// 10^0..=10^7 as integers.
const POW10_U64: [u64; 8] = [1, 10, 100, 1_000, 10_000, 100_000, 1_000_000, 10_000_000];

/// The value of the `n` (1..=8) digits 0..=9 in the low bytes of `x`, first digit lowest.
#[inline(always)]
fn eight_digits(x: u64, n: usize) -> u64 {
    // Shift so the last digit sits in the highest byte.
    let v = x << (8 * (8 - n));
    let v = (v.wrapping_mul(10).wrapping_add(v >> 8)) & 0x00ff_00ff_00ff_00ff;
    let v = (v.wrapping_mul(100).wrapping_add(v >> 16)) & 0x0000_ffff_0000_ffff;
    (v.wrapping_mul(10_000).wrapping_add(v >> 32)) & 0xffff_ffff
}

/// The text and value of each numeric column in the row before. The sun's position and the
/// arena's bearing repeat from row to row (the sun's azimuth moves its last written decimal a
/// few times a second), and the same text always parses to the same value, so a field equal
/// to the one above it is not parsed again.
struct Memo {
    /// Per NEEDED index: the field's bytes (up to 16, see [`field_words`]), its length, its
    /// value.
    seen: [(u64, u64, usize, f64); 7],
    /// The epoch field's bytes (up to 8), its length, its value.
    epoch: (u64, usize, usize),
}

impl Default for Memo {
    fn default() -> Self {
        // A length no field has: nothing is remembered yet.
        Self {
            seen: [(0, 0, usize::MAX, 0.0); 7],
            epoch: (0, usize::MAX, 0),
        }
    }
}

impl Memo {
    /// The epoch number in `line[start..end]`.
    #[inline(always)]
    fn epoch(&mut self, line: &[u8], start: usize, end: usize) -> Option<usize> {
        let len = end.checked_sub(start)?;
        if len > 8 {
            return parse_uint(line.get(start..end)?);
        }
        let (lo, _) = field_words(line, start, len);
        if self.epoch.0 == lo && self.epoch.1 == len {
            return Some(self.epoch.2);
        }
        let e = parse_uint(line.get(start..end)?)?;
        self.epoch = (lo, len, e);
        Some(e)
    }

    /// The number in `line[start..end]` for NEEDED index `s`.
    #[inline(always)]
    fn number(&mut self, s: usize, line: &[u8], start: usize, end: usize) -> Option<f64> {
        let len = end.checked_sub(start)?;
        if len > 16 {
            return parse_f64(line.get(start..end)?);
        }
        let (lo, hi) = field_words(line, start, len);
        let seen = self.seen.get_mut(s)?;
        if seen.0 == lo && seen.1 == hi && seen.2 == len {
            return Some(seen.3);
        }
        let x = parse_words(line, start, end, lo, hi)?;
        *seen = (lo, hi, len, x);
        Some(x)
    }
}

/// The number in `line[start..end]` whose first bytes are `lo` and `hi` (see
/// [`field_words`]).
#[inline(always)]
fn parse_words(line: &[u8], start: usize, end: usize, lo: u64, hi: u64) -> Option<f64> {
    match fixed_decimal(lo, hi, end - start) {
        Some(x) => Some(x),
        None => parse_f64(line.get(start..end)?),
    }
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
mod tests;
