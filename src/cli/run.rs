//! `skybearing run`: a live session on real devices (or a rig served by `skybearing sim`).

use crate::cli::launch::{Display, launch};
use crate::clock::{Clock, RealClock};
use crate::engine::session::{Engine, EngineClock, SessionSetup, Speed};
use anyhow::Context;
use chrono::{SubsecRound, Utc};
use clap::Args;
use std::path::PathBuf;
use std::sync::Arc;

/// Flags of `skybearing run`.
#[derive(Debug, Args)]
pub struct RunArgs {
    /// Rig file (TOML; `skybearing rig init FILE` writes a template).
    #[arg(long)]
    pub rig: PathBuf,
    /// Protocol file (TOML; see protocols/).
    #[arg(long)]
    pub protocol: PathBuf,
    /// Animal id written into the archive (letters, digits, - _ .). Required: a session
    /// without the animal's own id cannot be told apart from the others later.
    #[arg(long, value_name = "ID")]
    pub animal: String,
    /// Sessions folder (default: the rig file's, else ./sessions).
    #[arg(long)]
    pub sessions: Option<PathBuf>,
    /// No screen: progress lines on stdout; operator words on stdin (ok, stop, fly, note TEXT,
    /// pause, resume, skip, end; at a turn prompt `cannot` = could not turn; `hand` = every
    /// later turn by hand).
    #[arg(long)]
    pub headless: bool,
    /// Monochrome screen (also when NO_COLOR is set).
    #[arg(long)]
    pub mono: bool,
    /// Start although the sun is below the horizon during the session (the warnings are still
    /// printed). Without it the live screen asks first and a headless run refuses.
    #[arg(long)]
    pub allow_no_sun: bool,
}

/// Runs the command; returns the exit status.
pub fn run(args: RunArgs) -> anyhow::Result<i32> {
    let rig = crate::rig::config::load_rig(&args.rig)?;
    if args.headless && matches!(rig.sensor.source, crate::rig::config::SensorSource::Stdin) {
        eprintln!(
            "skybearing: the sensor reads standard input, so operator words are not read from it; end with Ctrl-C"
        );
    }
    let (protocol, warnings) = crate::protocol::load_protocol(&args.protocol)?;
    for w in warnings {
        eprintln!("skybearing: warning: {w}");
    }
    let sessions_dir = args
        .sessions
        .clone()
        .unwrap_or_else(|| rig.sessions_dir.clone());
    let clock = RealClock::start();
    // The UTC anchor is read once, at session second 0; after that only the monotonic clock
    // stamps samples, so a wall-clock step cannot bend t_s.
    let start_utc = Utc::now().trunc_subsecs(3);
    let shared: Arc<dyn Clock> = Arc::new(clock.clone());
    let setup = SessionSetup {
        mode: "run".into(),
        animal: args.animal.clone(),
        sessions_dir,
        protocol,
        rig: rig.clone(),
        start_utc,
        speed: Speed::Times(1.0),
        seed: None,
        extra: serde_json::json!({ "rig_file": args.rig.display().to_string() }),
    };
    for w in super::launch::sun_view_warnings(&setup.protocol, &setup.rig, setup.start_utc) {
        eprintln!("skybearing: warning: {w}");
    }
    let no_sun = crate::cli::launch::no_sun_warnings(&setup.protocol, &setup.rig, start_utc)?;
    let engine = Engine::new(setup)?;
    let sensor = crate::rig::open_sensor(&rig, shared.clone())
        .with_context(|| format!("{}: sensor", args.rig.display()))?;
    let turntable = crate::rig::open_turntable(&rig, shared)
        .with_context(|| format!("{}: turntable", args.rig.display()))?;
    let outcome = launch(
        engine,
        sensor,
        turntable,
        EngineClock::Real(Box::new(clock)),
        Display {
            headless: args.headless,
            mono: args.mono,
            auto_confirm_after_s: None,
            stdin_commands: !matches!(rig.sensor.source, crate::rig::config::SensorSource::Stdin),
            no_sun,
            allow_no_sun: args.allow_no_sun,
        },
        None,
    )?;
    // 0 when the protocol finished or the operator ended the session; 1 after the abort rule.
    Ok(outcome.end.exit_code())
}
