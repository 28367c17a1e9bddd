//! `samples.columns`, the compact copy of samples.csv that batch reads: written at session
//! close and by `check --repair`, used only while it matches samples.csv, and never a cause of
//! other numbers than samples.csv gives.

mod support;
use std::path::Path;
use support::bin;
use support::demo::headless_demo;
use support::sessions::{Mode, make_lock_stale, write_session};

fn batch(roots: &[&Path], out: &Path, extra: &[&str]) -> String {
    let o = bin()
        .arg("batch")
        .args(roots)
        .arg("--out")
        .arg(out)
        .args(["--include-incomplete"])
        .args(extra)
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(o.status.success(), "batch failed: {stderr}");
    stderr
}

fn check(args: &[&str], dir: &Path) -> (bool, String) {
    let o = bin().arg("check").args(args).arg(dir).output().unwrap();
    (
        o.status.success(),
        String::from_utf8_lossy(&o.stdout).to_string(),
    )
}

/// Every CSV table of two batch outputs, byte for byte.
fn same_tables(a: &Path, b: &Path) {
    let mut n = 0;
    for e in std::fs::read_dir(a).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "csv") {
            let other = b.join(p.file_name().unwrap());
            assert_eq!(
                std::fs::read(&p).unwrap(),
                std::fs::read(&other).unwrap(),
                "{} differs",
                p.display()
            );
            n += 1;
        }
    }
    assert!(n >= 8, "only {n} tables");
}

#[test]
fn a_closed_session_has_its_column_file_and_batch_gives_the_same_tables_from_it() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = headless_demo(&tmp.path().join("sessions"), &[]);
    assert!(dir.join("samples.columns").is_file());
    let csv = std::fs::metadata(dir.join("samples.csv")).unwrap().len();
    let cols = std::fs::metadata(dir.join("samples.columns"))
        .unwrap()
        .len();
    assert!(cols * 3 < csv, "{cols} bytes against {csv}");
    let (ok, text) = check(&[], &dir);
    assert!(ok && !text.contains("samples.columns"), "{text}");

    let said = batch(&[&dir], &tmp.path().join("cols"), &[]);
    assert!(
        said.contains("samples of 1 sessions from samples.columns"),
        "{said}"
    );
    let said = batch(&[&dir], &tmp.path().join("csv"), &["--csv-only"]);
    assert!(said.contains("from samples.csv (--csv-only)"), "{said}");
    same_tables(&tmp.path().join("cols"), &tmp.path().join("csv"));

    // Gone: check says so, batch reads the CSV (same tables), --repair writes it again.
    std::fs::remove_file(dir.join("samples.columns")).unwrap();
    let (ok, text) = check(&[], &dir);
    assert!(ok && text.contains("samples.columns is missing"), "{text}");
    let said = batch(&[&dir], &tmp.path().join("none"), &[]);
    assert!(
        said.contains("0 sessions from samples.columns, 1 from samples.csv"),
        "{said}"
    );
    same_tables(&tmp.path().join("none"), &tmp.path().join("csv"));
    let (ok, text) = check(&["--repair"], &dir);
    assert!(
        ok && text.contains("samples.columns: written from"),
        "{text}"
    );
    let (_, text) = check(&[], &dir);
    assert!(!text.contains("samples.columns"), "{text}");
    assert!(
        batch(&[&dir], &tmp.path().join("again"), &[]).contains("1 sessions from samples.columns")
    );
}

#[test]
fn an_edited_csv_is_read_as_it_is_now_not_from_its_old_column_file() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = headless_demo(&tmp.path().join("sessions"), &[]);
    // A hand edit of the archive of record: one world heading changed, same length.
    let path = dir.join("samples.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let row = lines.len() / 2;
    let header: Vec<&str> = lines[0].split(',').collect();
    let w = header
        .iter()
        .position(|c| *c == "world_heading_deg")
        .unwrap();
    let mut fields: Vec<String> = lines[row].split(',').map(str::to_string).collect();
    let old = fields[w].clone();
    // Its last decimal moved by one (stays a valid heading of the same length).
    let last = old.chars().last().unwrap().to_digit(10).unwrap();
    fields[w] = format!("{}{}", &old[..old.len() - 1], (last + 1) % 10);
    assert_eq!(fields[w].len(), old.len());
    lines[row] = fields.join(",");
    std::fs::write(&path, lines.join("\n") + "\n").unwrap();

    let said = batch(&[&dir], &tmp.path().join("cols"), &[]);
    assert!(
        said.contains("samples.columns not used") && said.contains("other bytes"),
        "{said}"
    );
    batch(&[&dir], &tmp.path().join("csv"), &["--csv-only"]);
    same_tables(&tmp.path().join("cols"), &tmp.path().join("csv"));
    let (_, text) = check(&[], &dir);
    assert!(text.contains("samples.columns is out of step"), "{text}");
}

#[test]
fn repair_of_an_interrupted_session_writes_its_column_file() {
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path().join("sessions");
    let dir = write_session(&root, "k1", "lm-01", "running", Mode::Sky, 40.0, 2, 300);
    make_lock_stale(&dir);
    let mut text = std::fs::read_to_string(dir.join("samples.csv")).unwrap();
    text.push_str("2026-06-02T09:01:00.100Z,60.1");
    std::fs::write(dir.join("samples.csv"), text).unwrap();
    assert!(!dir.join("samples.columns").exists());
    let (ok, out) = check(&["--repair"], &dir);
    assert!(ok, "{out}");
    assert!(
        out.contains("dropped torn line")
            && out.contains("samples.columns: written from 600 samples"),
        "{out}"
    );
    let said = batch(&[&root], &tmp.path().join("cols"), &[]);
    assert!(
        said.contains("samples of 1 sessions from samples.columns"),
        "{said}"
    );
    batch(&[&root], &tmp.path().join("csv"), &["--csv-only"]);
    same_tables(&tmp.path().join("cols"), &tmp.path().join("csv"));
}
