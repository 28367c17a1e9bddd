//! Tests between groups (Watson–Williams) and second-order tests on one mean vector per animal
//! (Moore's modified Rayleigh test, Hotelling's one-sample test). Angles in degrees, compass
//! convention; mean directions in [0, 360).

use super::sum::Neumaier;
use super::trig::sin_cos_deg;
use super::{CircularError, kappa_estimate, mean_direction_from_resultant_deg};
use serde::Serialize;
use statrs::distribution::{ContinuousCDF, FisherSnedecor};

fn f_sf(f: f64, df1: f64, df2: f64) -> f64 {
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

fn check_finite(test: &'static str, what: &'static str, v: &[f64]) -> Result<(), CircularError> {
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
    /// p from the F distribution.
    pub p: f64,
    /// κ estimated from the pooled within-group mean vector length r_w = ΣR_i/N.
    pub kappa: f64,
    /// Correction factor K = 1 + 3/(8κ) (1 when κ is 0).
    pub correction: f64,
    /// Mean direction of each group in degrees.
    pub group_means_deg: Vec<Option<f64>>,
}

/// Watson–Williams test that two or more groups of directions share one mean direction
/// (Watson & Williams 1956; Zar 2010 §27.4, eq. 27.17–27.19 with the correction factor
/// K = 1 + 3/(8κ) of Stephens 1972; Mardia & Jupp 2000 §7.4).
///
/// F = K (N − k)(ΣR_i − R) / ((k − 1)(N − ΣR_i)) with R_i the resultant length of group i, R
/// that of all angles pooled, κ from [`kappa_estimate`] of r_w = ΣR_i/N (no small-sample
/// correction, as in Zar and `pycircstat2.watson_williams_test`); p from F(k − 1, N − k)
/// (statrs). Assumes von Mises groups with a common, not too small κ (Zar: r_w > 0.45).
/// Angles in degrees, compass convention.
pub fn watson_williams_test(groups: &[&[f64]]) -> Result<WatsonWilliamsResult, CircularError> {
    const TEST: &str = "Watson-Williams test";
    let k = groups.len();
    if k < 2 {
        return Err(CircularError::TooFew {
            test: TEST,
            need: "at least 2 groups",
            got: k,
        });
    }
    let mut all_c = Neumaier::default();
    let mut all_s = Neumaier::default();
    let mut sum_ri = 0.0;
    let mut big_n = 0usize;
    let mut group_means_deg = Vec::with_capacity(k);
    for g in groups {
        check_finite(TEST, "angle", g)?;
        if g.is_empty() {
            return Err(CircularError::TooFew {
                test: TEST,
                need: "at least 1 angle in every group",
                got: 0,
            });
        }
        let mut c = Neumaier::default();
        let mut s = Neumaier::default();
        for &a in g.iter() {
            let (sn, cs) = sin_cos_deg(a);
            c.add(cs);
            s.add(sn);
        }
        sum_ri += c.value().hypot(s.value());
        group_means_deg.push(mean_direction_from_resultant_deg(
            c.value(),
            s.value(),
            g.len() as f64,
        ));
        all_c.add_sum(&c);
        all_s.add_sum(&s);
        big_n += g.len();
    }
    if big_n <= k {
        return Err(CircularError::TooFew {
            test: TEST,
            need: "more angles than groups",
            got: big_n,
        });
    }
    let nf = big_n as f64;
    let kf = k as f64;
    let big_r = all_c.value().hypot(all_s.value());
    let within = nf - sum_ri;
    if within.is_nan() || within <= 1e-12 * nf {
        return Err(CircularError::Degenerate {
            test: TEST,
            why: "every group has zero spread",
        });
    }
    let rw = (sum_ri / nf).clamp(0.0, 1.0);
    let kappa = kappa_estimate(rw, None);
    let correction = if kappa > 0.0 && kappa.is_finite() {
        1.0 + 3.0 / (8.0 * kappa)
    } else {
        1.0
    };
    let f = correction * (nf - kf) * (sum_ri - big_r).max(0.0) / ((kf - 1.0) * within);
    let df = (kf - 1.0, nf - kf);
    Ok(WatsonWilliamsResult {
        groups: k,
        n: big_n,
        f,
        df,
        p: f_sf(f, df.0, df.1),
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
    /// Approximate p (see the function's notes).
    pub p: f64,
}

/// Moore's modified Rayleigh test of a second-order sample (one mean vector per animal)
/// against uniformity, weighting each animal's direction by the rank of its vector length
/// (Moore 1980, Biometrika 67:175; Zar 2010 §27.6, eq. 27.21–27.23).
///
/// With the lengths ranked 1..n from shortest to longest (ties get their average rank),
/// X = Σ rank_i cos θ_i / n, Y = Σ rank_i sin θ_i / n, R* = sqrt(X² + Y²)/sqrt(n).
/// p is not read from Moore's table but from a moment-corrected exponential tail: with
/// t = n³R*²/Σrank² (so that E t = 1 under uniformity) and δ = Σrank⁴/(Σrank²)², the exact
/// second moment of a sum of fixed-length vectors in uniform directions,
/// E|S|⁴ = 2(Σrank²)² − Σrank⁴, fixes the first Laguerre correction of the exponential
/// (χ²₂/2) tail: p ≈ exp(−t + δ(t/2 − t²/4)). For equal weights this is exactly the first-order
/// expansion of the Greenwood–Durand Rayleigh p used by [`super::rayleigh_test`] (and Wilkie
/// 1983's first term), and for n → ∞ it tends to Moore's asymptotic exp(−3R*²). Checked against
/// a Monte-Carlo null distribution (tests/fixtures/circular_reference.json): within about 5%
/// of α at α = 0.05 and 25% at α = 0.01 for n ≥ 10; conservative but rough (up to 2.5α) at
/// n ≤ 5. Needs n ≥ 2.
pub fn moore_rayleigh_test(
    means_deg: &[f64],
    lengths: &[f64],
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
    let p = (-t + delta * (t / 2.0 - t * t / 4.0)).exp().clamp(0.0, 1.0);
    Ok(MooreResult {
        n,
        r_star,
        mean_deg: mean_direction_from_resultant_deg(sc.value(), ss.value(), nf),
        p,
    })
}

/// Ranks 1..n (ascending), ties sharing their average rank.
fn average_ranks(v: &[f64]) -> Vec<f64> {
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
    /// p from the F distribution (statrs).
    pub p: f64,
    /// Second-order mean direction in [0, 360).
    pub mean_deg: Option<f64>,
    /// Second-order mean vector length.
    pub r: f64,
}

/// Hotelling's one-sample test that the population mean of one mean vector per animal is the
/// zero vector (no population direction) (Hotelling 1931; Batschelet 1981 §7.2 and §10.2;
/// Zar 2010 §27.5, eq. 27.20).
///
/// With x_i = r_i cos θ_i, y_i = r_i sin θ_i, centred sums of squares and products Σx², Σy²,
/// Σxy: F = n(n − 2)/2 · (x̄²Σy² − 2x̄ȳΣxy + ȳ²Σx²)/(Σx²Σy² − (Σxy)²), which equals
/// (n − 2)/(2(n − 1))·T² with T² = n·m̄ᵀS⁻¹m̄ Hotelling's statistic; p from F(2, n − 2).
/// Unlike the Rayleigh test on the means it uses the animals' vector lengths. Needs n ≥ 3 and
/// vectors that are not all on one line.
pub fn hotelling_one_sample_test(
    means_deg: &[f64],
    lengths: &[f64],
) -> Result<HotellingResult, CircularError> {
    const TEST: &str = "Hotelling's one-sample test";
    let (x, y) = vectors(TEST, means_deg, lengths, 3)?;
    let n = x.len();
    let nf = n as f64;
    let mx = x.iter().sum::<f64>() / nf;
    let my = y.iter().sum::<f64>() / nf;
    let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
    for (&a, &b) in x.iter().zip(&y) {
        let (dx, dy) = (a - mx, b - my);
        sxx += dx * dx;
        syy += dy * dy;
        sxy += dx * dy;
    }
    let det = sxx * syy - sxy * sxy;
    let scale = (sxx + syy).max(f64::MIN_POSITIVE);
    if det.is_nan() || det <= 1e-12 * scale * scale {
        return Err(CircularError::Degenerate {
            test: TEST,
            why: "the animals' vectors lie on one line (no spread in one direction)",
        });
    }
    let q = (mx * mx * syy - 2.0 * mx * my * sxy + my * my * sxx) / det;
    let f = nf * (nf - 2.0) / 2.0 * q;
    Ok(HotellingResult {
        n,
        f,
        p: f_sf(f, 2.0, nf - 2.0),
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
        let m = moore_rayleigh_test(&means, &rs).unwrap();
        let asym = (-3.0 * m.r_star * m.r_star).exp();
        assert!(
            (m.p - asym).abs() < 1e-3 * asym.max(1e-3) + 1e-3,
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
        assert!((m.p - first_order).abs() < 1e-12, "{} {first_order}", m.p);
        // and it is close to the full Greenwood–Durand p
        assert!((m.p - d.rayleigh_p).abs() < 0.02);
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
