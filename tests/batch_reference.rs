//! `skybearing batch` on the committed demo archive (tests/data/sessions) against the tables
//! computed independently by tests/reference/batch_reference.py (pandas, scipy, astropy,
//! pycircstat2; versions in tests/fixtures/batch_reference/versions.csv).
//!
//! Tolerances: angles 1e-6° (circular difference); r, z, F, V, R*, n_eff relative 1e-9
//! (n_eff 1e-6: a ratio of sums that cancel); p-values 1e-9 absolute or 1e-6 relative. The
//! two sides sum in different orders, so agreement to rounding is expected, not bit equality.
//! Randomization p-values (Moore's and Hotelling's one-sample p, the Watson–Williams
//! permutation p) are drawn by each side with its own generator (ours 9999 draws, the
//! reference 200000), so they agree within Monte Carlo error: 4 standard errors of a
//! 9999-draw p plus 0.001 (`Kind::McP`); so are the p's of the Rayleigh and V-tests with few
//! directions (2–12), which both sides draw from the exact null of uniform directions. The paired tests' sign-flip p are exact on both sides.

mod support;
use support::bin;
use support::sessions::read_csv;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

#[derive(Clone, Copy)]
enum Kind {
    Text,
    Int,
    Deg,
    Rel(f64),
    P,
    McP,
}

type Rows = BTreeMap<Vec<String>, BTreeMap<String, String>>;

fn load(path: &Path, key: &[&str]) -> Rows {
    let (h, rows) = read_csv(path);
    let mut out = BTreeMap::new();
    for r in rows {
        let map: BTreeMap<String, String> = h.iter().cloned().zip(r.iter().cloned()).collect();
        let k: Vec<String> = key.iter().map(|c| map[*c].clone()).collect();
        out.insert(k, map);
    }
    out
}

fn num(s: &str) -> Option<f64> {
    if s.is_empty() || s == "nan" || s == "NaN" {
        None
    } else {
        Some(s.parse().unwrap_or_else(|_| panic!("not a number: {s}")))
    }
}

fn compare(table: &str, key: &[&str], cols: &[(&str, Kind)], ours: &Path, theirs: &Path) -> usize {
    let a = load(&ours.join(table), key);
    let b = load(&theirs.join(table), key);
    assert_eq!(
        a.keys().collect::<Vec<_>>(),
        b.keys().collect::<Vec<_>>(),
        "{table}: rows differ"
    );
    let mut checked = 0;
    for (k, ra) in &a {
        let rb = &b[k];
        for (c, kind) in cols {
            let (x, y) = (ra[*c].as_str(), rb[*c].as_str());
            let ctx = format!("{table} {k:?} {c}: ours {x:?}, reference {y:?}");
            match kind {
                Kind::Text => assert_eq!(x, y, "{ctx}"),
                Kind::Int => assert_eq!(num(x), num(y), "{ctx}"),
                _ => match (num(x), num(y)) {
                    (None, None) => {}
                    (Some(x), Some(y)) => {
                        let ok = match kind {
                            Kind::Deg => {
                                let d = (x - y).rem_euclid(360.0);
                                d.min(360.0 - d) < 1e-6
                            }
                            Kind::Rel(tol) => (x - y).abs() <= tol * (1.0 + y.abs()),
                            Kind::P => (x - y).abs() <= 1e-9 || (x - y).abs() <= 1e-6 * y.abs(),
                            Kind::McP => {
                                (x - y).abs() <= 4.0 * (y * (1.0 - y) / 9999.0).sqrt() + 1e-3
                            }
                            _ => unreachable!(),
                        };
                        assert!(ok, "{ctx}");
                    }
                    _ => panic!("{ctx}: one side missing"),
                },
            }
            checked += 1;
        }
    }
    checked
}

fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/sessions")
}

#[test]
fn batch_equals_the_python_reference() {
    let fixtures = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/batch_reference");
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let o = bin()
        .arg("batch")
        .arg(data_dir())
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let r9 = Kind::Rel(1e-9);
    let mut n = 0;
    n += compare(
        "sessions.csv",
        &["session_id"],
        &[
            ("animal", Kind::Text),
            ("started_utc", Kind::Text),
            ("status", Kind::Text),
            ("r_world", r9),
            ("r_arena", r9),
            ("mean_world_deg", Kind::Deg),
            ("n", Kind::Int),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "epochs.csv",
        &["session_id", "epoch"],
        &[
            ("animal", Kind::Text),
            ("condition", Kind::Text),
            ("n", Kind::Int),
            ("mean_world_deg", Kind::Deg),
            ("r", r9),
            ("mean_arena_deg", Kind::Deg),
            ("r_arena", r9),
            ("rayleigh_p", Kind::P),
            ("arena_bearing_deg", Kind::Deg),
            ("mean_sun_relative_deg", Kind::Deg),
            ("mean_sun_azimuth_deg", Kind::Deg),
            ("mean_sun_elevation_deg", Kind::Rel(1e-9)),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "turns.csv",
        &["session_id", "turn"],
        &[
            ("turn_deg", Kind::Rel(1e-9)),
            ("world_shift_deg", Kind::Rel(1e-6)),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "population.csv",
        &["frame", "condition"],
        &[
            ("animals", Kind::Int),
            ("mean_deg", Kind::Deg),
            ("r", r9),
            ("rayleigh_z", r9),
            ("rayleigh_p", Kind::McP),
            ("moore_r_star", r9),
            ("moore_p", Kind::McP),
            ("hotelling_f", Kind::Rel(1e-7)),
            ("hotelling_p", Kind::McP),
            ("mean_vector_deg", Kind::Deg),
            ("mean_vector_length", r9),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "comparisons.csv",
        &["condition_a", "condition_b"],
        &[
            ("animals_a", Kind::Int),
            ("animals_b", Kind::Int),
            ("ww_f", Kind::Rel(1e-7)),
            ("ww_p", Kind::McP),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "paired.csv",
        &["frame", "condition_a", "condition_b"],
        &[
            ("animals", Kind::Int),
            ("mean_change_deg", Kind::Deg),
            ("r", r9),
            ("v", r9),
            ("v_u", r9),
            ("v_p", Kind::McP),
            ("hotelling_f", Kind::Rel(1e-7)),
            ("hotelling_p", Kind::P),
            ("moore_r_star", r9),
            ("moore_p", Kind::P),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "animals.csv",
        &["animal", "frame"],
        &[
            ("sessions", Kind::Int),
            ("mean_world_deg", Kind::Deg),
            ("r_between_sessions", r9),
            ("rayleigh_p_between_sessions", Kind::McP),
            ("mean_r_world", r9),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "turns_by_animal.csv",
        &["animal"],
        &[
            ("sessions", Kind::Int),
            ("turns", Kind::Int),
            ("mean_world_shift_deg", Kind::Deg),
            ("r_world_shift", r9),
            ("mean_arena_residual_deg", Kind::Deg),
            ("r_arena_residual", r9),
            ("p_world_kept", Kind::McP),
            ("p_arena_kept", Kind::McP),
        ],
        &out,
        &fixtures,
    );
    n += compare(
        "turns_population.csv",
        &["animals"],
        &[
            ("sessions", Kind::Int),
            ("turns", Kind::Int),
            ("mean_world_shift_deg", Kind::Deg),
            ("r_world_shift", r9),
            ("v_world", r9),
            ("v_u_world", r9),
            ("p_world_kept", Kind::McP),
            ("mean_arena_residual_deg", Kind::Deg),
            ("r_arena_residual", r9),
            ("v_arena", r9),
            ("v_u_arena", r9),
            ("p_arena_kept", Kind::McP),
        ],
        &out,
        &fixtures,
    );
    assert!(n > 100, "only {n} values compared");
}

/// The recomputed per-epoch statistics equal the ones the engine wrote into each session's
/// summary.json while it ran (same rules, computed once live and once from the file).
#[test]
fn batch_epochs_equal_each_sessions_summary_json() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let o = bin()
        .arg("batch")
        .arg(data_dir())
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    let epochs = load(&out.join("epochs.csv"), &["session_id", "epoch"]);
    let mut checked = 0;
    for entry in std::fs::read_dir(data_dir()).unwrap() {
        let dir = entry.unwrap().path();
        let id = dir.file_name().unwrap().to_string_lossy().to_string();
        let summary: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap())
                .unwrap();
        for e in summary["epochs"].as_array().unwrap() {
            let key = vec![id.clone(), e["index"].to_string()];
            let row = &epochs[&key];
            assert_eq!(row["n"], e["n"].to_string(), "{key:?}");
            let close = |c: &str, j: &str, tol: f64| {
                let ours: f64 = row[c].parse().unwrap();
                let theirs = e[j].as_f64().unwrap();
                let d = if c.ends_with("_deg") {
                    let d = (ours - theirs).rem_euclid(360.0);
                    d.min(360.0 - d)
                } else {
                    (ours - theirs).abs()
                };
                assert!(
                    d <= tol * (1.0 + theirs.abs()),
                    "{key:?} {c}: {ours} vs {theirs}"
                );
            };
            close("mean_world_deg", "mean_world_deg", 1e-9);
            close("mean_arena_deg", "mean_arena_deg", 1e-9);
            close("r", "r", 1e-9);
            close("arena_bearing_deg", "arena_bearing_deg", 1e-9);
            checked += 1;
        }
    }
    assert_eq!(checked, 36);
}
