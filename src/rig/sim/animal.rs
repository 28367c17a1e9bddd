//! What the simulated animal steers toward, given what it is shown.
//!
//! A menotactic animal keeps its own angle to the sun (`goal_deg`, its preferred heading
//! relative to the sun's azimuth). It reads the same angle off the sky's polarization: under a
//! single-scattering Rayleigh sky the zenith e-vector lies across the solar meridian (sun
//! azimuth + 90, mod 180), so its heading relative to the e-vector is `goal − 90`, modulo 180
//! because an e-vector is an axis. Shown only an e-vector (the sun blocked, below the wall or
//! under a filter), it takes whichever of the two headings on that axis is nearer its current
//! heading. With no cue it has no target (its heading drifts as a random walk).

use super::AnimalMode;
use crate::frames::{wrap_360_deg, wrap_signed_deg};

/// What the animal is shown at one instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shown {
    /// The sun's azimuth, degrees clockwise from true north.
    pub sun_azimuth_deg: f64,
    /// The sun's disc is in view.
    pub sun_in_view: bool,
    /// World axis [0, 180) of the e-vector shown; None without polarization.
    pub evector_deg: Option<f64>,
}

/// The world heading the animal steers toward (None: nothing to steer by, or the arena mode,
/// which the caller handles), from its mode, its preferred heading relative to the sun
/// `goal_deg`, what it is shown and its current heading.
pub fn sky_target_deg(
    mode: AnimalMode,
    goal_deg: f64,
    shown: &Shown,
    heading_deg: f64,
) -> Option<f64> {
    let use_sun = mode == AnimalMode::Sky && shown.sun_in_view;
    let use_evector = matches!(mode, AnimalMode::Sky | AnimalMode::Polarization);
    if use_sun {
        return Some(wrap_360_deg(shown.sun_azimuth_deg + goal_deg));
    }
    let ev = shown.evector_deg.filter(|_| use_evector)?;
    let a = wrap_360_deg(ev + goal_deg - 90.0);
    let b = wrap_360_deg(a + 180.0);
    if wrap_signed_deg(a - heading_deg).abs() <= wrap_signed_deg(b - heading_deg).abs() {
        Some(a)
    } else {
        Some(b)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const SUN: Shown = Shown {
        sun_azimuth_deg: 100.0,
        sun_in_view: true,
        evector_deg: Some(10.0),
    };

    #[test]
    fn sun_first_then_the_nearer_axial_heading_then_nothing() {
        assert_eq!(
            sky_target_deg(AnimalMode::Sky, 30.0, &SUN, 0.0),
            Some(130.0)
        );
        // The same sky seen only through its e-vector (10 = 100 + 90 mod 180) gives the same
        // heading when the animal is nearer it, and the opposite one otherwise.
        let pol = Shown {
            sun_in_view: false,
            ..SUN
        };
        assert_eq!(
            sky_target_deg(AnimalMode::Sky, 30.0, &pol, 120.0),
            Some(130.0)
        );
        assert_eq!(
            sky_target_deg(AnimalMode::Sky, 30.0, &pol, 300.0),
            Some(310.0)
        );
        // A polarization animal ignores the sun's disc.
        assert_eq!(
            sky_target_deg(AnimalMode::Polarization, 30.0, &SUN, 300.0),
            Some(310.0)
        );
        let dark = Shown {
            evector_deg: None,
            ..pol
        };
        assert_eq!(sky_target_deg(AnimalMode::Sky, 30.0, &dark, 0.0), None);
        assert_eq!(sky_target_deg(AnimalMode::None, 30.0, &SUN, 0.0), None);
    }
}
