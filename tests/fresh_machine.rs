//! What a fresh machine needs (issue 14, point 16): the test suite runs without tmux or
//! libfaketime (the tests that need them say that they skipped, unless
//! `SKYBEARING_REQUIRE_TOOLS=1`, which `.ci/run` sets), and `docs/files.md` documents every
//! file, column and field the program writes.

mod support;
use support::{REQUIRE_TOOLS_ENV, bin, on_path, skip_without};

use std::path::{Path, PathBuf};

/// Run in a child process by `a_missing_tool_skips_with_a_notice_and_fails_when_required`.
#[test]
#[ignore = "helper: run by a_missing_tool_skips_with_a_notice_and_fails_when_required"]
fn helper_needs_a_missing_tool() {
    let tool = "skybearing-test-no-such-tool";
    if skip_without(
        "helper_needs_a_missing_tool",
        tool,
        on_path(tool),
        "it never exists",
    ) {
        return;
    }
    panic!("{tool} was found on the PATH");
}

#[test]
fn a_missing_tool_skips_with_a_notice_and_fails_when_required() {
    let me = std::env::current_exe().expect("test binary");
    let helper = |required: bool| {
        let mut c = std::process::Command::new(&me);
        c.args(["--ignored", "--exact", "helper_needs_a_missing_tool"]);
        if required {
            c.env(REQUIRE_TOOLS_ENV, "1");
        } else {
            c.env_remove(REQUIRE_TOOLS_ENV);
        }
        c.output().expect("run the helper")
    };
    // Not required: passes, and says on stderr (not captured by the harness) that it skipped.
    let o = helper(false);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(
        err.contains(
            "SKIPPED helper_needs_a_missing_tool: skybearing-test-no-such-tool is not installed"
        ),
        "{err}"
    );
    // Required (as .ci/run sets it): the missing tool is a failure.
    let o = helper(true);
    assert!(
        !o.status.success(),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
    assert!(
        String::from_utf8_lossy(&o.stdout).contains("is missing and SKYBEARING_REQUIRE_TOOLS=1")
    );
}

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Every key of a JSON object, nested objects as `a.b` too (arrays: their first element).
fn keys(v: &serde_json::Value, prefix: &str, out: &mut Vec<String>) {
    match v {
        serde_json::Value::Object(m) => {
            for (k, v) in m {
                out.push(k.clone());
                let p = format!("{prefix}{k}.");
                // The protocol and the rig are copies of their own files (docs/protocols.md and
                // the rig template document them).
                if k != "protocol" && k != "rig" {
                    keys(v, &p, out);
                }
            }
        }
        serde_json::Value::Array(a) => {
            if let Some(first) = a.first() {
                keys(first, prefix, out);
            }
        }
        _ => {}
    }
}

fn header(path: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    text.lines()
        .next()
        .unwrap_or("")
        .split(',')
        .map(str::to_string)
        .collect()
}

#[test]
fn docs_files_names_every_file_column_and_field_the_program_writes() {
    let doc = std::fs::read_to_string(repo().join("docs/files.md")).expect("docs/files.md");
    let named = |name: &str| doc.contains(&format!("`{name}`"));
    let mut missing = Vec::new();
    let sessions = repo().join("tests/data/sessions");
    let mut dirs: Vec<PathBuf> = std::fs::read_dir(&sessions)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.join("session.json").is_file())
        .collect();
    dirs.sort();
    let dir = &dirs[0];
    for f in ["session.json", "summary.json"] {
        let v = support::read_json(&dir.join(f));
        let mut ks = Vec::new();
        keys(&v, "", &mut ks);
        missing.extend(
            ks.into_iter()
                .filter(|k| !named(k))
                .map(|k| format!("{f}: {k}")),
        );
    }
    for f in ["samples.csv", "events.csv"] {
        missing.extend(
            header(&dir.join(f))
                .into_iter()
                .filter(|c| !named(c))
                .map(|c| format!("{f}: {c}")),
        );
    }
    // Every event kind the demo sessions hold.
    for d in &dirs {
        let text = std::fs::read_to_string(d.join("events.csv")).unwrap();
        for line in text.lines().skip(1) {
            if let Some(kind) = line.split(',').nth(2)
                && !named(kind)
            {
                missing.push(format!("events.csv kind {kind}"));
            }
        }
    }
    let tmp = tempfile::tempdir().unwrap();
    let report = tmp.path().join("report");
    let o = bin()
        .arg("report")
        .arg(dir)
        .arg("--out")
        .arg(&report)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let batch = tmp.path().join("batch");
    let o = bin()
        .arg("batch")
        .arg(&sessions)
        .arg("--out")
        .arg(&batch)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // Every file written, and the files of its folders (batch's `figures/`).
    let mut written: Vec<PathBuf> = Vec::new();
    for out in [&report, &batch] {
        for e in std::fs::read_dir(out).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                written.extend(std::fs::read_dir(&p).unwrap().map(|e| e.unwrap().path()));
            } else {
                written.push(p);
            }
        }
    }
    assert!(
        written.iter().any(|p| p.starts_with(batch.join("figures"))),
        "batch wrote no figures"
    );
    for p in written {
        let name = p.file_name().unwrap().to_string_lossy().into_owned();
        let stem = name
            .rsplit_once('.')
            .map_or(name.as_str(), |(s, _)| s)
            .to_string();
        if !named(&name) && !doc.contains(&format!("`{stem}.svg`")) {
            missing.push(format!("output file {name}"));
        }
        if name.ends_with(".csv") {
            missing.extend(
                header(&p)
                    .into_iter()
                    .filter(|c| !named(c))
                    .map(|c| format!("{name}: {c}")),
            );
        }
    }
    missing.sort();
    missing.dedup();
    assert!(missing.is_empty(), "not in docs/files.md: {missing:?}");
}
