//! Magnetic declination from the World Magnetic Model.
//!
//! Method: the World Magnetic Model (NOAA/NCEI and BGS) via the `world_magnetic_model` crate
//! (1.2025), which bundles WMM2020 (for 2020-2024) and WMM2025 (for 2025-2029) and picks by
//! date. Declination is east positive (true = magnetic + declination), in degrees.
//!
//! The site's height above sea level is passed as the height above the WGS 84 ellipsoid the
//! model wants; the geoid separation (under ±110 m) changes declination by far less than the
//! model's own uncertainty (about 0.3-0.5° at mid latitudes, WMM2025 technical report).

use chrono::{Datelike, NaiveDate};
use world_magnetic_model::GeomagneticField;
use world_magnetic_model::time::Date;
use world_magnetic_model::uom::si::angle::degree;
use world_magnetic_model::uom::si::f32::{Angle, Length};
use world_magnetic_model::uom::si::length::meter;

/// First day the bundled models are valid (WMM2020 epoch start).
pub fn validity_start() -> NaiveDate {
    NaiveDate::from_ymd_opt(2020, 1, 1).unwrap_or(NaiveDate::MIN)
}

/// Last day the bundled models are valid (WMM2025 ends 2029-12-31).
pub fn validity_end() -> NaiveDate {
    NaiveDate::from_ymd_opt(2029, 12, 31).unwrap_or(NaiveDate::MAX)
}

/// Declination and its 1σ uncertainty (WMM error model), degrees.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Declination {
    /// Declination, east positive, degrees.
    pub declination_deg: f64,
    /// 1σ uncertainty of the declination from the WMM error model, degrees.
    pub uncertainty_deg: f64,
    /// The site lies in a WMM caution or blackout zone (weak horizontal field near the
    /// magnetic poles): compasses are unreliable there.
    pub near_magnetic_pole: bool,
}

/// Declination with uncertainty, or None outside the model's validity (date outside
/// [`validity_start`]..=[`validity_end`], latitude/longitude out of range, height outside
/// −1..850 km, non-finite input). World Magnetic Model (WMM2020/WMM2025) via
/// `world_magnetic_model`; east positive, degrees.
pub fn declination(
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    date: NaiveDate,
) -> Option<Declination> {
    if !(latitude_deg.is_finite() && longitude_deg.is_finite() && elevation_m.is_finite()) {
        return None;
    }
    let ordinal = u16::try_from(date.ordinal()).ok()?;
    let wmm_date = Date::from_ordinal_date(date.year(), ordinal).ok()?;
    let field = GeomagneticField::new(
        Length::new::<meter>(elevation_m as f32),
        Angle::new::<degree>(latitude_deg as f32),
        Angle::new::<degree>(longitude_deg as f32),
        wmm_date,
    )
    .ok()?;
    Some(Declination {
        declination_deg: f64::from(field.declination().get::<degree>()),
        uncertainty_deg: f64::from(field.declination_uncertainty().get::<degree>()),
        near_magnetic_pole: field.declination_warning().is_some(),
    })
}

/// Declination (east positive) in degrees, or None outside the model's validity.
///
/// World Magnetic Model (WMM2020 for 2020-2024, WMM2025 for 2025-2029) via the
/// `world_magnetic_model` crate; see [`declination`] for the validity rules.
pub fn declination_deg(
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    date: NaiveDate,
) -> Option<f64> {
    declination(latitude_deg, longitude_deg, elevation_m, date).map(|d| d.declination_deg)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    #[test]
    fn none_outside_validity_window() {
        assert!(declination_deg(43.2, 5.4, 210.0, d(2019, 12, 31)).is_none());
        assert!(declination_deg(43.2, 5.4, 210.0, d(2020, 1, 1)).is_some());
        assert!(declination_deg(43.2, 5.4, 210.0, d(2029, 12, 31)).is_some());
        assert!(declination_deg(43.2, 5.4, 210.0, d(2030, 1, 1)).is_none());
        assert_eq!(
            validity_start()
                .pred_opt()
                .and_then(|x| declination_deg(0.0, 0.0, 0.0, x)),
            None
        );
        assert_eq!(
            validity_end()
                .succ_opt()
                .and_then(|x| declination_deg(0.0, 0.0, 0.0, x)),
            None
        );
    }

    #[test]
    fn none_for_bad_site() {
        assert!(declination_deg(123.0, 5.4, 0.0, d(2026, 6, 1)).is_none());
        assert!(declination_deg(43.0, 190.0, 0.0, d(2026, 6, 1)).is_none());
        assert!(declination_deg(f64::NAN, 0.0, 0.0, d(2026, 6, 1)).is_none());
        assert!(declination_deg(43.0, 5.0, -5000.0, d(2026, 6, 1)).is_none());
    }

    /// NOAA/BGS WMM2025 published test values (WMM2025_TestValues.txt; D to 0.01°), as
    /// transcribed in a public repository's test file; not re-read from NOAA's PDF here.
    /// Decimal year 2027.5 is taken as 2027-07-02 (our dates are whole days: 0.0014 yr off,
    /// under 0.001° of secular change at these points).
    #[test]
    fn wmm2025_published_test_values() {
        let cases = [
            (d(2025, 1, 1), 0.0, 80.0, 0.0, 1.28),
            (d(2025, 1, 1), 0.0, 0.0, 120.0, -0.16),
            (d(2025, 1, 1), 0.0, -80.0, -120.0, 68.78),
            (d(2025, 1, 1), 100.0, 80.0, 0.0, 0.85),
            (d(2025, 1, 1), 100.0, 0.0, 120.0, -0.15),
            (d(2025, 1, 1), 100.0, -80.0, -120.0, 68.21),
            (d(2027, 7, 2), 0.0, 80.0, 0.0, 2.59),
            (d(2027, 7, 2), 0.0, 0.0, 120.0, -0.24),
            (d(2027, 7, 2), 0.0, -80.0, -120.0, 68.49),
            (d(2027, 7, 2), 100.0, 80.0, 0.0, 2.16),
            (d(2027, 7, 2), 100.0, 0.0, 120.0, -0.23),
            (d(2027, 7, 2), 100.0, -80.0, -120.0, 67.93),
        ];
        for (date, h_km, lat, lon, want) in cases {
            let got = declination_deg(lat, lon, h_km * 1000.0, date).unwrap();
            assert!(
                (got - want).abs() <= 0.011,
                "{date} {h_km} km {lat},{lon}: {got} vs {want}"
            );
        }
    }

    #[test]
    fn crate_documented_example() {
        // The crate's own documentation example (world_magnetic_model 1.2025.0 lib.rs):
        // 100 m, 37.03° N, 7.91° W, day 15 of 2029 → −0.17 ± 0.33°.
        let x = declination(37.03, -7.91, 100.0, d(2029, 1, 15)).unwrap();
        assert!((x.declination_deg - -0.17).abs() < 0.006, "{x:?}");
        assert!((x.uncertainty_deg - 0.33).abs() < 0.006, "{x:?}");
        assert!(!x.near_magnetic_pole);
    }
}
