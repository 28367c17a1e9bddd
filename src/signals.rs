//! Termination signals of `demo` and `run`: SIGINT, SIGTERM and SIGHUP end the session
//! properly (the engine records which one); SIGXFSZ is ignored so that a file-size limit
//! comes back as an error (EFBIG) the session can report instead of killing the process.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, OnceLock};

/// A signal that asks a session to end.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StopSignal {
    /// Interrupt (Ctrl-C).
    Int,
    /// Terminate (kill, shutdown).
    Term,
    /// Hang-up (terminal closed, ssh dropped).
    Hup,
}

impl StopSignal {
    /// From a signal number.
    pub fn from_number(sig: usize) -> Option<Self> {
        match i32::try_from(sig).ok()? {
            libc::SIGINT => Some(Self::Int),
            libc::SIGTERM => Some(Self::Term),
            libc::SIGHUP => Some(Self::Hup),
            _ => None,
        }
    }

    /// The signal's name.
    pub fn name(self) -> &'static str {
        match self {
            Self::Int => "SIGINT",
            Self::Term => "SIGTERM",
            Self::Hup => "SIGHUP",
        }
    }

    /// The signals that end a session.
    pub const ALL: [i32; 3] = [libc::SIGINT, libc::SIGTERM, libc::SIGHUP];
}

/// The number of the last stop signal received (0: none). Shared by the headless handler and
/// the live screen's.
pub fn received() -> Arc<AtomicUsize> {
    static RECEIVED: OnceLock<Arc<AtomicUsize>> = OnceLock::new();
    RECEIVED
        .get_or_init(|| Arc::new(AtomicUsize::new(0)))
        .clone()
}

/// The stop signal received so far, if any.
pub fn stop_signal(flag: &AtomicUsize) -> Option<StopSignal> {
    StopSignal::from_number(flag.load(Ordering::SeqCst))
}

/// Records SIGINT, SIGTERM and SIGHUP in [`received`] (handlers that only store to an atomic).
pub fn record_stop_signals() -> std::io::Result<()> {
    let flag = received();
    for sig in StopSignal::ALL {
        signal_hook::flag::register_usize(sig, flag.clone(), sig as usize)?;
    }
    Ok(())
}

/// Ignores SIGXFSZ: a write past the file-size limit then fails with EFBIG, which the archive
/// reports, instead of killing the process with a half-written session.
pub fn ignore_file_size_signal() {
    // SAFETY: setting a signal's disposition to SIG_IGN installs no handler code.
    unsafe {
        libc::signal(libc::SIGXFSZ, libc::SIG_IGN);
    }
}

/// True when an I/O error is the file-size limit (EFBIG).
pub fn is_file_size_limit(e: &std::io::Error) -> bool {
    e.raw_os_error() == Some(libc::EFBIG)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_the_stop_signals() {
        let names: Vec<&str> = StopSignal::ALL
            .iter()
            .filter_map(|&s| StopSignal::from_number(s as usize))
            .map(StopSignal::name)
            .collect();
        assert_eq!(names, ["SIGINT", "SIGTERM", "SIGHUP"]);
        assert_eq!(StopSignal::from_number(0), None);
        assert!(is_file_size_limit(&std::io::Error::from_raw_os_error(
            libc::EFBIG
        )));
    }
}
