//! Key handling as a pure state machine: each key gives its command, confirmations guard the
//! irreversible ones, and the note line collects text.

use crossterm::event::{KeyCode, KeyEvent, KeyEventKind, KeyModifiers};
use skybearing::engine::snapshot::{Command, Snapshot};
use skybearing::tui::sample::SnapshotBuilder;
use skybearing::tui::{HeadingFrame, Mode, ThemeKind, UiState};

fn key(code: KeyCode) -> KeyEvent {
    KeyEvent::new(code, KeyModifiers::NONE)
}

fn ch(c: char) -> KeyEvent {
    key(KeyCode::Char(c))
}

fn ctrl(c: char) -> KeyEvent {
    KeyEvent::new(KeyCode::Char(c), KeyModifiers::CONTROL)
}

fn flying() -> Snapshot {
    SnapshotBuilder::new().flying(true).build()
}

#[test]
fn f_toggles_flight_by_the_snapshot() {
    let mut ui = UiState::default();
    assert_eq!(ui.handle_key(ch('f'), &flying()), vec![Command::FlightStop]);
    let grounded = SnapshotBuilder::new().flying(false).build();
    assert_eq!(
        ui.handle_key(ch('f'), &grounded),
        vec![Command::FlightStart]
    );
}

#[test]
fn p_pauses_or_resumes_by_the_snapshot() {
    let mut ui = UiState::default();
    assert_eq!(ui.handle_key(ch('p'), &flying()), vec![Command::Pause]);
    let paused = SnapshotBuilder::new().paused(true).build();
    assert_eq!(ui.handle_key(ch('p'), &paused), vec![Command::Resume]);
}

#[test]
fn q_then_y_ends_the_session() {
    let snap = flying();
    let mut ui = UiState::default();
    assert!(ui.handle_key(ch('q'), &snap).is_empty());
    assert_eq!(ui.mode, Mode::ConfirmEnd);
    assert_eq!(ui.handle_key(ch('y'), &snap), vec![Command::EndSession]);
    assert_eq!(ui.mode, Mode::Normal);
    assert!(ui.end_requested);
}

#[test]
fn q_then_anything_but_y_goes_on() {
    let snap = flying();
    for other in [
        ch('n'),
        ch('q'),
        ch('f'),
        key(KeyCode::Esc),
        key(KeyCode::Enter),
        ch(' '),
    ] {
        let mut ui = UiState::default();
        ui.handle_key(ch('q'), &snap);
        let cmds = ui.handle_key(other, &snap);
        assert!(cmds.is_empty(), "{other:?} sent {cmds:?}");
        assert_eq!(ui.mode, Mode::Normal, "{other:?}");
        assert!(!ui.end_requested);
        // The cancelling key does not act as a command itself (f did not mark a stop), and
        // a later `y` is an ordinary key again, not a confirmation.
        assert_eq!(ui.handle_key(ch('y'), &snap), Vec::<Command>::new());
    }
    // Capital Y also confirms.
    let mut ui = UiState::default();
    ui.handle_key(ch('q'), &snap);
    assert_eq!(ui.handle_key(ch('Y'), &snap), vec![Command::EndSession]);
}

#[test]
fn ctrl_c_ends_at_once_in_every_mode() {
    let snap = flying();
    for start in [
        Mode::Normal,
        Mode::Help,
        Mode::ConfirmSkip,
        Mode::Note("half a no".into()),
    ] {
        let mut ui = UiState {
            mode: start.clone(),
            ..UiState::default()
        };
        assert_eq!(
            ui.handle_key(ctrl('c'), &snap),
            vec![Command::EndSession],
            "{start:?}"
        );
    }
}

#[test]
fn s_asks_before_skipping() {
    let snap = flying();
    let mut ui = UiState::default();
    assert!(ui.handle_key(ch('s'), &snap).is_empty());
    assert_eq!(ui.mode, Mode::ConfirmSkip);
    assert_eq!(ui.handle_key(ch('y'), &snap), vec![Command::SkipEpoch]);
    let mut ui = UiState::default();
    ui.handle_key(ch('s'), &snap);
    assert!(ui.handle_key(ch('x'), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Normal);
}

#[test]
fn note_collects_text() {
    let snap = flying();
    let mut ui = UiState::default();
    assert!(ui.handle_key(ch('n'), &snap).is_empty());
    for c in "wind gusy".chars() {
        // Letters that are commands elsewhere (f, p, q, s, n) are just text here.
        assert!(ui.handle_key(ch(c), &snap).is_empty());
    }
    ui.handle_key(key(KeyCode::Backspace), &snap);
    ui.handle_key(key(KeyCode::Backspace), &snap);
    for c in "st; fqps".chars() {
        assert!(ui.handle_key(ch(c), &snap).is_empty());
    }
    assert_eq!(ui.mode, Mode::Note("wind gust; fqps".into()));
    assert_eq!(
        ui.handle_key(key(KeyCode::Enter), &snap),
        vec![Command::Note("wind gust; fqps".into())]
    );
    assert_eq!(ui.mode, Mode::Normal);
}

#[test]
fn note_escape_and_empty_send_nothing() {
    let snap = flying();
    let mut ui = UiState::default();
    ui.handle_key(ch('n'), &snap);
    ui.handle_key(ch('x'), &snap);
    assert!(ui.handle_key(key(KeyCode::Esc), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Normal);
    ui.handle_key(ch('n'), &snap);
    ui.handle_key(ch(' '), &snap);
    assert!(ui.handle_key(key(KeyCode::Enter), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Normal);
}

#[test]
fn enter_confirms_only_a_pending_prompt() {
    let mut ui = UiState::default();
    assert!(ui.handle_key(key(KeyCode::Enter), &flying()).is_empty());
    let prompted = SnapshotBuilder::new().prompt(true).build();
    assert_eq!(
        ui.handle_key(key(KeyCode::Enter), &prompted),
        vec![Command::ConfirmPrompt]
    );
}

#[test]
fn w_and_tab_cycle_frames_without_commands() {
    let snap = flying();
    let mut ui = UiState::default();
    assert_eq!(ui.frame, HeadingFrame::World);
    assert!(ui.handle_key(ch('w'), &snap).is_empty());
    assert_eq!(ui.frame, HeadingFrame::Sun);
    ui.handle_key(key(KeyCode::Tab), &snap);
    assert_eq!(ui.frame, HeadingFrame::Arena);
    ui.handle_key(key(KeyCode::Tab), &snap);
    assert_eq!(ui.frame, HeadingFrame::World);
    ui.handle_key(key(KeyCode::BackTab), &snap);
    assert_eq!(ui.frame, HeadingFrame::Arena);
}

#[test]
fn view_keys_change_only_the_view() {
    let snap = flying();
    let mut ui = UiState::default();
    let span = ui.trace_span_s();
    assert!(ui.handle_key(ch('z'), &snap).is_empty());
    assert_ne!(ui.trace_span_s(), span);
    assert!(ui.handle_key(ch('t'), &snap).is_empty());
    assert_eq!(ui.theme, ThemeKind::Dark);
    assert!(ui.handle_key(ch('m'), &snap).is_empty());
    assert!(ui.bold_marks);
    assert!(ui.handle_key(ch('?'), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Help);
}

#[test]
fn key_releases_and_ended_sessions_send_nothing() {
    let mut ui = UiState::default();
    let mut release = ch('f');
    release.kind = KeyEventKind::Release;
    assert!(ui.handle_key(release, &flying()).is_empty());
    let ended = SnapshotBuilder::new().ended(true).build();
    for k in [
        ch('f'),
        ch('p'),
        ch('n'),
        ch('s'),
        ch('q'),
        key(KeyCode::Enter),
    ] {
        assert!(ui.handle_key(k, &ended).is_empty(), "{k:?}");
    }
}

#[test]
fn help_space_turns_the_page_and_other_keys_close() {
    let snap = flying();
    let mut ui = UiState::default();
    assert!(ui.handle_key(ch('?'), &snap).is_empty());
    assert_eq!((ui.mode.clone(), ui.help_page), (Mode::Help, 0));
    assert!(ui.handle_key(ch(' '), &snap).is_empty());
    assert_eq!((ui.mode.clone(), ui.help_page), (Mode::Help, 1));
    assert!(ui.handle_key(key(KeyCode::Right), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Help);
    // Any other key closes without a command (f would otherwise mark a flight stop).
    assert!(ui.handle_key(ch('f'), &snap).is_empty());
    assert_eq!(ui.mode, Mode::Normal);
    // Opening again starts at the first page.
    ui.handle_key(ch('?'), &snap);
    assert_eq!(ui.help_page, 0);
}
