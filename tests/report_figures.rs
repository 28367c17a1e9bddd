//! `skybearing report` as a user runs it: tables, summary and figures that are valid SVG/PNG
//! with the expected content (checked loosely: element counts and labels, not bytes), printable
//! at one or two journal columns (85 / 180 mm at 300 dpi, type of at least 7 pt, the Okabe–Ito
//! palette: `support::figures::check_print_figure`), legends outside the data.

mod support;
use support::bin;
use support::figures::{check_print_figure, text_y, xml_elements};
use support::sessions::{Mode, col, read_csv, write_session};

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

    let count = |t: &[String], s: &str| t.iter().filter(|x| x.contains(s)).count();
    let exact = |t: &[String], s: &str| t.iter().filter(|x| *x == s).count();
    for name in [
        "heading_trace_2col",
        "epoch_roses_2col",
        "sun_relative_1col",
        "turn_responses_1col",
    ] {
        check_print_figure(&out, name);
    }

    // Epoch roses: 3 epochs × 2 frames in one grid (5 per row: one row per frame, not a strip
    // of 6 rows), each rose with its compass labels and n, r and mean below it.
    let svg = std::fs::read_to_string(out.join("epoch_roses_2col.svg")).unwrap();
    let (names, texts) = xml_elements(&svg);
    assert_eq!(exact(&texts, "E1 open sky"), 2);
    assert_eq!(exact(&texts, "E2 diffuser"), 2);
    assert_eq!(count(&texts, "mean "), 6);
    assert_eq!(count(&texts, "r = "), 6);
    assert_eq!(exact(&texts, "N"), 3);
    assert_eq!(exact(&texts, "0 mark"), 3);
    assert_eq!(exact(&texts, "World frame (0 = true north)"), 1);
    assert_eq!(exact(&texts, "Arena frame (0 = arena mark)"), 1);
    // Rings labelled with their count of samples: 280 scored samples per epoch in ±27°, so
    // the fullest 10° bin holds fewer than 280 and the outer ring is a round number above it.
    let rings: Vec<f64> = texts.iter().filter_map(|t| t.parse().ok()).collect();
    assert!(rings.iter().any(|r| *r > 20.0 && *r <= 500.0), "{rings:?}");
    // One filled wedge per non-empty 10° bin: the ±27° wobble fills several bins per rose.
    let polygons = names.iter().filter(|n| *n == "polygon").count();
    assert!(polygons >= 6 * 4, "{polygons} wedges");
    let (_, rose_h) = support::figures::svg_size(&svg).0;
    assert!(
        rose_h < 120.0,
        "a compact grid, not a strip: {rose_h} mm high"
    );

    // Heading trace: y ticks at exactly 0/90/180/270/360 in both panels, the legend in its own
    // strip above the data.
    let svg = std::fs::read_to_string(out.join("heading_trace_2col.svg")).unwrap();
    let (_, texts) = xml_elements(&svg);
    for tick in ["0", "90", "180", "270", "360"] {
        assert!(exact(&texts, tick) >= 2, "y tick {tick}: {texts:?}");
    }
    assert_eq!(count(&texts, "time since start (min)"), 1);
    assert_eq!(count(&texts, "world heading (° from N)"), 1);
    assert_eq!(count(&texts, "arena heading (° from 0 mark)"), 1);
    assert_eq!(exact(&texts, "turn +90°"), 2, "2 turns, labelled once");
    assert_eq!(exact(&texts, "E2 diffuser"), 1);
    let layout = skybearing::analysis::figures::report::trace_layout();
    for p in &layout.panels {
        assert!(!layout.legend.intersects(p), "{layout:?}");
    }
    for label in [
        "scored sample",
        "sample not scored",
        "not scored (settle, turn, flight stop)",
        "arena turn",
    ] {
        let ys = text_y(&svg, label);
        assert_eq!(ys.len(), 1, "{label}");
        assert!(
            ys[0] >= layout.legend.y0 as f64 && ys[0] < layout.legend.y1 as f64,
            "legend entry {label} at y {} outside the legend strip {:?}",
            ys[0],
            layout.legend
        );
        assert!(ys[0] < layout.panels[0].y0 as f64);
    }

    let svg = std::fs::read_to_string(out.join("turn_responses_1col.svg")).unwrap();
    let (names, texts) = xml_elements(&svg);
    assert_eq!(count(&texts, "arena turn (°, clockwise +)"), 1);
    assert_eq!(count(&texts, "world heading shift (°)"), 1);
    assert_eq!(exact(&texts, "world heading kept: shift = 0"), 1);
    assert_eq!(exact(&texts, "arena heading kept: shift = turn"), 1);
    for tick in ["-180", "-90", "0", "90", "180"] {
        assert_eq!(exact(&texts, tick), 2, "tick {tick} on both axes");
    }
    // 2 turns and the legend's marker, each a filled circle with its outline.
    assert_eq!(names.iter().filter(|n| *n == "circle").count(), 2 * 3);
    let layout = skybearing::analysis::figures::report::turns_layout();
    let ys = text_y(&svg, "one turn");
    assert!(ys[0] < layout.panels[0].y0 as f64, "{ys:?} {layout:?}");

    let svg = std::fs::read_to_string(out.join("sun_relative_1col.svg")).unwrap();
    let (_, texts) = xml_elements(&svg);
    assert_eq!(exact(&texts, "sun"), 1);
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
