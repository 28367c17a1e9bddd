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
    /// existing file is only overwritten if `skybearing sim` wrote it. Repeat it to serve
    /// several rigs at once: each has its own terminals, seed, animal and name (the file's stem,
    /// else rig-1, rig-2...).
    #[arg(long, value_name = "FILE", required = true)]
    pub write_rig: Vec<PathBuf>,
    /// Seed of the simulation (of the first rig; the others' are derived from it and their
    /// place, see `rig_seed`).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// With several rigs: the faults (--garbage, --unplug-at, --stall-turntable) are simulated
    /// on these rigs only (1-based, comma-separated, in the order of --write-rig). Default: all.
    #[arg(long, value_name = "N,...", value_delimiter = ',')]
    pub faults_on: Vec<usize>,
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
    let paths = args
        .write_rig
        .iter()
        .map(|p| absolute(p))
        .collect::<anyhow::Result<Vec<_>>>()?;
    for (k, p) in paths.iter().enumerate() {
        if paths[..k].contains(p) {
            bail!("--write-rig {}: given twice", p.display());
        }
        // The terminals' links are made beside the rig file, so its folder must exist.
        if let Some(dir) = p.parent()
            && !dir.is_dir()
        {
            bail!(
                "--write-rig {}: folder {} does not exist",
                p.display(),
                dir.display()
            );
        }
        if let Ok(old) = std::fs::read_to_string(p)
            && !old.starts_with(SIM_RIG_MARKER)
        {
            bail!(
                "{}: exists and was not written by `skybearing sim`; not overwritten",
                p.display()
            );
        }
    }
    for &n in &args.faults_on {
        if n == 0 || n > paths.len() {
            bail!(
                "--faults-on {n}: there are {} rigs (--write-rig), numbered from 1",
                paths.len()
            );
        }
    }
    let names = rig_names(&paths);
    let gps_cfg = match args.gps {
        true => Some(args.gps_args.config()?),
        false => None,
    };

    let mut servers: Vec<(String, PtyServer)> = Vec::new();
    let mut gps_servers: Vec<(String, crate::rig::sim::gps::SimGps)> = Vec::new();
    for (k, rig_path) in paths.iter().enumerate() {
        let seed = rig_seed(args.seed, k);
        let faults = args.faults_on.is_empty() || args.faults_on.contains(&(k + 1));
        let cfg = sim_config(&args, seed, faults)?;
        let prefix = rig_path.with_extension("");
        let server = PtyServer::new(cfg, &prefix).context("opening pseudo-terminals")?;
        let mut text = server.rig_text(seed, args.lost_after_s, args.turntable_timeout_s);
        if let Some(name) = &names[k] {
            text = with_rig_name(&text, name);
        }
        // Each rig gets its own simulated GPS receiver (all at the same site).
        if let Some(g) = &gps_cfg {
            let gps = crate::rig::sim::gps::SimGps::new(g.clone(), &prefix)
                .context("opening the GPS's pseudo-terminal")?;
            text.push_str(&gps.rig_section(args.gps_args.gps_wait_s));
            gps_servers.push((names[k].clone().unwrap_or_default(), gps));
        }
        std::fs::write(rig_path, text)
            .with_context(|| format!("{}: cannot write rig file", rig_path.display()))?;
        eprintln!(
            "sim: serving rig {}{} | sensor {} -> {} at {} Hz | turntable {} -> {} | polarizer {} | seed {} | animal {:?}{} | Ctrl-C to stop",
            rig_path.display(),
            names[k]
                .as_ref()
                .map_or(String::new(), |n| format!(" (name {n})")),
            server.sensor_link.display(),
            server
                .sensor_slave()
                .map_or("-".into(), |p| p.display().to_string()),
            args.rate_hz,
            server.turntable_link.display(),
            server.turntable_slave().display(),
            server.polarizer_link.display(),
            seed,
            args.animal_mode,
            if faults { "" } else { " | no faults" },
        );
        servers.push((names[k].clone().unwrap_or_default(), server));
    }

    // SAFETY: installing an async-signal-safe handler that only stores to an atomic.
    unsafe {
        libc::signal(libc::SIGINT, on_signal as *const () as libc::sighandler_t);
        libc::signal(libc::SIGTERM, on_signal as *const () as libc::sighandler_t);
    }
    for p in &paths {
        println!("{}", p.display());
    }
    let _ = std::io::stdout().flush();

    // Each GPS sends on its own thread: its once-a-second sentences need no rig state.
    let gps_threads: Vec<_> = gps_servers
        .into_iter()
        .map(|(name, mut gps)| {
            eprintln!("sim: {}GPS {} at 1 Hz", tag(&name), gps.link.display());
            let for_s = args.duration_s;
            std::thread::spawn(move || {
                let r = gps.serve(&STOP, for_s);
                gps.remove_link();
                r
            })
        })
        .collect();
    let result = serve_all(&mut servers, args.duration_s);
    STOP.store(true, Ordering::Relaxed);
    for t in gps_threads {
        match t.join() {
            Ok(r) => r.context("serving the simulated GPS")?,
            Err(_) => bail!("the simulated GPS thread panicked"),
        }
    }
    for (name, server) in &servers {
        server.remove_links();
        let w = server.world();
        let _ = writeln!(
            std::io::stderr(),
            "sim: {}stopped after {:.1} s: {} lines sent ({} malformed on purpose), {} dropped unread",
            tag(name),
            server.now_s(),
            w.lines_sent(),
            w.garbage_injected(),
            server.dropped()
        );
    }
    result.context("serving the simulated rig")?;
    Ok(0)
}

/// The seed of the `k`-th rig (0-based): `seed` itself for the first, so one rig is simulated
/// as before; for the others `seed` mixed with `k` by the golden-ratio increment of SplitMix64
/// (Steele, Lea & Flood 2014), so rigs differ and a run is reproduced by the same `--seed`.
pub fn rig_seed(seed: u64, k: usize) -> u64 {
    seed ^ (k as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
}

/// The rigs' names: none for a single rig (its session ids stay as they were); for several,
/// the files' stems when each is a valid rig name and all differ, else rig-1, rig-2...
fn rig_names(paths: &[PathBuf]) -> Vec<Option<String>> {
    if paths.len() < 2 {
        return vec![None; paths.len()];
    }
    let stems: Vec<Option<String>> = paths
        .iter()
        .map(|p| {
            let stem = p.file_stem()?.to_str()?;
            crate::rig::config::validate_rig_name(stem)
                .ok()
                .map(str::to_string)
        })
        .collect();
    let distinct = stems
        .iter()
        .enumerate()
        .all(|(k, s)| s.is_some() && !stems[..k].contains(s));
    if distinct {
        stems
    } else {
        (1..=paths.len())
            .map(|k| Some(format!("rig-{k}")))
            .collect()
    }
}

/// The rig file text with a top-level `name` (before the first key, after the header comment).
fn with_rig_name(text: &str, name: &str) -> String {
    let mut out = String::with_capacity(text.len() + 32);
    let mut done = false;
    for line in text.split_inclusive('\n') {
        if !done && !line.starts_with('#') {
            out.push_str(&format!("name = \"{name}\"\n"));
            done = true;
        }
        out.push_str(line);
    }
    out
}

/// "[name] " for a named rig, "" otherwise.
fn tag(name: &str) -> String {
    if name.is_empty() {
        String::new()
    } else {
        format!("[{name}] ")
    }
}

/// The simulation of one rig from the flags: its seed, and the faults only if `faults`.
fn sim_config(args: &SimArgs, seed: u64, faults: bool) -> anyhow::Result<SimConfig> {
    let mut cfg = SimConfig::new(seed);
    cfg.animal_mode = args.animal_mode;
    cfg.goal_deg = args.goal_deg;
    cfg.rate_hz = args.rate_hz;
    if faults {
        cfg.garbage_fraction = args.garbage;
        cfg.unplug_at_s = args.unplug_at;
        cfg.stall_turntable = args.stall_turntable;
    }
    cfg.unplug_for_s = args.unplug_for;
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
    Ok(cfg)
}

/// Serves every rig from this one thread until a stop signal (or `for_s` seconds): each step
/// does what is due on every rig; notices go to stderr, named by rig when it has a name.
fn serve_all(servers: &mut [(String, PtyServer)], for_s: Option<f64>) -> std::io::Result<()> {
    let mut notices = Vec::new();
    let pause = servers
        .iter()
        .map(|(_, s)| s.pause())
        .min()
        .unwrap_or(std::time::Duration::from_millis(10));
    while !STOP.load(Ordering::Relaxed) {
        let mut now = 0.0;
        for (name, server) in servers.iter_mut() {
            server.step(&mut notices)?;
            now = server.now_s();
            for n in notices.drain(..) {
                // A closed stderr (a pipe whose reader left) must not stop the simulator.
                let _ = writeln!(
                    std::io::stderr(),
                    "sim: {now:8.1} s  {}{}",
                    tag(name),
                    notice_text(&n)
                );
            }
        }
        if for_s.is_some_and(|f| now >= f) {
            break;
        }
        std::thread::sleep(pause);
    }
    Ok(())
}

/// A notice in the operator's words.
fn notice_text(n: &SimNotice) -> String {
    match n {
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
    }
}

fn absolute(p: &std::path::Path) -> anyhow::Result<PathBuf> {
    if p.is_absolute() {
        return Ok(p.to_path_buf());
    }
    Ok(std::env::current_dir()
        .context("current directory")?
        .join(p))
}
