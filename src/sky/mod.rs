//! Sun, skylight polarization and magnetic declination: pure functions over numbers.

pub mod magnetic;
pub mod polarization;
pub mod sun;

use serde::{Deserialize, Serialize};

/// Errors from the sky models (ranges checked before any computation).
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum SkyError {
    /// A latitude outside [-90, 90].
    #[error("latitude {0} deg is outside [-90, 90]")]
    Latitude(f64),
    /// A longitude outside [-180, 180].
    #[error("longitude {0} deg is outside [-180, 180]")]
    Longitude(f64),
    /// An elevation above sea level outside a plausible range.
    #[error("elevation {0} m is outside [-500, 9000]")]
    Elevation(f64),
    /// A value that is not finite.
    #[error("{0} is not a finite number")]
    NotFinite(&'static str),
    /// The solar position algorithm refused the input.
    #[error("solar position: {0}")]
    Spa(String),
}

/// A place on Earth: WGS84 latitude and longitude (east positive), height above sea level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Site {
    /// A name for people.
    pub name: String,
    /// Latitude in degrees, north positive, [-90, 90].
    pub latitude_deg: f64,
    /// Longitude in degrees, east positive, [-180, 180].
    pub longitude_deg: f64,
    /// Height above sea level in metres.
    pub elevation_m: f64,
}

impl Site {
    /// Checks the ranges; the error names the field.
    pub fn validate(&self) -> Result<(), SkyError> {
        check_site(self.latitude_deg, self.longitude_deg, self.elevation_m)
    }
}

/// Checks latitude, longitude and elevation ranges.
pub fn check_site(latitude_deg: f64, longitude_deg: f64, elevation_m: f64) -> Result<(), SkyError> {
    if !latitude_deg.is_finite() {
        return Err(SkyError::NotFinite("latitude"));
    }
    if !longitude_deg.is_finite() {
        return Err(SkyError::NotFinite("longitude"));
    }
    if !elevation_m.is_finite() {
        return Err(SkyError::NotFinite("elevation"));
    }
    if !(-90.0..=90.0).contains(&latitude_deg) {
        return Err(SkyError::Latitude(latitude_deg));
    }
    if !(-180.0..=180.0).contains(&longitude_deg) {
        return Err(SkyError::Longitude(longitude_deg));
    }
    if !(-500.0..=9000.0).contains(&elevation_m) {
        return Err(SkyError::Elevation(elevation_m));
    }
    Ok(())
}

/// The built-in demo site: invented, used by `demo` and `plan` without a rig file.
/// (An invented meadow; the coordinates are ours and describe no real field station.)
pub fn demo_site() -> Site {
    Site {
        name: "Larkfield Meadow (demo)".to_string(),
        latitude_deg: 43.2170,
        longitude_deg: 5.4420,
        elevation_m: 210.0,
    }
}
