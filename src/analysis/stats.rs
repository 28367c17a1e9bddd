//! Streaming accumulators and the few circular tests that batch and report need.
//!
//! Angles are degrees, compass style (0 = north, clockwise). Everything here is a pure function
//! over numbers. Where `crate::circular` offers the same test, that one is the project's
//! reference; these small versions keep analysis independent of unfinished work and are pinned
//! against scipy / pycircstat2 by `tests/reference/batch_reference.py`.

use crate::frames::wrap_360_deg;
use statrs::distribution::{ContinuousCDF, FisherSnedecor, Normal};

/// Streaming sum of unit vectors with a lag-1 autocorrelation estimate (for n_eff).
///
/// O(1) per heading. The chain of consecutive samples is broken by [`VectorAcc::mark_gap`]
/// (a flight stop, a settle window, a turn), so the lag-1 products never link samples across
/// an excluded stretch.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct VectorAcc {
    /// Number of headings.
    pub n: u64,
    /// Σ cos θ.
    pub sum_c: f64,
    /// Σ sin θ.
    pub sum_s: f64,
    /// Number of consecutive pairs (i−1, i) inside one unbroken chain.
    pub n_pairs: u64,
    /// Σ over pairs of (c_i c_{i−1} + s_i s_{i−1}).
    pub sum_lag: f64,
    /// Σ over pairs of (c_i + c_{i−1}).
    pub sum_pair_c: f64,
    /// Σ over pairs of (s_i + s_{i−1}).
    pub sum_pair_s: f64,
    prev: Option<(f64, f64)>,
}

impl VectorAcc {
    /// Empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one direction in degrees.
    #[inline]
    pub fn push_deg(&mut self, angle_deg: f64) {
        let (s, c) = angle_deg.to_radians().sin_cos();
        self.n += 1;
        self.sum_c += c;
        self.sum_s += s;
        if let Some((pc, ps)) = self.prev {
            self.n_pairs += 1;
            self.sum_lag += c * pc + s * ps;
            self.sum_pair_c += c + pc;
            self.sum_pair_s += s + ps;
        }
        self.prev = Some((c, s));
    }

    /// Breaks the chain of consecutive samples.
    #[inline]
    pub fn mark_gap(&mut self) {
        self.prev = None;
    }

    /// Adds another accumulator (its chain is kept separate: no pair spans the two).
    pub fn merge(&mut self, other: &VectorAcc) {
        self.n += other.n;
        self.sum_c += other.sum_c;
        self.sum_s += other.sum_s;
        self.n_pairs += other.n_pairs;
        self.sum_lag += other.sum_lag;
        self.sum_pair_c += other.sum_pair_c;
        self.sum_pair_s += other.sum_pair_s;
        self.prev = None;
    }

    /// Mean vector length r in [0, 1] (0 when empty).
    pub fn r(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        let n = self.n as f64;
        ((self.sum_c / n).powi(2) + (self.sum_s / n).powi(2))
            .sqrt()
            .min(1.0)
    }

    /// Mean direction in [0, 360); None when empty or r is (numerically) 0.
    pub fn mean_deg(&self) -> Option<f64> {
        mean_deg_from_sums(self.sum_c, self.sum_s)
    }

    /// Lag-1 autocorrelation of the unit vectors (about the sample mean vector), pooled over
    /// the unbroken chains: ρ1 = Σ_pairs (u_i − ū)·(u_{i−1} − ū) / Σ_i |u_i − ū|², scaled by
    /// n / n_pairs. None when it cannot be estimated (no pairs, or no spread).
    pub fn lag1_autocorrelation(&self) -> Option<f64> {
        if self.n < 2 || self.n_pairs == 0 {
            return None;
        }
        let n = self.n as f64;
        let (mc, ms) = (self.sum_c / n, self.sum_s / n);
        let spread = n - n * (mc * mc + ms * ms); // Σ |u_i − ū|², |u_i| = 1
        if spread <= 1e-12 * n {
            return None;
        }
        let np = self.n_pairs as f64;
        let cov =
            self.sum_lag - mc * self.sum_pair_c - ms * self.sum_pair_s + np * (mc * mc + ms * ms);
        Some(((cov / np) / (spread / n)).clamp(-1.0, 1.0))
    }

    /// Effective sample size for autocorrelated headings, the AR(1) rule
    /// n_eff = n (1 − ρ1) / (1 + ρ1) (Bayley & Hammersley 1946; von Storch & Zwiers 1999,
    /// §17.1), applied to the lag-1 autocorrelation of the unit vectors; kept in [1, n]
    /// (n when ρ1 ≤ 0 or cannot be estimated; 1 when ρ1 = 1). 0 when empty.
    pub fn n_eff(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        let n = self.n as f64;
        match self.lag1_autocorrelation() {
            Some(rho) if rho > 0.0 => (n * (1.0 - rho) / (1.0 + rho)).clamp(1.0, n),
            _ => n,
        }
    }
}

/// Mean direction in [0, 360) from Σ cos and Σ sin; None when the resultant is ~0.
pub fn mean_deg_from_sums(sum_c: f64, sum_s: f64) -> Option<f64> {
    if sum_c.hypot(sum_s) <= 1e-12 {
        None
    } else {
        Some(wrap_360_deg(sum_s.atan2(sum_c).to_degrees()))
    }
}

/// Rayleigh test of uniformity against a unimodal alternative for n (may be an effective,
/// non-integer n) and mean vector length r. Returns (z = n r², p) with Zar's (2010, eq. 27.4)
/// approximation p = exp(√(1 + 4n + 4(n² − R²)) − (1 + 2n)), R = n r (Greenwood & Durand
/// 1955), clamped to [0, 1]. p = 1 for n = 0.
pub fn rayleigh(n: f64, r: f64) -> (f64, f64) {
    if n <= 0.0 {
        return (0.0, 1.0);
    }
    let big_r = n * r;
    let z = n * r * r;
    let p = ((1.0 + 4.0 * n + 4.0 * (n * n - big_r * big_r)).sqrt() - (1.0 + 2.0 * n)).exp();
    (z, p.clamp(0.0, 1.0))
}

/// Mean direction and mean vector length of directions in degrees.
pub fn mean_and_r(angles_deg: &[f64]) -> (Option<f64>, f64) {
    let mut acc = VectorAcc::new();
    for &a in angles_deg {
        acc.push_deg(a);
    }
    (acc.mean_deg(), acc.r())
}

/// Result of the V-test.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VTest {
    /// V = R cos(ā − μ0), R = n r.
    pub v: f64,
    /// u = V √(2/n).
    pub u: f64,
    /// One-sided p from the normal approximation, 1 − Φ(u).
    pub p: f64,
}

/// V-test (modified Rayleigh test) toward an expected direction μ0 (Zar 2010, eqs. 27.5–27.6;
/// Durand & Greenwood 1958); p from the normal approximation as in pycircstat2's `V_test`.
/// None for an empty sample.
pub fn v_test(angles_deg: &[f64], expected_deg: f64) -> Option<VTest> {
    let n = angles_deg.len() as f64;
    if n < 1.0 {
        return None;
    }
    let (mean, r) = mean_and_r(angles_deg);
    let mean = mean.unwrap_or(expected_deg);
    let v = n * r * (mean - expected_deg).to_radians().cos();
    let u = v * (2.0 / n).sqrt();
    let p = Normal::standard().sf(u);
    Some(VTest { v, u, p })
}

/// Moore's modified Rayleigh test for second-order data (Moore 1980; Zar 2010, §27.1):
/// the vectors are ranked by length (1 = shortest, ties get the mean rank) and
/// R* = √((Σ i cos θ_i)² + (Σ i sin θ_i)²) / n^{3/2}. Returns (R*, p) with the large-sample
/// p = exp(−3 R*²) (under H0, 6 R*² → χ²₂). None for n < 2.
pub fn moore_test(means_deg: &[f64], lengths: &[f64]) -> Option<(f64, f64)> {
    let n = means_deg.len();
    if n < 2 || lengths.len() != n {
        return None;
    }
    let ranks = average_ranks(lengths);
    let (mut c, mut s) = (0.0, 0.0);
    for (a, rank) in means_deg.iter().zip(&ranks) {
        let (sn, cs) = a.to_radians().sin_cos();
        c += rank * cs;
        s += rank * sn;
    }
    let r_star = c.hypot(s) / (n as f64).powf(1.5);
    Some((r_star, (-3.0 * r_star * r_star).exp()))
}

/// Ranks 1..n of values, ties given their mean rank.
fn average_ranks(values: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..values.len()).collect();
    idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]));
    let mut ranks = vec![0.0; values.len()];
    let mut i = 0;
    while i < idx.len() {
        let mut j = i;
        while j + 1 < idx.len() && values[idx[j + 1]] == values[idx[i]] {
            j += 1;
        }
        let rank = (i + j) as f64 / 2.0 + 1.0;
        for &k in &idx[i..=j] {
            ranks[k] = rank;
        }
        i = j + 1;
    }
    ranks
}

/// Hotelling's one-sample test that the population mean vector is zero, for second-order
/// data (Batschelet 1981, §7.2; Zar 2010, eq. 27.40): with x_i = r_i cos θ_i, y_i = r_i sin θ_i,
/// F = n(n−2)/2 · (x̄² Syy − 2 x̄ ȳ Sxy + ȳ² Sxx) / (Sxx Syy − Sxy²), on (2, n−2) degrees of
/// freedom. Returns (F, p); None for n < 3 or a singular scatter.
pub fn hotelling_one_sample(means_deg: &[f64], lengths: &[f64]) -> Option<(f64, f64)> {
    let n = means_deg.len();
    if n < 3 || lengths.len() != n {
        return None;
    }
    let pts: Vec<(f64, f64)> = means_deg
        .iter()
        .zip(lengths)
        .map(|(a, r)| {
            let (s, c) = a.to_radians().sin_cos();
            (r * c, r * s)
        })
        .collect();
    let nf = n as f64;
    let xm = pts.iter().map(|p| p.0).sum::<f64>() / nf;
    let ym = pts.iter().map(|p| p.1).sum::<f64>() / nf;
    let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
    for (x, y) in &pts {
        sxx += (x - xm) * (x - xm);
        syy += (y - ym) * (y - ym);
        sxy += (x - xm) * (y - ym);
    }
    let det = sxx * syy - sxy * sxy;
    if det <= 1e-15 {
        return None;
    }
    let f = nf * (nf - 2.0) / 2.0 * (xm * xm * syy - 2.0 * xm * ym * sxy + ym * ym * sxx) / det;
    let p = FisherSnedecor::new(2.0, nf - 2.0).ok()?.sf(f);
    Some((f, p))
}

/// Concentration κ from a mean vector length, Fisher's (1993, eq. 4.40) approximation of A1⁻¹
/// (the rule `circ_kappa` in CircStat / pycircstat2 uses without its small-n correction).
pub fn kappa_from_r(r: f64) -> f64 {
    if r < 0.53 {
        2.0 * r + r.powi(3) + 5.0 * r.powi(5) / 6.0
    } else if r < 0.85 {
        -0.4 + 1.39 * r + 0.43 / (1.0 - r)
    } else if r < 1.0 {
        1.0 / (r.powi(3) - 4.0 * r.powi(2) + 3.0 * r)
    } else {
        f64::INFINITY
    }
}

/// Result of the Watson–Williams test.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WatsonWilliams {
    /// F statistic with the correction factor K = 1 + 3/(8κ).
    pub f: f64,
    /// p from F(k − 1, N − k).
    pub p: f64,
    /// k − 1.
    pub df1: f64,
    /// N − k.
    pub df2: f64,
}

/// Watson–Williams test for equal mean directions of k groups (Watson & Williams 1956;
/// Zar 2010, eq. 27.15, with the correction K = 1 + 3/(8κ), κ from the pooled within-group
/// mean vector length as in pycircstat2's `watson_williams_test`). None when N ≤ k, a group
/// is empty, or all angles are identical.
pub fn watson_williams(groups_deg: &[&[f64]]) -> Option<WatsonWilliams> {
    let k = groups_deg.len();
    let big_n: usize = groups_deg.iter().map(|g| g.len()).sum();
    if k < 2 || big_n <= k || groups_deg.iter().any(|g| g.is_empty()) {
        return None;
    }
    let mut all = VectorAcc::new();
    let mut sum_rj = 0.0;
    for g in groups_deg {
        let mut acc = VectorAcc::new();
        for &a in g.iter() {
            acc.push_deg(a);
            all.push_deg(a);
        }
        sum_rj += acc.sum_c.hypot(acc.sum_s);
    }
    let nf = big_n as f64;
    let big_r = all.sum_c.hypot(all.sum_s);
    if nf - sum_rj <= 1e-12 {
        return None;
    }
    let kappa = kappa_from_r(sum_rj / nf);
    let corr = if kappa.is_finite() && kappa > 0.0 {
        1.0 + 3.0 / (8.0 * kappa)
    } else {
        1.0
    };
    let (df1, df2) = ((k - 1) as f64, nf - k as f64);
    let f = corr * df2 * (sum_rj - big_r) / (df1 * (nf - sum_rj));
    let p = FisherSnedecor::new(df1, df2).ok()?.sf(f.max(0.0));
    Some(WatsonWilliams { f, p, df1, df2 })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn accumulator_mean_and_r() {
        let mut a = VectorAcc::new();
        for x in [350.0, 10.0] {
            a.push_deg(x);
        }
        assert!(a.mean_deg().unwrap() < 1e-9 || a.mean_deg().unwrap() > 359.999_999);
        assert!((a.r() - 10f64.to_radians().cos()).abs() < 1e-12);
    }

    #[test]
    fn n_eff_of_independent_alternation_is_n_and_of_slow_drift_is_small() {
        // Alternating directions: negative lag-1 correlation, n_eff = n.
        let mut a = VectorAcc::new();
        for i in 0..1000 {
            a.push_deg(if i % 2 == 0 { 0.0 } else { 90.0 });
        }
        assert_eq!(a.n_eff(), 1000.0);
        // Slow drift: strongly positive correlation, n_eff far below n.
        let mut b = VectorAcc::new();
        for i in 0..1000 {
            b.push_deg(i as f64 * 0.36);
        }
        assert!(b.n_eff() < 10.0, "{}", b.n_eff());
    }

    #[test]
    fn rayleigh_matches_pycircstat2() {
        // pycircstat2 0.1.15 `rayleigh_test(r=0.82522, n=8)` (the r of Zar 2010, Example 27.1):
        // z = 5.4479043872, p = 0.0018515551287451978.
        let (z, p) = rayleigh(8.0, 0.82522);
        assert!((z - 5.4479043872).abs() < 1e-9);
        assert!((p - 0.0018515551287451978).abs() < 1e-12, "{p}");
    }

    #[test]
    fn v_test_matches_pycircstat2() {
        // pycircstat2 0.1.15 `V_test(angle=0, alpha=deg2rad([10, -20, 30, 5, 350]))`:
        // V = 4.771528228686509, u = 3.017779424487629, p = 0.0012731708506959997.
        let v = v_test(&[10.0, -20.0, 30.0, 5.0, 350.0], 0.0).unwrap();
        assert!((v.v - 4.771528228686509).abs() < 1e-9);
        assert!((v.u - 3.017779424487629).abs() < 1e-9);
        assert!((v.p - 0.0012731708506959997).abs() < 1e-9, "{}", v.p);
    }

    #[test]
    fn moore_ranks_ties() {
        assert_eq!(average_ranks(&[0.5, 0.1, 0.5]), vec![2.5, 1.0, 2.5]);
        let (rs, p) = moore_test(&[0.0, 0.0, 0.0, 0.0], &[0.1, 0.2, 0.3, 0.4]).unwrap();
        assert!((rs - 10.0 / 8.0).abs() < 1e-12);
        assert!((p - (-3.0 * rs * rs).exp()).abs() < 1e-15);
    }

    #[test]
    fn watson_williams_separates_distinct_means() {
        let a = [10.0, 20.0, 0.0, 15.0, 5.0];
        let b = [190.0, 200.0, 180.0, 195.0, 185.0];
        let ww = watson_williams(&[&a, &b]).unwrap();
        assert!(ww.p < 1e-6);
        let same = watson_williams(&[&a, &a]).unwrap();
        assert!(same.p > 0.99);
    }

    #[test]
    fn hotelling_needs_three() {
        assert!(hotelling_one_sample(&[0.0, 10.0], &[1.0, 1.0]).is_none());
        let (f, p) =
            hotelling_one_sample(&[0.0, 10.0, 350.0, 5.0], &[0.9, 0.8, 0.85, 0.7]).unwrap();
        assert!(f > 10.0 && p < 0.05);
    }
}
