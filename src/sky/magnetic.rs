//! Magnetic declination from the World Magnetic Model. (API fixed by the lead.)

use chrono::NaiveDate;

/// Declination (east positive) in degrees, or None outside the model's validity.
pub fn declination_deg(
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    date: NaiveDate,
) -> Option<f64> {
    let _ = (latitude_deg, longitude_deg, elevation_m, date);
    todo!("sky work")
}
