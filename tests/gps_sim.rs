//! A GPS served by `skybearing sim --gps` (NMEA 0183 RMC and GGA on a pseudo-terminal) sets
//! the site and the UTC of a `skybearing run` session (issue 15, item 4): the fix, the clock
//! warning, no fix in time, and a receiver that turns to garbage (the port is read only
//! before the first sample, so garbage later must leave no trace in the session).

mod support;
use support::sim::{headless_smoke_run, start_sim};
use support::{bin, finished_session, read_json};

fn events(dir: &std::path::Path) -> String {
    std::fs::read_to_string(dir.join("events.csv")).expect("events")
}

#[test]
fn a_gps_fix_sets_the_site_the_sun_and_the_clock_offset() {
    let tmp = tempfile::tempdir().expect("tmp");
    // A site far from the rig file's (the demo site, 43.2 N 5.4 E): the southern hemisphere.
    let (_sim, rig) = start_sim(
        tmp.path(),
        &[
            "--gps",
            "--gps-lat",
            "-33.9071",
            "--gps-lon",
            "18.4170",
            "--gps-elevation-m",
            "12.5",
            "--gps-clock-offset-s",
            "3.5",
            "--sun-azimuth-deg",
            "90",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let out = headless_smoke_run("gps-01", &rig, &sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "complete");
    let site = &meta["site"];
    assert_eq!(site["source"], "gps");
    assert!((site["latitude_deg"].as_f64().unwrap() + 33.9071).abs() < 1e-6);
    assert!((site["longitude_deg"].as_f64().unwrap() - 18.4170).abs() < 1e-6);
    assert!((site["elevation_m"].as_f64().unwrap() - 12.5).abs() < 1e-3);
    // The rig file's site is kept for the record.
    assert!(
        (meta["gps"]["rig_file_site"]["latitude_deg"]
            .as_f64()
            .unwrap()
            - 43.217)
            .abs()
            < 1e-9
    );
    // The laptop is 3.5 s ahead of the simulated receiver; the sentences leave the simulator
    // within ~10 ms of each GPS second and are read at once, so the offset is 3.5 plus at most
    // the scheduling delays of two processes on a busy machine.
    let offset = meta["clock_offset_s"].as_f64().expect("clock_offset_s");
    assert!((3.49..3.9).contains(&offset), "offset {offset}");
    // started_utc follows GPS time (the laptop's clock less the offset): it lies just after the
    // fix's own GPS second, not 3.5 s later where the laptop's clock was.
    let started: chrono::DateTime<chrono::Utc> =
        meta["started_utc"].as_str().unwrap().parse().unwrap();
    let fix_utc: chrono::DateTime<chrono::Utc> = meta["gps"]["fix"]["gps_utc"]
        .as_str()
        .unwrap()
        .parse()
        .unwrap();
    let after_fix_s = (started - fix_utc).num_milliseconds() as f64 / 1000.0;
    assert!(
        (0.0..2.0).contains(&after_fix_s),
        "started_utc {started} is {after_fix_s} s after the fix at {fix_utc}"
    );
    let ev = events(&dir);
    assert!(ev.contains(",gps_fix,"), "{ev}");
    assert!(ev.contains(",clock_offset,"), "{ev}");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("warning: the laptop clock is 3.5 s ahead of GPS time"),
        "{stderr}"
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        stdout.contains("clock_offset: the laptop clock"),
        "{stdout}"
    );

    // The sun of every sample is the sun at the GPS site: compare the first sample with
    // `skybearing sun` there (SPA through the same code; the site is what is checked).
    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    let mut lines = samples.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
    let o = bin()
        .args([
            "sun",
            "--lat",
            "-33.9071",
            "--lon",
            "18.4170",
            "--elevation-m",
            "12.5",
            "--at",
            col("t_utc"),
            "--json",
        ])
        .output()
        .expect("sun");
    assert!(o.status.success());
    let sun: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let az: f64 = col("sun_azimuth_deg").parse().unwrap();
    let diff = (az - sun["azimuth_deg"].as_f64().unwrap()).abs();
    assert!(
        diff < 0.01,
        "sample sun {az} vs sun at the GPS site {}",
        sun["azimuth_deg"]
    );
}

#[test]
fn no_fix_in_time_keeps_the_rig_file_site_and_says_so() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(
        tmp.path(),
        &[
            "--gps",
            "--gps-no-fix",
            "--gps-wait-s",
            "1.5",
            "--sun-azimuth-deg",
            "90",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let t = std::time::Instant::now();
    let out = headless_smoke_run("gps-02", &rig, &sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "complete");
    assert_eq!(meta["site"]["source"], "rig_file");
    assert!((meta["site"]["latitude_deg"].as_f64().unwrap() - 43.217).abs() < 1e-9);
    assert!(meta["clock_offset_s"].is_null());
    assert!(
        meta["gps"]["no_fix_reason"]
            .as_str()
            .unwrap()
            .contains("no fix yet")
    );
    // The wait is bounded: 1.5 s, then the 15 s smoke protocol with its turns.
    let waited = meta["gps"]["waited_s"].as_f64().unwrap();
    assert!((1.5..3.0).contains(&waited), "waited {waited} s");
    assert!(t.elapsed().as_secs_f64() < 60.0);
    assert!(events(&dir).contains(",gps_no_fix,"));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("warning: no GPS fix in"), "{stderr}");
}

#[test]
fn a_receiver_sending_garbage_after_the_start_never_disturbs_the_session() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(
        tmp.path(),
        &[
            "--gps",
            "--gps-garbage-after-s",
            "3",
            "--sun-azimuth-deg",
            "90",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let out = headless_smoke_run("gps-03", &rig, &sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "complete");
    assert_eq!(meta["site"]["source"], "gps");
    let ev = events(&dir);
    assert!(
        !ev.contains("gps_no_fix") && !ev.contains("malformed"),
        "{ev}"
    );
}

#[test]
fn a_bad_gps_section_is_one_line_naming_file_line_field() {
    let tmp = tempfile::tempdir().expect("tmp");
    let rig = tmp.path().join("rig.toml");
    let text = skybearing::rig::config::filled_example()
        + "\n[gps]\npath = \"/dev/ttyACM2\"\nbaud = 9600\nwait_s = -1\n";
    std::fs::write(&rig, &text).unwrap();
    let line = text.lines().count();
    let o = bin()
        .args([
            "run",
            "--headless",
            "--animal",
            "a",
            "--protocol",
            "protocols/smoke.toml",
        ])
        .arg("--rig")
        .arg(&rig)
        .output()
        .expect("run");
    assert!(!o.status.success());
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        stderr.contains(&format!(
            "rig.toml:{line}: gps.wait_s: -1 is outside [0, 600]"
        )),
        "{stderr}"
    );
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
}

#[test]
fn rig_check_open_reads_the_gps_as_a_session_start_would() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(
        tmp.path(),
        &["--gps", "--gps-lat", "51.5", "--gps-lon", "-0.1"],
    );
    let o = bin()
        .args(["rig", "check", "--open"])
        .arg(&rig)
        .output()
        .expect("rig check");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(out.contains("  gps        serial port "), "{out}");
    assert!(
        out.contains("gps_fix: site from GPS")
            && out.contains("latitude 51.500000, longitude -0.100000"),
        "{out}"
    );
}
