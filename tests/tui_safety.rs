//! The live screen's safety readouts on ratatui's TestBackend (issue 14, points 1–6): the
//! turn countdown in every state, the sun below the horizon, stale headings, turntable faults,
//! the end-of-session summary, and the not-flying and abort timers.

use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::buffer::Buffer;
use ratatui::style::Modifier;
use skybearing::engine::snapshot::{AutoAbort, NextTurn, Snapshot, TurnState};
use skybearing::tui::panels::overlays::NoSunConfirm;
use skybearing::tui::sample::SnapshotBuilder;
use skybearing::tui::{Mode, Theme, ThemeKind, UiState, draw};

fn buffer(snap: &Snapshot, ui: &UiState, w: u16, h: u16) -> Buffer {
    let mut terminal = Terminal::new(TestBackend::new(w, h)).expect("terminal");
    terminal.draw(|f| draw(f, snap, ui)).expect("draw");
    terminal.backend().buffer().clone()
}

fn lines_of(buf: &Buffer) -> Vec<String> {
    let a = buf.area;
    (0..a.height)
        .map(|y| (0..a.width).map(|x| buf[(x, y)].symbol()).collect())
        .collect()
}

fn screen(snap: &Snapshot, ui: &UiState, w: u16, h: u16) -> String {
    lines_of(&buffer(snap, ui, w, h)).join("\n")
}

/// The style of the first cell of `needle` on screen.
fn style_at(buf: &Buffer, needle: &str) -> ratatui::style::Style {
    let lines = lines_of(buf);
    for (y, l) in lines.iter().enumerate() {
        if let Some(byte) = l.find(needle) {
            let x = l[..byte].chars().count();
            return buf[(x as u16, y as u16)].style();
        }
    }
    panic!("{needle:?} not on screen:\n{}", lines.join("\n"));
}

/// The snapshot as the old engine published it outside a running epoch: no countdown.
fn between_epochs(state: TurnState, deg: Option<f64>, in_s: Option<f64>) -> Snapshot {
    let mut snap = SnapshotBuilder::new().build();
    snap.next_turn_in_s = None;
    snap.next_turn_deg = None;
    snap.watch.next_turn = NextTurn { state, deg, in_s };
    snap
}

#[test]
fn countdown_never_says_no_more_turns_while_turns_remain() {
    let ui = UiState::default();
    let cases = [
        (TurnState::UnderWay, Some(90.0), None, "turn +90° under way"),
        (
            TurnState::AwaitingOperator,
            Some(-90.0),
            None,
            "turn -90°: waiting for you",
        ),
        (
            TurnState::AwaitingOperator,
            Some(180.0),
            Some(300.0),
            "after Enter: next turn +180° in 5:00",
        ),
        (
            TurnState::Fault,
            Some(90.0),
            None,
            "turn +90° by hand: turntable fault",
        ),
        (
            TurnState::HeldSensorLost,
            Some(90.0),
            None,
            "turn +90° held: sensor lost",
        ),
        (
            TurnState::ClockStopped,
            Some(90.0),
            Some(42.0),
            "next turn +90° in 0:42 (clock stopped)",
        ),
    ];
    for (state, deg, in_s, words) in cases {
        let snap = between_epochs(state, deg, in_s);
        for (w, h) in [(80, 24), (160, 48), (40, 12)] {
            let text = screen(&snap, &ui, w, h);
            assert!(
                !text.contains("no more turns"),
                "{state:?} at {w}x{h}:\n{text}"
            );
            if w >= 80 {
                assert!(
                    text.contains(words),
                    "{state:?} at {w}x{h}: {words:?}\n{text}"
                );
            }
        }
    }
    let snap = between_epochs(TurnState::NoneLeft, None, None);
    assert!(screen(&snap, &ui, 80, 24).contains("no more turns"));
}

#[test]
fn sun_below_the_horizon_is_marked_in_its_own_style() {
    let mut snap = SnapshotBuilder::new().build();
    let day = buffer(&snap, &UiState::default(), 120, 34);
    let normal = style_at(&day, "43.9°");
    snap.sun_elevation_deg = -22.6;
    let night = buffer(&snap, &UiState::default(), 120, 34);
    let text = lines_of(&night).join("\n");
    assert!(text.contains("-22.6° BELOW HORIZON"), "{text}");
    let marked = style_at(&night, "-22.6°");
    assert_ne!(
        marked, normal,
        "a sun below the horizon must not look like a normal reading"
    );
    assert!(marked.add_modifier.contains(Modifier::BOLD));
}

#[test]
fn no_sun_confirmation_lists_the_plan_warnings_and_asks() {
    let warnings = vec![
        "epoch 1: the sun is below the horizon for the whole epoch (elevation -22.6 to -21.9 deg)"
            .to_string(),
    ];
    let theme = Theme::new(ThemeKind::Sunlight);
    let mut terminal = Terminal::new(TestBackend::new(80, 24)).expect("terminal");
    terminal
        .draw(|f| {
            let theme = &theme;
            let warnings = &warnings;
            f.render_widget(NoSunConfirm { warnings, theme }, f.area())
        })
        .expect("draw");
    let text = lines_of(terminal.backend().buffer()).join("\n");
    assert!(text.contains("SUN BELOW THE HORIZON"), "{text}");
    assert!(text.contains("below the horizon for the whole"), "{text}");
    assert!(text.contains("start anyway"), "{text}");
}

#[test]
fn a_stale_heading_does_not_look_live() {
    let snap = SnapshotBuilder::new().build();
    let live = buffer(&snap, &UiState::default(), 80, 24);
    let heading = format!("{:.0}°", snap.world_heading_deg.expect("heading"));
    assert!(
        style_at(&live, &heading)
            .add_modifier
            .contains(Modifier::UNDERLINED)
    );
    let mut stale = snap.clone();
    stale.watch.heading_stale = true;
    stale.watch.sample_age_s = Some(7.0);
    let buf = buffer(&stale, &UiState::default(), 80, 24);
    let text = lines_of(&buf).join("\n");
    assert!(text.contains("STALE 0:07 old"), "{text}");
    let style = style_at(&buf, &heading);
    assert!(
        !style.add_modifier.contains(Modifier::UNDERLINED),
        "{style:?}"
    );
    assert!(
        style.add_modifier.contains(Modifier::CROSSED_OUT),
        "{style:?}"
    );
}

#[test]
fn turntable_fault_shows_a_badge_and_the_prompt_offers_could_not_turn_and_by_hand() {
    let mut snap = SnapshotBuilder::new().prompt(true).build();
    snap.watch.turntable_faults = 2;
    if let Some(p) = snap.prompt.as_mut() {
        p.turn_by_hand = true;
    }
    let text = screen(&snap, &UiState::default(), 120, 34);
    assert!(text.contains("TURNTABLE FAULT ×2"), "{text}");
    assert!(text.contains("could not turn"), "{text}");
    assert!(text.contains("later turns by hand"), "{text}");
    snap.watch.turns_by_hand = true;
    let text = screen(&snap, &UiState::default(), 120, 34);
    assert!(text.contains("BY HAND"), "{text}");
    assert!(
        !text.contains("later turns by hand"),
        "already chosen:\n{text}"
    );
}

#[test]
fn end_frame_shows_the_summary_and_the_folder() {
    let mut snap = SnapshotBuilder::new().ended(true).build();
    snap.watch.end_summary = vec![
        "hold r world 0.810, arena 0.220 (all scored samples)".to_string(),
        "turns kept: 3 of 4 scored (1 of 5 turns not scored)".to_string(),
        "turn test: 4 turns, mean world shift -3.0°, p world kept 0.012, p arena kept 0.640"
            .to_string(),
    ];
    let text = screen(&snap, &UiState::default(), 100, 30);
    for l in &snap.watch.end_summary {
        assert!(text.contains(l.as_str()), "{l:?}\n{text}");
    }
    assert!(text.contains("sessions/20260614T073000Z-lm-07"), "{text}");
    assert!(text.contains("any key closes"), "{text}");
}

#[test]
fn not_flying_shows_for_how_long_and_when_the_abort_fires() {
    let mut snap = SnapshotBuilder::new().flying(false).build();
    snap.watch.not_flying_for_s = Some(42.0);
    snap.watch.auto_abort = Some(AutoAbort {
        in_s: 78.0,
        reason: "no flight".to_string(),
    });
    let text = screen(&snap, &UiState::default(), 120, 34);
    assert!(text.contains("NOT FLYING 0:42"), "{text}");
    // 09:42:30 local now, plus 78 s.
    assert!(
        text.contains("ABORT (no flight) in 1:18 at 09:43:48"),
        "{text}"
    );
}

#[test]
fn ending_early_says_it_is_recorded_aborted_and_batch_drops_it() {
    let snap = SnapshotBuilder::new().build();
    let ui = UiState {
        mode: Mode::ConfirmEnd,
        ..UiState::default()
    };
    let text = screen(&snap, &ui, 80, 24);
    assert!(text.contains("ABORTED"), "{text}");
    assert!(text.contains("--include-incomplete"), "{text}");
    let mut done = snap.clone();
    done.watch.end_now_status = "complete".to_string();
    let text = screen(&done, &ui, 80, 24);
    assert!(text.contains("recorded as complete"), "{text}");
    assert!(!text.contains("ABORTED"), "{text}");
}
