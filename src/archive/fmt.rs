//! Fast text formatting and parsing of the archive's numbers.
//!
//! Numbers are written with a fixed number of decimals by integer formatting (no `format!` per
//! float): the value is scaled by 10^d, rounded half away from zero to an integer m, and written
//! as `m / 10^d`. Angles are reduced modulo 360 (axes modulo 180) *after* rounding, so a heading
//! of 359.9996° is written `0.000`, never `360.000`.
//!
//! [`quantize_fixed`] and friends return exactly the `f64` a reader gets back when it parses the
//! written text (m / 10^d is one correctly rounded IEEE division on both sides), which lets the
//! live summary and a summary recomputed from `samples.csv` agree bit for bit.

use chrono::{DateTime, Utc};

/// Powers of ten exactly representable as f64 (10^0..=10^22).
pub(crate) const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Largest integer below which every integer is an exact f64.
const EXACT_INT: f64 = 9_007_199_254_740_992.0; // 2^53

/// Powers of ten as integers.
const POW10_U64: [u64; 10] = [
    1,
    10,
    100,
    1_000,
    10_000,
    100_000,
    1_000_000,
    10_000_000,
    100_000_000,
    1_000_000_000,
];

/// The scaled integer written for `x` with `decimals` decimals (rounded half away from zero),
/// or None when `x` is not finite or too large for the integer path.
///
/// Rounds by adding ±0.5 and truncating with a cast (`f64::round` is a library call on
/// baseline x86-64); writer and [`quantize_fixed`] share this function, so they always agree.
#[inline(always)]
fn scaled(x: f64, decimals: u32) -> Option<i64> {
    let y = x * POW10[decimals as usize];
    if y.abs() < EXACT_INT {
        Some((y + 0.5f64.copysign(y)) as i64)
    } else {
        None
    }
}

/// Reduces a scaled angle modulo `period * 10^decimals`.
#[inline(always)]
fn wrap_scaled(m: i64, period: i64, decimals: u32) -> i64 {
    m.rem_euclid(period * POW10_U64[decimals as usize] as i64)
}

#[inline(always)]
fn push_scaled(buf: &mut Vec<u8>, m: i64, decimals: u32) {
    if m < 0 {
        buf.push(b'-');
    }
    let a = m.unsigned_abs();
    let p = POW10_U64[decimals as usize];
    let mut itoa_buf = itoa::Buffer::new();
    buf.extend_from_slice(itoa_buf.format(a / p).as_bytes());
    if decimals > 0 {
        let d = decimals as usize;
        let mut frac = a % p;
        let mut tmp = [b'.'; 10];
        for i in (1..=d).rev() {
            tmp[i] = b'0' + (frac % 10) as u8;
            frac /= 10;
        }
        buf.extend_from_slice(&tmp[..=d]);
    }
}

/// Writes a value that is not on the integer path (NaN, ±inf, huge) with `format!`.
#[cold]
fn push_slow(buf: &mut Vec<u8>, x: f64, decimals: u32) {
    let s = slow_text(x, decimals);
    buf.extend_from_slice(s.as_bytes());
}

fn slow_text(x: f64, decimals: u32) -> String {
    if x.is_nan() {
        "NaN".into()
    } else if x.is_infinite() {
        if x > 0.0 { "inf".into() } else { "-inf".into() }
    } else {
        format!("{x:.*}", decimals as usize)
    }
}

/// Writes `x` with `decimals` decimals (≤ 9).
#[inline(always)]
pub fn push_fixed(buf: &mut Vec<u8>, x: f64, decimals: u32) {
    match scaled(x, decimals) {
        Some(m) => push_scaled(buf, m, decimals),
        None => push_slow(buf, x, decimals),
    }
}

/// Writes a direction in [0, 360) with `decimals` decimals (reduced after rounding).
#[inline(always)]
pub fn push_angle_deg(buf: &mut Vec<u8>, x: f64, decimals: u32) {
    match scaled(x, decimals) {
        Some(m) => push_scaled(buf, wrap_scaled(m, 360, decimals), decimals),
        None => push_slow(buf, x, decimals),
    }
}

/// Writes an axis in [0, 180) with `decimals` decimals (reduced after rounding).
#[inline(always)]
pub fn push_axial_deg(buf: &mut Vec<u8>, x: f64, decimals: u32) {
    match scaled(x, decimals) {
        Some(m) => push_scaled(buf, wrap_scaled(m, 180, decimals), decimals),
        None => push_slow(buf, x, decimals),
    }
}

/// The value a reader gets back from [`push_fixed`]'s text.
#[inline(always)]
pub fn quantize_fixed(x: f64, decimals: u32) -> f64 {
    match scaled(x, decimals) {
        Some(m) => m as f64 / POW10[decimals as usize],
        None => slow_text(x, decimals).parse().unwrap_or(f64::NAN),
    }
}

/// The value a reader gets back from [`push_angle_deg`]'s text.
#[inline(always)]
pub fn quantize_angle_deg(x: f64, decimals: u32) -> f64 {
    match scaled(x, decimals) {
        Some(m) => wrap_scaled(m, 360, decimals) as f64 / POW10[decimals as usize],
        None => slow_text(x, decimals).parse().unwrap_or(f64::NAN),
    }
}

/// Writes an unsigned integer.
#[inline]
pub fn push_uint(buf: &mut Vec<u8>, v: u64) {
    let mut b = itoa::Buffer::new();
    buf.extend_from_slice(b.format(v).as_bytes());
}

/// Writes the shortest text that parses back to exactly `x` (for raw sensor values).
#[inline]
pub fn push_exact(buf: &mut Vec<u8>, x: f64) {
    if x.is_finite() {
        let mut b = ryu::Buffer::new();
        buf.extend_from_slice(b.format_finite(x).as_bytes());
    } else {
        push_slow(buf, x, 0);
    }
}

/// Writes one CSV field, quoted per RFC 4180 when it holds a comma, a quote, CR or LF (quotes
/// inside are doubled).
pub fn push_csv_field(buf: &mut Vec<u8>, field: &str) {
    if field
        .bytes()
        .any(|b| b == b',' || b == b'"' || b == b'\n' || b == b'\r')
    {
        buf.push(b'"');
        for b in field.bytes() {
            if b == b'"' {
                buf.push(b'"');
            }
            buf.push(b);
        }
        buf.push(b'"');
    } else {
        buf.extend_from_slice(field.as_bytes());
    }
}

/// Writes instants as RFC 3339 UTC with milliseconds (`2026-06-14T09:30:00.123Z`, milliseconds
/// truncated like chrono's `SecondsFormat::Millis`), caching the text up to the second.
#[derive(Debug, Clone)]
pub struct UtcStamper {
    second: i64,
    prefix: [u8; 20],
    valid: bool,
}

impl Default for UtcStamper {
    fn default() -> Self {
        Self::new()
    }
}

impl UtcStamper {
    /// An empty cache.
    pub fn new() -> Self {
        UtcStamper {
            second: i64::MIN,
            prefix: [0; 20],
            valid: false,
        }
    }

    /// Appends the instant's text.
    #[inline]
    pub fn push(&mut self, buf: &mut Vec<u8>, t: &DateTime<Utc>) {
        let sec = t.timestamp();
        let nanos = t.timestamp_subsec_nanos();
        if nanos >= 1_000_000_000 {
            // Leap second representation: let chrono spell it.
            buf.extend_from_slice(super::format_utc_millis(t).as_bytes());
            return;
        }
        if sec != self.second {
            self.second = sec;
            // "YYYY-MM-DDTHH:MM:SS." is 20 bytes for years 0000-9999.
            let s = t.format("%Y-%m-%dT%H:%M:%S.").to_string();
            self.valid = s.len() == 20;
            if self.valid {
                self.prefix.copy_from_slice(s.as_bytes());
            }
        }
        if !self.valid {
            buf.extend_from_slice(super::format_utc_millis(t).as_bytes());
            return;
        }
        buf.extend_from_slice(&self.prefix);
        let ms = nanos / 1_000_000;
        buf.push(b'0' + (ms / 100) as u8);
        buf.push(b'0' + (ms / 10 % 10) as u8);
        buf.push(b'0' + (ms % 10) as u8);
        buf.push(b'Z');
    }
}

/// Parses a decimal number `[+-]digits[.digits]` (the form the writer produces) exactly: the
/// digits become an integer m and the result is m / 10^d, one correctly rounded division
/// (Clinger's fast path), so it equals `str::parse::<f64>`. Other forms (exponents, NaN, long
/// digit strings) go through `str::parse`. None when the text is not a number.
#[inline]
pub fn parse_f64(text: &[u8]) -> Option<f64> {
    let (neg, digits) = match text.first() {
        Some(b'-') => (true, &text[1..]),
        Some(b'+') => (false, &text[1..]),
        _ => (false, text),
    };
    let mut m: u64 = 0;
    let mut n_digits = 0usize;
    let mut decimals = 0usize;
    let mut seen_dot = false;
    for &b in digits {
        match b {
            b'0'..=b'9' => {
                m = m.wrapping_mul(10).wrapping_add((b - b'0') as u64);
                n_digits += 1;
                if seen_dot {
                    decimals += 1;
                }
            }
            b'.' if !seen_dot => seen_dot = true,
            _ => return parse_slow(text),
        }
    }
    if n_digits == 0 || n_digits > 19 || decimals > 22 || m as f64 >= EXACT_INT {
        return parse_slow(text);
    }
    let v = m as f64 / POW10[decimals];
    Some(if neg { -v } else { v })
}

/// Parses the decimal number that starts at `line[pos]` and ends at the next comma or the
/// end of the line, in one pass: `Some((value, end))` for the plain form `[+-]digits[.digits]`
/// with at most 15 digits (exact, as [`parse_f64`]), None for anything else (the caller then
/// finds the field's end and uses [`parse_f64`]).
#[inline(always)]
pub fn scan_decimal(line: &[u8], pos: usize) -> Option<(f64, usize)> {
    let mut j = pos;
    let neg = match line.get(j) {
        Some(b'-') => {
            j += 1;
            true
        }
        Some(b'+') => {
            j += 1;
            false
        }
        _ => false,
    };
    let mut m: u64 = 0;
    let mut n_digits = 0usize;
    let mut decimals = 0usize;
    let mut seen_dot = false;
    while j < line.len() {
        let b = line[j];
        let d = b.wrapping_sub(b'0');
        if d < 10 {
            m = m.wrapping_mul(10).wrapping_add(d as u64);
            n_digits += 1;
            decimals += seen_dot as usize;
        } else if b == b'.' && !seen_dot {
            seen_dot = true;
        } else {
            break;
        }
        j += 1;
    }
    if n_digits == 0 || n_digits > 15 || (j < line.len() && line[j] != b',') {
        return None;
    }
    // 15 digits < 2^53: m is exact, and so is 10^decimals (decimals ≤ 15).
    let v = m as f64 / POW10[decimals];
    Some((if neg { -v } else { v }, j))
}

#[cold]
fn parse_slow(text: &[u8]) -> Option<f64> {
    std::str::from_utf8(text).ok()?.trim().parse().ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fixed(x: f64, d: u32) -> String {
        let mut b = Vec::new();
        push_fixed(&mut b, x, d);
        String::from_utf8(b).unwrap()
    }
    fn angle(x: f64) -> String {
        let mut b = Vec::new();
        push_angle_deg(&mut b, x, 3);
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn fixed_decimals() {
        assert_eq!(fixed(0.0, 3), "0.000");
        assert_eq!(fixed(-0.0, 3), "0.000");
        assert_eq!(fixed(1.5, 4), "1.5000");
        assert_eq!(fixed(-12.3456, 3), "-12.346");
        assert_eq!(fixed(-0.0004, 3), "0.000");
        assert_eq!(fixed(0.0415, 4), "0.0415");
        assert_eq!(fixed(123456.789012, 4), "123456.7890");
        assert_eq!(fixed(f64::NAN, 3), "NaN");
        assert_eq!(fixed(f64::NEG_INFINITY, 3), "-inf");
        assert_eq!(fixed(1e300, 3).len(), 301 + 4);
    }

    #[test]
    fn angles_never_reach_360() {
        assert_eq!(angle(359.9996), "0.000");
        assert_eq!(angle(359.9994), "359.999");
        assert_eq!(angle(-10.0), "350.000");
        assert_eq!(angle(720.5), "0.500");
        let mut b = Vec::new();
        push_axial_deg(&mut b, 179.9999, 3);
        assert_eq!(b, b"0.000");
        assert_eq!(quantize_angle_deg(359.9996, 3), 0.0);
    }

    #[test]
    fn quantize_equals_parse_of_text() {
        let mut x = -1000.0f64;
        while x < 1000.0 {
            for (push, q) in [
                (
                    push_fixed as fn(&mut Vec<u8>, f64, u32),
                    quantize_fixed as fn(f64, u32) -> f64,
                ),
                (push_angle_deg, quantize_angle_deg),
            ] {
                let mut b = Vec::new();
                push(&mut b, x, 3);
                let text = std::str::from_utf8(&b).unwrap();
                let std_parsed: f64 = text.parse().unwrap();
                assert_eq!(q(x, 3).to_bits(), std_parsed.to_bits(), "{x} {text}");
                assert_eq!(parse_f64(&b).unwrap().to_bits(), std_parsed.to_bits());
                // Quantizing a parsed value is idempotent.
                assert_eq!(q(std_parsed, 3).to_bits(), std_parsed.to_bits());
            }
            x += 0.123_456_789;
        }
    }

    #[test]
    fn parse_forms() {
        for t in [
            "0",
            "1.",
            ".5",
            "-0.25",
            "+3.5",
            "1e3",
            "NaN",
            "inf",
            "-inf",
            "12345678901234567890.5",
            "0.1234567890123456789012345",
        ] {
            let want: f64 = t.parse().unwrap();
            let got = parse_f64(t.as_bytes()).unwrap();
            assert!(
                got.to_bits() == want.to_bits() || (got.is_nan() && want.is_nan()),
                "{t}"
            );
        }
        for bad in ["", "-", ".", "1.2.3", "abc", "1,2"] {
            assert!(parse_f64(bad.as_bytes()).is_none(), "{bad}");
        }
        // One-pass scanning inside a line: the same values, or None for the slow path.
        let line = b"x,-12.345,7,1e3,,0.1234567890123456,+.5";
        assert_eq!(scan_decimal(line, 2), Some((-12.345, 9)));
        assert_eq!(scan_decimal(line, 10), Some((7.0, 11)));
        assert_eq!(scan_decimal(line, 12), None);
        assert_eq!(scan_decimal(line, 16), None);
        assert_eq!(scan_decimal(line, 17), None);
        assert_eq!(scan_decimal(line, 36), Some((0.5, 39)));
        assert_eq!(scan_decimal(b"359.999", 0), Some((359.999, 7)));
    }

    #[test]
    fn stamps_match_chrono() {
        let mut st = UtcStamper::new();
        let t0 = chrono::DateTime::parse_from_rfc3339("2026-06-14T09:30:59.9996Z")
            .unwrap()
            .with_timezone(&Utc);
        for k in 0..3000 {
            let t = t0 + chrono::Duration::microseconds(k * 337);
            let mut b = Vec::new();
            st.push(&mut b, &t);
            assert_eq!(
                String::from_utf8(b).unwrap(),
                super::super::format_utc_millis(&t)
            );
        }
    }

    #[test]
    fn csv_quoting() {
        let mut b = Vec::new();
        push_csv_field(&mut b, "plain text");
        b.push(b'|');
        push_csv_field(&mut b, "a, \"b\"\nc");
        assert_eq!(
            String::from_utf8(b).unwrap(),
            "plain text|\"a, \"\"b\"\"\nc\""
        );
    }
}
