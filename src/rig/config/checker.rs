//! Positions in a rig file's text (line, table, key) and the checker that turns a raw value
//! into a one-line `file:line: field: message` error.

use super::*;

/// 1-based line of a byte offset.
pub(super) fn line_of(text: &str, offset: usize) -> usize {
    let end = offset.min(text.len());
    text.as_bytes()[..end]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

/// The dotted table name in force at a byte offset (from the nearest `[header]` above it).
pub(super) fn table_at(text: &str, offset: usize) -> String {
    let end = offset.min(text.len());
    let mut current = String::new();
    let mut pos = 0usize;
    for line in text.split_inclusive('\n') {
        if pos > end {
            break;
        }
        let t = line.trim();
        if let Some(rest) = t.strip_prefix('[')
            && let Some(close) = rest.find(']')
        {
            current = rest[..close].trim().trim_matches('[').trim().to_string();
        }
        pos += line.len();
    }
    current
}

/// The key written on the line holding `offset`, if the line is `key = ...`.
pub(super) fn key_on_line(text: &str, offset: usize) -> Option<String> {
    let end = offset.min(text.len());
    let start = text[..end].rfind('\n').map_or(0, |i| i + 1);
    let line = text[start..].lines().next().unwrap_or("");
    let (k, _) = line.split_once('=')?;
    let k = k.trim().trim_matches('"');
    if k.is_empty() || k.starts_with('[') || k.starts_with('#') {
        None
    } else {
        Some(k.to_string())
    }
}

pub(super) struct Checker<'a> {
    pub(super) text: &'a str,
    pub(super) file: &'a str,
}

impl Checker<'_> {
    pub(super) fn err(
        &self,
        offset: usize,
        field: &str,
        message: impl Into<String>,
    ) -> RigFileError {
        RigFileError::Field {
            file: self.file.to_string(),
            line: line_of(self.text, offset),
            field: field.to_string(),
            message: message.into(),
        }
    }

    pub(super) fn req<'v, T>(
        &self,
        v: &'v Option<S<T>>,
        table_start: usize,
        field: &str,
    ) -> Result<&'v S<T>, RigFileError> {
        v.as_ref()
            .ok_or_else(|| self.err(table_start, field, "missing (required)"))
    }

    pub(super) fn finite(&self, v: &S<f64>, field: &str) -> Result<f64, RigFileError> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.err(v.span().start, field, format!("{x} is not a finite number")))
        }
    }

    pub(super) fn range(
        &self,
        v: &S<f64>,
        field: &str,
        lo: f64,
        hi: f64,
    ) -> Result<f64, RigFileError> {
        let x = self.finite(v, field)?;
        if (lo..=hi).contains(&x) {
            Ok(x)
        } else {
            Err(self.err(
                v.span().start,
                field,
                format!("{x} is outside [{lo}, {hi}]"),
            ))
        }
    }

    pub(super) fn positive(&self, v: &S<f64>, field: &str) -> Result<f64, RigFileError> {
        let x = self.finite(v, field)?;
        if x > 0.0 {
            Ok(x)
        } else {
            Err(self.err(v.span().start, field, format!("{x} must be > 0")))
        }
    }

    pub(super) fn choice<'c>(
        &self,
        v: &S<String>,
        field: &str,
        what: &str,
        allowed: &[&'c str],
    ) -> Result<&'c str, RigFileError> {
        let s = v.get_ref().as_str();
        allowed.iter().copied().find(|a| *a == s).ok_or_else(|| {
            self.err(
                v.span().start,
                field,
                format!("unknown {what} \"{s}\" (expected {})", allowed.join(", ")),
            )
        })
    }

    pub(super) fn baud(&self, v: &S<i64>, field: &str) -> Result<u32, RigFileError> {
        let b = *v.get_ref();
        if (50..=4_000_000).contains(&b) {
            Ok(b as u32)
        } else {
            Err(self.err(
                v.span().start,
                field,
                format!("{b} is outside [50, 4000000]"),
            ))
        }
    }

    pub(super) fn column(&self, v: &S<i64>, field: &str) -> Result<usize, RigFileError> {
        let c = *v.get_ref();
        if (1..=64).contains(&c) {
            Ok(c as usize)
        } else {
            Err(self.err(
                v.span().start,
                field,
                format!("{c} is outside [1, 64] (columns count from 1)"),
            ))
        }
    }

    pub(super) fn path(&self, v: &S<String>, field: &str) -> Result<PathBuf, RigFileError> {
        if v.get_ref().trim().is_empty() {
            Err(self.err(v.span().start, field, "empty path"))
        } else {
            Ok(PathBuf::from(v.get_ref()))
        }
    }

    pub(super) fn not_for(
        &self,
        v: &Option<S<impl Sized>>,
        field: &str,
        why: &str,
    ) -> Result<(), RigFileError> {
        match v {
            Some(v) => Err(self.err(v.span().start, field, format!("not used {why}"))),
            None => Ok(()),
        }
    }
}
