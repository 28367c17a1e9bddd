//! Tests between groups (Watson–Williams) and second-order tests on one mean vector per animal
//! (Moore's modified Rayleigh test, Hotelling's one-sample test). Angles in degrees, compass
//! convention; mean directions in [0, 360).

use super::randomization::{RESAMPLES, Rng, data_seed, monte_carlo_p};
use super::sum::Neumaier;
use super::trig::sin_cos_deg;
use super::{CircularError, kappa_estimate, mean_direction_from_resultant_deg};
use serde::Serialize;
use statrs::distribution::{ContinuousCDF, FisherSnedecor};

pub(crate) fn f_sf(f: f64, df1: f64, df2: f64) -> f64 {
    if !f.is_finite() {
        return if f > 0.0 { 0.0 } else { 1.0 };
    }
    if f <= 0.0 {
        return 1.0;
    }
    match FisherSnedecor::new(df1, df2) {
        Ok(d) => d.sf(f).clamp(0.0, 1.0),
        Err(_) => f64::NAN,
    }
}

pub(crate) fn check_finite(
    test: &'static str,
    what: &'static str,
    v: &[f64],
) -> Result<(), CircularError> {
    match v.iter().position(|x| !x.is_finite()) {
        Some(index) => Err(CircularError::BadValue {
            test,
            what,
            index,
            value: v[index],
        }),
        None => Ok(()),
    }
}

fn check_lengths(test: &'static str, rs: &[f64]) -> Result<(), CircularError> {
    match rs.iter().position(|r| !(0.0..=1.0).contains(r)) {
        Some(index) => Err(CircularError::BadValue {
            test,
            what: "mean vector length",
            index,
            value: rs[index],
        }),
        None => Ok(()),
    }
}

/// Result of the Watson–Williams test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WatsonWilliamsResult {
    /// Number of groups k.
    pub groups: usize,
    /// Total number of angles N.
    pub n: usize,
    /// F statistic, with the κ correction factor applied.
    pub f: f64,
    /// Degrees of freedom (k − 1, N − k).
    pub df: (f64, f64),
    /// p from the F distribution (too liberal for few animals; see the function).
    pub p: f64,
    /// Permutation p of F (group labels shuffled; see the function).
    pub p_permutation: f64,
    /// Pooled within-group mean vector length r_w = ΣR_i/N.
    pub r_pooled: f64,
    /// Zar's condition for the F approximation: r_w ≥ [`WW_MIN_POOLED_R`].
    pub concentration_ok: bool,
    /// κ estimated from r_w.
    pub kappa: f64,
    /// Correction factor K = 1 + 3/(8κ) (1 when κ is 0).
    pub correction: f64,
    /// Mean direction of each group in degrees.
    pub group_means_deg: Vec<Option<f64>>,
}

/// The smallest pooled mean vector length r_w at which the F approximation of the
/// Watson–Williams test is used (Zar 2010 §27.4: the test, with Stephens' correction, is
/// adequate for r_w ≥ 0.45; the same limit is enforced by CircStat's circ_wwtest, Berens 2009;
/// both recalled from memory). Our calibration tests (`circular::calibration`) measure the F p
/// with and without this guard.
pub const WW_MIN_POOLED_R: f64 = 0.45;

/// (ΣR_i, R, N) of groups given as one pooled list of unit vectors and a group label each.
fn ww_sums(c: &[f64], s: &[f64], labels: &[usize], k: usize) -> (f64, f64) {
    let mut gc = vec![0.0; k];
    let mut gs = vec![0.0; k];
    for ((&ci, &si), &g) in c.iter().zip(s).zip(labels) {
        gc[g] += ci;
        gs[g] += si;
    }
    let sum_ri = gc.iter().zip(&gs).map(|(a, b)| a.hypot(*b)).sum();
    let big_r = gc.iter().sum::<f64>().hypot(gs.iter().sum::<f64>());
    (sum_ri, big_r)
}

/// The corrected F of Watson–Williams from ΣR_i, R, N and k; also (r_w, κ, K).
fn ww_f(sum_ri: f64, big_r: f64, nf: f64, kf: f64) -> (f64, f64, f64, f64) {
    let within = (nf - sum_ri).max(1e-12 * nf);
    let rw = (sum_ri / nf).clamp(0.0, 1.0);
    let kappa = kappa_estimate(rw, None);
    let correction = if kappa > 0.0 && kappa.is_finite() {
        1.0 + 3.0 / (8.0 * kappa)
    } else {
        1.0
    };
    let f = correction * (nf - kf) * (sum_ri - big_r).max(0.0) / ((kf - 1.0) * within);
    (f, rw, kappa, correction)
}

/// Watson–Williams test that two or more independent groups of directions share one mean
/// direction (Watson & Williams 1956; Zar 2010 §27.4, eq. 27.17–27.19 with the correction
/// factor K = 1 + 3/(8κ) of Stephens 1972; Mardia & Jupp 2000 §7.4).
///
/// F = K (N − k)(ΣR_i − R) / ((k − 1)(N − ΣR_i)) with R_i the resultant length of group i, R
/// that of all angles pooled, κ from [`kappa_estimate`] of r_w = ΣR_i/N (no small-sample
/// correction, as in Zar and `pycircstat2.watson_williams_test`); `p` from F(k − 1, N − k)
/// (statrs). The F tail assumes von Mises groups with a common, not too small κ; on the few
/// animals of a population it is too liberal (measured in `circular::calibration`, α = 0.05:
/// 25% false positives with uniform directions and 8 + 8 animals, 46% with 15 + 15, 7–8% at
/// κ = 1), and Zar's condition r_w ≥ [`WW_MIN_POOLED_R`], reported as `concentration_ok`, does
/// not rescue it: among the data sets that meet it the F tail still gives 52% (κ = 0) and 8%
/// (κ = 1). So the p to report is `p_permutation`, a seeded permutation p of the same F (group
/// labels shuffled, B = [`RESAMPLES`], seed from the data), exactly valid under "all groups are
/// drawn from one distribution" whatever the concentration (45–56‰ in the same simulations).
/// The groups must be independent (different animals). Angles in degrees, compass convention.
pub fn watson_williams_test(groups: &[&[f64]]) -> Result<WatsonWilliamsResult, CircularError> {
    let parts: Vec<&[f64]> = groups.to_vec();
    watson_williams_test_with(groups, RESAMPLES, data_seed(&parts))
}

/// [`watson_williams_test`] with a given number of resamples and seed.
pub fn watson_williams_test_with(
    groups: &[&[f64]],
    resamples: usize,
    seed: u64,
) -> Result<WatsonWilliamsResult, CircularError> {
    const TEST: &str = "Watson-Williams test";
    let k = groups.len();
    if k < 2 {
        return Err(CircularError::TooFew {
            test: TEST,
            need: "at least 2 groups",
            got: k,
        });
    }
    let (mut c, mut s, mut labels) = (Vec::new(), Vec::new(), Vec::new());
    let mut group_means_deg = Vec::with_capacity(k);
    for (gi, g) in groups.iter().enumerate() {
        check_finite(TEST, "angle", g)?;
        if g.is_empty() {
            return Err(CircularError::TooFew {
                test: TEST,
                need: "at least 1 angle in every group",
                got: 0,
            });
        }
        let mut gc = Neumaier::default();
        let mut gs = Neumaier::default();
        for &a in g.iter() {
            let (sn, cs) = sin_cos_deg(a);
            gc.add(cs);
            gs.add(sn);
            c.push(cs);
            s.push(sn);
            labels.push(gi);
        }
        group_means_deg.push(mean_direction_from_resultant_deg(
            gc.value(),
            gs.value(),
            g.len() as f64,
        ));
    }
    let big_n = c.len();
    if big_n <= k {
        return Err(CircularError::TooFew {
            test: TEST,
            need: "more angles than groups",
            got: big_n,
        });
    }
    let nf = big_n as f64;
    let kf = k as f64;
    let (sum_ri, big_r) = ww_sums(&c, &s, &labels, k);
    let within = nf - sum_ri;
    if within.is_nan() || within <= 1e-12 * nf {
        return Err(CircularError::Degenerate {
            test: TEST,
            why: "every group has zero spread",
        });
    }
    let (f, rw, kappa, correction) = ww_f(sum_ri, big_r, nf, kf);
    let df = (kf - 1.0, nf - kf);
    let mut rng = Rng::new(seed);
    let mut perm = labels.clone();
    let p_permutation = monte_carlo_p(f, resamples, &mut rng, |rng| {
        // Fisher–Yates shuffle of the labels (Knuth, TAOCP vol. 2, Algorithm P).
        for i in (1..perm.len()).rev() {
            let j = rng.below(i + 1);
            perm.swap(i, j);
        }
        let (sr, br) = ww_sums(&c, &s, &perm, k);
        ww_f(sr, br, nf, kf).0
    });
    Ok(WatsonWilliamsResult {
        groups: k,
        n: big_n,
        f,
        df,
        p: f_sf(f, df.0, df.1),
        p_permutation,
        r_pooled: rw,
        concentration_ok: rw >= WW_MIN_POOLED_R,
        kappa,
        correction,
        group_means_deg,
    })
}

/// Second-order mean vector of one mean vector per animal (Batschelet 1981 §10.1; Zar 2010
/// §27.5 "mean of mean angles"): X̄ = Σ r_i cos θ_i / n, Ȳ = Σ r_i sin θ_i / n; returns
/// (mean direction in [0, 360) or None when the mean vector is 0, its length).
pub fn second_order_mean(
    means_deg: &[f64],
    lengths: &[f64],
) -> Result<(Option<f64>, f64), CircularError> {
    let (x, y) = vectors("second-order mean", means_deg, lengths, 1)?;
    let n = x.len() as f64;
    let mut sx = Neumaier::default();
    let mut sy = Neumaier::default();
    x.iter().for_each(|&v| sx.add(v));
    y.iter().for_each(|&v| sy.add(v));
    let (mx, my) = (sx.value() / n, sy.value() / n);
    Ok((mean_direction_from_resultant_deg(mx, my, 1.0), mx.hypot(my)))
}

type Components = (Vec<f64>, Vec<f64>);

fn vectors(
    test: &'static str,
    means_deg: &[f64],
    lengths: &[f64],
    min_n: usize,
) -> Result<Components, CircularError> {
    if means_deg.len() != lengths.len() {
        return Err(CircularError::Degenerate {
            test,
            why: "mean directions and vector lengths differ in number",
        });
    }
    if means_deg.len() < min_n {
        return Err(CircularError::TooFew {
            test,
            need: if min_n <= 1 {
                "at least 1 animal"
            } else if min_n == 3 {
                "at least 3 animals"
            } else {
                "more animals"
            },
            got: means_deg.len(),
        });
    }
    check_finite(test, "mean direction", means_deg)?;
    check_lengths(test, lengths)?;
    Ok(means_deg
        .iter()
        .zip(lengths)
        .map(|(&m, &r)| {
            let (s, c) = sin_cos_deg(m);
            (r * c, r * s)
        })
        .unzip())
}

/// Result of Moore's modified Rayleigh test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MooreResult {
    /// Number of animals.
    pub n: usize,
    /// Moore's R* (Zar's R′).
    pub r_star: f64,
    /// Mean direction of the rank-weighted vectors, in [0, 360).
    pub mean_deg: Option<f64>,
    /// Randomization p (directions uniform, ranks kept; see the function).
    pub p: f64,
    /// The moment-corrected exponential approximation (see the function), for comparison.
    pub p_approx: f64,
}

/// Moore's modified Rayleigh test of a second-order sample (one mean vector per animal)
/// against uniformity, weighting each animal's direction by the rank of its vector length
/// (Moore 1980, Biometrika 67:175; Zar 2010 §27.6, eq. 27.21–27.23).
///
/// With the lengths ranked 1..n from shortest to longest (ties get their average rank),
/// X = Σ rank_i cos θ_i / n, Y = Σ rank_i sin θ_i / n, R* = sqrt(X² + Y²)/sqrt(n).
///
/// The reported `p` is a seeded randomization p of R* under Moore's own null (directions
/// uniform and independent of the lengths, so of the ranks): each resample keeps the ranks and
/// draws the directions uniformly; p = (1 + k)/(1 + B), B = [`RESAMPLES`], seed from the data.
/// It is exactly valid for every n and replaces Moore's table (Zar 2010 Table B.39), which
/// holds only a few n and α. `p_approx` keeps the closed form used before: with
/// t = n³R*²/Σrank² (E t = 1 under uniformity) and δ = Σrank⁴/(Σrank²)², the exact second
/// moment E|S|⁴ = 2(Σrank²)² − Σrank⁴ fixes the first Laguerre correction of the exponential
/// tail, p ≈ exp(−t + δ(t/2 − t²/4)), which tends to Moore's asymptotic exp(−3R*²) for large n
/// and is measured by the calibration tests (`circular::calibration`). Needs n ≥ 2.
pub fn moore_rayleigh_test(
    means_deg: &[f64],
    lengths: &[f64],
) -> Result<MooreResult, CircularError> {
    moore_rayleigh_test_with(
        means_deg,
        lengths,
        RESAMPLES,
        data_seed(&[means_deg, lengths]),
    )
}

/// |Σ w_i (cos θ_i, sin θ_i)|² for weights w and directions in degrees.
pub(crate) fn weighted_resultant_sq(weights: &[f64], dirs_deg: impl Iterator<Item = f64>) -> f64 {
    let (mut c, mut s) = (0.0, 0.0);
    for (w, d) in weights.iter().zip(dirs_deg) {
        let (sn, cs) = sin_cos_deg(d);
        c += w * cs;
        s += w * sn;
    }
    c * c + s * s
}

/// [`moore_rayleigh_test`] with a given number of resamples and seed.
pub fn moore_rayleigh_test_with(
    means_deg: &[f64],
    lengths: &[f64],
    resamples: usize,
    seed: u64,
) -> Result<MooreResult, CircularError> {
    const TEST: &str = "Moore's modified Rayleigh test";
    let (_, _) = vectors(TEST, means_deg, lengths, 2)?;
    let n = means_deg.len();
    let ranks = average_ranks(lengths);
    let mut sc = Neumaier::default();
    let mut ss = Neumaier::default();
    let mut sq = 0.0;
    let mut q4 = 0.0;
    for (&m, &rank) in means_deg.iter().zip(&ranks) {
        let (s, c) = sin_cos_deg(m);
        sc.add(rank * c);
        ss.add(rank * s);
        sq += rank * rank;
        q4 += rank.powi(4);
    }
    let nf = n as f64;
    let len2 = sc.value().powi(2) + ss.value().powi(2);
    let r_star = len2.sqrt() / nf.powf(1.5);
    let t = len2 / sq;
    let delta = q4 / (sq * sq);
    let p_approx = (-t + delta * (t / 2.0 - t * t / 4.0)).exp().clamp(0.0, 1.0);
    let mut rng = Rng::new(seed);
    let p = monte_carlo_p(len2, resamples, &mut rng, |rng| {
        let dirs: Vec<f64> = (0..n).map(|_| rng.angle_deg()).collect();
        weighted_resultant_sq(&ranks, dirs.into_iter())
    });
    Ok(MooreResult {
        n,
        r_star,
        mean_deg: mean_direction_from_resultant_deg(sc.value(), ss.value(), nf),
        p,
        p_approx,
    })
}

/// Ranks 1..n (ascending), ties sharing their average rank.
pub(crate) fn average_ranks(v: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..v.len()).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]));
    let mut ranks = vec![0.0; v.len()];
    let mut i = 0;
    while i < idx.len() {
        let mut j = i;
        while j + 1 < idx.len() && v[idx[j + 1]] == v[idx[i]] {
            j += 1;
        }
        let avg = (i + j) as f64 / 2.0 + 1.0;
        for &k in &idx[i..=j] {
            ranks[k] = avg;
        }
        i = j + 1;
    }
    ranks
}

/// Result of Hotelling's one-sample test on second-order vectors.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HotellingResult {
    /// Number of animals.
    pub n: usize,
    /// F statistic with (2, n − 2) degrees of freedom.
    pub f: f64,
    /// Randomization p (directions drawn uniformly, lengths kept; see the function).
    pub p: f64,
    /// p from the F distribution (statrs), the textbook approximation; too liberal for few,
    /// strongly oriented animals (see the function), kept for comparison only.
    pub p_f: f64,
    /// Second-order mean direction in [0, 360).
    pub mean_deg: Option<f64>,
    /// Second-order mean vector length.
    pub r: f64,
}

/// Hotelling's F of vectors (x_i, y_i), or None when they lie on one line.
fn hotelling_f(x: &[f64], y: &[f64]) -> Option<f64> {
    hotelling_f_signed(x, y, |_| 1.0)
}

/// Hotelling's F of the vectors sign(i)·(x_i, y_i), or None when they lie on one line: the
/// one-sample statistic below, and the sign-flip null of the paired test (`paired.rs`).
pub(super) fn hotelling_f_signed(x: &[f64], y: &[f64], sign: impl Fn(usize) -> f64) -> Option<f64> {
    let nf = x.len() as f64;
    let (mut mx, mut my) = (0.0, 0.0);
    for (i, (&a, &b)) in x.iter().zip(y).enumerate() {
        mx += sign(i) * a;
        my += sign(i) * b;
    }
    mx /= nf;
    my /= nf;
    let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
    for (i, (&a, &b)) in x.iter().zip(y).enumerate() {
        let (dx, dy) = (sign(i) * a - mx, sign(i) * b - my);
        sxx += dx * dx;
        syy += dy * dy;
        sxy += dx * dy;
    }
    let det = sxx * syy - sxy * sxy;
    let scale = (sxx + syy).max(f64::MIN_POSITIVE);
    if det.is_nan() || det <= 1e-12 * scale * scale {
        return None;
    }
    let q = (mx * mx * syy - 2.0 * mx * my * sxy + my * my * sxx) / det;
    Some(nf * (nf - 2.0) / 2.0 * q)
}

/// Hotelling's one-sample test that the population mean of one mean vector per animal is the
/// zero vector (no population direction) (Hotelling 1931; Batschelet 1981 §7.2 and §10.2;
/// Zar 2010 §27.5, eq. 27.20).
///
/// With x_i = r_i cos θ_i, y_i = r_i sin θ_i, centred sums of squares and products Σx², Σy²,
/// Σxy: F = n(n − 2)/2 · (x̄²Σy² − 2x̄ȳΣxy + ȳ²Σx²)/(Σx²Σy² − (Σxy)²), which equals
/// (n − 2)/(2(n − 1))·T² with T² = n·m̄ᵀS⁻¹m̄ Hotelling's statistic. Unlike the Rayleigh test on
/// the means it uses the animals' vector lengths. Needs n ≥ 3 and vectors that are not all on
/// one line.
///
/// The reported `p` is a seeded randomization p, not the F(2, n − 2) tail: the F tail assumes
/// bivariate normal vectors, and animals that are strongly oriented in random directions put
/// their vectors near a circle, where it is too liberal (measured by the calibration tests in
/// `circular::calibration`: 11–13% false positives at α = 0.05 with 4 animals, about 7% with
/// 8). The null of the randomization is the one the test is used for, "the animals' directions
/// are uniform and independent of their vector lengths": each resample keeps the lengths and
/// draws every direction uniformly; p = (1 + k)/(1 + B) with B = [`RESAMPLES`] and the seed
/// taken from the data ([`data_seed`]), which is exactly valid for any n. The F p stays in
/// `p_f` for comparison.
pub fn hotelling_one_sample_test(
    means_deg: &[f64],
    lengths: &[f64],
) -> Result<HotellingResult, CircularError> {
    hotelling_one_sample_test_with(
        means_deg,
        lengths,
        RESAMPLES,
        data_seed(&[means_deg, lengths]),
    )
}

/// [`hotelling_one_sample_test`] with a given number of resamples and seed.
pub fn hotelling_one_sample_test_with(
    means_deg: &[f64],
    lengths: &[f64],
    resamples: usize,
    seed: u64,
) -> Result<HotellingResult, CircularError> {
    const TEST: &str = "Hotelling's one-sample test";
    let (x, y) = vectors(TEST, means_deg, lengths, 3)?;
    let n = x.len();
    let nf = n as f64;
    let Some(f) = hotelling_f(&x, &y) else {
        return Err(CircularError::Degenerate {
            test: TEST,
            why: "the animals' vectors lie on one line (no spread in one direction)",
        });
    };
    let (mut rx, mut ry) = (vec![0.0; n], vec![0.0; n]);
    let mut rng = Rng::new(seed);
    let p = monte_carlo_p(f, resamples, &mut rng, |rng| {
        for i in 0..n {
            let (s, c) = sin_cos_deg(rng.angle_deg());
            rx[i] = lengths[i] * c;
            ry[i] = lengths[i] * s;
        }
        // A resample on one line (only possible with zero lengths) counts as extreme.
        hotelling_f(&rx, &ry).unwrap_or(f64::INFINITY)
    });
    let mx = x.iter().sum::<f64>() / nf;
    let my = y.iter().sum::<f64>() / nf;
    Ok(HotellingResult {
        n,
        f,
        p,
        p_f: f_sf(f, 2.0, nf - 2.0),
        mean_deg: mean_direction_from_resultant_deg(mx, my, 1.0),
        r: mx.hypot(my),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranks_average_ties() {
        assert_eq!(
            average_ranks(&[0.5, 0.1, 0.5, 0.9]),
            vec![2.5, 1.0, 2.5, 4.0]
        );
    }

    #[test]
    fn watson_williams_same_direction_is_not_significant_and_different_is() {
        let a = [10.0, 20.0, 30.0, 15.0, 25.0, 5.0, 35.0, 20.0];
        let b = [12.0, 22.0, 28.0, 18.0, 24.0, 8.0, 32.0, 21.0];
        let c = [100.0, 110.0, 120.0, 105.0, 115.0, 95.0, 125.0, 110.0];
        let same = watson_williams_test(&[&a, &b]).unwrap();
        assert!(same.p > 0.5, "{same:?}");
        let diff = watson_williams_test(&[&a, &b, &c]).unwrap();
        assert!(diff.p < 1e-6, "{diff:?}");
        assert_eq!(diff.df, (2.0, 21.0));
        assert!(diff.correction > 1.0);
    }

    #[test]
    fn watson_williams_rejects_bad_input() {
        let a = [1.0, 2.0];
        assert!(matches!(
            watson_williams_test(&[&a]),
            Err(CircularError::TooFew { .. })
        ));
        assert!(watson_williams_test(&[&a, &[]]).is_err());
        assert!(watson_williams_test(&[&a, &[f64::NAN]]).is_err());
        assert!(matches!(
            watson_williams_test(&[&[5.0, 5.0], &[9.0, 9.0]]),
            Err(CircularError::Degenerate { .. })
        ));
    }

    #[test]
    fn moore_tends_to_the_asymptotic_form() {
        // Moore 1980: for large n, P(R* > x) ≈ exp(−3x²); the 0.05 critical value for
        // n → ∞ is sqrt(ln 20 / 3) = 0.999 (Zar 2010 Table B.39 last row, from memory).
        let n = 2000;
        let means: Vec<f64> = (0..n).map(|i| (i as f64 * 137.507_764) % 360.0).collect();
        let rs: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) / n as f64).collect();
        let m = moore_rayleigh_test_with(&means, &rs, 0, 1).unwrap();
        let asym = (-3.0 * m.r_star * m.r_star).exp();
        assert!(
            (m.p_approx - asym).abs() < 1e-3 * asym.max(1e-3) + 1e-3,
            "{m:?} {asym}"
        );
    }

    #[test]
    fn moore_p_with_equal_weights_matches_first_order_greenwood_durand() {
        // Ties everywhere: all ranks equal, so R* n^(3/2) / rank = R and t = R²/n = z.
        let means = [10.0, 40.0, 70.0, 100.0, 130.0, 200.0, 250.0, 300.0];
        let rs = [0.5; 8];
        let m = moore_rayleigh_test(&means, &rs).unwrap();
        let d = crate::circular::describe_deg(&means);
        let (z, n) = (d.rayleigh_z, 8.0);
        let first_order = (-z + (2.0 * z - z * z) / (4.0 * n)).exp();
        assert!(
            (m.p_approx - first_order).abs() < 1e-12,
            "{} {first_order}",
            m.p_approx
        );
        // and it is close to the full Greenwood–Durand p
        assert!((m.p_approx - d.rayleigh_p).abs() < 0.02);
        // The randomization p agrees with both within its Monte Carlo error.
        assert!(
            (m.p - d.rayleigh_p).abs() < 0.03,
            "{} {}",
            m.p,
            d.rayleigh_p
        );
    }

    #[test]
    fn moore_detects_a_common_direction() {
        let means = [350.0, 10.0, 20.0, 5.0, 355.0, 0.0, 15.0, 345.0, 30.0, 8.0];
        let rs = [0.9, 0.8, 0.7, 0.95, 0.6, 0.85, 0.5, 0.75, 0.4, 0.88];
        let m = moore_rayleigh_test(&means, &rs).unwrap();
        assert!(m.p < 0.01, "{m:?}");
        let mean = m.mean_deg.unwrap();
        assert!(!(20.0..=340.0).contains(&mean));
        assert!(moore_rayleigh_test(&means[..1], &rs[..1]).is_err());
        assert!(moore_rayleigh_test(&means, &[0.5; 9]).is_err());
        let mut bad = rs;
        bad[3] = 1.5;
        assert!(matches!(
            moore_rayleigh_test(&means, &bad),
            Err(CircularError::BadValue { index: 3, .. })
        ));
    }

    #[test]
    fn hotelling_equals_the_t_squared_form() {
        let means = [30.0, 50.0, 45.0, 70.0, 10.0, 60.0, 40.0];
        let rs = [0.8, 0.5, 0.9, 0.3, 0.6, 0.7, 0.4];
        let h = hotelling_one_sample_test(&means, &rs).unwrap();
        // T² = n m̄ᵀ S⁻¹ m̄ with S the covariance (divisor n − 1).
        let n = means.len() as f64;
        let x: Vec<f64> = means
            .iter()
            .zip(&rs)
            .map(|(m, r)| r * m.to_radians().cos())
            .collect();
        let y: Vec<f64> = means
            .iter()
            .zip(&rs)
            .map(|(m, r)| r * m.to_radians().sin())
            .collect();
        let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
        let cov = |a: &[f64], ma: f64, b: &[f64], mb: f64| {
            a.iter()
                .zip(b)
                .map(|(p, q)| (p - ma) * (q - mb))
                .sum::<f64>()
                / (n - 1.0)
        };
        let (sxx, syy, sxy) = (
            cov(&x, mx, &x, mx),
            cov(&y, my, &y, my),
            cov(&x, mx, &y, my),
        );
        let det = sxx * syy - sxy * sxy;
        let t2 = n * (mx * mx * syy - 2.0 * mx * my * sxy + my * my * sxx) / det;
        let f = (n - 2.0) / (2.0 * (n - 1.0)) * t2;
        assert!((h.f - f).abs() < 1e-10 * f, "{} {f}", h.f);
        assert!(h.p < 0.01);
        assert!(hotelling_one_sample_test(&means[..2], &rs[..2]).is_err());
        // Collinear vectors: degenerate.
        assert!(hotelling_one_sample_test(&[10.0, 10.0, 190.0], &[0.5, 0.7, 0.2]).is_err());
    }

    #[test]
    fn second_order_mean_weights_by_length() {
        let (m, r) = second_order_mean(&[0.0, 90.0], &[1.0, 0.0]).unwrap();
        assert!(m.unwrap().abs() < 1e-9);
        assert!((r - 0.5).abs() < 1e-15);
    }

    #[test]
    fn f_tail_values() {
        // F(2, 10): P(F > 4.103) = 0.05 (Zar 2010 Table B.4, from memory: F₀.₀₅(2),2,10 = 4.10).
        let p = f_sf(4.102_821, 2.0, 10.0);
        assert!((p - 0.05).abs() < 1e-5, "{p}");
    }
}
