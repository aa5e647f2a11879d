//! Compensated summation.

/// Compensated summation: Ogita, Rump and Oishi's `Sum2` (2005, "Accurate sum and dot
/// product"), built on Knuth's branch-free TwoSum. The total is as accurate as if summed in
/// twice the working precision and then rounded, independent of the number of terms — which
/// keeps the optimality certificates of the median family honest for millions of points —
/// and, having no branches, it costs a few additions per term.
#[derive(Debug, Clone, Copy, Default)]
pub struct CompensatedSum {
    sum: f64,
    compensation: f64,
}

impl CompensatedSum {
    /// Add one term.
    #[inline]
    pub fn add(&mut self, value: f64) {
        // TwoSum: t + e == self.sum + value exactly.
        let t = self.sum + value;
        let back = t - self.sum;
        let e = (self.sum - (t - back)) + (value - back);
        self.compensation += e;
        self.sum = t;
    }

    /// Merge another partial sum (for chunked parallel reductions).
    #[inline]
    pub fn merge(&mut self, other: CompensatedSum) {
        self.add(other.sum);
        self.compensation += other.compensation;
    }

    /// The compensated total. Once the running sum is infinite (an infinite term, or
    /// overflow) the compensation is `∞ − ∞ = NaN` and carries no information: the total is
    /// the running sum itself, as IEEE 754 summation gives (`+∞`, or NaN for `+∞` and `−∞`).
    #[inline]
    pub fn total(&self) -> f64 {
        if self.sum.is_finite() {
            self.sum + self.compensation
        } else {
            self.sum
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recovers_small_terms_lost_by_naive_summation() {
        // 1 + 1e100 + 1 - 1e100 = 2 exactly (the classic case naive summation gets wrong:
        // it returns 0; Neumaier 1974).
        let mut s = CompensatedSum::default();
        for v in [1.0, 1e100, 1.0, -1e100] {
            s.add(v);
        }
        assert_eq!(s.total(), 2.0);
    }

    #[test]
    fn an_infinite_term_gives_the_ieee_total_not_nan() {
        // IEEE 754 summation (the reference): 1 + ∞ + 2 = +∞, 1e308 + 1e308 = +∞ (overflow),
        // ∞ + (−∞) = NaN. The compensation of an infinite sum is NaN and must not leak.
        for (terms, expected) in [
            (vec![1.0, f64::INFINITY, 2.0], f64::INFINITY),
            (vec![1e308, 1e308, -1.0], f64::INFINITY),
            (vec![-1.0, f64::NEG_INFINITY], f64::NEG_INFINITY),
        ] {
            let mut s = CompensatedSum::default();
            terms.iter().for_each(|&v| s.add(v));
            assert_eq!(s.total(), expected, "{terms:?}");
            assert_eq!(s.total(), terms.iter().sum::<f64>(), "{terms:?}");
        }
        let mut s = CompensatedSum::default();
        [f64::INFINITY, f64::NEG_INFINITY].iter().for_each(|&v| s.add(v));
        assert!(s.total().is_nan());
    }
}
