//! The capacitated p-median on candidates against brute force over every candidate set.

use super::*;
use crate::geometry::random::SplitMix64;

/// A seeded instance: `n` points and `m` candidates in a 100 × 100 square, demand 1–5,
/// capacities scaled so that the `p` largest hold `tight` × the demand.
fn instance(n: usize, m: usize, p: usize, tight: f64, seed: u64) -> (Vec<Point>, Vec<Point>, Vec<f64>, Vec<f64>) {
    let mut rng = SplitMix64::new(seed);
    let mut draw =
        |k: usize| -> Vec<Point> { (0..k).map(|_| [rng.next_f64() * 100.0, rng.next_f64() * 100.0]).collect() };
    let (points, cands) = (draw(n), draw(m));
    let weights: Vec<f64> = (0..n).map(|_| 1.0 + rng.below(5) as f64).collect();
    let mut caps: Vec<f64> = (0..m).map(|_| 0.5 + rng.next_f64()).collect();
    let mut sorted = caps.clone();
    sorted.sort_by(|a, b| b.total_cmp(a));
    let scale = tight * weights.iter().sum::<f64>() / sorted[..p].iter().sum::<f64>();
    caps.iter_mut().for_each(|c| *c *= scale);
    (points, cands, caps, weights)
}

/// The capacitated p-median of `p` among `cands` with the default options.
fn on_candidates(points: &[Point], cands: &[Point], caps: &[f64], weights: &[f64], p: usize) -> CapacitatedMedian {
    capacitated_p_median(points, Weights::Given(weights), p, caps, Some(cands), &CapacitatedMedianOptions::default())
        .unwrap()
}

/// Brute force: the least transportation cost over every set of `p` candidates holding
/// the demand (each set's plan by the exact solver).
fn brute_force(points: &[Point], cands: &[Point], caps: &[f64], weights: &[f64], p: usize) -> f64 {
    let m = cands.len();
    let demand: f64 = weights.iter().sum();
    let mut best = f64::INFINITY;
    for mask in 0u32..(1 << m) {
        if mask.count_ones() as usize != p {
            continue;
        }
        let set: Vec<usize> = (0..m).filter(|j| mask >> j & 1 == 1).collect();
        let held: f64 = set.iter().map(|&j| caps[j]).sum();
        if held < demand {
            continue;
        }
        let sites: Vec<Point> = set.iter().map(|&j| cands[j]).collect();
        let c: Vec<f64> = set.iter().map(|&j| caps[j]).collect();
        let plan = crate::capacity::transport::transport(weights, &c, &|i, j| distance(points[i], sites[j])).unwrap();
        let mut cost = 0.0;
        for (i, f) in plan.flows.iter().enumerate() {
            for &(j, x) in f {
                cost += x * distance(points[i], sites[j as usize]);
            }
        }
        best = best.min(cost);
    }
    best
}

#[test]
fn candidate_bound_never_passes_the_brute_force_optimum_and_the_plan_meets_it_closely() {
    for (seed, tight) in (0..12).zip([1.05, 1.2, 1.6, 2.0].iter().cycle()) {
        let (points, cands, caps, weights) = instance(30, 10, 3, *tight, seed);
        let best = brute_force(&points, &cands, &caps, &weights, 3);
        let plan = on_candidates(&points, &cands, &caps, &weights, 3);
        let cost = plan.allocation.total_cost;
        assert!(plan.lower_bound <= best * (1.0 + 1e-9), "seed {seed}: bound {} > optimum {best}", plan.lower_bound);
        assert!(cost >= best * (1.0 - 1e-9));
        // The interchange and the Lagrangian heuristic reach the optimum on these.
        assert!(cost <= best * (1.0 + 1e-9), "seed {seed}: plan {cost}, optimum {best}");
        for (k, &j) in plan.chosen.iter().enumerate() {
            assert!(plan.allocation.load[k] <= caps[j] * (1.0 + 1e-12));
        }
    }
}

#[test]
fn every_candidate_open_has_no_gap() {
    let (points, cands, caps, weights) = instance(25, 5, 5, 1.0, 7);
    let plan = on_candidates(&points, &cands, &caps, &weights, 5);
    let best = brute_force(&points, &cands, &caps, &weights, 5);
    assert!((plan.allocation.total_cost - best).abs() <= 1e-9 * best);
    assert_eq!(plan.relative_gap, 0.0);
}

#[test]
fn lagrangian_bound_alone_is_a_bound() {
    for seed in 0..6 {
        let (points, cands, caps, weights) = instance(20, 8, 3, 1.1, 100 + seed);
        let best = brute_force(&points, &cands, &caps, &weights, 3);
        let demand = weights.iter().sum();
        let relax = Relaxation {
            points: &points,
            weights: Weights::Given(&weights),
            candidates: &cands,
            capacities: &caps,
            p: 3,
            demand,
        };
        let (value, steps) = relax.bound(best * 1.2, lagrange::MAX_STEPS, &Clock::unlimited(), |_| None);
        assert!(steps >= 1 && value.is_finite());
        assert!(value <= best * (1.0 + 1e-9), "seed {seed}: {value} > {best}");
    }
}

#[test]
fn a_candidate_location_with_two_capacities_names_the_candidates_and_rows() {
    let points = [[0.0, 0.0], [1.0, 0.0], [5.0, 0.0], [6.0, 0.0]];
    let cands = [[0.0, 0.0], [0.0, 0.0], [6.0, 0.0]];
    let e = capacitated_p_median(&points, Weights::Unit, 2, &[1.0, 3.0, 2.0], Some(&cands), &Default::default())
        .unwrap_err();
    assert_eq!(e, Error::TwoCapacities { argument: "candidates", row: 1, first: 0, capacities: (1.0, 3.0) });
    assert!(e.to_string().starts_with("candidates: candidates[1] repeats the location of candidates[0]"), "{e}");
}
