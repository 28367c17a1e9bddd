//! The session clock. One engine loop owns time; everything that stamps samples reads the same
//! clock. Intervals come from a monotonic source, never from differences of wall-clock readings.

use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

/// Seconds since the session's anchor on a monotonic scale.
pub trait Clock: Send + Sync {
    /// Monotonic seconds since the anchor (never goes back).
    fn now_s(&self) -> f64;
    /// Seconds the computer has been suspended since the anchor (0 for clocks that cannot
    /// tell). `now_s` counts them; the engine marks each new gap as an event.
    fn suspended_s(&self) -> f64 {
        0.0
    }
}

/// Seconds of a POSIX clock (`CLOCK_BOOTTIME`, `CLOCK_MONOTONIC`), if it can be read.
#[cfg(target_os = "linux")]
fn posix_clock_s(id: libc::clockid_t) -> Option<f64> {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: ts is a valid, writable timespec.
    let rc = unsafe { libc::clock_gettime(id, &mut ts) };
    (rc == 0).then_some(ts.tv_sec as f64 + ts.tv_nsec as f64 * 1e-9)
}

/// Real time from a monotonic clock that keeps counting while the computer is suspended
/// (`CLOCK_BOOTTIME` on Linux; Rust's `Instant` is `CLOCK_MONOTONIC`, which stops in suspend,
/// so a closed lid would shift every later `t_utc` early by the suspended time). Elsewhere,
/// or if the boot-time clock cannot be read, `Instant`.
#[derive(Debug, Clone)]
pub struct RealClock {
    anchor: Instant,
    /// `CLOCK_BOOTTIME` and `CLOCK_MONOTONIC` seconds at the anchor.
    #[cfg(target_os = "linux")]
    boot_anchor: Option<(f64, f64)>,
}

impl RealClock {
    /// A clock whose zero is now.
    pub fn start() -> Self {
        Self {
            anchor: Instant::now(),
            #[cfg(target_os = "linux")]
            boot_anchor: posix_clock_s(libc::CLOCK_BOOTTIME)
                .zip(posix_clock_s(libc::CLOCK_MONOTONIC)),
        }
    }

    /// The clock it reads ("CLOCK_BOOTTIME" or "monotonic (stops in suspend)").
    pub fn source(&self) -> &'static str {
        #[cfg(target_os = "linux")]
        if self.boot_anchor.is_some() {
            return "CLOCK_BOOTTIME";
        }
        "monotonic (stops in suspend)"
    }
}

impl Clock for RealClock {
    fn now_s(&self) -> f64 {
        #[cfg(target_os = "linux")]
        if let Some((boot0, _)) = self.boot_anchor
            && let Some(boot) = posix_clock_s(libc::CLOCK_BOOTTIME)
        {
            return (boot - boot0).max(0.0);
        }
        self.anchor.elapsed().as_secs_f64()
    }

    fn suspended_s(&self) -> f64 {
        #[cfg(target_os = "linux")]
        if let Some((boot0, mono0)) = self.boot_anchor
            && let (Some(boot), Some(mono)) = (
                posix_clock_s(libc::CLOCK_BOOTTIME),
                posix_clock_s(libc::CLOCK_MONOTONIC),
            )
        {
            return ((boot - boot0) - (mono - mono0)).max(0.0);
        }
        0.0
    }
}

/// Simulated time, advanced only by the engine (for accelerated and deterministic sessions).
/// Cloning shares the same time.
#[derive(Debug, Clone, Default)]
pub struct SimClock {
    bits: Arc<AtomicU64>,
}

impl SimClock {
    /// A simulated clock at zero.
    pub fn new() -> Self {
        Self::default()
    }

    /// Moves simulated time forward to `t_s` (ignored if it would go back).
    pub fn advance_to(&self, t_s: f64) {
        let cur = f64::from_bits(self.bits.load(Ordering::Acquire));
        if t_s > cur {
            self.bits.store(t_s.to_bits(), Ordering::Release);
        }
    }
}

impl Clock for SimClock {
    fn now_s(&self) -> f64 {
        f64::from_bits(self.bits.load(Ordering::Acquire))
    }
}

/// Real time scaled by a factor (a simulated session at `--speed X`): session seconds =
/// monotonic elapsed seconds × factor.
#[derive(Debug, Clone)]
pub struct ScaledClock {
    anchor: Instant,
    factor: f64,
}

impl ScaledClock {
    /// A clock whose zero is now, running `factor` times faster than real time.
    pub fn start(factor: f64) -> Self {
        Self {
            anchor: Instant::now(),
            factor,
        }
    }

    /// The speed factor.
    pub fn factor(&self) -> f64 {
        self.factor
    }
}

impl Clock for ScaledClock {
    fn now_s(&self) -> f64 {
        self.anchor.elapsed().as_secs_f64() * self.factor
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sim_clock_never_goes_back() {
        let c = SimClock::new();
        c.advance_to(5.0);
        c.advance_to(3.0);
        assert_eq!(c.now_s(), 5.0);
        let shared = c.clone();
        shared.advance_to(7.5);
        assert_eq!(c.now_s(), 7.5);
    }

    #[test]
    #[cfg(target_os = "linux")]
    fn real_clock_counts_suspend_on_linux() {
        // Issue 14 point 12: the real clock must be CLOCK_BOOTTIME (counts suspend), read
        // against its own anchor: it brackets the kernel's boot-time clock.
        let c = RealClock::start();
        assert_eq!(c.source(), "CLOCK_BOOTTIME");
        let (boot0, _) = c.boot_anchor.expect("anchor");
        let before = posix_clock_s(libc::CLOCK_BOOTTIME).expect("boottime") - boot0;
        let t = c.now_s();
        let after = posix_clock_s(libc::CLOCK_BOOTTIME).expect("boottime") - boot0;
        assert!(before <= t && t <= after, "{before} {t} {after}");
        // No suspend while the test runs (a fraction of a millisecond of clock drift at most).
        assert!(c.suspended_s() < 0.01);
    }

    #[test]
    fn scaled_clock_runs_faster() {
        let c = ScaledClock::start(1000.0);
        std::thread::sleep(std::time::Duration::from_millis(20));
        assert!(c.now_s() >= 10.0);
    }
}
