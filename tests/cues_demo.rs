//! What the animal is shown, end to end: seeded headless demo sessions of the shipped
//! protocols with the simulated sky-compass animal, read back from the archive.
//!
//! - `two-conditions.toml`: under open sky the animal keeps its world heading across turns;
//!   under the diffuser (no sun, no polarization) it loses it.
//! - `polarizer.toml`: with the sun blocked and a filter turning with the arena, it holds an
//!   axial heading relative to the e-vector shown, so its world heading shifts by the turn
//!   modulo 180 (Batschelet 1981 §1.5 for axial data).
//! - `samples.csv`: `sun_in_view` and `evector_shown_deg` as the cues say (sky: sun azimuth +
//!   90 mod 180; filter turning with the arena: axis + the mark's bearing, mod 180; none).

use std::path::{Path, PathBuf};

mod support;
use serde_json::Value;
use support::demo::demo_command;
use support::read_json;
use support::sessions::{col, read_csv};

const SEEDS: [&str; 2] = ["21", "22"];

fn demo(dir: &Path, protocol: &str, seed: &str) -> PathBuf {
    let p = format!("protocols/{protocol}.toml");
    let out = demo_command(dir, &["--speed", "max", "--protocol", &p, "--seed", seed])
        .output()
        .expect("run demo");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    support::session_folder(&String::from_utf8(out.stdout).expect("utf8"))
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// `x` folded to [-m/2, m/2).
fn fold(x: f64, m: f64) -> f64 {
    (x + m / 2.0).rem_euclid(m) - m / 2.0
}

#[test]
fn open_sky_holds_the_heading_and_the_diffuser_loses_it() {
    let tmp = tempfile::tempdir().expect("tmp");
    for seed in SEEDS {
        let dir = demo(tmp.path(), "two-conditions", seed);
        let s = read_json(&dir.join("summary.json"));
        let epochs = s["epochs"].as_array().expect("epochs");
        let cue = |e: &Value| e["cue"].as_str().unwrap_or("").to_string();
        let (sky, diff): (Vec<&Value>, Vec<&Value>) = epochs.iter().partition(|e| cue(e) == "sun");
        assert_eq!((sky.len(), diff.len()), (4, 4), "seed {seed}");
        assert!(
            diff.iter()
                .all(|e| cue(e) == "none" && e["axial_r"].is_null())
        );
        let mean_r = |v: &[&Value]| v.iter().map(|e| f(&e["r"])).sum::<f64>() / v.len() as f64;
        let (r_sky, r_diff) = (mean_r(&sky), mean_r(&diff));
        // Turns within each condition (1-3 open sky, 5-7 diffuser).
        let shift = |k: usize| f(&s["turns"][k - 1]["world_shift_deg"]).abs();
        let sky_shift = (1..=3).map(shift).fold(0.0, f64::max);
        let diff_shift = (5..=7).map(shift).sum::<f64>() / 3.0;
        eprintln!(
            "seed {seed}: mean r open sky {r_sky:.3}, diffuser {r_diff:.3}; largest |world shift| open sky {sky_shift:.1}, mean |world shift| diffuser {diff_shift:.1}"
        );
        assert!(sky.iter().all(|e| f(&e["r"]) > 0.85), "seed {seed}");
        assert!(sky_shift < 15.0, "seed {seed}: {sky_shift}");
        assert!(r_diff < r_sky - 0.3, "seed {seed}: {r_diff} vs {r_sky}");
        assert!(diff_shift > 30.0, "seed {seed}: {diff_shift}");
        // Under the sun a steering-by-the-cue animal keeps its angle to the sun: the
        // prediction is the sun's own move (under a degree between 3-minute epochs).
        for k in 1..=3 {
            let t = &s["turns"][k - 1];
            assert_eq!(f(&t["cue_predicted_mod_deg"]), 360.0);
            assert!(f(&t["cue_predicted_shift_deg"]).abs() < 1.0, "{t}");
        }
        for k in 4..=7 {
            assert!(s["turns"][k - 1]["cue_predicted_shift_deg"].is_null());
        }
        // The samples say what was shown.
        let (h, rows) = read_csv(&dir.join("samples.csv"));
        for r in &rows {
            let epoch: usize = col(&h, r, "epoch").parse().expect("epoch");
            let ev = col(&h, r, "evector_shown_deg");
            if epoch >= 5 {
                assert_eq!((col(&h, r, "sun_in_view"), ev), ("0", ""), "{r:?}");
            } else if epoch >= 1 {
                assert_eq!(col(&h, r, "sun_in_view"), "1");
                assert_eq!(ev, col(&h, r, "zenith_evector_deg"));
            }
        }
    }
}

#[test]
fn under_the_polarizer_the_heading_follows_the_filter_modulo_180() {
    let tmp = tempfile::tempdir().expect("tmp");
    for seed in SEEDS {
        let dir = demo(tmp.path(), "polarizer", seed);
        let s = read_json(&dir.join("summary.json"));
        let epochs = s["epochs"].as_array().expect("epochs");
        let mut worst_axial_r: f64 = 1.0;
        for e in &epochs[1..9] {
            assert_eq!(e["cue"], "polarization", "seed {seed}: {e}");
            worst_axial_r = worst_axial_r.min(f(&e["axial_r"]));
        }
        for k in [0, 9] {
            assert_eq!(epochs[k]["cue"], "sun");
        }
        // Each polarization epoch's axial mean relative to the e-vector is the animal's own.
        let rel: Vec<f64> = epochs[1..9]
            .iter()
            .map(|e| f(&e["mean_evector_rel_deg"]))
            .collect();
        let spread = rel
            .iter()
            .map(|x| fold(x - rel[0], 180.0).abs())
            .fold(0.0, f64::max);
        // Turns 2-8 lie between two filter epochs: the prediction is the turn, modulo 180.
        let mut worst: f64 = 0.0;
        let mut kept_world: usize = 0;
        for k in 2..=8 {
            let t = &s["turns"][k - 1];
            let turn = f(&t["turn_deg"]);
            let pred = f(&t["cue_predicted_shift_deg"]);
            assert_eq!(f(&t["cue_predicted_mod_deg"]), 180.0);
            assert!(fold(pred - turn, 180.0).abs() < 0.5, "{t}");
            let w = f(&t["world_shift_deg"]);
            worst = worst.max(fold(w - pred, 180.0).abs());
            if fold(w, 360.0).abs() < 20.0 {
                kept_world += 1;
            }
        }
        eprintln!(
            "seed {seed}: axial r >= {worst_axial_r:.3} in every filter epoch; heading relative to the e-vector within {spread:.1} deg across epochs; |world shift - turn| mod 180 <= {worst:.1} deg; world heading kept in {kept_world} of 7 filter turns"
        );
        assert!(worst_axial_r > 0.7, "seed {seed}: {worst_axial_r}");
        assert!(spread < 15.0, "seed {seed}: {rel:?}");
        assert!(worst < 35.0, "seed {seed}: {worst}");
        // Six of those turns are ±90: a world heading kept across them would miss the filter.
        assert!(kept_world <= 1, "seed {seed}: {kept_world}");
        // The e-vector shown is the filter's axis (0 on the mark) turned with the arena.
        let (h, rows) = read_csv(&dir.join("samples.csv"));
        let mut checked = 0;
        for r in rows.iter().step_by(97) {
            let epoch: usize = col(&h, r, "epoch").parse().expect("epoch");
            if !(2..=9).contains(&epoch) || col(&h, r, "scored") != "1" {
                continue;
            }
            assert_eq!(col(&h, r, "sun_in_view"), "0");
            let ev: f64 = col(&h, r, "evector_shown_deg").parse().expect("ev");
            let bearing: f64 = col(&h, r, "arena_bearing_deg").parse().expect("b");
            assert!(fold(ev - bearing, 180.0).abs() < 0.002, "{r:?}");
            checked += 1;
        }
        assert!(checked > 100);
    }
}

#[test]
fn animals_choose_their_own_headings() {
    // Different seeds, different preferred headings relative to the sun (the open-sky epochs'
    // mean world heading minus the sun's azimuth); the same seed, the same heading.
    let tmp = tempfile::tempdir().expect("tmp");
    let mut rel = Vec::new();
    for seed in ["1", "3", "5", "8"] {
        let dir = demo(tmp.path(), "smoke", seed);
        let meta = read_json(&dir.join("session.json"));
        let goal = f(&meta["rig"]["simulator"]["preferred_sun_relative_deg"]);
        let (h, rows) = read_csv(&dir.join("samples.csv"));
        let (mut s, mut c) = (0.0, 0.0);
        for r in rows.iter().filter(|r| col(&h, r, "scored") == "1") {
            let x: f64 = col(&h, r, "sun_relative_heading_deg").parse().expect("x");
            s += x.to_radians().sin();
            c += x.to_radians().cos();
        }
        let mean = s.atan2(c).to_degrees().rem_euclid(360.0);
        assert!(
            fold(mean - goal, 360.0).abs() < 20.0,
            "seed {seed}: {mean} vs {goal}"
        );
        rel.push(goal);
    }
    let distinct = rel
        .iter()
        .enumerate()
        .all(|(i, a)| rel[i + 1..].iter().all(|b| fold(a - b, 360.0).abs() > 10.0));
    assert!(distinct, "{rel:?}");
}

#[test]
fn repair_recomputes_the_same_cue_scores_and_batch_reads_old_archives() {
    // summary.json rebuilt from samples.csv by `check --repair` carries the same cue scores as
    // the live one; `batch` over a new session and one written before cues were recorded
    // (tests/data) reads both, with empty cue cells for the old one.
    let tmp = tempfile::tempdir().expect("tmp");
    let dir = demo(tmp.path(), "polarizer", "21");
    let live = read_json(&dir.join("summary.json"));
    std::fs::remove_file(dir.join("summary.json")).expect("rm");
    let out = support::bin()
        .args(["check", "--repair"])
        .arg(&dir)
        .output()
        .expect("check");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let repaired = read_json(&dir.join("summary.json"));
    assert_eq!(live["epochs"], repaired["epochs"]);
    assert_eq!(live["turns"], repaired["turns"]);
    let old = Path::new("tests/data/sessions/2026-06-21_larkfield-meadow-demo_lm-01_001");
    let out_dir = tmp.path().join("batch");
    let out = support::bin()
        .arg("batch")
        .arg(&dir)
        .arg(old)
        .arg("--out")
        .arg(&out_dir)
        .output()
        .expect("batch");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let (h, rows) = read_csv(&out_dir.join("epochs.csv"));
    let id = live_id(&dir);
    let mut new_pol = 0;
    for r in &rows {
        if col(&h, r, "session_id") == id {
            if col(&h, r, "cue") == "polarization" {
                let a: f64 = col(&h, r, "axial_r").parse().expect("axial_r");
                assert!(a > 0.7);
                new_pol += 1;
            }
        } else {
            assert_eq!(
                (col(&h, r, "cue"), col(&h, r, "axial_r")),
                ("", ""),
                "{r:?}"
            );
        }
    }
    assert_eq!(new_pol, 8);
    let (h, rows) = read_csv(&out_dir.join("turns.csv"));
    let predicted = rows
        .iter()
        .filter(|r| col(&h, r, "cue_predicted_mod_deg") == "180")
        .count();
    assert_eq!(predicted, 7, "{rows:?}");
}

fn live_id(dir: &Path) -> String {
    dir.file_name()
        .expect("name")
        .to_string_lossy()
        .into_owned()
}

#[test]
fn demo_warns_at_the_start_in_plans_words_when_the_shown_sun_is_down() {
    // 21:00 UTC in June: the sun is below the horizon at the demo site for every epoch.
    let tmp = tempfile::tempdir().expect("tmp");
    let out = support::bin()
        .args(["demo", "--headless", "--speed", "max", "--seed", "3"])
        .args(["--protocol", "protocols/smoke.toml"])
        .args(["--start", "2026-06-14T21:00:00Z", "--sessions"])
        .arg(tmp.path())
        .output()
        .expect("demo");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(
            "skybearing: warning: epoch 1: the sun is below the horizon for the whole epoch"
        ),
        "{err}"
    );
    let plan = support::bin()
        .args(["plan", "--protocol", "protocols/smoke.toml"])
        .args(["--start", "2026-06-14T21:00:00Z"])
        .output()
        .expect("plan");
    let text = String::from_utf8_lossy(&plan.stdout);
    let line = err
        .lines()
        .find(|l| l.contains("epoch 1: the sun is below"))
        .and_then(|l| l.strip_prefix("skybearing: warning: "))
        .expect("warning");
    assert!(text.contains(line), "{text}\n{line}");
}
