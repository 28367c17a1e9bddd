//! The Rayleigh test with few directions: its exact null, simulated.
//!
//! **Null.** n independent directions, uniform on the circle (Zar 2010 §27.1). The statistic is
//! the resultant length R = n·r of the n unit vectors (Rayleigh 1880; its exact distribution is
//! Kluyver's 1906 random-flight integral, with no closed form past n = 2).
//!
//! **Why.** Zar's (2010, eq. 27.4) approximation, used for large n ([`super::rayleigh_test`]),
//! cannot reject with two directions (its smallest p is e^−2 ≈ 0.135, at R = 2) and is
//! conservative with three (3.5 % at α = 0.05, 0 % at α = 0.01; `circular::calibration`). With
//! n ≤ [`RAYLEIGH_EXACT_MAX_N`] the p is therefore the Monte Carlo p of the exact null: the
//! fraction of 40 000 seeded draws of n uniform directions whose R is at least the observed,
//! counted as (1 + #≥)/(1 + draws) (Davison & Hinkley 1997 §4.2), so the smallest p is 2.5e-5.
//! For n = 2 the exact p is 2·arccos(R/2)/π (the two directions lie within an angle δ of each
//! other, δ uniform on [0, π], and R = 2 cos(δ/2)); the unit tests check the table against it.
//!
//! Used where the observations are few: an animal's session means (`animals.csv`) and the
//! animals' mean directions of a population (`population.csv`).

use super::randomization::Rng;
use super::rayleigh_test;
use std::sync::OnceLock;

/// Up to this many directions the p comes from the simulated exact null.
pub const RAYLEIGH_EXACT_MAX_N: usize = 12;
const DRAWS: usize = 40_000;

/// Sorted R of n uniform directions for one n in 2..=RAYLEIGH_EXACT_MAX_N (seeded; each n made
/// once per process, when first needed: 40 000 × n sines and cosines).
///
/// The draws are those of one generator that runs through n = 2, 3, ... in turn (DRAWS·n
/// directions each); the table of n starts where the smaller n's end, which the generator
/// reaches in one step ([`Rng::skip`]), so a batch pays only for the n it meets (the tables are
/// the same to the bit either way; a test below checks it against the stream drawn in order).
fn null_r(n: usize) -> &'static [f64] {
    static TABLES: [OnceLock<Vec<f64>>; RAYLEIGH_EXACT_MAX_N + 1] =
        [const { OnceLock::new() }; RAYLEIGH_EXACT_MAX_N + 1];
    match TABLES.get(n) {
        Some(cell) if n >= 2 => cell.get_or_init(|| {
            let mut rng = Rng::new(SEED);
            rng.skip((2..n).map(|m| (DRAWS * m) as u64).sum());
            null_r_draws(&mut rng, n)
        }),
        _ => &[],
    }
}

const SEED: u64 = 0x5EED_0A11_7A61;

/// DRAWS resultant lengths of n uniform directions from `rng`, sorted.
fn null_r_draws(rng: &mut Rng, n: usize) -> Vec<f64> {
    let mut r: Vec<f64> = (0..DRAWS)
        .map(|_| {
            let (mut c, mut s) = (0.0, 0.0);
            for _ in 0..n {
                let (si, co) = rng.angle_deg().to_radians().sin_cos();
                c += co;
                s += si;
            }
            c.hypot(s)
        })
        .collect();
    r.sort_by(f64::total_cmp);
    r
}

/// p of the Rayleigh test of n directions with mean vector length r: the simulated exact null
/// for 2 ≤ n ≤ [`RAYLEIGH_EXACT_MAX_N`], Zar's approximation ([`rayleigh_test`]) above. None
/// for fewer than two directions.
pub fn rayleigh_p_few(n: usize, r: f64) -> Option<f64> {
    if n < 2 || !r.is_finite() {
        return None;
    }
    if n > RAYLEIGH_EXACT_MAX_N {
        return Some(rayleigh_test(n as f64, r).1);
    }
    let big_r = n as f64 * r.clamp(0.0, 1.0);
    let sorted = null_r(n);
    // Draws with R ≥ the observed (a hair of tolerance for rounding in the sums).
    let below = sorted.partition_point(|&x| x < big_r - 1e-9);
    Some((1 + sorted.len() - below) as f64 / (1 + sorted.len()) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The n = 2 table against the exact p = 2·arccos(R/2)/π (derived in the module notes).
    #[test]
    fn two_directions_match_the_exact_null() {
        for r in [0.0f64, 0.2, 0.5, 0.7, 0.9, 0.97, 0.995] {
            let exact = 2.0 * f64::acos(r) / std::f64::consts::PI;
            let p = rayleigh_p_few(2, r).unwrap();
            // Binomial standard error of a 40 000-draw p is at most 0.0025.
            assert!((p - exact).abs() < 0.01, "r {r}: {p} vs {exact}");
        }
    }

    #[test]
    fn few_directions_can_reject_and_many_use_the_approximation() {
        assert!(rayleigh_p_few(1, 1.0).is_none());
        // Two sessions 4° apart: p = 4/180.
        let r = (2.0f64.to_radians()).cos();
        assert!((rayleigh_p_few(2, r).unwrap() - 4.0 / 180.0).abs() < 0.005);
        assert!(rayleigh_p_few(3, 1.0).unwrap() < 1e-4);
        assert_eq!(rayleigh_p_few(20, 0.3), Some(rayleigh_test(20.0, 0.3).1));
        assert!(rayleigh_p_few(5, 0.0).unwrap() > 0.999);
    }

    #[test]
    fn each_null_table_is_the_stretch_of_the_one_stream_drawn_in_order() {
        // One generator through n = 2, 3, ... in turn: how the tables were made before each
        // n was computed on its own.
        let mut rng = Rng::new(SEED);
        for n in 2..=RAYLEIGH_EXACT_MAX_N {
            let in_order = null_r_draws(&mut rng, n);
            let table = null_r(n);
            assert_eq!(table.len(), DRAWS, "n = {n}");
            assert!(
                in_order
                    .iter()
                    .zip(table)
                    .all(|(a, b)| a.to_bits() == b.to_bits()),
                "n = {n}"
            );
        }
        assert!(null_r(1).is_empty() && null_r(RAYLEIGH_EXACT_MAX_N + 1).is_empty());
    }
}
