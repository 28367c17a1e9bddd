//! A session's `.lock` file: what a writer puts in it, and whether its holder is still alive.

use std::path::Path;

use super::LOCK_FILE;

/// The content of a session's `.lock` file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LockInfo {
    /// The writer's process id.
    pub pid: u32,
    /// The writer's start time in clock ticks since boot (Linux `/proc/<pid>/stat` field 22).
    pub start_ticks: Option<u64>,
}

/// Reads `dir/.lock`; None when there is no lock or it cannot be read.
pub fn read_lock(dir: &Path) -> Option<LockInfo> {
    let text = std::fs::read_to_string(dir.join(LOCK_FILE)).ok()?;
    let mut parts = text.split_whitespace();
    let pid = parts.next()?.parse().ok()?;
    let start_ticks = parts.next().and_then(|t| t.parse().ok());
    Some(LockInfo { pid, start_ticks })
}

/// Start time of a process in clock ticks since boot, from `/proc/<pid>/stat` (Linux only;
/// None elsewhere or when the process does not exist).
pub fn process_start_ticks(pid: u32) -> Option<u64> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    let after = &stat[stat.rfind(')')? + 1..];
    // Fields after the command: state is field 3, starttime is field 22.
    after.split_whitespace().nth(19)?.parse().ok()
}

/// Whether the process holding a lock is still alive (a zombie, or a different process that
/// reuses the pid, counts as dead).
pub fn lock_holder_alive(lock: &LockInfo) -> bool {
    let Ok(pid) = i32::try_from(lock.pid) else {
        return false;
    };
    if pid <= 0 {
        return false;
    }
    // SAFETY: kill with signal 0 only checks whether the process exists.
    let r = unsafe { libc::kill(pid, 0) };
    let exists = r == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM);
    if !exists {
        return false;
    }
    if let Ok(stat) = std::fs::read_to_string(format!("/proc/{pid}/stat"))
        && let Some(close) = stat.rfind(')')
    {
        let mut fields = stat[close + 1..].split_whitespace();
        if fields.next() == Some("Z") {
            return false;
        }
        if let (Some(want), Some(have)) = (lock.start_ticks, process_start_ticks(lock.pid))
            && want != have
        {
            return false;
        }
    }
    true
}

/// Who holds a session's lock.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LockState {
    /// No `.lock` file.
    Free,
    /// A `.lock` whose writer is alive.
    Alive(LockInfo),
    /// A `.lock` whose writer is gone (stale).
    Dead(LockInfo),
    /// A `.lock` that cannot be read (treated as stale).
    Unreadable,
}

/// The lock state of a session folder.
pub fn lock_state(dir: &Path) -> LockState {
    if !dir.join(LOCK_FILE).exists() {
        return LockState::Free;
    }
    match read_lock(dir) {
        Some(l) if lock_holder_alive(&l) => LockState::Alive(l),
        Some(l) => LockState::Dead(l),
        None => {
            // A writer creates the lock and then writes its pid: an empty lock younger than a
            // few seconds is a writer starting up, not a stale lock.
            let young = std::fs::metadata(dir.join(LOCK_FILE))
                .and_then(|m| m.modified())
                .ok()
                .and_then(|t| t.elapsed().ok())
                .is_some_and(|age| age < std::time::Duration::from_secs(10));
            if young {
                LockState::Alive(LockInfo {
                    pid: 0,
                    start_ticks: None,
                })
            } else {
                LockState::Unreadable
            }
        }
    }
}

/// The text of a lock file: our pid, and on Linux the process start time (to tell a reused pid
/// from the writer).
pub(super) fn lock_text() -> String {
    let pid = std::process::id();
    match process_start_ticks(pid) {
        Some(t) => format!("{pid} {t}\n"),
        None => format!("{pid}\n"),
    }
}
