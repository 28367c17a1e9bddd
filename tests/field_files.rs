//! Rig and protocol files as a new user meets them, and as an attacker feeds them (issue 14,
//! points 8, 11 and 15), run through the binary.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skybearing"))
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

// ---- point 8: the rig template and `run --animal` ---------------------------------------------

#[test]
fn a_fresh_rig_template_is_refused_until_its_placeholders_are_filled() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("rig.toml");
    let out = bin().args(["rig", "init"]).arg(&f).output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let written = std::fs::read_to_string(&f).unwrap();
    assert!(!written.contains("Larkfield"), "{written}");
    assert!(!written.contains("43.2170"), "{written}");
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains(&format!("{}:12: site.name: not filled in", f.display())),
        "{err}"
    );
    // Fill in every value but one: the line and field of the one left are named.
    let almost = skybearing::rig::config::filled_example().replace(
        "mark_reference = \"magnetic\"",
        "mark_reference = \"FILL IN\"",
    );
    std::fs::write(&f, almost).unwrap();
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(":23: arena.mark_reference: not filled in"),
        "{}",
        stderr(&out)
    );
    // `plan --rig` refuses it the same way.
    let out = bin()
        .args(["plan", "--protocol"])
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join("protocols/smoke.toml"))
        .arg("--rig")
        .arg(&f)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("arena.mark_reference: not filled in"));
}

#[test]
fn rig_check_prints_the_sensor_in_words_not_json() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(
        dir.path(),
        "rig.toml",
        &skybearing::rig::config::filled_example(),
    );
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(!text.contains('{') && !text.contains("\"kind\""), "{text}");
    assert!(
        text.contains("sensor     serial port /dev/ttyUSB0 at 115200 baud"),
        "{text}"
    );
    assert!(text.contains("heading in column 1"), "{text}");
    assert!(text.contains("turntable  turned by hand"), "{text}");
}

#[test]
fn a_sim_turntable_or_sensor_in_a_rig_file_is_refused_by_rig_check() {
    let dir = tempfile::tempdir().unwrap();
    for (from, to, field) in [
        (
            "kind = \"manual\"",
            "kind = \"sim\"",
            ":53: turntable.kind: ",
        ),
        (
            "source = \"serial\"",
            "source = \"sim\"",
            ":27: sensor.source: ",
        ),
    ] {
        let text = skybearing::rig::config::filled_example().replace(from, to);
        let f = write(dir.path(), "rig.toml", &text);
        let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
        assert_eq!(out.status.code(), Some(2));
        let err = stderr(&out);
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(field), "{err}");
        assert!(err.contains("skybearing sim --write-rig"), "{err}");
    }
}

#[test]
fn a_settle_window_in_a_rig_file_is_refused_and_the_template_says_why() {
    assert!(!skybearing::rig::config::TEMPLATE.contains("may override"));
    assert!(skybearing::rig::config::TEMPLATE.contains("every protocol file sets its own"));
    let dir = tempfile::tempdir().unwrap();
    let text = format!(
        "settle_s = 5.0\n{}",
        skybearing::rig::config::filled_example()
    );
    let f = write(dir.path(), "rig.toml", &text);
    let out = bin().args(["rig", "check"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains(":1: settle_s: not a rig setting"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn run_requires_an_animal_id() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(
        dir.path(),
        "rig.toml",
        &skybearing::rig::config::filled_example(),
    );
    let out = bin()
        .arg("run")
        .arg("--rig")
        .arg(&f)
        .arg("--protocol")
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join("protocols/smoke.toml"))
        .arg("--sessions")
        .arg(dir.path().join("s"))
        .arg("--headless")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--animal"), "{}", stderr(&out));
    assert!(!dir.path().join("s").exists());
}
