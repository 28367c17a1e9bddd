//! Compensated summation used by every sum of sines and cosines in this module.

/// Compensated summation: Neumaier's improved Kahan–Babuška summation (Neumaier 1974,
/// "Rundungsfehleranalyse einiger Verfahren zur Summation endlicher Summen", ZAMM 54), with the
/// rounding error of each addition obtained by Knuth's branch-free TwoSum, which is the
/// cascaded "Sum2" of Ogita, Rump & Oishi 2005 (SIAM J. Sci. Comput. 26). The result is as
/// accurate as if computed in twice the working precision and then rounded, so the error stays
/// at a few units in the last place independent of the number of terms (a plain running sum
/// grows like n·ε).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub(crate) struct Neumaier {
    sum: f64,
    comp: f64,
}

impl Neumaier {
    /// Adds one term.
    #[inline(always)]
    pub(crate) fn add(&mut self, x: f64) {
        // TwoSum (Knuth, TAOCP vol. 2 §4.2.2): t + e == sum + x exactly, whatever the order
        // of magnitudes, with no branch.
        let t = self.sum + x;
        let bp = t - self.sum;
        let e = (self.sum - (t - bp)) + (x - bp);
        self.comp += e;
        self.sum = t;
    }

    /// Adds another compensated sum.
    pub(crate) fn add_sum(&mut self, other: &Neumaier) {
        self.add(other.sum);
        self.add(other.comp);
    }

    /// The compensated value.
    #[inline]
    pub(crate) fn value(&self) -> f64 {
        self.sum + self.comp
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn compensated_sum_recovers_small_terms_lost_by_plain_summation() {
        // 1 + 1e-16 * 10^6 = 1 + 1e-10; a plain sum stays at exactly 1.
        let mut s = Neumaier::default();
        let mut plain = 0.0_f64;
        s.add(1.0);
        plain += 1.0;
        for _ in 0..1_000_000 {
            s.add(1e-16);
            plain += 1e-16;
        }
        assert_eq!(plain, 1.0);
        assert!((s.value() - (1.0 + 1e-10)).abs() < 1e-15);
    }

    #[test]
    fn neumaier_handles_a_term_larger_than_the_sum() {
        let mut s = Neumaier::default();
        for x in [1.0, 1e100, 1.0, -1e100] {
            s.add(x);
        }
        assert_eq!(s.value(), 2.0);
    }

    #[test]
    fn merging_sums_equals_one_long_sum() {
        let mut a = Neumaier::default();
        let mut b = Neumaier::default();
        let mut all = Neumaier::default();
        for i in 0..1000 {
            let x = (i as f64 * 0.37).sin();
            all.add(x);
            if i < 400 { a.add(x) } else { b.add(x) }
        }
        a.add_sum(&b);
        assert!((a.value() - all.value()).abs() < 1e-14);
    }
}
