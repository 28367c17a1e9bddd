//! `skybearing rig init` and `skybearing rig check`, run as a user would.

mod support;
use support::bin;

fn template() -> String {
    skybearing::rig::config::filled_example()
}

/// Runs `rig check FILE [--open]` on `text`; returns (exit code, stderr).
fn check(text: &str, open: bool) -> (i32, String) {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("rig.toml");
    std::fs::write(&f, text).unwrap();
    let mut c = bin();
    c.arg("rig").arg("check").arg(&f);
    if open {
        c.arg("--open");
    }
    let out = c.output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    let file = f.display().to_string();
    (out.status.code().unwrap(), err.replace(&file, "rig.toml"))
}

#[test]
fn init_writes_the_template_and_refuses_to_overwrite() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("new-rig.toml");
    let out = bin().args(["rig", "init"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(
        std::fs::read_to_string(&f).unwrap(),
        skybearing::rig::config::TEMPLATE
    );
    std::fs::write(&f, "mine").unwrap();
    let out = bin().args(["rig", "init"]).arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("already exists"), "{err}");
    assert_eq!(err.lines().count(), 1);
    assert_eq!(std::fs::read_to_string(&f).unwrap(), "mine");
}

#[test]
fn the_filled_in_template_checks() {
    let (code, err) = check(&template(), false);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn a_missing_field_is_one_line_naming_file_line_field() {
    let (code, err) = check(&template().replace("latitude_deg = 43.2170", ""), false);
    assert_eq!(code, 2);
    assert_eq!(
        err.trim(),
        "skybearing: error: rig.toml:11: site.latitude_deg: missing (required)"
    );
}

#[test]
fn latitude_out_of_range() {
    let (code, err) = check(&template().replace("43.2170", "123"), false);
    assert_eq!(code, 2);
    assert_eq!(
        err.trim(),
        "skybearing: error: rig.toml:13: site.latitude_deg: 123 is outside [-90, 90]"
    );
}

#[test]
fn unknown_unit() {
    let (code, err) = check(
        &template().replace("unit = \"degrees\"", "unit = \"gradians\""),
        false,
    );
    assert_eq!(code, 2);
    assert_eq!(
        err.trim(),
        "skybearing: error: rig.toml:42: sensor.unit: unknown unit \"gradians\" (expected degrees, radians, counts)"
    );
}

#[test]
fn unreadable_port_path_at_open_time() {
    let text = template().replace("/dev/ttyUSB0", "/nonexistent/skybearing-port");
    // The file itself is fine...
    assert_eq!(check(&text, false).0, 0);
    // ...the port is not there when opened.
    let (code, err) = check(&text, true);
    assert_eq!(code, 2);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with(
            "skybearing: error: rig.toml:28: sensor.path: cannot open serial port /nonexistent/skybearing-port"
        ),
        "{err}"
    );
}
