//! The command line. Each command's flags and handler live in its own file.

pub mod batch;
pub mod check;
pub mod demo;
pub mod launch;
pub mod plan;
pub mod report;
pub mod rig;
pub mod rigs;
pub mod run;
pub mod sim;
pub mod stats;
pub mod sun;

use clap::{Parser, Subcommand};

/// Plan, run, archive and analyse tethered sky-compass heading sessions.
#[derive(Debug, Parser)]
#[command(name = "skybearing", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run a full session on the built-in simulated rig (live screen, or --headless).
    Demo(demo::DemoArgs),
    /// Run a live session on real devices described by a rig file.
    Run(run::RunArgs),
    /// Serve a simulated rig on pseudo-terminals and write a rig file pointing at it.
    Sim(sim::SimArgs),
    /// Rig files.
    Rig(rig::RigArgs),
    /// Show a protocol's timeline with the sun at each epoch, before running it.
    Plan(plan::PlanArgs),
    /// Sun position and skylight polarization at one instant.
    Sun(sun::SunArgs),
    /// Circular statistics of angles in degrees, one per line.
    Stats(stats::StatsArgs),
    /// Validate session folders; --repair makes an interrupted one whole.
    Check(check::CheckArgs),
    /// Tables and figures for one session.
    Report(report::ReportArgs),
    /// Tidy tables and population statistics over many sessions.
    Batch(batch::BatchArgs),
}

/// Parses the command line, runs the command and returns the process exit status.
/// Errors are printed as one line on stderr: `skybearing: error: ...`.
pub fn main() -> i32 {
    let cli = Cli::parse();
    if !matches!(
        cli.command,
        Command::Demo(_) | Command::Run(_) | Command::Sim(_)
    ) {
        quiet_on_broken_pipe();
    }
    let result = match cli.command {
        Command::Demo(a) => demo::run(a),
        Command::Run(a) => run::run(a),
        Command::Sim(a) => sim::run(a),
        Command::Rig(a) => rig::run(a),
        Command::Plan(a) => plan::run(a),
        Command::Sun(a) => sun::run(a),
        Command::Stats(a) => stats::run(a),
        Command::Check(a) => check::run(a),
        Command::Report(a) => report::run(a),
        Command::Batch(a) => batch::run(a),
    };
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("skybearing: error: {}", one_line(&e));
            2
        }
    }
}

/// Commands that only print (check, plan, batch...) end quietly when the reader of their
/// output goes away (`skybearing check DIR --json | head`): the default action of SIGPIPE is
/// restored, as for any Unix filter, instead of Rust's "ignore", which turns every later
/// `println!` into a panic. Session commands (demo, run, sim) keep SIGPIPE ignored: their
/// progress lines are written with errors ignored, so a closed pipe never stops a session
/// before its archive is closed.
fn quiet_on_broken_pipe() {
    // SAFETY: called before any other thread exists; sets a standard signal disposition.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}

/// Joins an error chain into one line: "outer: inner: root".
pub fn one_line(e: &anyhow::Error) -> String {
    let parts: Vec<String> = e
        .chain()
        .map(|c| c.to_string().replace('\n', " "))
        .collect();
    let mut out: Vec<String> = Vec::new();
    for p in parts {
        // Skip a cause already contained in the previous message.
        if out.last().is_some_and(|last| last.contains(&p)) {
            continue;
        }
        out.push(p);
    }
    out.join(": ")
}
