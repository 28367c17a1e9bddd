//! `skybearing run` with several `--rig FILE --animal ID` pairs: one engine per rig, each on
//! its own thread with its own clock, devices and archive, from one process. Headless, every
//! progress line starts with the rig's name; a rig whose session fails or aborts never stops
//! the others, and the exit status says whether any did.

use super::launch::command_from_line;
use super::run::{Prepared, RunArgs, prepare};
use crate::engine::session::{Outcome, Wiring};
use crate::engine::{Command, SnapshotCell};
use anyhow::{Context, bail};
use std::io::{BufRead, IsTerminal, Write};
use std::path::PathBuf;
use std::sync::mpsc;

/// One rig of a run with several: its name and its prepared session.
pub struct NamedRig {
    /// The rig file's `name`.
    pub name: String,
    /// Its session.
    pub prepared: Prepared,
}

/// How one rig's session ended: its folder and the outcome, or the error that stopped it.
pub struct RigResult {
    /// The rig's name.
    pub name: String,
    /// The session folder (it may not exist when the session failed before it was made).
    pub dir: PathBuf,
    /// The outcome, or the error in one line.
    pub outcome: Result<Outcome, String>,
}

/// The exit status of a run with several rigs: 2 when any rig's session failed with an error,
/// else 1 when any was cut short by a rule (see [`crate::engine::session::EndReason::exit_code`]),
/// else 0.
pub fn exit_status(results: &[RigResult]) -> i32 {
    results
        .iter()
        .map(|r| match &r.outcome {
            Ok(o) => o.end.exit_code(),
            Err(_) => 2,
        })
        .max()
        .unwrap_or(0)
}

/// Checks that every rig file has a name and that the names differ: a rig run beside others is
/// told apart by its name, on the screen, in the progress lines and in its session ids.
fn rig_names(args: &RunArgs) -> anyhow::Result<Vec<String>> {
    let mut names: Vec<String> = Vec::new();
    let mut stdin_sensors = 0;
    for file in &args.rig {
        let rig = crate::rig::config::load_rig(file)?;
        let Some(name) = rig.name else {
            bail!(
                "{}: no top-level name = \"...\": a rig run beside others needs its own name (it goes into its session ids and starts its lines)",
                file.display()
            );
        };
        if let Some(j) = names.iter().position(|n| *n == name) {
            bail!(
                "{}: name \"{name}\" is also the name of {}: rigs run together need different names",
                file.display(),
                args.rig[j].display()
            );
        }
        if matches!(rig.sensor.source, crate::rig::config::SensorSource::Stdin) {
            stdin_sensors += 1;
        }
        names.push(name);
    }
    if stdin_sensors > 1 {
        bail!("{stdin_sensors} rigs read their sensor from standard input: at most one can");
    }
    Ok(names)
}

/// Runs several rigs at once (`run` with repeated `--rig`/`--animal`); returns the exit status.
pub fn run_rigs(args: &RunArgs) -> anyhow::Result<i32> {
    let names = rig_names(args)?;
    let mut rigs = Vec::new();
    for ((file, animal), name) in args.rig.iter().zip(&args.animal).zip(&names) {
        let prepared = prepare(args, file, animal, &format!("[{name}] "))?;
        rigs.push(NamedRig {
            name: name.clone(),
            prepared,
        });
    }
    let no_sun: Vec<String> = rigs
        .iter()
        .flat_map(|r| {
            r.prepared
                .no_sun
                .iter()
                .map(move |w| format!("[{}] {w}", r.name))
        })
        .collect();
    if !no_sun.is_empty() {
        for w in &no_sun {
            eprintln!("skybearing: warning: {w}");
        }
        if !args.allow_no_sun {
            if args.headless {
                bail!(
                    "the sun is below the horizon during these open-sky sessions (warnings above): pass --allow-no-sun to start them anyway"
                );
            }
            let options = crate::tui::ScreenOptions {
                mono: args.mono,
                ..Default::default()
            };
            if !crate::tui::live::confirm_no_sun(&no_sun, &options)? {
                bail!(
                    "not started: the sun is below the horizon (pass --allow-no-sun to start without asking)"
                );
            }
        }
    }
    if !args.headless && (!std::io::stdout().is_terminal() || !std::io::stdin().is_terminal()) {
        bail!(
            "the live screen needs a terminal (standard input and output); use --headless to run without one"
        );
    }
    let results = if args.headless {
        run_headless(rigs)?
    } else {
        run_screen(rigs, args.mono)?
    };
    for r in &results {
        if let Err(e) = &r.outcome {
            eprintln!("skybearing: error: [{}] {e}", r.name);
        }
    }
    // The session folders, one line per rig in the order given (those that were made).
    let mut out = std::io::stdout().lock();
    for r in &results {
        if r.dir.is_dir() {
            let _ = writeln!(out, "{}", r.dir.display());
        }
    }
    let _ = out.flush();
    Ok(exit_status(&results))
}

/// Routes a line typed on standard input: `NAME WORD...` to the rig named, a word alone to
/// every rig. `None` when the words are not an operator command.
pub fn route_line(line: &str, names: &[String]) -> Option<(Option<usize>, Command)> {
    let t = line.trim();
    let (first, rest) = t.split_once(' ').unwrap_or((t, ""));
    let first = first.trim_start_matches('[').trim_end_matches(']');
    if let Some(k) = names.iter().position(|n| n == first) {
        return command_from_line(rest).map(|c| (Some(k), c));
    }
    command_from_line(t).map(|c| (None, c))
}

/// Sets its flag when dropped.
struct SetOnDrop(std::sync::Arc<std::sync::atomic::AtomicBool>);

impl Drop for SetOnDrop {
    fn drop(&mut self) {
        self.0.store(true, std::sync::atomic::Ordering::SeqCst);
    }
}

/// The engines of a run, each on its own thread: what the printer or the screen needs.
struct Running {
    names: Vec<String>,
    senders: Vec<mpsc::Sender<Command>>,
    cells: Vec<SnapshotCell>,
    done: Vec<std::sync::Arc<std::sync::atomic::AtomicBool>>,
    handles: Vec<(PathBuf, std::thread::JoinHandle<Result<Outcome, String>>)>,
}

/// Starts every rig's engine on its own thread (its own clock, devices and archive). With
/// `print`, its progress lines go to stdout, each starting with `[NAME]`.
fn start_engines(rigs: Vec<NamedRig>, print: bool) -> anyhow::Result<Running> {
    crate::signals::ignore_file_size_signal();
    let mut running = Running {
        names: Vec::new(),
        senders: Vec::new(),
        cells: Vec::new(),
        done: Vec::new(),
        handles: Vec::new(),
    };
    for rig in rigs {
        let (tx, rx) = mpsc::channel::<Command>();
        let cell = SnapshotCell::new();
        let NamedRig { name, prepared } = rig;
        let dir = prepared.engine.session_dir();
        let engine_cell = cell.clone();
        let prefix = format!("[{name}] ");
        let done = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
        let engine_done = done.clone();
        let handle = std::thread::Builder::new()
            .name(format!("engine {name}"))
            .spawn(move || {
                // Set however the thread ends, a panic included.
                let done_on_exit = SetOnDrop(engine_done);
                let Prepared {
                    engine,
                    mut sensor,
                    mut turntable,
                    clock,
                    auto_confirm_after_s,
                    ..
                } = prepared;
                let stop = crate::signals::received();
                let stdout = std::io::stdout();
                let mut progress = |l: &str| {
                    if print {
                        let mut out = stdout.lock();
                        let _ = writeln!(out, "{prefix}{l}");
                        let _ = out.flush();
                    }
                };
                let result = engine
                    .run(Wiring {
                        sensor: sensor.as_mut(),
                        turntable: turntable.as_mut(),
                        clock,
                        cell: &engine_cell,
                        commands: &rx,
                        stop: &stop,
                        progress: &mut progress,
                        auto_confirm_after_s,
                        sim_operator: None,
                    })
                    .map_err(|e| e.to_string());
                drop(done_on_exit);
                result
            })
            .context("starting an engine thread")?;
        running.names.push(name);
        running.senders.push(tx);
        running.cells.push(cell);
        running.done.push(done);
        running.handles.push((dir, handle));
    }
    Ok(running)
}

/// Waits for every engine and says how each session ended.
fn join_engines(
    names: Vec<String>,
    handles: Vec<(PathBuf, std::thread::JoinHandle<Result<Outcome, String>>)>,
) -> Vec<RigResult> {
    names
        .into_iter()
        .zip(handles)
        .map(|(name, (dir, handle))| RigResult {
            name,
            dir,
            outcome: handle.join().unwrap_or_else(|_| {
                Err("the engine thread panicked; what reached the disk is kept (run `skybearing check --repair`)".to_string())
            }),
        })
        .collect()
}

/// Headless: prints every rig's progress lines, each starting with `[NAME]`, and routes the
/// operator words typed on stdin. SIGINT, SIGTERM and SIGHUP end every session properly.
fn run_headless(rigs: Vec<NamedRig>) -> anyhow::Result<Vec<RigResult>> {
    crate::signals::record_stop_signals()
        .context("installing the SIGINT/SIGTERM/SIGHUP handlers")?;
    let stdin_commands = rigs.iter().all(|r| r.prepared.stdin_commands);
    let Running {
        names,
        senders,
        handles,
        ..
    } = start_engines(rigs, true)?;
    if stdin_commands {
        let names = names.clone();
        // Operator words typed on stdin; EOF just ends the reader.
        std::thread::spawn(move || {
            let stdin = std::io::stdin();
            for line in stdin.lock().lines() {
                let Ok(line) = line else { break };
                match route_line(&line, &names) {
                    Some((Some(k), c)) => {
                        let _ = senders[k].send(c);
                    }
                    Some((None, c)) => {
                        for s in &senders {
                            let _ = s.send(c.clone());
                        }
                    }
                    None => eprintln!(
                        "skybearing: unknown operator word '{}': use [RIG] ok, stop, fly, note TEXT, pause, resume, skip, cannot, hand, end (RIG: {})",
                        line.trim(),
                        names.join(", ")
                    ),
                }
            }
        });
    }
    Ok(join_engines(names, handles))
}

/// The live screen for several rigs ([`crate::tui::run_live_rigs`]) over the engines' snapshots.
fn run_screen(rigs: Vec<NamedRig>, mono: bool) -> anyhow::Result<Vec<RigResult>> {
    let Running {
        names,
        senders,
        cells,
        done,
        handles,
    } = start_engines(rigs, false)?;
    let options = crate::tui::ScreenOptions {
        mono,
        ..Default::default()
    };
    let screen = crate::tui::run_live_rigs(names.clone(), cells, senders.clone(), done, options);
    if screen.is_err() {
        // The screen failed: end every session properly so nothing is lost.
        for s in &senders {
            let _ = s.send(Command::EndSession);
        }
    }
    let results = join_engines(names, handles);
    screen.context("live screen")?;
    Ok(results)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_go_to_the_rig_named_or_to_every_rig() {
        let names = vec!["rig-1".to_string(), "rig-2".to_string()];
        assert!(matches!(
            route_line("rig-2 ok", &names),
            Some((Some(1), Command::ConfirmPrompt))
        ));
        assert!(matches!(
            route_line("[rig-1] end", &names),
            Some((Some(0), Command::EndSession))
        ));
        assert!(matches!(
            route_line("rig-1 note wind from the west", &names),
            Some((Some(0), Command::Note(n))) if n == "wind from the west"
        ));
        assert!(matches!(
            route_line("end", &names),
            Some((None, Command::EndSession))
        ));
        assert!(route_line("rig-3 ok", &names).is_none());
        assert!(route_line("rig-1 dance", &names).is_none());
    }
}
