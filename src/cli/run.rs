//! `skybearing run`: a live session on real devices (or a rig served by `skybearing sim`).

use crate::cli::demo::{parse_speed, parse_start};
use crate::cli::launch::{Display, launch};
use crate::clock::{Clock, RealClock, SimClock};
use crate::engine::session::{Engine, EngineClock, SessionSetup, Speed};
use crate::rig::config::{ReplayPace, Rig, SensorSource};
use anyhow::Context;
use chrono::{DateTime, SubsecRound, Utc};
use clap::Args;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// Flags of `skybearing run`.
#[derive(Debug, Args)]
pub struct RunArgs {
    /// Rig file (TOML; `skybearing rig init FILE` writes a template). Repeat `--rig FILE
    /// --animal ID` to run several rigs at once from this one process (the first animal on the
    /// first rig, and so on); each such rig file needs its own `name`.
    #[arg(long, required = true)]
    pub rig: Vec<PathBuf>,
    /// Protocol file (TOML; see protocols/).
    #[arg(long)]
    pub protocol: PathBuf,
    /// Animal id written into the archive (letters, digits, - _ .). Required: a session
    /// without the animal's own id cannot be told apart from the others later.
    #[arg(long, value_name = "ID", required = true)]
    pub animal: Vec<String>,
    /// Sessions folder (default: the rig file's, else ./sessions).
    #[arg(long)]
    pub sessions: Option<PathBuf>,
    /// No screen: progress lines on stdout; operator words on stdin (ok, stop, fly, note TEXT,
    /// pause, resume, skip, end; at a turn prompt `cannot` = could not turn; `hand` = every
    /// later turn by hand). With several rigs every line starts with `[RIG]`, and a word is
    /// for one rig when it follows its name (`rig-2 ok`), for every rig otherwise.
    #[arg(long)]
    pub headless: bool,
    /// Monochrome screen (also when NO_COLOR is set).
    #[arg(long)]
    pub mono: bool,
    /// Start although the sun is below the horizon during the session (the warnings are still
    /// printed). Without it the live screen asks first and a headless run refuses.
    #[arg(long)]
    pub allow_no_sun: bool,
    /// `1` (live, the default) or `max`: a replay sensor with a time column runs on the file's
    /// own clock as fast as the machine allows (needs --start).
    #[arg(long, default_value = "1", value_parser = parse_speed)]
    pub speed: Speed,
    /// With --speed max: the UTC (RFC 3339) of the replay file's first line.
    #[arg(long, value_parser = parse_start)]
    pub start: Option<DateTime<Utc>>,
}

/// Checks the flags of a replay at full speed against the rig; returns the UTC anchor and the
/// rig with its replay paced by the file's own clock. `Ok(None)` for a live run.
fn full_speed_replay(
    args: &RunArgs,
    rig_file: &Path,
    rig: &Rig,
) -> anyhow::Result<Option<(DateTime<Utc>, Rig)>> {
    let file = rig_file.display();
    match args.speed {
        Speed::Times(1.0) => {
            if args.start.is_some() {
                anyhow::bail!(
                    "--start is only for --speed max (a live run starts at the present moment)"
                );
            }
            return Ok(None);
        }
        Speed::Times(x) => {
            anyhow::bail!("--speed {x}: run takes 1 (live) or max (a replay file on its own clock)")
        }
        Speed::Max => {}
    }
    let SensorSource::Replay { path, .. } = &rig.sensor.source else {
        anyhow::bail!(
            "--speed max: {file}: the sensor is not a replay file; only a recording can run faster than live"
        );
    };
    if rig.sensor.decoder.time_column.is_none() {
        anyhow::bail!(
            "--speed max: {file}: the replay sensor has no sensor.time_column, so the file has no clock of its own to run on"
        );
    }
    let Some(start) = args.start else {
        anyhow::bail!(
            "--speed max needs --start RFC3339: the UTC of the first line of {}",
            path.display()
        );
    };
    let mut rig = rig.clone();
    rig.sensor.source = SensorSource::Replay {
        path: path.clone(),
        pace: ReplayPace::Recorded,
    };
    Ok(Some((start, rig)))
}

/// One rig's session, ready to run: the engine, its devices and clock, and how to show it.
pub struct Prepared {
    /// The engine (its session folder not made yet).
    pub engine: Engine,
    /// The heading sensor.
    pub sensor: Box<dyn crate::rig::HeadingSource>,
    /// The turntable.
    pub turntable: Box<dyn crate::rig::Turntable>,
    /// The engine's own clock.
    pub clock: EngineClock,
    /// Confirm prompts at once (a replay at full speed).
    pub auto_confirm_after_s: Option<f64>,
    /// Standard input may carry operator words (false when the sensor reads it).
    pub stdin_commands: bool,
    /// The sun below the horizon during the session ([`crate::cli::launch::no_sun_warnings`]).
    pub no_sun: Vec<String>,
}

/// Reads the rig file and the protocol, opens the devices and prepares the engine of one
/// rig. `label` starts every warning (`"[rig-2] "` beside other rigs, else empty).
pub fn prepare(
    args: &RunArgs,
    rig_file: &Path,
    animal: &str,
    label: &str,
) -> anyhow::Result<Prepared> {
    let mut rig = crate::rig::config::load_rig(rig_file)?;
    if args.headless && matches!(rig.sensor.source, SensorSource::Stdin) {
        eprintln!(
            "skybearing: {label}the sensor reads standard input, so operator words are not read from it; end with Ctrl-C"
        );
    }
    let (protocol, warnings) = crate::protocol::load_protocol(&args.protocol)?;
    for w in warnings {
        eprintln!("skybearing: warning: {label}{w}");
    }
    let sessions_dir = args
        .sessions
        .clone()
        .unwrap_or_else(|| rig.sessions_dir.clone());
    let replay = full_speed_replay(args, rig_file, &rig)?;
    if let Some((_, r)) = &replay {
        rig = r.clone();
    }
    // A GPS in the rig file is read for at most gps.wait_s; its fix gives the site and the UTC
    // (a replay keeps the rig file's: the recording was not made now).
    let gps = match (&rig.gps, &replay) {
        (Some(cfg), None) => Some(crate::rig::gps::acquire(cfg, &rig.site, &rig.source_name)),
        _ => None,
    };
    if let Some(g) = &gps {
        for w in g.warnings() {
            eprintln!("skybearing: warning: {label}{w}");
        }
        rig.site = g.site();
    }
    // Live: the UTC anchor is read once, at session second 0; after that only the monotonic
    // clock stamps samples, so a wall-clock step cannot bend t_s. Replay at full speed: the
    // anchor is --start and the engine's simulated clock follows the file's time column.
    let (start_utc, clock, shared): (_, EngineClock, Arc<dyn Clock>) = match &replay {
        Some((start, _)) => {
            let c = SimClock::new();
            (*start, EngineClock::Sim(c.clone()), Arc::new(c))
        }
        None => {
            let c = RealClock::start();
            let shared: Arc<dyn Clock> = Arc::new(c.clone());
            (
                crate::rig::gps::utc_now(gps.as_ref().and_then(|g| g.clock_offset_s()))
                    .trunc_subsecs(3),
                EngineClock::Real(Box::new(c)),
                shared,
            )
        }
    };
    let mut extra = serde_json::json!({ "rig_file": rig_file.display().to_string() });
    if replay.is_some() {
        extra["replay"] = serde_json::json!({
            "speed": "max",
            "clock": "the replay file's time column, from --start",
            "turntable": "replay: each turn reported done at once; prompts confirmed at once",
        });
    }
    let setup = SessionSetup {
        mode: "run".into(),
        animal: animal.to_string(),
        sessions_dir,
        protocol,
        rig: rig.clone(),
        start_utc,
        speed: args.speed,
        seed: None,
        extra,
        gps,
    };
    for w in super::launch::sun_view_warnings(&setup.protocol, &setup.rig, setup.start_utc) {
        eprintln!("skybearing: warning: {label}{w}");
    }
    let no_sun = crate::cli::launch::no_sun_warnings(&setup.protocol, &setup.rig, start_utc)?;
    let mut engine = Engine::new(setup)?;
    let sensor = crate::rig::open_sensor(&rig, shared.clone())
        .with_context(|| format!("{}: sensor", rig_file.display()))?;
    let turntable: Box<dyn crate::rig::Turntable> = if replay.is_some() {
        Box::new(crate::rig::turntable::ReplayTurntable::default())
    } else {
        crate::rig::open_turntable(&rig, shared.clone())
            .with_context(|| format!("{}: turntable", rig_file.display()))?
    };
    // Re-scoring a recording: the filter axes are in the recording too; no polarizer is opened.
    if replay.is_none()
        && let Some(p) = crate::rig::polarizer::open_polarizer(&rig, shared)
            .with_context(|| format!("{}: polarizer", rig_file.display()))?
    {
        engine = engine.with_polarizer(p);
    }
    Ok(Prepared {
        engine,
        sensor,
        turntable,
        clock,
        auto_confirm_after_s: replay.as_ref().map(|_| 0.0),
        stdin_commands: !matches!(rig.sensor.source, SensorSource::Stdin),
        no_sun,
    })
}

/// Runs the command; returns the exit status.
pub fn run(args: RunArgs) -> anyhow::Result<i32> {
    if args.rig.len() != args.animal.len() {
        anyhow::bail!(
            "{} --rig and {} --animal: give them in pairs, one animal per rig (the first animal on the first rig, and so on)",
            args.rig.len(),
            args.animal.len()
        );
    }
    if args.rig.len() > 1 {
        return super::rigs::run_rigs(&args);
    }
    let p = prepare(&args, &args.rig[0], &args.animal[0], "")?;
    let outcome = launch(
        p.engine,
        p.sensor,
        p.turntable,
        p.clock,
        Display {
            headless: args.headless,
            mono: args.mono,
            auto_confirm_after_s: p.auto_confirm_after_s,
            stdin_commands: p.stdin_commands,
            no_sun: p.no_sun,
            allow_no_sun: args.allow_no_sun,
        },
        None,
    )?;
    // 0 when the protocol finished or the operator ended the session; 1 after the abort rule.
    Ok(outcome.end.exit_code())
}
