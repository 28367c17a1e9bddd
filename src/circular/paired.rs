//! Paired-sample tests for circular data: two directions per animal (one under each of two
//! conditions), testing whether the conditions change the direction (Zar 2010 §27.13).
//! Angles in degrees, compass convention.

use super::CircularError;
use super::randomization::{RESAMPLES, Rng, data_seed, sign_flip_p};
use super::second_order::{average_ranks, check_finite, f_sf};
use super::trig::sin_cos_deg;
use serde::Serialize;

/// Result of a paired-sample test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PairedResult {
    /// Number of animals (pairs).
    pub n: usize,
    /// The test statistic (F for the Hotelling-type test, R′ for Moore's test).
    pub statistic: f64,
    /// Sign-flip p (exact for n ≤ 12, seeded Monte Carlo above; see the functions).
    pub p: f64,
    /// The textbook approximation (the F tail, or Moore's large-n exp(−3R*²)), for comparison
    /// only.
    pub p_approx: f64,
}

/// The differences d_j = (cos a_j − cos b_j, sin a_j − sin b_j) of unit vectors.
fn differences(
    test: &'static str,
    a_deg: &[f64],
    b_deg: &[f64],
    min_n: usize,
) -> Result<(Vec<f64>, Vec<f64>), CircularError> {
    if a_deg.len() != b_deg.len() {
        return Err(CircularError::Degenerate {
            test,
            why: "the two conditions differ in number of animals",
        });
    }
    if a_deg.len() < min_n {
        return Err(CircularError::TooFew {
            test,
            need: "at least 3 animals",
            got: a_deg.len(),
        });
    }
    check_finite(test, "heading under the first condition", a_deg)?;
    check_finite(test, "heading under the second condition", b_deg)?;
    Ok(a_deg
        .iter()
        .zip(b_deg)
        .map(|(&a, &b)| {
            let (sa, ca) = sin_cos_deg(a);
            let (sb, cb) = sin_cos_deg(b);
            (ca - cb, sa - sb)
        })
        .unzip())
}

/// Hotelling's F of signed vectors s_i (x_i, y_i), or None when they lie on one line.
fn signed_hotelling_f(x: &[f64], y: &[f64], signs: &[f64]) -> Option<f64> {
    super::second_order::hotelling_f_signed(x, y, |i| signs[i])
}

/// Hotelling-type paired-sample test for circular data (Zar 2010 §27.13, after Batschelet
/// 1981 §7.3): the null is that the two conditions do not change the animals' directions.
///
/// Each animal j gives the difference of its unit vectors under the two conditions,
/// d_j = (cos a_j − cos b_j, sin a_j − sin b_j); Hotelling's one-sample F of the d_j
/// (as in [`super::hotelling_one_sample_test`]) tests that their mean is the zero vector.
/// `p_approx` is the F(2, n − 2) tail of the textbook test. The reported `p` is the sign-flip
/// p (Fisher's randomization for paired designs; Good 2005, *Permutation, Parametric and
/// Bootstrap Tests of Hypotheses*, §3.6): under the null the two conditions are exchangeable
/// within each animal, so each d_j is as likely as −d_j; all 2ⁿ flips are enumerated for
/// n ≤ 12 (exact; the smallest p is 2/2ⁿ, 0.125 with 4 animals, 0.0625 with 5), a seeded
/// Monte Carlo of B = 9999 flips is used above. Needs n ≥ 3 and differences not on one line.
pub fn hotelling_paired_test(a_deg: &[f64], b_deg: &[f64]) -> Result<PairedResult, CircularError> {
    hotelling_paired_test_with(a_deg, b_deg, RESAMPLES, data_seed(&[a_deg, b_deg]))
}

/// [`hotelling_paired_test`] with a given number of Monte Carlo flips and seed.
pub fn hotelling_paired_test_with(
    a_deg: &[f64],
    b_deg: &[f64],
    resamples: usize,
    seed: u64,
) -> Result<PairedResult, CircularError> {
    const TEST: &str = "Hotelling's paired test";
    let (x, y) = differences(TEST, a_deg, b_deg, 3)?;
    let n = x.len();
    let ones = vec![1.0; n];
    let Some(f) = signed_hotelling_f(&x, &y, &ones) else {
        return Err(CircularError::Degenerate {
            test: TEST,
            why: "the changes of direction lie on one line",
        });
    };
    let mut rng = Rng::new(seed);
    let p = sign_flip_p(n, f, resamples, &mut rng, |signs| {
        signed_hotelling_f(&x, &y, signs).unwrap_or(f64::INFINITY)
    });
    Ok(PairedResult {
        n,
        statistic: f,
        p,
        p_approx: f_sf(f, 2.0, n as f64 - 2.0),
    })
}

/// Moore's nonparametric paired-sample test for circular data (Moore 1980, Biometrika 67:175;
/// Zar 2010 §27.13): the null is that the two conditions do not change the animals' directions.
///
/// The differences d_j = (cos a_j − cos b_j, sin a_j − sin b_j) are ranked by length
/// (1 = shortest, ties averaged), and R′ = |Σ rank_j d_j/|d_j|| / n, compared through
/// R′/√n with Moore's table in Zar's text. `statistic` is R′/√n (Moore's R*). An animal
/// whose direction did not change at all (d_j = 0) has no direction of change and gets weight
/// 0 after ranking (it still takes the lowest rank). `p_approx` is Moore's large-n tail
/// exp(−3R*²) (Moore 1980). The reported `p` is the sign-flip p as in
/// [`hotelling_paired_test`] (exact for n ≤ 12, seeded Monte Carlo above). Needs n ≥ 3.
pub fn moore_paired_test(a_deg: &[f64], b_deg: &[f64]) -> Result<PairedResult, CircularError> {
    moore_paired_test_with(a_deg, b_deg, RESAMPLES, data_seed(&[a_deg, b_deg]))
}

/// [`moore_paired_test`] with a given number of Monte Carlo flips and seed.
pub fn moore_paired_test_with(
    a_deg: &[f64],
    b_deg: &[f64],
    resamples: usize,
    seed: u64,
) -> Result<PairedResult, CircularError> {
    const TEST: &str = "Moore's paired test";
    let (x, y) = differences(TEST, a_deg, b_deg, 3)?;
    let n = x.len();
    let nf = n as f64;
    let lengths: Vec<f64> = x.iter().zip(&y).map(|(a, b)| a.hypot(*b)).collect();
    let ranks = average_ranks(&lengths);
    // Unit directions of change weighted by rank (weight 0 where there is no change).
    let (ux, uy): (Vec<f64>, Vec<f64>) = x
        .iter()
        .zip(&y)
        .zip(&lengths)
        .zip(&ranks)
        .map(|(((&a, &b), &l), &rk)| {
            if l > 1e-12 {
                (rk * a / l, rk * b / l)
            } else {
                (0.0, 0.0)
            }
        })
        .unzip();
    let stat = |signs: &[f64]| {
        let sx: f64 = ux.iter().zip(signs).map(|(a, s)| a * s).sum();
        let sy: f64 = uy.iter().zip(signs).map(|(a, s)| a * s).sum();
        sx.hypot(sy) / nf / nf.sqrt()
    };
    let r_star = stat(&vec![1.0; n]);
    let mut rng = Rng::new(seed);
    let p = sign_flip_p(n, r_star, resamples, &mut rng, stat);
    Ok(PairedResult {
        n,
        statistic: r_star,
        p,
        p_approx: (-3.0 * r_star * r_star).exp().min(1.0),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_shift_of_the_population_direction_is_detected_exactly() {
        let a2 = [20.0, 25.0, 15.0, 30.0, 22.0, 18.0, 27.0, 24.0];
        let b3: Vec<f64> = a2
            .iter()
            .enumerate()
            .map(|(i, x)| x + 90.0 + [3.0, -4.0, 6.0, -2.0, 5.0, -6.0, 1.0, -3.0][i])
            .collect();
        let h3 = hotelling_paired_test(&a2, &b3).unwrap();
        let m3 = moore_paired_test(&a2, &b3).unwrap();
        // 8 animals all moved from about 22° to about 112°: every flip but the identity and
        // its mirror is less extreme, so the exact p is 2/256.
        assert!((h3.p - 2.0 / 256.0).abs() < 1e-12, "{h3:?}");
        assert!((m3.p - 2.0 / 256.0).abs() < 1e-12, "{m3:?}");
        assert!(h3.p_approx < 0.001);
        // Swapping the conditions changes nothing (the statistics are even in d).
        let h4 = hotelling_paired_test(&b3, &a2).unwrap();
        assert!((h4.statistic - h3.statistic).abs() < 1e-9 * h3.statistic);
    }

    #[test]
    fn animals_spread_round_the_circle_all_turning_alike_move_no_population_mean() {
        // Zar's paired tests compare the population's mean vectors under the two conditions:
        // a common 60° turn of animals spread evenly round the circle leaves both means at 0
        // and the differences d_j spread evenly too, so there is nothing for them to detect
        // (the per-animal change is what paired.csv's mean_change_deg and V-test describe).
        let a: Vec<f64> = (0..12).map(|i| i as f64 * 30.0 + (i % 3) as f64).collect();
        let b: Vec<f64> = a.iter().map(|x| x + 60.0).collect();
        let m = moore_paired_test(&a, &b).unwrap();
        assert!(m.p > 0.5, "{m:?}");
    }

    #[test]
    fn bad_input_is_an_error() {
        assert!(hotelling_paired_test(&[1.0, 2.0], &[3.0, 4.0]).is_err());
        assert!(moore_paired_test(&[1.0, 2.0, 3.0], &[3.0, 4.0]).is_err());
        assert!(matches!(
            moore_paired_test(&[1.0, f64::NAN, 3.0], &[3.0, 4.0, 5.0]),
            Err(CircularError::BadValue { index: 1, .. })
        ));
    }
}
