//! Scores that follow the cue an epoch showed: which directional cue the scored samples had
//! (the sun's disc, polarization only, none), headings as axial data relative to the e-vector
//! shown when polarization was the only cue, and what each turn predicts for an animal that
//! steers by the cue shown.
//!
//! Fed from the `sun_in_view` and `evector_shown_deg` columns (live or read back); archives
//! written before those columns give no cue scores (`null`). Every angle is rounded as the
//! writer writes it first, so live and repaired summaries agree.

use serde::{Deserialize, Serialize};

use super::ANGLE_DECIMALS;
use super::fmt::quantize_angle_deg;
use crate::circular::HeadingAccumulator;
use crate::frames::{wrap_axial_deg, wrap_signed_deg};

/// The cue fields of one epoch in `summary.json` (flattened into the epoch's object).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct EpochCueScore {
    /// The directional cue of the epoch's scored samples: `"sun"` (the sun's disc in view at
    /// every one), `"polarization"` (no sun in view, an e-vector shown at every one), `"none"`
    /// (neither), `"mixed"` (the sun entered or left the view); None without scored samples or
    /// in archives that did not record cues.
    #[serde(default)]
    pub cue: Option<String>,
    /// With `cue = "polarization"`: mean vector length of the doubled angles of world heading
    /// minus the e-vector shown (axial concentration; Batschelet 1981 §1.5; Zar 2010 §26.13).
    #[serde(default)]
    pub axial_r: Option<f64>,
    /// With `cue = "polarization"`: the axial mean heading relative to the e-vector shown,
    /// [0, 180) (half the mean doubled angle; 0 = along the e-vector, 90 = across it).
    #[serde(default)]
    pub mean_evector_rel_deg: Option<f64>,
}

/// The cue fields of one turn in `summary.json` (flattened into the turn's object).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct TurnCuePrediction {
    /// The world shift expected of an animal that keeps its angle to the cue shown, from the
    /// cue's own move between the two epochs: under the sun, the change of the sun's mean
    /// azimuth (-180, 180]; under polarization only, the change of the mean e-vector shown,
    /// (-90, 90] (with a filter turning with the arena: the turn, modulo 180). None when the
    /// two epochs do not show the same kind of cue.
    #[serde(default)]
    pub cue_predicted_shift_deg: Option<f64>,
    /// The prediction holds modulo this many degrees: 360 under the sun, 180 under
    /// polarization (an e-vector is axial: heading along it either way fits).
    #[serde(default)]
    pub cue_predicted_mod_deg: Option<f64>,
}

/// Accumulates one epoch's cue statistics, O(1) per sample.
#[derive(Debug, Clone, Default)]
pub(super) struct EpochCues {
    scored: u64,
    sun_in_view: u64,
    with_evector: u64,
    /// Samples of archives without the cue columns.
    unknown: u64,
    /// Doubled (world heading − e-vector shown), scored samples without the sun in view.
    axial: HeadingAccumulator,
    /// Doubled e-vector shown (its axial mean).
    evector: HeadingAccumulator,
    /// Sun azimuth of scored samples with the sun in view (circular mean).
    sun: HeadingAccumulator,
}

impl EpochCues {
    /// One scored sample with a finite world heading (already rounded as written).
    /// `sun_in_view` None: the archive has no cue columns.
    pub(super) fn push(
        &mut self,
        world_deg: f64,
        sun_in_view: Option<bool>,
        evector_shown_deg: f64,
        sun_azimuth_deg: f64,
    ) {
        let Some(in_view) = sun_in_view else {
            self.unknown += 1;
            return;
        };
        self.scored += 1;
        let ev = quantize_angle_deg(evector_shown_deg, ANGLE_DECIMALS);
        if in_view {
            self.sun_in_view += 1;
            let az = quantize_angle_deg(sun_azimuth_deg, ANGLE_DECIMALS);
            if az.is_finite() {
                self.sun.push_deg(az);
            }
        }
        if ev.is_finite() {
            self.with_evector += 1;
            self.evector.push_deg(2.0 * ev);
            if !in_view {
                self.axial.push_deg(2.0 * (world_deg - ev));
            }
        }
    }

    fn cue(&self) -> Option<&'static str> {
        if self.scored == 0 || self.unknown > 0 {
            return None;
        }
        Some(if self.sun_in_view == self.scored {
            "sun"
        } else if self.sun_in_view == 0 && self.with_evector == self.scored {
            "polarization"
        } else if self.sun_in_view == 0 && self.with_evector == 0 {
            "none"
        } else {
            "mixed"
        })
    }

    /// The epoch's cue fields.
    pub(super) fn score(&self) -> EpochCueScore {
        let cue = self.cue();
        let polarized = cue == Some("polarization");
        EpochCueScore {
            cue: cue.map(str::to_string),
            axial_r: polarized.then(|| self.axial.r()).filter(|r| r.is_finite()),
            mean_evector_rel_deg: if polarized {
                self.axial.mean_deg().map(|m| wrap_axial_deg(m / 2.0))
            } else {
                None
            },
        }
    }

    /// What turn from `before` to `after` predicts for an animal steering by the cue shown.
    pub(super) fn predict(before: &EpochCues, after: &EpochCues) -> TurnCuePrediction {
        let none = TurnCuePrediction::default();
        match (before.cue(), after.cue()) {
            (Some("sun"), Some("sun")) => match (before.sun.mean_deg(), after.sun.mean_deg()) {
                (Some(a), Some(b)) => TurnCuePrediction {
                    cue_predicted_shift_deg: Some(wrap_signed_deg(b - a)),
                    cue_predicted_mod_deg: Some(360.0),
                },
                _ => none,
            },
            (Some("polarization"), Some("polarization")) => {
                match (before.evector.mean_deg(), after.evector.mean_deg()) {
                    (Some(a), Some(b)) => TurnCuePrediction {
                        cue_predicted_shift_deg: Some(wrap_signed_deg(b - a) / 2.0),
                        cue_predicted_mod_deg: Some(180.0),
                    },
                    _ => none,
                }
            }
            _ => none,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axial_score_relative_to_the_evector() {
        // Headings along a filter axis at 30 deg, both ways (30 and 210): bimodal in the world
        // frame (r near 0) but one axis relative to the e-vector (axial r = 1, mean 0).
        let mut e = EpochCues::default();
        for k in 0..10 {
            let w = if k % 2 == 0 { 30.0 } else { 210.0 };
            e.push(w, Some(false), 30.0, 120.0);
        }
        let s = e.score();
        assert_eq!(s.cue.as_deref(), Some("polarization"));
        assert!((s.axial_r.unwrap() - 1.0).abs() < 1e-12);
        let m = s.mean_evector_rel_deg.unwrap();
        assert!(m.min(180.0 - m) < 1e-9, "{m}");
        // Across the e-vector: 90.
        let mut x = EpochCues::default();
        x.push(120.0, Some(false), 30.0, 0.0);
        x.push(300.0, Some(false), 30.0, 0.0);
        assert!((x.score().mean_evector_rel_deg.unwrap() - 90.0).abs() < 1e-9);
    }

    #[test]
    fn cue_kinds_and_old_archives() {
        let mut sun = EpochCues::default();
        sun.push(10.0, Some(true), 40.0, 130.0);
        assert_eq!(sun.score().cue.as_deref(), Some("sun"));
        assert_eq!(sun.score().axial_r, None);
        let mut none = EpochCues::default();
        none.push(10.0, Some(false), f64::NAN, 130.0);
        assert_eq!(none.score().cue.as_deref(), Some("none"));
        let mut mixed = EpochCues::default();
        mixed.push(10.0, Some(false), 40.0, 130.0);
        mixed.push(10.0, Some(true), 40.0, 130.0);
        assert_eq!(mixed.score().cue.as_deref(), Some("mixed"));
        let mut old = EpochCues::default();
        old.push(10.0, None, f64::NAN, 130.0);
        assert_eq!(old.score(), EpochCueScore::default());
    }

    #[test]
    fn predictions_follow_the_cue() {
        // A filter turning with the arena by -90: the e-vector shown moves from 0 to 90 (mod
        // 180), so an animal steering by it shifts by 90 (or -90: the same axis).
        let mut a = EpochCues::default();
        let mut b = EpochCues::default();
        a.push(0.0, Some(false), 0.0, 100.0);
        b.push(0.0, Some(false), 90.0, 100.0);
        let p = EpochCues::predict(&a, &b);
        assert!((p.cue_predicted_shift_deg.unwrap().abs() - 90.0).abs() < 1e-9);
        assert_eq!(p.cue_predicted_mod_deg, Some(180.0));
        // 170 -> 10 is a move of +20 on the axis, not -160.
        let (mut c, mut d) = (EpochCues::default(), EpochCues::default());
        c.push(0.0, Some(false), 170.0, 0.0);
        d.push(0.0, Some(false), 10.0, 0.0);
        let p = EpochCues::predict(&c, &d);
        assert!((p.cue_predicted_shift_deg.unwrap() - 20.0).abs() < 1e-9);
        // Under the sun: the sun's own move.
        let (mut s1, mut s2) = (EpochCues::default(), EpochCues::default());
        s1.push(0.0, Some(true), 0.0, 350.0);
        s2.push(0.0, Some(true), 0.0, 5.0);
        let p = EpochCues::predict(&s1, &s2);
        assert!((p.cue_predicted_shift_deg.unwrap() - 15.0).abs() < 1e-9);
        assert_eq!(p.cue_predicted_mod_deg, Some(360.0));
        // Different cues: no prediction.
        assert_eq!(EpochCues::predict(&s1, &a), TurnCuePrediction::default());
    }
}
