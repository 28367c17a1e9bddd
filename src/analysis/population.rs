//! Second-order statistics: one mean vector per animal and condition, then tests over animals.
//!
//! An animal's vector under a condition, in one frame (world, or sun-relative: world heading
//! minus the sun's azimuth at each sample), is the mean of its sessions' mean vectors (each
//! session pooling its scored headings in epochs with that condition), so each session weighs
//! equally: direction θ_i (its preferred heading) and length r_i (how steadily it held it).
//! Sessions at different times of day that hold the same sun-relative heading agree in the
//! sun frame and spread in the world frame. Population tests then
//! treat the animals, not the samples, as the observations (Batschelet 1981, ch. 7; Zar 2010,
//! §27.1), which also sidesteps the autocorrelation of samples. A session without an animal id
//! counts as an animal of its own (its session id).

use super::session::{EpochStats, SessionStats};
use super::table::{Cell, Table};
use crate::circular::{
    HeadingAccumulator, bootstrap_mean_ci95_deg, describe_deg, hermans_rasson_test,
    hotelling_one_sample_test, hotelling_paired_test, moore_paired_test, moore_rayleigh_test,
    rao_spacing_test, rayleigh_p_few, rayleigh_test, second_order_mean, v_test_deg,
    v_test_p_small_n, watson_williams_test,
};
use crate::frames::signed_difference_deg;
use std::collections::BTreeMap;

/// A p-value cell written so that it cannot be taken for an integer: always with a decimal
/// point or an exponent ("1.0", "0.0156", "1e-6"); empty when there is no p.
pub(super) fn p_cell(p: Option<f64>) -> Cell {
    match p {
        Some(x) if x.is_finite() => {
            let t = super::table::format_cell(&Cell::Num(x));
            if t.contains(['.', 'e']) {
                Cell::Text(t)
            } else {
                Cell::Text(format!("{t}.0"))
            }
        }
        _ => Cell::Empty,
    }
}

/// Mean direction and mean vector length of directions in degrees.
fn mean_and_r(angles_deg: &[f64]) -> (Option<f64>, f64) {
    let s = describe_deg(angles_deg);
    (s.mean_deg, s.r)
}

/// The animal key of a session.
pub fn animal_key(s: &SessionStats) -> String {
    if s.info.animal.is_empty() {
        s.info.id.clone()
    } else {
        s.info.animal.clone()
    }
}

/// The frame of a heading: the world (0 = north, clockwise) or the sun (world heading minus
/// the sun's azimuth at the same sample; 0 = toward the sun).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Frame {
    /// World headings.
    World,
    /// Sun-relative headings.
    Sun,
}

impl Frame {
    /// Both frames, in table order.
    pub const ALL: [Frame; 2] = [Frame::World, Frame::Sun];

    /// The name written in the `frame` column.
    pub fn name(self) -> &'static str {
        match self {
            Frame::World => "world",
            Frame::Sun => "sun",
        }
    }

    /// The epoch's scored headings in this frame.
    pub fn of_epoch(self, e: &EpochStats) -> &HeadingAccumulator {
        match self {
            Frame::World => &e.world,
            Frame::Sun => &e.sun_relative,
        }
    }
}

/// One animal's vector under one condition in one frame: the second-order mean of its
/// sessions' mean vectors (each session's scored headings of that condition pooled), so that
/// every session weighs equally however long it flew.
#[derive(Debug, Clone)]
pub struct AnimalVector {
    /// Animal id.
    pub animal: String,
    /// Sessions contributing.
    pub sessions: usize,
    /// Direction of the animal's vector, None when it is 0.
    pub mean_deg: Option<f64>,
    /// Length of the animal's vector (mean of the sessions' vectors), in [0, 1].
    pub r: f64,
}

/// frame → condition → animal → vector (conditions and animals ordered by name).
pub type AnimalVectors = BTreeMap<Frame, BTreeMap<String, BTreeMap<String, AnimalVector>>>;

/// One vector per frame, condition and animal: each session's epochs of a condition pooled
/// into the session's mean vector, then the animal's sessions averaged as vectors
/// ([`second_order_mean`]). Both frames are always present (possibly empty).
pub fn animal_vectors(sessions: &[&SessionStats]) -> AnimalVectors {
    // frame → condition → animal → (session directions, session lengths)
    type Parts = BTreeMap<String, BTreeMap<String, (Vec<f64>, Vec<f64>)>>;
    let mut parts: BTreeMap<Frame, Parts> = BTreeMap::new();
    for s in sessions {
        let animal = animal_key(s);
        for frame in Frame::ALL {
            let mut by_cond: BTreeMap<&str, HeadingAccumulator> = BTreeMap::new();
            for e in &s.epochs {
                let acc = frame.of_epoch(e);
                if acc.n() == 0 {
                    continue;
                }
                by_cond.entry(e.condition.as_str()).or_default().merge(acc);
            }
            for (cond, acc) in by_cond {
                let Some(m) = acc.mean_deg() else { continue };
                let v = parts
                    .entry(frame)
                    .or_default()
                    .entry(cond.to_string())
                    .or_default()
                    .entry(animal.clone())
                    .or_default();
                v.0.push(m);
                v.1.push(acc.r());
            }
        }
    }
    let mut out: AnimalVectors = Frame::ALL.iter().map(|f| (*f, BTreeMap::new())).collect();
    for (frame, conds) in parts {
        let slot = out.entry(frame).or_default();
        for (cond, animals) in conds {
            let vs = slot.entry(cond).or_default();
            for (animal, (d, l)) in animals {
                let Ok((mean_deg, r)) = second_order_mean(&d, &l) else {
                    continue;
                };
                vs.insert(
                    animal.clone(),
                    AnimalVector {
                        animal,
                        sessions: d.len(),
                        mean_deg,
                        r,
                    },
                );
            }
        }
    }
    out
}

/// (directions, lengths) of the animals with a defined mean direction.
fn directions(vs: &BTreeMap<String, AnimalVector>) -> (Vec<f64>, Vec<f64>, Vec<String>) {
    let (mut d, mut l, mut names) = (Vec::new(), Vec::new(), Vec::new());
    for v in vs.values() {
        if let Some(m) = v.mean_deg {
            d.push(m);
            l.push(v.r);
            names.push(v.animal.clone());
        }
    }
    (d, l, names)
}

/// (frame, condition, animals' vectors), frames in table order, conditions by name.
fn by_frame(
    vectors: &AnimalVectors,
) -> impl Iterator<Item = (Frame, &String, &BTreeMap<String, AnimalVector>)> {
    vectors
        .iter()
        .flat_map(|(f, conds)| conds.iter().map(move |(c, vs)| (*f, c, vs)))
}

/// Columns of `population.csv`.
pub const POPULATION_COLUMNS: &[&str] = &[
    "frame",
    "condition",
    "animals",
    "sessions",
    "mean_deg",
    "r",
    "rayleigh_z",
    "rayleigh_p",
    "moore_r_star",
    "moore_p",
    "hotelling_f",
    "hotelling_df2",
    "hotelling_p",
    "mean_vector_deg",
    "mean_vector_length",
    "rao_spacing_u",
    "rao_spacing_p",
    "hermans_rasson_p",
    "mean_ci95_low_deg",
    "mean_ci95_high_deg",
];

/// `population.csv`: one row per condition. `rayleigh_*` test the animals' mean directions
/// (unit vectors; p from the simulated exact null with up to 12 animals,
/// [`crate::circular::rayleigh_p_few`]); `moore_*` and `hotelling_*` use their vector lengths too, and their p are
/// the seeded randomization p of [`crate::circular::moore_rayleigh_test`] and
/// [`crate::circular::hotelling_one_sample_test`] (calibrated for 4 to 30 animals in
/// `circular::calibration`; the F tail of Hotelling's test is not reported). `rao_spacing_*`
/// and `hermans_rasson_p` are omnibus tests of uniformity of the animals' mean directions
/// (they also see bimodal populations; n ≥ 3), and `mean_ci95_*` the seeded percentile
/// bootstrap 95% interval of their mean direction (n ≥ 5), read clockwise from low to high.
pub fn population_table(vectors: &AnimalVectors) -> Table {
    let mut t = Table::new(POPULATION_COLUMNS);
    for (frame, cond, vs) in by_frame(vectors) {
        let (d, l, _) = directions(vs);
        let n = d.len();
        let sessions: usize = vs.values().map(|v| v.sessions).sum();
        let (mean, r) = mean_and_r(&d);
        // Rayleigh's z; its p from the exact null with up to 12 animals (`rayleigh_p_few`).
        let (z, p) = if n > 0 {
            (Some(rayleigh_test(n as f64, r).0), rayleigh_p_few(n, r))
        } else {
            (None, None)
        };
        let moore = moore_rayleigh_test(&d, &l).ok().map(|m| (m.r_star, m.p));
        let hot = hotelling_one_sample_test(&d, &l).ok().map(|h| (h.f, h.p));
        let rao = rao_spacing_test(&d).ok();
        let hr = hermans_rasson_test(&d).ok();
        let ci = bootstrap_mean_ci95_deg(&d);
        // Second-order mean vector: the mean of the animals' vectors r_i (cos θ_i, sin θ_i).
        let (mv_deg, mv_len) = match second_order_mean(&d, &l) {
            Ok((m, len)) => (m, Some(len)),
            Err(_) => (None, None),
        };
        t.push(vec![
            frame.name().into(),
            cond.clone().into(),
            n.into(),
            sessions.into(),
            mean.into(),
            if n > 0 { Cell::Num(r) } else { Cell::Empty },
            z.into(),
            p_cell(p),
            moore.map(|m| m.0).into(),
            p_cell(moore.map(|m| m.1)),
            hot.map(|h| h.0).into(),
            if hot.is_some() {
                Cell::Num(n as f64 - 2.0)
            } else {
                Cell::Empty
            },
            p_cell(hot.map(|h| h.1)),
            mv_deg.into(),
            mv_len.into(),
            rao.map(|r| r.statistic).into(),
            p_cell(rao.map(|r| r.p)),
            p_cell(hr.map(|h| h.p)),
            ci.map(|c| c.0).into(),
            ci.map(|c| c.1).into(),
        ]);
    }
    t
}

/// Columns of `comparisons.csv`.
pub const COMPARISON_COLUMNS: &[&str] = &[
    "condition_a",
    "condition_b",
    "animals_a",
    "animals_b",
    "mean_a_deg",
    "mean_b_deg",
    "ww_f",
    "ww_df1",
    "ww_df2",
    "ww_r_pooled",
    "ww_concentration_ok",
    "ww_p",
];

/// `comparisons.csv`: Watson–Williams test between the preferred headings of two independent
/// groups of animals (every pair of conditions, in name order a < b, whose animal sets are
/// disjoint; conditions measured on any of the same animals go to `paired.csv` instead).
///
/// `ww_r_pooled` is the pooled within-group mean vector length r_w and `ww_concentration_ok`
/// (1/0) Zar's condition r_w ≥ 0.45 for the F approximation. `ww_p` is the seeded permutation
/// p of the corrected F (see [`crate::circular::watson_williams_test`]), not the F tail: the
/// calibration simulations show the F tail too liberal for populations of a few animals even
/// where Zar's condition holds, the permutation p at its level throughout.
pub fn comparisons_table(vectors: &AnimalVectors) -> Table {
    let mut t = Table::new(COMPARISON_COLUMNS);
    let Some(world) = vectors.get(&Frame::World) else {
        return t;
    };
    let conds: Vec<&String> = world.keys().collect();
    for (i, a) in conds.iter().enumerate() {
        for b in &conds[i + 1..] {
            let (da, _, na) = directions(&world[*a]);
            let (db, _, nb) = directions(&world[*b]);
            if na.iter().any(|x| nb.contains(x)) {
                continue;
            }
            let ww = watson_williams_test(&[&da, &db]).ok();
            t.push(vec![
                a.as_str().into(),
                b.as_str().into(),
                da.len().into(),
                db.len().into(),
                mean_and_r(&da).0.into(),
                mean_and_r(&db).0.into(),
                ww.as_ref().map(|w| w.f).into(),
                ww.as_ref().map(|w| w.df.0).into(),
                ww.as_ref().map(|w| w.df.1).into(),
                ww.as_ref().map(|w| w.r_pooled).into(),
                ww.as_ref()
                    .map_or(Cell::Empty, |w| w.concentration_ok.into()),
                p_cell(ww.as_ref().map(|w| w.p_permutation)),
            ]);
        }
    }
    t
}

/// Columns of `paired.csv`.
pub const PAIRED_COLUMNS: &[&str] = &[
    "frame",
    "condition_a",
    "condition_b",
    "animals",
    "mean_change_deg",
    "r",
    "v",
    "v_u",
    "v_p",
    "hotelling_f",
    "hotelling_p",
    "moore_r_star",
    "moore_p",
];

/// Columns of `paired_changes.csv`.
pub const PAIRED_CHANGE_COLUMNS: &[&str] = &[
    "frame",
    "animal",
    "condition_a",
    "condition_b",
    "heading_a_deg",
    "heading_b_deg",
    "change_deg",
];

/// The conditions in protocol order: by the first epoch index at which any session planned
/// (or, without a plan, ran) them, ties by name.
pub fn protocol_order(sessions: &[&SessionStats]) -> Vec<String> {
    let mut first: BTreeMap<String, usize> = BTreeMap::new();
    for s in sessions {
        let planned = s.info.conditions.iter().map(|(i, c)| (*i, c));
        let ran = s.epochs.iter().map(|e| (e.index, &e.condition));
        for (i, c) in planned.chain(ran) {
            let slot = first.entry(c.clone()).or_insert(i);
            *slot = (*slot).min(i);
        }
    }
    let mut v: Vec<(usize, String)> = first.into_iter().map(|(c, i)| (i, c)).collect();
    v.sort();
    v.into_iter().map(|(_, c)| c).collect()
}

/// `paired.csv` (one row per pair of conditions, a before b in protocol order
/// ([`protocol_order`]): the change of preferred heading of each
/// animal seen under both, b − a in (-180, 180], with a V-test toward 0, i.e. "the heading
/// did not change"; its null is changes uniform on the circle, its p from the simulated exact
/// null up to 12 animals ([`crate::circular::v_test_p_small_n`]), none below 3) and `paired_changes.csv` (one row per animal and pair).
///
/// The same row carries Zar's paired-sample tests of the animals' preferred headings under the
/// two conditions (Zar 2010 §27.13): the Hotelling-type test on the differences of the unit
/// vectors (`hotelling_f`, `hotelling_p`) and Moore's paired test (`moore_r_star`, `moore_p`;
/// Moore 1980). Both test whether the population's mean heading moved between the conditions;
/// both p are sign-flip p (exact up to 12 animals; see [`crate::circular::hotelling_paired_test`]),
/// calibrated in `circular::calibration`; with 4 or 5 animals they cannot go below 0.125 and
/// 0.0625.
pub fn paired_tables(vectors: &AnimalVectors, order: &[String]) -> (Table, Table) {
    let mut t = Table::new(PAIRED_COLUMNS);
    let mut detail = Table::new(PAIRED_CHANGE_COLUMNS);
    for (frame, by_cond) in vectors {
        let mut conds: Vec<&String> = by_cond.keys().collect();
        let rank = |c: &String| order.iter().position(|o| o == c).unwrap_or(usize::MAX);
        conds.sort_by_key(|c| (rank(c), c.to_string()));
        for (i, a) in conds.iter().enumerate() {
            for b in &conds[i + 1..] {
                let mut changes = Vec::new();
                let (mut heads_a, mut heads_b) = (Vec::new(), Vec::new());
                for (animal, va) in &by_cond[*a] {
                    let Some(vb) = by_cond[*b].get(animal) else {
                        continue;
                    };
                    let (Some(ma), Some(mb)) = (va.mean_deg, vb.mean_deg) else {
                        continue;
                    };
                    let ch = signed_difference_deg(ma, mb);
                    changes.push(ch);
                    heads_a.push(ma);
                    heads_b.push(mb);
                    detail.push(vec![
                        frame.name().into(),
                        animal.as_str().into(),
                        a.as_str().into(),
                        b.as_str().into(),
                        ma.into(),
                        mb.into(),
                        ch.into(),
                    ]);
                }
                if changes.is_empty() {
                    continue;
                }
                let (mean, r) = mean_and_r(&changes);
                // V and u as the textbook gives them; p from the exact null up to 12 animals
                // (as the session turn test), none below 3.
                let v = Some(v_test_deg(&changes, 0.0));
                let v_p = v_test_p_small_n(&changes);
                let hot = hotelling_paired_test(&heads_a, &heads_b).ok();
                let moore = moore_paired_test(&heads_a, &heads_b).ok();
                t.push(vec![
                    frame.name().into(),
                    a.as_str().into(),
                    b.as_str().into(),
                    changes.len().into(),
                    mean.map(crate::frames::wrap_signed_deg).into(),
                    r.into(),
                    v.map(|v| v.v).into(),
                    v.map(|v| v.u).into(),
                    p_cell(v_p),
                    hot.map(|h| h.statistic).into(),
                    p_cell(hot.map(|h| h.p)),
                    moore.map(|m| m.statistic).into(),
                    p_cell(moore.map(|m| m.p)),
                ]);
            }
        }
    }
    (t, detail)
}

/// Columns of `animals.csv`.
pub const ANIMAL_COLUMNS: &[&str] = &[
    "animal",
    "frame",
    "sessions",
    "conditions",
    "mean_world_deg",
    "r_between_sessions",
    "rayleigh_p_between_sessions",
    "mean_r_world",
    "flying_s",
];

/// `animals.csv`: how consistent each animal's heading is across its sessions, one row per
/// animal and frame: the sessions' mean headings in that frame (all scored samples of a
/// session in epochs) as unit vectors, their mean direction and length, and a Rayleigh test
/// when there are at least two sessions (null: the session means independent and uniform, the
/// animal picking a new heading each session; p from the simulated exact null up to 12
/// sessions, [`crate::circular::rayleigh_p_few`]). The columns keep their world names
/// (`mean_world_deg`, `mean_r_world`); in `sun` rows they hold sun-relative values.
pub fn animals_table(sessions: &[&SessionStats]) -> Table {
    let mut by: BTreeMap<String, Vec<&SessionStats>> = BTreeMap::new();
    for s in sessions {
        by.entry(animal_key(s)).or_default().push(s);
    }
    let mut t = Table::new(ANIMAL_COLUMNS);
    for (animal, ss) in by {
        let mut conds: Vec<String> = Vec::new();
        for s in &ss {
            for c in s.conditions() {
                if !conds.contains(&c) {
                    conds.push(c);
                }
            }
        }
        conds.sort();
        for frame in Frame::ALL {
            let per_session: Vec<HeadingAccumulator> = ss
                .iter()
                .map(|s| match frame {
                    // The whole session's scored world headings (outside epochs too).
                    Frame::World => s.world.clone(),
                    Frame::Sun => {
                        let mut acc = HeadingAccumulator::new();
                        for e in &s.epochs {
                            acc.merge(&e.sun_relative);
                        }
                        acc
                    }
                })
                .collect();
            let means: Vec<f64> = per_session.iter().filter_map(|a| a.mean_deg()).collect();
            let (mean, r) = mean_and_r(&means);
            let p = rayleigh_p_few(means.len(), r);
            let mean_r = per_session.iter().map(|a| a.r()).sum::<f64>() / ss.len() as f64;
            t.push(vec![
                animal.as_str().into(),
                frame.name().into(),
                ss.len().into(),
                conds.join(";").into(),
                mean.into(),
                if means.len() >= 2 {
                    Cell::Num(r)
                } else {
                    Cell::Empty
                },
                p_cell(p),
                mean_r.into(),
                ss.iter().map(|s| s.flying_s).sum::<f64>().into(),
            ]);
        }
    }
    t
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::session::EpochStats;
    use crate::analysis::table::format_cell;

    fn epoch(index: usize, condition: &str, around_deg: f64) -> EpochStats {
        let mut world = HeadingAccumulator::new();
        for k in 0..50 {
            world.push_deg(around_deg + (k % 5) as f64 * 4.0 - 8.0);
        }
        EpochStats {
            index,
            condition: condition.into(),
            world,
            ..Default::default()
        }
    }

    fn session(id: &str, animal: &str, a_deg: f64, shift_deg: f64) -> SessionStats {
        let mut s = SessionStats::default();
        s.info.id = id.into();
        s.info.animal = animal.into();
        s.epochs = vec![
            epoch(1, "open sky", a_deg),
            epoch(2, "diffuser", a_deg + shift_deg),
        ];
        for e in &s.epochs {
            s.world.merge(&e.world);
        }
        s
    }

    fn cell(t: &Table, row: usize, name: &str) -> String {
        let i = t.header.iter().position(|h| h == name).unwrap();
        format_cell(&t.rows[row][i])
    }

    #[test]
    fn one_vector_per_animal_and_condition_and_the_tests_between_them() {
        let ss = [
            session("s1", "lm-01", 10.0, 90.0),
            session("s2", "lm-02", 20.0, 95.0),
            session("s3", "lm-03", 35.0, 85.0),
            session("s4", "lm-01", 12.0, 90.0),
        ];
        let refs: Vec<&SessionStats> = ss.iter().collect();
        let v = animal_vectors(&refs);
        let w = &v[&Frame::World];
        assert_eq!(w.len(), 2);
        assert_eq!(
            w["open sky"].len(),
            3,
            "lm-01's two sessions pool into one vector"
        );
        assert_eq!(w["open sky"]["lm-01"].sessions, 2);

        let pop = population_table(&v);
        // Conditions in name order: diffuser, open sky.
        assert_eq!(cell(&pop, 1, "condition"), "open sky");
        assert_eq!(cell(&pop, 1, "animals"), "3");
        let mean: f64 = cell(&pop, 1, "mean_deg").parse().unwrap();
        assert!((mean - 21.0).abs() < 5.0, "{mean}");
        // Three animals: Hotelling (needs 3) is defined, with 1 denominator df.
        assert_eq!(cell(&pop, 1, "hotelling_df2"), "1");

        let cmp = comparisons_table(&v);
        assert!(
            cmp.rows.is_empty(),
            "the same animals under both conditions are not independent groups"
        );

        let (paired, changes) = paired_tables(&v, &protocol_order(&refs));
        assert_eq!(cell(&paired, 0, "animals"), "3");
        // Protocol order: open sky (epoch 1) before diffuser (epoch 2), not name order.
        assert_eq!(cell(&paired, 0, "condition_a"), "open sky");
        assert_eq!(cell(&paired, 0, "condition_b"), "diffuser");
        let change: f64 = cell(&paired, 0, "mean_change_deg").parse().unwrap();
        // b − a with a = open sky, b = diffuser: about +90.
        assert!((change - 90.0).abs() < 5.0, "{change}");
        let vp: f64 = cell(&paired, 0, "v_p").parse().unwrap();
        assert!(
            vp > 0.3,
            "changes of −90° are no evidence of 'no change': {vp}"
        );
        assert_eq!(changes.rows.len(), 3);
        // Three animals: the paired tests are defined; the exact sign-flip p cannot go below
        // 2/2³.
        let hp: f64 = cell(&paired, 0, "hotelling_p").parse().unwrap();
        assert!(hp >= 0.25 - 1e-12, "{hp}");
        assert!(!cell(&paired, 0, "moore_r_star").is_empty());

        let animals = animals_table(&refs);
        assert_eq!(cell(&animals, 0, "animal"), "lm-01");
        assert_eq!(cell(&animals, 0, "frame"), "world");
        assert_eq!(cell(&animals, 1, "frame"), "sun");
        assert_eq!(cell(&animals, 0, "sessions"), "2");
        assert_eq!(
            cell(&animals, 2, "r_between_sessions"),
            "",
            "one session: no spread"
        );
    }

    #[test]
    fn p_values_never_look_like_integers() {
        assert_eq!(format_cell(&p_cell(Some(1.0))), "1.0");
        assert_eq!(format_cell(&p_cell(Some(0.0))), "0.0");
        assert_eq!(format_cell(&p_cell(Some(0.0156))), "0.0156");
        assert_eq!(format_cell(&p_cell(Some(1e-7))), "1e-7");
        assert_eq!(format_cell(&p_cell(None)), "");
    }

    #[test]
    fn watson_williams_compares_only_independent_groups_by_permutation() {
        // Six animals under "open sky" near 20°, six others under "diffuser" near 110°.
        let mut ss = Vec::new();
        for i in 0..6 {
            let mut s = session(&format!("a{i}"), &format!("lm-0{i}"), 20.0 + i as f64, 0.0);
            s.epochs.truncate(1);
            ss.push(s);
            let mut s = session(&format!("b{i}"), &format!("lm-1{i}"), 110.0 - i as f64, 0.0);
            s.epochs.truncate(1);
            s.epochs[0].condition = "diffuser".into();
            ss.push(s);
        }
        let refs: Vec<&SessionStats> = ss.iter().collect();
        let v = animal_vectors(&refs);
        let cmp = comparisons_table(&v);
        assert_eq!(cmp.rows.len(), 1);
        assert_eq!(cell(&cmp, 0, "ww_concentration_ok"), "1");
        let p: f64 = cell(&cmp, 0, "ww_p").parse().unwrap();
        // 924 ways to split 12 animals 6/6; only the observed split and its mirror are as
        // extreme, so the permutation p is about 2/924 (Monte Carlo, B = 9999).
        assert!(p > 0.0005 && p < 0.006, "90° apart: {p}");
        let (paired, _) = paired_tables(&v, &protocol_order(&refs));
        assert!(paired.rows.is_empty(), "no animal under both conditions");
    }

    /// A session whose epoch holds `heading_deg` in the world with the sun at `sun_az_deg`;
    /// `n` samples, spread `spread_deg`.
    fn sun_session(
        id: &str,
        animal: &str,
        heading_deg: f64,
        sun_az_deg: f64,
        n: usize,
        spread_deg: f64,
    ) -> SessionStats {
        let mut e = EpochStats {
            index: 1,
            condition: "open sky".into(),
            ..Default::default()
        };
        for k in 0..n {
            let h = heading_deg + if k % 2 == 0 { spread_deg } else { -spread_deg };
            e.world.push_deg(h);
            e.sun_relative
                .push_deg(crate::frames::sun_relative_heading_deg(h, sun_az_deg));
        }
        let mut s = SessionStats::default();
        s.info.id = id.into();
        s.info.animal = animal.into();
        s.world.merge(&e.world);
        s.epochs = vec![e];
        s
    }

    #[test]
    fn sessions_weigh_equally_and_the_sun_frame_follows_the_sun() {
        // One animal, morning and noon: the same heading 30° right of the sun, the sun 60°
        // further on at noon. The morning session is ten times longer.
        let ss = [
            sun_session("s1", "lm-01", 130.0, 100.0, 1000, 5.0),
            sun_session("s2", "lm-01", 190.0, 160.0, 100, 5.0),
        ];
        let refs: Vec<&SessionStats> = ss.iter().collect();
        let v = animal_vectors(&refs);
        let w = &v[&Frame::World]["open sky"]["lm-01"];
        let sun = &v[&Frame::Sun]["open sky"]["lm-01"];
        assert_eq!((w.sessions, sun.sessions), (2, 2));
        // Equal weights: the world vector points midway (160°), not toward the long session,
        // and is shortened by the 60° between the sessions (cos 30° · cos 5°).
        assert!(
            (w.mean_deg.unwrap() - 160.0).abs() < 1e-9,
            "{:?}",
            w.mean_deg
        );
        let expect = 30f64.to_radians().cos() * 5f64.to_radians().cos();
        assert!((w.r - expect).abs() < 1e-9, "{}", w.r);
        // Sun frame: both sessions at 30°, the vector as long as one session's.
        assert!((sun.mean_deg.unwrap() - 30.0).abs() < 1e-9);
        assert!((sun.r - 5f64.to_radians().cos()).abs() < 1e-9);

        let pop = population_table(&v);
        assert_eq!(pop.rows.len(), 2, "one row per frame");
        assert_eq!(cell(&pop, 0, "frame"), "world");
        assert_eq!(cell(&pop, 1, "frame"), "sun");
        let mv: f64 = cell(&pop, 1, "mean_vector_deg").parse().unwrap();
        assert!((mv - 30.0).abs() < 1e-9);
        let animals = animals_table(&refs);
        assert_eq!(cell(&animals, 1, "frame"), "sun");
        let between: f64 = cell(&animals, 1, "r_between_sessions").parse().unwrap();
        assert!(
            (between - 1.0).abs() < 1e-9,
            "same sun-relative heading: {between}"
        );
    }
}
