//! Compensated summation.

/// Neumaier's improved Kahan–Babuška summation (Neumaier 1974): the error of the total is
/// about one rounding of the result, independent of the number of terms, which is what
/// lets the optimality certificates of the median family stay honest for millions of points.
#[derive(Debug, Clone, Copy, Default)]
pub struct CompensatedSum {
    sum: f64,
    compensation: f64,
}

impl CompensatedSum {
    /// Add one term.
    #[inline]
    pub fn add(&mut self, value: f64) {
        let t = self.sum + value;
        if self.sum.abs() >= value.abs() {
            self.compensation += (self.sum - t) + value;
        } else {
            self.compensation += (value - t) + self.sum;
        }
        self.sum = t;
    }

    /// Merge another partial sum (for chunked parallel reductions).
    #[inline]
    pub fn merge(&mut self, other: CompensatedSum) {
        self.add(other.sum);
        self.compensation += other.compensation;
    }

    /// The compensated total.
    #[inline]
    pub fn total(&self) -> f64 {
        self.sum + self.compensation
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recovers_small_terms_lost_by_naive_summation() {
        // 1 + 1e100 + 1 - 1e100 = 2 exactly (Neumaier 1974's motivating example).
        let mut s = CompensatedSum::default();
        for v in [1.0, 1e100, 1.0, -1e100] {
            s.add(v);
        }
        assert_eq!(s.total(), 2.0);
    }
}
