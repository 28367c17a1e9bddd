//! The turn test across animals: did the population keep its world heading across the arena's
//! turns, or its arena heading?
//!
//! Per turn (`turns.csv`: whole-epoch means, so a slow drift over the few seconds around a
//! turn does not pass for compensation) the world shift d = mean world heading after − before
//! and the arena-kept residual d − turn. Per animal, each session weighing equally, the mean of
//! its sessions' mean unit vectors of d (and of d − turn): a direction per animal. Across
//! animals, V-tests of those directions toward 0 (Durand & Greenwood 1958; Zar 2010 §27.1):
//! `p_world_kept` (the animals kept their world heading: a sky compass) and `p_arena_kept`
//! (they kept their arena heading). The null of each is that the animals' directions are
//! independent and uniform (no animal's heading after a turn bears on the one before in that
//! frame); with up to 12 animals p is the simulated exact null of
//! [`crate::circular::v_test_p_small_n`], none below 3 animals. Calibrated on simulated animals
//! with few sessions and turns in `circular::calibration`.
//!
//! `turns_by_animal.csv` gives the same two V-tests per animal over all its turns (each turn
//! one observation, the session turn test's null pooled over sessions).

use super::population::{animal_key, p_cell};
use super::session::SessionStats;
use super::table::{Cell, Table};
use crate::circular::{describe_deg, v_test_deg, v_test_p_small_n};
use crate::frames::wrap_signed_deg;
use std::collections::BTreeMap;

/// Columns of `turns_by_animal.csv`.
pub const TURNS_BY_ANIMAL_COLUMNS: &[&str] = &[
    "animal",
    "sessions",
    "turns",
    "mean_world_shift_deg",
    "r_world_shift",
    "mean_arena_residual_deg",
    "r_arena_residual",
    "p_world_kept",
    "p_arena_kept",
];

/// Columns of `turns_population.csv`.
pub const TURNS_POPULATION_COLUMNS: &[&str] = &[
    "animals",
    "sessions",
    "turns",
    "mean_world_shift_deg",
    "r_world_shift",
    "v_world",
    "v_u_world",
    "p_world_kept",
    "mean_arena_residual_deg",
    "r_arena_residual",
    "v_arena",
    "v_u_arena",
    "p_arena_kept",
];

/// One animal's turns: per session, the world shifts and the residuals shift − turn.
#[derive(Debug, Default)]
struct AnimalTurns {
    shifts_by_session: Vec<Vec<f64>>,
    residuals_by_session: Vec<Vec<f64>>,
}

/// The turns with a world shift and a turn angle, between adjacent epochs, per animal.
fn turns_by_animal(sessions: &[&SessionStats]) -> BTreeMap<String, AnimalTurns> {
    let mut by: BTreeMap<String, AnimalTurns> = BTreeMap::new();
    for s in sessions {
        let (mut shifts, mut residuals) = (Vec::new(), Vec::new());
        for t in &s.turns {
            if t.to_epoch != t.from_epoch + 1 {
                continue;
            }
            if let (Some(d), Some(turn)) = (t.world_shift_deg, t.turn_deg) {
                shifts.push(d);
                residuals.push(wrap_signed_deg(d - turn));
            }
        }
        if shifts.is_empty() {
            continue;
        }
        let a = by.entry(animal_key(s)).or_default();
        a.shifts_by_session.push(shifts);
        a.residuals_by_session.push(residuals);
    }
    by
}

/// The mean of the sessions' mean unit vectors (each session weighing equally): direction
/// (None when the vectors cancel) and length.
fn equal_weight_mean(by_session: &[Vec<f64>]) -> (Option<f64>, f64) {
    let (mut c, mut s) = (0.0, 0.0);
    for angles in by_session {
        let d = describe_deg(angles);
        if let Some(m) = d.mean_deg {
            let (si, co) = m.to_radians().sin_cos();
            c += d.r * co;
            s += d.r * si;
        }
    }
    let k = by_session.len().max(1) as f64;
    let (c, s) = (c / k, s / k);
    let len = c.hypot(s);
    let dir = (len > 1e-12).then(|| wrap_signed_deg(s.atan2(c).to_degrees()));
    (dir, len)
}

/// `turns_by_animal.csv`: one row per animal with turns.
pub fn turns_by_animal_table(sessions: &[&SessionStats]) -> Table {
    let mut t = Table::new(TURNS_BY_ANIMAL_COLUMNS);
    for (animal, a) in turns_by_animal(sessions) {
        let all_shifts: Vec<f64> = a.shifts_by_session.concat();
        let all_residuals: Vec<f64> = a.residuals_by_session.concat();
        let (ms, rs) = equal_weight_mean(&a.shifts_by_session);
        let (mr, rr) = equal_weight_mean(&a.residuals_by_session);
        t.push(vec![
            animal.into(),
            a.shifts_by_session.len().into(),
            all_shifts.len().into(),
            ms.into(),
            rs.into(),
            mr.into(),
            rr.into(),
            p_cell(v_test_p_small_n(&all_shifts)),
            p_cell(v_test_p_small_n(&all_residuals)),
        ]);
    }
    t
}

/// `turns_population.csv`: one row, the V-tests of the animals' mean directions.
pub fn turns_population_table(sessions: &[&SessionStats]) -> Table {
    let mut t = Table::new(TURNS_POPULATION_COLUMNS);
    let by = turns_by_animal(sessions);
    let (mut world, mut arena) = (Vec::new(), Vec::new());
    let (mut n_sessions, mut n_turns) = (0usize, 0usize);
    for a in by.values() {
        n_sessions += a.shifts_by_session.len();
        n_turns += a.shifts_by_session.iter().map(Vec::len).sum::<usize>();
        if let (Some(w), _) = equal_weight_mean(&a.shifts_by_session) {
            world.push(w);
        }
        if let (Some(r), _) = equal_weight_mean(&a.residuals_by_session) {
            arena.push(r);
        }
    }
    if by.is_empty() {
        return t;
    }
    let side = |dirs: &[f64]| -> Vec<Cell> {
        if dirs.is_empty() {
            return vec![Cell::Empty; 5];
        }
        let d = describe_deg(dirs);
        let v = v_test_deg(dirs, 0.0);
        vec![
            d.mean_deg.map(wrap_signed_deg).into(),
            d.r.into(),
            v.v.into(),
            v.u.into(),
            p_cell(v_test_p_small_n(dirs)),
        ]
    };
    let mut row: Vec<Cell> = vec![by.len().into(), n_sessions.into(), n_turns.into()];
    row.extend(side(&world));
    row.extend(side(&arena));
    t.push(row);
    t
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::circular::randomization::Rng;

    /// Animals' mean shift directions, each from `sessions` sessions of `turns` shifts drawn by
    /// `draw`.
    fn animal_directions(
        rng: &mut Rng,
        animals: usize,
        sessions: usize,
        turns: usize,
        draw: &dyn Fn(&mut Rng) -> f64,
    ) -> Vec<f64> {
        (0..animals)
            .filter_map(|_| {
                let by_session: Vec<Vec<f64>> = (0..sessions)
                    .map(|_| (0..turns).map(|_| draw(rng)).collect())
                    .collect();
                equal_weight_mean(&by_session).0
            })
            .collect()
    }

    /// The population V-test on the data it sees (few animals, two sessions of nine turns
    /// each, every turn's shift unrelated to the turn: uniform) holds its level; 4000 data sets
    /// per cell (standard error of a 5 % rate 0.34 points). The printed rates are the README's
    /// (`cargo test --release --lib turn_population -- --nocapture`).
    #[test]
    fn population_turn_test_holds_its_level_and_finds_a_sky_compass() {
        const SIMS: usize = 4000;
        for &n in &[3usize, 4, 5, 8, 12, 20] {
            let mut rng = Rng::new(0x5EED_0007 ^ (n as u64) << 8);
            let (mut h5, mut h1) = (0, 0);
            for _ in 0..SIMS {
                let dirs = animal_directions(&mut rng, n, 2, 9, &|r| r.angle_deg());
                let p = v_test_p_small_n(&dirs).unwrap();
                h5 += (p <= 0.05) as usize;
                h1 += (p <= 0.01) as usize;
            }
            let (r5, r1) = (h5 as f64 / SIMS as f64, h1 as f64 / SIMS as f64);
            eprintln!("turn test across animals n={n:2}: {r5:.3} / {r1:.3} (alpha 0.05 / 0.01)");
            assert!((r5 - 0.05).abs() <= 0.015, "n={n}: {r5}");
            assert!((r1 - 0.01).abs() <= 0.006, "n={n} at 0.01: {r1}");
        }
        // Power: five animals that keep their world heading loosely (shifts von Mises κ 1
        // about 0) are found in nearly every data set.
        let mut rng = Rng::new(0x5EED_0008);
        let found = (0..500)
            .filter(|_| {
                let dirs = animal_directions(&mut rng, 5, 2, 9, &|r| r.von_mises_deg(1.0));
                v_test_p_small_n(&dirs).unwrap() <= 0.05
            })
            .count();
        assert!(found >= 475, "{found} of 500");
    }

    #[test]
    fn each_session_weighs_equally() {
        // One session of 1 turn at 90°, one of 9 turns at 0°: the animal's vector is the
        // mean of (0, 1) and (1, 0), i.e. 45° with length √2/2, whatever the turn counts.
        let (d, len) = equal_weight_mean(&[vec![90.0], vec![0.0; 9]]);
        assert!((d.unwrap() - 45.0).abs() < 1e-9);
        assert!((len - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-12);
        let (d, len) = equal_weight_mean(&[vec![0.0], vec![180.0]]);
        assert!(d.is_none() && len < 1e-12);
    }
}
