//! Streaming heading statistics and the effective sample size of autocorrelated headings.
//!
//! Headings sampled at 10–100 Hz are far from independent: a Rayleigh test on every sample
//! claims absurd significance. Both functions here estimate an effective sample size
//! n_eff = n / τ, where τ = 1 + 2 Σ_{k≥1} ρ_k is the integrated autocorrelation time of the
//! heading's unit vectors u_t = (cos θ_t, sin θ_t), with the lag-k autocorrelation
//! ρ_k = Σ_t (u_t − ū)·(u_{t+k} − ū) / Σ_t |u_t − ū|² (the trace autocorrelation of a
//! bivariate series; the variance of the mean vector of n correlated unit vectors is
//! (1 − r²)·τ/n for large n, Priestley 1981 §5.3; Geyer 1992).
//!
//! - [`HeadingAccumulator`] (streaming, O(1) per sample) assumes an AR(1) shape,
//!   ρ_k = ρ₁^k, so τ = (1 + ρ₁)/(1 − ρ₁) and n_eff = n(1 − ρ₁)/(1 + ρ₁), from the lag-1
//!   autocorrelation alone (the usual AR(1) effective sample size; e.g. Bayley & Hammersley
//!   1946; von Storch & Zwiers 1999 §6.6). Gaps break the lag chain.
//! - [`effective_sample_size_deg`] (batch) sums the whole estimated autocorrelation sequence,
//!   truncated by Geyer's initial positive sequence (Geyer 1992, *Practical Markov chain Monte
//!   Carlo*, Statist. Sci. 7). It needs no AR(1) assumption.
//!
//! The two agree when the unit vectors behave like an AR(1) series (a heading jittering about a
//! held direction, sampled faster than it wanders). When there is slow drift on top of fast
//! jitter (longer memory than AR(1)), the batch estimate is the smaller, more honest one; the
//! streaming estimate is then optimistic. Neither claims more than n.

use super::sum::Neumaier;
use super::trig::sin_cos_deg;
use super::{
    CircularSummary, VTestResult, mean_direction_from_resultant_deg, rayleigh_test,
    summary_from_sums, v_test,
};

/// Streaming accumulator of headings: O(1) per sample.
///
/// Keeps sums of the unit vectors and of the dot products of consecutive unit vectors, so the
/// mean direction, mean vector length r, Rayleigh test and lag-1 autocorrelation (hence an AR(1)
/// effective sample size, see the module notes) are available at any moment without storing
/// samples. The sums are blocked: up to 64 samples are added in plain arithmetic, then
/// the block sum is folded into a compensated (Neumaier/TwoSum) running sum. A block sum of
/// terms of magnitude ≤ 1 carries an error below BLOCK²·ε/2 ≈ 2.3e-13, and the compensated fold
/// adds none, so the absolute error after n samples is below n·BLOCK·ε/2 ≈ 7e-15·n in the
/// worst case (relative error of r below 7e-15/r), independent of n, and in practice (random
/// rounding) far smaller; a plain running sum's worst case grows like n²·ε.
/// Angles in degrees, compass convention; the mean is in [0, 360). Non-finite angles are not
/// counted (see [`HeadingAccumulator::rejected`]) and break the lag chain like a gap.
#[derive(Debug, Clone, Default)]
pub struct HeadingAccumulator {
    n: u64,
    rejected: u64,
    /// Σ cos θ, Σ sin θ over all samples.
    sum_c: Neumaier,
    sum_s: Neumaier,
    /// Number of consecutive pairs (t−1, t) not separated by a gap.
    pairs: u64,
    /// Σ u_t · u_{t−1} over the pairs.
    sum_dot: Neumaier,
    /// Σ of the first unit vector of every chain (run between gaps).
    first_c: Neumaier,
    first_s: Neumaier,
    /// Σ of the last unit vector of every closed chain.
    last_c: Neumaier,
    last_s: Neumaier,
    /// Unit vector of the previous sample in the current chain.
    prev: Option<(f64, f64)>,
    /// Plain partial sums of the current block (cos, sin, dot) and its length.
    blk_c: f64,
    blk_s: f64,
    blk_dot: f64,
    blk_len: u32,
}

/// Number of samples summed in plain arithmetic before folding into the compensated sums.
const BLOCK: u32 = 64;

/// The compensated sum plus a pending plain block sum.
fn with_block(sum: &Neumaier, blk: f64) -> f64 {
    let mut t = *sum;
    t.add(blk);
    t.value()
}

impl HeadingAccumulator {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one heading (degrees, any finite value).
    #[inline(always)]
    pub fn push_deg(&mut self, angle_deg: f64) {
        if !angle_deg.is_finite() {
            self.reject();
            return;
        }
        let (s, c) = sin_cos_deg(angle_deg);
        self.push_unit(c, s);
    }

    /// Adds one heading given as its unit vector (cos θ, sin θ) of a finite θ: the part of
    /// [`HeadingAccumulator::push_deg`] after the sine and cosine (for a caller that needs the
    /// sine and cosine itself, or derives them by rotating another unit vector).
    #[inline(always)]
    pub(crate) fn push_unit(&mut self, c: f64, s: f64) {
        self.n += 1;
        self.blk_c += c;
        self.blk_s += s;
        match self.prev {
            Some((pc, ps)) => {
                self.pairs += 1;
                self.blk_dot += c * pc + s * ps;
            }
            None => self.start_chain(c, s),
        }
        self.prev = Some((c, s));
        self.blk_len += 1;
        if self.blk_len == BLOCK {
            self.flush();
        }
    }

    #[inline(always)]
    fn reject(&mut self) {
        self.rejected += 1;
        self.mark_gap();
    }

    #[inline(always)]
    fn start_chain(&mut self, c: f64, s: f64) {
        self.first_c.add(c);
        self.first_s.add(s);
    }

    /// Folds the plain block sums into the compensated sums.
    #[inline(always)]
    fn flush(&mut self) {
        self.sum_c.add(self.blk_c);
        self.sum_s.add(self.blk_s);
        self.sum_dot.add(self.blk_dot);
        self.blk_c = 0.0;
        self.blk_s = 0.0;
        self.blk_dot = 0.0;
        self.blk_len = 0;
    }

    /// Breaks the sample-to-sample chain (a gap: flight stop, settle window, sensor lost), so
    /// the autocorrelation estimate does not link samples across it.
    pub fn mark_gap(&mut self) {
        if let Some((c, s)) = self.prev.take() {
            self.last_c.add(c);
            self.last_s.add(s);
        }
    }

    /// Adds everything another accumulator saw, as if its samples had come after a gap: the
    /// sums are merged exactly (compensated), no lag pair links the two.
    pub fn merge(&mut self, other: &HeadingAccumulator) {
        self.mark_gap();
        self.flush();
        self.sum_c.add(other.blk_c);
        self.sum_s.add(other.blk_s);
        self.sum_dot.add(other.blk_dot);
        self.n += other.n;
        self.rejected += other.rejected;
        self.sum_c.add_sum(&other.sum_c);
        self.sum_s.add_sum(&other.sum_s);
        self.pairs += other.pairs;
        self.sum_dot.add_sum(&other.sum_dot);
        self.first_c.add_sum(&other.first_c);
        self.first_s.add_sum(&other.first_s);
        self.last_c.add_sum(&other.last_c);
        self.last_s.add_sum(&other.last_s);
        self.prev = other.prev;
    }

    /// Number of headings.
    pub fn n(&self) -> u64 {
        self.n
    }

    /// Number of non-finite angles that were ignored.
    pub fn rejected(&self) -> u64 {
        self.rejected
    }

    /// Number of consecutive sample pairs not separated by a gap (lag-1 pairs).
    pub fn lag_pairs(&self) -> u64 {
        self.pairs
    }

    /// The resultant (Σ cos θ, Σ sin θ).
    pub fn resultant(&self) -> (f64, f64) {
        (
            with_block(&self.sum_c, self.blk_c),
            with_block(&self.sum_s, self.blk_s),
        )
    }

    /// Mean direction, None if empty or r == 0.
    pub fn mean_deg(&self) -> Option<f64> {
        let (c, s) = self.resultant();
        mean_direction_from_resultant_deg(c, s, self.n as f64)
    }

    /// Mean vector length.
    pub fn r(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        let (c, s) = self.resultant();
        (c.hypot(s) / self.n as f64).clamp(0.0, 1.0)
    }

    /// Lag-1 autocorrelation ρ₁ of the unit vectors over the pairs not broken by gaps
    /// (see the module notes), or None when there is no pair or no spread at all.
    pub fn lag1_autocorrelation(&self) -> Option<f64> {
        if self.pairs == 0 || self.n == 0 {
            return None;
        }
        let n = self.n as f64;
        let (c, s) = self.resultant();
        let (mc, ms) = (c / n, s / n);
        let mu2 = mc * mc + ms * ms;
        // Per-sample variance of the unit vectors: mean |u − ū|² = 1 − |ū|².
        let gamma0 = (1.0 - mu2).max(0.0);
        if gamma0 <= 1e-14 {
            return None;
        }
        // Σ over pairs of (u_t − ū)·(u_{t−1} − ū)
        //   = Σ u_t·u_{t−1} − ū·Σ_pairs u_t − ū·Σ_pairs u_{t−1} + pairs·|ū|²,
        // where Σ_pairs u_t = Σ u − Σ firsts of chains and Σ_pairs u_{t−1} = Σ u − Σ lasts.
        let (pc, ps) = self.prev.unwrap_or((0.0, 0.0));
        let cur_c = c - self.first_c.value();
        let cur_s = s - self.first_s.value();
        let prv_c = c - (self.last_c.value() + pc);
        let prv_s = s - (self.last_s.value() + ps);
        let p = self.pairs as f64;
        let gamma1 =
            (with_block(&self.sum_dot, self.blk_dot) - mc * (cur_c + prv_c) - ms * (cur_s + prv_s)
                + p * mu2)
                / p;
        Some((gamma1 / gamma0).clamp(-1.0, 1.0))
    }

    /// Effective sample size from the autocorrelation of the unit vectors.
    ///
    /// AR(1) form n_eff = n(1 − ρ₁)/(1 + ρ₁) with ρ₁ the lag-1 autocorrelation of the unit
    /// vectors (see the module notes), clamped to [1, n]; negative ρ₁ gives n (never more).
    /// With no lag pair (every sample separated by a gap) n_eff = n; with no spread at all
    /// (a constant reading, e.g. a stuck sensor) n_eff = 1. 0 when empty.
    pub fn n_eff(&self) -> f64 {
        let n = self.n as f64;
        if self.n == 0 {
            return 0.0;
        }
        if self.pairs == 0 {
            return n;
        }
        match self.lag1_autocorrelation() {
            None => 1.0,
            Some(rho) if rho <= 0.0 => n,
            Some(rho) if rho >= 1.0 => 1.0,
            Some(rho) => (n * (1.0 - rho) / (1.0 + rho)).clamp(1.0, n),
        }
    }

    /// Rayleigh p on n.
    pub fn rayleigh_p(&self) -> f64 {
        rayleigh_test(self.n as f64, self.r()).1
    }

    /// Rayleigh p on n_eff.
    pub fn rayleigh_p_eff(&self) -> f64 {
        rayleigh_test(self.n_eff(), self.r()).1
    }

    /// V-test toward `expected_deg` on n (see [`super::v_test`]).
    pub fn v_test(&self, expected_deg: f64) -> VTestResult {
        v_test(self.n as f64, self.r(), self.mean_deg(), expected_deg)
    }

    /// V-test toward `expected_deg` on the effective sample size n_eff.
    pub fn v_test_eff(&self, expected_deg: f64) -> VTestResult {
        v_test(self.n_eff(), self.r(), self.mean_deg(), expected_deg)
    }

    /// The full summary on n (as [`super::describe_deg`] would give for the same samples).
    pub fn summary(&self) -> CircularSummary {
        let (c, s) = self.resultant();
        summary_from_sums(self.n as usize, c, s)
    }
}

/// Effective sample size of a contiguous series of headings in degrees (no gaps), from the
/// autocorrelation of the heading's unit vectors with Geyer's initial positive sequence
/// estimator (Geyer 1992, Statist. Sci. 7:473, §3.3).
///
/// With ρ_k the lag-k autocorrelation of the unit vectors (module notes; the usual biased
/// estimator, divided by n at every lag), Γ_m = ρ_{2m} + ρ_{2m+1} is summed while positive and
/// forced non-increasing (initial monotone sequence), τ = −1 + 2 Σ Γ_m, n_eff = n/τ clamped to
/// [1, n]. The autocovariances come from an FFT, so the cost is O(n log n) and O(n) memory. For
/// an AR(1)-like series this equals the streaming [`HeadingAccumulator::n_eff`]; see the module
/// notes for when they differ. Returns n for n < 4, 1 for a series with no spread.
pub fn effective_sample_size_deg(angles_deg: &[f64]) -> f64 {
    let n = angles_deg.len();
    if n < 4 {
        return n as f64;
    }
    let u: Vec<(f64, f64)> = angles_deg
        .iter()
        .map(|a| {
            let (s, c) = sin_cos_deg(*a);
            (c, s)
        })
        .collect();
    let mut sc = Neumaier::default();
    let mut ss = Neumaier::default();
    for &(c, s) in &u {
        sc.add(c);
        ss.add(s);
    }
    let nf = n as f64;
    let (mc, ms) = (sc.value() / nf, ss.value() / nf);
    let acov = autocovariance_sums(&u, mc, ms);
    let gamma0 = acov[0] / nf;
    if gamma0 <= 1e-14 {
        return 1.0;
    }
    let autocov = |k: usize| acov[k] / nf;
    let mut sum_pairs = 0.0;
    let mut last_pair = f64::INFINITY;
    let mut m = 0;
    while 2 * m + 1 < n {
        let pair = (autocov(2 * m) + autocov(2 * m + 1)) / gamma0;
        if pair <= 0.0 {
            break;
        }
        let pair = pair.min(last_pair);
        sum_pairs += pair;
        last_pair = pair;
        m += 1;
    }
    let tau = (2.0 * sum_pairs - 1.0).max(1.0 / nf);
    (nf / tau).clamp(1.0, nf)
}

/// Σ_t (u_t − ū)·(u_{t+k} − ū) for every lag k in 0..n, by the FFT (Wiener–Khinchin, with
/// zero padding to at least 2n so the circular correlation equals the linear one). O(n log n).
fn autocovariance_sums(u: &[(f64, f64)], mc: f64, ms: f64) -> Vec<f64> {
    let n = u.len();
    let size = (2 * n).next_power_of_two();
    let mut re = vec![0.0; size];
    let mut im = vec![0.0; size];
    for (t, &(c, s)) in u.iter().enumerate() {
        re[t] = c - mc;
        im[t] = s - ms;
    }
    fft_in_place(&mut re, &mut im, false);
    for k in 0..size {
        re[k] = re[k] * re[k] + im[k] * im[k];
        im[k] = 0.0;
    }
    fft_in_place(&mut re, &mut im, true);
    // The inverse transform of |Z|² gives Σ_t z_{t+k} conj(z_t); its real part is the sum of
    // dot products of the centred unit vectors at lag k.
    re.truncate(n);
    re
}

/// Iterative radix-2 Cooley–Tukey FFT (Cooley & Tukey 1965) on separate real and imaginary
/// parts; `inverse` uses the conjugate twiddles and divides by the length. The length must be
/// a power of two.
fn fft_in_place(re: &mut [f64], im: &mut [f64], inverse: bool) {
    let n = re.len();
    if n <= 1 {
        return;
    }
    // Bit-reversal permutation.
    let mut j = 0usize;
    for i in 1..n {
        let mut bit = n >> 1;
        while j & bit != 0 {
            j ^= bit;
            bit >>= 1;
        }
        j |= bit;
        if i < j {
            re.swap(i, j);
            im.swap(i, j);
        }
    }
    let sign = if inverse { 1.0 } else { -1.0 };
    let mut len = 2;
    while len <= n {
        let ang = sign * std::f64::consts::TAU / len as f64;
        let half = len / 2;
        // Twiddles computed directly (not by repeated multiplication) to keep rounding small.
        let tw: Vec<(f64, f64)> = (0..half)
            .map(|k| {
                let (s, c) = (ang * k as f64).sin_cos();
                (c, s)
            })
            .collect();
        for start in (0..n).step_by(len) {
            for (k, &(wr, wi)) in tw.iter().enumerate() {
                let a = start + k;
                let b = a + half;
                let xr = re[b] * wr - im[b] * wi;
                let xi = re[b] * wi + im[b] * wr;
                re[b] = re[a] - xr;
                im[b] = im[a] - xi;
                re[a] += xr;
                im[a] += xi;
            }
        }
        len <<= 1;
    }
    if inverse {
        let f = 1.0 / n as f64;
        re.iter_mut().for_each(|x| *x *= f);
        im.iter_mut().for_each(|x| *x *= f);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circular::describe_deg;

    /// SplitMix64 (Steele, Lea & Flood 2014) with Box–Muller normals: a small deterministic
    /// generator so the tests need no random-number crate.
    struct Rng(u64);
    impl Rng {
        fn next_u64(&mut self) -> u64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^ (z >> 31)
        }
        fn uniform(&mut self) -> f64 {
            ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
        }
        fn normal(&mut self) -> f64 {
            let (u1, u2) = (self.uniform(), self.uniform());
            (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
        }
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn fft_autocovariance_equals_direct_sums() {
        let mut rng = Rng(17);
        let mut th = 0.0;
        let a: Vec<(f64, f64)> = (0..1000)
            .map(|_| {
                th += 10.0 * rng.normal();
                let (s, c) = f64::to_radians(th).sin_cos();
                (c, s)
            })
            .collect();
        let (mc, ms) = (0.1, -0.2);
        let fast = autocovariance_sums(&a, mc, ms);
        for k in [0, 1, 2, 7, 100, 999] {
            let direct: f64 = (0..a.len() - k)
                .map(|t| (a[t].0 - mc) * (a[t + k].0 - mc) + (a[t].1 - ms) * (a[t + k].1 - ms))
                .sum();
            assert!(
                (fast[k] - direct).abs() < 1e-9,
                "lag {k}: {} vs {direct}",
                fast[k]
            );
        }
    }

    #[test]
    fn streaming_matches_batch_summary() {
        let mut rng = Rng(7);
        let a: Vec<f64> = (0..500).map(|_| 40.0 + 30.0 * rng.normal()).collect();
        let mut acc = HeadingAccumulator::new();
        for &x in &a {
            acc.push_deg(x);
        }
        let b = describe_deg(&a);
        assert_eq!(acc.n(), 500);
        assert!(close(acc.r(), b.r, 1e-14));
        assert!(close(acc.mean_deg().unwrap(), b.mean_deg.unwrap(), 1e-10));
        assert!(close(acc.rayleigh_p(), b.rayleigh_p, 1e-14));
        assert_eq!(acc.summary().n, b.n);
    }

    #[test]
    fn empty_accumulator_is_defined() {
        let acc = HeadingAccumulator::new();
        assert_eq!(acc.n(), 0);
        assert_eq!(acc.mean_deg(), None);
        assert_eq!(acc.r(), 0.0);
        assert_eq!(acc.n_eff(), 0.0);
        assert_eq!(acc.rayleigh_p(), 1.0);
        assert_eq!(acc.rayleigh_p_eff(), 1.0);
    }

    #[test]
    fn non_finite_angles_are_rejected_not_counted() {
        let mut acc = HeadingAccumulator::new();
        acc.push_deg(10.0);
        acc.push_deg(f64::NAN);
        acc.push_deg(20.0);
        assert_eq!(acc.n(), 2);
        assert_eq!(acc.rejected(), 1);
        assert_eq!(acc.lag_pairs(), 0);
        assert!(close(acc.mean_deg().unwrap(), 15.0, 1e-12));
    }

    #[test]
    fn stuck_sensor_gives_n_eff_one() {
        let mut acc = HeadingAccumulator::new();
        for _ in 0..1000 {
            acc.push_deg(123.0);
        }
        assert_eq!(acc.n_eff(), 1.0);
        assert!(acc.rayleigh_p_eff() > 0.4);
        assert!(acc.rayleigh_p() < 1e-100);
    }

    #[test]
    fn lag1_autocorrelation_matches_direct_computation() {
        // Direct two-pass computation of the same estimator over chains separated by gaps.
        let mut rng = Rng(11);
        let chains: Vec<Vec<f64>> = (0..3)
            .map(|k| {
                let mut th = 30.0 * k as f64;
                (0..200 + 50 * k)
                    .map(|_| {
                        th += 8.0 * rng.normal();
                        th
                    })
                    .collect()
            })
            .collect();
        let mut acc = HeadingAccumulator::new();
        for ch in &chains {
            for &x in ch {
                acc.push_deg(x);
            }
            acc.mark_gap();
        }
        let all: Vec<f64> = chains.iter().flatten().copied().collect();
        let n = all.len() as f64;
        let uv = |a: f64| (a.to_radians().cos(), a.to_radians().sin());
        let (mc, ms) = all
            .iter()
            .map(|&a| uv(a))
            .fold((0.0, 0.0), |(x, y), (c, s)| (x + c / n, y + s / n));
        let g0 = all
            .iter()
            .map(|&a| {
                let (c, s) = uv(a);
                (c - mc).powi(2) + (s - ms).powi(2)
            })
            .sum::<f64>()
            / n;
        let (mut g1, mut p) = (0.0, 0.0);
        for ch in &chains {
            for w in ch.windows(2) {
                let (c0, s0) = uv(w[0]);
                let (c1, s1) = uv(w[1]);
                g1 += (c1 - mc) * (c0 - mc) + (s1 - ms) * (s0 - ms);
                p += 1.0;
            }
        }
        let rho = (g1 / p) / g0;
        assert_eq!(acc.lag_pairs() as f64, p);
        assert!(close(acc.lag1_autocorrelation().unwrap(), rho, 1e-12));
    }

    #[test]
    fn gaps_break_the_lag_chain() {
        let mut acc = HeadingAccumulator::new();
        for i in 0..10 {
            acc.push_deg(i as f64);
            acc.mark_gap();
        }
        assert_eq!(acc.lag_pairs(), 0);
        assert_eq!(acc.n_eff(), 10.0);
    }

    #[test]
    fn merge_equals_pushing_after_a_gap() {
        let mut rng = Rng(3);
        let a: Vec<f64> = (0..300).map(|_| 100.0 + 40.0 * rng.normal()).collect();
        let b: Vec<f64> = (0..200).map(|_| 120.0 + 20.0 * rng.normal()).collect();
        let mut one = HeadingAccumulator::new();
        for &x in &a {
            one.push_deg(x);
        }
        one.mark_gap();
        for &x in &b {
            one.push_deg(x);
        }
        let mut left = HeadingAccumulator::new();
        let mut right = HeadingAccumulator::new();
        a.iter().for_each(|&x| left.push_deg(x));
        b.iter().for_each(|&x| right.push_deg(x));
        left.merge(&right);
        assert_eq!(left.n(), one.n());
        assert_eq!(left.lag_pairs(), one.lag_pairs());
        assert!(close(left.r(), one.r(), 1e-14));
        assert!(close(left.n_eff(), one.n_eff(), 1e-9));
        // The merged accumulator keeps going where the right one stopped.
        left.push_deg(5.0);
        one.push_deg(5.0);
        assert!(close(left.n_eff(), one.n_eff(), 1e-9));
    }

    #[test]
    fn white_noise_has_n_eff_near_n() {
        let mut rng = Rng(2026);
        let n = 20_000;
        // Uniform headings and concentrated (σ = 30°) independent headings.
        let uniform: Vec<f64> = (0..n).map(|_| 360.0 * rng.uniform()).collect();
        let held: Vec<f64> = (0..n).map(|_| 200.0 + 30.0 * rng.normal()).collect();
        for a in [&uniform, &held] {
            let mut acc = HeadingAccumulator::new();
            a.iter().for_each(|&x| acc.push_deg(x));
            let ne = acc.n_eff();
            let nb = effective_sample_size_deg(a);
            eprintln!("white noise n = {n}: streaming {ne:.1}, batch {nb:.1}");
            assert!(ne > 0.95 * n as f64, "streaming {ne}");
            assert!(nb > 0.85 * n as f64, "batch {nb}");
        }
    }

    #[test]
    fn random_walk_heading_has_n_eff_much_smaller_than_n() {
        // Heading diffusing by 2° per sample (a 100 Hz walk with no preferred direction).
        let mut rng = Rng(99);
        let n = 100_000;
        let mut th = 0.0;
        let a: Vec<f64> = (0..n)
            .map(|_| {
                th += 2.0 * rng.normal();
                th
            })
            .collect();
        let mut acc = HeadingAccumulator::new();
        a.iter().for_each(|&x| acc.push_deg(x));
        let ne = acc.n_eff();
        assert!(ne < n as f64 / 100.0, "streaming n_eff {ne}");
        let nb = effective_sample_size_deg(&a);
        eprintln!("random walk n = {n}: streaming n_eff {ne:.1}, batch n_eff {nb:.1}");
        assert!(nb < n as f64 / 100.0, "batch n_eff {nb}");
        // Naive p is absurd, the effective one is not.
        assert!(acc.rayleigh_p_eff() > acc.rayleigh_p());
        assert!(acc.v_test_eff(0.0).p >= acc.v_test(0.0).p.min(0.5));
    }

    #[test]
    fn ar1_heading_jitter_gives_the_ar1_effective_size_both_ways() {
        // Heading = 250° + x_t with x_t an AR(1) series (φ = 0.9, stationary sd 15°): the
        // unit vectors are close to AR(1) with ρ ≈ φ, so n_eff ≈ n(1 − φ)/(1 + φ) = n/19.
        let mut rng = Rng(5);
        let n = 40_000;
        let phi: f64 = 0.9;
        let sd_e = 15.0 * (1.0 - phi * phi).sqrt();
        let mut x = 0.0;
        let a: Vec<f64> = (0..n)
            .map(|_| {
                x = phi * x + sd_e * rng.normal();
                250.0 + x
            })
            .collect();
        let expect = n as f64 * (1.0 - phi) / (1.0 + phi);
        let mut acc = HeadingAccumulator::new();
        a.iter().for_each(|&v| acc.push_deg(v));
        let ne = acc.n_eff();
        let nb = effective_sample_size_deg(&a);
        eprintln!("AR(1) n = {n}: expected {expect:.0}, streaming {ne:.1}, batch {nb:.1}");
        assert!(
            ne > 0.75 * expect && ne < 1.3 * expect,
            "streaming {ne} vs {expect}"
        );
        assert!(
            nb > 0.7 * expect && nb < 1.3 * expect,
            "batch {nb} vs {expect}"
        );
    }

    #[test]
    fn ten_million_samples_keep_full_precision() {
        // Headings alternate 30° ± 10°: the exact answer is mean 30°, r = cos 10°, and
        // u_t·u_{t−1} = cos 20° for every pair. The error must not grow with n.
        let exact_r = 10f64.to_radians().cos();
        let mut acc = HeadingAccumulator::new();
        let mut errs = Vec::new();
        let mut pushed: u64 = 0;
        for checkpoint in [100_000u64, 1_000_000, 10_000_000] {
            while pushed < checkpoint {
                acc.push_deg(if pushed.is_multiple_of(2) { 20.0 } else { 40.0 });
                pushed += 1;
            }
            let e_r = (acc.r() - exact_r).abs();
            let e_m = (acc.mean_deg().unwrap() - 30.0).abs();
            errs.push((e_r, e_m));
        }
        for &(e_r, e_m) in &errs {
            assert!(e_r < 1e-15, "r error {e_r}");
            assert!(e_m < 1e-12, "mean error {e_m}");
        }
        // No growth: the error after 10^7 samples is within 2 ulp of the error after 10^5.
        let ulp = f64::EPSILON;
        assert!(errs[2].0 <= errs[0].0 + 2.0 * ulp, "{errs:?}");
        // A plain running sum of the same cosines drifts measurably at 10^7.
        let mut plain = 0.0;
        let (c20, c40) = (20f64.to_radians().cos(), 40f64.to_radians().cos());
        for i in 0..10_000_000u64 {
            plain += if i.is_multiple_of(2) { c20 } else { c40 };
        }
        let exact_c = 5e6 * (c20 + c40);
        let compensated = acc.resultant().0;
        assert!((compensated - exact_c).abs() <= (plain - exact_c).abs());
        // ρ₁ of a perfectly alternating series is −1: n_eff is capped at n.
        assert_eq!(acc.n_eff(), acc.n() as f64);
    }
}
