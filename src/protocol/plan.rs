//! The concrete timeline of a session before it runs: when each epoch starts and ends (UTC and
//! local), where the arena stands, and where the sun is, with warnings about the sky.
//!
//! The plan assumes turns and operator prompts take no time and the animal never stops flying;
//! a real session runs later than planned by those delays.

use super::{ArenaMove, Protocol};
use crate::frames::{arena_bearing_after_rotation_deg, signed_difference_deg, wrap_360_deg};
use crate::sky::polarization::zenith_evector_deg;
use crate::sky::sun::{SunPosition, sun_position};
use crate::sky::{Site, SkyError};
use chrono::{DateTime, SecondsFormat, TimeDelta, Utc};
use chrono_tz::Tz;
use serde::Serialize;

/// Sun within this many degrees of the zenith draws a warning: its azimuth swings fast there.
pub const NEAR_ZENITH_DEG: f64 = 5.0;

/// Default for `--max-drift-deg`: sun azimuth drift within one epoch that draws a warning.
pub const DEFAULT_MAX_DRIFT_DEG: f64 = 15.0;

/// The sun is sampled at most this far apart within an epoch (seconds).
const SAMPLE_STEP_S: f64 = 30.0;

/// Where and how the session runs.
#[derive(Debug, Clone)]
pub struct PlanSite {
    /// The rig's site.
    pub site: Site,
    /// Time zone for local display.
    pub time_zone: Tz,
    /// True bearing of the arena's 0 mark at the session start (magnetic already corrected).
    pub mark_bearing_true_deg: f64,
    /// The rig's sky view limit: below this elevation the sun is out of the animal's view.
    pub sky_view_min_elevation_deg: f64,
}

impl PlanSite {
    /// The built-in demo rig: the demo site, Europe/Paris, arena mark at true 0.
    pub fn demo() -> Self {
        Self {
            site: crate::sky::demo_site(),
            time_zone: chrono_tz::Europe::Paris,
            mark_bearing_true_deg: 0.0,
            sky_view_min_elevation_deg: 0.0,
        }
    }
}

/// The sun at one instant, as the plan shows it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PlanSun {
    /// Azimuth, clockwise from true north, [0, 360).
    pub azimuth_deg: f64,
    /// Apparent elevation (with refraction).
    pub elevation_deg: f64,
    /// Zenith e-vector axis, axial [0, 180) (single-scattering Rayleigh sky).
    pub zenith_evector_deg: f64,
}

impl PlanSun {
    fn from(p: SunPosition) -> Self {
        Self {
            azimuth_deg: p.azimuth_deg,
            elevation_deg: p.elevation_deg,
            zenith_evector_deg: zenith_evector_deg(p.azimuth_deg),
        }
    }
}

/// One epoch on the clock.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedEpoch {
    /// 1-based index.
    pub index: usize,
    /// Condition label.
    pub condition: String,
    /// Prompt the operator confirms before the epoch (None: none).
    pub prompt: Option<String>,
    /// Planned duration, seconds.
    pub duration_s: f64,
    /// Seconds from the session start to the epoch's start.
    pub start_offset_s: f64,
    /// Seconds from the session start to the epoch's end.
    pub end_offset_s: f64,
    /// Start, UTC.
    pub start_utc: DateTime<Utc>,
    /// End, UTC.
    pub end_utc: DateTime<Utc>,
    /// Start, local time (RFC 3339 with offset).
    pub start_local: String,
    /// End, local time (RFC 3339 with offset).
    pub end_local: String,
    /// The move as written in the protocol.
    pub arena_move: ArenaMove,
    /// The signed turn made before the epoch (0 when the arena stays), degrees.
    pub turn_before_deg: f64,
    /// Arena position during the epoch, degrees from its start position, [0, 360).
    pub arena_position_deg: f64,
    /// True bearing of the arena's 0 mark during the epoch, [0, 360).
    pub arena_bearing_deg: f64,
    /// The sun at the start.
    pub sun_start: PlanSun,
    /// The sun at the end.
    pub sun_end: PlanSun,
    /// Signed change of the sun's azimuth over the epoch (positive = clockwise), degrees.
    pub sun_azimuth_drift_deg: f64,
    /// Lowest apparent elevation within the epoch (sampled every 30 s at most).
    pub sun_min_elevation_deg: f64,
    /// Highest apparent elevation within the epoch (sampled every 30 s at most).
    pub sun_max_elevation_deg: f64,
    /// What the animal can see.
    pub cues: super::Cues,
}

/// What a warning is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum WarningKind {
    /// The sun is below the horizon during (part of) an epoch.
    SunBelowHorizon,
    /// The sun sets before the session ends.
    SunSets,
    /// The sun comes within 5° of the zenith.
    SunNearZenith,
    /// The sun's azimuth moves more than the chosen limit within one epoch.
    AzimuthDrift,
    /// An epoch that shows the sun has it below the arena's sky view limit for part of it.
    SunOutOfView,
    /// The sun rises into the animal's view during an epoch that shows it.
    SunEntersView,
    /// A warning from the protocol file itself.
    Protocol,
}

impl WarningKind {
    /// Whether the warning says the sun an epoch shows may not be seen (the warnings `run` and
    /// `demo` repeat at the start).
    pub fn is_sun_view(self) -> bool {
        matches!(
            self,
            WarningKind::SunBelowHorizon | WarningKind::SunOutOfView | WarningKind::SunEntersView
        )
    }
}

/// One warning.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanWarning {
    /// What it is about.
    pub kind: WarningKind,
    /// The epoch it concerns (None: the whole session).
    pub epoch: Option<usize>,
    /// One line for people.
    pub message: String,
}

/// A magnetic mark bearing and its correction.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MagneticMark {
    /// The bearing as measured with a compass.
    pub magnetic_bearing_deg: f64,
    /// WMM declination, east positive, degrees.
    pub declination_deg: f64,
}

/// The whole timeline.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// Protocol name.
    pub protocol: String,
    /// Protocol description.
    pub description: String,
    /// Settle window after each turn, seconds.
    pub settle_s: f64,
    /// The site.
    pub site: Site,
    /// IANA time zone of the local times.
    pub time_zone: String,
    /// True bearing of the arena's 0 mark at the session start.
    pub arena_mark_bearing_deg: f64,
    /// When the rig's mark bearing was magnetic: the bearing as measured, and the WMM
    /// declination used to correct it (true = magnetic + declination). None otherwise.
    pub magnetic_mark: Option<MagneticMark>,
    /// Session start, UTC.
    pub start_utc: DateTime<Utc>,
    /// Session end, UTC.
    pub end_utc: DateTime<Utc>,
    /// Session start, local.
    pub start_local: String,
    /// Session end, local.
    pub end_local: String,
    /// Sum of the epoch durations, seconds.
    pub total_duration_s: f64,
    /// The azimuth drift limit used for the warnings, degrees.
    pub max_drift_deg: f64,
    /// What the times assume.
    pub assumptions: String,
    /// The epochs.
    pub epochs: Vec<PlannedEpoch>,
    /// Warnings, sky first, then the protocol's own.
    pub warnings: Vec<PlanWarning>,
}

impl Plan {
    /// Appends the protocol file's own warnings (from `parse_protocol`).
    pub fn add_protocol_warnings(&mut self, warnings: &[String]) {
        self.warnings.extend(warnings.iter().map(|w| PlanWarning {
            kind: WarningKind::Protocol,
            epoch: None,
            message: w.clone(),
        }));
    }
}

/// `start + offset_s`, to the millisecond; saturates at the last (or first) representable
/// instant instead of overflowing (protocol durations are capped, see
/// [`super::file::MAX_SESSION_S`], so only a start at the end of the calendar gets there).
pub fn at_offset(start: DateTime<Utc>, offset_s: f64) -> DateTime<Utc> {
    let ms = (offset_s * 1000.0).round();
    let delta = if ms.is_finite() && ms.abs() < 9.0e15 {
        TimeDelta::try_milliseconds(ms as i64)
    } else {
        None
    };
    delta
        .and_then(|d| start.checked_add_signed(d))
        .unwrap_or(if offset_s < 0.0 {
            DateTime::<Utc>::MIN_UTC
        } else {
            DateTime::<Utc>::MAX_UTC
        })
}

fn local_string(t: DateTime<Utc>, tz: Tz) -> String {
    t.with_timezone(&tz)
        .to_rfc3339_opts(SecondsFormat::Secs, false)
}

/// The timeline of `protocol` run at `site` from `start`, with the sun from the NREL-SPA-style
/// solar position in [`crate::sky::sun::sun_position`].
///
/// Errors only when the sun cannot be computed (a site out of range).
pub fn make_plan(
    protocol: &Protocol,
    site: &PlanSite,
    start: DateTime<Utc>,
    max_drift_deg: f64,
) -> Result<Plan, SkyError> {
    let s = &site.site;
    let (lat, lon, elev) = (s.latitude_deg, s.longitude_deg, s.elevation_m);
    make_plan_with(protocol, site, start, max_drift_deg, |t| {
        sun_position(lat, lon, elev, t)
    })
}

/// As [`make_plan`], with the sun from any function of time (for tests and for callers with
/// their own sun track).
pub fn make_plan_with(
    protocol: &Protocol,
    site: &PlanSite,
    start: DateTime<Utc>,
    max_drift_deg: f64,
    sun: impl Fn(DateTime<Utc>) -> Result<SunPosition, SkyError>,
) -> Result<Plan, SkyError> {
    site.site.validate()?;
    let tz = site.time_zone;
    let mut epochs = Vec::with_capacity(protocol.epochs.len());
    let mut warnings = Vec::new();
    let mut offset = 0.0;
    let mut position = 0.0;
    let mut sunset_warned = false;
    for e in &protocol.epochs {
        let turn = e.arena.turn_from_deg(position);
        position = wrap_360_deg(position + turn);
        let start_offset_s = offset;
        let end_offset_s = offset + e.duration_s;
        offset = end_offset_s;
        let t0 = at_offset(start, start_offset_s);
        let t1 = at_offset(start, end_offset_s);

        // Sample the sun across the epoch.
        let n = (e.duration_s / SAMPLE_STEP_S).ceil().max(1.0) as usize;
        let mut samples: Vec<(f64, SunPosition)> = Vec::with_capacity(n + 1);
        for k in 0..=n {
            let off = start_offset_s + e.duration_s * k as f64 / n as f64;
            samples.push((off, sun(at_offset(start, off))?));
        }
        let first = samples[0].1;
        let last = samples[n].1;
        let mut drift = 0.0;
        let mut min_el = f64::INFINITY;
        let mut max_el = f64::NEG_INFINITY;
        for w in samples.windows(2) {
            drift += signed_difference_deg(w[0].1.azimuth_deg, w[1].1.azimuth_deg);
        }
        for (_, p) in &samples {
            min_el = min_el.min(p.elevation_deg);
            max_el = max_el.max(p.elevation_deg);
        }

        // Below the horizon, sunset within the epoch.
        if min_el < 0.0 {
            let msg = if max_el < 0.0 {
                format!(
                    "epoch {}: the sun is below the horizon for the whole epoch (elevation {:.1} to {:.1} deg)",
                    e.index, min_el, max_el
                )
            } else {
                format!(
                    "epoch {}: the sun is below the horizon for part of the epoch (elevation down to {:.1} deg)",
                    e.index, min_el
                )
            };
            warnings.push(PlanWarning {
                kind: WarningKind::SunBelowHorizon,
                epoch: Some(e.index),
                message: msg,
            });
        }
        if !sunset_warned {
            for w in samples.windows(2) {
                if w[0].1.elevation_deg >= 0.0 && w[1].1.elevation_deg < 0.0 {
                    let set = crossing(start, w[0].0, w[1].0, &sun)?;
                    warnings.push(PlanWarning {
                        kind: WarningKind::SunSets,
                        epoch: Some(e.index),
                        message: format!(
                            "the sun sets at about {} local ({} UTC), during epoch {}, before the session ends",
                            set.with_timezone(&tz).format("%H:%M"),
                            set.format("%H:%M"),
                            e.index
                        ),
                    });
                    sunset_warned = true;
                    break;
                }
            }
        }
        if e.cues.sun == super::cues::SunCue::Visible {
            sun_view_warnings(
                e.index,
                &samples,
                site.sky_view_min_elevation_deg,
                (start, tz),
                &sun,
                &mut warnings,
            )?;
        }
        if max_el > 90.0 - NEAR_ZENITH_DEG {
            warnings.push(PlanWarning {
                kind: WarningKind::SunNearZenith,
                epoch: Some(e.index),
                message: format!(
                    "epoch {}: the sun is within {NEAR_ZENITH_DEG} deg of the zenith (elevation up to {:.1} deg): its azimuth and the zenith e-vector swing fast",
                    e.index, max_el
                ),
            });
        }
        if drift.abs() > max_drift_deg {
            warnings.push(PlanWarning {
                kind: WarningKind::AzimuthDrift,
                epoch: Some(e.index),
                message: format!(
                    "epoch {}: the sun's azimuth moves {:.1} deg during the epoch (limit {} deg)",
                    e.index,
                    drift.abs(),
                    max_drift_deg
                ),
            });
        }

        epochs.push(PlannedEpoch {
            index: e.index,
            condition: e.condition.clone(),
            prompt: e.prompt.clone(),
            duration_s: e.duration_s,
            start_offset_s,
            end_offset_s,
            start_utc: t0,
            end_utc: t1,
            start_local: local_string(t0, tz),
            end_local: local_string(t1, tz),
            arena_move: e.arena,
            turn_before_deg: turn,
            arena_position_deg: position,
            arena_bearing_deg: arena_bearing_after_rotation_deg(
                site.mark_bearing_true_deg,
                position,
            ),
            sun_start: PlanSun::from(first),
            sun_end: PlanSun::from(last),
            sun_azimuth_drift_deg: drift,
            sun_min_elevation_deg: min_el,
            sun_max_elevation_deg: max_el,
            cues: e.cues,
        });
    }
    let end = at_offset(start, offset);
    Ok(Plan {
        protocol: protocol.name.clone(),
        description: protocol.description.clone(),
        settle_s: protocol.settle_s,
        site: site.site.clone(),
        time_zone: tz.name().to_string(),
        arena_mark_bearing_deg: wrap_360_deg(site.mark_bearing_true_deg),
        magnetic_mark: None,
        start_utc: start,
        end_utc: end,
        start_local: local_string(start, tz),
        end_local: local_string(end, tz),
        total_duration_s: offset,
        max_drift_deg,
        assumptions: "turns and operator prompts take no time; no flight stops".to_string(),
        epochs,
        warnings,
    })
}

/// Warnings for an epoch that shows the sun (`samples`: offsets and sun positions across it)
/// when part of it has the sun below the arena's sky view limit `limit_deg` (the horizon
/// itself is [`WarningKind::SunBelowHorizon`]), and when the sun rises into view mid-epoch.
fn sun_view_warnings(
    index: usize,
    samples: &[(f64, SunPosition)],
    limit_deg: f64,
    (start, tz): (DateTime<Utc>, Tz),
    sun: &impl Fn(DateTime<Utc>) -> Result<SunPosition, SkyError>,
    warnings: &mut Vec<PlanWarning>,
) -> Result<(), SkyError> {
    let el = |p: &SunPosition| p.elevation_deg;
    let min_el = samples
        .iter()
        .map(|(_, p)| el(p))
        .fold(f64::INFINITY, f64::min);
    let max_el = samples
        .iter()
        .map(|(_, p)| el(p))
        .fold(f64::NEG_INFINITY, f64::max);
    if limit_deg > 0.0 && min_el < limit_deg && max_el >= 0.0 {
        let part = if max_el < limit_deg {
            format!("for the whole epoch (elevation {min_el:.1} to {max_el:.1} deg")
        } else {
            format!("for part of the epoch (elevation down to {min_el:.1} deg")
        };
        warnings.push(PlanWarning {
            kind: WarningKind::SunOutOfView,
            epoch: Some(index),
            message: format!(
                "epoch {index}: the sun is out of the animal's view {part}, below the arena's sky view limit of {limit_deg} deg)"
            ),
        });
    }
    let view = limit_deg.max(0.0);
    for w in samples.windows(2) {
        if el(&w[0].1) < view && el(&w[1].1) >= view {
            let (mut lo, mut hi) = (w[0].0, w[1].0);
            while hi - lo > 1.0 {
                let mid = 0.5 * (lo + hi);
                if sun(at_offset(start, mid))?.elevation_deg >= view {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            let t = at_offset(start, hi);
            warnings.push(PlanWarning {
                kind: WarningKind::SunEntersView,
                epoch: Some(index),
                message: format!(
                    "epoch {index}: the sun enters the animal's view mid-epoch, at about {} local ({} UTC), when its elevation passes {view} deg",
                    t.with_timezone(&tz).format("%H:%M"),
                    t.format("%H:%M")
                ),
            });
            break;
        }
    }
    Ok(())
}

/// The instant (to the second) between two offsets where the apparent elevation falls below 0,
/// by bisection.
fn crossing(
    start: DateTime<Utc>,
    mut lo_s: f64,
    mut hi_s: f64,
    sun: &impl Fn(DateTime<Utc>) -> Result<SunPosition, SkyError>,
) -> Result<DateTime<Utc>, SkyError> {
    while hi_s - lo_s > 1.0 {
        let mid = 0.5 * (lo_s + hi_s);
        if sun(at_offset(start, mid))?.elevation_deg >= 0.0 {
            lo_s = mid;
        } else {
            hi_s = mid;
        }
    }
    Ok(at_offset(start, hi_s))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::protocol::parse_protocol;
    use chrono::TimeZone;

    fn protocol(text: &str) -> Protocol {
        parse_protocol(text, "p.toml").unwrap().0
    }

    fn start() -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2026, 6, 21, 8, 0, 0).unwrap()
    }

    /// A made-up sun: azimuth and elevation linear in time from `start()`.
    fn linear_sun(
        az0: f64,
        az_per_h: f64,
        el0: f64,
        el_per_h: f64,
    ) -> impl Fn(DateTime<Utc>) -> Result<SunPosition, SkyError> {
        move |t| {
            let h = (t - start()).num_milliseconds() as f64 / 3.6e6;
            let el = el0 + el_per_h * h;
            Ok(SunPosition {
                azimuth_deg: wrap_360_deg(az0 + az_per_h * h),
                elevation_deg: el,
                geometric_elevation_deg: el,
            })
        }
    }

    const TWO: &str =
        "name = \"two\"\nsettle_s = 5\n[[epochs]]\ncount = 2\nduration_s = 1800\nturns = [90]\n";

    #[test]
    fn times_positions_and_bearings() {
        let p = protocol(
            "name = \"x\"\nsettle_s = 5\n[[epochs]]\nduration_s = 60\n[[epochs]]\nduration_s = 90\nturn_deg = 90\n\
             [[epochs]]\nduration_s = 30\ngo_to_deg = 270\n",
        );
        let site = PlanSite {
            mark_bearing_true_deg: 350.0,
            ..PlanSite::demo()
        };
        let plan =
            make_plan_with(&p, &site, start(), 15.0, linear_sun(100.0, 15.0, 40.0, 5.0)).unwrap();
        let e = &plan.epochs;
        assert_eq!(e.len(), 3);
        assert_eq!(
            e[1].start_utc,
            Utc.with_ymd_and_hms(2026, 6, 21, 8, 1, 0).unwrap()
        );
        assert_eq!(
            e[2].end_utc,
            Utc.with_ymd_and_hms(2026, 6, 21, 8, 3, 0).unwrap()
        );
        assert_eq!(plan.end_utc, e[2].end_utc);
        assert_eq!(plan.total_duration_s, 180.0);
        // Paris in June is UTC+2.
        assert_eq!(e[0].start_local, "2026-06-21T10:00:00+02:00");
        assert_eq!(e[1].turn_before_deg, 90.0);
        assert_eq!(e[1].arena_position_deg, 90.0);
        assert_eq!(e[1].arena_bearing_deg, 80.0);
        // 90 → 270 exactly opposite: +180.
        assert_eq!(e[2].turn_before_deg, 180.0);
        assert_eq!(e[2].arena_bearing_deg, 260.0);
        assert!((e[0].sun_start.azimuth_deg - 100.0).abs() < 1e-9);
        assert!((e[0].sun_end.azimuth_deg - 100.25).abs() < 1e-9);
        assert!((e[0].sun_start.zenith_evector_deg - 10.0).abs() < 1e-9);
        assert!(plan.warnings.is_empty(), "{:?}", plan.warnings);
    }

    #[test]
    fn drift_warning_uses_the_limit() {
        let p = protocol(TWO);
        // 40 deg/h over 30 minutes = 20 deg per epoch.
        let plan = make_plan_with(
            &p,
            &PlanSite::demo(),
            start(),
            15.0,
            linear_sun(350.0, 40.0, 30.0, 0.0),
        )
        .unwrap();
        let kinds: Vec<_> = plan.warnings.iter().map(|w| (w.kind, w.epoch)).collect();
        assert_eq!(
            kinds,
            vec![
                (WarningKind::AzimuthDrift, Some(1)),
                (WarningKind::AzimuthDrift, Some(2))
            ]
        );
        // Across north (350 → 10) the drift is +20, not -340.
        assert!((plan.epochs[0].sun_azimuth_drift_deg - 20.0).abs() < 1e-6);
        let plan = make_plan_with(
            &p,
            &PlanSite::demo(),
            start(),
            25.0,
            linear_sun(350.0, 40.0, 30.0, 0.0),
        )
        .unwrap();
        assert!(plan.warnings.is_empty());
    }

    #[test]
    fn sunset_within_the_session_is_found() {
        let p = protocol(TWO);
        // Elevation 6 deg falling 8 deg/h: crosses 0 after 45 minutes, in epoch 2.
        let plan = make_plan_with(
            &p,
            &PlanSite::demo(),
            start(),
            90.0,
            linear_sun(290.0, 10.0, 6.0, -8.0),
        )
        .unwrap();
        let sets: Vec<_> = plan
            .warnings
            .iter()
            .filter(|w| w.kind == WarningKind::SunSets)
            .collect();
        assert_eq!(sets.len(), 1);
        assert_eq!(sets[0].epoch, Some(2));
        assert!(sets[0].message.contains("08:45 UTC"), "{}", sets[0].message);
        assert!(
            sets[0].message.contains("10:45 local"),
            "{}",
            sets[0].message
        );
        let below: Vec<_> = plan
            .warnings
            .iter()
            .filter(|w| w.kind == WarningKind::SunBelowHorizon)
            .map(|w| w.epoch)
            .collect();
        assert_eq!(below, vec![Some(2)]);
    }

    #[test]
    fn near_zenith_is_flagged_even_between_start_and_end() {
        let p = protocol("name = \"z\"\nsettle_s = 5\n[[epochs]]\nduration_s = 3600\n");
        // A sun that peaks mid-epoch at 87 deg: start and end at 80.
        let sun = |t: DateTime<Utc>| {
            let h = (t - start()).num_milliseconds() as f64 / 3.6e6;
            let el = 87.0 - 28.0 * (h - 0.5).powi(2);
            Ok(SunPosition {
                azimuth_deg: 180.0,
                elevation_deg: el,
                geometric_elevation_deg: el,
            })
        };
        let plan = make_plan_with(&p, &PlanSite::demo(), start(), 15.0, sun).unwrap();
        assert_eq!(plan.warnings.len(), 1, "{:?}", plan.warnings);
        assert_eq!(plan.warnings[0].kind, WarningKind::SunNearZenith);
        assert!((plan.epochs[0].sun_start.elevation_deg - 80.0).abs() < 1e-9);
        assert!(plan.epochs[0].sun_max_elevation_deg > 86.9);
    }

    #[test]
    fn a_bad_site_is_an_error() {
        let p = protocol(TWO);
        let mut site = PlanSite::demo();
        site.site.latitude_deg = 95.0;
        assert!(make_plan(&p, &site, start(), 15.0).is_err());
    }

    #[test]
    fn warns_when_a_shown_sun_is_out_of_view_or_enters_it() {
        // The sun rises 12 deg per hour from 18 deg; the wall hides the sky below 19 deg.
        // Epoch 1 (open sky, 10 min) starts out of view and the sun enters the view after
        // 5 min; epoch 2 (sun blocked) draws no warning about the sun's view.
        let p = protocol(
            "name = \"x\"\nsettle_s = 5\n[[epochs]]\nduration_s = 600\n[[epochs]]\nduration_s = 600\n\
             cues = { sun = \"blocked\", polarization = \"none\" }\n",
        );
        let site = PlanSite {
            sky_view_min_elevation_deg: 19.0,
            ..PlanSite::demo()
        };
        let plan =
            make_plan_with(&p, &site, start(), 15.0, linear_sun(100.0, 1.0, 18.0, 12.0)).unwrap();
        let view: Vec<&PlanWarning> = plan
            .warnings
            .iter()
            .filter(|w| w.kind.is_sun_view())
            .collect();
        assert_eq!(view.len(), 2, "{view:?}");
        assert_eq!(view[0].kind, WarningKind::SunOutOfView);
        assert_eq!(view[0].epoch, Some(1));
        assert!(
            view[0].message.contains("for part of the epoch"),
            "{}",
            view[0].message
        );
        assert_eq!(view[1].kind, WarningKind::SunEntersView);
        let at = (start() + TimeDelta::minutes(5))
            .format("%H:%M UTC")
            .to_string();
        assert!(view[1].message.contains(&at), "{} / {at}", view[1].message);
        assert_eq!(
            plan.epochs[1].cues.sun,
            crate::protocol::cues::SunCue::Blocked
        );
        // An open horizon: nothing to say.
        let plan = make_plan_with(
            &p,
            &PlanSite::demo(),
            start(),
            15.0,
            linear_sun(100.0, 1.0, 18.0, 12.0),
        )
        .unwrap();
        assert!(!plan.warnings.iter().any(|w| w.kind.is_sun_view()));
    }
}
