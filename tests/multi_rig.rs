//! Several rigs from one laptop (issue 15): one `skybearing sim` serves two or four simulated
//! rigs on pseudo-terminals (real time: the smoke protocol, about 25 s), one `skybearing run
//! --headless` runs them all with repeated `--rig FILE --animal ID`; every session is complete
//! and passes `skybearing check`, the ids are distinct and carry the rig's name, every progress
//! line names its rig, `batch` reports the rig per session, and a rig that loses its sensor for
//! good aborts without stopping the others.

mod support;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use support::sim::{headless_run_rigs, start_sims};
use support::{bin, read_json};

/// The session folders a multi-rig run printed at its end (one per rig, in order).
fn printed_folders(stdout: &str, n: usize) -> Vec<PathBuf> {
    let lines: Vec<&str> = stdout.lines().collect();
    assert!(lines.len() >= n, "{stdout}");
    lines[lines.len() - n..].iter().map(PathBuf::from).collect()
}

fn check_ok(dir: &Path) {
    let check = bin().arg("check").arg(dir).output().expect("check");
    assert!(
        check.status.success(),
        "{}: {}",
        dir.display(),
        String::from_utf8_lossy(&check.stdout)
    );
}

/// Runs `n` simulated rigs together headless and checks everything the issue asks of them.
fn rigs_run_together(n: usize) {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rigs) = start_sims(
        tmp.path(),
        n,
        &["--seed", "21", "--stops-per-hour", "0", "--garbage", "0.01"],
    );
    let animals: Vec<String> = (1..=n).map(|k| format!("lm-{:02}", 30 + k)).collect();
    let pairs: Vec<(&Path, &str)> = rigs
        .iter()
        .map(PathBuf::as_path)
        .zip(animals.iter().map(String::as_str))
        .collect();
    let sessions = tmp.path().join("sessions");
    let out = headless_run_rigs(&pairs, &sessions, "protocols/smoke.toml")
        .output()
        .expect("run");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let dirs = printed_folders(&stdout, n);
    // Every other line is a progress line naming its rig; each rig said something.
    let progress = &stdout.lines().collect::<Vec<_>>()[..stdout.lines().count() - n];
    for l in progress {
        assert!(
            (1..=n).any(|k| l.starts_with(&format!("[rig-{k}] "))),
            "a line without its rig: {l}"
        );
    }
    let mut ids = BTreeSet::new();
    for (k, dir) in dirs.iter().enumerate() {
        let name = format!("rig-{}", k + 1);
        assert!(
            progress
                .iter()
                .any(|l| l.starts_with(&format!("[{name}] ")) && l.contains("session_end")),
            "{name} never ended:\n{stdout}"
        );
        let meta = read_json(&dir.join("session.json"));
        assert_eq!(meta["status"], "complete", "{}", dir.display());
        assert_eq!(meta["animal"], animals[k].as_str());
        assert_eq!(meta["rig"]["name"], name.as_str());
        let id = meta["id"].as_str().expect("id").to_string();
        // <date>_<site>_<rig>_<animal>_<NNN>
        assert!(id.ends_with(&format!("_{name}_{}_001", animals[k])), "{id}");
        assert_eq!(dir.file_name().and_then(|f| f.to_str()), Some(id.as_str()));
        ids.insert(id);
        check_ok(dir);
    }
    assert_eq!(ids.len(), n, "ids collide: {ids:?}");

    // batch names the rig of each session.
    let out_dir = tmp.path().join("batch");
    let b = bin()
        .arg("batch")
        .arg(&sessions)
        .arg("--out")
        .arg(&out_dir)
        .output()
        .expect("batch");
    assert!(b.status.success(), "{}", String::from_utf8_lossy(&b.stderr));
    let (header, rows) = support::sessions::read_csv(&out_dir.join("sessions.csv"));
    let col = |c: &str| header.iter().position(|h| h == c).expect(c);
    let got: BTreeSet<(String, String)> = rows
        .iter()
        .map(|r| (r[col("session_id")].clone(), r[col("rig")].clone()))
        .collect();
    let want: BTreeSet<(String, String)> = ids
        .iter()
        .map(|id| {
            let rig = (1..=n)
                .map(|k| format!("rig-{k}"))
                .find(|r| id.contains(&format!("_{r}_")))
                .expect("rig in id");
            (id.clone(), rig)
        })
        .collect();
    assert_eq!(got, want);
}

#[test]
fn two_simulated_rigs_run_together_headless() {
    rigs_run_together(2);
}

#[test]
fn four_simulated_rigs_run_together_headless() {
    rigs_run_together(4);
}

/// rig-2's sensor is unplugged 2 s in and never comes back: its session aborts (sensor lost,
/// after the protocol's 2 s) while rig-1 runs the protocol to its end; exit status 1 says that
/// a rig was cut short, and both folders are printed and valid.
#[test]
fn a_rig_that_loses_its_sensor_never_stops_the_other() {
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rigs) = start_sims(
        tmp.path(),
        2,
        &[
            "--seed",
            "22",
            "--stops-per-hour",
            "0",
            "--faults-on",
            "2",
            "--unplug-at",
            "2",
            "--unplug-for",
            "600",
        ],
    );
    let sessions = tmp.path().join("sessions");
    let out = headless_run_rigs(
        &[(&rigs[0], "lm-41"), (&rigs[1], "lm-42")],
        &sessions,
        "tests/data/smoke-sensor-abort.toml",
    )
    .output()
    .expect("run");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(1), "{stdout}");
    let dirs = printed_folders(&stdout, 2);
    let first = read_json(&dirs[0].join("session.json"));
    let second = read_json(&dirs[1].join("session.json"));
    assert_eq!(first["status"], "complete", "{stdout}");
    assert_eq!(second["status"], "aborted", "{stdout}");
    assert_eq!(second["end_reason"], "sensor lost");
    assert!(stdout.contains("[rig-2] ") && stdout.contains("sensor_lost"));
    for d in &dirs {
        check_ok(d);
    }
}

#[test]
fn rigs_and_animals_come_in_pairs_and_rigs_need_distinct_names() {
    let tmp = tempfile::tempdir().expect("tmp");
    let named = |name: &str| {
        let p = tmp.path().join(format!("{name}.toml"));
        let text = format!(
            "name = \"{name}\"\n{}",
            skybearing::rig::config::filled_example()
        );
        std::fs::write(&p, text).expect("write rig");
        p
    };
    let a = named("rig-a");
    let b = named("rig-b");
    let run = |pairs: &[(&Path, Option<&str>)], extra_animal: bool| {
        let mut c = bin();
        c.args(["run", "--headless", "--protocol", "protocols/smoke.toml"]);
        for (r, an) in pairs {
            c.arg("--rig").arg(r);
            if let Some(an) = an {
                c.args(["--animal", an]);
            }
        }
        if extra_animal {
            c.args(["--animal", "lm-99"]);
        }
        c.arg("--sessions").arg(tmp.path().join("sessions"));
        let out = c.output().expect("run");
        (
            out.status.code(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    let (code, err) = run(&[(&a, Some("lm-01")), (&b, None)], false);
    assert_eq!(code, Some(2));
    assert_eq!(
        err.trim(),
        "skybearing: error: 2 --rig and 1 --animal: give them in pairs, one animal per rig (the first animal on the first rig, and so on)"
    );
    let (code, err) = run(&[(&a, Some("lm-01"))], true);
    assert_eq!(code, Some(2));
    assert!(err.contains("1 --rig and 2 --animal"), "{err}");
    // The same rig file twice: the same name.
    let (code, err) = run(&[(&a, Some("lm-01")), (&a, Some("lm-02"))], false);
    assert_eq!(code, Some(2));
    assert!(
        err.contains("name \"rig-a\" is also the name of") && err.lines().count() == 1,
        "{err}"
    );
    // A rig without a name beside another.
    let unnamed = tmp.path().join("unnamed.toml");
    std::fs::write(&unnamed, skybearing::rig::config::filled_example()).expect("write");
    let (code, err) = run(&[(&a, Some("lm-01")), (&unnamed, Some("lm-02"))], false);
    assert_eq!(code, Some(2));
    assert!(
        err.contains("unnamed.toml: no top-level name") && err.lines().count() == 1,
        "{err}"
    );
    assert!(!tmp.path().join("sessions").exists());
}
