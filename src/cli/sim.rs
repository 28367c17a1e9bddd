//! `skybearing sim`: a simulated rig on pseudo-terminals, in real time, until interrupted.

use crate::rig::pty::{PtyServer, SIM_RIG_MARKER, SimNotice};
use crate::rig::sim::{AnimalMode, SimConfig};
use anyhow::{Context, bail};
use clap::Args;
use std::io::Write;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};

/// Flags of `skybearing sim`.
#[derive(Debug, Args)]
pub struct SimArgs {
    /// Rig file to write; its sensor and turntable point at the simulator's terminals. An
    /// existing file is only overwritten if `skybearing sim` wrote it.
    #[arg(long, value_name = "FILE")]
    pub write_rig: PathBuf,
    /// Seed of the simulation.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Fraction of sensor lines replaced by malformed ones, [0, 1].
    #[arg(long, value_name = "FRACTION", default_value_t = 0.0)]
    pub garbage: f64,
    /// Unplug the sensor this many seconds after the start.
    #[arg(long, value_name = "S")]
    pub unplug_at: Option<f64>,
    /// ...for this many seconds.
    #[arg(long, value_name = "S", default_value_t = 5.0)]
    pub unplug_for: f64,
    /// The turntable never answers (the driver reports a fault after its timeout and retry).
    #[arg(long)]
    pub stall_turntable: bool,
    /// What the simulated animal steers by.
    #[arg(long, value_enum, default_value = "sky")]
    pub animal_mode: AnimalMode,
    /// Sensor lines per second.
    #[arg(long, value_name = "HZ", default_value_t = 100.0)]
    pub rate_hz: f64,
    /// Heading held: relative to the sun (sky), to the arena (arena) or the start (none).
    #[arg(long, value_name = "DEG", default_value_t = 90.0)]
    pub goal_deg: f64,
    /// A fixed sun azimuth instead of the real sun at the demo site now (indoor rehearsal).
    #[arg(long, value_name = "DEG")]
    pub sun_azimuth_deg: Option<f64>,
    /// Flight stops per hour of flight (0: the animal never stops).
    #[arg(long, value_name = "N", default_value_t = 6.0)]
    pub stops_per_hour: f64,
    /// Sensor lost after this much silence (written into the rig file), seconds.
    #[arg(long, value_name = "S", default_value_t = 1.0)]
    pub lost_after_s: f64,
    /// Turntable reply timeout written into the rig file, seconds.
    #[arg(long, value_name = "S", default_value_t = 10.0)]
    pub turntable_timeout_s: f64,
    /// Stop by itself after this many seconds.
    #[arg(long, value_name = "S")]
    pub duration_s: Option<f64>,
    /// Also serve a GPS receiver (NMEA 0183 RMC and GGA at 1 Hz) and give the rig file a
    /// `[gps]` section pointing at it.
    #[arg(long)]
    pub gps: bool,
    #[command(flatten)]
    pub gps_args: SimGpsArgs,
}

/// What the simulated GPS reports (with `--gps`).
#[derive(Debug, Args)]
pub struct SimGpsArgs {
    /// Latitude the GPS reports, degrees north (default: the demo site's).
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    pub gps_lat: Option<f64>,
    /// Longitude the GPS reports, degrees east (default: the demo site's).
    #[arg(long, value_name = "DEG", allow_hyphen_values = true)]
    pub gps_lon: Option<f64>,
    /// Altitude the GPS reports, metres above mean sea level (default: the demo site's).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub gps_elevation_m: Option<f64>,
    /// How far the laptop's clock is ahead of the GPS's, seconds (negative: behind).
    #[arg(
        long,
        value_name = "S",
        default_value_t = 0.0,
        allow_hyphen_values = true
    )]
    pub gps_clock_offset_s: f64,
    /// The GPS never gets a fix (status V, quality 0).
    #[arg(long)]
    pub gps_no_fix: bool,
    /// The GPS sends garbage from this many seconds after the start on.
    #[arg(long, value_name = "S")]
    pub gps_garbage_after_s: Option<f64>,
    /// `gps.wait_s` written into the rig file: the longest wait for a fix at session start.
    #[arg(long, value_name = "S", default_value_t = crate::rig::gps::DEFAULT_WAIT_S)]
    pub gps_wait_s: f64,
}

impl SimGpsArgs {
    /// Checks the flags into the simulated receiver's settings.
    fn config(&self) -> anyhow::Result<crate::rig::sim::gps::SimGpsConfig> {
        let site = crate::sky::demo_site();
        let cfg = crate::rig::sim::gps::SimGpsConfig {
            latitude_deg: self.gps_lat.unwrap_or(site.latitude_deg),
            longitude_deg: self.gps_lon.unwrap_or(site.longitude_deg),
            altitude_m: self.gps_elevation_m.unwrap_or(site.elevation_m),
            laptop_ahead_s: self.gps_clock_offset_s,
            no_fix: self.gps_no_fix,
            garbage_after_s: self.gps_garbage_after_s,
        };
        check_range("gps-lat", cfg.latitude_deg, -90.0, 90.0)?;
        check_range("gps-lon", cfg.longitude_deg, -180.0, 180.0)?;
        check_range("gps-elevation-m", cfg.altitude_m, -500.0, 9000.0)?;
        check_range("gps-clock-offset-s", cfg.laptop_ahead_s, -1e9, 1e9)?;
        check_range("gps-wait-s", self.gps_wait_s, 0.0, 600.0)?;
        if let Some(g) = cfg.garbage_after_s {
            check_range("gps-garbage-after-s", g, 0.0, 86400.0)?;
        }
        Ok(cfg)
    }
}

static STOP: AtomicBool = AtomicBool::new(false);

extern "C" fn on_signal(_sig: libc::c_int) {
    STOP.store(true, Ordering::Relaxed);
}

fn check_range(name: &str, v: f64, lo: f64, hi: f64) -> anyhow::Result<()> {
    if !v.is_finite() || v < lo || v > hi {
        bail!("--{name}: {v} is outside [{lo}, {hi}]");
    }
    Ok(())
}

/// Runs the command; returns the exit status.
pub fn run(args: SimArgs) -> anyhow::Result<i32> {
    check_range("garbage", args.garbage, 0.0, 1.0)?;
    check_range("rate-hz", args.rate_hz, 0.1, 5000.0)?;
    check_range("unplug-for", args.unplug_for, 0.0, 86400.0)?;
    if let Some(u) = args.unplug_at {
        check_range("unplug-at", u, 0.0, 86400.0)?;
    }
    check_range("goal-deg", args.goal_deg, -360.0, 360.0)?;
    check_range("stops-per-hour", args.stops_per_hour, 0.0, 3600.0)?;
    check_range("lost-after-s", args.lost_after_s, 0.01, 3600.0)?;
    check_range("turntable-timeout-s", args.turntable_timeout_s, 0.05, 600.0)?;
    if let Some(s) = args.sun_azimuth_deg {
        check_range("sun-azimuth-deg", s, -360.0, 360.0)?;
    }
    if let Ok(old) = std::fs::read_to_string(&args.write_rig)
        && !old.starts_with(SIM_RIG_MARKER)
    {
        bail!(
            "{}: exists and was not written by `skybearing sim`; not overwritten",
            args.write_rig.display()
        );
    }

    let mut cfg = SimConfig::new(args.seed);
    cfg.animal_mode = args.animal_mode;
    cfg.goal_deg = args.goal_deg;
    cfg.rate_hz = args.rate_hz;
    cfg.garbage_fraction = args.garbage;
    cfg.unplug_at_s = args.unplug_at;
    cfg.unplug_for_s = args.unplug_for;
    cfg.stall_turntable = args.stall_turntable;
    cfg.flight_stops_per_hour = args.stops_per_hour;
    cfg.lost_after_s = args.lost_after_s;
    cfg.turntable_timeout_s = args.turntable_timeout_s;
    let gps_cfg = match args.gps {
        true => Some(args.gps_args.config()?),
        false => None,
    };
    cfg.sun_azimuth_deg = match args.sun_azimuth_deg {
        Some(az) => Box::new(move |_| az),
        None => {
            // The animal steers by the sun where the simulated GPS says the rig is.
            let mut site = crate::sky::demo_site();
            if let Some(g) = &gps_cfg {
                site.latitude_deg = g.latitude_deg;
                site.longitude_deg = g.longitude_deg;
            }
            let track = crate::sky::sun::SunTrack::new(
                site.latitude_deg,
                site.longitude_deg,
                site.elevation_m,
                chrono::Utc::now(),
            )
            .context("sun track for the demo site")?;
            track.into_azimuth_fn()
        }
    };

    let rig_path = absolute(&args.write_rig)?;
    let prefix = rig_path.with_extension("");
    let mut server = PtyServer::new(cfg, &prefix).context("opening pseudo-terminals")?;
    let mut text = server.rig_text(args.seed, args.lost_after_s, args.turntable_timeout_s);
    let gps = match gps_cfg {
        Some(g) => {
            let gps = crate::rig::sim::gps::SimGps::new(g, &prefix)
                .context("opening the GPS's pseudo-terminal")?;
            text.push_str(&gps.rig_section(args.gps_args.gps_wait_s));
            Some(gps)
        }
        None => None,
    };
    std::fs::write(&rig_path, text)
        .with_context(|| format!("{}: cannot write rig file", rig_path.display()))?;

    // SAFETY: installing an async-signal-safe handler that only stores to an atomic.
    unsafe {
        libc::signal(libc::SIGINT, on_signal as *const () as libc::sighandler_t);
        libc::signal(libc::SIGTERM, on_signal as *const () as libc::sighandler_t);
    }

    println!("{}", rig_path.display());
    // The GPS sends on its own thread: its once-a-second sentences need no rig state.
    let gps_thread = gps.map(|mut gps| {
        eprintln!("sim: GPS {} at 1 Hz", gps.link.display());
        let for_s = args.duration_s;
        std::thread::spawn(move || {
            let r = gps.serve(&STOP, for_s);
            gps.remove_link();
            r
        })
    });
    eprintln!(
        "sim: serving rig {} | sensor {} -> {} at {} Hz | turntable {} -> {} | polarizer {} | seed {} | animal {:?} | Ctrl-C to stop",
        rig_path.display(),
        server.sensor_link.display(),
        server
            .sensor_slave()
            .map_or("-".into(), |p| p.display().to_string()),
        args.rate_hz,
        server.turntable_link.display(),
        server.turntable_slave().display(),
        server.polarizer_link.display(),
        args.seed,
        args.animal_mode,
    );
    let result = server.serve(&STOP, args.duration_s, |t, n| {
        let what = match n {
            SimNotice::Unplugged => "sensor unplugged".to_string(),
            SimNotice::Replugged(p) => format!("sensor plugged in again ({})", p.display()),
            SimNotice::TurnCommand {
                id,
                by_deg,
                accepted: true,
            } => format!("turn {id} by {by_deg} deg started"),
            SimNotice::TurnCommand {
                id,
                accepted: false,
                ..
            } => format!("turn {id} ignored (turntable stalled)"),
            SimNotice::TurnDone { id, position_deg } => {
                format!("turn {id} done, position {position_deg:.1} deg")
            }
            SimNotice::AxisCommand { id, axis_deg } => {
                format!("polarizer command {id}: axis {axis_deg:.1} deg")
            }
            SimNotice::AxisDone { id, axis_deg } => format!(
                "polarizer {id} done, axis {axis_deg:.1} deg (the animal is shown this filter, sun blocked)"
            ),
            SimNotice::Flight(true) => "animal flies again".into(),
            SimNotice::Flight(false) => "animal stopped flying".into(),
            SimNotice::Unknown(s) => format!("turntable: unknown command \"{s}\""),
        };
        // A closed stderr (a pipe whose reader left) must not stop the simulator.
        let _ = writeln!(std::io::stderr(), "sim: {t:8.1} s  {what}");
    });
    server.remove_links();
    if let Some(t) = gps_thread {
        STOP.store(true, Ordering::Relaxed);
        match t.join() {
            Ok(r) => r.context("serving the simulated GPS")?,
            Err(_) => bail!("the simulated GPS thread panicked"),
        }
    }
    let w = server.world();
    let _ = writeln!(
        std::io::stderr(),
        "sim: stopped after {:.1} s: {} lines sent ({} malformed on purpose), {} dropped unread",
        server.now_s(),
        w.lines_sent(),
        w.garbage_injected(),
        server.dropped()
    );
    result.context("serving the simulated rig")?;
    Ok(0)
}

fn absolute(p: &std::path::Path) -> anyhow::Result<PathBuf> {
    if p.is_absolute() {
        return Ok(p.to_path_buf());
    }
    Ok(std::env::current_dir()
        .context("current directory")?
        .join(p))
}
