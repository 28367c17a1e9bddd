//! Protocol files: TOML → raw form (serde, unknown keys refused) → checked, expanded
//! [`Protocol`]. The schema is documented in `docs/protocols.md` and in the shipped files under
//! `protocols/`.
//!
//! Every error is one line `file:line: field: message`, where `field` is a path such as
//! `epochs[3].duration_s` (entries of `[[epochs]]` are counted from 1, as in the file).

use super::sequence::{self, Order};
use super::{ArenaMove, EpochPlan, FlightRules, Protocol, SensorLossRules};
use serde::Deserialize;
use std::ops::Range;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// Longest epoch (and longest flight rule), seconds: 24 hours. Longer values are refused, so
/// that no time computed from a protocol can overflow a date or exhaust memory.
pub const MAX_EPOCH_S: f64 = 24.0 * 3600.0;
/// Longest settle window, seconds: 1 hour.
pub const MAX_SETTLE_S: f64 = 3600.0;
/// Longest session (sum of the epochs), seconds: 3 days.
pub const MAX_SESSION_S: f64 = 3.0 * 24.0 * 3600.0;

/// A protocol total above this many seconds draws a warning (4 hours).
pub const LONG_PROTOCOL_S: f64 = 4.0 * 3600.0;

/// A protocol file that cannot be used.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ProtocolError {
    /// The file could not be read.
    #[error("{file}: cannot read protocol file: {message}")]
    Read {
        /// The file as named by the user.
        file: String,
        /// The system's reason.
        message: String,
    },
    /// The text is not valid TOML.
    #[error("{file}:{line}: {message}")]
    Syntax {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// What the TOML reader said.
        message: String,
    },
    /// A field is missing, unknown, of the wrong type or out of range.
    #[error("{file}:{line}: {field}: {message}")]
    Field {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// Path of the field, e.g. `epochs[3].duration_s`.
        field: String,
        /// What is wrong, with the value found where useful.
        message: String,
    },
}

impl ProtocolError {
    /// The 1-based line the error points at, if any.
    pub fn line(&self) -> Option<usize> {
        match self {
            ProtocolError::Read { .. } => None,
            ProtocolError::Syntax { line, .. } | ProtocolError::Field { line, .. } => Some(*line),
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Raw form: exactly what the file says.

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProtocol {
    name: Spanned<String>,
    #[serde(default)]
    description: Option<Spanned<String>>,
    settle_s: Spanned<f64>,
    #[serde(default)]
    flight: Option<RawFlight>,
    #[serde(default)]
    sensor_loss: Option<RawSensorLoss>,
    #[serde(default)]
    epochs: Option<Spanned<Vec<Spanned<RawEntry>>>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFlight {
    #[serde(default)]
    pause_clock_when_stopped: Option<Spanned<bool>>,
    #[serde(default)]
    min_flying_s: Option<Spanned<f64>>,
    #[serde(default)]
    abort_after_stopped_s: Option<Spanned<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSensorLoss {
    #[serde(default)]
    pause_clock: Option<Spanned<bool>>,
    #[serde(default)]
    hold_turns: Option<Spanned<bool>>,
    #[serde(default)]
    abort_after_s: Option<Spanned<f64>>,
}

/// One `[[epochs]]` entry: a single epoch, or a generated sequence when `count` is given.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEntry {
    #[serde(default)]
    count: Option<Spanned<i64>>,
    duration_s: Spanned<f64>,
    #[serde(default)]
    condition: Option<Spanned<String>>,
    #[serde(default)]
    turn_deg: Option<Spanned<f64>>,
    #[serde(default)]
    go_to_deg: Option<Spanned<f64>>,
    #[serde(default)]
    prompt: Option<Spanned<String>>,
    #[serde(default)]
    turns: Option<Spanned<Vec<Spanned<f64>>>>,
    #[serde(default)]
    positions: Option<Spanned<Vec<Spanned<f64>>>>,
    #[serde(default)]
    order: Option<Spanned<Order>>,
    #[serde(default)]
    seed: Option<Spanned<u64>>,
    #[serde(default)]
    cues: Option<Spanned<super::cues::RawCues>>,
}

/// The condition an epoch gets when the file names none.
pub const DEFAULT_CONDITION: &str = "open sky";

// ---------------------------------------------------------------------------------------------
// Helpers for positions in the text.

struct Source<'a> {
    file: &'a str,
    text: &'a str,
}

impl Source<'_> {
    fn line_of(&self, offset: usize) -> usize {
        let end = offset.min(self.text.len());
        let mut cut = end;
        while cut > 0 && !self.text.is_char_boundary(cut) {
            cut -= 1;
        }
        self.text[..cut].matches('\n').count() + 1
    }

    fn field_err(
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

    fn warn(&self, span: Range<usize>, field: &str, message: impl AsRef<str>) -> String {
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
fn convert_toml_error(src: &Source<'_>, err: &toml::de::Error) -> ProtocolError {
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

fn finite(src: &Source<'_>, v: &Spanned<f64>, field: &str) -> Result<f64, ProtocolError> {
    let x = *v.get_ref();
    if x.is_finite() {
        Ok(x)
    } else {
        Err(src.field_err(
            v.span(),
            field,
            format!("must be a finite number (got {x})"),
        ))
    }
}

fn positive(src: &Source<'_>, v: &Spanned<f64>, field: &str) -> Result<f64, ProtocolError> {
    let x = finite(src, v, field)?;
    if x > 0.0 {
        Ok(x)
    } else {
        Err(src.field_err(v.span(), field, format!("must be > 0 (got {x})")))
    }
}

/// `[sensor_loss]`: defaults from [`SensorLossRules::default`]; `abort_after_s = 0` turns the
/// abort rule off.
fn sensor_loss_rules(
    src: &Source<'_>,
    raw: Option<&RawSensorLoss>,
) -> Result<SensorLossRules, ProtocolError> {
    let mut rules = SensorLossRules::default();
    let Some(r) = raw else {
        return Ok(rules);
    };
    if let Some(p) = &r.pause_clock {
        rules.pause_clock = *p.get_ref();
    }
    if let Some(h) = &r.hold_turns {
        rules.hold_turns = *h.get_ref();
    }
    if let Some(a) = &r.abort_after_s {
        let x = finite(src, a, "sensor_loss.abort_after_s")?;
        if x < 0.0 {
            return Err(src.field_err(
                a.span(),
                "sensor_loss.abort_after_s",
                format!("must be >= 0 (got {x}; 0 means never)"),
            ));
        }
        rules.abort_after_s = (x > 0.0).then_some(x);
    }
    Ok(rules)
}

/// A positive duration of at most `max` seconds.
fn duration(
    src: &Source<'_>,
    v: &Spanned<f64>,
    field: &str,
    max: f64,
    what: &str,
) -> Result<f64, ProtocolError> {
    let x = positive(src, v, field)?;
    if x > max {
        Err(src.field_err(
            v.span(),
            field,
            format!("must be at most {max} s ({what}) (got {x})"),
        ))
    } else {
        Ok(x)
    }
}

fn non_empty(src: &Source<'_>, v: &Spanned<String>, field: &str) -> Result<String, ProtocolError> {
    let s = v.get_ref().trim();
    if s.is_empty() {
        Err(src.field_err(v.span(), field, "must not be empty"))
    } else {
        Ok(s.to_string())
    }
}

// ---------------------------------------------------------------------------------------------
// Validation and expansion.

/// Parses and checks a protocol file's text.
///
/// `source_name` is what error messages call the file (usually its name as given by the user).
/// Returns the expanded protocol (epochs numbered from 1) and warnings about legal but suspicious
/// plans (epochs shorter than the settle window, turns of 0, a shuffle that cannot balance, a
/// total over 4 hours...), each a one-line `file:line: field: message`.
pub fn parse_protocol(
    text: &str,
    source_name: &str,
) -> Result<(Protocol, Vec<String>), ProtocolError> {
    let src = Source {
        file: source_name,
        text,
    };
    let raw: RawProtocol = toml::from_str(text).map_err(|e| convert_toml_error(&src, &e))?;
    let mut warnings = Vec::new();

    let name = non_empty(&src, &raw.name, "name")?;
    let description = raw
        .description
        .as_ref()
        .map(|d| d.get_ref().trim().to_string())
        .unwrap_or_default();
    let settle_s = finite(&src, &raw.settle_s, "settle_s")?;
    if settle_s < 0.0 {
        return Err(src.field_err(
            raw.settle_s.span(),
            "settle_s",
            format!("must be >= 0 (got {settle_s})"),
        ));
    }
    if settle_s > MAX_SETTLE_S {
        return Err(src.field_err(
            raw.settle_s.span(),
            "settle_s",
            format!("must be at most {MAX_SETTLE_S} s (1 hour) (got {settle_s})"),
        ));
    }

    let mut flight = FlightRules::default();
    if let Some(f) = &raw.flight {
        if let Some(p) = &f.pause_clock_when_stopped {
            flight.pause_clock_when_stopped = *p.get_ref();
        }
        if let Some(m) = &f.min_flying_s {
            flight.min_flying_s = Some(duration(
                &src,
                m,
                "flight.min_flying_s",
                MAX_EPOCH_S,
                "24 hours",
            )?);
        }
        if let Some(a) = &f.abort_after_stopped_s {
            flight.abort_after_stopped_s = Some(duration(
                &src,
                a,
                "flight.abort_after_stopped_s",
                MAX_EPOCH_S,
                "24 hours",
            )?);
        }
    }

    let sensor_loss = sensor_loss_rules(&src, raw.sensor_loss.as_ref())?;

    let Some(entries) = &raw.epochs else {
        return Err(ProtocolError::Field {
            file: source_name.to_string(),
            line: src.line_of(text.len()),
            field: "epochs".to_string(),
            message: "no epochs: add at least one [[epochs]] entry".to_string(),
        });
    };
    if entries.get_ref().is_empty() {
        return Err(src.field_err(
            entries.span(),
            "epochs",
            "no epochs: add at least one [[epochs]] entry",
        ));
    }

    let mut epochs: Vec<EpochPlan> = Vec::new();
    // Position of the arena relative to its start, to warn about GoTo that does not move it.
    let mut position_deg = 0.0_f64;
    for (i, entry) in entries.get_ref().iter().enumerate() {
        let at = format!("epochs[{}]", i + 1);
        let expanded = expand_entry(&src, &at, entry, &mut warnings)?;
        for (mut e, span) in expanded {
            e.index = epochs.len() + 1;
            let field = format!("{at} (epoch {})", e.index);
            match e.arena {
                ArenaMove::Stay => {}
                ArenaMove::TurnBy { deg } => {
                    if deg == 0.0 {
                        warnings.push(src.warn(
                            span.clone(),
                            &field,
                            "turn of 0 deg: the arena does not move",
                        ));
                    } else if deg.abs() > 360.0 {
                        warnings.push(src.warn(
                            span.clone(),
                            &field,
                            format!("turn of {deg} deg is more than a full revolution"),
                        ));
                    }
                    position_deg = crate::frames::wrap_360_deg(position_deg + deg);
                }
                ArenaMove::GoTo { position_deg: to } => {
                    let turn = crate::frames::signed_difference_deg(position_deg, to);
                    if turn == 0.0 && e.index > 1 {
                        warnings.push(src.warn(
                            span.clone(),
                            &field,
                            format!("go to {to} deg: the arena is already there (turn of 0 deg)"),
                        ));
                    }
                    position_deg = to;
                }
            }
            let moved = !matches!(e.arena, ArenaMove::Stay);
            if moved && e.duration_s <= settle_s {
                warnings.push(src.warn(
                    span.clone(),
                    &field,
                    format!(
                        "duration {} s is not longer than the settle window ({} s): nothing will be scored",
                        e.duration_s, settle_s
                    ),
                ));
            }
            if let Some(m) = flight.min_flying_s
                && m > e.duration_s
            {
                warnings.push(src.warn(
                    span.clone(),
                    &field,
                    format!(
                        "flight.min_flying_s ({m} s) is longer than the epoch ({} s): it will always be extended",
                        e.duration_s
                    ),
                ));
            }
            epochs.push(e);
        }
    }

    let protocol = Protocol {
        name,
        description,
        settle_s,
        flight,
        sensor_loss,
        epochs,
    };
    let total = protocol.total_duration_s();
    if total > MAX_SESSION_S {
        return Err(src.field_err(
            entries.span(),
            "epochs",
            format!(
                "total duration {} is over the limit of {MAX_SESSION_S} s (3 days)",
                super::format_duration_s(total)
            ),
        ));
    }
    if total > LONG_PROTOCOL_S {
        warnings.push(format!(
            "{}:{}: epochs: total duration {} is over 4 hours",
            source_name,
            src.line_of(entries.span().start),
            super::format_duration_s(total)
        ));
    }
    Ok((protocol, warnings))
}

/// Expands one `[[epochs]]` entry into epochs (index left at 0) with the span to warn at.
fn expand_entry(
    src: &Source<'_>,
    at: &str,
    entry: &Spanned<RawEntry>,
    warnings: &mut Vec<String>,
) -> Result<Vec<(EpochPlan, Range<usize>)>, ProtocolError> {
    let e = entry.get_ref();
    let f = |name: &str| format!("{at}.{name}");
    let duration_s = duration(
        src,
        &e.duration_s,
        &f("duration_s"),
        MAX_EPOCH_S,
        "24 hours",
    )?;
    let condition = match &e.condition {
        Some(c) => non_empty(src, c, &f("condition"))?,
        None => DEFAULT_CONDITION.to_string(),
    };
    let prompt = match &e.prompt {
        Some(p) => Some(non_empty(src, p, &f("prompt"))?),
        None => None,
    };
    let first_move = match (&e.turn_deg, &e.go_to_deg) {
        (Some(t), Some(_)) => {
            return Err(src.field_err(
                t.span(),
                f("turn_deg"),
                "give either turn_deg or go_to_deg, not both",
            ));
        }
        (Some(t), None) => ArenaMove::TurnBy {
            deg: finite(src, t, &f("turn_deg"))?,
        },
        (None, Some(g)) => ArenaMove::GoTo {
            position_deg: crate::frames::wrap_360_deg(finite(src, g, &f("go_to_deg"))?),
        },
        (None, None) => ArenaMove::Stay,
    };
    let cues = match &e.cues {
        Some(c) => c
            .get_ref()
            .validate(c.span())
            .map_err(|(s, key, msg)| src.field_err(s, f(&format!("cues.{key}")), msg))?,
        None => super::Cues::OPEN_SKY,
    };
    let span = e.duration_s.span();

    let Some(count_raw) = &e.count else {
        // A single epoch: sequence-only keys are refused.
        for (present, name) in [
            (e.turns.as_ref().map(|t| t.span()), "turns"),
            (e.positions.as_ref().map(|t| t.span()), "positions"),
            (e.order.as_ref().map(|t| t.span()), "order"),
            (e.seed.as_ref().map(|t| t.span()), "seed"),
        ] {
            if let Some(s) = present {
                return Err(src.field_err(
                    s,
                    f(name),
                    "only allowed in a sequence (an entry with count = N)",
                ));
            }
        }
        return Ok(vec![(
            EpochPlan {
                index: 0,
                duration_s,
                condition,
                arena: first_move,
                prompt,
                cues,
            },
            span,
        )]);
    };

    // A sequence of `count` epochs.
    let count = *count_raw.get_ref();
    if count < 1 {
        return Err(src.field_err(
            count_raw.span(),
            f("count"),
            format!("must be >= 1 (got {count})"),
        ));
    }
    if count > 10_000 {
        return Err(src.field_err(
            count_raw.span(),
            f("count"),
            format!("must be <= 10000 (got {count})"),
        ));
    }
    let count = count as usize;

    // Moves: `turns` between the epochs of the sequence (count − 1 of them, the first epoch takes
    // turn_deg/go_to_deg or stays), or `positions` for every epoch (count of them).
    let (list, list_name, steps, as_position) = match (&e.turns, &e.positions) {
        (Some(t), Some(_)) => {
            return Err(src.field_err(
                t.span(),
                f("turns"),
                "give either turns or positions, not both",
            ));
        }
        (Some(t), None) => (Some(t), "turns", count - 1, false),
        (None, Some(p)) => {
            if !matches!(first_move, ArenaMove::Stay) {
                let s = e
                    .turn_deg
                    .as_ref()
                    .map(|x| x.span())
                    .or(e.go_to_deg.as_ref().map(|x| x.span()))
                    .unwrap_or(span.clone());
                return Err(src.field_err(
                    s,
                    f(if e.turn_deg.is_some() {
                        "turn_deg"
                    } else {
                        "go_to_deg"
                    }),
                    "not allowed with positions (positions already place every epoch)",
                ));
            }
            (Some(p), "positions", count, true)
        }
        (None, None) => (None, "turns", 0, false),
    };

    let mut values: Vec<f64> = Vec::new();
    let order = e.order.as_ref().map(|o| *o.get_ref());
    if let Some(list) = list {
        if list.get_ref().is_empty() {
            return Err(src.field_err(
                list.span(),
                f(list_name),
                format!(
                    "empty list: give at least one value{}",
                    order
                        .map(|o| format!(" to {}", o.as_str()))
                        .unwrap_or_default()
                ),
            ));
        }
        for (k, v) in list.get_ref().iter().enumerate() {
            let x = finite(src, v, &format!("{at}.{list_name}[{}]", k + 1))?;
            values.push(if as_position {
                crate::frames::wrap_360_deg(x)
            } else {
                x
            });
        }
        let order = order.unwrap_or(Order::Cycle);
        let seed = match (&e.seed, order) {
            (Some(s), _) => *s.get_ref(),
            (None, Order::Shuffle | Order::Balanced) => {
                let s = e.order.as_ref().map(|o| o.span()).unwrap_or(list.span());
                return Err(src.field_err(
                    s,
                    f("seed"),
                    format!(
                        "missing: order = \"{}\" needs a seed (any whole number >= 0) so the order can be reproduced",
                        order.as_str()
                    ),
                ));
            }
            (None, _) => 0,
        };
        match order {
            Order::Fixed if values.len() != steps => {
                return Err(src.field_err(
                    list.span(),
                    f(list_name),
                    format!(
                        "order = \"fixed\" needs exactly {steps} values for {count} epochs (got {})",
                        values.len()
                    ),
                ));
            }
            Order::Balanced if steps % values.len() != 0 => {
                return Err(src.field_err(
                    list.span(),
                    f(list_name),
                    format!(
                        "order = \"balanced\" needs the number of {list_name} ({steps}) to be a multiple of the list length ({})",
                        values.len()
                    ),
                ));
            }
            Order::Shuffle if steps % values.len() != 0 => {
                warnings.push(src.warn(
                    list.span(),
                    &f(list_name),
                    format!(
                        "shuffle cannot balance: {steps} {list_name} over {} values, some occur once more than others",
                        values.len()
                    ),
                ));
            }
            Order::Cycle if steps < values.len() && steps > 0 => {
                warnings.push(src.warn(
                    list.span(),
                    &f(list_name),
                    format!("only the first {steps} of {} values are used", values.len()),
                ));
            }
            _ => {}
        }
        if steps == 0 {
            warnings.push(src.warn(
                list.span(),
                &f(list_name),
                "a sequence of one epoch has no turns between epochs: the list is unused",
            ));
        }
        values = sequence::expand(&values, order, seed, steps);
        if let Some(s) = &e.seed
            && matches!(order, Order::Fixed | Order::Cycle)
        {
            warnings.push(src.warn(
                s.span(),
                &f("seed"),
                format!("unused with order = \"{}\"", order.as_str()),
            ));
        }
    } else {
        for (present, name) in [
            (e.order.as_ref().map(|t| t.span()), "order"),
            (e.seed.as_ref().map(|t| t.span()), "seed"),
        ] {
            if let Some(s) = present {
                return Err(src.field_err(s, f(name), "needs a turns or positions list"));
            }
        }
    }

    let mut out = Vec::with_capacity(count);
    for k in 0..count {
        let arena = if as_position {
            ArenaMove::GoTo {
                position_deg: values[k],
            }
        } else if k == 0 {
            first_move
        } else if values.is_empty() {
            ArenaMove::Stay
        } else {
            ArenaMove::TurnBy { deg: values[k - 1] }
        };
        out.push((
            EpochPlan {
                index: 0,
                duration_s,
                condition: condition.clone(),
                arena,
                prompt: if k == 0 { prompt.clone() } else { None },
                cues,
            },
            span.clone(),
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(text: &str) -> ProtocolError {
        match parse_protocol(text, "t.toml") {
            Ok(_) => panic!("expected an error for:\n{text}"),
            Err(e) => e,
        }
    }

    fn ok(text: &str) -> (Protocol, Vec<String>) {
        match parse_protocol(text, "t.toml") {
            Ok(p) => p,
            Err(e) => panic!("unexpected error {e} for:\n{text}"),
        }
    }

    const HEAD: &str = "name = \"t\"\nsettle_s = 5\n";

    fn turns(p: &Protocol) -> Vec<f64> {
        p.epochs
            .iter()
            .skip(1)
            .map(|e| match e.arena {
                ArenaMove::TurnBy { deg } => deg,
                other => panic!("not a turn: {other:?}"),
            })
            .collect()
    }

    #[test]
    fn single_epochs_get_defaults_and_indices_from_one() {
        let (p, w) = ok(&format!(
            "{HEAD}[[epochs]]\nduration_s = 60\n\n[[epochs]]\nduration_s = 30.5\nturn_deg = -90\ncondition = \"diffuser\"\nprompt = \"Place the diffuser\"\n"
        ));
        assert!(w.is_empty(), "{w:?}");
        assert_eq!(p.epochs.len(), 2);
        assert_eq!(p.epochs[0].index, 1);
        assert_eq!(p.epochs[1].index, 2);
        assert_eq!(p.epochs[0].condition, DEFAULT_CONDITION);
        assert_eq!(p.epochs[0].arena, ArenaMove::Stay);
        assert_eq!(p.epochs[1].arena, ArenaMove::TurnBy { deg: -90.0 });
        assert_eq!(p.epochs[1].prompt.as_deref(), Some("Place the diffuser"));
        assert_eq!(p.total_duration_s(), 90.5);
        assert_eq!(p.flight, FlightRules::default());
    }

    #[test]
    fn cycle_sequence_turns_between_epochs_in_order() {
        let (p, _) = ok(&format!(
            "{HEAD}[[epochs]]\ncount = 6\nduration_s = 60\nturns = [90, 180, -90]\norder = \"cycle\"\nprompt = \"go\"\n"
        ));
        assert_eq!(p.epochs.len(), 6);
        assert_eq!(p.epochs[0].arena, ArenaMove::Stay);
        assert_eq!(turns(&p), vec![90.0, 180.0, -90.0, 90.0, 180.0]);
        // The prompt belongs to the first epoch of the sequence only.
        assert_eq!(p.epochs[0].prompt.as_deref(), Some("go"));
        assert!(p.epochs[1..].iter().all(|e| e.prompt.is_none()));
    }

    #[test]
    fn order_defaults_to_cycle() {
        let (p, _) = ok(&format!(
            "{HEAD}[[epochs]]\ncount = 4\nduration_s = 60\nturns = [45, -45]\n"
        ));
        assert_eq!(turns(&p), vec![45.0, -45.0, 45.0]);
    }

    #[test]
    fn shuffle_is_reproducible_for_a_seed_and_balanced_when_it_divides() {
        let text = |seed: u64| {
            format!(
                "{HEAD}[[epochs]]\ncount = 10\nduration_s = 60\nturns = [90, -90, 180]\norder = \"shuffle\"\nseed = {seed}\n"
            )
        };
        let (a, wa) = ok(&text(11));
        let (b, _) = ok(&text(11));
        assert!(wa.is_empty(), "{wa:?}");
        assert_eq!(a, b);
        let ta = turns(&a);
        for x in [90.0, -90.0, 180.0] {
            assert_eq!(ta.iter().filter(|&&t| t == x).count(), 3, "{ta:?}");
        }
        let differs = (12..30).any(|s| turns(&ok(&text(s)).0) != ta);
        assert!(differs, "the seed changes nothing");
    }

    #[test]
    fn balanced_counts_are_equal_in_every_block() {
        let (p, _) = ok(&format!(
            "{HEAD}[[epochs]]\ncount = 9\nduration_s = 60\nturns = [90, -90, 180, 45]\norder = \"balanced\"\nseed = 3\n"
        ));
        let t = turns(&p);
        assert_eq!(t.len(), 8);
        for block in t.chunks(4) {
            for x in [90.0, -90.0, 180.0, 45.0] {
                assert_eq!(block.iter().filter(|&&v| v == x).count(), 1, "{t:?}");
            }
        }
    }

    #[test]
    fn positions_become_goto_for_every_epoch() {
        let (p, _) = ok(&format!(
            "{HEAD}[[epochs]]\ncount = 4\nduration_s = 60\npositions = [0, 90, -90, 540]\norder = \"fixed\"\n"
        ));
        let got: Vec<ArenaMove> = p.epochs.iter().map(|e| e.arena).collect();
        assert_eq!(
            got,
            vec![
                ArenaMove::GoTo { position_deg: 0.0 },
                ArenaMove::GoTo { position_deg: 90.0 },
                ArenaMove::GoTo {
                    position_deg: 270.0
                },
                ArenaMove::GoTo {
                    position_deg: 180.0
                },
            ]
        );
        assert_eq!(p.positions_deg(), vec![0.0, 90.0, 270.0, 180.0]);
    }

    #[test]
    fn sequence_first_move_comes_from_turn_deg() {
        let (p, _) = ok(&format!(
            "{HEAD}[[epochs]]\nduration_s = 60\n[[epochs]]\ncount = 2\nduration_s = 60\nturn_deg = 30\nturns = [60]\n"
        ));
        assert_eq!(p.epochs[1].arena, ArenaMove::TurnBy { deg: 30.0 });
        assert_eq!(p.epochs[2].arena, ArenaMove::TurnBy { deg: 60.0 });
    }

    #[test]
    fn flight_rules_are_read() {
        let (p, _) = ok(&format!(
            "{HEAD}[flight]\npause_clock_when_stopped = true\nmin_flying_s = 40\nabort_after_stopped_s = 90\n[[epochs]]\nduration_s = 60\n"
        ));
        assert_eq!(
            p.flight,
            FlightRules {
                pause_clock_when_stopped: true,
                min_flying_s: Some(40.0),
                abort_after_stopped_s: Some(90.0),
            }
        );
    }

    // Bad files: each error is one line naming file, line and field.

    fn assert_field(e: &ProtocolError, line: usize, field: &str, words: &str) {
        let text = e.to_string();
        assert!(!text.contains('\n'), "{text}");
        match e {
            ProtocolError::Field {
                file,
                line: l,
                field: f,
                message,
            } => {
                assert_eq!(file, "t.toml", "{text}");
                assert_eq!(*l, line, "{text}");
                assert_eq!(f, field, "{text}");
                assert!(message.contains(words), "{text}");
                assert!(
                    text.starts_with(&format!("t.toml:{line}: {field}: ")),
                    "{text}"
                );
            }
            other => panic!("not a field error: {other:?}"),
        }
    }

    #[test]
    fn negative_duration() {
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 10\n\n[[epochs]]\nduration_s = -5\n"
        ));
        assert_field(&e, 7, "epochs[2].duration_s", "must be > 0 (got -5)");
    }

    #[test]
    fn unknown_key() {
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 10\ndurration_s = 3\n"
        ));
        assert_field(&e, 5, "epochs[1].durration_s", "unknown key `durration_s`");
        let e = err(&format!(
            "{HEAD}[flight]\npause = true\n[[epochs]]\nduration_s = 3\n"
        ));
        assert_field(&e, 4, "flight.pause", "unknown key");
        let e = err(&format!(
            "{HEAD}colour = \"blue\"\n[[epochs]]\nduration_s = 3\n"
        ));
        assert_field(&e, 3, "colour", "unknown key");
    }

    #[test]
    fn zero_epochs() {
        let e = err(&format!("{HEAD}epochs = []\n"));
        assert_field(&e, 3, "epochs", "no epochs");
        let e = err(HEAD);
        assert_field(&e, 3, "epochs", "no epochs");
    }

    #[test]
    fn turn_not_a_number() {
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [90, \"left\"]\n"
        ));
        assert_field(
            &e,
            6,
            "epochs[1].turns[2]",
            "must be a number (got string \"left\")",
        );
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 3\nturn_deg = \"x\"\n"
        ));
        assert_field(&e, 5, "epochs[1].turn_deg", "must be a number");
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 3\nturn_deg = inf\n"
        ));
        assert_field(&e, 5, "epochs[1].turn_deg", "finite");
    }

    #[test]
    fn shuffle_with_empty_turn_list() {
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = []\norder = \"shuffle\"\nseed = 1\n"
        ));
        assert_field(&e, 6, "epochs[1].turns", "empty list");
    }

    #[test]
    fn other_bad_values() {
        let e = err("settle_s = 3\n[[epochs]]\nduration_s = 3\n");
        assert_field(&e, 1, "name", "missing");
        let e = err(&format!("{HEAD}[[epochs]]\ncount = 3\n"));
        assert_field(&e, 3, "epochs[1].duration_s", "missing");
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1]\norder = \"shufle\"\nseed = 1\n"
        ));
        assert_field(&e, 7, "epochs[1].order", "unknown variant");
        let e = err(&format!("{HEAD}[[epochs]]\ncount = 0\nduration_s = 10\n"));
        assert_field(&e, 4, "epochs[1].count", "must be >= 1 (got 0)");
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1]\norder = \"shuffle\"\n"
        ));
        assert_field(&e, 7, "epochs[1].seed", "needs a seed");
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1, 2, 3]\norder = \"fixed\"\n"
        ));
        assert_field(&e, 6, "epochs[1].turns", "exactly 2 values");
        let e = err(&format!(
            "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1, 2, 3]\norder = \"balanced\"\nseed = 2\n"
        ));
        assert_field(&e, 6, "epochs[1].turns", "multiple");
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 10\nturns = [90]\n"
        ));
        assert_field(&e, 5, "epochs[1].turns", "only allowed in a sequence");
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 10\nturn_deg = 9\ngo_to_deg = 9\n"
        ));
        assert_field(&e, 5, "epochs[1].turn_deg", "not both");
        let e = err("name = \"t\"\nsettle_s = -1\n[[epochs]]\nduration_s = 10\n");
        assert_field(&e, 2, "settle_s", "must be >= 0 (got -1)");
        let e = err(&format!(
            "{HEAD}[[epochs]]\nduration_s = 10\ncondition = \"  \"\n"
        ));
        assert_field(&e, 5, "epochs[1].condition", "empty");
    }

    #[test]
    fn syntax_error_names_the_line() {
        let e = err(&format!("{HEAD}[[epochs]\nduration_s = 3\n"));
        assert_eq!(e.line(), Some(3), "{e}");
        assert!(e.to_string().starts_with("t.toml:3: "), "{e}");
    }

    // Warnings for legal but suspicious plans.

    fn warns(text: &str) -> Vec<String> {
        ok(&format!("{HEAD}{text}")).1
    }

    #[test]
    fn warns_about_short_epochs_after_turns() {
        let w = warns("[[epochs]]\nduration_s = 3\n[[epochs]]\nduration_s = 4\nturn_deg = 90\n");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].starts_with("t.toml:6: epochs[2] (epoch 2): duration 4 s"),
            "{w:?}"
        );
        assert!(w[0].contains("settle window"), "{w:?}");
    }

    #[test]
    fn warns_about_zero_turns() {
        let w = warns("[[epochs]]\nduration_s = 30\n[[epochs]]\nduration_s = 30\nturn_deg = 0\n");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("turn of 0 deg"), "{w:?}");
        let w = warns(
            "[[epochs]]\nduration_s = 30\ngo_to_deg = 90\n[[epochs]]\nduration_s = 30\ngo_to_deg = 450\n",
        );
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("already there"), "{w:?}");
    }

    #[test]
    fn warns_about_a_shuffle_that_cannot_balance() {
        let w = warns(
            "[[epochs]]\ncount = 9\nduration_s = 30\nturns = [90, -90, 180]\norder = \"shuffle\"\nseed = 4\n",
        );
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].starts_with("t.toml:6: epochs[1].turns: shuffle cannot balance"),
            "{w:?}"
        );
    }

    #[test]
    fn warns_about_long_protocols_and_short_epochs_for_min_flying() {
        let w = warns("[[epochs]]\ncount = 5\nduration_s = 3600\nturns = [90]\n");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("over 4 hours"), "{w:?}");
        assert!(w[0].contains("5 h 00 min 00 s"), "{w:?}");
        let w = warns("[flight]\nmin_flying_s = 100\n[[epochs]]\nduration_s = 60\n");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("always be extended"), "{w:?}");
    }

    #[test]
    fn a_plain_protocol_draws_no_warning() {
        let w = warns(
            "[[epochs]]\ncount = 4\nduration_s = 120\nturns = [90, -90, 180]\norder = \"cycle\"\n",
        );
        assert!(w.is_empty(), "{w:?}");
    }
}
