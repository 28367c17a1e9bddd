//! Session reports and batch statistics over many sessions.
//!
//! - [`meta`]: what the analysis reads from `session.json` / `summary.json`;
//! - [`session`]: per-epoch and per-turn statistics in one pass over a session (reading with
//!   `archive::read`, summarising with `archive::SummaryBuilder` and `circular`);
//! - [`population`]: second-order (one vector per animal) statistics between sessions;
//! - [`batch`]: many sessions → tidy CSV tables;
//! - [`report`] and [`figures`]: one session → tables, summary text and figures.

pub mod batch;
pub mod figures;
pub mod meta;
pub mod population;
pub mod report;
pub mod scan;
pub mod session;
pub mod table;
pub mod turn_population;

use std::path::{Path, PathBuf};

/// Errors of the analysis commands; each names the file it concerns.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    /// An archive file could not be read (the message names the file and line).
    #[error(transparent)]
    Archive(#[from] crate::archive::ArchiveError),
    /// A file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// One session id in two folders whose samples differ: the tables are keyed by session id,
    /// so `batch` refuses to guess which one is meant.
    #[error(
        "session id '{id}' is in two folders with different samples: {first} and {second} (rename or remove one)"
    )]
    DuplicateId {
        /// The session id.
        id: String,
        /// The folder read first (in path order).
        first: PathBuf,
        /// The other folder.
        second: PathBuf,
    },
    /// A required file is missing.
    #[error("{path}: missing")]
    Missing {
        /// The file.
        path: PathBuf,
    },
    /// A malformed field.
    #[error("{path} line {line}, field '{field}': {msg}")]
    Parse {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: u64,
        /// Column name.
        field: String,
        /// What is wrong.
        msg: String,
    },
    /// A malformed file.
    #[error("{path} line {line}: {msg}")]
    Format {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: u64,
        /// What is wrong.
        msg: String,
    },
    /// Written by a newer program.
    #[error("{path}: format_version {found} is newer than this program reads ({supported})")]
    NewerFormat {
        /// The file.
        path: PathBuf,
        /// Found version.
        found: u64,
        /// Highest version read.
        supported: u64,
    },
    /// A figure could not be drawn.
    #[error("{path}: drawing failed: {msg}")]
    Draw {
        /// The figure file.
        path: PathBuf,
        /// Backend message.
        msg: String,
    },
}

impl AnalysisError {
    /// An I/O error on `path`.
    pub fn io(path: &Path, source: std::io::Error) -> Self {
        Self::Io {
            path: path.to_path_buf(),
            source,
        }
    }
}
