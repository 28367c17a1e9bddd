//! Circular statistics of headings and axes.
//!
//! Angle convention: every angle is in degrees. Directions are compass style, kept in
//! [0, 360) (see [`crate::frames::wrap_360_deg`]); axial quantities (an e-vector, a polarizer
//! axis, a bimodal heading distribution) live in [0, 180) ([`crate::frames::wrap_axial_deg`]).
//! Inputs may be any finite angle; they are reduced modulo 360 by the trigonometry.
//!
//! Sources: Batschelet 1981, *Circular Statistics in Biology*; Fisher 1993, *Statistical
//! Analysis of Circular Data*; Zar 2010, *Biostatistical Analysis* (5th ed.), chapters 26–27;
//! Mardia & Jupp 2000, *Directional Statistics*. Each function names the method it follows.
//!
//! Every sum of sines and cosines is a compensated (Neumaier) sum, so results do not drift for
//! very long series (10^8 samples and more).

mod accumulator;
#[cfg(test)]
mod calibration;
mod oriented;
mod oriented_table;
mod paired;
pub mod randomization;
mod regression;
mod second_order;
mod small_n;
mod sum;
mod trig;
mod turn_test;
mod uniformity;

pub use accumulator::{HeadingAccumulator, effective_sample_size_deg};
pub use oriented::{
    BIN_S, LAG_MAX_S, LAG_MIN_S, LAMBDA_TABLE_MAX, MIN_SCORED_S, OrientationTest,
    OrientationTracker, P_FLOOR, bin_index, orientation_test_series, walk_mean_r2, walk_null_p,
};
pub use paired::{
    PairedResult, hotelling_paired_test, hotelling_paired_test_with, moore_paired_test,
    moore_paired_test_with,
};
pub use regression::{HeadingTrend, MAX_SLOPE_DEG_PER_H, heading_trend, unwrapped_rate_deg_per_h};
pub use second_order::{
    HotellingResult, MooreResult, WW_MIN_POOLED_R, WatsonWilliamsResult, hotelling_one_sample_test,
    hotelling_one_sample_test_with, moore_rayleigh_test, moore_rayleigh_test_with,
    second_order_mean, watson_williams_test, watson_williams_test_with,
};
pub use small_n::{RAYLEIGH_EXACT_MAX_N, rayleigh_p_few};
pub(crate) use trig::sin_cos_deg;
pub use turn_test::{
    EXACT_MAX_N, MIN_TURNS, TurnTestResult, turn_compensation_test, v_test_p_small_n,
};
pub use uniformity::{
    BOOTSTRAP_RESAMPLES, UniformityResult, bootstrap_mean_ci95_deg, bootstrap_mean_ci95_deg_with,
    hermans_rasson_test, hermans_rasson_test_with, rao_spacing_test, rao_spacing_test_with,
};

use crate::frames::{wrap_360_deg, wrap_axial_deg};
use serde::Serialize;
use statrs::distribution::{ContinuousCDF, Normal};
use sum::Neumaier;

/// Errors of the tests that need a minimum amount of data.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CircularError {
    /// Too few angles, groups or animals for the test.
    #[error("{test} needs {need}, got {got}")]
    TooFew {
        /// Name of the test.
        test: &'static str,
        /// What is needed, in words.
        need: &'static str,
        /// What was given.
        got: usize,
    },
    /// An input value that is not a finite number, or a vector length outside [0, 1].
    #[error("{test}: {what} at position {index} is {value}, which is not allowed")]
    BadValue {
        /// Name of the test.
        test: &'static str,
        /// Which input.
        what: &'static str,
        /// Zero-based position in the input.
        index: usize,
        /// The offending value.
        value: f64,
    },
    /// The data are degenerate for this test (for example all vectors identical).
    #[error("{test}: {why}")]
    Degenerate {
        /// Name of the test.
        test: &'static str,
        /// Why.
        why: &'static str,
    },
}

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

/// Below this mean vector length (relative to n) the mean direction is reported as undefined:
/// the resultant is then at the level of rounding noise of the sums.
const R_ZERO_TOL: f64 = 1e-12;

/// Sum of cosines and sines (the resultant vector, compass convention: C = Σcos θ is the
/// north component, S = Σsin θ the east component) of angles in degrees multiplied by
/// `multiple` (1 for directions, 2 for axes doubled). Compensated summation.
fn resultant(angles_deg: &[f64], multiple: f64) -> (f64, f64) {
    let mut c = Neumaier::default();
    let mut s = Neumaier::default();
    for &a in angles_deg {
        let (sn, cs) = trig::sin_cos_deg(multiple * a);
        c.add(cs);
        s.add(sn);
    }
    (c.value(), s.value())
}

/// Mean direction in [0, 360) of a resultant (C, S), or None when its length is 0 (relative to
/// `n`). Batschelet 1981 §1.3 / Zar 2010 eq. 26.6–26.9 (the quadrant rules are atan2).
pub fn mean_direction_from_resultant_deg(c: f64, s: f64, n: f64) -> Option<f64> {
    let len = c.hypot(s);
    if n.is_nan() || n <= 0.0 || len.is_nan() || len <= R_ZERO_TOL * n {
        return None;
    }
    Some(wrap_360_deg(s.atan2(c).to_degrees()))
}

/// Circular standard deviation s = sqrt(−2 ln r), in degrees (Mardia & Jupp 2000 eq. 2.3.11;
/// Zar 2010 eq. 26.21; Batschelet 1981 §1.3). Infinite for r = 0. For axial data pass the r of
/// the doubled angles and halve the result (Zar 2010 §26.10).
pub fn circular_sd_deg(r: f64) -> f64 {
    let r = r.clamp(0.0, 1.0);
    (-2.0 * r.ln()).max(0.0).sqrt().to_degrees()
}

/// Angular deviation s = sqrt(2(1 − r)), in degrees (Batschelet 1981 eq. 2.3.2; Zar 2010
/// eq. 26.20). Ranges over [0, 81.03°]. For axial data pass the r of the doubled angles and
/// halve the result.
pub fn angular_deviation_deg(r: f64) -> f64 {
    let r = r.clamp(0.0, 1.0);
    (2.0 * (1.0 - r)).sqrt().to_degrees()
}

/// Circular variance V = 1 − r (Mardia & Jupp 2000 §2.3.1; Batschelet 1981 §1.3), the
/// definition used by `astropy.stats.circvar` and `scipy.stats.circvar` (scipy ≥ 1.9).
/// Dimensionless, in [0, 1]. (Zar's "angular variance" 2(1 − r) is `angular_deviation_deg`
/// squared, in radians².)
pub fn circular_variance(r: f64) -> f64 {
    1.0 - r.clamp(0.0, 1.0)
}

/// Rayleigh test for n (possibly an effective, non-integer n) and mean vector length r:
/// returns (z, p).
///
/// z = n r² (Rayleigh's z, Zar 2010 eq. 27.2). p by the Greenwood–Durand approximation as given
/// by Zar 2010 eq. 27.4, p = exp(sqrt(1 + 4n + 4(n² − R²)) − (1 + 2n)) with R = n r, written
/// here in the algebraically equal form −4R² / (sqrt((1+2n)² − 4R²) + 1 + 2n) in the exponent
/// so that it does not lose digits for large n. The formula is valid for any real n > 0, which
/// is what makes it usable with an effective sample size. p is clamped to [0, 1]; n ≤ 0 gives
/// (0, 1). (`astropy.stats.rayleightest` uses a different approximation, Wilkie 1983; see the
/// reference tests.)
pub fn rayleigh_test(n: f64, r: f64) -> (f64, f64) {
    if n.is_nan() || n <= 0.0 || !r.is_finite() {
        return (0.0, 1.0);
    }
    let r = r.clamp(0.0, 1.0);
    let z = n * r * r;
    let big_r = n * r;
    let a = 1.0 + 2.0 * n;
    let disc = (a * a - 4.0 * big_r * big_r).max(0.0);
    let exponent = -4.0 * big_r * big_r / (disc.sqrt() + a);
    (z, exponent.exp().clamp(0.0, 1.0))
}

/// Summary of directions in degrees.
///
/// Mean direction and mean vector length r (Batschelet 1981 §1.3; Zar 2010 §26.4), Rayleigh
/// test ([`rayleigh_test`]), circular standard deviation ([`circular_sd_deg`]) and angular
/// deviation ([`angular_deviation_deg`]). Input: any finite angles in degrees, compass
/// convention; the mean is in [0, 360). An empty input gives n = 0, r = 0, p = 1 and infinite
/// circular standard deviation.
pub fn describe_deg(angles_deg: &[f64]) -> CircularSummary {
    summary_from_resultant(angles_deg, 1.0)
}

/// Summary of axial data (undirected lines: e-vector orientations, bimodal headings), in
/// degrees, by angle doubling (Batschelet 1981 §1.5; Zar 2010 §26.10; Fisher 1993 §2.4).
///
/// The angles are doubled, summarized as directions, and the mean is halved into [0, 180);
/// r, z and p are those of the doubled angles; the circular standard deviation and the angular
/// deviation are halved (Zar 2010 §26.10). Any angle may be replaced by itself + 180° without
/// changing the result.
pub fn describe_axial_deg(angles_deg: &[f64]) -> CircularSummary {
    let s = summary_from_resultant(angles_deg, 2.0);
    CircularSummary {
        mean_deg: s.mean_deg.map(|m| wrap_axial_deg(m / 2.0)),
        circular_sd_deg: s.circular_sd_deg / 2.0,
        angular_deviation_deg: s.angular_deviation_deg / 2.0,
        ..s
    }
}

fn summary_from_resultant(angles_deg: &[f64], multiple: f64) -> CircularSummary {
    let n = angles_deg.len();
    let (c, s) = resultant(angles_deg, multiple);
    summary_from_sums(n, c, s)
}

/// The summary from n and the resultant (C, S) of the (possibly doubled) angles.
pub(crate) fn summary_from_sums(n: usize, c: f64, s: f64) -> CircularSummary {
    let nf = n as f64;
    // A resultant at the level of rounding noise is taken as exactly 0 (no mean direction).
    let r = if n == 0 || c.hypot(s) <= R_ZERO_TOL * nf {
        0.0
    } else {
        (c.hypot(s) / nf).clamp(0.0, 1.0)
    };
    let (z, p) = rayleigh_test(nf, r);
    CircularSummary {
        n,
        mean_deg: mean_direction_from_resultant_deg(c, s, nf),
        r,
        rayleigh_z: z,
        rayleigh_p: p,
        circular_sd_deg: circular_sd_deg(r),
        angular_deviation_deg: angular_deviation_deg(r),
    }
}

/// Result of the V-test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct VTestResult {
    /// V = R cos(mean − expected), with R = n r (Zar 2010 eq. 27.5).
    pub v: f64,
    /// u = V sqrt(2/n) (Zar 2010 eq. 27.6).
    pub u: f64,
    /// One-sided p = 1 − Φ(u), from the normal approximation.
    pub p: f64,
}

/// V-test (modified Rayleigh test) for uniformity against a unimodal alternative with a
/// specified mean direction (Durand & Greenwood 1958; Zar 2010 §27.1, eq. 27.5–27.6).
///
/// V = R cos(θ̄ − expected), u = V·sqrt(2/n), p = 1 − Φ(u) by the normal approximation, not
/// Zar's table of critical u (Zar 2010 Table B.35), whose values approach the normal quantiles
/// as n grows; for small n (below about 10) the approximation is rough. This is the p of
/// `pycircstat2.hypothesis.V_test`; `astropy.stats.vtest` adds an Edgeworth correction and gives
/// slightly different p for small n. n may be an effective, non-integer sample size. Angles in
/// degrees, compass convention. With r = 0 (no mean direction) V = 0 and p = 0.5.
pub fn v_test(n: f64, r: f64, mean_deg: Option<f64>, expected_deg: f64) -> VTestResult {
    if n.is_nan() || n <= 0.0 {
        return VTestResult {
            v: 0.0,
            u: 0.0,
            p: 1.0,
        };
    }
    let big_r = n * r.clamp(0.0, 1.0);
    let v = match mean_deg {
        Some(m) => big_r * (m - expected_deg).to_radians().cos(),
        None => 0.0,
    };
    let u = v * (2.0 / n).sqrt();
    VTestResult {
        v,
        u,
        p: standard_normal_sf(u),
    }
}

/// V-test of angles in degrees toward `expected_deg` (see [`v_test`]).
pub fn v_test_deg(angles_deg: &[f64], expected_deg: f64) -> VTestResult {
    let s = describe_deg(angles_deg);
    v_test(s.n as f64, s.r, s.mean_deg, expected_deg)
}

/// V-test of axial data in degrees toward the axis `expected_deg`, on doubled angles (Zar 2010
/// §27.1 and §26.10): V = R₂ cos(2(θ̄ − expected)).
pub fn v_test_axial_deg(angles_deg: &[f64], expected_deg: f64) -> VTestResult {
    let s = describe_axial_deg(angles_deg);
    v_test(
        s.n as f64,
        s.r,
        s.mean_deg.map(|m| 2.0 * m),
        2.0 * expected_deg,
    )
}

/// Upper tail of the standard normal distribution, 1 − Φ(x) = erfc(x/√2)/2 (statrs).
pub(crate) fn standard_normal_sf(x: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(x / std::f64::consts::SQRT_2)
}

/// The 0.95 quantile of χ² with 1 degree of freedom, as the square of the 0.975 standard
/// normal quantile (statrs).
fn chi2_1_quantile_95() -> f64 {
    match Normal::new(0.0, 1.0) {
        Ok(nrm) => nrm.inverse_cdf(0.975).powi(2),
        // Cannot fail for (0, 1); the value is 3.841458820694124 (from memory).
        Err(_) => 3.841_458_820_694_124,
    }
}

/// 95% confidence interval of the population mean direction, (lower, upper) in degrees in
/// [0, 360), read clockwise from lower to upper (the interval may contain north).
///
/// Zar's method (Zar 2010 §26.7, eq. 26.24 for r ≤ 0.9 and eq. 26.25 for r > 0.9; after Upton
/// 1986), with χ²₀.₀₅,₁ = 3.8415. Valid for n ≥ 8 per Zar; returns None for n < 8, for r too
/// small for the interval to exist (r ≤ sqrt(χ²/(2n)), which is when the Rayleigh test is not
/// significant at about 0.05), or when there is no mean direction. `n` may be non-integer.
pub fn mean_ci95_deg(n: f64, r: f64, mean_deg: Option<f64>) -> Option<(f64, f64)> {
    let mean = mean_deg?;
    if n.is_nan() || n < 8.0 || r.is_nan() || r <= 0.0 || r > 1.0 {
        return None;
    }
    let chi2 = chi2_1_quantile_95();
    if r <= (chi2 / (2.0 * n)).sqrt() {
        return None;
    }
    let big_r = n * r;
    let cos_d = if r <= 0.9 {
        (2.0 * n * (2.0 * big_r * big_r - n * chi2) / (4.0 * n - chi2)).sqrt() / big_r
    } else {
        (n * n - (n * n - big_r * big_r) * (chi2 / n).exp()).sqrt() / big_r
    };
    if !cos_d.is_finite() {
        return None;
    }
    let d = cos_d.clamp(-1.0, 1.0).acos().to_degrees();
    Some((wrap_360_deg(mean - d), wrap_360_deg(mean + d)))
}

/// Estimate of the von Mises concentration κ from the mean vector length r and sample size n.
///
/// The approximation of A₁⁻¹(r) of Fisher 1993 eq. 4.40 (after Best & Fisher 1981):
/// κ = 2r + r³ + 5r⁵/6 for r < 0.53; −0.4 + 1.39r + 0.43/(1 − r) for 0.53 ≤ r < 0.85;
/// 1/(r³ − 4r² + 3r) for r ≥ 0.85. When `n` is given and n ≤ 15, Fisher's small-sample
/// correction (Fisher 1993 eq. 4.41, Best & Fisher 1981) is applied: max(κ − 2/(nκ), 0) if
/// κ < 2, else (n − 1)³κ/(n³ + n). (Unlike `pycircstat2.circ_kappa`, which applies it only when
/// also r < 0.7, we follow Fisher's rule as printed.) Infinite for r = 1.
pub fn kappa_estimate(r: f64, n: Option<f64>) -> f64 {
    let r = r.clamp(0.0, 1.0);
    let kappa = if r < 0.53 {
        2.0 * r + r.powi(3) + 5.0 * r.powi(5) / 6.0
    } else if r < 0.85 {
        -0.4 + 1.39 * r + 0.43 / (1.0 - r)
    } else {
        let d = r.powi(3) - 4.0 * r * r + 3.0 * r;
        if d > 0.0 { 1.0 / d } else { f64::INFINITY }
    };
    match n {
        Some(n) if n <= 15.0 && n > 0.0 && kappa.is_finite() => {
            if kappa < 2.0 {
                if kappa > 0.0 {
                    (kappa - 2.0 / (n * kappa)).max(0.0)
                } else {
                    0.0
                }
            } else {
                (n - 1.0).powi(3) * kappa / (n.powi(3) + n)
            }
        }
        _ => kappa,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn mean_of_angles_either_side_of_north_is_north() {
        let s = describe_deg(&[350.0, 10.0]);
        let m = s.mean_deg.unwrap();
        assert!(!(1e-9..=360.0 - 1e-9).contains(&m), "mean {m}");
        assert!(close(s.r, 10f64.to_radians().cos(), 1e-15));
        assert_eq!(s.n, 2);
    }

    #[test]
    fn mean_is_compass_style_in_0_360() {
        // Two headings toward west-ish: mean 265 (not -95).
        let s = describe_deg(&[260.0, 270.0]);
        assert!(close(s.mean_deg.unwrap(), 265.0, 1e-9));
    }

    #[test]
    fn opposite_angles_have_no_mean_direction() {
        let s = describe_deg(&[0.0, 180.0, 90.0, 270.0]);
        assert_eq!(s.r, 0.0);
        assert_eq!(s.mean_deg, None);
        assert!(close(s.rayleigh_p, 1.0, 1e-12));
        assert!(s.circular_sd_deg.is_infinite());
        // Angular deviation of r = 0: sqrt(2) rad = 81.03° (Batschelet 1981 maximum).
        assert!(close(
            s.angular_deviation_deg,
            2f64.sqrt().to_degrees(),
            1e-9
        ));
    }

    #[test]
    fn empty_input_is_a_defined_summary() {
        let s = describe_deg(&[]);
        assert_eq!(s.n, 0);
        assert_eq!(s.mean_deg, None);
        assert_eq!(s.r, 0.0);
        assert_eq!(s.rayleigh_p, 1.0);
    }

    #[test]
    fn identical_angles_have_r_one_and_zero_deviation() {
        let s = describe_deg(&[42.0; 10]);
        assert!(close(s.r, 1.0, 1e-15));
        assert!(close(s.mean_deg.unwrap(), 42.0, 1e-9));
        assert!(s.circular_sd_deg < 1e-5);
        assert!(s.angular_deviation_deg < 1e-5);
    }

    #[test]
    fn rayleigh_p_is_one_at_r_zero_and_decreases_with_r() {
        let (_, p0) = rayleigh_test(20.0, 0.0);
        assert!(close(p0, 1.0, 1e-15));
        let mut last = 1.0;
        for i in 1..=10 {
            let (_, p) = rayleigh_test(20.0, i as f64 / 10.0);
            assert!(p < last && p >= 0.0);
            last = p;
        }
    }

    #[test]
    fn rayleigh_p_equals_the_printed_greenwood_durand_form() {
        // Zar 2010 eq. 27.4 written as printed; our stable form must agree.
        for &(n, r) in &[
            (5.0, 0.3),
            (10.0, 0.7),
            (123.4, 0.05),
            (1e6, 0.001),
            (7.5, 1.0),
        ] {
            let big_r: f64 = n * r;
            let printed =
                ((1.0 + 4.0 * n + 4.0 * (n * n - big_r * big_r)).sqrt() - (1.0 + 2.0 * n)).exp();
            let (z, p) = rayleigh_test(n, r);
            assert!(close(z, n * r * r, 1e-12));
            assert!(
                close(p, printed, 1e-9 * printed.max(1e-300)),
                "{n} {r}: {p} vs {printed}"
            );
        }
    }

    #[test]
    fn rayleigh_p_tends_to_exp_minus_z_for_large_n() {
        // Mardia & Jupp 2000 §6.3.1: 2nR̄² ~ χ²₂, i.e. p ≈ exp(−z) for large n.
        let (z, p) = rayleigh_test(1e7, 0.0005);
        assert!(close(p, (-z).exp(), 1e-6));
    }

    #[test]
    fn rayleigh_zar_example_27_1() {
        // Zar 2010 Example 27.1 (from memory): n = 10, r = 0.82522, z = 6.8099, p < 0.001
        // (the approximation gives about 0.00046).
        let (z, p) = rayleigh_test(10.0, 0.82522);
        assert!(close(z, 6.8099, 1e-3));
        assert!(p < 0.001 && p > 0.0002, "{p}");
    }

    #[test]
    fn rayleigh_handles_bad_n() {
        assert_eq!(rayleigh_test(0.0, 0.5), (0.0, 1.0));
        assert_eq!(rayleigh_test(f64::NAN, 0.5), (0.0, 1.0));
    }

    #[test]
    fn axial_mean_of_a_bimodal_sample_is_the_axis() {
        // Headings clustered at 30 and 210: no directional mean, axial mean 30.
        let a = [25.0, 30.0, 35.0, 205.0, 210.0, 215.0];
        let d = describe_deg(&a);
        assert!(d.r < 1e-12);
        let ax = describe_axial_deg(&a);
        assert!(close(ax.mean_deg.unwrap(), 30.0, 1e-9));
        assert!(close(
            ax.r,
            (2.0 + 4.0 * 10f64.to_radians().cos()) / 6.0,
            1e-12
        ));
    }

    #[test]
    fn axial_mean_near_zero_wraps_into_0_180() {
        let ax = describe_axial_deg(&[170.0, 10.0, 350.0, 190.0]);
        let m = ax.mean_deg.unwrap();
        assert!((0.0..180.0).contains(&m));
        assert!(!(1e-9..=180.0 - 1e-9).contains(&m), "{m}");
    }

    #[test]
    fn v_test_toward_the_mean_is_rayleigh_like() {
        let a = [80.0, 90.0, 100.0, 85.0, 95.0];
        let s = describe_deg(&a);
        let v = v_test_deg(&a, 90.0);
        assert!(close(v.v, s.n as f64 * s.r, 1e-9));
        assert!(close(v.u, v.v * (2.0 / 5.0f64).sqrt(), 1e-12));
        assert!(v.p < 0.01);
        // Away from the mean: V negative, p > 0.5.
        let w = v_test_deg(&a, 270.0);
        assert!(w.v < 0.0 && w.p > 0.5);
    }

    #[test]
    fn standard_normal_tail_values() {
        // 1 − Φ(1.959963984540054) = 0.025 (from memory).
        let p = standard_normal_sf(1.959_963_984_540_054);
        // statrs erfc is good to about 1e-10 relative here.
        assert!(close(p, 0.025, 1e-10), "{p:e}");
        assert!(close(standard_normal_sf(0.0), 0.5, 1e-15));
    }

    #[test]
    fn chi2_quantile_is_right() {
        // χ²₀.₀₅,₁ = 3.841458820694124 (from memory; Zar 2010 Table B.1 gives 3.841).
        assert!(close(chi2_1_quantile_95(), 3.841_458_820_694_124, 1e-9));
    }

    #[test]
    fn ci_contains_the_mean_and_narrows_with_n() {
        let (lo, hi) = mean_ci95_deg(20.0, 0.8, Some(10.0)).unwrap();
        assert!(lo > 300.0 && hi > 10.0 && hi < 40.0, "{lo} {hi}");
        let half = |n: f64| {
            let (lo, hi) = mean_ci95_deg(n, 0.8, Some(100.0)).unwrap();
            (hi - lo) / 2.0
        };
        assert!(half(100.0) < half(20.0));
        assert!(close(
            half(20.0),
            100.0 - mean_ci95_deg(20.0, 0.8, Some(100.0)).unwrap().0,
            1e-9
        ));
        assert_eq!(mean_ci95_deg(5.0, 0.9, Some(1.0)), None);
        assert_eq!(mean_ci95_deg(20.0, 0.2, Some(1.0)), None);
        assert!(mean_ci95_deg(20.0, 0.95, Some(1.0)).is_some());
    }

    #[test]
    fn kappa_is_monotone_and_corrected_for_small_n() {
        let mut last = -1.0;
        for i in 0..100 {
            let k = kappa_estimate(i as f64 / 100.0, None);
            assert!(k > last, "{i}");
            last = k;
        }
        assert!(kappa_estimate(1.0, None).is_infinite());
        assert!(kappa_estimate(0.5, Some(10.0)) < kappa_estimate(0.5, None));
        assert!(kappa_estimate(0.9, Some(10.0)) < kappa_estimate(0.9, None));
        assert_eq!(kappa_estimate(0.9, Some(16.0)), kappa_estimate(0.9, None));
    }

    #[test]
    fn deviations_of_known_r() {
        // r = e^{-1/2}: circular sd = 1 rad.
        assert!(close(
            circular_sd_deg((-0.5f64).exp()),
            1f64.to_degrees(),
            1e-9
        ));
        // r = 0.5: angular deviation = 1 rad.
        assert!(close(angular_deviation_deg(0.5), 1f64.to_degrees(), 1e-12));
        assert!(close(circular_variance(0.25), 0.75, 1e-15));
    }
}
