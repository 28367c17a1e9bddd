//! Protocol files through the binary (`skybearing plan`): each bad file gives one line naming
//! the file, the line and the field, and exit status 2; every shipped file plans cleanly.

mod support;
use support::bin;

use std::path::PathBuf;

const HEAD: &str = "name = \"bad\"\nsettle_s = 5\n";

/// Writes `body` after a valid head and returns stderr of `plan` on it (asserting exit 2).
fn error_for(file_name: &str, body: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join(file_name);
    std::fs::write(&f, format!("{HEAD}{body}")).unwrap();
    let out = bin()
        .args(["plan", "--start", "2026-06-21T08:00:00Z", "--protocol"])
        .arg(&f)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&out.stdout)
    );
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    let shown = f.display().to_string();
    let rest = err
        .trim_end()
        .strip_prefix("skybearing: error: ")
        .and_then(|r| r.strip_prefix(&shown))
        .unwrap_or_else(|| panic!("error does not start with the file: {err}"));
    rest.to_string()
}

#[test]
fn negative_duration() {
    let e = error_for(
        "neg.toml",
        "[[epochs]]\nduration_s = 60\n\n[[epochs]]\nduration_s = -5\n",
    );
    assert_eq!(e, ":7: epochs[2].duration_s: must be > 0 (got -5)");
}

#[test]
fn unknown_key() {
    let e = error_for(
        "key.toml",
        "[[epochs]]\nduration_s = 60\nconditon = \"diffuser\"\n",
    );
    assert!(
        e.starts_with(":5: epochs[1].conditon: unknown key `conditon`, expected one of"),
        "{e}"
    );
}

#[test]
fn zero_epochs() {
    let e = error_for("none.toml", "epochs = []\n");
    assert_eq!(
        e,
        ":3: epochs: no epochs: add at least one [[epochs]] entry"
    );
}

#[test]
fn turn_that_is_not_a_number() {
    let e = error_for(
        "turn.toml",
        "[[epochs]]\ncount = 4\nduration_s = 60\nturns = [90, \"ninety\", 180]\n",
    );
    assert_eq!(
        e,
        ":6: epochs[1].turns[2]: must be a number (got string \"ninety\")"
    );
}

#[test]
fn shuffle_with_an_empty_turn_list() {
    let e = error_for(
        "empty.toml",
        "[[epochs]]\ncount = 4\nduration_s = 60\nturns = []\norder = \"shuffle\"\nseed = 9\n",
    );
    assert_eq!(
        e,
        ":6: epochs[1].turns: empty list: give at least one value to shuffle"
    );
}

#[test]
fn not_toml_at_all() {
    let e = error_for("junk.toml", "[[epochs]\nduration_s = 60\n");
    assert!(e.starts_with(":3: "), "{e}");
}

#[test]
fn shipped_protocols_plan_cleanly() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("protocols");
    let mut n = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("toml") {
            continue;
        }
        n += 1;
        let out = bin()
            .args([
                "plan",
                "--start",
                "2026-06-21T07:00:00Z",
                "--json",
                "--protocol",
            ])
            .arg(&path)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}: {}",
            path.display(),
            String::from_utf8_lossy(&out.stderr)
        );
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert!(
            v["warnings"].as_array().unwrap().is_empty(),
            "{}: {}",
            path.display(),
            v["warnings"]
        );
    }
    assert!(n >= 3, "only {n} shipped protocols");
}
