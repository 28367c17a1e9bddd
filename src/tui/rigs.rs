//! The screen for several rigs run at once: a compact row per rig over its latest snapshot, a
//! key to bring one rig's full view (the single-rig screen, [`render::draw`]) forward and back,
//! and prompts that cannot be missed: the asking rig's row is flagged, a banner names the rig
//! and its question on every view, and the confirm key answers the asking rig.
//!
//! Pure like the rest of `tui`: [`draw_rigs`] renders snapshots, [`RigsUi::handle_key`] turns
//! keys into `(rig index, Command)` pairs; no clock, no I/O.

use crate::engine::snapshot::{Command, Snapshot, TurnState, p_held_text};
use crate::tui::format::{countdown, fit, signed_deg};
use crate::tui::panels::{SYNC_LATE_S, sync_age_s, verdict};
use crate::tui::render;
use crate::tui::state::{Mode, UiState};
use crate::tui::theme::{Theme, ThemeKind};
use crossterm::event::{KeyCode, KeyEvent, KeyEventKind, KeyModifiers};
use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;
use std::sync::Arc;

/// What the several-rig screen remembers between frames.
#[derive(Debug, Clone)]
pub struct RigsUi {
    /// The rigs' names, in the order given to `run`.
    pub names: Vec<String>,
    /// The row the cursor is on.
    pub selected: usize,
    /// The rig whose full view is in front (None: the rows).
    pub focus: Option<usize>,
    /// Each rig's own full-view state (frame, trace span, overlays).
    pub views: Vec<UiState>,
    /// Waiting for `y` to end every session.
    pub confirm_end_all: bool,
    /// A short message (what the last key did).
    pub flash: Option<String>,
    /// Colours.
    pub theme: ThemeKind,
    /// Rigs whose engine has stopped (set by the terminal loop); one that stopped without an
    /// ended snapshot failed, and its row says so.
    pub stopped: Vec<bool>,
}

impl RigsUi {
    /// The rows of `names`, the first selected, no full view.
    pub fn new(names: Vec<String>, theme: ThemeKind) -> Self {
        let views = names.iter().map(|_| UiState::with_theme(theme)).collect();
        Self {
            names,
            selected: 0,
            focus: None,
            views,
            confirm_end_all: false,
            flash: None,
            theme,
            stopped: Vec::new(),
        }
    }

    /// Handles one key; returns the commands to send, each with the index of its rig.
    ///
    /// Rows: ↑/↓ (or the rig's number) select, `v` or Tab brings the selected rig's full view
    /// forward, Enter answers the asking rig ([`asking`]; with none, it opens the selected
    /// rig's view), `x` says the asking rig's turn by hand could not be made, `q` then `y`
    /// ends every session, Ctrl-C ends every session at once. Full view: every key is the
    /// single-rig screen's, except Esc (back to the rows, when no overlay is open) and Enter
    /// when this rig has no prompt but another rig asks (it answers that rig).
    pub fn handle_key(
        &mut self,
        key: KeyEvent,
        snaps: &[Option<Arc<Snapshot>>],
    ) -> Vec<(usize, Command)> {
        if key.kind == KeyEventKind::Release || self.names.is_empty() {
            return Vec::new();
        }
        let ctrl = key.modifiers.contains(KeyModifiers::CONTROL);
        if ctrl && matches!(key.code, KeyCode::Char('c') | KeyCode::Char('C')) {
            self.flash = Some("Ctrl-C: ending every session…".into());
            return self.every_rig(Command::EndSession, snaps);
        }
        let asking = asking(snaps);
        if let Some(k) = self.focus {
            let snap = snaps.get(k).and_then(|s| s.as_ref());
            let view_mode_normal = self.views[k].mode == Mode::Normal;
            if view_mode_normal && key.code == KeyCode::Esc {
                self.focus = None;
                return Vec::new();
            }
            if view_mode_normal
                && key.code == KeyCode::Enter
                && snap.is_none_or(|s| s.prompt.is_none())
                && let Some(a) = asking
            {
                self.flash = Some(format!("{}: prompt confirmed", self.names[a]));
                return vec![(a, Command::ConfirmPrompt)];
            }
            return match snap {
                Some(s) => self.views[k]
                    .handle_key(key, s)
                    .into_iter()
                    .map(|c| (k, c))
                    .collect(),
                None => Vec::new(),
            };
        }
        if self.confirm_end_all {
            self.confirm_end_all = false;
            if matches!(key.code, KeyCode::Char('y') | KeyCode::Char('Y')) && !ctrl {
                self.flash = Some("ending every session…".into());
                return self.every_rig(Command::EndSession, snaps);
            }
            self.flash = Some("end cancelled, the sessions go on".into());
            return Vec::new();
        }
        let n = self.names.len();
        match key.code {
            KeyCode::Up | KeyCode::Char('k') => self.selected = (self.selected + n - 1) % n,
            KeyCode::Down | KeyCode::Char('j') => self.selected = (self.selected + 1) % n,
            KeyCode::Char(c @ '1'..='9') => {
                let k = (c as usize) - ('1' as usize);
                if k < n {
                    self.selected = k;
                }
            }
            KeyCode::Tab | KeyCode::Char('v') | KeyCode::Char('V') => {
                self.focus = Some(self.selected)
            }
            KeyCode::Enter => match asking {
                Some(a) => {
                    self.flash = Some(format!("{}: prompt confirmed", self.names[a]));
                    return vec![(a, Command::ConfirmPrompt)];
                }
                None => self.focus = Some(self.selected),
            },
            KeyCode::Char('x') | KeyCode::Char('X') => {
                if let Some(a) = asking.filter(|&a| {
                    snaps[a]
                        .as_ref()
                        .and_then(|s| s.prompt.as_ref())
                        .is_some_and(|p| p.turn_by_hand)
                }) {
                    self.flash = Some(format!(
                        "{}: could not turn, recorded; the turn is not scored",
                        self.names[a]
                    ));
                    return vec![(a, Command::CouldNotTurn)];
                }
            }
            KeyCode::Char('q') | KeyCode::Char('Q') => self.confirm_end_all = true,
            KeyCode::Char('t') | KeyCode::Char('T') => {
                self.theme = self.theme.next();
                for v in &mut self.views {
                    v.theme = self.theme;
                }
            }
            _ => {}
        }
        Vec::new()
    }

    /// `command` for every rig whose session has not ended.
    fn every_rig(
        &mut self,
        command: Command,
        snaps: &[Option<Arc<Snapshot>>],
    ) -> Vec<(usize, Command)> {
        (0..self.names.len())
            .filter(|&k| {
                !snaps
                    .get(k)
                    .and_then(|s| s.as_ref())
                    .is_some_and(|s| s.ended)
            })
            .map(|k| (k, command.clone()))
            .collect()
    }
}

/// The rig whose prompt has waited longest (the one the banner names and Enter answers).
pub fn asking(snaps: &[Option<Arc<Snapshot>>]) -> Option<usize> {
    snaps
        .iter()
        .enumerate()
        .filter_map(|(k, s)| {
            let s = s.as_ref()?;
            let p = s.prompt.as_ref().filter(|_| !s.ended)?;
            Some((k, p.waiting_s))
        })
        .max_by(|a, b| a.1.total_cmp(&b.1).then(b.0.cmp(&a.0)))
        .map(|(k, _)| k)
}

/// Every rig with a prompt open, in order.
fn all_asking(snaps: &[Option<Arc<Snapshot>>]) -> Vec<usize> {
    (0..snaps.len())
        .filter(|&k| {
            snaps[k]
                .as_ref()
                .is_some_and(|s| s.prompt.is_some() && !s.ended)
        })
        .collect()
}

/// The banner of the asking rig: its name and its question, in words.
fn banner_text(ui: &RigsUi, snaps: &[Option<Arc<Snapshot>>]) -> Option<String> {
    let a = asking(snaps)?;
    let text = snaps[a].as_ref()?.prompt.as_ref()?.text.clone();
    let others: Vec<&str> = all_asking(snaps)
        .into_iter()
        .filter(|&k| k != a)
        .map(|k| ui.names[k].as_str())
        .collect();
    let also = if others.is_empty() {
        String::new()
    } else {
        format!("; also asking: {}", others.join(", "))
    };
    Some(format!(
        "{} ASKS (Enter answers {}{also}): {text}",
        ui.names[a], ui.names[a]
    ))
}

/// The cells of one rig's row: rig, animal, epoch, next turn, hold, last turn, sensor,
/// archive, state.
pub fn row_cells(name: &str, snap: Option<&Snapshot>) -> [String; 9] {
    let Some(s) = snap else {
        return [
            name.to_string(),
            "–".into(),
            "–".into(),
            "starting…".into(),
            "–".into(),
            "–".into(),
            "–".into(),
            "–".into(),
            "waiting for the engine".into(),
        ];
    };
    let epoch = format!("{}/{}", s.epoch, s.epoch_count);
    let nt = &s.watch.next_turn;
    let next = match nt.state {
        TurnState::NoneLeft => "no turn left".to_string(),
        TurnState::Counting => match (nt.deg, nt.in_s) {
            (Some(d), Some(t)) => format!("{} in {}", signed_deg(d), countdown(t)),
            _ => "–".into(),
        },
        TurnState::ClockStopped => "clock stopped".into(),
        TurnState::UnderWay => "turning".into(),
        TurnState::AwaitingOperator => "PROMPT".into(),
        TurnState::Fault => "TURNTABLE FAULT".into(),
        TurnState::HeldSensorLost => "held: sensor lost".into(),
    };
    let hold = match s.epochs.iter().find(|e| e.index == s.epoch) {
        Some(e) if e.n > 0 => format!("r {:.2} p {}", e.r, p_held_text(e.p_oriented)),
        _ => "–".into(),
    };
    let last = s
        .turns
        .iter()
        .rev()
        .find_map(|t| t.world_shift_deg.map(|w| (t.turn_deg, w)))
        .map_or("–".to_string(), |(t, w)| match verdict(t, w) {
            Some(true) => "kept".into(),
            Some(false) => "followed arena".into(),
            None => "small turn".into(),
        });
    let sensor = if s.health.sensor_lost {
        "LOST".to_string()
    } else {
        format!("{:.0} Hz", s.health.rate_hz)
    };
    let archive = match (&s.health.archive_error, sync_age_s(s)) {
        (Some(_), _) => "ERROR".to_string(),
        (None, Some(age)) if age > SYNC_LATE_S => format!("late {age:.0} s"),
        (None, Some(_)) => "ok".into(),
        (None, None) => "not synced".into(),
    };
    let state = if s.ended {
        format!("ended: {}", s.end_reason.as_deref().unwrap_or("–"))
    } else if s.prompt.is_some() {
        "ASKS".into()
    } else if s.paused {
        "paused".into()
    } else if s.flying {
        "flying".into()
    } else {
        "not flying".into()
    };
    [
        name.to_string(),
        s.animal.clone(),
        epoch,
        next,
        hold,
        last,
        sensor,
        archive,
        state,
    ]
}

/// Column headings and widths of the rows.
const COLUMNS: [(&str, usize); 9] = [
    ("rig", 10),
    ("animal", 8),
    ("epoch", 6),
    ("next turn", 14),
    ("hold", 14),
    ("last turn", 14),
    ("sensor", 7),
    ("archive", 10),
    ("state", 24),
];

fn row_line(cells: &[String; 9], width: u16) -> String {
    let mut out = String::new();
    for (k, (c, (_, w))) in cells.iter().zip(COLUMNS).enumerate() {
        if k + 1 == cells.len() {
            out.push_str(c);
        } else {
            out.push_str(&format!("{:<w$} ", fit(c, w)));
        }
    }
    fit(&out, usize::from(width))
}

/// Draws the several-rig screen: the rows (or the focused rig's full view) and, whenever a
/// rig asks, its banner on the top line.
pub fn draw_rigs(frame: &mut Frame, snaps: &[Option<Arc<Snapshot>>], ui: &RigsUi) {
    let theme = Theme::new(ui.theme);
    let area = frame.area();
    if area.is_empty() {
        return;
    }
    let banner = banner_text(ui, snaps);
    if let Some(k) = ui.focus
        && let Some(Some(snap)) = snaps.get(k)
    {
        render::draw(frame, snap, &ui.views[k]);
        // Another rig asking is said over the full view's top line, so it cannot be missed.
        let other_asks = asking(snaps).is_some_and(|a| a != k);
        let top = Rect { height: 1, ..area };
        let text = if other_asks {
            banner.unwrap_or_default()
        } else {
            format!("[{}] full view | Esc: every rig", ui.names[k])
        };
        let style = if other_asks {
            theme.flag(theme.alarm)
        } else {
            theme.strong()
        };
        frame.render_widget(
            Paragraph::new(Line::from(Span::styled(
                format!(
                    "{:<w$}",
                    fit(&text, usize::from(area.width)),
                    w = usize::from(area.width)
                ),
                style,
            ))),
            top,
        );
        return;
    }
    frame.buffer_mut().set_style(area, theme.base());
    let mut lines: Vec<Line> = Vec::new();
    match &banner {
        Some(b) => lines.push(Line::from(Span::styled(
            fit(b, usize::from(area.width)),
            theme.flag(theme.alarm),
        ))),
        None => lines.push(Line::from(Span::styled(
            format!("skybearing: {} rigs", ui.names.len()),
            theme.strong(),
        ))),
    }
    lines.push(Line::from(""));
    let header: [String; 9] = COLUMNS.map(|(h, _)| h.to_string());
    lines.push(Line::from(Span::styled(
        row_line(&header, area.width),
        theme.label(),
    )));
    let asking_now = all_asking(snaps);
    for (k, name) in ui.names.iter().enumerate() {
        let snap = snaps.get(k).and_then(|s| s.as_deref());
        let mut cells = row_cells(name, snap);
        if ui.stopped.get(k).copied().unwrap_or(false) && !snap.is_some_and(|s| s.ended) {
            cells[8] = "STOPPED: engine error (see the end)".into();
        }
        let mark = if asking_now.contains(&k) {
            "!"
        } else if k == ui.selected {
            ">"
        } else {
            " "
        };
        let text = format!("{mark} {}", row_line(&cells, area.width.saturating_sub(2)));
        let mut style = if asking_now.contains(&k) {
            theme.flag(theme.alarm)
        } else {
            theme.base()
        };
        if k == ui.selected {
            style = style.add_modifier(Modifier::REVERSED);
        }
        lines.push(Line::from(Span::styled(text, style)));
    }
    lines.push(Line::from(""));
    let all_ended = !snaps.is_empty()
        && snaps.iter().enumerate().all(|(k, s)| {
            s.as_ref().is_some_and(|s| s.ended) || ui.stopped.get(k).copied().unwrap_or(false)
        });
    if all_ended {
        lines.push(Line::from(Span::styled(
            "EVERY SESSION ENDED: the folders are printed when the screen closes; any key closes",
            theme.strong(),
        )));
    }
    if ui.confirm_end_all {
        lines.push(Line::from(Span::styled(
            "END EVERY SESSION? y: yes, any other key: no",
            theme.flag(theme.alarm),
        )));
    }
    if let Some(f) = &ui.flash {
        lines.push(Line::from(Span::styled(f.clone(), theme.strong())));
    }
    lines.push(Line::from(Span::styled(
        "↑↓/1-9 select  v/Tab full view (Esc back)  Enter answer the asking rig  x could not turn  q end all  ! asks",
        theme.label(),
    )));
    frame.render_widget(Paragraph::new(lines).style(theme.base()), area);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tui::sample::SnapshotBuilder;
    use ratatui::Terminal;
    use ratatui::backend::TestBackend;

    fn key(code: KeyCode) -> KeyEvent {
        KeyEvent::new(code, KeyModifiers::NONE)
    }

    fn snaps(prompt_on: Option<usize>) -> Vec<Option<Arc<Snapshot>>> {
        (0..3)
            .map(|k| {
                let mut s = SnapshotBuilder::new().prompt(Some(k) == prompt_on).build();
                s.animal = format!("lm-0{}", k + 1);
                Some(Arc::new(s))
            })
            .collect()
    }

    fn names() -> Vec<String> {
        (1..=3).map(|k| format!("rig-{k}")).collect()
    }

    fn screen(snaps: &[Option<Arc<Snapshot>>], ui: &RigsUi) -> String {
        let mut t = Terminal::new(TestBackend::new(120, 20)).unwrap();
        t.draw(|f| draw_rigs(f, snaps, ui)).unwrap();
        let buf = t.backend().buffer().clone();
        (0..buf.area.height)
            .map(|y| {
                (0..buf.area.width)
                    .map(|x| buf[(x, y)].symbol().to_string())
                    .collect::<String>()
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    #[test]
    fn a_row_per_rig_and_the_asking_rig_named_in_a_banner_and_its_row() {
        let ui = RigsUi::new(names(), ThemeKind::Mono);
        let quiet = screen(&snaps(None), &ui);
        for k in 1..=3 {
            assert!(quiet.contains(&format!("rig-{k}")), "{quiet}");
            assert!(quiet.contains(&format!("lm-0{k}")), "{quiet}");
        }
        assert!(!quiet.contains("ASKS"), "{quiet}");
        let s = snaps(Some(1));
        let asking = screen(&s, &ui);
        let lines: Vec<&str> = asking.lines().collect();
        assert!(
            lines[0].starts_with("rig-2 ASKS (Enter answers rig-2): "),
            "{asking}"
        );
        let row = lines
            .iter()
            .find(|l| l.get(2..).is_some_and(|r| r.starts_with("rig-2 ")))
            .unwrap();
        assert!(row.starts_with('!') && row.contains("ASKS"), "{row}");
        // Only rig-2's row is flagged.
        assert!(
            !lines
                .iter()
                .any(|l| l.starts_with('!') && l.contains("rig-3"))
        );
    }

    #[test]
    fn enter_answers_the_asking_rig_from_the_rows_and_from_another_rigs_view() {
        let s = snaps(Some(2));
        let mut ui = RigsUi::new(names(), ThemeKind::Mono);
        assert_eq!(
            ui.handle_key(key(KeyCode::Enter), &s),
            vec![(2, Command::ConfirmPrompt)]
        );
        // rig-1's full view forward; rig-3 still asks: the banner is on the top line and Enter
        // answers rig-3.
        assert!(ui.handle_key(key(KeyCode::Tab), &s).is_empty());
        assert_eq!(ui.focus, Some(0));
        let full = screen(&s, &ui);
        assert!(
            full.lines().next().unwrap().starts_with("rig-3 ASKS"),
            "{full}"
        );
        assert_eq!(
            ui.handle_key(key(KeyCode::Enter), &s),
            vec![(2, Command::ConfirmPrompt)]
        );
        // Keys of the full view go to its rig; Esc comes back to the rows.
        assert_eq!(
            ui.handle_key(key(KeyCode::Char('f')), &s),
            vec![(0, Command::FlightStop)]
        );
        ui.handle_key(key(KeyCode::Esc), &s);
        assert_eq!(ui.focus, None);
        // Without a prompt anywhere, Enter opens the selected rig's view.
        let quiet = snaps(None);
        ui.handle_key(key(KeyCode::Down), &quiet);
        assert!(ui.handle_key(key(KeyCode::Enter), &quiet).is_empty());
        assert_eq!(ui.focus, Some(1));
        let full = screen(&quiet, &ui);
        assert!(
            full.lines()
                .next()
                .unwrap()
                .starts_with("[rig-2] full view"),
            "{full}"
        );
    }

    #[test]
    fn q_then_y_and_ctrl_c_end_every_session() {
        let s = snaps(None);
        let mut ui = RigsUi::new(names(), ThemeKind::Mono);
        assert!(ui.handle_key(key(KeyCode::Char('q')), &s).is_empty());
        assert!(screen(&s, &ui).contains("END EVERY SESSION?"));
        assert!(ui.handle_key(key(KeyCode::Char('n')), &s).is_empty());
        ui.handle_key(key(KeyCode::Char('q')), &s);
        let all: Vec<usize> = ui
            .handle_key(key(KeyCode::Char('y')), &s)
            .into_iter()
            .map(|(k, c)| {
                assert_eq!(c, Command::EndSession);
                k
            })
            .collect();
        assert_eq!(all, vec![0, 1, 2]);
        let ctrl_c = KeyEvent::new(KeyCode::Char('c'), KeyModifiers::CONTROL);
        assert_eq!(ui.handle_key(ctrl_c, &s).len(), 3);
    }

    #[test]
    fn the_longest_waiting_prompt_is_the_one_asked() {
        let mut s = snaps(Some(0));
        let mut second = SnapshotBuilder::new().prompt(true).build();
        if let Some(p) = &mut second.prompt {
            p.waiting_s += 100.0;
        }
        s[2] = Some(Arc::new(second));
        assert_eq!(asking(&s), Some(2));
        let ui = RigsUi::new(names(), ThemeKind::Mono);
        let text = screen(&s, &ui);
        assert!(text.contains("also asking: rig-1"), "{text}");
    }
}
