//! Sine and cosine of an angle in degrees, reduced exactly in degrees.
//!
//! The angle is reduced to [−45°, 45°] plus a quadrant in degrees, which is exact in floating
//! point (the remainder of a float by a multiple of 90 is representable), so multiples of 90°
//! give exact 0 and ±1 and large angles lose nothing; only then is it converted to radians and
//! handed to the `libm` crate's `sincos` (the fdlibm kernels, Sun Microsystems 1993, as carried
//! by FreeBSD msun), which for |x| ≤ π/4 evaluates its two kernel polynomials directly.
//! Accuracy: within about 2 units in the last place of `f64::sin`/`f64::cos` of the converted
//! angle (checked in the tests).
//!
//! Measured (2026-12-02, `bash benches/library_variants.sh`, 100 demo sessions, 18.4 M rows,
//! 2 cores, CPU time of the whole `batch` command, median of 3 interleaved runs): this file
//! once held its own copy of the fdlibm kernel polynomials and a memo of recurring angles.
//! With `libm::sincos` and no memo batch took 1.05× the CPU time on the demo's 0.1° headings
//! (1.28 s against 1.22 s) and 0.96× on non-repeating 0.001° headings (1.38 s against 1.43 s);
//! the memo alone bought 8% on repeating headings and nothing on others; so both went. The
//! tables stayed byte-identical on the 0.1° headings; on the 0.001° ones 9 of the 20,000 cells
//! of epochs.csv changed in their last digits (libm evaluates the sine polynomial in another
//! order; worst relative change 4.5e-11, in a Rayleigh p of 7.9e-20, which magnifies it).
//! std's `sin_cos` (the platform's libm) took 1.19× on 0.1° headings.

/// 1.5 · 2^52: adding and subtracting it rounds a float of magnitude < 2^51 to the nearest
/// integer (ties to even) with the default rounding mode.
const ROUND_MAGIC: f64 = 6_755_399_441_055_744.0;
const DEG_TO_RAD: f64 = std::f64::consts::PI / 180.0;

/// (sin θ, cos θ) for θ in degrees (any finite value; NaN in, NaN out).
#[inline(always)]
pub(crate) fn sin_cos_deg(angle_deg: f64) -> (f64, f64) {
    // Beyond 10^12 degrees first take the exact remainder modulo 360.
    let a = if angle_deg.abs() < 1.0e12 {
        angle_deg
    } else {
        angle_deg % 360.0
    };
    let shifted = a * (1.0 / 90.0) + ROUND_MAGIC;
    let qf = shifted - ROUND_MAGIC;
    // The quadrant k = round(a/90) mod 4 sits in the low mantissa bits of `shifted`
    // (1.5·2^52 + k, two's complement modulo 4 also for negative k).
    let q = shifted.to_bits();
    // Exact: a and 90·qf are both multiples of the unit in the last place of a.
    let x = (a - 90.0 * qf) * DEG_TO_RAD;
    let (s, c) = libm::sincos(x);
    // Quadrant k: (sin, cos) of θ = x + 90k is (s, c), (c, −s), (−s, −c), (−c, s); done
    // without branches: swap on odd k, sign of sin from bit 1 of k, of cos from bit 1 of k+1.
    let (ss, cc) = if q & 1 == 0 { (s, c) } else { (c, s) };
    let sin_sign = (q & 2) << 62;
    let cos_sign = (q.wrapping_add(1) & 2) << 62;
    (
        f64::from_bits(ss.to_bits() ^ sin_sign),
        f64::from_bits(cc.to_bits() ^ cos_sign),
    )
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
    fn libm_kernels_agree_with_std_within_two_ulp_and_quadrants_are_right() {
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
