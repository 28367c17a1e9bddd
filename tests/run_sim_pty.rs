//! `skybearing sim --write-rig` serves a simulated rig on pseudo-terminals; `skybearing run
//! --headless` then completes the smoke protocol through the real serial code path, with
//! malformed lines and an unplugged sensor recorded as events (issue "Done when").

mod support;
use support::sim::{headless_run, headless_smoke_run, start_sim};
use support::{bin, finished_session, read_json};

#[test]
fn run_completes_against_the_pty_simulator_with_faults() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(
        tmp.path(),
        &[
            "--seed",
            "3",
            "--garbage",
            "0.05",
            "--unplug-at",
            "7",
            "--unplug-for",
            "2",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let out = headless_smoke_run("lm-11", &rig, &sessions)
        .output()
        .expect("run");
    let dir = finished_session(&out);
    let meta = read_json(&dir.join("session.json"));
    assert_eq!(meta["status"], "complete");
    let events = std::fs::read_to_string(dir.join("events.csv")).expect("events");
    for kind in [
        ",malformed_lines,",
        ",sensor_lost,",
        ",sensor_back,",
        ",turn_done,",
        ",session_end,",
    ] {
        assert!(events.contains(kind), "no {kind} event:\n{events}");
    }
    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    // About 15 s of epochs plus two turns at 100 Hz, minus the 2 s unplugged gap.
    let n = samples.lines().count() - 1;
    assert!(n > 1000, "{n} samples");
    let check = bin().arg("check").arg(&dir).output().expect("check");
    assert!(
        check.status.success(),
        "{}",
        String::from_utf8_lossy(&check.stdout)
    );
}

/// The simulator's polarizer: `run` sets the filter axis of each epoch (30 then 120 deg from
/// the arena's 0 mark, tests/data/two-filter-axes.toml) before the epoch starts, records
/// `polarizer_commanded` and `polarizer_done`, and `samples.csv` shows the commanded axis
/// (filter turning with the arena: shown = axis + arena bearing, mod 180; docs/protocols.md).
#[test]
fn run_sets_the_simulated_polarizer_between_epochs() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rig) = start_sim(tmp.path(), &["--seed", "5"]);
    let rig_text = std::fs::read_to_string(&rig).expect("rig");
    assert!(rig_text.contains("[polarizer]"), "{rig_text}");
    let sessions = tmp.path().join("sessions");
    let out = headless_run("lm-12", &rig, &sessions, "tests/data/two-filter-axes.toml")
        .output()
        .expect("run");
    let dir = finished_session(&out);
    assert_eq!(read_json(&dir.join("session.json"))["status"], "complete");
    let events = std::fs::read_to_string(dir.join("events.csv")).expect("events");
    let kinds: Vec<(String, String)> = events
        .lines()
        .skip(1)
        .filter_map(|l| {
            let f: Vec<&str> = l.splitn(4, ',').collect();
            (f.len() == 4).then(|| (f[2].to_string(), f[3].to_string()))
        })
        .filter(|(k, _)| k.starts_with("polarizer") || k == "epoch_start")
        .collect();
    let order: Vec<&str> = kinds.iter().map(|(k, _)| k.as_str()).collect();
    assert_eq!(
        order,
        [
            "polarizer_commanded",
            "polarizer_done",
            "epoch_start",
            "polarizer_commanded",
            "polarizer_done",
            "epoch_start"
        ],
        "{events}"
    );
    assert!(kinds[1].1.contains("axis 30.0 deg"), "{events}");
    assert!(kinds[4].1.contains("axis 120.0 deg"), "{events}");

    let samples = std::fs::read_to_string(dir.join("samples.csv")).expect("samples");
    let mut lines = samples.lines();
    let header: Vec<&str> = lines.next().expect("header").split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).expect(name);
    let (c_epoch, c_bearing, c_shown) = (
        col("epoch"),
        col("arena_bearing_deg"),
        col("evector_shown_deg"),
    );
    let c_scored = col("scored");
    let mut seen = [0usize; 2];
    for l in lines {
        let f: Vec<&str> = l.split(',').collect();
        if f[c_scored] != "1" && f[c_scored] != "true" {
            continue;
        }
        let epoch: usize = f[c_epoch].parse().expect("epoch");
        let axis = [30.0, 120.0][epoch - 1];
        let bearing: f64 = f[c_bearing].parse().expect("bearing");
        let shown: f64 = f[c_shown].parse().expect("evector_shown_deg");
        let d = (shown - (axis + bearing)).rem_euclid(180.0);
        assert!(d.min(180.0 - d) < 0.01, "epoch {epoch}: {l}");
        seen[epoch - 1] += 1;
    }
    // 4 s epochs at 100 Hz (the second less its 1 s settle window).
    assert!(seen[0] > 100 && seen[1] > 100, "{seen:?}");
    // Both epochs are scored as filter-only epochs (axial scores relative to the e-vector shown).
    let summary = read_json(&dir.join("summary.json"));
    for e in summary["epochs"].as_array().expect("epochs") {
        assert_eq!(e["cue"], "polarization", "{e}");
        assert!(e["axial_r"].is_number(), "{e}");
    }
}
