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

/// Both kernels at once: the two degree-5 polynomials in z = x² are evaluated side by side
/// (Horner, in lanes of a pair the compiler can keep in one SIMD register), then
/// sin x = x + x·z·P_s(z) and cos x = (1 − z/2) + z²·P_c(z), with the exact-tail trick of
/// fdlibm's __kernel_cos for 1 − z/2.
#[inline(always)]
fn kernel_sin_cos(x: f64) -> (f64, f64) {
    let z = x * x;
    let p = horner_pair(z);
    let sin = x + (x * z) * p[0];
    let hz = 0.5 * z;
    let w = 1.0 - hz;
    let cos = w + (((1.0 - w) - hz) + (z * z) * p[1]);
    (sin, cos)
}

/// [P_s(z), P_c(z)] by Horner's rule, the two polynomials side by side.
#[inline(always)]
fn horner_pair(z: f64) -> [f64; 2] {
    let mut p = [S6, C6];
    for (cs, cc) in [(S5, C5), (S4, C4), (S3, C3), (S2, C2), (S1, C1)] {
        p = [p[0] * z + cs, p[1] * z + cc];
    }
    p
}

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
    let (s, c) = kernel_sin_cos(x);
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

/// Slots of a [`SinCosMemo`] (a power of two): 2,048 × 24 bytes, within a core's L2 cache.
const MEMO_SLOTS: usize = 2048;

/// A direct-mapped memo of [`sin_cos_deg`], keyed by the angle's bits. Headings come from
/// sensors of finite resolution and cluster around the direction the animal holds, so the
/// same values recur (a sensor with 0.1° steps gives at most 3,600); a hit costs a hash and
/// a load instead of the reduction and two polynomials, and returns exactly what the
/// computation gives.
pub(crate) struct SinCosMemo {
    /// (angle bits, sin, cos); every slot starts as the angle 0.
    slots: Box<[(u64, f64, f64); MEMO_SLOTS]>,
}

impl SinCosMemo {
    pub(crate) fn new() -> Self {
        Self {
            slots: Box::new([(0.0f64.to_bits(), 0.0, 1.0); MEMO_SLOTS]),
        }
    }

    /// (sin θ, cos θ) for θ in degrees, as [`sin_cos_deg`].
    #[inline(always)]
    pub(crate) fn sin_cos_deg(&mut self, angle_deg: f64) -> (f64, f64) {
        let bits = angle_deg.to_bits();
        // Fibonacci hashing: the top bits of the product by 2^64/φ.
        let slot = (bits.wrapping_mul(0x9e37_79b9_7f4a_7c15) >> 53) as usize % MEMO_SLOTS;
        let entry = &mut self.slots[slot];
        if entry.0 == bits {
            return (entry.1, entry.2);
        }
        let (s, c) = sin_cos_deg(angle_deg);
        *entry = (bits, s, c);
        (s, c)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_memo_returns_what_the_computation_gives() {
        let mut memo = SinCosMemo::new();
        let mut x = 0x2545_f491_4f6c_dd1du64;
        for i in 0..200_000u32 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            // Recurring sensor steps, fresh values and the odd non-finite one.
            let a = match i % 5 {
                0 => f64::from_bits(x),
                1 => (x % 3600) as f64 / 10.0 - 180.0,
                _ => (x % 360) as f64 * 0.1 + 40.0,
            };
            let (ms, mc) = memo.sin_cos_deg(a);
            let (s, c) = sin_cos_deg(a);
            assert_eq!(
                (ms.to_bits(), mc.to_bits()),
                (s.to_bits(), c.to_bits()),
                "{a}"
            );
        }
        // 0 is in every slot from the start.
        assert_eq!(memo.sin_cos_deg(0.0), (0.0, 1.0));
        assert_eq!(sin_cos_deg(0.0), (0.0, 1.0));
    }

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
