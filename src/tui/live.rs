//! The terminal loop: the only part of the screen that does I/O.
//!
//! The terminal is restored on every way out: normal end, error (a drop guard), panic in any
//! thread (a hook that restores, then calls the previous hook; the loop then returns an error
//! instead of drawing over the message), and SIGTERM / SIGHUP / SIGINT (a flag that
//! makes the loop send [`Command::EndSession`] and keep drawing until the engine has closed the
//! session; a second such signal terminates at once, and once the screen has returned they
//! terminate as they would by default). In raw mode Ctrl-C arrives as a key and
//! is handled by [`UiState::handle_key`].

use crate::engine::snapshot::{Command, Snapshot, SnapshotCell};
use crate::tui::render;
use crate::tui::state::UiState;
use crate::tui::theme::{Theme, ThemeKind};
use anyhow::{Context, anyhow};
use crossterm::event::{self, Event, KeyCode, KeyEventKind, KeyModifiers};
use crossterm::terminal::{
    EnterAlternateScreen, LeaveAlternateScreen, disable_raw_mode, enable_raw_mode,
};
use ratatui::Terminal;
use ratatui::backend::CrosstermBackend;
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;
use std::io::{Stdout, stdout};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::Sender;
use std::sync::{Arc, Once, OnceLock};
use std::time::{Duration, Instant};

/// How the live screen looks and behaves.
#[derive(Debug, Clone)]
pub struct ScreenOptions {
    /// No colours at all (also forced by a non-empty `NO_COLOR` environment variable).
    pub mono: bool,
    /// Starting theme when colours are allowed.
    pub theme: ThemeKind,
    /// Upper bound on frames drawn per second (rendering is decoupled from the sample rate).
    pub max_fps: u32,
    /// Seconds the final "session saved" frame with the summary stays up; a key closes it
    /// sooner. Default: infinite, it stays until a key (the operator may be away from the
    /// laptop when the session ends, and the summary must not vanish unread).
    pub final_frame_s: f64,
    /// Set by the caller to make the screen return at once (for example when the engine thread
    /// failed and will never publish an ended snapshot).
    pub stop: Option<Arc<AtomicBool>>,
}

impl Default for ScreenOptions {
    fn default() -> Self {
        ScreenOptions {
            mono: false,
            theme: ThemeKind::Sunlight,
            max_fps: 30,
            final_frame_s: f64::INFINITY,
            stop: None,
        }
    }
}

impl ScreenOptions {
    /// The theme the screen starts with: mono when asked for or when `no_color` is true.
    pub fn starting_theme(&self, no_color: bool) -> ThemeKind {
        if self.mono || no_color {
            ThemeKind::Mono
        } else {
            self.theme
        }
    }
}

/// True when the `NO_COLOR` convention asks for no colour (set and not empty; no-color.org).
pub fn no_color_requested() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

/// True while this process has the terminal in raw mode / alternate screen.
static TERMINAL_ACTIVE: AtomicBool = AtomicBool::new(false);
static PANIC_HOOK: Once = Once::new();

/// Flags set from signal handlers (registered once per process).
struct SignalFlags {
    /// A termination signal arrived while a screen was up.
    term_seen: Arc<AtomicBool>,
}

static SIGNALS: OnceLock<Option<SignalFlags>> = OnceLock::new();

fn signal_flags() -> Option<&'static SignalFlags> {
    SIGNALS
        .get_or_init(|| {
            let term_seen = Arc::new(AtomicBool::new(false));
            for sig in [
                signal_hook::consts::SIGTERM,
                signal_hook::consts::SIGHUP,
                signal_hook::consts::SIGINT,
            ] {
                // Actions run in registration order: a second signal (flag already set)
                // terminates the default way; the first only sets the flag.
                let a = signal_hook::flag::register_conditional_default(sig, term_seen.clone());
                let b = signal_hook::flag::register(sig, term_seen.clone());
                // Which signal it was, for the session's end reason.
                let c = signal_hook::flag::register_usize(
                    sig,
                    crate::signals::received(),
                    sig as usize,
                );
                if a.is_err() || b.is_err() || c.is_err() {
                    return None;
                }
            }
            Some(SignalFlags { term_seen })
        })
        .as_ref()
}

/// When the screen is gone, termination signals take their default action again (the flag
/// being set arms the conditional default registered in [`signal_flags`]).
struct SignalsIdle(Option<&'static SignalFlags>);

impl Drop for SignalsIdle {
    fn drop(&mut self) {
        if let Some(s) = self.0 {
            s.term_seen.store(true, Ordering::SeqCst);
        }
    }
}

/// True when the terminal on standard input has hung up (its window or connection closed).
fn terminal_hung_up() -> bool {
    let mut fds = libc::pollfd {
        fd: 0,
        events: libc::POLLIN,
        revents: 0,
    };
    // SAFETY: one valid pollfd, zero timeout.
    let r = unsafe { libc::poll(&mut fds, 1, 0) };
    r > 0 && (fds.revents & (libc::POLLHUP | libc::POLLERR | libc::POLLNVAL)) != 0
}

/// Waits until standard input has something to read, hangs up, or `timeout` passes.
fn wait_for_input(timeout: Duration) {
    let mut fds = libc::pollfd {
        fd: 0,
        events: libc::POLLIN,
        revents: 0,
    };
    let ms = timeout.as_millis().min(1000) as libc::c_int;
    // SAFETY: one valid pollfd; the result is only a hint (the caller polls crossterm next).
    let _ = unsafe { libc::poll(&mut fds, 1, ms) };
}

/// Leaves raw mode and the alternate screen if this process entered them. Safe to call twice.
fn restore_terminal() {
    if TERMINAL_ACTIVE.swap(false, Ordering::SeqCst) {
        let _ = disable_raw_mode();
        let _ = crossterm::execute!(stdout(), LeaveAlternateScreen, crossterm::cursor::Show);
    }
}

fn install_panic_hook() {
    PANIC_HOOK.call_once(|| {
        let previous = std::panic::take_hook();
        std::panic::set_hook(Box::new(move |info| {
            restore_terminal();
            previous(info);
        }));
    });
}

/// Restores the terminal when dropped (error returns and unwinding).
struct TerminalGuard;

impl TerminalGuard {
    fn enter() -> anyhow::Result<(Self, Terminal<CrosstermBackend<Stdout>>)> {
        install_panic_hook();
        enable_raw_mode().context("cannot switch the terminal to raw mode")?;
        TERMINAL_ACTIVE.store(true, Ordering::SeqCst);
        let guard = TerminalGuard;
        // No cursor-position query anywhere (ratatui's `Terminal::clear` would send one and
        // wait for the answer): clear with a plain escape sequence instead.
        crossterm::execute!(
            stdout(),
            EnterAlternateScreen,
            crossterm::cursor::Hide,
            crossterm::terminal::Clear(crossterm::terminal::ClearType::All)
        )
        .context("cannot enter the alternate screen")?;
        let terminal =
            Terminal::new(CrosstermBackend::new(stdout())).context("cannot start the screen")?;
        Ok((guard, terminal))
    }
}

impl Drop for TerminalGuard {
    fn drop(&mut self) {
        restore_terminal();
    }
}

fn send(commands: &Sender<Command>, command: Command) -> anyhow::Result<()> {
    commands
        .send(command)
        .map_err(|_| anyhow!("the session engine stopped before the screen closed"))
}

fn draw_waiting(frame: &mut ratatui::Frame, theme: &Theme) {
    let area = frame.area();
    frame.buffer_mut().set_style(area, theme.base());
    let lines = vec![
        Line::from(Span::styled("skybearing", theme.strong())),
        Line::from(Span::styled(
            "waiting for the session engine…",
            theme.strong(),
        )),
        Line::from(Span::styled("Ctrl-C ends", theme.base())),
    ];
    frame.render_widget(Paragraph::new(lines).style(theme.base()), area);
}

/// Asks on the terminal, before a session starts, whether to start it although the sun is below
/// the horizon ([`NoSunConfirm`](crate::tui::panels::overlays::NoSunConfirm)). True only for
/// `y`; any other key, a hang-up or a read error answer no. The terminal is restored after.
pub fn confirm_no_sun(warnings: &[String], options: &ScreenOptions) -> anyhow::Result<bool> {
    let theme = Theme::new(options.starting_theme(no_color_requested()));
    let (_guard, mut terminal) = TerminalGuard::enter()?;
    loop {
        terminal
            .draw(|f| {
                let theme = &theme;
                f.render_widget(
                    crate::tui::panels::overlays::NoSunConfirm { warnings, theme },
                    f.area(),
                )
            })
            .context("cannot draw the screen")?;
        if terminal_hung_up() {
            return Ok(false);
        }
        wait_for_input(Duration::from_millis(250));
        while !terminal_hung_up() && event::poll(Duration::ZERO).unwrap_or(false) {
            match event::read() {
                Ok(Event::Key(key)) if key.kind != KeyEventKind::Release => {
                    let ctrl = key.modifiers.contains(KeyModifiers::CONTROL);
                    return Ok(!ctrl && matches!(key.code, KeyCode::Char('y' | 'Y')));
                }
                Ok(_) => {}
                Err(_) => return Ok(false),
            }
        }
    }
}

/// Runs the live screen until the engine publishes a snapshot with `ended == true`.
///
/// Draws the latest snapshot from `cell` at most `options.max_fps` times per second, turns
/// keys into commands sent on `commands`, and after the end shows a "session saved" frame with
/// the session's summary until a key (or for `options.final_frame_s` seconds when finite). Errors when the terminal cannot be used
/// or when the engine has gone away (the command channel is closed).
pub fn run_live(
    cell: SnapshotCell,
    commands: Sender<Command>,
    options: ScreenOptions,
) -> anyhow::Result<()> {
    let signals = signal_flags();
    if let Some(s) = signals {
        s.term_seen.store(false, Ordering::SeqCst);
    }
    let _signals_idle = SignalsIdle(signals);
    let theme_kind = options.starting_theme(no_color_requested());
    let (_guard, mut terminal) = TerminalGuard::enter()?;

    let frame_dt = Duration::from_secs_f64(1.0 / f64::from(options.max_fps.clamp(1, 120)));
    // None: the final frame stays until a key.
    let final_frame = (options.final_frame_s.is_finite())
        .then(|| Duration::from_secs_f64(options.final_frame_s.clamp(0.0, 3600.0)));
    let mut ui = UiState::with_theme(theme_kind);
    let mut last: Option<Arc<Snapshot>> = None;
    let mut dirty = true;
    let mut signal_handled = false;
    let mut ended_at: Option<Instant> = None;
    let mut final_drawn = false;
    let mut next_draw = Instant::now();
    let mut last_tick = Instant::now();

    loop {
        let now = Instant::now();
        if ui.flash.is_some() {
            ui.tick(now.duration_since(last_tick).as_secs_f64());
            if ui.flash.is_none() {
                dirty = true;
            }
        }
        last_tick = now;
        if !TERMINAL_ACTIVE.load(Ordering::SeqCst) {
            // A panic somewhere in the process restored the terminal (so its message can be
            // read); drawing on would scribble over it.
            return Err(anyhow!(
                "the screen closed after a panic (see the message above)"
            ));
        }
        if let Some(stop) = &options.stop
            && stop.load(Ordering::SeqCst)
        {
            return Ok(());
        }
        if !signal_handled
            && let Some(s) = signals
            && s.term_seen.load(Ordering::SeqCst)
        {
            signal_handled = true;
            ui.end_requested = true;
            if ended_at.is_none() {
                send(&commands, Command::EndSession)?;
            }
            dirty = true;
        }

        let latest = cell.latest();
        let changed = match (&latest, &last) {
            (Some(a), Some(b)) => !Arc::ptr_eq(a, b),
            (None, None) => false,
            _ => true,
        };
        if changed {
            dirty = true;
            last = latest;
        }
        if ended_at.is_none() && last.as_ref().is_some_and(|s| s.ended) {
            ended_at = Some(Instant::now());
            ui.mode = crate::tui::state::Mode::Normal;
            dirty = true;
        }
        if let (Some(t), Some(final_frame)) = (ended_at, final_frame)
            && t.elapsed() >= final_frame
            && (final_drawn || t.elapsed() >= final_frame + Duration::from_secs(2))
        {
            // The final frame was shown at least once (or the terminal is gone and could not
            // show it): leave even if events keep arriving, e.g. from a hung-up terminal.
            return Ok(());
        }

        if terminal_hung_up() {
            // The terminal is gone (window closed, ssh dropped): nothing can be drawn or read
            // (crossterm's poll would spin on the dead descriptor). End the session properly
            // and wait for the engine to close the archive.
            if ended_at.is_some() {
                return Ok(());
            }
            if !ui.end_requested {
                ui.end_requested = true;
                send(&commands, Command::EndSession)?;
            }
            std::thread::sleep(frame_dt);
            continue;
        }

        let now = Instant::now();
        if dirty && now >= next_draw {
            match &last {
                Some(snap) => terminal
                    .draw(|f| render::draw(f, snap, &ui))
                    .context("cannot draw the screen")?,
                None => terminal
                    .draw(|f| draw_waiting(f, &Theme::new(ui.theme)))
                    .context("cannot draw the screen")?,
            };
            dirty = false;
            final_drawn = ended_at.is_some();
            next_draw = now + frame_dt;
        }

        let timeout = if dirty {
            next_draw.saturating_duration_since(Instant::now())
        } else {
            frame_dt
        };
        // Wait on the descriptor ourselves (crossterm's own poll spins forever on a terminal
        // that hangs up while it waits), then take what crossterm has parsed.
        wait_for_input(timeout);
        while !terminal_hung_up()
            && event::poll(Duration::ZERO).context("cannot read the keyboard")?
        {
            match event::read().context("cannot read the keyboard")? {
                Event::Key(key) if key.kind != KeyEventKind::Release => {
                    if ended_at.is_some() {
                        return Ok(());
                    }
                    match &last {
                        Some(snap) => {
                            for command in ui.handle_key(key, snap) {
                                send(&commands, command)?;
                            }
                        }
                        None => {
                            let ctrl_c = key.modifiers.contains(KeyModifiers::CONTROL)
                                && matches!(key.code, KeyCode::Char('c') | KeyCode::Char('C'));
                            if ctrl_c {
                                ui.end_requested = true;
                                send(&commands, Command::EndSession)?;
                            }
                        }
                    }
                    dirty = true;
                }
                Event::Resize(_, _) => dirty = true,
                _ => {}
            }
        }
    }
}

/// The live screen for several rigs ([`crate::tui::rigs`]): one snapshot cell and one command
/// channel per rig, in the same order as `names`. Runs until every rig's session has ended,
/// then shows the rows with every session's end until a key (or `options.final_frame_s`). A
/// termination signal or a hung-up terminal ends every session properly first.
pub fn run_live_rigs(
    names: Vec<String>,
    cells: Vec<SnapshotCell>,
    commands: Vec<Sender<Command>>,
    done: Vec<Arc<AtomicBool>>,
    options: ScreenOptions,
) -> anyhow::Result<()> {
    let signals = signal_flags();
    if let Some(s) = signals {
        s.term_seen.store(false, Ordering::SeqCst);
    }
    let _signals_idle = SignalsIdle(signals);
    let mut ui = crate::tui::rigs::RigsUi::new(names, options.starting_theme(no_color_requested()));
    let (_guard, mut terminal) = TerminalGuard::enter()?;
    let frame_dt = Duration::from_secs_f64(1.0 / f64::from(options.max_fps.clamp(1, 120)));
    let final_frame = (options.final_frame_s.is_finite())
        .then(|| Duration::from_secs_f64(options.final_frame_s.clamp(0.0, 3600.0)));
    let mut ended_at: Option<Instant> = None;
    let mut end_sent = false;
    let mut flash_at = Instant::now();
    // A rig whose engine has gone away (its channel closed) is not an error of the screen: the
    // other rigs go on.
    let send_to = |k: usize, c: Command| {
        if let Some(tx) = commands.get(k) {
            let _ = tx.send(c);
        }
    };
    loop {
        if !TERMINAL_ACTIVE.load(Ordering::SeqCst) {
            return Err(anyhow!(
                "the screen closed after a panic (see the message above)"
            ));
        }
        if let Some(stop) = &options.stop
            && stop.load(Ordering::SeqCst)
        {
            return Ok(());
        }
        let snaps: Vec<Option<Arc<Snapshot>>> = cells.iter().map(SnapshotCell::latest).collect();
        // A rig whose engine stopped without an ended snapshot (an error) counts as ended.
        ui.stopped = done.iter().map(|d| d.load(Ordering::SeqCst)).collect();
        let all_ended = snaps
            .iter()
            .zip(&ui.stopped)
            .all(|(s, &stopped)| stopped || s.as_ref().is_some_and(|s| s.ended));
        if all_ended && ended_at.is_none() {
            ended_at = Some(Instant::now());
            ui.focus = None;
        }
        if let (Some(t), Some(f)) = (ended_at, final_frame)
            && t.elapsed() >= f
        {
            return Ok(());
        }
        if ui.flash.is_some() && flash_at.elapsed() > Duration::from_secs(4) {
            ui.flash = None;
        }
        for v in &mut ui.views {
            v.tick(frame_dt.as_secs_f64());
        }
        let hung_up = terminal_hung_up();
        let signalled = signals.is_some_and(|s| s.term_seen.load(Ordering::SeqCst));
        if (hung_up || signalled) && !end_sent {
            end_sent = true;
            for k in 0..commands.len() {
                send_to(k, Command::EndSession);
            }
        }
        if hung_up {
            if ended_at.is_some() {
                return Ok(());
            }
            std::thread::sleep(frame_dt);
            continue;
        }
        terminal
            .draw(|f| crate::tui::rigs::draw_rigs(f, &snaps, &ui))
            .context("cannot draw the screen")?;
        wait_for_input(frame_dt);
        while !terminal_hung_up()
            && event::poll(Duration::ZERO).context("cannot read the keyboard")?
        {
            if let Event::Key(key) = event::read().context("cannot read the keyboard")?
                && key.kind != KeyEventKind::Release
            {
                if ended_at.is_some() {
                    return Ok(());
                }
                for (k, c) in ui.handle_key(key, &snaps) {
                    send_to(k, c);
                }
                flash_at = Instant::now();
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mono_wins_over_theme() {
        let o = ScreenOptions {
            theme: ThemeKind::Dark,
            ..ScreenOptions::default()
        };
        assert_eq!(o.starting_theme(false), ThemeKind::Dark);
        assert_eq!(o.starting_theme(true), ThemeKind::Mono);
        let o = ScreenOptions {
            mono: true,
            ..ScreenOptions::default()
        };
        assert_eq!(o.starting_theme(false), ThemeKind::Mono);
    }

    #[test]
    fn end_screen_stays_until_a_key_by_default() {
        // Issue 14: the summary used to vanish after about a second.
        assert!(ScreenOptions::default().final_frame_s.is_infinite());
    }

    #[test]
    fn restore_is_idempotent_when_inactive() {
        // Not in raw mode: must do nothing and not panic.
        restore_terminal();
        restore_terminal();
        assert!(!TERMINAL_ACTIVE.load(Ordering::SeqCst));
    }
}
