//! `protocol::plan::make_plan` at real dates and invented sites: the sky warnings fire where
//! they should. Check values: pvlib 0.16.1, `get_solarposition(..., method="nrel_numpy")`.

use chrono::{TimeZone, Utc};
use skybearing::protocol::plan::{PlanSite, WarningKind, make_plan};
use skybearing::protocol::{demo_protocol, smoke_protocol};
use skybearing::sky::Site;

/// An invented spot on the Tropic of Cancer ("Saltpan Ridge (demo)", 23.2 N, 10.0 E, 300 m).
/// pvlib 0.16.1: on 2026-06-21 the apparent elevation peaks at 89.76 deg at 11:22 UTC.
fn tropic() -> PlanSite {
    PlanSite {
        site: Site {
            name: "Saltpan Ridge (demo)".to_string(),
            latitude_deg: 23.2,
            longitude_deg: 10.0,
            elevation_m: 300.0,
        },
        time_zone: chrono_tz::UTC,
        mark_bearing_true_deg: 0.0,
        sky_view_min_elevation_deg: 0.0,
    }
}

#[test]
fn tropical_noon_warns_sun_near_zenith_and_fast_drift() {
    let start = Utc.with_ymd_and_hms(2026, 6, 21, 11, 5, 0).unwrap();
    let plan = make_plan(&demo_protocol(), &tropic(), start, 15.0).unwrap();
    let zenith: Vec<usize> = plan
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::SunNearZenith)
        .filter_map(|w| w.epoch)
        .collect();
    // Epoch 6 runs 11:20-11:23, across the transit.
    assert!(zenith.contains(&6), "{:?}", plan.warnings);
    let e6 = &plan.epochs[5];
    assert!(
        e6.sun_max_elevation_deg > 89.5,
        "{}",
        e6.sun_max_elevation_deg
    );
    let drift: Vec<usize> = plan
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::AzimuthDrift)
        .filter_map(|w| w.epoch)
        .collect();
    assert!(drift.contains(&6), "{:?}", plan.warnings);
    // Across the transit the sun passes north of the zenith (declination 23.44 > 23.2): the
    // azimuth swings through north, far more than 15 deg, counterclockwise.
    assert!(
        e6.sun_azimuth_drift_deg < -90.0,
        "{}",
        e6.sun_azimuth_drift_deg
    );
    assert!(
        !plan
            .warnings
            .iter()
            .any(|w| w.kind == WarningKind::SunBelowHorizon)
    );
}

#[test]
fn same_site_in_the_morning_is_quiet() {
    let start = Utc.with_ymd_and_hms(2026, 6, 21, 6, 0, 0).unwrap();
    let plan = make_plan(&demo_protocol(), &tropic(), start, 15.0).unwrap();
    assert!(plan.warnings.is_empty(), "{:?}", plan.warnings);
}

#[test]
fn night_at_the_demo_site_is_below_the_horizon_throughout() {
    let start = Utc.with_ymd_and_hms(2026, 12, 21, 22, 0, 0).unwrap();
    let plan = make_plan(&smoke_protocol(), &PlanSite::demo(), start, 15.0).unwrap();
    let below: Vec<_> = plan
        .warnings
        .iter()
        .filter(|w| w.kind == WarningKind::SunBelowHorizon)
        .collect();
    assert_eq!(below.len(), 3, "{:?}", plan.warnings);
    assert!(below[0].message.contains("whole epoch"));
    assert!(!plan.warnings.iter().any(|w| w.kind == WarningKind::SunSets));
    // Winter in Paris: local time UTC+1.
    assert_eq!(plan.epochs[0].start_local, "2026-12-21T23:00:00+01:00");
}
