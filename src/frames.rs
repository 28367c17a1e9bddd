//! Reference frames for headings (see `shared` design notes, "Conventions").
//!
//! Every angle is in degrees, compass style: 0 = north (or the arena's 0 mark), increasing
//! clockwise as seen from above. Directions live in [0, 360), signed differences in (-180, 180],
//! axial quantities (e-vectors, polarizer axes) in [0, 180).
//!
//! With φ the true bearing of the arena's 0 mark:
//! - arena heading θa: relative to the arena's 0 mark;
//! - world heading θw = θa + φ (mod 360), relative to true north;
//! - sun-relative heading θs = θw − sun azimuth (mod 360), 0 = toward the sun;
//! - e-vector-relative heading = θw − zenith e-vector axis (mod 180), axial.

use serde::{Deserialize, Serialize};

/// Wraps any angle into [0, 360).
///
/// Plain modular reduction; the result is never 360.0 even when rounding would give it.
pub fn wrap_360_deg(angle_deg: f64) -> f64 {
    // `rem_euclid` is `x % 360`, plus 360 when that is negative; for |x| < 360 the remainder
    // is x itself (exactly), so the usual case needs no remainder call: the same arithmetic,
    // the same result to the bit (checked in the tests).
    let w = if angle_deg.abs() < 360.0 {
        if angle_deg < 0.0 {
            angle_deg + 360.0
        } else {
            angle_deg
        }
    } else {
        angle_deg.rem_euclid(360.0)
    };
    if w >= 360.0 { 0.0 } else { w }
}

/// Wraps a signed difference into (-180, 180].
pub fn wrap_signed_deg(angle_deg: f64) -> f64 {
    let w = wrap_360_deg(angle_deg);
    if w > 180.0 { w - 360.0 } else { w }
}

/// Wraps an axial angle into [0, 180).
pub fn wrap_axial_deg(angle_deg: f64) -> f64 {
    let w = angle_deg.rem_euclid(180.0);
    if w >= 180.0 { 0.0 } else { w }
}

/// Signed smallest difference `to − from` in (-180, 180].
pub fn signed_difference_deg(from_deg: f64, to_deg: f64) -> f64 {
    wrap_signed_deg(to_deg - from_deg)
}

/// Which way the sensor's reading grows when the animal turns clockwise seen from above.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// The reading grows when the animal turns clockwise seen from above.
    #[default]
    Clockwise,
    /// The reading grows when the animal turns counterclockwise seen from above (for example a
    /// camera looking up from below sees the animal mirrored).
    Counterclockwise,
}

/// The unit a heading sensor reports in.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum SensorUnit {
    /// Degrees.
    #[default]
    Degrees,
    /// Radians.
    Radians,
    /// Encoder counts; `per_rev` counts make one full revolution.
    Counts {
        /// Counts per revolution, > 0.
        per_rev: f64,
    },
}

/// How a raw sensor value becomes an arena heading.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
pub struct SensorCalibration {
    /// Unit of the raw value.
    pub unit: SensorUnit,
    /// Which way the raw value grows.
    pub direction: Direction,
    /// The arena heading, in degrees, at which the sensor reads zero... expressed as: arena
    /// heading = direction·raw_deg + zero_offset_deg.
    pub zero_offset_deg: f64,
}

impl SensorCalibration {
    /// Converts a raw reading to degrees of the sensor's own scale (no direction, no offset).
    pub fn raw_to_deg(&self, raw: f64) -> f64 {
        match self.unit {
            SensorUnit::Degrees => raw,
            SensorUnit::Radians => raw.to_degrees(),
            SensorUnit::Counts { per_rev } => raw * 360.0 / per_rev,
        }
    }

    /// Arena heading θa in [0, 360) from a raw reading: θa = s·raw_deg + offset, with s = +1
    /// for a clockwise sensor and −1 for a mirrored (counterclockwise) one.
    pub fn arena_heading_deg(&self, raw: f64) -> f64 {
        let deg = self.raw_to_deg(raw);
        let signed = match self.direction {
            Direction::Clockwise => deg,
            Direction::Counterclockwise => -deg,
        };
        wrap_360_deg(signed + self.zero_offset_deg)
    }

    /// The inverse of [`SensorCalibration::arena_heading_deg`]: the raw reading (in [0, one
    /// revolution)) that gives a wanted arena heading. Used by the simulator and by tests.
    pub fn raw_from_arena_heading(&self, arena_heading_deg: f64) -> f64 {
        let signed = arena_heading_deg - self.zero_offset_deg;
        let deg = match self.direction {
            Direction::Clockwise => signed,
            Direction::Counterclockwise => -signed,
        };
        let deg = wrap_360_deg(deg);
        match self.unit {
            SensorUnit::Degrees => deg,
            SensorUnit::Radians => deg.to_radians(),
            SensorUnit::Counts { per_rev } => deg * per_rev / 360.0,
        }
    }
}

/// World heading θw = θa + φ (mod 360), φ the true bearing of the arena's 0 mark.
pub fn world_heading_deg(arena_heading_deg: f64, arena_bearing_deg: f64) -> f64 {
    wrap_360_deg(arena_heading_deg + arena_bearing_deg)
}

/// Arena heading θa = θw − φ (mod 360): the inverse of [`world_heading_deg`].
pub fn arena_heading_from_world_deg(world_heading_deg: f64, arena_bearing_deg: f64) -> f64 {
    wrap_360_deg(world_heading_deg - arena_bearing_deg)
}

/// Sun-relative heading θs = θw − sun azimuth (mod 360); 0 means toward the sun.
pub fn sun_relative_heading_deg(world_heading_deg: f64, sun_azimuth_deg: f64) -> f64 {
    wrap_360_deg(world_heading_deg - sun_azimuth_deg)
}

/// E-vector-relative heading θw − e-vector axis (mod 180), an axial angle in [0, 180).
pub fn evector_relative_heading_deg(world_heading_deg: f64, evector_axis_deg: f64) -> f64 {
    wrap_axial_deg(world_heading_deg - evector_axis_deg)
}

/// True bearing from a magnetic one: true = magnetic + declination (declination east positive,
/// as the World Magnetic Model reports it).
pub fn true_from_magnetic_deg(magnetic_bearing_deg: f64, declination_deg: f64) -> f64 {
    wrap_360_deg(magnetic_bearing_deg + declination_deg)
}

/// Arena mark bearing after the arena has been turned by `rotation_deg` from its start position
/// (positive = clockwise seen from above): φ = φ0 + rotation.
pub fn arena_bearing_after_rotation_deg(start_bearing_deg: f64, rotation_deg: f64) -> f64 {
    wrap_360_deg(start_bearing_deg + rotation_deg)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn wrap_360_is_rem_euclid_to_the_bit() {
        // The definition before the fast path, kept here as the reference.
        let reference = |x: f64| {
            let w = x.rem_euclid(360.0);
            if w >= 360.0 { 0.0 } else { w }
        };
        let mut cases = vec![
            0.0,
            -0.0,
            1e-300,
            -1e-300,
            -1e-14,
            -5e-324,
            359.999_999_999_999_94,
            -359.999_999_999_999_94,
            360.0,
            -360.0,
            720.0,
            -720.5,
            1e20,
            -1e20,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
        ];
        let mut x = 0x9E37_79B9_7F4A_7C15u64;
        for _ in 0..100_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            cases.push((x >> 11) as f64 / (1u64 << 53) as f64 * 1500.0 - 750.0);
        }
        for a in cases {
            assert_eq!(wrap_360_deg(a).to_bits(), reference(a).to_bits(), "{a:e}");
        }
    }

    #[test]
    fn wraps_follow_the_conventions() {
        assert_eq!(wrap_360_deg(-90.0), 270.0);
        assert_eq!(wrap_360_deg(720.0), 0.0);
        assert_eq!(wrap_360_deg(-1e-18), 0.0);
        assert_eq!(wrap_signed_deg(180.0), 180.0);
        assert_eq!(wrap_signed_deg(-180.0), 180.0);
        assert_eq!(wrap_signed_deg(190.0), -170.0);
        assert_eq!(wrap_axial_deg(190.0), 10.0);
        assert_eq!(wrap_axial_deg(-10.0), 170.0);
        assert_eq!(signed_difference_deg(350.0, 10.0), 20.0);
    }

    #[test]
    fn a_clockwise_turn_lowers_the_arena_heading_of_a_world_holder() {
        // Turning the arena +90 makes φ grow by 90; an animal holding world heading 30 shows an
        // arena heading that falls by 90.
        let phi0 = 10.0;
        let a0 = arena_heading_from_world_deg(30.0, phi0);
        let a1 = arena_heading_from_world_deg(30.0, arena_bearing_after_rotation_deg(phi0, 90.0));
        assert!((signed_difference_deg(a0, a1) + 90.0).abs() < 1e-12);
    }

    #[test]
    fn mirrored_counts_sensor() {
        let cal = SensorCalibration {
            unit: SensorUnit::Counts { per_rev: 4096.0 },
            direction: Direction::Counterclockwise,
            zero_offset_deg: 90.0,
        };
        // 1024 counts = 90 degrees of the sensor's own scale, mirrored: 90 - 90 = 0.
        assert!((cal.arena_heading_deg(1024.0) - 0.0).abs() < 1e-12);
        assert!((cal.arena_heading_deg(0.0) - 90.0).abs() < 1e-12);
    }

    #[test]
    fn magnetic_to_true() {
        // 10 degrees east declination: a magnetic bearing of 0 is true 10.
        assert_eq!(true_from_magnetic_deg(0.0, 10.0), 10.0);
        assert_eq!(true_from_magnetic_deg(5.0, -10.0), 355.0);
    }

    proptest! {
        #[test]
        fn wraps_stay_in_range(a in -1e6f64..1e6) {
            let w = wrap_360_deg(a);
            prop_assert!((0.0..360.0).contains(&w));
            let s = wrap_signed_deg(a);
            prop_assert!(s > -180.0 && s <= 180.0);
            let x = wrap_axial_deg(a);
            prop_assert!((0.0..180.0).contains(&x));
        }

        #[test]
        fn world_arena_round_trip(a in 0.0f64..360.0, phi in -720.0f64..720.0) {
            let w = world_heading_deg(a, phi);
            let back = arena_heading_from_world_deg(w, phi);
            prop_assert!(signed_difference_deg(a, back).abs() < 1e-9);
        }

        #[test]
        fn calibration_round_trip(a in 0.0f64..360.0, off in -360.0f64..360.0, mirrored: bool,
                                   unit in 0usize..3) {
            let unit = match unit { 0 => SensorUnit::Degrees, 1 => SensorUnit::Radians,
                                    _ => SensorUnit::Counts { per_rev: 4096.0 } };
            let cal = SensorCalibration {
                unit,
                direction: if mirrored { Direction::Counterclockwise } else { Direction::Clockwise },
                zero_offset_deg: off,
            };
            let raw = cal.raw_from_arena_heading(a);
            prop_assert!(signed_difference_deg(a, cal.arena_heading_deg(raw)).abs() < 1e-9);
        }

        #[test]
        fn evector_relative_is_axial(w in 0.0f64..360.0, e in 0.0f64..180.0) {
            let x = evector_relative_heading_deg(w, e);
            let y = evector_relative_heading_deg(w + 180.0, e);
            prop_assert!((x - y).abs() < 1e-9 || (x - y).abs() > 180.0 - 1e-9);
        }
    }
}
