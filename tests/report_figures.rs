//! `skybearing report` as a user runs it: tables, summary and figures that are valid SVG/PNG
//! with the expected content (checked loosely: element counts and labels, not bytes).

mod support;
use support::bin;
use support::sessions::{Mode, col, read_csv, write_session};

use std::path::Path;

/// A small XML well-formedness check: every tag closes in order, and the root is <svg>.
/// Returns the element names in document order and the (trimmed) text between tags.
fn xml_elements(text: &str) -> (Vec<String>, Vec<String>) {
    let mut stack: Vec<String> = Vec::new();
    let mut names = Vec::new();
    let mut texts = Vec::new();
    let mut rest = text;
    while let Some(i) = rest.find('<') {
        let between = rest[..i].trim();
        if !between.is_empty() {
            texts.push(between.to_string());
        }
        rest = &rest[i + 1..];
        let end = rest.find('>').expect("unclosed tag");
        let tag = &rest[..end];
        rest = &rest[end + 1..];
        if tag.starts_with('?') || tag.starts_with('!') {
            continue;
        }
        if let Some(close) = tag.strip_prefix('/') {
            assert_eq!(
                stack.pop().as_deref(),
                Some(close.trim()),
                "mismatched </{close}>"
            );
            continue;
        }
        let name: String = tag
            .chars()
            .take_while(|c| !c.is_whitespace() && *c != '/')
            .collect();
        if names.is_empty() {
            assert_eq!(name, "svg", "root element");
        }
        names.push(name.clone());
        if !tag.ends_with('/') {
            stack.push(name);
        }
    }
    assert!(stack.is_empty(), "unclosed elements {stack:?}");
    (names, texts)
}

/// Decodes a PNG; returns (width, height, share of pixels that are not white).
fn png_info(path: &Path) -> (u32, u32, f64) {
    let bytes = std::fs::read(path).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "PNG signature");
    let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    let px = info.color_type.samples();
    let data = &buf[..info.buffer_size()];
    let n = data.len() / px;
    let dark = data
        .chunks(px)
        .filter(|p| p.iter().take(3).any(|&v| v < 250))
        .count();
    (info.width, info.height, dark as f64 / n as f64)
}

#[test]
fn report_writes_tables_summary_and_figures() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = write_session(
        tmp.path(),
        "r1",
        "lm-01",
        "complete",
        Mode::Sky,
        75.0,
        3,
        300,
    );
    let o = bin().arg("report").arg(&dir).output().unwrap();
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(stdout.contains("Session r1"), "{stdout}");
    assert!(stdout.contains("steering by the sky"), "{stdout}");
    let out = dir.join("report");
    let summary = std::fs::read_to_string(out.join("summary.txt")).unwrap();
    assert!(stdout.starts_with(&summary));

    let (h, rows) = read_csv(&out.join("epochs.csv"));
    assert_eq!(rows.len(), 3);
    let m: f64 = col(&h, &rows[0], "mean_world_deg").parse().unwrap();
    assert!((m - 75.0).abs() < 3.0, "{m}");
    let (_, rows) = read_csv(&out.join("turns.csv"));
    assert_eq!(rows.len(), 2);

    // Epoch histograms: 3 epochs × 2 frames, each with 4 direction labels and a stats line.
    let svg = std::fs::read_to_string(out.join("epoch_histograms.svg")).unwrap();
    let (names, texts) = xml_elements(&svg);
    let count = |t: &[String], s: &str| t.iter().filter(|x| x.contains(s)).count();
    assert_eq!(count(&texts, "arena frame"), 3);
    assert_eq!(count(&texts, "world frame"), 3);
    assert_eq!(count(&texts, "mean="), 6);
    assert_eq!(texts.iter().filter(|t| *t == "N").count(), 3);
    assert_eq!(texts.iter().filter(|t| *t == "0 mark").count(), 3);
    // One filled wedge per non-empty 10° bin: the ±27° wobble fills several bins per panel.
    let polygons = names.iter().filter(|n| *n == "polygon").count();
    assert!(polygons >= 6 * 4, "{polygons} wedges");

    let svg = std::fs::read_to_string(out.join("heading_trace.svg")).unwrap();
    let (_, texts) = xml_elements(&svg);
    assert_eq!(count(&texts, "time since start (min)"), 2);
    assert_eq!(count(&texts, "world heading (° from true north)"), 1);
    assert_eq!(count(&texts, "arena heading (° from arena mark)"), 1);
    assert_eq!(count(&texts, "turn +90°"), 4, "2 turns × 2 panels");
    assert_eq!(count(&texts, "E2 diffuser"), 1);
    assert!(texts.iter().any(|t| t == "not scored"));

    let svg = std::fs::read_to_string(out.join("turn_responses.svg")).unwrap();
    let (names, texts) = xml_elements(&svg);
    assert_eq!(count(&texts, "arena turn (°, clockwise +)"), 1);
    assert_eq!(count(&texts, "heading shift across the turn (°)"), 1);
    // 2 turns: 2 circles (world) + the legend's circle.
    assert_eq!(names.iter().filter(|n| *n == "circle").count(), 3);

    let svg = std::fs::read_to_string(out.join("sun_relative.svg")).unwrap();
    let (_, texts) = xml_elements(&svg);
    assert_eq!(texts.iter().filter(|t| *t == "sun").count(), 1);

    for (name, w, h) in [
        ("epoch_histograms", 900, 1320),
        ("heading_trace", 1400, 900),
        ("sun_relative", 600, 620),
        ("turn_responses", 800, 760),
    ] {
        let (pw, ph, ink) = png_info(&out.join(format!("{name}.png")));
        assert_eq!((pw, ph), (w, h), "{name}");
        assert!(ink > 0.01 && ink < 0.6, "{name}: {ink} of pixels drawn");
    }
}

#[test]
fn report_on_a_folder_without_samples_names_the_file() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = write_session(
        tmp.path(),
        "r2",
        "lm-01",
        "complete",
        Mode::Sky,
        75.0,
        2,
        50,
    );
    std::fs::remove_file(dir.join("samples.csv")).unwrap();
    let o = bin()
        .args(["report", dir.to_str().unwrap(), "--out"])
        .arg(tmp.path().join("rep"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("samples.csv: missing"), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
}
