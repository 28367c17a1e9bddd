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

mod source;
use source::{Source, convert_toml_error};

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
mod tests;
