//! Comparing a stored `summary.json` with the summary recomputed from `samples.csv` (used by
//! `check` and `check --repair`). Keys added after the first archives (`p_oriented`,
//! `window_shift_deg`, `turn_test`) are compared only when the stored file holds them;
//! `p_oriented` only when the file's `p_oriented_lags_s` is this program's lag window (an
//! archive written with the earlier 1–5 s window keeps its figures and is not faulted).

use std::path::Path;

use super::{ArchiveError, Summary, TurnTest, read_json};

/// Absolute tolerance (scaled up for values above 1) when comparing `summary.json` with the
/// summary recomputed from `samples.csv`.
pub const SUMMARY_TOLERANCE: f64 = 1e-6;

fn close(a: f64, b: f64) -> bool {
    (a.is_nan() && b.is_nan()) || (a - b).abs() <= SUMMARY_TOLERANCE * b.abs().max(1.0)
}

fn close_angle(a: f64, b: f64) -> bool {
    (a.is_nan() && b.is_nan()) || crate::frames::wrap_signed_deg(a - b).abs() <= SUMMARY_TOLERANCE
}

fn close_opt_angle(a: Option<f64>, b: Option<f64>) -> bool {
    match (a, b) {
        (None, None) => true,
        (Some(a), Some(b)) => close_angle(a, b),
        _ => false,
    }
}

fn show_opt(v: Option<f64>) -> String {
    v.map_or("null".into(), |v| v.to_string())
}

fn close_opt(a: Option<f64>, b: Option<f64>) -> bool {
    match (a, b) {
        (None, None) => true,
        (Some(a), Some(b)) => close(a, b),
        _ => false,
    }
}

/// Which of the later keys a stored `summary.json` holds. Archives written before a key
/// existed lack it; a missing key is not compared (it is not a difference).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StoredKeys {
    /// Per stored epoch: has `p_oriented` computed with this program's lag window.
    pub p_oriented: Vec<bool>,
    /// The file holds `p_oriented` computed with another lag window (not compared).
    pub p_oriented_other_window: bool,
    /// Per stored turn: has `window_shift_deg`.
    pub window_shift_deg: Vec<bool>,
    /// The stored `turn_test`, when there is one.
    pub turn_test: Option<TurnTest>,
}

impl StoredKeys {
    /// Every key present, with the turn test derived from `s` (a summary just built).
    pub fn all(s: &Summary) -> Self {
        StoredKeys {
            p_oriented: vec![true; s.epochs.len()],
            p_oriented_other_window: false,
            window_shift_deg: vec![true; s.turns.len()],
            turn_test: Some(s.turn_test()),
        }
    }

    /// The keys of a parsed `summary.json`.
    pub fn of(v: &serde_json::Value) -> Self {
        let has = |list: &str, key: &str| -> Vec<bool> {
            v.get(list)
                .and_then(|l| l.as_array())
                .map(|l| l.iter().map(|x| x.get(key).is_some()).collect())
                .unwrap_or_default()
        };
        let window: Option<[f64; 2]> = v
            .get("p_oriented_lags_s")
            .and_then(|w| serde_json::from_value(w.clone()).ok());
        let current = window == Some(super::P_ORIENTED_LAGS_S);
        let p_oriented = has("epochs", "p_oriented");
        StoredKeys {
            p_oriented_other_window: !current && p_oriented.iter().any(|&h| h),
            p_oriented: p_oriented.into_iter().map(|h| h && current).collect(),
            window_shift_deg: has("turns", "window_shift_deg"),
            turn_test: v
                .get("turn_test")
                .and_then(|t| serde_json::from_value(t.clone()).ok()),
        }
    }
}

/// Reads `summary.json` with the keys it holds ([`StoredKeys`]).
pub fn read_stored_summary(path: &Path) -> Result<(Summary, StoredKeys), ArchiveError> {
    let v: serde_json::Value = read_json(path)?;
    let keys = StoredKeys::of(&v);
    let s = serde_json::from_value(v).map_err(|source| ArchiveError::Json {
        path: path.to_path_buf(),
        source,
    })?;
    Ok((s, keys))
}

/// Differences between a stored summary and a recomputed one, one line each (empty: they
/// agree within [`SUMMARY_TOLERANCE`]), every key compared.
pub fn compare_summaries(stored: &Summary, computed: &Summary) -> Vec<String> {
    compare_stored_summary(stored, &StoredKeys::all(stored), computed)
}

/// [`compare_summaries`] of a summary read from a file: `p_oriented`, `window_shift_deg` and
/// `turn_test` are compared only where `keys` says the file holds them.
pub fn compare_stored_summary(
    stored: &Summary,
    keys: &StoredKeys,
    computed: &Summary,
) -> Vec<String> {
    let mut out = Vec::new();
    let mut num = |what: String, a: f64, b: f64, angle: bool| {
        let same = if angle {
            close_angle(a, b)
        } else {
            close(a, b)
        };
        if !same {
            out.push(format!("{what} is {a} but the samples give {b}"));
        }
    };
    num("r_world".into(), stored.r_world, computed.r_world, false);
    num("r_arena".into(), stored.r_arena, computed.r_arena, false);
    let mut lines = Vec::new();
    if stored.epochs.len() != computed.epochs.len() {
        lines.push(format!(
            "{} epochs but the plan has {}",
            stored.epochs.len(),
            computed.epochs.len()
        ));
    }
    for (i, (a, b)) in stored.epochs.iter().zip(&computed.epochs).enumerate() {
        let p = format!("epochs[{}]", a.index);
        if a.index != b.index || a.condition != b.condition {
            lines.push(format!(
                "{p}: index/condition {}/{:?} but the plan has {}/{:?}",
                a.index, a.condition, b.index, b.condition
            ));
        }
        if a.n != b.n {
            lines.push(format!("{p}.n is {} but the samples give {}", a.n, b.n));
        }
        num(
            format!("{p}.arena_bearing_deg"),
            a.arena_bearing_deg,
            b.arena_bearing_deg,
            true,
        );
        if !close_opt_angle(a.mean_arena_deg, b.mean_arena_deg) {
            lines.push(format!(
                "{p}.mean_arena_deg is {} but the samples give {}",
                show_opt(a.mean_arena_deg),
                show_opt(b.mean_arena_deg)
            ));
        }
        if !close_opt_angle(a.mean_world_deg, b.mean_world_deg) {
            lines.push(format!(
                "{p}.mean_world_deg is {} but the samples give {}",
                show_opt(a.mean_world_deg),
                show_opt(b.mean_world_deg)
            ));
        }
        num(format!("{p}.r"), a.r, b.r, false);
        num(format!("{p}.rayleigh_p"), a.rayleigh_p, b.rayleigh_p, false);
        if keys.p_oriented.get(i).copied().unwrap_or(false)
            && !close_opt(a.p_oriented, b.p_oriented)
        {
            lines.push(format!(
                "{p}.p_oriented is {} but the samples give {}",
                show_opt(a.p_oriented),
                show_opt(b.p_oriented)
            ));
        }
    }
    if stored.turns.len() != computed.turns.len() {
        lines.push(format!(
            "{} turns but the plan has {}",
            stored.turns.len(),
            computed.turns.len()
        ));
    }
    for (i, (a, b)) in stored.turns.iter().zip(&computed.turns).enumerate() {
        let p = format!("turns[{}]", a.index);
        if keys.window_shift_deg.get(i).copied().unwrap_or(false)
            && !close_opt_angle(a.window_shift_deg, b.window_shift_deg)
        {
            lines.push(format!(
                "{p}.window_shift_deg is {} but the samples give {}",
                show_opt(a.window_shift_deg),
                show_opt(b.window_shift_deg)
            ));
        }
        num(format!("{p}.turn_deg"), a.turn_deg, b.turn_deg, false);
        if !close_opt_angle(a.world_shift_deg, b.world_shift_deg) {
            lines.push(format!(
                "{p}.world_shift_deg is {} but the samples give {}",
                show_opt(a.world_shift_deg),
                show_opt(b.world_shift_deg)
            ));
        }
    }
    if let Some(a) = &keys.turn_test {
        let b = computed.turn_test();
        if a.turns != b.turns {
            lines.push(format!(
                "turn_test.turns is {} but the samples give {}",
                a.turns, b.turns
            ));
        }
        for (what, x, y, angle) in [
            (
                "mean_world_shift_deg",
                a.mean_world_shift_deg,
                b.mean_world_shift_deg,
                true,
            ),
            ("p_world_kept", a.p_world_kept, b.p_world_kept, false),
            ("p_arena_kept", a.p_arena_kept, b.p_arena_kept, false),
        ] {
            let same = if angle {
                close_opt_angle(x, y)
            } else {
                close_opt(x, y)
            };
            if !same {
                lines.push(format!(
                    "turn_test.{what} is {} but the samples give {}",
                    show_opt(x),
                    show_opt(y)
                ));
            }
        }
    }
    out.extend(lines);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::archive::{EpochSummary, TurnSummary};

    fn summary(p: Option<f64>, shift: Option<f64>) -> Summary {
        let epoch = |index| EpochSummary {
            index,
            condition: "open sky".into(),
            arena_bearing_deg: 10.0,
            n: 5,
            mean_arena_deg: Some(1.0),
            mean_world_deg: Some(11.0),
            r: 0.5,
            rayleigh_p: 0.2,
            p_oriented: p,
            cue: Default::default(),
        };
        Summary {
            epochs: vec![epoch(1), epoch(2)],
            turns: vec![TurnSummary {
                index: 1,
                turn_deg: 90.0,
                world_shift_deg: Some(0.0),
                window_shift_deg: shift,
                cue: Default::default(),
            }],
            r_world: 0.5,
            r_arena: 0.4,
        }
    }

    fn stored(s: &Summary, drop: &[&str]) -> (Summary, StoredKeys) {
        let mut v = serde_json::to_value(s).unwrap();
        for e in v["epochs"].as_array_mut().unwrap() {
            for k in drop {
                e.as_object_mut().unwrap().remove(*k);
            }
        }
        for t in v["turns"].as_array_mut().unwrap() {
            for k in drop {
                t.as_object_mut().unwrap().remove(*k);
            }
        }
        for k in drop {
            v.as_object_mut().unwrap().remove(*k);
        }
        let keys = StoredKeys::of(&v);
        (serde_json::from_value(v).unwrap(), keys)
    }

    #[test]
    fn p_oriented_and_turn_test_are_compared_when_stored() {
        let computed = summary(Some(0.004), Some(3.0));
        let (same, keys) = stored(&computed, &[]);
        assert_eq!(keys, StoredKeys::all(&computed));
        assert!(compare_stored_summary(&same, &keys, &computed).is_empty());
        // A stored p_oriented that the samples do not give, and a null where they give one.
        let (other, keys) = stored(&summary(Some(0.3), Some(3.0)), &[]);
        let d = compare_stored_summary(&other, &keys, &computed);
        assert!(
            d.iter()
                .any(|l| l.starts_with("epochs[1].p_oriented is 0.3")),
            "{d:?}"
        );
        let (null, keys) = stored(&summary(None, Some(3.0)), &[]);
        assert_eq!(compare_stored_summary(&null, &keys, &computed).len(), 2);
        // A window shift that differs changes the turn's line (and the turn test's count here).
        let (moved, keys) = stored(&summary(Some(0.004), None), &[]);
        let d = compare_stored_summary(&moved, &keys, &computed);
        assert!(
            d.iter()
                .any(|l| l.starts_with("turns[1].window_shift_deg is null"))
        );
        assert!(
            d.iter().any(|l| l.starts_with("turn_test.turns is 0 but")),
            "{d:?}"
        );
    }

    #[test]
    fn keys_missing_from_an_older_archive_are_not_compared() {
        let computed = summary(Some(0.004), Some(3.0));
        let (old, keys) = stored(
            &summary(None, None),
            &["p_oriented", "window_shift_deg", "turn_test"],
        );
        assert_eq!(keys.p_oriented, vec![false, false]);
        assert_eq!(keys.turn_test, None);
        assert!(compare_stored_summary(&old, &keys, &computed).is_empty());
        // compare_summaries compares every key.
        assert!(!compare_summaries(&old, &computed).is_empty());
    }

    #[test]
    fn p_oriented_of_the_earlier_lag_window_is_not_compared() {
        let computed = summary(Some(0.004), Some(3.0));
        // Written while the window was 1–5 s: p_oriented without p_oriented_lags_s.
        let (old, keys) = stored(&summary(Some(0.3), Some(3.0)), &["p_oriented_lags_s"]);
        assert!(keys.p_oriented_other_window);
        assert_eq!(keys.p_oriented, vec![false, false]);
        assert!(compare_stored_summary(&old, &keys, &computed).is_empty());
        // Another window written down is not this one either.
        let mut v = serde_json::to_value(&computed).unwrap();
        assert_eq!(v["p_oriented_lags_s"], serde_json::json!([0.5, 2.5]));
        v["p_oriented_lags_s"] = serde_json::json!([1.0, 5.0]);
        let keys = StoredKeys::of(&v);
        assert!(keys.p_oriented_other_window && keys.p_oriented == vec![false, false]);
    }
}
