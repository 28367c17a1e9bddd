//! `skybearing batch --out DIR` writes `DIR/figures/`: per frame a dial per condition with
//! each animal's vector and the second-order mean, paired-change dials between conditions
//! measured on the same animals, and turn responses across animals; each as SVG and PNG
//! printable at one or two journal columns (`support::figures::check_print_figure`), showing
//! the same numbers as the tables.
//!
//! The sessions are demo sessions through the binary (`protocols/two-conditions.toml`: open
//! sky, then a diffuser): two sky-compass and two arena-steering animals, each flown at 07:30
//! and at 13:00 UTC.

mod support;
use support::bin;
use support::figures::{check_print_figure, text_y, xml_elements};
use support::sessions::{col, read_csv};

use std::path::{Path, PathBuf};

fn demo_sessions(root: &Path) -> PathBuf {
    let sessions = root.join("sessions");
    let protocol = Path::new(env!("CARGO_MANIFEST_DIR")).join("protocols/two-conditions.toml");
    for (animal, mode, seed) in [
        ("lm-11", "sky", "21"),
        ("lm-12", "sky", "22"),
        ("lm-13", "arena", "23"),
        ("lm-14", "arena", "24"),
    ] {
        for start in ["2026-06-14T07:30:00Z", "2026-06-14T13:00:00Z"] {
            let o = bin()
                .args(["demo", "--headless", "--speed", "max", "--rate-hz", "20"])
                .args(["--seed", seed, "--animal", animal, "--animal-mode", mode])
                .args(["--start", start, "--protocol"])
                .arg(&protocol)
                .arg("--sessions")
                .arg(&sessions)
                .output()
                .unwrap();
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        }
    }
    sessions
}

/// Texts of the SVG that start with `prefix` and a number: the number, up to `°`.
fn numbers_after(texts: &[String], prefix: &str) -> Vec<f64> {
    texts
        .iter()
        .filter_map(|t| t.strip_prefix(prefix))
        .filter(|r| r.starts_with(|c: char| c.is_ascii_digit() || c == '+' || c == '-'))
        .map(|r| {
            r.split('°')
                .next()
                .unwrap()
                .trim()
                .trim_start_matches('+')
                .parse()
                .unwrap()
        })
        .collect()
}

/// (frame, condition) → column value of a table.
fn rows_by<'a>(
    h: &[String],
    rows: &'a [Vec<String>],
    keys: &[&str],
    value: &str,
) -> Vec<(Vec<String>, &'a str)> {
    rows.iter()
        .map(|r| {
            (
                keys.iter().map(|k| col(h, r, k).to_string()).collect(),
                col(h, r, value),
            )
        })
        .collect()
}

#[test]
fn batch_draws_population_paired_and_turn_figures_from_its_tables() {
    let tmp = tempfile::tempdir().unwrap();
    let sessions = demo_sessions(tmp.path());
    let out = tmp.path().join("out");
    let o = bin()
        .arg("batch")
        .arg(&sessions)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let figs = out.join("figures");
    let mut names: Vec<String> = std::fs::read_dir(&figs)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    let stems = [
        "paired_sun_1col",
        "paired_world_1col",
        "population_sun_2col",
        "population_world_2col",
        "turn_responses_1col",
    ];
    let want: Vec<String> = stems
        .iter()
        .flat_map(|s| [format!("{s}.png"), format!("{s}.svg")])
        .collect();
    assert_eq!(
        names, want,
        "one pair of conditions: a one-dial paired figure per frame"
    );
    let animals = ["lm-11", "lm-12", "lm-13", "lm-14"];

    // Population dials: one per condition in protocol order, every animal in the legend, the
    // second-order mean of population.csv (mean_vector_deg) under each dial.
    let (h, rows) = read_csv(&out.join("population.csv"));
    for frame in ["world", "sun"] {
        let svg = check_print_figure(&figs, &format!("population_{frame}_2col"));
        let (_, texts) = xml_elements(&svg);
        let titles: Vec<&String> = texts
            .iter()
            .filter(|t| t.ends_with("(4 animals)"))
            .collect();
        assert_eq!(
            titles,
            ["open sky (4 animals)", "diffuser (4 animals)"],
            "{frame}"
        );
        for a in animals {
            assert_eq!(texts.iter().filter(|t| *t == a).count(), 1, "{frame} {a}");
        }
        let drawn = numbers_after(&texts, "second-order mean ");
        let table: Vec<f64> = ["open sky", "diffuser"]
            .iter()
            .map(|c| {
                rows_by(&h, &rows, &["frame", "condition"], "mean_vector_deg")
                    .into_iter()
                    .find(|(k, _)| k[0] == frame && k[1] == *c)
                    .map(|(_, v)| v.parse::<f64>().unwrap())
                    .unwrap()
            })
            .collect();
        assert_eq!(drawn.len(), 2, "{frame}: {texts:?}");
        for (d, t) in drawn.iter().zip(&table) {
            // Whole degrees both (the figure writes "{:.0}°").
            let diff = (d - t.round()).rem_euclid(360.0);
            assert_eq!(diff, 0.0, "{frame}: drawn {d}, table {t}");
        }
    }

    // Paired dials: the mean change and the animals of paired.csv.
    let (h, rows) = read_csv(&out.join("paired.csv"));
    for frame in ["world", "sun"] {
        let svg = check_print_figure(&figs, &format!("paired_{frame}_1col"));
        let (_, texts) = xml_elements(&svg);
        assert!(
            texts.iter().any(|t| t == "open sky → diffuser"),
            "{texts:?}"
        );
        assert!(
            texts
                .iter()
                .any(|t| t == "inner: open sky; outer: diffuser")
        );
        let row = rows.iter().find(|r| col(&h, r, "frame") == frame).unwrap();
        assert_eq!(col(&h, row, "condition_a"), "open sky");
        let n = col(&h, row, "animals");
        assert!(
            texts.iter().any(|t| *t == format!("n = {n} animals")),
            "{texts:?}"
        );
        let change: f64 = col(&h, row, "mean_change_deg").parse().unwrap();
        let drawn = numbers_after(&texts, "mean change ");
        assert_eq!(drawn, [change.round()], "{frame}");
    }

    // Turn responses across animals: both hypotheses, every animal, one marker per turn of
    // turns.csv. lm-11 (first by name) is drawn as filled Okabe-Ito blue circles: one per turn
    // with a world shift, and one in the legend.
    let svg = check_print_figure(&figs, "turn_responses_1col");
    let (_, texts) = xml_elements(&svg);
    for label in [
        "world heading kept: shift = 0",
        "arena heading kept: shift = turn",
        "arena turn (°, clockwise +)",
        "world heading shift (°)",
    ] {
        assert_eq!(texts.iter().filter(|t| *t == label).count(), 1, "{label}");
    }
    for a in animals {
        assert_eq!(texts.iter().filter(|t| *t == a).count(), 1, "{a}");
    }
    let (h, rows) = read_csv(&out.join("turns.csv"));
    let turns = rows
        .iter()
        .filter(|r| col(&h, r, "animal") == "lm-11" && !col(&h, r, "world_shift_deg").is_empty())
        .count();
    assert!(turns >= 10, "{turns} turns of lm-11");
    let blue_circles = svg
        .lines()
        .filter(|l| l.starts_with("<circle") && l.contains("fill=\"#0072B2\""))
        .count();
    assert_eq!(blue_circles, turns + 1);
    // The legend lies below the chart, outside its data.
    let chart_px = skybearing::analysis::figures::style::mm_to_px(
        skybearing::analysis::figures::batch::TURNS_CHART_MM,
    ) as f64;
    for label in ["world heading kept: shift = 0", "lm-14"] {
        let ys = text_y(&svg, label);
        assert!(ys.len() == 1 && ys[0] > chart_px, "{label}: {ys:?}");
    }
}
