//! Large inputs: the global search runs on a seeded uniform sample; the full data only
//! settles the sample's best plan (Cooper's rounds), so the search cost is bounded
//! whatever the input size.

use crate::geometry::random::SplitMix64;
use crate::geometry::{Point, Weights};
use crate::multi::distinct_weighted;

/// Inputs with more points than this are searched on a seeded sample of this size.
pub(super) const LARGE_INPUT: usize = 20_000;

/// A seeded uniform sample of the points (without replacement, in input order), weights
/// kept, with its distinct locations of positive weight.
pub(super) struct Sample {
    pub(super) points: Vec<Point>,
    pub(super) weights: Vec<f64>,
    pub(super) candidates: Vec<usize>,
}

impl Sample {
    /// The sample of `points` (more than [`LARGE_INPUT`]) drawn with `seed`.
    pub(super) fn draw(points: &[Point], weights: Weights<'_>, seed: u64) -> Sample {
        let mut rng = SplitMix64::new(seed ^ 0x5A3B_1E00_D15C_0001);
        let mut order: Vec<usize> = (0..points.len()).collect();
        // Partial Fisher–Yates: the first LARGE_INPUT entries are a uniform sample.
        for k in 0..LARGE_INPUT {
            let pick = k + rng.below(points.len() - k);
            order.swap(k, pick);
        }
        let mut chosen = order[..LARGE_INPUT].to_vec();
        chosen.sort_unstable();
        let sample_points: Vec<Point> = chosen.iter().map(|&i| points[i]).collect();
        let sample_weights: Vec<f64> = chosen.iter().map(|&i| weights.get(i)).collect();
        let candidates = if sample_weights.iter().any(|&w| w > 0.0) {
            distinct_weighted(&sample_points, Weights::Given(&sample_weights)).iter().map(|l| l.first).collect()
        } else {
            Vec::new()
        };
        Sample { points: sample_points, weights: sample_weights, candidates }
    }
}
