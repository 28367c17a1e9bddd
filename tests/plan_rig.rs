//! `skybearing plan --rig`: the site, time zone and arena mark come from a rig file.
//!
//! Declination check value: pygeomag 1.1.0, `GeoMag(coefficients_file="wmm/WMM_2025.COF")
//! .calculate(glat=43.2170, glon=5.4420, alt=0.210, time=decimal_year_from_date(2026-06-21))`
//! gives D = 2.8015 deg (WMM2025).

mod support;
use support::bin;

use serde_json::Value;
use skybearing::rig::config::filled_example;
use std::path::{Path, PathBuf};
use std::process::Output;

fn protocol(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("protocols")
        .join(name)
}

fn plan(rig: &Path, extra: &[&str]) -> Output {
    bin()
        .arg("plan")
        .arg("--protocol")
        .arg(protocol("demo.toml"))
        .arg("--rig")
        .arg(rig)
        .args(extra)
        .output()
        .unwrap()
}

fn write_rig(dir: &Path, text: &str) -> PathBuf {
    let p = dir.join("rig.toml");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn magnetic_mark_is_corrected_with_the_declination() {
    // The template: demo site, mark 0 magnetic.
    let dir = tempfile::tempdir().unwrap();
    let rig = write_rig(dir.path(), &filled_example());
    let out = plan(&rig, &["--start", "2026-06-21T08:00:00Z", "--json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let mark = v["arena_mark_bearing_deg"].as_f64().unwrap();
    assert!((mark - 2.8015).abs() < 0.05, "{mark}");
    assert_eq!(v["magnetic_mark"]["magnetic_bearing_deg"], 0.0);
    assert_eq!(
        v["magnetic_mark"]["declination_deg"].as_f64().unwrap(),
        mark
    );
    // Every epoch's mark bearing is that plus its position.
    for e in v["epochs"].as_array().unwrap() {
        let pos = e["arena_position_deg"].as_f64().unwrap();
        let b = e["arena_bearing_deg"].as_f64().unwrap();
        assert!(((pos + mark).rem_euclid(360.0) - b).abs() < 1e-9, "{e}");
    }
    let text = plan(&rig, &["--start", "2026-06-21T08:00:00Z"]);
    let text = String::from_utf8(text.stdout).unwrap();
    assert!(text.contains("(magnetic 0.0 + declination 2.8)"), "{text}");
}

#[test]
fn rig_site_and_time_zone_are_used() {
    // An invented spot ("Saltpan Ridge (demo)") on the Tropic of Cancer, mark true 30, UTC+1.
    let text = filled_example()
        .replace("Larkfield Meadow (demo)", "Saltpan Ridge (demo)")
        .replace("latitude_deg = 43.2170", "latitude_deg = 23.2")
        .replace("longitude_deg = 5.4420", "longitude_deg = 10.0")
        .replace("elevation_m = 210.0", "elevation_m = 300.0")
        .replace("Europe/Paris", "Etc/GMT-1")
        .replace("mark_bearing_deg = 0.0", "mark_bearing_deg = 30.0")
        .replace("mark_reference = \"magnetic\"", "mark_reference = \"true\"");
    let dir = tempfile::tempdir().unwrap();
    let rig = write_rig(dir.path(), &text);
    // pvlib 0.16.1: the sun peaks at 89.76 deg apparent elevation at 11:22 UTC there.
    let out = plan(&rig, &["--start", "2026-06-21T11:05:00Z", "--json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["site"]["name"], "Saltpan Ridge (demo)");
    assert_eq!(v["time_zone"], "Etc/GMT-1");
    assert_eq!(v["start_local"], "2026-06-21T12:05:00+01:00");
    assert_eq!(v["arena_mark_bearing_deg"], 30.0);
    assert!(v["magnetic_mark"].is_null());
    let kinds: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["kind"].as_str().unwrap())
        .collect();
    assert!(kinds.contains(&"sun_near_zenith"), "{kinds:?}");
    assert!(kinds.contains(&"azimuth_drift"), "{kinds:?}");
}

#[test]
fn a_bad_rig_is_one_line_naming_file_line_and_field() {
    let dir = tempfile::tempdir().unwrap();
    let rig = write_rig(
        dir.path(),
        &filled_example().replace("latitude_deg = 43.2170", "latitude_deg = 123"),
    );
    let out = plan(&rig, &["--start", "2026-06-21T08:00:00Z"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(
        err.contains(&format!("{}:13: site.latitude_deg:", rig.display())),
        "{err}"
    );
    let out = plan(Path::new("/nonexistent/rig.toml"), &[]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(
        err.contains("/nonexistent/rig.toml: cannot read rig file"),
        "{err}"
    );
}

#[test]
fn magnetic_mark_outside_the_model_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let rig = write_rig(dir.path(), &filled_example());
    let out = plan(&rig, &["--start", "2035-06-21T08:00:00Z"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("no declination for 2035-06-21"), "{err}");
    assert!(err.contains("rig.toml"), "{err}");
}
