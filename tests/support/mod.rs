//! Scaffolding shared by the whole-program tests: each test file takes it with `mod support;`.
//! Not every test file uses every helper.
//!
//! - this file: the binary under test, running it, reading what it wrote;
//! - [`demo`]: headless demo sessions at a fixed start;
//! - [`figures`]: checks of figures for print (size in mm at 300 dpi, type, palette);
//! - [`sessions`]: session folders written through the archive's own writer (also used by
//!   `benches/batch.rs`, so it stands alone), and CSV reading;
//! - [`sim`]: `skybearing sim` on pseudo-terminals, and `run` against it;
//! - [`tmux`]: a private tmux server that runs the live screen, reads it and sends keys.
#![allow(dead_code)]

pub mod demo;
pub mod figures;
pub mod sessions;
pub mod sim;
pub mod tmux;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The binary under test.
pub const BIN: &str = env!("CARGO_BIN_EXE_skybearing");

/// A command for the binary under test.
pub fn bin() -> Command {
    Command::new(BIN)
}

/// Runs the binary with `args`: exit code (-1 when a signal ended it), stdout, stderr.
pub fn run(args: &[&str]) -> (i32, String, String) {
    let out = bin().args(args).output().expect("run the binary");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Reads and parses a JSON file.
pub fn read_json(path: &Path) -> serde_json::Value {
    let text =
        std::fs::read_to_string(path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("parse {}: {e}", path.display()))
}

/// The session folder that `run` and `demo` print as their last line of stdout.
pub fn session_folder(stdout: &str) -> PathBuf {
    PathBuf::from(stdout.lines().last().expect("a last line").trim())
}

/// Asserts that a `run` or `demo` succeeded (showing its output if not) and returns the session
/// folder it printed last.
pub fn finished_session(out: &Output) -> PathBuf {
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{stdout}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    session_folder(&stdout)
}

/// Set (to `1`) by `.ci/run`: a test whose system tool is missing fails instead of skipping.
pub const REQUIRE_TOOLS_ENV: &str = "SKYBEARING_REQUIRE_TOOLS";

/// Whether a test that needs a system tool should skip: false when `available`; otherwise,
/// when [`REQUIRE_TOOLS_ENV`] is `1` it panics (CI installed the tools, so a missing one is a
/// failure), and else it says on stderr that `test` skipped and why, and returns true.
/// The notice is written to the process's stderr directly (not through the test harness's
/// capture), so it shows in the normal `cargo test` output.
pub fn skip_without(test: &str, tool: &str, available: bool, install: &str) -> bool {
    use std::io::Write;
    if available {
        return false;
    }
    if std::env::var(REQUIRE_TOOLS_ENV).is_ok_and(|v| v == "1") {
        panic!("{test}: {tool} is missing and {REQUIRE_TOOLS_ENV}=1 ({install})");
    }
    let _ = writeln!(
        std::io::stderr().lock(),
        "SKIPPED {test}: {tool} is not installed ({install}; .ci/run installs it and sets {REQUIRE_TOOLS_ENV}=1 so that it cannot skip)"
    );
    true
}

/// Whether `program` is found on the PATH as an executable file.
pub fn on_path(program: &str) -> bool {
    use std::os::unix::fs::PermissionsExt;
    std::env::var_os("PATH").is_some_and(|paths| {
        std::env::split_paths(&paths).any(|d| {
            std::fs::metadata(d.join(program))
                .is_ok_and(|m| m.is_file() && m.permissions().mode() & 0o111 != 0)
        })
    })
}
