//! Sets of terminals as bit sets of any width, stored side by side.
//!
//! The generation of full Steiner trees keeps one terminal set per equilateral point and
//! tests pairs of them for disjointness in its innermost loop, so the sets live in one flat
//! array of `words` 64-bit words each (`words = ⌈n / 64⌉` for `n` terminals): no allocation
//! per set, and one word, as fast as a plain `u64`, up to 64 terminals.
//!
//! Invariant: bits at or above `n` are never set, so the complement of a set is read only
//! through [`outside`], which masks them.

/// Terminal sets over `0..n`, indexed in the order they were pushed.
#[derive(Debug, Clone)]
pub(crate) struct TerminalSets {
    n: usize,
    words: usize,
    data: Vec<u64>,
}

impl TerminalSets {
    /// An empty store for sets over terminals `0..n`.
    pub fn new(n: usize) -> TerminalSets {
        TerminalSets { n, words: n.div_ceil(64).max(1), data: Vec::new() }
    }

    /// How many sets are stored.
    #[cfg(test)]
    pub fn len(&self) -> usize {
        self.data.len() / self.words
    }

    /// The words of set `i`.
    #[inline]
    pub fn get(&self, i: usize) -> &[u64] {
        &self.data[i * self.words..(i + 1) * self.words]
    }

    /// Append the set `{t}`.
    pub fn push_single(&mut self, t: usize) {
        assert!(t < self.n, "terminal {t} out of 0..{}", self.n);
        let start = self.data.len();
        self.data.resize(start + self.words, 0);
        self.data[start + t / 64] = 1u64 << (t % 64);
    }

    /// Append the union of sets `a` and `b`.
    pub fn push_union(&mut self, a: usize, b: usize) {
        for w in 0..self.words {
            let word = self.data[a * self.words + w] | self.data[b * self.words + w];
            self.data.push(word);
        }
    }

    /// Whether sets `a` and `b` share no terminal.
    #[cfg(test)]
    pub fn disjoint(&self, a: usize, b: usize) -> bool {
        disjoint(self.get(a), self.get(b))
    }
}

/// Whether the sets `a` and `b` (of the same width) share no terminal.
#[inline]
pub(crate) fn disjoint(a: &[u64], b: &[u64]) -> bool {
    a.iter().zip(b).all(|(x, y)| x & y == 0)
}

/// Whether terminal `t` is in `set` (false beyond its width).
#[inline]
pub(crate) fn contains(set: &[u64], t: usize) -> bool {
    set.get(t / 64).is_some_and(|word| word >> (t % 64) & 1 == 1)
}

/// The terminals of `set`, ascending.
#[inline]
pub(crate) fn members(set: &[u64]) -> impl Iterator<Item = usize> + '_ {
    set.iter().enumerate().flat_map(|(w, &word)| word_bits(word, 64 * w))
}

/// The terminals of `0..n` in neither `a` nor `b` (sets of the same width), ascending.
#[inline]
pub(crate) fn outside<'a>(a: &'a [u64], b: &'a [u64], n: usize) -> impl Iterator<Item = usize> + 'a {
    a.iter().zip(b).enumerate().flat_map(move |(w, (&x, &y))| {
        let below = n.saturating_sub(64 * w);
        let valid = if below >= 64 { u64::MAX } else { (1u64 << below) - 1 };
        word_bits(!(x | y) & valid, 64 * w)
    })
}

/// The smallest terminal of `set`; `None` for the empty set.
#[inline]
pub(crate) fn lowest(set: &[u64]) -> Option<usize> {
    set.iter().enumerate().find(|(_, &word)| word != 0).map(|(w, &word)| 64 * w + word.trailing_zeros() as usize)
}

/// The set bits of `word`, ascending, each plus `offset`.
#[inline]
fn word_bits(word: u64, offset: usize) -> impl Iterator<Item = usize> {
    let mut rest = word;
    std::iter::from_fn(move || {
        (rest != 0).then(|| {
            let v = rest.trailing_zeros() as usize;
            rest &= rest - 1;
            offset + v
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeSet;

    #[test]
    fn sets_agree_with_the_standard_library_sets_across_word_boundaries() {
        // Reference: std's BTreeSet, on sets of 150 terminals (three words) built from
        // seeded pseudo-random singletons and unions.
        let n = 150;
        let mut sets = TerminalSets::new(n);
        let mut reference: Vec<BTreeSet<usize>> = Vec::new();
        let mut rng = crate::geometry::random::SplitMix64::new(5);
        for t in [0, 1, 63, 64, 65, 127, 128, 149] {
            sets.push_single(t);
            reference.push(BTreeSet::from([t]));
        }
        for _ in 0..200 {
            let a = (rng.next_f64() * sets.len() as f64) as usize;
            let b = (rng.next_f64() * sets.len() as f64) as usize;
            sets.push_union(a, b);
            reference.push(reference[a].union(&reference[b]).copied().collect());
        }
        for (i, expected) in reference.iter().enumerate() {
            assert_eq!(members(sets.get(i)).collect::<BTreeSet<_>>(), *expected);
            assert_eq!(lowest(sets.get(i)), expected.first().copied());
            for t in 0..n + 70 {
                assert_eq!(contains(sets.get(i), t), expected.contains(&t));
            }
            for (j, other) in reference.iter().enumerate().step_by(7) {
                assert_eq!(sets.disjoint(i, j), expected.is_disjoint(other));
                let rest: BTreeSet<usize> = (0..n).filter(|t| !expected.contains(t) && !other.contains(t)).collect();
                assert_eq!(outside(sets.get(i), sets.get(j), n).collect::<BTreeSet<_>>(), rest);
            }
        }
    }
}
