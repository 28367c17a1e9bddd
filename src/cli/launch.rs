//! Shared plumbing of `demo` and `run`: start the engine, then either the live screen or the
//! headless progress printer; signals end the session properly.

use crate::engine::session::{Engine, EngineClock, Outcome, Wiring};
use crate::engine::{Command, SnapshotCell};
use crate::rig::{HeadingSource, Turntable};
use anyhow::{Context, anyhow};
use std::io::{BufRead, IsTerminal, Write};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;

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
                        "skybearing: unknown operator word '{}': use ok, stop, fly, note TEXT, pause, resume, skip, end",
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

    // Live screen: the engine runs on its own thread; the screen renders snapshots. Without a
    // terminal there is nothing to draw on: say so before a session folder is made.
    if !std::io::stdout().is_terminal() || !std::io::stdin().is_terminal() {
        anyhow::bail!(
            "the live screen needs a terminal (standard input and output); use --headless to run without one"
        );
    }
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
