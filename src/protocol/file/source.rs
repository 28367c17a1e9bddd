//! Positions in a protocol file's text: the line of a byte offset, the dotted path of the
//! field there, and serde/TOML errors turned into our one-line `file:line: field: message`.

use super::ProtocolError;
use std::ops::Range;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

pub(super) struct Source<'a> {
    pub(super) file: &'a str,
    pub(super) text: &'a str,
}

impl Source<'_> {
    pub(super) fn line_of(&self, offset: usize) -> usize {
        let end = offset.min(self.text.len());
        let mut cut = end;
        while cut > 0 && !self.text.is_char_boundary(cut) {
            cut -= 1;
        }
        self.text[..cut].matches('\n').count() + 1
    }

    pub(super) fn field_err(
        &self,
        span: Range<usize>,
        field: impl Into<String>,
        message: impl Into<String>,
    ) -> ProtocolError {
        ProtocolError::Field {
            file: self.file.to_string(),
            line: self.line_of(span.start),
            field: field.into(),
            message: message.into(),
        }
    }

    pub(super) fn warn(&self, span: Range<usize>, field: &str, message: impl AsRef<str>) -> String {
        format!(
            "{}:{}: {}: {}",
            self.file,
            self.line_of(span.start),
            field,
            message.as_ref()
        )
    }
}

/// Finds the dotted path (`epochs[2].turns[1]`) of the innermost key or value covering `offset`.
///
/// Tables (`[flight]`, `[[epochs]]`) carry the span of their header only, so every entry of the
/// tree is searched, not just those inside a containing span; the deepest hit wins.
fn path_at(root: &DeTable<'_>, offset: usize) -> Option<String> {
    let mut best = None;
    search_table(root, offset, "", &mut best);
    best
}

fn contains(span: &Range<usize>, offset: usize) -> bool {
    span.start <= offset && offset < span.end.max(span.start + 1)
}

fn search_table(t: &DeTable<'_>, offset: usize, path: &str, best: &mut Option<String>) {
    for (k, v) in t.iter() {
        let mut p = path.to_string();
        push_key(&mut p, k.get_ref());
        if contains(&k.span(), offset) || contains(&v.span(), offset) {
            *best = Some(p.clone());
        }
        search_value(v, offset, &p, best);
    }
}

fn search_value(v: &Spanned<DeValue<'_>>, offset: usize, path: &str, best: &mut Option<String>) {
    match v.get_ref() {
        DeValue::Table(t) => search_table(t, offset, path, best),
        DeValue::Array(a) => {
            for (i, item) in a.iter().enumerate() {
                let p = format!("{path}[{}]", i + 1);
                if contains(&item.span(), offset) {
                    *best = Some(p.clone());
                }
                search_value(item, offset, &p, best);
            }
        }
        _ => {}
    }
}

fn push_key(path: &mut String, key: &str) {
    if !path.is_empty() {
        path.push('.');
    }
    path.push_str(key);
}

/// Turns a serde/TOML error into our one-line form, naming the field where it can.
pub(super) fn convert_toml_error(src: &Source<'_>, err: &toml::de::Error) -> ProtocolError {
    let message = err.message().trim().replace('\n', " ");
    let Some(span) = err.span().filter(|s| s.end > 0) else {
        // Document-level problems (such as a missing top-level key) carry no span.
        return match missing_field(&message) {
            Some(name) => ProtocolError::Field {
                file: src.file.to_string(),
                line: 1,
                field: name,
                message: "missing (required)".to_string(),
            },
            None => ProtocolError::Syntax {
                file: src.file.to_string(),
                line: 1,
                message,
            },
        };
    };
    let line = src.line_of(span.start);
    let Ok(doc) = DeTable::parse(src.text) else {
        return ProtocolError::Syntax {
            file: src.file.to_string(),
            line,
            message,
        };
    };
    let mut field = path_at(doc.get_ref(), span.start).unwrap_or_default();
    let mut message = message;
    if let Some(name) = unknown_field(&message) {
        // The span covers the unknown key itself; make sure the path ends with it.
        if !field.ends_with(&name) {
            push_key(&mut field, &name);
        }
        message = format!("unknown key `{name}`{}", expected_tail(&message));
    } else if let Some(name) = missing_field(&message) {
        push_key(&mut field, &name);
        message = "missing (required)".to_string();
    } else if let Some(friendly) = friendly_type_error(&message) {
        message = friendly;
    }
    if field.is_empty() {
        ProtocolError::Syntax {
            file: src.file.to_string(),
            line,
            message,
        }
    } else {
        ProtocolError::Field {
            file: src.file.to_string(),
            line,
            field,
            message,
        }
    }
}

fn backticked_after(message: &str, prefix: &str) -> Option<String> {
    let rest = message.strip_prefix(prefix)?;
    let rest = rest.strip_prefix('`')?;
    let end = rest.find('`')?;
    Some(rest[..end].to_string())
}

fn unknown_field(message: &str) -> Option<String> {
    backticked_after(message, "unknown field ")
}

fn missing_field(message: &str) -> Option<String> {
    backticked_after(message, "missing field ")
}

/// "invalid type: string \"x\", expected f64" → "must be a number (got string \"x\")".
fn friendly_type_error(message: &str) -> Option<String> {
    let rest = message.strip_prefix("invalid type: ")?;
    let (got, expected) = rest.rsplit_once(", expected ")?;
    let want = match expected {
        "f64" | "f32" => "a number".to_string(),
        "i64" | "u64" | "i32" | "u32" | "usize" => "a whole number".to_string(),
        "a boolean" => "true or false".to_string(),
        "a string" => "a quoted string".to_string(),
        other => other.to_string(),
    };
    Some(format!("must be {want} (got {got})"))
}

fn expected_tail(message: &str) -> String {
    match message.find(", expected") {
        Some(i) => message[i..].to_string(),
        None => String::new(),
    }
}
