//! Single-scattering Rayleigh sky: degree and angle of polarization of skylight.
//!
//! Model (Rayleigh single scattering; e.g. Strutt 1871, and the form used in insect-navigation
//! work such as Wehner 1976 and Coulson 1988, *Polarization and Intensity of Light in the
//! Atmosphere*): for a sky point at angular distance γ from the sun the degree of
//! polarization is d = dmax·sin²γ / (1 + cos²γ), and the e-vector is perpendicular to the
//! scattering plane through the sun, the observer and the point.
//!
//! Angle conventions: sky points and the sun are given by azimuth (degrees clockwise from true
//! north) and elevation (degrees above the horizon). E-vector directions are axial:
//! - the zenith e-vector is a compass bearing axis in [0, 180) ([`zenith_evector_deg`]);
//! - elsewhere the angle of polarization is measured in the sky from the point's local
//!   meridian (the direction toward the zenith) toward increasing azimuth, in [0, 180)
//!   ([`angle_of_polarization_deg`]): 0 = e-vector vertical, 90 = horizontal.

use super::sun::enu_from_az_el_deg;
use crate::frames::wrap_axial_deg;

/// A typical clear-sky maximum degree of polarization (from memory: real skies reach about
/// 0.6-0.8, below the ideal Rayleigh value 1).
pub const TYPICAL_DMAX: f64 = 0.7;

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Zenith e-vector axis, axial [0, 180): perpendicular to the solar meridian.
///
/// Rayleigh single scattering: at the zenith the e-vector is horizontal and perpendicular to
/// the vertical plane through the sun, so its compass bearing is the sun's azimuth ± 90°.
pub fn zenith_evector_deg(sun_azimuth_deg: f64) -> f64 {
    crate::frames::wrap_axial_deg(sun_azimuth_deg + 90.0)
}

/// Angular distance γ in degrees, [0, 180], between two sky directions given by azimuth and
/// elevation in degrees (computed as atan2(|a×b|, a·b) of the unit vectors, accurate at all
/// separations).
pub fn angular_distance_deg(
    azimuth_a_deg: f64,
    elevation_a_deg: f64,
    azimuth_b_deg: f64,
    elevation_b_deg: f64,
) -> f64 {
    let a = enu_from_az_el_deg(azimuth_a_deg, elevation_a_deg);
    let b = enu_from_az_el_deg(azimuth_b_deg, elevation_b_deg);
    let c = cross(a, b);
    dot(c, c).sqrt().atan2(dot(a, b)).to_degrees()
}

/// Rayleigh degree of polarization for a scattering angle γ (degrees):
/// d = dmax·sin²γ / (1 + cos²γ). Maximal (= dmax) at γ = 90°, zero at 0° and 180°.
pub fn rayleigh_degree_from_gamma(gamma_deg: f64, dmax: f64) -> f64 {
    let (s, c) = gamma_deg.to_radians().sin_cos();
    dmax * s * s / (1.0 + c * c)
}

/// Degree of polarization, in [0, dmax], of the sky point (az, el) for the sun at
/// (sun az, sun el), single-scattering Rayleigh sky: d = dmax·sin²γ / (1 + cos²γ) with γ the
/// angular distance between point and sun. Angles in degrees, azimuth clockwise from north.
pub fn degree_of_polarization(
    sun_azimuth_deg: f64,
    sun_elevation_deg: f64,
    point_azimuth_deg: f64,
    point_elevation_deg: f64,
    dmax: f64,
) -> f64 {
    let gamma = angular_distance_deg(
        sun_azimuth_deg,
        sun_elevation_deg,
        point_azimuth_deg,
        point_elevation_deg,
    );
    rayleigh_degree_from_gamma(gamma, dmax)
}

/// Degree of polarization at the zenith for a sun at `sun_elevation_deg` (γ = 90° − elevation).
pub fn zenith_degree_of_polarization(sun_elevation_deg: f64, dmax: f64) -> f64 {
    rayleigh_degree_from_gamma(90.0 - sun_elevation_deg, dmax)
}

/// The e-vector at a sky point as an east-north-up unit vector, perpendicular to the
/// scattering plane (sun × point), or None where that plane is undefined (the point at the
/// sun or the anti-sun).
pub fn evector_enu(
    sun_azimuth_deg: f64,
    sun_elevation_deg: f64,
    point_azimuth_deg: f64,
    point_elevation_deg: f64,
) -> Option<[f64; 3]> {
    let s = enu_from_az_el_deg(sun_azimuth_deg, sun_elevation_deg);
    let p = enu_from_az_el_deg(point_azimuth_deg, point_elevation_deg);
    let e = cross(s, p);
    let n = dot(e, e).sqrt();
    if n.is_nan() || n <= 1e-12 {
        return None;
    }
    Some([e[0] / n, e[1] / n, e[2] / n])
}

/// Angle of polarization (e-vector direction) at the sky point (az, el) for the sun at
/// (sun az, sun el), single-scattering Rayleigh sky, axial in [0, 180): the angle in the sky
/// from the point's local meridian (direction toward the zenith) toward increasing azimuth.
/// 0 = vertical e-vector, 90 = horizontal. None at the sun and anti-sun (unpolarized) and at
/// the zenith itself (no local meridian; use [`zenith_evector_deg`]).
///
/// Computed as e = sun × point in east-north-up coordinates, then
/// χ = atan2(e·â, e·û) with û the local "up" tangent and â the "azimuth increasing" tangent.
pub fn angle_of_polarization_deg(
    sun_azimuth_deg: f64,
    sun_elevation_deg: f64,
    point_azimuth_deg: f64,
    point_elevation_deg: f64,
) -> Option<f64> {
    if point_elevation_deg >= 90.0 - 1e-9 {
        return None;
    }
    let e = evector_enu(
        sun_azimuth_deg,
        sun_elevation_deg,
        point_azimuth_deg,
        point_elevation_deg,
    )?;
    let (sa, ca) = point_azimuth_deg.to_radians().sin_cos();
    let (se, ce) = point_elevation_deg.to_radians().sin_cos();
    let up = [-se * sa, -se * ca, ce];
    let along = [ca, -sa, 0.0];
    Some(wrap_axial_deg(dot(e, along).atan2(dot(e, up)).to_degrees()))
}

/// Axial angle in [0, 180) from the e-vector axis to a heading, clockwise seen from above:
/// (heading − e-vector) mod 180. Same convention as
/// [`crate::frames::evector_relative_heading_deg`].
pub fn heading_evector_axial_deg(heading_deg: f64, evector_axis_deg: f64) -> f64 {
    wrap_axial_deg(heading_deg - evector_axis_deg)
}

/// Smallest unsigned angle, in [0, 90], between a heading's line and the e-vector axis
/// (0 = heading along the e-vector, 90 = across it).
pub fn heading_evector_acute_deg(heading_deg: f64, evector_axis_deg: f64) -> f64 {
    let a = heading_evector_axial_deg(heading_deg, evector_axis_deg);
    if a > 90.0 { 180.0 - a } else { a }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zenith_evector_is_perpendicular_to_solar_meridian() {
        for sun_az in [0.0, 37.5, 90.0, 179.9, 180.0, 271.0, 359.9] {
            for sun_el in [1.0, 30.0, 60.0, 85.0] {
                let z = zenith_evector_deg(sun_az);
                assert!((0.0..180.0).contains(&z));
                // The solar meridian's axis is the sun's azimuth mod 180; perpendicular = 90°.
                let off = heading_evector_acute_deg(sun_az, z);
                assert!((off - 90.0).abs() < 1e-9, "{sun_az} {z}");
                // The cross-product e-vector at the zenith is horizontal with the same bearing.
                let e = evector_enu(sun_az, sun_el, 0.0, 90.0).unwrap();
                assert!(e[2].abs() < 1e-12);
                let bearing = wrap_axial_deg(e[0].atan2(e[1]).to_degrees());
                let d = crate::frames::wrap_signed_deg(2.0 * (bearing - z)).abs();
                assert!(d < 1e-9, "{sun_az} {sun_el}: {bearing} vs {z}");
            }
        }
    }

    #[test]
    fn polarization_maximal_at_90_deg_and_zero_at_sun_and_antisun() {
        let (saz, sel) = (135.0, 25.0);
        assert!(degree_of_polarization(saz, sel, saz, sel, 1.0).abs() < 1e-12);
        assert!(degree_of_polarization(saz, sel, saz + 180.0, -sel, 1.0).abs() < 1e-12);
        // The zenith is 65° from this sun; a point 90° away is maximal.
        let d90 = degree_of_polarization(saz, sel, saz + 180.0, 90.0 - sel, 0.8);
        assert!((d90 - 0.8).abs() < 1e-12, "{d90}");
        // Every point of the great circle 90° from the sun is maximal; others are less.
        for g in [0.0, 10.0, 45.0, 80.0, 89.0, 91.0, 120.0, 170.0, 180.0] {
            let d = rayleigh_degree_from_gamma(g, 1.0);
            assert!(d <= 1.0 + 1e-15);
            if g != 90.0 {
                assert!(d < rayleigh_degree_from_gamma(90.0, 1.0));
            }
        }
        assert!(angle_of_polarization_deg(saz, sel, saz, sel).is_none());
        assert!(
            (zenith_degree_of_polarization(0.0, 1.0) - 1.0).abs() < 1e-12,
            "sun on the horizon: zenith maximal"
        );
    }

    #[test]
    fn evector_perpendicular_to_scattering_plane() {
        let (saz, sel) = (200.0, 40.0);
        let s = enu_from_az_el_deg(saz, sel);
        for (az, el) in [(10.0, 20.0), (100.0, 70.0), (300.0, 5.0), (200.0, 80.0)] {
            let p = enu_from_az_el_deg(az, el);
            let e = evector_enu(saz, sel, az, el).unwrap();
            assert!(dot(e, s).abs() < 1e-12);
            assert!(dot(e, p).abs() < 1e-12);
        }
        // In the solar meridian the e-vector is horizontal (AoP 90).
        let a = angle_of_polarization_deg(saz, sel, saz + 180.0, 30.0).unwrap();
        assert!((a - 90.0).abs() < 1e-9, "{a}");
        // On the horizon 90° from a sun on the horizon, the e-vector is vertical (AoP 0).
        let a = angle_of_polarization_deg(0.0, 0.0, 90.0, 0.0).unwrap();
        assert!(a.min(180.0 - a) < 1e-9, "{a}");
    }

    #[test]
    fn heading_evector_angles() {
        assert!((heading_evector_axial_deg(100.0, 10.0) - 90.0).abs() < 1e-12);
        assert!((heading_evector_axial_deg(190.0, 10.0)).abs() < 1e-12);
        assert!((heading_evector_acute_deg(170.0, 10.0) - 20.0).abs() < 1e-12);
        assert!((heading_evector_acute_deg(5.0, 175.0) - 10.0).abs() < 1e-12);
    }
}
