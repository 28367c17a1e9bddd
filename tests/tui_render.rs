//! Screen rendering on ratatui's TestBackend with an invented, realistic snapshot
//! (demo site "Larkfield Meadow (demo)", animal lm-07).

use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::style::{Color, Modifier};
use skybearing::engine::snapshot::Snapshot;
use skybearing::tui::panels::overlays::PROMPT_GRACE_S;
use skybearing::tui::sample::SnapshotBuilder;
use skybearing::tui::{HeadingFrame, Mode, ThemeKind, UiState, draw};

/// Renders `snap` at `w`×`h` and returns the screen as lines of text.
fn screen(snap: &Snapshot, ui: &UiState, w: u16, h: u16) -> Vec<String> {
    let buf = buffer(snap, ui, w, h);
    (0..h)
        .map(|y| {
            let mut line = String::new();
            for x in 0..w {
                line.push_str(buf[(x, y)].symbol());
            }
            line
        })
        .collect()
}

fn buffer(snap: &Snapshot, ui: &UiState, w: u16, h: u16) -> ratatui::buffer::Buffer {
    let mut terminal = Terminal::new(TestBackend::new(w, h)).unwrap();
    terminal.draw(|f| draw(f, snap, ui)).unwrap();
    terminal.backend().buffer().clone()
}

fn dump(lines: &[String]) -> String {
    lines.join("\n")
}

/// A table line without the panel's left border.
fn row_text(line: &str) -> &str {
    line.trim_start_matches(['│', ' '])
}

fn find(lines: &[String], needle: &str) -> Option<usize> {
    lines.iter().position(|l| l.contains(needle))
}

fn must_find(lines: &[String], needle: &str) -> usize {
    find(lines, needle).unwrap_or_else(|| panic!("{needle:?} not on screen:\n{}", dump(lines)))
}

/// Checks shared by both main-screen sizes.
fn main_screen_checks(lines: &[String], snap: &Snapshot) {
    // Session line: animal, site, UTC clock, sun azimuth, countdown to the next turn.
    let s = must_find(lines, "lm-07");
    assert!(s <= 1, "session line not at the top:\n{}", dump(lines));
    must_find(lines, "Larkfield Meadow (demo)");
    must_find(lines, "07:42:30 UTC");
    must_find(lines, "09:42:30 local");
    must_find(lines, "az 121.1°");
    must_find(lines, "el 43.9°");
    must_find(lines, "elapsed 12:30");
    must_find(lines, "left 12:30");
    must_find(lines, "next turn +180° in 2:30");
    // Glance line: flight state in words, heading in the chosen frame.
    let g = must_find(lines, "FLYING");
    assert!(g <= 3);
    let world = skybearing::tui::format::deg(snap.world_heading_deg);
    must_find(lines, &format!("world {world}"));
    // Dial with world-frame cardinal labels, trace axis.
    must_find(lines, "dial · world");
    must_find(lines, "heading trace · world");
    must_find(lines, "360°");
    // Epoch table: one row per epoch with its condition and bearing, in order.
    let header = must_find(lines, "condition");
    let mut last = header;
    for e in &snap.epochs {
        let row = lines
            .iter()
            .enumerate()
            .skip(header + 1)
            .find(|(_, l)| row_text(l).starts_with(&format!("{} ", e.index)))
            .map(|(i, _)| i)
            .unwrap_or_else(|| panic!("epoch {} missing:\n{}", e.index, dump(lines)));
        assert!(row > last, "epoch rows out of order");
        last = row;
        let bearing = format!("{:.0}°", e.arena_bearing_deg);
        assert!(lines[row].contains(&bearing), "row {row}: {}", lines[row]);
    }
    must_find(lines, "► now");
    // Turn 2 (-90°) led into epoch 3 and its world shift is shown with a verdict mark.
    let r3 = lines
        .iter()
        .find(|l| row_text(l).starts_with("3 "))
        .unwrap();
    assert!(
        r3.contains("-90°") && r3.contains("-1°") && r3.contains('✓'),
        "{r3}"
    );
    // Health: archive sync age, sensor rate, samples written.
    must_find(lines, "saved 0.4 s ago");
    must_find(lines, "99.8 Hz");
    must_find(lines, "74 850 samples");
    must_find(lines, "±0.6 ms");
    must_find(lines, "malformed 2");
    must_find(lines, "lost 0");
    // Footer: the keys.
    let footer = lines.last().unwrap();
    for k in [" f ", " n ", " p ", " w ", " s ", " q ", " ? "] {
        assert!(footer.contains(k), "footer lacks {k:?}: {footer}");
    }
    assert!(footer.contains("flight stop") && footer.contains("end") && footer.contains("help"));
}

#[test]
fn main_screen_80x24() {
    let snap = SnapshotBuilder::new().build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    main_screen_checks(&lines, &snap);
    // Every line stays within the screen, the dial has its north label.
    must_find(&lines, " N ");
}

#[test]
fn main_screen_160x48_uses_the_room() {
    let snap = SnapshotBuilder::new().build();
    let lines = screen(&snap, &UiState::default(), 160, 48);
    main_screen_checks(&lines, &snap);
    // Wide extras: both means, the device panel with descriptions, recent events, last turn.
    must_find(&lines, "arena°");
    must_find(&lines, "devices · archive");
    must_find(&lines, "simulated sensor on /dev/pts/4");
    must_find(&lines, "recent events");
    must_find(&lines, "note: wind gust");
    must_find(&lines, "turn 2 -90° shift -1° ✓ kept");
    must_find(&lines, "epoch 3/5 diffuser");
    // The dial is taller than in the compact layout.
    let n = must_find(&lines, " N ");
    let s = lines.iter().rposition(|l| l.contains(" S ")).unwrap();
    assert!(s - n >= 20, "dial only {} rows tall", s - n);
}

#[test]
fn frames_switch_trace_and_dial() {
    let snap = SnapshotBuilder::new().build();
    for (frame, key) in [
        (HeadingFrame::Arena, snap.arena_heading_deg),
        (HeadingFrame::Sun, snap.sun_relative_heading_deg),
    ] {
        let ui = UiState {
            frame,
            ..UiState::default()
        };
        let lines = screen(&snap, &ui, 80, 24);
        let name = frame.name();
        must_find(&lines, &format!("dial · {name}"));
        must_find(&lines, &format!("heading trace · {name}"));
        must_find(
            &lines,
            &format!("{name} {}", skybearing::tui::format::deg(key)),
        );
    }
}

#[test]
fn trace_shows_flight_stop_gap_and_turns() {
    let snap = SnapshotBuilder::new().build();
    let lines = screen(&snap, &UiState::default(), 160, 48);
    let strip = lines[must_find(&lines, "fly ")].clone();
    assert!(strip.contains('×'), "no stop marked: {strip}");
    assert!(strip.contains('─'), "no flight marked: {strip}");
    // Two turns fall within the last 10 minutes (at 5:00 and 10:00).
    let top = lines[must_find(&lines, "360°")].clone();
    assert_eq!(top.matches('┆').count(), 2, "{top}");
}

/// Every page of the help overlay at `w`×`h`, one after the other, turned with Space.
fn help_pages(snap: &Snapshot, ui: &UiState, w: u16, h: u16) -> Vec<String> {
    let mut ui = ui.clone();
    let mut all = Vec::new();
    for _ in 0..3 {
        all.extend(screen(snap, &ui, w, h));
        ui.handle_key(
            crossterm::event::KeyEvent::new(
                crossterm::event::KeyCode::Char(' '),
                crossterm::event::KeyModifiers::NONE,
            ),
            snap,
        );
        assert_eq!(ui.mode, Mode::Help, "Space closed the help");
    }
    all
}

#[test]
fn help_overlay_lists_keys() {
    let snap = SnapshotBuilder::new().build();
    let ui = UiState {
        mode: Mode::Help,
        ..UiState::default()
    };
    for (w, h) in [(80, 24), (160, 48)] {
        let lines = help_pages(&snap, &ui, w, h);
        must_find(&lines, "HELP");
        must_find(&lines, "mark a flight stop");
        must_find(&lines, "write a note");
        must_find(&lines, "end the session (asks; y confirms)");
        must_find(&lines, "confirm the pending prompt");
        must_find(&lines, "* sun");
    }
}

#[test]
fn turn_prompt_is_centered_with_countdown() {
    let snap = SnapshotBuilder::new().prompt(true).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    let title = must_find(&lines, "ACTION NEEDED");
    assert!(
        (6..=14).contains(&title),
        "prompt box not near the middle:\n{}",
        dump(&lines)
    );
    must_find(&lines, "Turn the arena +180°");
    must_find(&lines, "next epoch due in 0:11");
    must_find(&lines, "Enter");
    // The footer offers Enter first.
    assert!(lines.last().unwrap().contains("Enter"));
    // Late prompts say so in words (late: past the allowance for the operator's own work).
    let mut late = snap.clone();
    if let Some(p) = late.prompt.as_mut() {
        p.countdown_s = -(PROMPT_GRACE_S + 5.0);
    }
    let lines = screen(&late, &UiState::default(), 80, 24);
    must_find(&lines, "LATE by 0:05");
    must_find(&lines, "past the 1:00 allowed");
}

#[test]
fn confirm_and_note_boxes() {
    let snap = SnapshotBuilder::new().build();
    let ui = UiState {
        mode: Mode::ConfirmEnd,
        ..UiState::default()
    };
    let lines = screen(&snap, &ui, 80, 24);
    must_find(&lines, "END SESSION?");
    must_find(&lines, "any other key: go on");
    let ui = UiState {
        mode: Mode::Note("wind gust".into()),
        ..UiState::default()
    };
    let lines = screen(&snap, &ui, 80, 24);
    must_find(&lines, "> wind gust");
    let ui = UiState {
        mode: Mode::ConfirmSkip,
        ..UiState::default()
    };
    let lines = screen(&snap, &ui, 80, 24);
    must_find(&lines, "Skip the rest of epoch 3 (diffuser)?");
}

#[test]
fn late_archive_sync_is_flagged_in_words() {
    let snap = SnapshotBuilder::new().sync_age_s(Some(4.2)).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "SAVED 4 s AGO");
    must_find(&lines, "LAST SAVE 4.2 s AGO");
    let snap = SnapshotBuilder::new().sync_age_s(None).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "NOT SAVED YET");
    // A fresh sync is not flagged.
    let lines = screen(&SnapshotBuilder::new().build(), &UiState::default(), 80, 24);
    assert!(find(&lines, "AGO").is_none());
}

#[test]
fn late_sync_is_red_in_colour_and_reversed_in_mono() {
    let snap = SnapshotBuilder::new().sync_age_s(Some(9.0)).build();
    let pos = |buf: &ratatui::buffer::Buffer| {
        let area = buf.area;
        for y in 0..area.height {
            for x in 0..area.width.saturating_sub(4) {
                if buf[(x, y)].symbol() == "L"
                    && buf[(x + 1, y)].symbol() == "A"
                    && buf[(x + 2, y)].symbol() == "S"
                {
                    return (x, y);
                }
            }
        }
        panic!("no LAST SAVE flag");
    };
    let buf = buffer(&snap, &UiState::default(), 80, 24);
    let (x, y) = pos(&buf);
    assert_eq!(buf[(x, y)].bg, Color::Indexed(160));
    let ui = UiState::with_theme(ThemeKind::Mono);
    let buf = buffer(&snap, &ui, 80, 24);
    let (x, y) = pos(&buf);
    assert!(buf[(x, y)].modifier.contains(Modifier::REVERSED));
}

#[test]
fn mono_theme_uses_no_colour_anywhere() {
    let snap = SnapshotBuilder::new()
        .prompt(true)
        .sync_age_s(Some(8.0))
        .sensor_lost(true)
        .build();
    let ui = UiState::with_theme(ThemeKind::Mono);
    for (w, h) in [(80, 24), (160, 48)] {
        let buf = buffer(&snap, &ui, w, h);
        for cell in buf.content() {
            assert_eq!(cell.fg, Color::Reset, "{cell:?}");
            assert_eq!(cell.bg, Color::Reset, "{cell:?}");
        }
    }
}

#[test]
fn sunlight_theme_has_no_grey_text() {
    let snap = SnapshotBuilder::new().build();
    let buf = buffer(&snap, &UiState::default(), 160, 48);
    for cell in buf.content() {
        assert!(
            !matches!(
                cell.fg,
                Color::DarkGray | Color::Gray | Color::Indexed(232..=255)
            ),
            "{cell:?}"
        );
    }
}

#[test]
fn sensor_lost_and_stops_in_words() {
    let snap = SnapshotBuilder::new().sensor_lost(true).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "SENSOR LOST");
    must_find(&lines, "no heading");
    let snap = SnapshotBuilder::new().flying(false).paused(true).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "NOT FLYING");
    must_find(&lines, "PAUSED");
    assert!(lines.last().unwrap().contains("flight start"));
    assert!(lines.last().unwrap().contains("resume"));
}

#[test]
fn ended_frame_names_the_folder() {
    let snap = SnapshotBuilder::new().ended(true).build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "SESSION ENDED");
    must_find(&lines, "session saved to");
    must_find(&lines, "sessions/20260614T073000Z-lm-07");
}

#[test]
fn many_epochs_keep_the_current_row_visible() {
    let snap = SnapshotBuilder::hour_of_history().build();
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "► now");
    must_find(&lines, "epochs ");
    must_find(&lines, " of 13 ");
}

#[test]
fn odd_sizes_do_not_panic() {
    let snaps = [
        SnapshotBuilder::new().build(),
        SnapshotBuilder::new().prompt(true).build(),
        SnapshotBuilder::hour_of_history().build(),
        SnapshotBuilder::new().t_s(0.0).trace_points(0).build(),
        SnapshotBuilder::new().ended(true).build(),
    ];
    let modes = [
        Mode::Normal,
        Mode::Help,
        Mode::ConfirmEnd,
        Mode::Note("x".repeat(300)),
    ];
    for snap in &snaps {
        for mode in &modes {
            let ui = UiState {
                mode: mode.clone(),
                ..UiState::default()
            };
            for (w, h) in [
                (1, 1),
                (20, 10),
                (43, 13),
                (44, 14),
                (60, 18),
                (79, 23),
                (119, 33),
                (120, 34),
                (300, 80),
            ] {
                let _ = screen(snap, &ui, w, h);
            }
        }
    }
}

#[test]
fn tiny_screen_keeps_the_essentials() {
    let snap = SnapshotBuilder::new().build();
    let lines = screen(&snap, &UiState::default(), 20, 10);
    must_find(&lines, "FLYING");
    must_find(&lines, "world");
    must_find(&lines, "saved");
    let lines = screen(&snap, &UiState::default(), 300, 80);
    main_screen_checks(&lines, &snap);
}

#[test]
fn numbers_are_never_cut_in_narrow_tables() {
    let snap = SnapshotBuilder::hour_of_history().build();
    for (w, h) in [(60, 18), (80, 24), (100, 30), (120, 34), (160, 48)] {
        let lines = screen(&snap, &UiState::default(), w, h);
        for l in &lines {
            assert!(!l.contains("<0.00 "), "{w}x{h}: cut p-value: {l}");
            assert!(!l.contains("<0.00│"), "{w}x{h}: cut p-value: {l}");
        }
        must_find(&lines, "0.001 ");
    }
}

#[test]
fn every_symbol_is_one_cell_wide() {
    // Wide or emoji-presentation symbols break alignment on some terminals: none are used.
    let snaps = [
        SnapshotBuilder::new().build(),
        SnapshotBuilder::new()
            .prompt(true)
            .sync_age_s(Some(9.0))
            .sensor_lost(true)
            .paused(true)
            .build(),
        SnapshotBuilder::new().ended(true).build(),
    ];
    for snap in &snaps {
        for mode in [Mode::Normal, Mode::Help, Mode::ConfirmEnd] {
            let ui = UiState {
                mode,
                ..UiState::default()
            };
            let buf = buffer(snap, &ui, 160, 48);
            for cell in buf.content() {
                let w = ratatui::text::Span::raw(cell.symbol()).width();
                assert!(w <= 1, "{:?} is {w} cells wide", cell.symbol());
                for ch in cell.symbol().chars() {
                    assert!(
                        !matches!(ch as u32, 0x2600..=0x26FF | 0x1F300..=0x1FAFF | 0x25B6),
                        "emoji-capable symbol {ch:?}"
                    );
                }
            }
        }
    }
}

#[test]
fn trace_grid_rows_carry_their_labels() {
    // The dotted grid line at 90/180/270 lies on the row labelled with it.
    let snap = SnapshotBuilder::new().build();
    for (w, h) in [(80, 24), (160, 48), (100, 30)] {
        let lines = screen(&snap, &UiState::default(), w, h);
        for label in ["180°", " 90°"] {
            let row = lines
                .iter()
                .find(|l| l.contains(&format!("││{label} ")))
                .unwrap_or_else(|| panic!("{w}x{h}: no {label} row:\n{}", dump(&lines)));
            let after = row.split(&format!("││{label} ")).nth(1).unwrap();
            let dots = after
                .chars()
                .filter(|c| ('\u{2801}'..='\u{28ff}').contains(c))
                .count();
            assert!(
                dots >= 10,
                "{w}x{h}: row {label} has {dots} grid dots: {row}"
            );
        }
    }
}

#[test]
fn key_feedback_shows_on_the_glance_line_at_80_columns() {
    let snap = SnapshotBuilder::new().build();
    let mut ui = UiState::default();
    ui.handle_key(
        crossterm::event::KeyEvent::new(
            crossterm::event::KeyCode::Char('f'),
            crossterm::event::KeyModifiers::NONE,
        ),
        &snap,
    );
    let lines = screen(&snap, &ui, 80, 24);
    let g = must_find(&lines, "» flight stop marked");
    assert!(lines[g].contains("FLYING"), "{}", lines[g]);
    ui.tick(10.0);
    let lines = screen(&snap, &ui, 80, 24);
    assert!(find(&lines, "flight stop marked").is_none());
}

#[test]
fn dial_shows_north_and_the_arena_mark_when_they_coincide() {
    // Ten epochs leave the smallest dial at 80x24 (the demo protocol's case).
    let mut snap = SnapshotBuilder::new().epochs(10).build();
    snap.arena_bearing_deg = 0.0;
    snap.sun_azimuth_deg = 90.0;
    for (w, h) in [(80, 24), (160, 48)] {
        let lines = screen(&snap, &UiState::default(), w, h);
        // Inside the dial's border only (its legend, on the bottom border, also has A and *).
        let top = must_find(&lines, "┌ dial");
        let width = lines[top].chars().skip(1).position(|c| c == '┐').unwrap() + 2;
        let bottom = top
            + lines[top..]
                .iter()
                .position(|l| l.starts_with('└'))
                .unwrap();
        let dial: Vec<String> = lines[top + 1..bottom]
            .iter()
            .map(|l| l.chars().skip(1).take(width - 2).collect())
            .collect();
        let text = dial.join("\n");
        for mark in ['N', 'A', 'E', '*'] {
            assert!(text.contains(mark), "{w}x{h}: {mark} missing:\n{text}");
        }
    }
}

#[test]
fn trace_axis_labels_carry_the_degree_sign() {
    // Every heading on the trace's axis is an angle and says so, at every layout size.
    let snap = SnapshotBuilder::new().build();
    for (w, h) in [(44, 14), (80, 24), (160, 48)] {
        let lines = screen(&snap, &UiState::default(), w, h);
        let label = "  0°";
        assert!(
            lines.iter().any(|l| l.contains(&format!("│{label} "))),
            "{w}x{h}: no axis label {label:?}:\n{}",
            dump(&lines)
        );
        // No bare number left on the axis.
        assert!(
            !lines
                .iter()
                .any(|l| ["│360 ", "│270 ", "│180 ", "│ 90 ", "│  0 "]
                    .iter()
                    .any(|bare| l.contains(bare))),
            "{w}x{h}: axis label without °:\n{}",
            dump(&lines)
        );
    }
}

#[test]
fn sun_frame_epoch_table_names_the_frame_of_its_means() {
    // The epoch means exist in the world and arena frames only: in the sun frame the table's
    // header must not pass its world means off as the frame on screen.
    let snap = SnapshotBuilder::new().epochs(10).build();
    for (w, h) in [(60, 18), (80, 24), (160, 48)] {
        let sun = UiState {
            frame: HeadingFrame::Sun,
            ..UiState::default()
        };
        let lines = screen(&snap, &sun, w, h);
        let title = must_find(&lines, " epochs ");
        assert!(
            lines[title].contains("sun frame, means in world°"),
            "{w}x{h}: {}",
            lines[title]
        );
        // The other frames name their own column and need no note.
        for frame in [HeadingFrame::World, HeadingFrame::Arena] {
            let ui = UiState {
                frame,
                ..UiState::default()
            };
            let lines = screen(&snap, &ui, w, h);
            assert!(find(&lines, "means in").is_none(), "{w}x{h}: {frame:?}");
            must_find(&lines, &format!("{}°", frame.name()));
        }
    }
}

#[test]
fn prompt_is_not_late_the_moment_it_appears() {
    // The engine publishes countdown_s = -waiting_s (the plan counts prompts as instant): a
    // prompt four seconds old is due now, not late.
    let mut snap = SnapshotBuilder::new().prompt(true).build();
    for waiting_s in [0.0, 0.3, 4.0, 59.0] {
        if let Some(p) = snap.prompt.as_mut() {
            p.waiting_s = waiting_s;
            p.countdown_s = -waiting_s;
        }
        let lines = screen(&snap, &UiState::default(), 80, 24);
        assert!(
            find(&lines, "LATE").is_none(),
            "waiting {waiting_s} s:\n{}",
            dump(&lines)
        );
        must_find(&lines, "next epoch due now");
    }
    if let Some(p) = snap.prompt.as_mut() {
        p.waiting_s = 4.0;
        p.countdown_s = -4.0;
    }
    let lines = screen(&snap, &UiState::default(), 80, 24);
    must_find(&lines, "(0:56 to go)");
    must_find(&lines, "waiting 0:04");
}

#[test]
fn help_explains_every_column_and_abbreviation() {
    // The operator meets `p held`, `bearing`, `hold r`... on the main screen: the help names each.
    let snap = SnapshotBuilder::new().build();
    let ui = UiState {
        mode: Mode::Help,
        ..UiState::default()
    };
    for (w, h) in [(80, 24), (160, 48)] {
        let lines = help_pages(&snap, &ui, w, h);
        for (word, meaning) in [
            ("az el", "sun azimuth"),
            ("hold r", "r of the current epoch"),
            ("bearing", "true bearing of the arena's 0 mark"),
            ("flown", "flying time"),
            ("n", "headings scored"),
            ("world°", "mean heading of the epoch from true north"),
            ("r", "mean vector length"),
            ("session r", "r over all epochs"),
            (
                "p held",
                "p of a held heading; – until 30 s of flight: too short",
            ),
            ("state", "wait · ► now · done · skip"),
            ("turn", "commanded arena turn"),
            ("health", "saved = last write to disk"),
        ] {
            assert!(
                lines
                    .iter()
                    .any(|l| l.contains(&format!("{word}  {meaning}"))),
                "{w}x{h}: {word:?} not explained:\n{}",
                dump(&lines)
            );
        }
        // Both pages fit the screen: the last explanation and the page hint are not cut off.
        if h == 24 {
            must_find(&lines, "page 2 of 2");
            must_find(&lines, "Space: back to the keys");
        }
    }
}

/// The dial's inside (within its border) at `w`×`h`, as rows of characters.
fn dial_inside(lines: &[String]) -> Vec<Vec<char>> {
    let top = must_find(lines, "┌ dial");
    let width = lines[top].chars().skip(1).position(|c| c == '┐').unwrap() + 2;
    let bottom = top
        + lines[top..]
            .iter()
            .position(|l| l.starts_with('└'))
            .unwrap();
    lines[top + 1..bottom]
        .iter()
        .map(|l| l.chars().skip(1).take(width - 2).collect())
        .collect()
}

#[test]
fn dial_labels_never_share_or_touch_a_cell_at_small_sizes() {
    // N E S W, the arena mark, the sun and the needle's tip: each once, none in or beside
    // another's cell on its row, whatever the bearings, at 80x24 and smaller.
    let frames = [HeadingFrame::World, HeadingFrame::Arena, HeadingFrame::Sun];
    for (w, h) in [(44, 14), (60, 18), (80, 24), (100, 30)] {
        for epochs in [5, 10] {
            let base = SnapshotBuilder::new().epochs(epochs).build();
            for frame in frames {
                let ui = UiState {
                    frame,
                    ..UiState::default()
                };
                for arena in (0..360).step_by(45) {
                    for sun in (0..360).step_by(45) {
                        for heading in (0..360).step_by(90) {
                            let mut snap = base.clone();
                            snap.arena_bearing_deg = f64::from(arena) + 7.0;
                            snap.sun_azimuth_deg = f64::from(sun);
                            snap.world_heading_deg = Some(f64::from(heading) + 3.0);
                            let inside = dial_inside(&screen(&snap, &ui, w, h));
                            let mut at = Vec::new();
                            for (r, row) in inside.iter().enumerate() {
                                for (c, ch) in row.iter().enumerate() {
                                    if "NESWA*●".contains(*ch) {
                                        at.push((*ch, r, c));
                                    }
                                }
                            }
                            let text = || {
                                inside
                                    .iter()
                                    .map(|r| r.iter().collect::<String>())
                                    .collect::<Vec<_>>()
                                    .join("\n")
                            };
                            let case = format!(
                                "{w}x{h} {epochs} epochs {frame:?} arena {arena} sun {sun} heading {heading}"
                            );
                            for mark in "NESWA*●".chars() {
                                let n = at.iter().filter(|(ch, _, _)| *ch == mark).count();
                                assert_eq!(n, 1, "{case}: {mark} shown {n} times:\n{}", text());
                            }
                            for (i, a) in at.iter().enumerate() {
                                for b in &at[i + 1..] {
                                    assert!(
                                        a.1 != b.1 || a.2.abs_diff(b.2) > 1,
                                        "{case}: {} touches {}:\n{}",
                                        a.0,
                                        b.0,
                                        text()
                                    );
                                }
                            }
                        }
                    }
                }
            }
        }
    }
}

#[test]
fn heading_needle_is_solid_blocks_unlike_the_dashed_evector() {
    // Heading due east, e-vector north-south: the needle runs along the centre row in solid
    // blocks, the e-vector up the centre column in braille dots; the same in the mono theme,
    // where colour cannot tell them apart.
    let mut snap = SnapshotBuilder::new().build();
    snap.world_heading_deg = Some(90.0);
    snap.zenith_evector_deg = 0.0;
    snap.arena_bearing_deg = 200.0;
    snap.sun_azimuth_deg = 240.0;
    for theme in [ThemeKind::Sunlight, ThemeKind::Mono] {
        for (w, h) in [(80, 24), (160, 48)] {
            let inside = dial_inside(&screen(&snap, &UiState::with_theme(theme), w, h));
            let (rows, cols) = (inside.len(), inside[0].len());
            let text = inside
                .iter()
                .map(|r| r.iter().collect::<String>())
                .collect::<Vec<_>>()
                .join("\n");
            let mid = rows / 2;
            let blocks = (mid.saturating_sub(1)..=mid + 1)
                .map(|r| inside[r].iter().filter(|c| **c == '█').count())
                .max()
                .unwrap();
            assert!(blocks >= 3, "{theme:?} {w}x{h}: needle not solid:\n{text}");
            // The e-vector column above and below the centre: dots, never needle blocks.
            let centre_cols = cols / 2 - 1..=cols / 2;
            for r in (1..mid.saturating_sub(1)).chain(mid + 2..rows - 1) {
                for c in centre_cols.clone() {
                    assert_ne!(
                        inside[r][c], '█',
                        "{theme:?} {w}x{h}: e-vector drawn like the needle:\n{text}"
                    );
                }
            }
            let dots = (1..mid.saturating_sub(1))
                .filter(|&r| {
                    centre_cols
                        .clone()
                        .any(|c| ('\u{2801}'..='\u{28ff}').contains(&inside[r][c]))
                })
                .count();
            assert!(dots >= 2, "{theme:?} {w}x{h}: no e-vector dots:\n{text}");
        }
    }
}

#[test]
fn the_dial_draws_the_evector_shown_and_none_under_a_diffuser() {
    // The dashed axis is the e-vector the animal is shown: a filter's axis moves it, and a
    // diffuser (no polarization) removes it.
    let ui = UiState::default();
    let count = |snap: &Snapshot| {
        let buf = buffer(snap, &ui, 120, 40);
        let theme = skybearing::tui::theme::Theme::new(ui.theme);
        buf.content()
            .iter()
            .filter(|c| c.fg == theme.evector && c.symbol() != " ")
            .count()
    };
    let mut snap = SnapshotBuilder::new().build();
    snap.evector_shown_deg = Some(0.0);
    let along_north = screen(&snap, &ui, 120, 40);
    let shown = count(&snap);
    snap.evector_shown_deg = Some(90.0);
    assert_ne!(screen(&snap, &ui, 120, 40), along_north);
    snap.evector_shown_deg = None;
    assert!(shown > 0 && count(&snap) == 0, "{shown}");
}

#[test]
fn epoch_table_shows_p_held_from_the_snapshot() {
    // The screen renders the engine's p_oriented as it is: a p, the floor as "≤0.001", and
    // "–" while the epoch holds too little flight for the test (None).
    let mut snap = SnapshotBuilder::new().epochs(4).build();
    for (e, p) in snap
        .epochs
        .iter_mut()
        .zip([Some(0.0123), Some(0.001), None, Some(0.47)])
    {
        e.n = 5_000;
        e.mean_world_deg = Some(100.0);
        e.mean_arena_deg = Some(10.0);
        e.r = 0.5;
        e.p_oriented = p;
    }
    let lines = screen(&snap, &UiState::default(), 160, 48);
    let header = must_find(&lines, "p held");
    let col = lines[header].find("p held").expect("header");
    let cells: Vec<String> = lines[header + 1..]
        .iter()
        .take(4)
        .map(|l| {
            l.chars()
                .skip(lines[header][..col].chars().count())
                .take(6)
                .collect()
        })
        .collect();
    assert_eq!(
        cells.iter().map(|c| c.trim()).collect::<Vec<_>>(),
        ["0.012", "≤0.001", "–", "0.47"],
        "{}",
        dump(&lines)
    );
}

#[test]
fn a_gps_note_stands_beside_the_site_and_a_clock_warning_is_flagged() {
    let mut snap = SnapshotBuilder::new().build();
    snap.site_note = Some(skybearing::rig::gps::SiteNote {
        text: "GPS; laptop clock +3.5 s off".into(),
        warning: true,
    });
    let ui = UiState::default();
    for (w, h) in [(80, 24), (160, 48)] {
        let lines = screen(&snap, &ui, w, h);
        let y = must_find(&lines, "Larkfield Meadow (demo)");
        let buf = buffer(&snap, &ui, w, h);
        let x = lines[y].find("GPS; laptop clock +3.5 s off");
        let x = x.unwrap_or_else(|| panic!("no note at {w}x{h}:\n{}", dump(&lines)));
        // Flagged: reverse video in every theme (theme.flag).
        let col = lines[y][..x].chars().count() as u16;
        let cell = &buf[(col, y as u16)];
        assert!(
            cell.bg != Color::Reset || cell.modifier.contains(Modifier::REVERSED),
            "the clock warning is not flagged at {w}x{h}: {cell:?}"
        );
    }
    // A fix with a good clock: the plain word.
    snap.site_note = Some(skybearing::rig::gps::SiteNote {
        text: "GPS".into(),
        warning: false,
    });
    let lines = screen(&snap, &ui, 80, 24);
    must_find(&lines, "Larkfield Meadow (demo) GPS");
}
