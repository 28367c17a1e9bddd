//! Seeded randomization p-values: the generator, the seed taken from the data, and the counting
//! rule shared by the tests that replace a large-sample approximation with a randomization
//! (or exact enumeration) null distribution.
//!
//! Counting rule (Monte Carlo): with B resamples drawn under the null and k of them at least as
//! extreme as the observed statistic, p = (1 + k)/(1 + B) (Davison & Hinkley 1997 §4.2.1;
//! Phipson & Smyth 2010). This p is exactly valid, P(p ≤ α) ≤ α, for every B when α(B + 1) is an
//! integer, so the calibration does not rest on B being large; a larger B only makes the test
//! more powerful and the p less noisy (its Monte Carlo standard error is at most 0.5/√B).

/// Resamples used by the reported p-values (α(B + 1) is an integer for α = 0.05 and 0.01, and
/// the Monte Carlo standard error of a p near 0.05 is about 0.002).
pub const RESAMPLES: usize = 9999;

/// Sign-flip tests enumerate all 2ⁿ flips exactly up to this many animals, then draw.
pub const EXACT_SIGN_FLIP_MAX_N: usize = 12;

/// SplitMix64 (Steele, Lea & Flood 2014), a small, well-mixed 64-bit generator; the circular
/// core keeps its own so that it depends on nothing outside itself.
#[derive(Debug, Clone)]
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Self {
        Self(seed)
    }

    /// Skips the next `k` outputs in one step (SplitMix64's state is a counter that each output
    /// advances by the same increment), as if `next_u64` had been called `k` times.
    pub fn skip(&mut self, k: u64) {
        self.0 = self
            .0
            .wrapping_add(0x9E37_79B9_7F4A_7C15u64.wrapping_mul(k));
    }

    /// The next 64-bit output.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1) with 53 random bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform direction in degrees, [0, 360).
    pub fn angle_deg(&mut self) -> f64 {
        360.0 * self.uniform()
    }

    /// A uniform integer in [0, n), n > 0 (multiply-shift; the bias is below 2⁻⁶⁰ for the
    /// small n used here).
    pub fn below(&mut self, n: usize) -> usize {
        ((u128::from(self.next_u64()) * n as u128) >> 64) as usize
    }

    /// A von Mises deviate with mean 0 and concentration κ, in degrees in (−180, 180]
    /// (Best & Fisher 1979, Applied Statistics 28:152, the algorithm as given by Fisher 1993
    /// §3.3.6). κ = 0 gives a uniform direction.
    pub fn von_mises_deg(&mut self, kappa: f64) -> f64 {
        if kappa <= 1e-9 {
            return self.angle_deg() - 180.0;
        }
        let a = 1.0 + (1.0 + 4.0 * kappa * kappa).sqrt();
        let b = (a - (2.0 * a).sqrt()) / (2.0 * kappa);
        let r = (1.0 + b * b) / (2.0 * b);
        loop {
            let u1 = self.uniform();
            let z = (std::f64::consts::PI * u1).cos();
            let f = (1.0 + r * z) / (r + z);
            let c = kappa * (r - f);
            let u2 = self.uniform();
            if c * (2.0 - c) - u2 > 0.0 || (c / u2).ln() + 1.0 - c >= 0.0 {
                let u3 = self.uniform();
                let theta = f.clamp(-1.0, 1.0).acos().to_degrees();
                return if u3 > 0.5 { theta } else { -theta };
            }
        }
    }
}

/// A seed taken from the data (FNV-1a over the bit patterns), so that a reported randomization
/// p is reproducible for the same input and the draws are independent of any other table's.
pub fn data_seed(parts: &[&[f64]]) -> u64 {
    let mut h: u64 = 0xCBF2_9CE4_8422_2325;
    for part in parts {
        for x in part.iter() {
            for byte in x.to_bits().to_le_bytes() {
                h ^= u64::from(byte);
                h = h.wrapping_mul(0x0100_0000_01B3);
            }
        }
        h ^= 0xFF;
        h = h.wrapping_mul(0x0100_0000_01B3);
    }
    h
}

/// True when a resampled statistic is at least as extreme as the observed one, allowing for
/// rounding (a resample equal to the data up to rounding counts as "as extreme").
pub fn at_least(resampled: f64, observed: f64) -> bool {
    resampled >= observed - 1e-9 * observed.abs().max(1e-12)
}

/// Monte Carlo p = (1 + k)/(1 + B) of an observed statistic (large = extreme), with `draw`
/// giving one statistic under the null.
pub fn monte_carlo_p(
    observed: f64,
    resamples: usize,
    rng: &mut Rng,
    mut draw: impl FnMut(&mut Rng) -> f64,
) -> f64 {
    let k = (0..resamples)
        .filter(|_| at_least(draw(rng), observed))
        .count();
    (1 + k) as f64 / (1 + resamples) as f64
}

/// Sign-flip p of a statistic of n paired differences (large = extreme): under the null that
/// the two conditions are exchangeable within each animal, every difference is as likely as
/// its negative. `stat(signs)` evaluates the statistic with the given signs (+1 or −1). Exact
/// enumeration of all 2ⁿ flips for n ≤ [`EXACT_SIGN_FLIP_MAX_N`], else Monte Carlo with
/// `resamples` draws. A statistic that is even in all signs at once (as every statistic here
/// is) makes the smallest attainable p 2/2ⁿ in the exact case: 0.125 for 4 animals, 0.0625
/// for 5, 0.031 for 6.
pub fn sign_flip_p(
    n: usize,
    observed: f64,
    resamples: usize,
    rng: &mut Rng,
    mut stat: impl FnMut(&[f64]) -> f64,
) -> f64 {
    let mut signs = vec![1.0; n];
    if n <= EXACT_SIGN_FLIP_MAX_N {
        let total = 1u64 << n;
        let mut k = 0u64;
        for mask in 0..total {
            for (i, s) in signs.iter_mut().enumerate() {
                *s = if mask >> i & 1 == 1 { -1.0 } else { 1.0 };
            }
            if at_least(stat(&signs), observed) {
                k += 1;
            }
        }
        return k as f64 / total as f64;
    }
    monte_carlo_p(observed, resamples, rng, |rng| {
        for s in signs.iter_mut() {
            *s = if rng.next_u64() >> 63 == 1 { -1.0 } else { 1.0 };
        }
        stat(&signs)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix_matches_the_reference_outputs() {
        // Vigna's splitmix64.c seeded with 0 gives 0xE220A8397B1DCDAF, 0x6E789E6AA1B965F4
        // (from memory; the same values protocol::sequence's generator is checked against).
        let mut r = Rng::new(0);
        assert_eq!(r.next_u64(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(r.next_u64(), 0x6E78_9E6A_A1B9_65F4);
    }

    #[test]
    fn von_mises_deviates_have_the_mean_vector_length_of_a1_kappa() {
        // E cos θ = A1(κ) = I1(κ)/I0(κ); A1(2) = 0.697775 (Fisher 1993 Appendix A2, from
        // memory), A1(0.5) = 0.242700.
        for &(kappa, a1) in &[(2.0, 0.697_775), (0.5, 0.242_700)] {
            let mut rng = Rng::new(7);
            let n = 200_000;
            let m: f64 = (0..n)
                .map(|_| rng.von_mises_deg(kappa).to_radians().cos())
                .sum::<f64>()
                / n as f64;
            assert!((m - a1).abs() < 0.005, "κ {kappa}: {m} vs {a1}");
        }
    }

    #[test]
    fn sign_flip_exact_p_counts_all_flips() {
        // Statistic = |Σ s_i d_i| with d = (1, 1, 1): only all-plus and all-minus reach 3.
        let d = [1.0, 1.0, 1.0];
        let stat = |s: &[f64]| s.iter().zip(&d).map(|(a, b)| a * b).sum::<f64>().abs();
        let p = sign_flip_p(3, 3.0, 0, &mut Rng::new(1), stat);
        assert_eq!(p, 2.0 / 8.0);
    }

    #[test]
    fn data_seed_depends_on_every_value() {
        assert_ne!(data_seed(&[&[1.0, 2.0]]), data_seed(&[&[2.0, 1.0]]));
        assert_ne!(data_seed(&[&[1.0], &[2.0]]), data_seed(&[&[1.0, 2.0]]));
        assert_eq!(data_seed(&[&[1.0, 2.0]]), data_seed(&[&[1.0, 2.0]]));
    }
}
