//! `skybearing rig`: rig files.

use anyhow::Context;
use clap::{Args, Subcommand};
use std::io::Write;
use std::path::PathBuf;

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
                    drop(crate::rig::open_turntable(&rig, clock)?);
                }
            }
            println!(
                "{}: ok: site {} ({:.4}, {:.4}, {} m, {}); arena mark {} deg {}; sensor {}; turntable {}",
                file.display(),
                rig.site.name,
                rig.site.latitude_deg,
                rig.site.longitude_deg,
                rig.site.elevation_m,
                rig.time_zone,
                rig.arena_mark_bearing_deg,
                match rig.arena_mark_reference {
                    crate::rig::config::BearingReference::Magnetic => "magnetic",
                    crate::rig::config::BearingReference::True => "true",
                },
                serde_json::to_string(&rig.sensor.source)?,
                serde_json::to_string(&rig.turntable)?,
            );
            Ok(0)
        }
    }
}
