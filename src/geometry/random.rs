//! A tiny seeded pseudo-random generator for randomised algorithms.
//!
//! SplitMix64 (Steele, Lea and Flood 2014, "Fast splittable pseudorandom number
//! generators"): a 64-bit state advanced by a Weyl sequence and passed through a
//! bijective mixer. It is not cryptographic; it is fast, passes BigCrush, and — what the
//! kernels need — the same seed gives the same stream on every platform, so a randomised
//! kernel called twice on the same input gives the same answer.

/// The SplitMix64 generator.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator whose stream is fixed by `seed`.
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64 { state: seed }
    }

    /// The next 64 random bits.
    #[inline]
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A uniform float in `[0, 1)` with 53 random bits.
    #[inline]
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform integer in `0..bound` (`bound > 0`), without modulo bias
    /// (Lemire 2019, "Fast random integer generation in an interval").
    #[inline]
    pub fn below(&mut self, bound: usize) -> usize {
        assert!(bound > 0, "SplitMix64::below needs a positive bound");
        let bound = bound as u64;
        let threshold = bound.wrapping_neg() % bound;
        loop {
            let product = u128::from(self.next_u64()) * u128::from(bound);
            if (product as u64) >= threshold {
                return (product >> 64) as usize;
            }
        }
    }

    /// Shuffle `items` in place (Fisher–Yates; every permutation equally likely).
    pub fn shuffle<T>(&mut self, items: &mut [T]) {
        for i in (1..items.len()).rev() {
            let j = self.below(i + 1);
            items.swap(i, j);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_outputs_match_the_reference_implementation() {
        // Outputs of the reference C implementation (Vigna, splitmix64.c) for seed 0:
        // the first value is the mixer applied to the golden-ratio increment (from memory:
        // 0xE220A8397B1DCDAF).
        let mut g = SplitMix64::new(0);
        assert_eq!(g.next_u64(), 0xE220_A839_7B1D_CDAF);
    }

    #[test]
    fn same_seed_same_stream_and_floats_in_unit_interval() {
        let (mut a, mut b) = (SplitMix64::new(42), SplitMix64::new(42));
        for _ in 0..1000 {
            let (x, y) = (a.next_f64(), b.next_f64());
            assert_eq!(x, y);
            assert!((0.0..1.0).contains(&x));
        }
    }

    #[test]
    fn below_stays_in_range_and_shuffle_is_a_permutation() {
        let mut g = SplitMix64::new(7);
        let mut counts = [0usize; 5];
        for _ in 0..5000 {
            counts[g.below(5)] += 1;
        }
        // Each bucket expects 1000; 6 standard deviations (about 170) is a generous band.
        assert!(counts.iter().all(|&c| (830..1170).contains(&c)), "{counts:?}");
        let mut items: Vec<usize> = (0..100).collect();
        g.shuffle(&mut items);
        let mut sorted = items.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..100).collect::<Vec<_>>());
        assert_ne!(items, sorted);
    }
}
