//! Circular–linear regression of a heading on time, and the rate of change of an unwrapped
//! angle (the sun's azimuth) over a session. Angles in degrees, compass convention; time in
//! hours.

use super::mean_direction_from_resultant_deg;
use super::trig::sin_cos_deg;

/// The fitted line θ(t) = intercept + slope·t on the circle.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct HeadingTrend {
    /// Slope in degrees per hour (clockwise positive).
    pub slope_deg_per_h: f64,
    /// Fitted heading at t = 0, in [0, 360).
    pub intercept_deg: f64,
    /// Mean resultant length of the residuals θ_j − slope·t_j (weighted): how well the line
    /// fits, 1 for a perfect fit.
    pub r: f64,
}

/// Largest |slope| searched, in degrees per hour (the sun's azimuth rate stays below this
/// except within a few degrees of the zenith).
pub const MAX_SLOPE_DEG_PER_H: f64 = 120.0;

/// Weighted resultant length of θ_j − ω t_j, and its direction.
fn resultant(t_h: &[f64], heading_deg: &[f64], w: &[f64], slope: f64) -> (f64, f64, f64) {
    let (mut c, mut s, mut tot) = (0.0, 0.0, 0.0);
    for ((&t, &h), &wi) in t_h.iter().zip(heading_deg).zip(w) {
        let (sn, cs) = sin_cos_deg(h - slope * t);
        c += wi * cs;
        s += wi * sn;
        tot += wi;
    }
    (c.hypot(s) / tot.max(f64::MIN_POSITIVE), c, s)
}

/// Circular–linear regression with the identity link, θ_j = μ + ω t_j + ε_j with von Mises
/// errors (the "barber-pole" or helical model that Fisher & Lee 1992, Biometrics 48:665,
/// discuss beside their tan link; Fisher 1993 §6.4): the maximum-likelihood ω maximises the
/// resultant length of θ_j − ω t_j, and μ is that resultant's direction (recalled from
/// memory). The likelihood is multimodal in ω, so ω is found by a grid over
/// ±[`MAX_SLOPE_DEG_PER_H`] fine enough that no step turns the residuals by more than 2° over
/// the data's time span, then refined by golden-section search within one step of the best
/// grid point. `weights` (for example the resultant lengths of binned headings) are
/// non-negative. None also when the best slope lies at the edge of the search range. Use: an
/// animal whose heading follows the sun has a slope near the sun's
/// azimuth rate ([`unwrapped_rate_deg_per_h`]); one that holds a world-fixed heading, near 0.
/// None with fewer than 3 points, no time span, or all weights 0.
pub fn heading_trend(t_h: &[f64], heading_deg: &[f64], weights: &[f64]) -> Option<HeadingTrend> {
    let n = t_h.len();
    if n < 3 || heading_deg.len() != n || weights.len() != n {
        return None;
    }
    if t_h
        .iter()
        .chain(heading_deg)
        .chain(weights)
        .any(|x| !x.is_finite())
        || weights.iter().any(|&w| w < 0.0)
        || weights.iter().sum::<f64>() <= 0.0
    {
        return None;
    }
    let (lo, hi) = t_h
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &t| {
            (a.min(t), b.max(t))
        });
    let span = hi - lo;
    if span <= 0.0 {
        return None;
    }
    // Centre time so that the slope and intercept are not entangled by a large offset.
    let tc: Vec<f64> = t_h.iter().map(|t| t - lo).collect();
    let step = (2.0 / span).min(1.0);
    let steps = (2.0 * MAX_SLOPE_DEG_PER_H / step).ceil() as usize;
    let f = |w: f64| resultant(&tc, heading_deg, weights, w).0;
    let (mut best_w, mut best_r) = (0.0, f(0.0));
    for k in 0..=steps {
        let w = -MAX_SLOPE_DEG_PER_H + k as f64 * step;
        let r = f(w);
        if r > best_r {
            best_r = r;
            best_w = w;
        }
    }
    // Golden-section refinement on [best − step, best + step].
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let (mut a, mut b) = (best_w - step, best_w + step);
    let (mut x1, mut x2) = (b - g * (b - a), a + g * (b - a));
    let (mut f1, mut f2) = (f(x1), f(x2));
    for _ in 0..60 {
        if f1 >= f2 {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - g * (b - a);
            f1 = f(x1);
        } else {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + g * (b - a);
            f2 = f(x2);
        }
    }
    let w = if f1.max(f2) >= best_r {
        (a + b) / 2.0
    } else {
        best_w
    };
    if w.abs() >= MAX_SLOPE_DEG_PER_H - step {
        // The best slope lies at the edge of the search: not identified within range.
        return None;
    }
    let (r, c, s) = resultant(&tc, heading_deg, weights, w);
    let mu_at_lo = mean_direction_from_resultant_deg(c, s, 1.0)?;
    Some(HeadingTrend {
        slope_deg_per_h: w,
        intercept_deg: crate::frames::wrap_360_deg(mu_at_lo - w * lo),
        r,
    })
}

/// Mean rate of change of an angle sampled over time, in degrees per hour: the angle is
/// unwrapped by taking each step as the shorter way round (steps must stay below 180°), and the
/// rate is (last − first unwrapped)/(t_last − t_first). None with fewer than 2 samples or no
/// time span. `t_s` in seconds.
pub fn unwrapped_rate_deg_per_h(t_s: &[f64], angle_deg: &[f64]) -> Option<f64> {
    if t_s.len() < 2 || t_s.len() != angle_deg.len() {
        return None;
    }
    let total: f64 = angle_deg
        .windows(2)
        .map(|w| crate::frames::signed_difference_deg(w[0], w[1]))
        .sum();
    let dt = t_s[t_s.len() - 1] - t_s[0];
    (dt > 0.0 && total.is_finite()).then(|| total / dt * 3600.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circular::randomization::Rng;

    #[test]
    fn recovers_a_known_slope_through_north_and_many_turns() {
        // Heading turning at 15°/h (the sun's mean azimuth rate) over 6 h, with noise.
        let mut rng = Rng::new(3);
        let t: Vec<f64> = (0..200).map(|i| 7.0 + i as f64 * 0.03).collect();
        let h: Vec<f64> = t
            .iter()
            .map(|&x| 350.0 + 15.0 * (x - 7.0) + rng.von_mises_deg(20.0))
            .collect();
        let fit = heading_trend(&t, &h, &vec![1.0; t.len()]).unwrap();
        assert!((fit.slope_deg_per_h - 15.0).abs() < 0.5, "{fit:?}");
        let at7 = crate::frames::wrap_360_deg(fit.intercept_deg + fit.slope_deg_per_h * 7.0);
        assert!(
            crate::frames::signed_difference_deg(350.0, at7).abs() < 3.0,
            "{fit:?}"
        );
        assert!(fit.r > 0.9);
        // A fast turn over a short time (60°/h for 2 h crosses north twice).
        let t2: Vec<f64> = (0..100).map(|i| i as f64 * 0.02).collect();
        let h2: Vec<f64> = t2.iter().map(|&x| 300.0 - 60.0 * x).collect();
        let fit2 = heading_trend(&t2, &h2, &vec![1.0; 100]).unwrap();
        assert!((fit2.slope_deg_per_h + 60.0).abs() < 1e-3, "{fit2:?}");
    }

    #[test]
    fn a_world_fixed_heading_has_no_slope() {
        let mut rng = Rng::new(5);
        let t: Vec<f64> = (0..300).map(|i| i as f64 * 0.01).collect();
        let h: Vec<f64> = t.iter().map(|_| 120.0 + rng.von_mises_deg(8.0)).collect();
        let fit = heading_trend(&t, &h, &vec![1.0; 300]).unwrap();
        // Standard error of the slope ≈ 20° / (0.87 h · √300) ≈ 1.4°/h (κ 8: about 20° of
        // scatter over a 3-h span); 5°/h is over 3 standard errors.
        assert!(fit.slope_deg_per_h.abs() < 5.0, "{fit:?}");
        assert!(heading_trend(&t[..2], &h[..2], &[1.0, 1.0]).is_none());
        assert!(heading_trend(&[1.0; 5], &[1.0; 5], &[1.0; 5]).is_none());
    }

    #[test]
    fn a_slope_beyond_the_search_range_is_not_reported() {
        let t: Vec<f64> = (0..100).map(|i| i as f64 * 0.001).collect();
        let h: Vec<f64> = t.iter().map(|&x| 10.0 + 400.0 * x).collect();
        assert!(heading_trend(&t, &h, &vec![1.0; 100]).is_none());
    }

    #[test]
    fn unwrapped_rate_crosses_north() {
        let t = [0.0, 1800.0, 3600.0];
        assert_eq!(
            unwrapped_rate_deg_per_h(&t, &[350.0, 358.0, 6.0]),
            Some(16.0)
        );
        assert_eq!(unwrapped_rate_deg_per_h(&t[..1], &[1.0]), None);
    }
}
