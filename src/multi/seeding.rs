//! Seeded starts for the many-site searches.
//!
//! D-sampling: the k-means++ seeding of Arthur and Vassilvitskii (2007), "k-means++: the
//! advantages of careful seeding", SODA, with distances in place of squared distances (the
//! p-median and p-center objectives are sums and maxima of distances, not of squares). Each
//! new site is placed at a candidate demand location drawn with probability ∝ `wᵢ · dᵢ`,
//! `dᵢ` being the distance to the nearest site chosen so far; the first (when there is no
//! site yet) with probability ∝ `wᵢ`. Both p-median and p-center start from it.

use crate::geometry::random::SplitMix64;
use crate::geometry::{distance, Point, Weights};

/// `count` sites by D-sampling among the demand locations `points[candidates[..]]`, where
/// the existing sites `fixed` count as already chosen.
///
/// Invariant: the sites are candidate locations, distinct ones while the candidates' locations
/// allow (`count` never exceeds the number of candidates, but two of them may share a
/// location in a working frame that rounded them together).
pub(super) fn d_sampling(
    points: &[Point],
    weights: Weights<'_>,
    candidates: &[usize],
    fixed: &[Point],
    count: usize,
    rng: &mut SplitMix64,
) -> Vec<Point> {
    let mut nearest: Vec<f64> = candidates
        .iter()
        .map(|&i| fixed.iter().map(|&f| distance(points[i], f)).fold(f64::INFINITY, f64::min))
        .collect();
    let mut scores = vec![0.0; candidates.len()];
    let mut sites: Vec<Point> = Vec::with_capacity(count);
    while sites.len() < count {
        // No site yet: the distance counts as 1, so the first draw is ∝ weight.
        for ((score, &i), &d) in scores.iter_mut().zip(candidates).zip(&nearest) {
            *score = weights.get(i) * if d.is_finite() { d } else { 1.0 };
        }
        let chosen = match draw_weighted(&scores, rng) {
            Some(c) => points[candidates[c]],
            // Every candidate already has a site (fixed ones cover the demand): the remaining
            // sites go to the first candidates not yet used by a new site. Distinct demand
            // locations can still coincide in the caller's working frame (subnormal
            // coordinates scaled to hold a far region): then a used one takes the site too.
            None => candidates.iter().map(|&i| points[i]).find(|a| !sites.contains(a)).unwrap_or(points[candidates[0]]),
        };
        for (d, &i) in nearest.iter_mut().zip(candidates) {
            *d = d.min(distance(points[i], chosen));
        }
        sites.push(chosen);
    }
    sites
}

/// Index drawn with probability ∝ `scores[i]` (non-negative); `None` when all are zero.
pub(super) fn draw_weighted(scores: &[f64], rng: &mut SplitMix64) -> Option<usize> {
    let mut total: f64 = scores.iter().sum();
    // Scores near the largest float overflow their sum: draw on scores scaled by the largest.
    let unit = if total.is_infinite() { scores.iter().copied().fold(0.0, f64::max) } else { 1.0 };
    if unit != 1.0 {
        total = scores.iter().map(|s| s / unit).sum();
    }
    if !(total > 0.0 && total.is_finite()) {
        return None;
    }
    let mut target = rng.next_f64() * total;
    let mut last_positive = None;
    for (i, &s) in scores.iter().enumerate() {
        let s = s / unit;
        if s > 0.0 {
            last_positive = Some(i);
            if target < s {
                return Some(i);
            }
            target -= s;
        }
    }
    // Rounding left a remainder: the last positive score takes it.
    last_positive
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn draws_follow_the_scores() {
        // Law of large numbers: frequencies approach scores / total (here 1 : 0 : 3).
        let mut rng = SplitMix64::new(4);
        let mut hits = [0usize; 3];
        for _ in 0..40_000 {
            hits[draw_weighted(&[1.0, 0.0, 3.0], &mut rng).unwrap()] += 1;
        }
        assert_eq!(hits[1], 0);
        assert!((hits[2] as f64 / 40_000.0 - 0.75).abs() < 0.01, "{hits:?}");
        assert_eq!(draw_weighted(&[0.0, 0.0], &mut rng), None);
        // Overflowing sums still draw (each score is finite).
        assert!(draw_weighted(&[f64::MAX, f64::MAX], &mut rng).is_some());
    }

    #[test]
    fn sites_are_distinct_candidates_away_from_fixed_ones() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [5.0, 0.0], [6.0, 0.0], [0.0, 0.0]];
        let candidates = [0, 1, 2, 3];
        let mut rng = SplitMix64::new(9);
        for _ in 0..50 {
            let sites = d_sampling(&pts, Weights::Unit, &candidates, &[[0.0, 0.0]], 3, &mut rng);
            // A fixed site at the origin: the origin has score zero and is never drawn while
            // other candidates have weight left.
            assert!(!sites.contains(&[0.0, 0.0]));
            assert_eq!(sites.len(), 3);
        }
        // Fixed sites on every candidate: the fallback still gives distinct locations.
        let all = [[0.0, 0.0], [1.0, 0.0], [5.0, 0.0], [6.0, 0.0]];
        let sites = d_sampling(&pts, Weights::Unit, &candidates, &all, 2, &mut rng);
        assert_eq!(sites, vec![[0.0, 0.0], [1.0, 0.0]]);
    }
}
