//! What the animal can see in an epoch: the sun's disc and the polarization pattern.
//!
//! A protocol entry's `cues` table (schema in `docs/protocols.md`) is read into [`Cues`];
//! without it an epoch is open sky. The functions here turn the cues and the sky into what the
//! animal is shown at one instant: whether the sun's disc is in view and which e-vector axis it
//! sees overhead. Pure functions over numbers; no clock.

use serde::{Deserialize, Serialize};
use std::ops::Range;
use toml::Spanned;

use crate::frames::wrap_axial_deg;
use crate::sky::polarization::zenith_evector_deg;

/// Whether the sun's disc can be seen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum SunCue {
    /// Open to the sun (it is still out of view below the arena's sky view limit).
    #[default]
    Visible,
    /// A shade or a diffuser hides the disc.
    Blocked,
}

/// What a linear polarizer's axis is fixed to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FilterFrame {
    /// Mounted on the arena: the axis turns with every arena turn.
    Arena,
    /// Fixed above the arena: the axis stays put in the world.
    World,
}

/// Where the polarization the animal sees comes from.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum PolarizationCue {
    /// The sky's own pattern.
    #[default]
    Sky,
    /// A linear filter over the arena.
    Filter {
        /// Transmission axis, axial degrees [0, 180) clockwise from the arena's 0 mark (for a
        /// world-fixed filter: with the arena at its start position).
        axis_deg: f64,
        /// What the filter turns with.
        turns_with: FilterFrame,
    },
    /// No polarization (a diffuser depolarizes the light).
    None,
}

/// What the animal can see during one epoch.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
pub struct Cues {
    /// The sun's disc.
    pub sun: SunCue,
    /// The polarization.
    pub polarization: PolarizationCue,
}

impl Cues {
    /// Open sky: sun visible, the sky's polarization (the default).
    pub const OPEN_SKY: Cues = Cues {
        sun: SunCue::Visible,
        polarization: PolarizationCue::Sky,
    };

    /// Whether the sun's disc is in the animal's view: the cue is visible, the sun's apparent
    /// elevation is above the horizon (0) and at or above the arena's sky view limit
    /// `view_min_elevation_deg` (the wall hides the sky below it).
    pub fn sun_in_view(&self, sun_elevation_deg: f64, view_min_elevation_deg: f64) -> bool {
        self.sun == SunCue::Visible
            && sun_elevation_deg > 0.0
            && sun_elevation_deg >= view_min_elevation_deg
    }

    /// The world-frame axis, axial [0, 180) clockwise from true north, of the e-vector the
    /// animal is shown overhead; `None` without polarization.
    ///
    /// - sky: the zenith e-vector of the single-scattering Rayleigh sky, perpendicular to the
    ///   solar meridian, `sun_azimuth_deg + 90` mod 180 ([`zenith_evector_deg`]);
    /// - filter turning with the arena: its axis plus the arena mark's true bearing now,
    ///   `axis + arena_bearing_deg` mod 180;
    /// - world-fixed filter: its axis plus the mark's true bearing at the arena's start
    ///   position, `axis + start_bearing_deg` mod 180, whatever the arena does.
    pub fn evector_shown_deg(
        &self,
        sun_azimuth_deg: f64,
        arena_bearing_deg: f64,
        start_bearing_deg: f64,
    ) -> Option<f64> {
        match self.polarization {
            PolarizationCue::Sky => Some(zenith_evector_deg(sun_azimuth_deg)),
            PolarizationCue::Filter {
                axis_deg,
                turns_with: FilterFrame::Arena,
            } => Some(wrap_axial_deg(axis_deg + arena_bearing_deg)),
            PolarizationCue::Filter {
                axis_deg,
                turns_with: FilterFrame::World,
            } => Some(wrap_axial_deg(axis_deg + start_bearing_deg)),
            PolarizationCue::None => None,
        }
    }

    /// Short words for people: "sun visible, sky polarization", "sun blocked, filter at 0 deg
    /// turning with the arena", "sun blocked, no polarization".
    pub fn describe(&self) -> String {
        let sun = match self.sun {
            SunCue::Visible => "sun visible",
            SunCue::Blocked => "sun blocked",
        };
        let pol = match self.polarization {
            PolarizationCue::Sky => "sky polarization".to_string(),
            PolarizationCue::Filter {
                axis_deg,
                turns_with,
            } => format!(
                "filter at {} deg {}",
                fmt_deg(axis_deg),
                match turns_with {
                    FilterFrame::Arena => "turning with the arena",
                    FilterFrame::World => "fixed in the world",
                }
            ),
            PolarizationCue::None => "no polarization".to_string(),
        };
        format!("{sun}, {pol}")
    }
}

fn fmt_deg(x: f64) -> String {
    if x.fract() == 0.0 {
        format!("{x:.0}")
    } else {
        format!("{x}")
    }
}

/// A `cues` table as written.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCues {
    #[serde(default)]
    sun: Option<Spanned<String>>,
    #[serde(default)]
    polarization: Option<Spanned<String>>,
    #[serde(default)]
    filter_axis_deg: Option<Spanned<f64>>,
    #[serde(default)]
    filter_turns_with: Option<Spanned<String>>,
}

/// A problem with a `cues` table: where it is, which key (below `cues.`), and what is wrong.
pub(super) type CueError = (Range<usize>, &'static str, String);

fn choice<'a>(
    v: &'a Spanned<String>,
    key: &'static str,
    allowed: &[&str],
) -> Result<&'a str, CueError> {
    let s = v.get_ref().as_str();
    if allowed.contains(&s) {
        Ok(s)
    } else {
        let list: Vec<String> = allowed.iter().map(|a| format!("\"{a}\"")).collect();
        Err((
            v.span(),
            key,
            format!("unknown value \"{s}\" (expected {})", list.join(" or ")),
        ))
    }
}

impl RawCues {
    /// Checks the table; `table_span` is where to point when a required key is missing.
    pub(super) fn validate(&self, table_span: Range<usize>) -> Result<Cues, CueError> {
        let sun = match &self.sun {
            None => SunCue::Visible,
            Some(v) => match choice(v, "sun", &["visible", "blocked"])? {
                "blocked" => SunCue::Blocked,
                _ => SunCue::Visible,
            },
        };
        let kind = match &self.polarization {
            None => "sky",
            Some(v) => choice(v, "polarization", &["sky", "filter", "none"])?,
        };
        let polarization = match kind {
            "filter" => {
                let axis = self.filter_axis_deg.as_ref().ok_or_else(|| {
                    (
                        table_span.clone(),
                        "filter_axis_deg",
                        "missing: polarization = \"filter\" needs the filter's axis (degrees from the arena's 0 mark)".to_string(),
                    )
                })?;
                let a = *axis.get_ref();
                if !a.is_finite() {
                    return Err((
                        axis.span(),
                        "filter_axis_deg",
                        format!("must be a finite number (got {a})"),
                    ));
                }
                let with = self.filter_turns_with.as_ref().ok_or_else(|| {
                    (
                        table_span.clone(),
                        "filter_turns_with",
                        "missing: polarization = \"filter\" needs filter_turns_with = \"arena\" or \"world\"".to_string(),
                    )
                })?;
                let turns_with = match choice(with, "filter_turns_with", &["arena", "world"])? {
                    "world" => FilterFrame::World,
                    _ => FilterFrame::Arena,
                };
                PolarizationCue::Filter {
                    axis_deg: wrap_axial_deg(a),
                    turns_with,
                }
            }
            other => {
                for (present, key) in [
                    (
                        self.filter_axis_deg.as_ref().map(|v| v.span()),
                        "filter_axis_deg",
                    ),
                    (
                        self.filter_turns_with.as_ref().map(|v| v.span()),
                        "filter_turns_with",
                    ),
                ] {
                    if let Some(s) = present {
                        return Err((
                            s,
                            key,
                            format!(
                                "only allowed with polarization = \"filter\" (here \"{other}\")"
                            ),
                        ));
                    }
                }
                if other == "none" {
                    PolarizationCue::None
                } else {
                    PolarizationCue::Sky
                }
            }
        };
        Ok(Cues { sun, polarization })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn filter(axis_deg: f64, turns_with: FilterFrame) -> Cues {
        Cues {
            sun: SunCue::Blocked,
            polarization: PolarizationCue::Filter {
                axis_deg,
                turns_with,
            },
        }
    }

    #[test]
    fn evector_shown_per_cue() {
        // Sky: single-scattering Rayleigh zenith e-vector, perpendicular to the solar meridian
        // (sun azimuth + 90, mod 180).
        let sky = Cues::OPEN_SKY;
        assert_eq!(sky.evector_shown_deg(100.0, 30.0, 0.0), Some(10.0));
        assert_eq!(sky.evector_shown_deg(250.0, 30.0, 0.0), Some(160.0));
        // A filter turning with the arena: axis + the mark's bearing now, mod 180.
        let f = filter(20.0, FilterFrame::Arena);
        assert_eq!(f.evector_shown_deg(100.0, 0.0, 0.0), Some(20.0));
        assert_eq!(f.evector_shown_deg(100.0, 90.0, 0.0), Some(110.0));
        assert_eq!(f.evector_shown_deg(100.0, 270.0, 0.0), Some(110.0));
        assert_eq!(f.evector_shown_deg(100.0, 180.0, 0.0), Some(20.0));
        // A world-fixed filter: its world axis whatever the arena does.
        let w = filter(20.0, FilterFrame::World);
        assert_eq!(w.evector_shown_deg(100.0, 90.0, 45.0), Some(65.0));
        assert_eq!(w.evector_shown_deg(300.0, 200.0, 45.0), Some(65.0));
        // A diffuser: none.
        let d = Cues {
            sun: SunCue::Blocked,
            polarization: PolarizationCue::None,
        };
        assert_eq!(d.evector_shown_deg(100.0, 0.0, 0.0), None);
    }

    #[test]
    fn sun_in_view_needs_the_cue_the_horizon_and_the_wall() {
        let sky = Cues::OPEN_SKY;
        assert!(sky.sun_in_view(20.0, 20.0));
        assert!(!sky.sun_in_view(19.99, 20.0));
        assert!(sky.sun_in_view(0.5, 0.0));
        assert!(!sky.sun_in_view(-0.5, -5.0));
        assert!(!filter(0.0, FilterFrame::Arena).sun_in_view(60.0, 0.0));
    }

    #[test]
    fn describes_itself() {
        assert_eq!(Cues::default().describe(), "sun visible, sky polarization");
        assert_eq!(
            filter(0.0, FilterFrame::Arena).describe(),
            "sun blocked, filter at 0 deg turning with the arena"
        );
    }

    fn parse(cues: &str) -> Result<Vec<Cues>, String> {
        let text = format!(
            "name = \"t\"\nsettle_s = 0\n\n[[epochs]]\nduration_s = 10\n\n[[epochs]]\ncount = 2\nduration_s = 10\n{cues}\n"
        );
        super::super::parse_protocol(&text, "p.toml")
            .map(|(p, _)| p.epochs.iter().map(|e| e.cues).collect())
            .map_err(|e| e.to_string())
    }

    #[test]
    fn protocol_entries_carry_their_cues() {
        let c = parse(
            "cues = { sun = \"blocked\", polarization = \"filter\", filter_axis_deg = 200, filter_turns_with = \"world\" }",
        )
        .unwrap();
        assert_eq!(c[0], Cues::OPEN_SKY);
        assert_eq!(c[1], c[2]);
        assert_eq!(
            c[1],
            Cues {
                sun: SunCue::Blocked,
                polarization: PolarizationCue::Filter {
                    axis_deg: 20.0,
                    turns_with: FilterFrame::World
                }
            }
        );
        let c = parse("[epochs.cues]\nsun = \"blocked\"\npolarization = \"none\"").unwrap();
        assert_eq!(c[2].polarization, PolarizationCue::None);
    }

    #[test]
    fn bad_cues_are_one_line_errors_with_line_and_field() {
        let e = parse("cues = { sun = \"hidden\" }").unwrap_err();
        assert!(
            e.starts_with("p.toml:10: epochs[2].cues.sun: unknown value"),
            "{e}"
        );
        let e = parse("cues = { polarization = \"filter\", filter_turns_with = \"arena\" }")
            .unwrap_err();
        assert!(e.contains("epochs[2].cues.filter_axis_deg: missing"), "{e}");
        let e = parse("cues = { polarization = \"sky\", filter_axis_deg = 3 }").unwrap_err();
        assert!(e.contains("cues.filter_axis_deg: only allowed with"), "{e}");
        let e = parse("cues = { sun = \"blocked\", moon = 1 }").unwrap_err();
        assert!(e.starts_with("p.toml:10:") && e.contains("moon"), "{e}");
        assert!(!e.contains('\n'));
    }
}
