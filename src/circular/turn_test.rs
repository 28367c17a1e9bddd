//! The turn-compensation test of a session: did the animal keep its world heading across the
//! arena's turns (a sky compass), or its arena heading (it follows the arena)?
//!
//! For each turn with headings on both sides, the world shift d = (mean world heading after) −
//! (mean world heading before), and the arena-kept residual d − turn. Two V-tests (Durand &
//! Greenwood 1958; Batschelet 1981 §4.3; Zar 2010 §27.1): shifts toward 0 (`p_world_kept`) and
//! residuals toward 0 (`p_arena_kept`). The null of each is that the angles are independent and
//! uniform on the circle (the animal's heading after a turn bears no relation to the one before
//! in that frame). With few turns (n ≤ [`EXACT_MAX_N`]) the normal approximation of the V-test
//! is close at α = 0.05 (5.6 % at n = 3) but conservative in the tail (0.3 % at α = 0.01 for
//! n = 3; `tests/calibration_turn_test.rs` measures both), so p is then the Monte Carlo p of the
//! exact null: the fraction of 40 000 seeded draws of n
//! uniform angles whose V is at least the observed (Davison & Hinkley 1997 §4.2; a Monte Carlo
//! p counted as (1 + #≥)/(1 + draws)). No p with fewer than [`MIN_TURNS`] turns.
//!
//! Where it misleads: an animal that ignores the turn and wanders slowly also has world shifts
//! near 0 over windows close to the turn, so a small `p_world_kept` alone does not show a sky
//! compass (docs/inference.md).

use super::{describe_deg, v_test};
use std::sync::OnceLock;

/// Fewer turns than this give no p.
pub const MIN_TURNS: usize = 3;
/// Up to this many turns p comes from the simulated exact null.
pub const EXACT_MAX_N: usize = 12;
const DRAWS: usize = 40_000;

/// Result of [`turn_compensation_test`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TurnTestResult {
    /// Turns counted.
    pub turns: usize,
    /// Mean world shift, degrees in (−180, 180] (None when undefined).
    pub mean_world_shift_deg: Option<f64>,
    /// V-test p of the world shifts toward 0 (None with fewer than MIN_TURNS turns).
    pub p_world_kept: Option<f64>,
    /// V-test p of world shift − turn toward 0.
    pub p_arena_kept: Option<f64>,
}

/// SplitMix64's increment (Steele, Lea & Flood 2014): its state after k draws is the seed plus
/// k times this, so any point of its stream can be reached without drawing what comes before.
#[cfg(test)]
const GAMMA: u64 = 0x9E37_79B9_7F4A_7C15;
const SEED: u64 = 0x005E_ED0F_7E57;

/// Sorted V = Σ cos φ of n uniform angles for one n in MIN_TURNS..=EXACT_MAX_N (seeded; each
/// n computed once per process, when first needed: 40 000 × n cosines).
///
/// The draws are those of one SplitMix64 stream that runs through n = MIN_TURNS, MIN_TURNS + 1,
/// ... in turn (DRAWS·n uniforms each); the table of n starts where the smaller n's end, which
/// the counter-based state reaches in one step, so a batch whose sessions all made nine turns
/// pays for the 360 000 cosines of n = 9 and not for the 3 million of every n (the tables are
/// the same to the bit either way; a test below checks it against the stream drawn in order).
fn null_v(n: usize) -> &'static [f64] {
    static TABLES: [OnceLock<Vec<f64>>; EXACT_MAX_N + 1] =
        [const { OnceLock::new() }; EXACT_MAX_N + 1];
    match TABLES.get(n) {
        Some(cell) if n >= MIN_TURNS => cell.get_or_init(|| null_v_table(n)),
        _ => &[],
    }
}

/// The uniforms drawn for the tables of every n below this one.
fn draws_before(n: usize) -> u64 {
    (MIN_TURNS..n).map(|m| (DRAWS * m) as u64).sum()
}

fn null_v_table(n: usize) -> Vec<f64> {
    // The circular core's SplitMix64, moved on to where this n's draws start.
    let mut rng = super::randomization::Rng::new(SEED);
    rng.skip(draws_before(n));
    let mut v: Vec<f64> = (0..DRAWS)
        .map(|_| {
            (0..n)
                .map(|_| (std::f64::consts::TAU * rng.uniform()).cos())
                .sum()
        })
        .collect();
    v.sort_by(f64::total_cmp);
    v
}

/// One-sided p of the V-test of angles (degrees) toward 0: the simulated exact null for
/// n ≤ EXACT_MAX_N, else the normal approximation ([`super::v_test`]). None for n < MIN_TURNS.
pub fn v_test_p_small_n(angles_deg: &[f64]) -> Option<f64> {
    let n = angles_deg.len();
    if n < MIN_TURNS {
        return None;
    }
    let s = describe_deg(angles_deg);
    let v = v_test(n as f64, s.r, s.mean_deg, 0.0).v;
    if n > EXACT_MAX_N {
        return Some(v_test(n as f64, s.r, s.mean_deg, 0.0).p);
    }
    let sorted = null_v(n);
    // Draws with V ≥ v (a hair of tolerance for rounding in the sums).
    let below = sorted.partition_point(|&x| x < v - 1e-12);
    let at_least = sorted.len() - below;
    Some((1 + at_least) as f64 / (1 + sorted.len()) as f64)
}

/// The turn test from the per-turn world shifts and commanded turns (degrees, same order).
pub fn turn_compensation_test(world_shifts_deg: &[f64], turns_deg: &[f64]) -> TurnTestResult {
    let n = world_shifts_deg.len().min(turns_deg.len());
    let shifts = &world_shifts_deg[..n];
    let residuals: Vec<f64> = shifts.iter().zip(turns_deg).map(|(d, t)| d - t).collect();
    let mean = if n == 0 {
        None
    } else {
        describe_deg(shifts)
            .mean_deg
            .map(crate::frames::wrap_signed_deg)
    };
    TurnTestResult {
        turns: n,
        mean_world_shift_deg: mean,
        p_world_kept: v_test_p_small_n(shifts),
        p_arena_kept: v_test_p_small_n(&residuals),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn few_turns_give_no_p_and_kept_headings_are_found() {
        let r = turn_compensation_test(&[1.0, -2.0], &[90.0, -90.0]);
        assert_eq!(r.turns, 2);
        assert!(r.p_world_kept.is_none() && r.p_arena_kept.is_none());
        // World kept over six turns: shifts near 0, residuals near −turn.
        let turns = [90.0, -90.0, 180.0, 90.0, -90.0, 180.0];
        let world = [3.0, -5.0, 8.0, -2.0, 1.0, 4.0];
        let r = turn_compensation_test(&world, &turns);
        assert!(r.p_world_kept.unwrap() < 0.01);
        assert!(r.p_arena_kept.unwrap() > 0.2);
        assert!(r.mean_world_shift_deg.unwrap().abs() < 5.0);
        // Arena kept: shift = turn.
        let arena: Vec<f64> = turns.iter().map(|t| t + 2.0).collect();
        let r = turn_compensation_test(&arena, &turns);
        assert!(r.p_arena_kept.unwrap() < 0.01);
        assert!(r.p_world_kept.unwrap() > 0.2);
    }

    #[test]
    fn each_null_table_is_the_stretch_of_the_one_stream_drawn_in_order() {
        // The stream drawn from the seed in order, as one table after another (how the
        // tables were made before each n was computed on its own).
        let mut state = SEED;
        let mut uniform = move || {
            state = state.wrapping_add(GAMMA);
            let mut z = state;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
        };
        for n in MIN_TURNS..=EXACT_MAX_N {
            let mut v: Vec<f64> = (0..DRAWS)
                .map(|_| {
                    (0..n)
                        .map(|_| (std::f64::consts::TAU * uniform()).cos())
                        .sum()
                })
                .collect();
            v.sort_by(f64::total_cmp);
            let table = null_v(n);
            assert_eq!(table.len(), DRAWS, "n = {n}");
            assert!(
                v.iter().zip(table).all(|(a, b)| a.to_bits() == b.to_bits()),
                "n = {n}"
            );
        }
        assert!(null_v(MIN_TURNS - 1).is_empty() && null_v(EXACT_MAX_N + 1).is_empty());
    }
}
