//! `skybearing rig`: rig files.

use anyhow::Context;
use clap::{Args, Subcommand};
use std::io::Write;
use std::path::PathBuf;

use crate::frames::{Direction, SensorUnit};
use crate::rig::config::{
    BearingReference, ReplayPace, Rig, SensorSource, TimeUnit, TurntableConfig,
};

/// Flags of `skybearing rig`.
#[derive(Debug, Args)]
pub struct RigArgs {
    #[command(subcommand)]
    command: RigCommand,
}

#[derive(Debug, Subcommand)]
enum RigCommand {
    /// Write a commented rig-file template to fill in (refuses to overwrite a file).
    Init {
        /// The file to write.
        file: PathBuf,
    },
    /// Read and check a rig file; prints what it describes.
    Check {
        /// The rig file.
        file: PathBuf,
        /// Also open the sensor and turntable ports (are they there and readable?).
        #[arg(long)]
        open: bool,
    },
}

/// Runs the command; returns the exit status.
pub fn run(args: RigArgs) -> anyhow::Result<i32> {
    match args.command {
        RigCommand::Init { file } => {
            let mut f = std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&file)
                .with_context(|| {
                    if file.exists() {
                        format!("{}: already exists, not overwritten", file.display())
                    } else {
                        format!("{}: cannot create", file.display())
                    }
                })?;
            f.write_all(crate::rig::config::TEMPLATE.as_bytes())
                .with_context(|| format!("{}: cannot write", file.display()))?;
            println!(
                "wrote rig template {} (fill in the values marked REQUIRED)",
                file.display()
            );
            Ok(0)
        }
        RigCommand::Check { file, open } => {
            let rig = crate::rig::config::load_rig(&file)?;
            if open {
                let clock: std::sync::Arc<dyn crate::clock::Clock> =
                    std::sync::Arc::new(crate::clock::RealClock::start());
                if rig.sensor.source != crate::rig::config::SensorSource::Sim {
                    drop(crate::rig::open_sensor(&rig, clock.clone())?);
                }
                if rig.turntable != crate::rig::config::TurntableConfig::Sim {
                    drop(crate::rig::open_turntable(&rig, clock.clone())?);
                }
                drop(crate::rig::polarizer::open_polarizer(&rig, clock)?);
            }
            print!("{}", describe_rig(&file.display().to_string(), &rig));
            // --open with a GPS: read it as a session start would, and say what it gave.
            if open && let Some(g) = &rig.gps {
                let start = crate::rig::gps::acquire(g, &rig.site, &rig.source_name);
                for (kind, detail) in start.events() {
                    println!("  {kind}: {detail}");
                }
            }
            Ok(0)
        }
    }
}

/// What `rig check` prints: the rig in words, one aspect a line.
pub fn describe_rig(file: &str, rig: &Rig) -> String {
    let site = &rig.site;
    let reference = match rig.arena_mark_reference {
        BearingReference::Magnetic => "magnetic (corrected with the WMM declination at run time)",
        BearingReference::True => "true",
    };
    format!(
        "{file}: ok\n  site       {} ({:.4}, {:.4}, {} m), time zone {}\n  arena      0 mark at {} deg {reference}\n  sensor     {}\n  turntable  {}\n{}{}  sessions   {}\n",
        site.name,
        site.latitude_deg,
        site.longitude_deg,
        site.elevation_m,
        rig.time_zone,
        rig.arena_mark_bearing_deg,
        describe_sensor(rig),
        describe_turntable(&rig.turntable),
        match &rig.polarizer {
            None => String::new(),
            Some(crate::rig::config::PolarizerConfig::Manual) => {
                "  polarizer  set by hand when prompted\n".to_string()
            }
            Some(crate::rig::config::PolarizerConfig::Serial {
                path,
                baud,
                timeout_s,
                ..
            }) => format!(
                "  polarizer  serial port {} at {baud} baud, reply within {timeout_s} s\n",
                path.display()
            ),
        },
        match &rig.gps {
            None => String::new(),
            Some(g) => format!(
                "  gps        serial port {} at {} baud: site and UTC from its fix, awaited up to {} s at each start (else the site above)\n",
                g.path.display(),
                g.baud,
                g.wait_s
            ),
        },
        rig.sessions_dir.display(),
    )
}

fn describe_sensor(rig: &Rig) -> String {
    let s = &rig.sensor;
    let d = &s.decoder;
    let from = match &s.source {
        SensorSource::Serial { path, baud } => {
            format!("serial port {} at {baud} baud", path.display())
        }
        SensorSource::Stdin => "standard input".to_string(),
        SensorSource::Replay { path, pace } => format!(
            "replay of {} ({})",
            path.display(),
            match pace {
                ReplayPace::Recorded => "at its recorded times",
                ReplayPace::Fast => "as fast as it is read",
            }
        ),
        SensorSource::Sim => "built-in simulator".to_string(),
    };
    let delim = match d.delimiter {
        ' ' | '\t' => "blank-separated".to_string(),
        c => format!("\"{c}\"-separated"),
    };
    let time = match d.time_column {
        Some(c) => format!(
            ", device time in column {c} ({})",
            match d.time_unit {
                TimeUnit::Ms => "ms",
                TimeUnit::Us => "us",
            }
        ),
        None => String::new(),
    };
    let cal = &rig.calibration;
    let unit = match cal.unit {
        SensorUnit::Degrees => "degrees".to_string(),
        SensorUnit::Radians => "radians".to_string(),
        SensorUnit::Counts { per_rev } => format!("counts ({per_rev} per revolution)"),
    };
    let dir = match cal.direction {
        Direction::Clockwise => "clockwise",
        Direction::Counterclockwise => "counterclockwise (mirrored)",
    };
    format!(
        "{from}; {delim} lines, heading in column {}{time}; {unit}, {dir}, zero offset {} deg; lost after {} s without a line",
        d.value_column, cal.zero_offset_deg, s.lost_after_s
    )
}

fn describe_turntable(t: &TurntableConfig) -> String {
    match t {
        TurntableConfig::Serial {
            path,
            baud,
            timeout_s,
            ..
        } => format!(
            "serial controller on {} at {baud} baud, reply within {timeout_s} s (one retry)",
            path.display()
        ),
        TurntableConfig::Manual => {
            "turned by hand (the operator is prompted before each turn)".to_string()
        }
        TurntableConfig::Sim => "built-in simulator".to_string(),
    }
}
