//! Apparent sun position. (API fixed by the lead; body owned by the sky work.)

use super::SkyError;
use chrono::{DateTime, NaiveDate, Utc};
use serde::Serialize;

/// The sun as seen from a site.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SunPosition {
    /// Azimuth, clockwise from true north, [0, 360).
    pub azimuth_deg: f64,
    /// Apparent elevation (with atmospheric refraction).
    pub elevation_deg: f64,
    /// Geometric (unrefracted) elevation.
    pub geometric_elevation_deg: f64,
}

/// Sun azimuth and apparent elevation at one UTC instant (sub-second resolution).
pub fn sun_position(
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    t: DateTime<Utc>,
) -> Result<SunPosition, SkyError> {
    let _ = (latitude_deg, longitude_deg, elevation_m, t);
    todo!("sky work")
}

/// Cheap per-sample sun geometry for a session: exact values on a coarse grid, interpolated.
#[derive(Debug, Clone)]
pub struct SunTrack {
    _private: (),
}

impl SunTrack {
    /// A track for one site starting at `start` (t_s = 0).
    pub fn new(
        latitude_deg: f64,
        longitude_deg: f64,
        elevation_m: f64,
        start: DateTime<Utc>,
    ) -> Result<Self, SkyError> {
        let _ = (latitude_deg, longitude_deg, elevation_m, start);
        todo!("sky work")
    }

    /// Sun position `t_s` seconds after the track's start.
    pub fn at(&mut self, t_s: f64) -> SunPosition {
        let _ = t_s;
        todo!("sky work")
    }
}

/// Sunrise, sunset and solar noon of one date.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SunDay {
    /// Sunrise (None in polar day or night).
    pub sunrise: Option<DateTime<Utc>>,
    /// Sunset (None in polar day or night).
    pub sunset: Option<DateTime<Utc>>,
    /// Solar noon (transit).
    pub solar_noon: DateTime<Utc>,
    /// The sun never sets that day.
    pub polar_day: bool,
    /// The sun never rises that day.
    pub polar_night: bool,
}

/// Sunrise, sunset and solar noon for planning.
pub fn sun_day(
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    date: NaiveDate,
) -> Result<SunDay, SkyError> {
    let _ = (latitude_deg, longitude_deg, elevation_m, date);
    todo!("sky work")
}
