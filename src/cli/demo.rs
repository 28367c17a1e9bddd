//! `skybearing demo`: a full session on the built-in simulated rig (in-process), with the live
//! screen or `--headless`.

use crate::cli::launch::{Display, launch};
use crate::clock::{ScaledClock, SimClock};
use crate::engine::session::{Engine, EngineClock, SessionSetup, Speed};
use crate::rig::sim::{AnimalMode, SimConfig};
use anyhow::{Context, bail};
use chrono::{DateTime, SubsecRound, Utc};
use clap::{Args, ValueEnum};
use std::path::PathBuf;

/// Which cue the simulated animal steers by.
#[derive(Debug, Clone, Copy, ValueEnum, PartialEq, Eq)]
pub enum AnimalModeArg {
    /// A sky-compass animal: its own heading relative to the sun while the sun is in view,
    /// else an axial heading relative to the e-vector shown, else a random walk.
    Sky,
    /// Steers by the e-vector shown only, else a random walk.
    Polarization,
    /// Holds a heading relative to the arena.
    Arena,
    /// Random walk.
    None,
}

/// Flags of `skybearing demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// No screen: print progress lines and, last, the session folder.
    #[arg(long)]
    pub headless: bool,
    /// Times faster than real time, or `max` (as fast as the machine allows).
    #[arg(long, default_value = "1", value_parser = parse_speed)]
    pub speed: Speed,
    /// Seed of the simulated rig (same seed and start give identical archives).
    #[arg(long, default_value_t = 7)]
    pub seed: u64,
    /// Sessions folder.
    #[arg(long, default_value = "sessions")]
    pub sessions: PathBuf,
    /// Protocol file (default: the built-in demo protocol, about 30 minutes).
    #[arg(long)]
    pub protocol: Option<PathBuf>,
    /// Session start in UTC (RFC 3339); default now.
    #[arg(long, value_parser = parse_start)]
    pub start: Option<DateTime<Utc>>,
    /// What the simulated animal steers by.
    #[arg(long, value_enum, default_value = "sky")]
    pub animal_mode: AnimalModeArg,
    /// Animal id written into the archive.
    #[arg(long, default_value = "lm-07")]
    pub animal: String,
    /// Simulated sensor rate, Hz.
    #[arg(long, default_value_t = 100.0)]
    pub rate_hz: f64,
    /// Fraction of malformed sensor lines to inject (0 to 1).
    #[arg(long, default_value_t = 0.0)]
    pub garbage: f64,
    /// Unplug the simulated sensor at this session second.
    #[arg(long)]
    pub unplug_at: Option<f64>,
    /// ...for this many seconds.
    #[arg(long, default_value_t = 2.0)]
    pub unplug_for: f64,
    /// The simulated turntable never answers (to rehearse a fault).
    #[arg(long)]
    pub stall_turntable: bool,
    /// Monochrome screen (also when NO_COLOR is set).
    #[arg(long)]
    pub mono: bool,
    /// Start although the sun is below the horizon during the session (the warnings are still
    /// printed). Without it the live screen asks first and a headless run refuses.
    #[arg(long)]
    pub allow_no_sun: bool,
}

/// Parses `--speed`: a positive factor or `max`.
pub fn parse_speed(s: &str) -> Result<Speed, String> {
    if s.eq_ignore_ascii_case("max") {
        return Ok(Speed::Max);
    }
    match s.parse::<f64>() {
        Ok(x) if x.is_finite() && x > 0.0 && x <= 1e6 => Ok(Speed::Times(x)),
        _ => Err(format!(
            "'{s}' is not a speed: give a factor such as 1, 30 or 600, or 'max'"
        )),
    }
}

/// Parses `--start` as RFC 3339, into UTC, truncated to milliseconds.
pub fn parse_start(s: &str) -> Result<DateTime<Utc>, String> {
    DateTime::parse_from_rfc3339(s)
        .map(|t| t.with_timezone(&Utc).trunc_subsecs(3))
        .map_err(|e| format!("'{s}' is not an RFC 3339 time such as 2026-06-14T09:30:00Z ({e})"))
}

/// The demo's start when none is given: now if the sun stands at least 10° high at the demo
/// site, else the next whole hour when it stands at least 15° high (a sky-compass demo at night
/// would show nothing useful). Returns whether the start was moved.
pub fn default_start(site: &crate::sky::Site, now: DateTime<Utc>) -> (DateTime<Utc>, bool) {
    let elevation = |t: DateTime<Utc>| {
        crate::sky::sun::sun_position(site.latitude_deg, site.longitude_deg, site.elevation_m, t)
            .map(|p| p.elevation_deg)
            .unwrap_or(f64::NAN)
    };
    if elevation(now) >= 10.0 {
        return (now, false);
    }
    let hour =
        now.trunc_subsecs(0) - chrono::Duration::seconds(i64::from(now.timestamp() as i32 % 3600));
    for h in 1..=48 {
        let t = hour + chrono::Duration::hours(h);
        if elevation(t) >= 15.0 {
            return (t, true);
        }
    }
    (now, false)
}

/// Runs the command; returns the exit status.
pub fn run(args: DemoArgs) -> anyhow::Result<i32> {
    if !(0.0..=1.0).contains(&args.garbage) {
        bail!(
            "--garbage: {} is not a fraction between 0 and 1",
            args.garbage
        );
    }
    if !(args.rate_hz > 0.0 && args.rate_hz <= 10_000.0) {
        bail!("--rate-hz: {} is outside (0, 10000]", args.rate_hz);
    }
    let protocol = match &args.protocol {
        Some(p) => {
            let (protocol, warnings) = crate::protocol::load_protocol(p)?;
            for w in warnings {
                eprintln!("skybearing: warning: {w}");
            }
            protocol
        }
        None => crate::protocol::demo_protocol(),
    };
    let rig = crate::rig::config::demo_rig();
    let site = rig.site.clone();
    let start_utc = match args.start {
        Some(t) => t,
        None => {
            let (t, moved) = default_start(&site, Utc::now().trunc_subsecs(3));
            if moved {
                eprintln!(
                    "skybearing: the sun is low at the demo site now; the simulated session starts at {} instead (pass --start to choose)",
                    t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
                );
            }
            t
        }
    };
    let track = crate::sky::sun::SunTrack::new(
        site.latitude_deg,
        site.longitude_deg,
        site.elevation_m,
        start_utc,
    )
    .context("demo site")?;
    let mode = match args.animal_mode {
        AnimalModeArg::Sky => AnimalMode::Sky,
        AnimalModeArg::Polarization => AnimalMode::Polarization,
        AnimalModeArg::Arena => AnimalMode::Arena,
        AnimalModeArg::None => AnimalMode::None,
    };
    let mut sim = SimConfig::new(args.seed);
    sim.animal_mode = mode;
    sim.sun_elevation_deg = track.clone().into_elevation_fn();
    sim.sun_azimuth_deg = track.into_azimuth_fn();
    sim.sky_view_min_elevation_deg = rig.sky_view_min_elevation_deg;
    sim.arena_mark_true_bearing_deg = rig.arena_mark_bearing_deg;
    sim.rate_hz = args.rate_hz;
    sim.garbage_fraction = args.garbage;
    sim.unplug_at_s = args.unplug_at;
    sim.unplug_for_s = args.unplug_for;
    sim.stall_turntable = args.stall_turntable;
    let sim_settings = serde_json::json!({
        "seed": args.seed,
        "animal_mode": format!("{:?}", args.animal_mode).to_lowercase(),
        "preferred_sun_relative_deg": sim.goal_deg,
        "rate_hz": args.rate_hz,
        "garbage": args.garbage,
        "unplug_at_s": args.unplug_at,
        "unplug_for_s": args.unplug_for,
        "stall_turntable": args.stall_turntable,
    });
    let (sensor, turntable, operator) = crate::rig::sim::in_process_with_operator(sim);
    let setup = SessionSetup {
        mode: "demo".into(),
        animal: args.animal.clone(),
        sessions_dir: args.sessions.clone(),
        protocol,
        rig,
        start_utc,
        speed: args.speed,
        seed: Some(args.seed),
        extra: serde_json::json!({ "simulator": sim_settings }),
        gps: None,
    };
    for w in super::launch::sun_view_warnings(&setup.protocol, &setup.rig, setup.start_utc) {
        eprintln!("skybearing: warning: {w}");
    }
    let no_sun = crate::cli::launch::no_sun_warnings(&setup.protocol, &setup.rig, start_utc)?;
    let engine = Engine::new(setup)?;
    let clock = match args.speed {
        Speed::Max => EngineClock::Sim(SimClock::new()),
        Speed::Times(x) => EngineClock::Real(Box::new(ScaledClock::start(x))),
    };
    let outcome = launch(
        engine,
        sensor,
        turntable,
        clock,
        Display {
            headless: args.headless,
            mono: args.mono,
            auto_confirm_after_s: Some(5.0),
            stdin_commands: true,
            no_sun,
            allow_no_sun: args.allow_no_sun,
        },
        Some(operator),
    )?;
    // 0 when the protocol finished or the operator ended the session; 1 after the abort rule.
    Ok(outcome.end.exit_code())
}
