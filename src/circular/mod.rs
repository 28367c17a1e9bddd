//! Circular statistics. (API fixed by the lead; body owned by the statistics work.)

use serde::Serialize;

/// Descriptive statistics and the Rayleigh test of a sample of directions (or axes).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CircularSummary {
    /// Number of angles.
    pub n: usize,
    /// Mean direction in [0, 360) ([0, 180) for axial data); None when r is 0 or n is 0.
    pub mean_deg: Option<f64>,
    /// Mean vector length in [0, 1].
    pub r: f64,
    /// Rayleigh z = n r².
    pub rayleigh_z: f64,
    /// Rayleigh p.
    pub rayleigh_p: f64,
    /// Circular standard deviation in degrees.
    pub circular_sd_deg: f64,
    /// Angular deviation in degrees.
    pub angular_deviation_deg: f64,
}

/// Summary of directions in degrees.
pub fn describe_deg(angles_deg: &[f64]) -> CircularSummary {
    let _ = angles_deg;
    todo!("statistics work")
}

/// Rayleigh test for n (possibly an effective, non-integer n) and mean vector length r:
/// returns (z, p).
pub fn rayleigh_test(n: f64, r: f64) -> (f64, f64) {
    let _ = (n, r);
    todo!("statistics work")
}

/// Streaming accumulator of headings: O(1) per sample.
#[derive(Debug, Clone, Default)]
pub struct HeadingAccumulator {
    _private: (),
}

impl HeadingAccumulator {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }
    /// Adds one heading.
    pub fn push_deg(&mut self, angle_deg: f64) {
        let _ = angle_deg;
        todo!("statistics work")
    }
    /// Breaks the sample-to-sample chain (a gap: flight stop, settle window, sensor lost), so
    /// the autocorrelation estimate does not link samples across it.
    pub fn mark_gap(&mut self) {
        todo!("statistics work")
    }
    /// Number of headings.
    pub fn n(&self) -> u64 {
        todo!("statistics work")
    }
    /// Mean direction, None if empty or r == 0.
    pub fn mean_deg(&self) -> Option<f64> {
        todo!("statistics work")
    }
    /// Mean vector length.
    pub fn r(&self) -> f64 {
        todo!("statistics work")
    }
    /// Effective sample size from the autocorrelation of the unit vectors.
    pub fn n_eff(&self) -> f64 {
        todo!("statistics work")
    }
    /// Rayleigh p on n.
    pub fn rayleigh_p(&self) -> f64 {
        todo!("statistics work")
    }
    /// Rayleigh p on n_eff.
    pub fn rayleigh_p_eff(&self) -> f64 {
        todo!("statistics work")
    }
}
