//! Properties of the circular statistics that must hold for any data (proptest).

use proptest::prelude::*;
use skybearing::circular::{
    HeadingAccumulator, describe_axial_deg, describe_deg, rayleigh_test, v_test_deg,
};

fn angle_diff(a: f64, b: f64, period: f64) -> f64 {
    let d = (a - b).rem_euclid(period);
    d.min(period - d)
}

fn angles() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(-720.0f64..720.0, 1..200)
}

/// Angles clustered enough that the mean direction is well defined (r not near 0), so
/// comparing means is meaningful.
fn clustered() -> impl Strategy<Value = Vec<f64>> {
    (0.0f64..360.0, prop::collection::vec(-60.0f64..60.0, 2..200))
        .prop_map(|(c, d)| d.into_iter().map(|x| c + x).collect())
}

proptest! {
    #[test]
    fn r_is_in_0_1_and_p_in_0_1(a in angles()) {
        let s = describe_deg(&a);
        prop_assert!((0.0..=1.0).contains(&s.r));
        prop_assert!((0.0..=1.0).contains(&s.rayleigh_p));
        prop_assert!(s.angular_deviation_deg >= 0.0);
        if let Some(m) = s.mean_deg {
            prop_assert!((0.0..360.0).contains(&m));
        }
    }

    #[test]
    fn rotating_all_angles_rotates_the_mean_and_keeps_r(a in clustered(), c in -1000.0f64..1000.0) {
        let s = describe_deg(&a);
        let rotated: Vec<f64> = a.iter().map(|x| x + c).collect();
        let t = describe_deg(&rotated);
        prop_assert!((s.r - t.r).abs() < 1e-12);
        prop_assert!((s.rayleigh_p - t.rayleigh_p).abs() < 1e-10);
        let (ms, mt) = (s.mean_deg.unwrap(), t.mean_deg.unwrap());
        prop_assert!(angle_diff(mt, ms + c, 360.0) < 1e-8, "{} {} {}", ms, mt, c);
        // The V-test toward a rotated expectation is unchanged.
        let v1 = v_test_deg(&a, 17.0);
        let v2 = v_test_deg(&rotated, 17.0 + c);
        prop_assert!((v1.v - v2.v).abs() < 1e-9 * a.len() as f64);
    }

    #[test]
    fn axial_results_do_not_change_when_angles_flip_by_180(
        a in clustered(),
        flips in prop::collection::vec(any::<bool>(), 200),
    ) {
        let flipped: Vec<f64> = a
            .iter()
            .zip(&flips)
            .map(|(x, f)| if *f { x + 180.0 } else { *x })
            .collect();
        let s = describe_axial_deg(&a);
        let t = describe_axial_deg(&flipped);
        prop_assert!((s.r - t.r).abs() < 1e-12);
        prop_assert!((s.rayleigh_p - t.rayleigh_p).abs() < 1e-10);
        prop_assert!((s.circular_sd_deg - t.circular_sd_deg).abs() < 1e-6 || s.r < 1e-6);
        match (s.mean_deg, t.mean_deg) {
            (Some(m1), Some(m2)) => {
                prop_assert!((0.0..180.0).contains(&m1) && (0.0..180.0).contains(&m2));
                prop_assert!(angle_diff(m1, m2, 180.0) < 1e-8 || s.r < 1e-9);
            }
            (None, None) => {}
            (x, y) => prop_assert!(s.r < 1e-9, "{:?} {:?}", x, y),
        }
    }

    #[test]
    fn streaming_equals_batch_and_n_eff_is_in_1_n(a in angles(), gaps in prop::collection::vec(any::<bool>(), 200)) {
        let mut acc = HeadingAccumulator::new();
        for (x, g) in a.iter().zip(&gaps) {
            acc.push_deg(*x);
            if *g { acc.mark_gap(); }
        }
        let s = describe_deg(&a);
        prop_assert_eq!(acc.n() as usize, a.len());
        prop_assert!((acc.r() - s.r).abs() < 1e-12);
        let ne = acc.n_eff();
        prop_assert!(ne >= 1.0 && ne <= a.len() as f64, "{}", ne);
        prop_assert!(acc.rayleigh_p_eff() >= acc.rayleigh_p() - 1e-15);
    }

    #[test]
    fn rayleigh_p_is_monotone_in_n_for_fixed_r(r in 0.01f64..1.0, n in 1.0f64..1e6) {
        // A larger (effective) sample with the same r is stronger evidence.
        let (_, p1) = rayleigh_test(n, r);
        let (_, p2) = rayleigh_test(n * 1.5, r);
        prop_assert!(p2 <= p1 + 1e-15);
    }
}
