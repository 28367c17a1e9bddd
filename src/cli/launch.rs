//! Shared plumbing of `demo` and `run`: start the engine, then either the live screen or the
//! headless progress printer; signals end the session properly.

use crate::engine::session::{Engine, EngineClock, Outcome, Wiring};
use crate::engine::{Command, SnapshotCell};
use crate::rig::{HeadingSource, Turntable};
use anyhow::{Context, anyhow};
use std::io::{BufRead, IsTerminal, Write};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;

/// The plan's warnings that the sun is below the horizon during the session, in `plan`'s own
/// words. Every epoch counts as open sky (the sun's disc meant to be seen) until protocols say
/// otherwise.
pub fn no_sun_warnings(
    protocol: &crate::protocol::Protocol,
    rig: &crate::rig::config::Rig,
    start: chrono::DateTime<chrono::Utc>,
) -> anyhow::Result<Vec<String>> {
    let (site, _) = crate::cli::plan::plan_site_from_rig(rig, start)?;
    let plan = crate::protocol::plan::make_plan(
        protocol,
        &site,
        start,
        crate::protocol::plan::DEFAULT_MAX_DRIFT_DEG,
    )
    .context("computing the sun for the session")?;
    Ok(plan
        .warnings
        .into_iter()
        .filter(|w| {
            w.kind == crate::protocol::plan::WarningKind::SunBelowHorizon
                && shows_sun(protocol, w.epoch)
        })
        .map(|w| w.message)
        .collect())
}

/// Whether the warning's epoch (or, for a session-wide warning, any epoch) shows the sun.
fn shows_sun(protocol: &crate::protocol::Protocol, epoch: Option<usize>) -> bool {
    let visible =
        |e: &crate::protocol::EpochPlan| e.cues.sun == crate::protocol::cues::SunCue::Visible;
    match epoch {
        Some(k) => protocol.epoch(k).is_some_and(visible),
        None => protocol.epochs.iter().any(visible),
    }
}

/// How to show the session.
pub struct Display {
    /// No screen: progress lines on stdout, the session folder as the last line.
    pub headless: bool,
    /// Monochrome screen.
    pub mono: bool,
    /// Confirm prompts automatically after this many session seconds (simulated operator).
    pub auto_confirm_after_s: Option<f64>,
    /// Standard input carries operator words in headless runs (false when the heading sensor
    /// itself reads standard input).
    pub stdin_commands: bool,
    /// Warnings that the sun is below the horizon during the session ([`no_sun_warnings`]):
    /// printed at the start; the session starts only after a confirmation on the live screen,
    /// or with `allow_no_sun`.
    pub no_sun: Vec<String>,
    /// `--allow-no-sun`: start without asking although the sun is below the horizon.
    pub allow_no_sun: bool,
}

/// Says that the sun is below the horizon and asks before anything is written: refuses a
/// headless run (one line) unless `--allow-no-sun`; asks on the live screen.
fn confirm_no_sun(display: &Display) -> anyhow::Result<()> {
    if display.no_sun.is_empty() {
        return Ok(());
    }
    for w in &display.no_sun {
        eprintln!("skybearing: warning: {w}");
    }
    if display.allow_no_sun {
        return Ok(());
    }
    if display.headless {
        anyhow::bail!(
            "the sun is below the horizon during this open-sky session (warnings above): pass --allow-no-sun to start it anyway"
        );
    }
    let options = crate::tui::ScreenOptions {
        mono: display.mono,
        ..Default::default()
    };
    if !crate::tui::live::confirm_no_sun(&display.no_sun, &options)? {
        anyhow::bail!(
            "not started: the sun is below the horizon (pass --allow-no-sun to start without asking)"
        );
    }
    Ok(())
}

/// The plan's warnings about a sun the protocol shows but the animal may not see (below the
/// horizon, below the arena's sky view limit, entering the view mid-epoch), in the words
/// `plan` uses, for `run` and `demo` to print at the start. None when no plan can be made.
pub fn sun_view_warnings(
    protocol: &crate::protocol::Protocol,
    rig: &crate::rig::config::Rig,
    start_utc: chrono::DateTime<chrono::Utc>,
) -> Vec<String> {
    let Ok((site, _)) = super::plan::plan_site_from_rig(rig, start_utc) else {
        return Vec::new();
    };
    let Ok(plan) = crate::protocol::plan::make_plan(
        protocol,
        &site,
        start_utc,
        crate::protocol::plan::DEFAULT_MAX_DRIFT_DEG,
    ) else {
        return Vec::new();
    };
    plan.warnings
        .into_iter()
        // Below the horizon is said (and confirmed) by `no_sun_warnings`.
        .filter(|w| {
            w.kind.is_sun_view()
                && w.kind != crate::protocol::plan::WarningKind::SunBelowHorizon
                && shows_sun(protocol, w.epoch)
        })
        .map(|w| w.message)
        .collect()
}

/// Turns a line typed on standard input (headless runs) into an operator command.
pub fn command_from_line(line: &str) -> Option<Command> {
    let line = line.trim();
    let (word, rest) = line.split_once(' ').unwrap_or((line, ""));
    match word {
        "" | "ok" | "done" => Some(Command::ConfirmPrompt),
        "stop" => Some(Command::FlightStop),
        "fly" | "start" => Some(Command::FlightStart),
        "note" => Some(Command::Note(rest.trim().to_string())),
        "pause" => Some(Command::Pause),
        "resume" => Some(Command::Resume),
        "skip" => Some(Command::SkipEpoch),
        "end" | "quit" => Some(Command::EndSession),
        "cannot" => Some(Command::CouldNotTurn),
        "hand" => Some(Command::TurnsByHand),
        _ => None,
    }
}

/// Runs a prepared engine on its devices and returns how the session ended.
pub fn launch(
    engine: Engine,
    mut sensor: Box<dyn HeadingSource>,
    mut turntable: Box<dyn Turntable>,
    clock: EngineClock,
    display: Display,
    sim_operator: Option<crate::rig::sim::SimOperator>,
) -> anyhow::Result<Outcome> {
    if !display.headless && (!std::io::stdout().is_terminal() || !std::io::stdin().is_terminal()) {
        anyhow::bail!(
            "the live screen needs a terminal (standard input and output); use --headless to run without one"
        );
    }
    confirm_no_sun(&display)?;
    let cell = SnapshotCell::new();
    let (tx, rx) = mpsc::channel::<Command>();
    // A file-size limit must come back as an error (EFBIG), not kill the process.
    crate::signals::ignore_file_size_signal();
    let stop = crate::signals::received();
    if display.headless {
        // SIGINT, SIGTERM and SIGHUP (ssh dropped, terminal closed) end the session properly.
        crate::signals::record_stop_signals()
            .context("installing the SIGINT/SIGTERM/SIGHUP handlers")?;
        // Operator commands typed on stdin (one word a line); EOF just ends the reader.
        let stdin_tx = tx.clone();
        std::thread::spawn(move || {
            if !display.stdin_commands {
                return;
            }
            let stdin = std::io::stdin();
            for line in stdin.lock().lines() {
                let Ok(line) = line else { break };
                match command_from_line(&line) {
                    Some(c) => {
                        if stdin_tx.send(c).is_err() {
                            break;
                        }
                    }
                    None => eprintln!(
                        "skybearing: unknown operator word '{}': use ok, stop, fly, note TEXT, pause, resume, skip, cannot, hand, end",
                        line.trim()
                    ),
                }
            }
        });
        let stdout = std::io::stdout();
        let mut progress = |l: &str| {
            let mut out = stdout.lock();
            let _ = writeln!(out, "{l}");
            let _ = out.flush();
        };
        let outcome = engine.run(Wiring {
            sensor: sensor.as_mut(),
            turntable: turntable.as_mut(),
            clock,
            cell: &cell,
            commands: &rx,
            stop: &stop,
            progress: &mut progress,
            auto_confirm_after_s: display.auto_confirm_after_s,
            sim_operator,
        })?;
        let mut out = stdout.lock();
        let _ = writeln!(out, "{}", outcome.dir.display());
        let _ = out.flush();
        return Ok(outcome);
    }

    // Live screen: the engine runs on its own thread; the screen renders snapshots. (Without a
    // terminal there is nothing to draw on: that was said above, before a folder was made.)
    let engine_cell = cell.clone();
    // If the engine fails before publishing an ended snapshot, this flag closes the screen.
    let screen_stop = std::sync::Arc::new(AtomicBool::new(false));
    let engine_stop = screen_stop.clone();
    let handle = std::thread::Builder::new()
        .name("engine".into())
        .spawn(move || {
            let mut quiet = |_: &str| {};
            let result = engine.run(Wiring {
                sensor: sensor.as_mut(),
                turntable: turntable.as_mut(),
                clock,
                cell: &engine_cell,
                commands: &rx,
                stop: &stop,
                progress: &mut quiet,
                auto_confirm_after_s: display.auto_confirm_after_s,
                sim_operator,
            });
            if result.is_err() {
                engine_stop.store(true, Ordering::SeqCst);
            }
            result
        })
        .context("starting the engine thread")?;
    let options = crate::tui::ScreenOptions {
        mono: display.mono,
        ..Default::default()
    };
    let screen = crate::tui::run_live(cell.clone(), tx.clone(), options);
    if screen.is_err() {
        // The screen failed: end the session properly so nothing is lost.
        let _ = tx.send(Command::EndSession);
    }
    let outcome = handle
        .join()
        .map_err(|_| anyhow!("the engine thread panicked; what reached the disk is kept (run `skybearing check --repair`)"))??;
    screen.context("live screen")?;
    let mut out = std::io::stdout().lock();
    let _ = writeln!(out, "{}", outcome.dir.display());
    Ok(outcome)
}
