//! Single-scattering Rayleigh sky. (API fixed by the lead; body owned by the sky work.)

/// Zenith e-vector axis, axial [0, 180): perpendicular to the solar meridian.
pub fn zenith_evector_deg(sun_azimuth_deg: f64) -> f64 {
    crate::frames::wrap_axial_deg(sun_azimuth_deg + 90.0)
}
