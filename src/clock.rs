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
    fn scaled_clock_runs_faster() {
        let c = ScaledClock::start(1000.0);
        std::thread::sleep(std::time::Duration::from_millis(20));
        assert!(c.now_s() >= 10.0);
    }
}
