//! What the screen remembers between frames, and the keys as a pure state machine.
//!
//! [`UiState::handle_key`] turns one key press into zero or more [`Command`]s for the engine; it
//! reads the latest [`Snapshot`] (to know, for example, whether `f` means stop or start) and
//! never touches the terminal, so every key can be tested without one.

use crate::engine::snapshot::{Command, Snapshot};
use crate::tui::theme::ThemeKind;
use crossterm::event::{KeyCode, KeyEvent, KeyEventKind, KeyModifiers};

/// Longest note the input line accepts, in characters.
pub const NOTE_MAX_CHARS: usize = 200;

/// Seconds (of real time, not session time) a feedback message stays on screen.
pub const FLASH_S: f64 = 4.0;

/// Trace spans the `z` key cycles through, seconds.
pub const TRACE_SPANS_S: [f64; 5] = [120.0, 300.0, 600.0, 1800.0, 3600.0];

/// Which reference frame the dial and the trace show headings in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum HeadingFrame {
    /// Relative to the arena's 0 mark.
    Arena,
    /// Relative to true north.
    #[default]
    World,
    /// Relative to the sun's azimuth (0 = toward the sun).
    Sun,
}

impl HeadingFrame {
    /// Next frame in the cycle arena → world → sun → arena.
    pub fn next(self) -> Self {
        match self {
            HeadingFrame::Arena => HeadingFrame::World,
            HeadingFrame::World => HeadingFrame::Sun,
            HeadingFrame::Sun => HeadingFrame::Arena,
        }
    }

    /// Previous frame in the cycle.
    pub fn prev(self) -> Self {
        self.next().next()
    }

    /// Short name shown on screen.
    pub fn name(self) -> &'static str {
        match self {
            HeadingFrame::Arena => "arena",
            HeadingFrame::World => "world",
            HeadingFrame::Sun => "sun",
        }
    }
}

/// What the keyboard is doing right now.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub enum Mode {
    /// Keys are commands.
    #[default]
    Normal,
    /// Typing a note; the text so far.
    Note(String),
    /// `q` was pressed: `y` ends the session, any other key cancels.
    ConfirmEnd,
    /// `s` was pressed: `y` skips the epoch, any other key cancels.
    ConfirmSkip,
    /// The help overlay is open; Space, → or PageDown shows its next page when it has more
    /// than one, any other key closes it.
    Help,
}

/// Screen state kept between frames.
#[derive(Debug, Clone, PartialEq)]
pub struct UiState {
    /// Keyboard mode.
    pub mode: Mode,
    /// Frame of the dial and trace.
    pub frame: HeadingFrame,
    /// Colours.
    pub theme: ThemeKind,
    /// Index into [`TRACE_SPANS_S`].
    pub span_index: usize,
    /// Draw the trace with half-block marks (bolder, coarser) instead of braille dots.
    pub bold_marks: bool,
    /// A short feedback line and the real seconds it has left on screen.
    pub flash: Option<(String, f64)>,
    /// The operator asked to end the session (waiting for the engine to close it).
    pub end_requested: bool,
    /// Page of the help overlay (counted from 0; wraps around at the last page).
    pub help_page: usize,
}

impl Default for UiState {
    fn default() -> Self {
        UiState {
            mode: Mode::Normal,
            frame: HeadingFrame::World,
            theme: ThemeKind::Sunlight,
            span_index: 2,
            bold_marks: false,
            flash: None,
            end_requested: false,
            help_page: 0,
        }
    }
}

impl UiState {
    /// A fresh state with the given theme.
    pub fn with_theme(theme: ThemeKind) -> Self {
        UiState {
            theme,
            ..UiState::default()
        }
    }

    /// Seconds of history the trace shows.
    pub fn trace_span_s(&self) -> f64 {
        TRACE_SPANS_S[self.span_index.min(TRACE_SPANS_S.len() - 1)]
    }

    /// The feedback message to show now, if any.
    pub fn flash(&self) -> Option<&str> {
        self.flash.as_ref().map(|(text, _)| text.as_str())
    }

    /// Lets `dt_s` seconds of real time pass (feedback messages expire). Real time, because a
    /// simulated session may run many times faster than the operator reads.
    pub fn tick(&mut self, dt_s: f64) {
        if let Some((_, left)) = &mut self.flash {
            *left -= dt_s.max(0.0);
            if *left <= 0.0 {
                self.flash = None;
            }
        }
    }

    fn say(&mut self, text: impl Into<String>, _snap: &Snapshot) {
        self.flash = Some((text.into(), FLASH_S));
    }

    /// Handles one key event and returns the commands to send to the engine.
    ///
    /// Only presses (and auto-repeats) count; releases are ignored. Ctrl-C always sends
    /// [`Command::EndSession`] at once (in raw mode it is the only way an interrupt arrives).
    pub fn handle_key(&mut self, key: KeyEvent, snap: &Snapshot) -> Vec<Command> {
        if key.kind == KeyEventKind::Release {
            return Vec::new();
        }
        let ctrl = key.modifiers.contains(KeyModifiers::CONTROL);
        if ctrl && matches!(key.code, KeyCode::Char('c') | KeyCode::Char('C')) {
            self.mode = Mode::Normal;
            self.end_requested = true;
            self.say("Ctrl-C: ending the session…", snap);
            return vec![Command::EndSession];
        }
        if snap.ended {
            // Nothing can be commanded any more; any key just closes overlays.
            self.mode = Mode::Normal;
            return Vec::new();
        }
        match std::mem::take(&mut self.mode) {
            Mode::Normal => self.normal_key(key, snap),
            Mode::Help => {
                if matches!(
                    key.code,
                    KeyCode::Char(' ') | KeyCode::Right | KeyCode::PageDown
                ) {
                    self.help_page += 1;
                    self.mode = Mode::Help;
                }
                Vec::new()
            }
            Mode::ConfirmEnd => {
                if matches!(key.code, KeyCode::Char('y') | KeyCode::Char('Y')) && !ctrl {
                    self.end_requested = true;
                    self.say("ending the session…", snap);
                    vec![Command::EndSession]
                } else {
                    self.say("end cancelled, session goes on", snap);
                    Vec::new()
                }
            }
            Mode::ConfirmSkip => {
                if matches!(key.code, KeyCode::Char('y') | KeyCode::Char('Y')) && !ctrl {
                    self.say(format!("skipping epoch {}", snap.epoch), snap);
                    vec![Command::SkipEpoch]
                } else {
                    self.say("skip cancelled", snap);
                    Vec::new()
                }
            }
            Mode::Note(mut text) => match key.code {
                KeyCode::Enter => {
                    let note = text.trim().to_string();
                    if note.is_empty() {
                        self.say("empty note not saved", snap);
                        Vec::new()
                    } else {
                        self.say("note sent", snap);
                        vec![Command::Note(note)]
                    }
                }
                KeyCode::Esc => {
                    self.say("note cancelled", snap);
                    Vec::new()
                }
                KeyCode::Backspace => {
                    text.pop();
                    self.mode = Mode::Note(text);
                    Vec::new()
                }
                KeyCode::Char(c) if !ctrl && !c.is_control() => {
                    if text.chars().count() < NOTE_MAX_CHARS {
                        text.push(c);
                    }
                    self.mode = Mode::Note(text);
                    Vec::new()
                }
                KeyCode::Char('u') if ctrl => {
                    self.mode = Mode::Note(String::new());
                    Vec::new()
                }
                _ => {
                    self.mode = Mode::Note(text);
                    Vec::new()
                }
            },
        }
    }

    fn normal_key(&mut self, key: KeyEvent, snap: &Snapshot) -> Vec<Command> {
        let ctrl = key.modifiers.contains(KeyModifiers::CONTROL);
        if ctrl {
            return Vec::new();
        }
        match key.code {
            KeyCode::Char('f') | KeyCode::Char('F') => {
                if snap.flying {
                    self.say("flight stop marked", snap);
                    vec![Command::FlightStop]
                } else {
                    self.say("flight start marked", snap);
                    vec![Command::FlightStart]
                }
            }
            KeyCode::Char('n') | KeyCode::Char('N') => {
                self.mode = Mode::Note(String::new());
                Vec::new()
            }
            KeyCode::Char('p') | KeyCode::Char('P') => {
                if snap.paused {
                    self.say("resuming", snap);
                    vec![Command::Resume]
                } else {
                    self.say("pausing", snap);
                    vec![Command::Pause]
                }
            }
            KeyCode::Char('w') | KeyCode::Char('W') | KeyCode::Tab => {
                self.frame = self.frame.next();
                Vec::new()
            }
            KeyCode::BackTab => {
                self.frame = self.frame.prev();
                Vec::new()
            }
            KeyCode::Char('s') | KeyCode::Char('S') => {
                self.mode = Mode::ConfirmSkip;
                Vec::new()
            }
            KeyCode::Char('q') | KeyCode::Char('Q') => {
                self.mode = Mode::ConfirmEnd;
                Vec::new()
            }
            KeyCode::Enter => {
                if snap.prompt.is_some() {
                    self.say("prompt confirmed", snap);
                    vec![Command::ConfirmPrompt]
                } else {
                    Vec::new()
                }
            }
            KeyCode::Char('x') | KeyCode::Char('X')
                if snap.prompt.as_ref().is_some_and(|p| p.turn_by_hand) =>
            {
                self.say("could not turn: recorded; the turn is not scored", snap);
                vec![Command::CouldNotTurn]
            }
            KeyCode::Char('b') | KeyCode::Char('B') => {
                if snap.watch.turns_by_hand {
                    self.say("turns are already made by hand", snap);
                    Vec::new()
                } else {
                    self.say("every later turn: a prompt to turn by hand", snap);
                    vec![Command::TurnsByHand]
                }
            }
            KeyCode::Char('?') | KeyCode::Char('h') | KeyCode::F(1) => {
                self.mode = Mode::Help;
                self.help_page = 0;
                Vec::new()
            }
            KeyCode::Char('z') | KeyCode::Char('Z') => {
                self.span_index = (self.span_index + 1) % TRACE_SPANS_S.len();
                Vec::new()
            }
            KeyCode::Char('t') | KeyCode::Char('T') => {
                self.theme = self.theme.next();
                Vec::new()
            }
            KeyCode::Char('m') | KeyCode::Char('M') => {
                self.bold_marks = !self.bold_marks;
                Vec::new()
            }
            _ => Vec::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tui::sample::SnapshotBuilder;

    fn press(c: char) -> KeyEvent {
        KeyEvent::new(KeyCode::Char(c), KeyModifiers::NONE)
    }

    #[test]
    fn release_events_are_ignored() {
        let snap = SnapshotBuilder::new().build();
        let mut ui = UiState::default();
        let mut k = press('q');
        k.kind = KeyEventKind::Release;
        assert!(ui.handle_key(k, &snap).is_empty());
        assert_eq!(ui.mode, Mode::Normal);
    }

    #[test]
    fn help_closes_on_any_key_without_command() {
        let snap = SnapshotBuilder::new().build();
        let mut ui = UiState::default();
        assert!(ui.handle_key(press('?'), &snap).is_empty());
        assert_eq!(ui.mode, Mode::Help);
        assert!(ui.handle_key(press('f'), &snap).is_empty());
        assert_eq!(ui.mode, Mode::Normal);
    }

    #[test]
    fn flash_expires() {
        let snap = SnapshotBuilder::new().t_s(100.0).build();
        let mut ui = UiState::default();
        ui.handle_key(press('f'), &snap);
        assert_eq!(ui.flash(), Some("flight stop marked"));
        ui.tick(FLASH_S - 0.5);
        assert!(ui.flash().is_some());
        ui.tick(1.0);
        assert!(ui.flash().is_none());
    }

    #[test]
    fn note_is_capped() {
        let snap = SnapshotBuilder::new().build();
        let mut ui = UiState::default();
        ui.handle_key(press('n'), &snap);
        for _ in 0..(NOTE_MAX_CHARS + 20) {
            ui.handle_key(press('x'), &snap);
        }
        match &ui.mode {
            Mode::Note(t) => assert_eq!(t.chars().count(), NOTE_MAX_CHARS),
            m => panic!("{m:?}"),
        }
    }
}
