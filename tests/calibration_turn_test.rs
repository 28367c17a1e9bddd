//! Calibration of the session turn test's V-tests (`circular::v_test_p_small_n`, summary.json
//! `turn_test`) with few turns, by seeded simulation: under the null (independent uniform
//! shifts, n = 3..12, 20 000 sets per n) the fraction of p ≤ α must be within 1 point of α at
//! α = 0.05 and 0.5 point at α = 0.01. The same simulation measures the normal approximation
//! of the V-test (Zar 2010 eq. 27.6, `circular::v_test`): within 0.6 point of α = 0.05 for
//! n = 3..12 (measured: 5.6 % at n = 3), but conservative at α = 0.01 (0.3 % at n = 3, 0.7 % at
//! n = 5), which is why the simulated exact null is used up to 12 turns.

use skybearing::circular::{EXACT_MAX_N, MIN_TURNS, v_test_deg, v_test_p_small_n};

struct Rng(u64);
impl Rng {
    fn uniform(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
}

#[test]
fn small_n_v_test_is_calibrated_and_the_normal_approximation_is_not() {
    const SETS: usize = 20_000;
    let mut rng = Rng(0xC0FF_EE00_1234);
    let mut normal_01_at_3 = 1.0;
    for n in MIN_TURNS..=EXACT_MAX_N {
        let (mut e05, mut e01, mut a05, mut a01) = (0usize, 0usize, 0usize, 0usize);
        for _ in 0..SETS {
            let shifts: Vec<f64> = (0..n).map(|_| 360.0 * rng.uniform() - 180.0).collect();
            let p = v_test_p_small_n(&shifts).expect("n ≥ 3");
            e05 += usize::from(p <= 0.05);
            e01 += usize::from(p <= 0.01);
            let pn = v_test_deg(&shifts, 0.0).p;
            a05 += usize::from(pn <= 0.05);
            a01 += usize::from(pn <= 0.01);
        }
        let f = |k: usize| k as f64 / SETS as f64;
        println!(
            "n {n:2}: simulated exact p≤0.05 {:.4} p≤0.01 {:.4}; normal approximation p≤0.05 {:.4} p≤0.01 {:.4}",
            f(e05),
            f(e01),
            f(a05),
            f(a01)
        );
        assert!((f(e05) - 0.05).abs() < 0.01, "n {n}: {}", f(e05));
        assert!((f(e01) - 0.01).abs() < 0.005, "n {n}: {}", f(e01));
        if n == 3 {
            normal_01_at_3 = f(a01);
        }
    }
    assert!(
        normal_01_at_3 < 0.005,
        "normal approximation at n = 3: {normal_01_at_3}"
    );
    assert!(v_test_p_small_n(&[1.0, 2.0]).is_none());
}
