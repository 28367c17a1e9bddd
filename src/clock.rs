//! The session clock. One engine loop owns time; everything that stamps samples reads the same
//! clock. Intervals come from a monotonic source, never from differences of wall-clock readings.

use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

/// Seconds since the session's anchor on a monotonic scale.
pub trait Clock: Send + Sync {
    /// Monotonic seconds since the anchor (never goes back).
    fn now_s(&self) -> f64;
}

/// Real time: a monotonic `Instant` taken at the anchor.
#[derive(Debug, Clone)]
pub struct RealClock {
    anchor: Instant,
}

impl RealClock {
    /// A clock whose zero is now.
    pub fn start() -> Self {
        Self {
            anchor: Instant::now(),
        }
    }
}

impl Clock for RealClock {
    fn now_s(&self) -> f64 {
        self.anchor.elapsed().as_secs_f64()
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
