//! Did the animal hold a heading? A per-epoch orientation test calibrated for autocorrelated
//! headings.
//!
//! **Null hypothesis.** The heading is an unoriented random walk on the circle (a wrapped
//! Brownian motion, Mardia & Jupp 2000 §3.5.7 and §9.3.3) with the animal's own rate of turning,
//! plus any stationary short-term jitter (white sensor noise, a fast wobble, quantisation). The
//! alternative is a heading that does not wander away as a walk would: a held heading.
//!
//! **Convention.** Headings in degrees, compass style, any finite value; times in seconds
//! (non-decreasing, any origin); D in rad²/s.
//!
//! **Method.** Headings are grouped into bins of [`BIN_S`] seconds (the mean unit vector of
//! each bin; this makes the test the same at 50 Hz and at 1 kHz, and cheap). The bin headings
//! are unwrapped along each unbroken run of bins, and the diffusion coefficient D (rad²/s) is
//! estimated from the slope of the mean-squared angular displacement, MSD(L) = 2·D·L + c, over
//! lags L from [`LAG_MIN_S`] to [`LAG_MAX_S`] by least squares (the method of diffusion
//! coefficients from mean-squared displacement, Qian, Sheetz & Elson 1991, Biophys. J.
//! 60:910; for headings, e.g. Codling, Plank & Benhamou 2008, J. R. Soc. Interface 5:813).
//! White noise, quantisation and a wobble of 1 Hz or faster only add the offset c (a wobble
//! adds a term periodic in L, which the fit over two or more periods averages out), so they do
//! not bias D. The statistic is the epoch's mean vector length r of all its headings; the
//! p-value is P(R ≥ r) for a Brownian walk on the circle with that D observed for the epoch's
//! scored time T, i.e. it depends on the dimensionless λ = D·T only. That null distribution is
//! tabulated by seeded Monte Carlo (`oriented_table.rs`, made by the ignored test
//! `regenerate_null_table` in `tests/calibration_oriented.rs`) and interpolated in log λ; past
//! the table (λ > 200) the walk's resultant is nearly Gaussian and p = exp(−r²/m(λ)), with
//! m(λ) = E[R²] = 2(λ − 1 + e^{−λ})/λ² exactly for the continuous walk (from
//! E cos(θ_t − θ_0) = e^{−D|t−s|}).
//!
//! **Why 0.5–2.5 s.** The lag window is where the test draws the line between jitter (part of
//! the null) and holding (the alternative). A heading held with restoring time τ has
//! MSD(L) = 2v(1 − e^{−L/τ}): its slope falls with the lag, so the later the window, the smaller
//! D̂, the smaller λ and the more of the held heading's r a walk explains. The window of
//! 1–5 s used before gave the demo's sky-compass animal (τ 2 s) p < 0.01 in 70 % of its epochs;
//! 0.5–2.5 s gives nearly all (README). A saturation statistic was tried first and not adopted:
//! S = the MSD's slope over 5–15 s / its slope over 1–5 s (a variance ratio in the sense of
//! Lo & MacKinlay 1988, Rev. Financ. Stud. 1:41; scale-free under the walk, S ≈ 0 for a held
//! heading), with its null simulated. On a heading held with restoring time 2 s in 3-minute
//! epochs (`saturation_statistic_comparison` in the calibration suite) S alone reached
//! p < 0.01 in 89 % of epochs and its Bonferroni combination with the 1–5 s r-test 87 %,
//! against 81 % for that r-test alone and 100 % for the r-test with the 0.5–2.5 s window: the
//! MSD's long lags are too noisy within one epoch. The cost of the shorter window: jitter
//! whose correlation time approaches 0.5 s (a sensor filter that slow, an oscillation slower
//! than 1 Hz) starts to count as holding; the calibration suite includes 8° of jitter
//! correlated over 0.3 s and an 8° wobble at 1 Hz, both within the level.
//!
//! Gaps (settle windows, turns, flight stops, a missing bin) break the displacement chain: no
//! lag spans a gap. Scored flight on both sides of a gap is concatenated for r and T, which is
//! conservative (a walk that also wandered during the gap would give a smaller r).
//!
//! **Calibration.** `tests/calibration_oriented.rs` simulates null walks with correlation times
//! 1/D from 0.5 to 30 s, with white sensor noise, a fast wobble, correlated jitter and 1°
//! quantisation, with flight stops, and with persistent turning, at 50 Hz and 1 kHz, for epochs
//! of 1 to 5 minutes, and asserts that the false-positive rate lies in [2 %, 8 %] at α = 0.05
//! and below 2.5 % at α = 0.01. The plug-in test alone (λ = D̂·T) is conservative in short
//! epochs (1.5 % at α = 0.05 for a 1-minute epoch of a slow walk, in the simulation the factor
//! below was fitted on): an epoch whose walk happened to wander little has both a high r and a
//! low D̂. λ is therefore multiplied by 1 + 3·LAG_MAX_S/T (1.125 for a minute, 1.025 for five)
//! (rates then 2.4–7.9 % at α = 0.05 over the full grid; a factor of 1 + 5·LAG_MAX_S/T put a
//! fast walk's 1-minute epochs near 9 %).
//!
//! **Where it loses power.** A heading held with a slow restoring force (time constant
//! comparable to the epoch) looks like a slow walk: the MSD is still rising over 0.5–2.5 s and
//! the held heading's spread is what a walk of that speed would reach, so p stays large. A
//! heading held with a restoring force much faster than half a second looks like jitter about
//! a walk with D ≈ 0, which no test can tell from a walk that happens not to move. Short epochs
//! (a minute) have little power whatever the restoring time. The README ("The science and how
//! it is checked") gives the measured figures. Below [`MIN_SCORED_S`] of scored flight the test
//! returns None: too little flight to say.
//!
//! p is floored at [`P_FLOOR`]: the table resolves nothing smaller.

use super::oriented_table::{LAMBDA_GRID, PROBS, W_QUANTILES};
use super::trig::sin_cos_deg;

/// Bin length, seconds.
pub const BIN_S: f64 = 0.1;
/// Shortest lag of the diffusion fit, seconds.
pub const LAG_MIN_S: f64 = 0.5;
/// Longest lag of the diffusion fit, seconds.
pub const LAG_MAX_S: f64 = 2.5;
/// The least scored flight, seconds, for which the test gives a p-value (an epoch must hold
/// several times the longest lag for the diffusion to be estimated; our choice).
pub const MIN_SCORED_S: f64 = 30.0;
/// The smallest p reported (the resolution of the tabulated null).
pub const P_FLOOR: f64 = 0.001;
/// Past this λ = D·T the Gaussian approximation is used instead of the table.
pub const LAMBDA_TABLE_MAX: f64 = 200.0;

/// Correction for the dependence of r and the estimated diffusion within one epoch (see the
/// module notes, "Calibration"); fitted by the calibration suite.
const SHORT_EPOCH_GAIN: f64 = 3.0;

const LAG_MIN_BINS: usize = 5;
const LAG_MAX_BINS: usize = 25;
const N_LAGS: usize = LAG_MAX_BINS - LAG_MIN_BINS + 1;
/// Ring of the last unwrapped bin headings (a power of two above LAG_MAX_BINS).
const RING: usize = 32;

/// The bin of a time: floor(t_s / BIN_S), with a hair (1e-7 of a bin) of tolerance so that a
/// time on a bin boundary written with a few decimals (12.3 s) falls in the bin it starts.
#[inline]
pub fn bin_index(t_s: f64) -> i64 {
    (t_s / BIN_S + 1e-7).floor() as i64
}

/// The result of [`OrientationTracker::test`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrientationTest {
    /// p-value that the heading was held (against an unoriented walk), in [P_FLOOR, 1].
    pub p: f64,
    /// Mean vector length of all headings pushed.
    pub r: f64,
    /// Scored time T, seconds (bins holding at least one heading × BIN_S).
    pub scored_s: f64,
    /// Estimated diffusion D of the unwrapped heading, rad²/s (0 when the MSD does not rise).
    pub diffusion_rad2_per_s: f64,
    /// λ = D·T.
    pub lambda: f64,
}

/// Streaming state of the orientation test: O(1) per heading (a bin sum), O(20) per closed
/// bin (ten per second), O(20) to evaluate [`OrientationTracker::test`]; 32 + 42 numbers of
/// memory whatever the length.
#[derive(Debug, Clone)]
pub struct OrientationTracker {
    // The open bin.
    bin: Option<i64>,
    bin_c: f64,
    bin_s: f64,
    bin_n: u32,
    /// A gap was marked since the last closed bin.
    gap: bool,
    // The chain of closed bins.
    last_bin: Option<i64>,
    last_angle_rad: f64,
    ring: [f64; RING],
    chain_len: usize,
    head: usize,
    msd_sum: [f64; N_LAGS],
    msd_n: [u64; N_LAGS],
    /// Closed bins that held a heading.
    bins: u64,
    // Resultant of all headings.
    n: u64,
    sum_c: super::sum::Neumaier,
    sum_s: super::sum::Neumaier,
}

impl Default for OrientationTracker {
    fn default() -> Self {
        Self::new()
    }
}

impl OrientationTracker {
    /// An empty tracker.
    pub fn new() -> Self {
        OrientationTracker {
            bin: None,
            bin_c: 0.0,
            bin_s: 0.0,
            bin_n: 0,
            gap: false,
            last_bin: None,
            last_angle_rad: 0.0,
            ring: [0.0; RING],
            chain_len: 0,
            head: 0,
            msd_sum: [0.0; N_LAGS],
            msd_n: [0; N_LAGS],
            bins: 0,
            n: 0,
            sum_c: Default::default(),
            sum_s: Default::default(),
        }
    }

    /// Adds one heading at time `t_s` (seconds, non-decreasing; any origin). Non-finite values
    /// are ignored and break the chain.
    #[inline]
    pub fn push_deg(&mut self, t_s: f64, angle_deg: f64) {
        if !angle_deg.is_finite() || !t_s.is_finite() {
            self.mark_gap();
            return;
        }
        let (s, c) = sin_cos_deg(angle_deg);
        let bin = bin_index(t_s);
        if self.bin != Some(bin) {
            self.close_bin();
            self.bin = Some(bin);
        }
        self.bin_c += c;
        self.bin_s += s;
        self.bin_n += 1;
        self.n += 1;
        self.sum_c.add(c);
        self.sum_s.add(s);
    }

    /// Breaks the displacement chain (a flight stop, a settle window, a turn): no lag spans it.
    pub fn mark_gap(&mut self) {
        self.close_bin();
        self.bin = None;
        self.gap = true;
    }

    fn close_bin(&mut self) {
        let Some(bin) = self.bin else { return };
        if self.bin_n == 0 {
            return;
        }
        let (c, s, n) = (self.bin_c, self.bin_s, self.bin_n);
        self.bin_c = 0.0;
        self.bin_s = 0.0;
        self.bin_n = 0;
        self.bins += 1;
        let contiguous = !self.gap && self.last_bin == Some(bin - 1);
        self.gap = false;
        if c.hypot(s) <= 1e-9 * f64::from(n) {
            // No mean direction in this bin: the chain cannot be unwrapped through it.
            self.last_bin = None;
            self.chain_len = 0;
            return;
        }
        let angle = s.atan2(c);
        let phi = if contiguous && self.chain_len > 0 {
            let prev = self.ring[self.head];
            let d = angle - self.last_angle_rad;
            prev + (d + std::f64::consts::PI).rem_euclid(std::f64::consts::TAU)
                - std::f64::consts::PI
        } else {
            self.chain_len = 0;
            angle
        };
        self.last_bin = Some(bin);
        self.last_angle_rad = angle;
        self.head = (self.head + 1) % RING;
        self.ring[self.head] = phi;
        self.chain_len += 1;
        let avail = (self.chain_len - 1).min(LAG_MAX_BINS);
        for lag in LAG_MIN_BINS..=avail {
            let d = phi - self.ring[(self.head + RING - lag) % RING];
            self.msd_sum[lag - LAG_MIN_BINS] += d * d;
            self.msd_n[lag - LAG_MIN_BINS] += 1;
        }
    }

    /// Headings pushed.
    pub fn n(&self) -> u64 {
        self.n
    }

    /// Scored time so far, seconds: bins that hold a heading (the open one included) × BIN_S.
    pub fn scored_s(&self) -> f64 {
        (self.bins + u64::from(self.bin_n > 0)) as f64 * BIN_S
    }

    /// Mean vector length of all headings.
    pub fn r(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        (self.sum_c.value().hypot(self.sum_s.value()) / self.n as f64).clamp(0.0, 1.0)
    }

    /// Diffusion D of the unwrapped heading, rad²/s, from the least-squares slope of the MSD
    /// over lags LAG_MIN_S..LAG_MAX_S (D = slope/2, 0 when the slope is negative). None when
    /// fewer than half the lags have a displacement.
    pub fn diffusion_rad2_per_s(&self) -> Option<f64> {
        let (mut k, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
        for (i, (&sum, &cnt)) in self.msd_sum.iter().zip(&self.msd_n).enumerate() {
            if cnt == 0 {
                continue;
            }
            let x = (LAG_MIN_BINS + i) as f64 * BIN_S;
            let y = sum / cnt as f64;
            k += 1.0;
            sx += x;
            sy += y;
            sxx += x * x;
            sxy += x * y;
        }
        if k < (N_LAGS as f64) / 2.0 {
            return None;
        }
        let slope = (k * sxy - sx * sy) / (k * sxx - sx * sx);
        Some((slope / 2.0).max(0.0))
    }

    /// The test as it stands: None below [`MIN_SCORED_S`] of scored time or when the diffusion
    /// cannot be estimated (no unbroken run longer than about 1.5 s).
    pub fn test(&self) -> Option<OrientationTest> {
        let scored_s = self.scored_s();
        if scored_s < MIN_SCORED_S {
            return None;
        }
        let d = self.diffusion_rad2_per_s()?;
        let r = self.r();
        let lambda = d * scored_s * (1.0 + SHORT_EPOCH_GAIN * LAG_MAX_S / scored_s);
        Some(OrientationTest {
            p: walk_null_p(r, lambda),
            r,
            scored_s,
            diffusion_rad2_per_s: d,
            lambda,
        })
    }
}

/// The orientation test of a series of headings in time order (`times_s` non-decreasing,
/// seconds; `angles_deg` degrees). A time step longer than a bin breaks the chain.
pub fn orientation_test_series(times_s: &[f64], angles_deg: &[f64]) -> Option<OrientationTest> {
    let mut t = OrientationTracker::new();
    for (&ts, &a) in times_s.iter().zip(angles_deg) {
        t.push_deg(ts, a);
    }
    t.test()
}

/// E[R²] of a Brownian walk on the circle observed for λ = D·T: 2(λ − 1 + e^{−λ})/λ²
/// (series for small λ to avoid cancellation).
pub fn walk_mean_r2(lambda: f64) -> f64 {
    if lambda < 1e-3 {
        1.0 - lambda / 3.0 + lambda * lambda / 12.0
    } else {
        2.0 * (lambda - 1.0 + (-lambda).exp()) / (lambda * lambda)
    }
}

/// P(R ≥ r) for the mean vector length R of a Brownian walk on the circle with λ = D·T (see
/// the module notes), floored at [`P_FLOOR`]. λ ≤ 0 (a walk that does not move) gives 1.
pub fn walk_null_p(r: f64, lambda: f64) -> f64 {
    if lambda.is_nan() || lambda <= 0.0 || !r.is_finite() {
        return 1.0;
    }
    let r = r.clamp(0.0, 1.0);
    let m = walk_mean_r2(lambda);
    if lambda > LAMBDA_TABLE_MAX {
        return (-r * r / m).exp().clamp(P_FLOOR, 1.0);
    }
    // W = (1 − R²)/(1 − m): small W is a large R. The table holds the quantiles of W at PROBS.
    let w = (1.0 - r * r) / (1.0 - m);
    let x = lambda.ln();
    let lo = LAMBDA_GRID[0].ln();
    let (i, t) = if x <= lo {
        (0, 0.0)
    } else {
        let mut i = 0;
        while i + 2 < LAMBDA_GRID.len() && LAMBDA_GRID[i + 1].ln() < x {
            i += 1;
        }
        let (a, b) = (LAMBDA_GRID[i].ln(), LAMBDA_GRID[i + 1].ln());
        (i, ((x - a) / (b - a)).clamp(0.0, 1.0))
    };
    let q = |j: usize| (1.0 - t) * W_QUANTILES[i][j] + t * W_QUANTILES[i + 1][j];
    if w <= q(0) {
        return P_FLOOR.max(PROBS[0]);
    }
    for j in 1..PROBS.len() {
        let (qa, qb) = (q(j - 1), q(j));
        if w <= qb {
            let f = if qb > qa { (w - qa) / (qb - qa) } else { 1.0 };
            return (PROBS[j - 1] + f * (PROBS[j] - PROBS[j - 1])).clamp(P_FLOOR, 1.0);
        }
    }
    1.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mean_r2_limits() {
        assert!((walk_mean_r2(1e-6) - 1.0).abs() < 1e-6);
        // Continuity of the two branches.
        assert!((walk_mean_r2(0.000_999) - walk_mean_r2(0.001_001)).abs() < 1e-6);
        // Large λ: 2/λ.
        assert!((walk_mean_r2(1e4) * 1e4 / 2.0 - 1.0).abs() < 1e-3);
    }

    #[test]
    fn null_p_is_monotone_and_continuous_at_the_table_edge() {
        for &lambda in &[0.01, 0.3, 3.0, 30.0, 150.0] {
            let mut last = 1.0;
            for k in 0..=100 {
                let p = walk_null_p(k as f64 / 100.0, lambda);
                assert!(p <= last + 1e-12, "λ {lambda} r {k}");
                assert!((P_FLOOR..=1.0).contains(&p));
                last = p;
            }
        }
        // Table (λ = 200) against the Gaussian form just beyond, at the 5 % point.
        let m = walk_mean_r2(200.0);
        let r05 = (-(0.05f64).ln() * m).sqrt();
        let p_table = walk_null_p(r05, 199.999);
        assert!((p_table - 0.05).abs() < 0.006, "{p_table}");
        assert_eq!(walk_null_p(0.9, 0.0), 1.0);
        assert_eq!(walk_null_p(0.9, f64::NAN), 1.0);
    }

    #[test]
    fn too_little_flight_gives_none() {
        let mut t = OrientationTracker::new();
        for i in 0..2_000 {
            t.push_deg(i as f64 * 0.01, 10.0);
        }
        assert!(t.scored_s() < MIN_SCORED_S);
        assert!(t.test().is_none());
    }

    #[test]
    fn a_steady_turn_has_its_diffusion_and_gaps_break_the_chain() {
        // A steady turn ω t has MSD(L) = ω² L², whose least-squares slope over lags 0.5..2.5 s
        // (symmetric about 1.5 s) is 3 ω², so D = 1.5 ω².
        let mut t = OrientationTracker::new();
        let omega_deg = 10.0; // degrees per second
        for i in 0..6_000 {
            let ts = i as f64 * 0.01;
            t.push_deg(ts, omega_deg * ts);
        }
        let w = omega_deg.to_radians();
        let d = t.diffusion_rad2_per_s().unwrap();
        assert!((d / (1.5 * w * w) - 1.0).abs() < 1e-6, "{d}");
        // Gaps every second: no lag past 0.9 s survives, fewer than half the lags have data.
        let mut g = OrientationTracker::new();
        for i in 0..6_000 {
            if i % 100 == 0 {
                g.mark_gap();
            }
            g.push_deg(i as f64 * 0.01, omega_deg * i as f64 * 0.01);
        }
        assert!(g.diffusion_rad2_per_s().is_none());
        assert!(g.test().is_none());
    }
}
