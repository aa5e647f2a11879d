//! Tests of the network family's public API (the algorithms' own files hold their unit tests).

use std::f64::consts::PI;

use super::steiner::HALF_SQRT3;
use super::*;
use crate::geometry::random::SplitMix64;

fn uniform(n: usize, seed: u64) -> Vec<Point> {
    let mut rng = SplitMix64::new(seed);
    let mut unit = || (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
    (0..n).map(|_| [unit(), unit()]).collect()
}

fn exact() -> SteinerOptions {
    SteinerOptions { method: SteinerMethod::Exact, ..SteinerOptions::default() }
}

fn heuristic() -> SteinerOptions {
    SteinerOptions { method: SteinerMethod::Heuristic, ..SteinerOptions::default() }
}

#[test]
fn nearly_coincident_terminals_keep_the_invariants() {
    // Two terminals one unit in the last place apart (a case found by property testing)
    // once left a Steiner point of degree four on top of them; the invariants of a
    // Steiner tree (degree three at 120°, at most three edges per terminal) must hold.
    for far in [1.0, 6.0, 58.0] {
        let pts = [[0.0, 0.0], [0.0, far], [0.0, f64::EPSILON], [1.0, 0.0], [-4.0, 0.0]];
        for options in [heuristic(), exact()] {
            let t = steiner_tree(&pts, &options).unwrap();
            check_steiner_tree(&pts, &t, 1e-6).unwrap();
        }
    }
}

#[test]
fn closed_forms_square_triangle_hexagon() {
    // Closed forms: unit square 1 + √3 with two junctions; equilateral triangle of side 1:
    // √3 with its junction at the centroid; regular hexagon: five sides and no junction
    // (Jarník and Kössler 1934).
    let square = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
    let triangle = [[0.0, 0.0], [1.0, 0.0], [0.5, HALF_SQRT3]];
    let hexagon: Vec<Point> = (0..6).map(|k| [(k as f64 * PI / 3.0).cos(), (k as f64 * PI / 3.0).sin()]).collect();
    for method in [SteinerMethod::Exact, SteinerMethod::Heuristic] {
        let o = SteinerOptions { method, ..SteinerOptions::default() };
        let t = steiner_tree(&square, &o).unwrap();
        check_steiner_tree(&square, &t, 1e-8).unwrap();
        assert!((t.length - (1.0 + 3f64.sqrt())).abs() < 1e-12);
        assert_eq!(t.junctions.len(), 2);
        let t = steiner_tree(&triangle, &o).unwrap();
        check_steiner_tree(&triangle, &t, 1e-8).unwrap();
        assert!((t.length - 3f64.sqrt()).abs() < 1e-12);
        assert!(distance(t.junctions[0], [0.5, HALF_SQRT3 / 3.0]) < 1e-12);
        let t = steiner_tree(&hexagon, &o).unwrap();
        check_steiner_tree(&hexagon, &t, 1e-8).unwrap();
        assert!((t.length - 5.0).abs() < 1e-12);
        assert!(t.junctions.is_empty());
        assert_eq!(t.optimal, method == SteinerMethod::Exact);
    }
}

#[test]
fn exact_is_never_longer_than_the_heuristic_and_both_keep_the_invariants() {
    for seed in 0..4 {
        let pts = uniform(9, seed);
        let e = steiner_tree(&pts, &exact()).unwrap();
        let h = steiner_tree(&pts, &heuristic()).unwrap();
        check_steiner_tree(&pts, &e, 1e-6).unwrap();
        check_steiner_tree(&pts, &h, 1e-6).unwrap();
        assert!(e.optimal);
        assert!(e.length <= h.length * (1.0 + 1e-12));
    }
    let big = uniform(400, 11);
    let h = steiner_tree(&big, &SteinerOptions::default()).unwrap();
    check_steiner_tree(&big, &h, 1e-6).unwrap();
    assert!(h.saving() > 0.02);
}

#[test]
fn twenty_uniform_terminals_are_solved_exactly() {
    // The exact method must prove optimality on 20 uniform terminals; the heuristic's
    // tree is a feasible Steiner tree, so the proven optimum is never longer.
    let pts = uniform(20, 2026);
    let e = steiner_tree(&pts, &exact()).unwrap();
    let h = steiner_tree(&pts, &heuristic()).unwrap();
    check_steiner_tree(&pts, &e, 1e-6).unwrap();
    assert!(e.optimal);
    assert!(e.length <= h.length * (1.0 + 1e-12));
    // At most n − 2 junctions (Gilbert and Pollak 1968).
    assert!(e.junctions.len() <= 18);
    // Automatic choice is exact at this size.
    assert!(steiner_tree(&pts, &SteinerOptions::default()).unwrap().optimal);
}

#[test]
fn repeated_locations_never_give_a_row_more_than_three_edges() {
    let mut pts = vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.5, 0.5]];
    pts.extend_from_slice(&[[0.5, 0.5], [0.5, 0.5], [1.0, 0.0]]);
    for options in [exact(), heuristic()] {
        let t = steiner_tree(&pts, &options).unwrap();
        check_steiner_tree(&pts, &t, 1e-6).unwrap();
    }
    let same = [[2.0, 2.0]; 5];
    let t = steiner_tree(&same, &SteinerOptions::default()).unwrap();
    check_steiner_tree(&same, &t, 1e-6).unwrap();
    assert_eq!((t.length, t.saving()), (0.0, 0.0));
    // Repeats are chained row to row: 0–1, 1–2, 2–3, 3–4.
    let chain: Vec<[EdgeEnd; 2]> = (0..4).map(|r| [EdgeEnd::Row(r), EdgeEnd::Row(r + 1)]).collect();
    assert_eq!(t.edges, chain);
}

#[test]
fn far_offset_and_tiny_coordinates_use_the_working_frame() {
    // The unit square shifted far away and scaled down: the closed form 1 + √3 scales with
    // it, and the junctions come back in input coordinates.
    for (shift, size) in [(5.0e5, 1.0), (0.0, 1e-200), (1e6, 1e3)] {
        let square: Vec<Point> = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
            .iter()
            .map(|p| [shift + size * p[0], shift + size * p[1]])
            .collect();
        let t = steiner_tree(&square, &exact()).unwrap();
        check_steiner_tree(&square, &t, 1e-6).unwrap();
        assert!((t.length / size - (1.0 + 3f64.sqrt())).abs() < 1e-9);
        assert!(t.junctions.iter().all(|j| (j[0] - shift) / size > 0.0 && (j[0] - shift) / size < 1.0));
    }
}

#[test]
fn parameters_and_groups() {
    let pts = uniform(70, 3);
    // Past 64 distinct points the exact method runs; stopped at once it answers with a
    // checked tree, unproven, above its lower bound.
    let stopped = steiner_tree(&pts, &SteinerOptions { time_limit: Some(0.0), ..exact() }).unwrap();
    assert!(!stopped.optimal && stopped.lower_bound < stopped.length);
    check_steiner_tree(&pts, &stopped, 1e-6).unwrap();
    let bad = SteinerOptions { time_limit: Some(-1.0), ..SteinerOptions::default() };
    let e = steiner_tree(&pts, &bad).unwrap_err();
    assert_eq!(e.to_string(), "time_limit: must be finite and >= 0 seconds; got -1");
    let rushed = SteinerOptions { time_limit: Some(0.0), ..exact() };
    let t = steiner_tree(&pts[..10], &rushed).unwrap();
    assert!(!t.optimal);
    check_steiner_tree(&pts[..10], &t, 1e-6).unwrap();
    let labels: Vec<i64> = (0..70).map(|i| (i % 3) as i64).collect();
    // Exact without a time limit on both sides: an automatic choice's wall-clock budget could
    // run out in one run and not the other on a loaded machine.
    let g = steiner_trees(&pts, &labels, &exact(), OnGroupError::Raise).unwrap();
    for (k, tree) in g.into_solved().unwrap().iter().enumerate() {
        let rows: Vec<usize> = (0..70).filter(|i| i % 3 == k).collect();
        let members: Vec<Point> = rows.iter().map(|&i| pts[i]).collect();
        let mut single = steiner_tree(&members, &exact()).unwrap();
        for end in single.edges.iter_mut().flatten() {
            if let EdgeEnd::Row(r) = end {
                *r = rows[*r];
            }
        }
        assert_eq!(tree, &single);
    }
    let s = spanning_trees(&pts, &labels, OnGroupError::Raise).unwrap();
    assert!(s
        .into_solved()
        .unwrap()
        .iter()
        .all(|t| t.edges.iter().all(|e| labels[e[0]] == labels[e[1]] && e[0] < e[1])));
}

#[test]
fn skipped_groups_keep_their_place() {
    // Group 4 holds a NaN at input row 2: with Skip it is kept as an error naming row 2;
    // the two-point group 1 gets one edge between its input rows, the one-point group 9 none.
    let pts = [[0.0, 0.0], [5.0, 5.0], [f64::NAN, 0.0], [3.0, 4.0], [1.0, 1.0]];
    let labels = [1, 9, 4, 1, 4];
    let g = steiner_trees(&pts, &labels, &SteinerOptions::default(), OnGroupError::Skip).unwrap();
    assert_eq!(g.labels, vec![1, 4, 9]);
    let one = g.results[0].as_ref().unwrap();
    assert_eq!(one.edges, vec![[EdgeEnd::Row(0), EdgeEnd::Row(3)]]);
    assert_eq!(one.length, 5.0);
    let e = g.results[1].as_ref().unwrap_err();
    assert_eq!((e.group(), e.row()), (Some(4), Some(2)));
    assert!(g.results[2].as_ref().unwrap().edges.is_empty());
    let s = spanning_trees(&pts, &labels, OnGroupError::Skip).unwrap();
    assert_eq!(s.results[0].as_ref().unwrap().edges, vec![[0, 3]]);
    assert!(s.results[1].is_err());
    assert!(spanning_trees(&pts, &labels, OnGroupError::Raise).is_err());
}

#[test]
fn a_watched_grouped_spanning_run_counts_every_point_and_a_cancel_leaves_no_answer() {
    // Three groups of 70,000 points; each group's tree is the ungrouped call's on its points.
    let pts = uniform(210_000, 41);
    let labels: Vec<i64> = (0..pts.len()).map(|i| (i % 3) as i64).collect();
    let watch = Watch::new();
    let watched = spanning_trees_watched(&pts, &labels, OnGroupError::Raise, &watch).unwrap();
    assert_eq!(watch.progress(), (210_000, 210_000));
    for (label, tree) in watched.labels.iter().zip(&watched.results) {
        let rows: Vec<usize> = (0..pts.len()).filter(|&i| labels[i] == *label).collect();
        let own: Vec<Point> = rows.iter().map(|&i| pts[i]).collect();
        let mut single = spanning_tree(&own).unwrap();
        single.edges.iter_mut().for_each(|e| *e = [rows[e[0]], rows[e[1]]]);
        assert_eq!(tree.as_ref().unwrap(), &single);
    }
    crate::cancel::testing::cancelled_after(1, |watch| {
        spanning_trees_watched(&pts, &labels, OnGroupError::Raise, watch).map(drop)
    });
}

mod properties {
    use super::*;
    use proptest::prelude::*;

    fn terminals() -> impl Strategy<Value = Vec<Point>> {
        prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 2..40)
    }

    fn degenerate() -> impl Strategy<Value = Vec<Point>> {
        let lattice = prop::collection::vec((0u8..5, 0u8..5).prop_map(|(x, y)| [f64::from(x), f64::from(y)]), 2..40);
        let line = prop::collection::vec((-10.0f64..10.0).prop_map(|t| [3.0 * t + 1.0, -2.0 * t]), 2..40);
        let clusters = prop::collection::vec(
            ((0u8..3, 0u8..3), (0u8..4, 0u8..4)).prop_map(|((cx, cy), (dx, dy))| {
                [f64::from(cx) + 1e-7 * f64::from(dx), f64::from(cy) + 1e-7 * f64::from(dy)]
            }),
            2..60,
        );
        prop_oneof![lattice, line, clusters]
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

        /// A tree; junctions of degree 3 at 120 degrees; no row above degree 3; never
        /// longer than the minimum spanning tree (`check_steiner_tree` states them).
        #[test]
        fn heuristic_tree_keeps_the_invariants(points in terminals(), seed in 0u64..100) {
            let options = SteinerOptions { method: SteinerMethod::Heuristic, seed, ..SteinerOptions::default() };
            let tree = steiner_tree(&points, &options).unwrap();
            let checked = check_steiner_tree(&points, &tree, 1e-6);
            prop_assert!(checked.is_ok(), "{:?}", checked);
        }

        /// The same on degenerate input: lattice points (repeats, collinear and cocircular
        /// runs), points on one line, and tight clusters with repeats.
        #[test]
        fn heuristic_tree_keeps_the_invariants_on_degenerate_input(points in degenerate()) {
            let tree = steiner_tree(&points, &heuristic()).unwrap();
            let checked = check_steiner_tree(&points, &tree, 1e-6);
            prop_assert!(checked.is_ok(), "{:?}", checked);
        }

        /// Exact trees are never longer than heuristic ones on small sets.
        #[test]
        fn exact_is_never_longer_than_heuristic(points in prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 3..7)) {
            let exact = steiner_tree(&points, &exact()).unwrap();
            let heuristic = steiner_tree(&points, &heuristic()).unwrap();
            prop_assert!(exact.optimal);
            prop_assert!(check_steiner_tree(&points, &exact, 1e-6).is_ok());
            prop_assert!(exact.length <= heuristic.length * (1.0 + 1e-9) + 1e-9);
        }
    }
}

#[test]
fn a_tree_of_points_that_differ_below_the_triangulations_resolution_is_no_longer_than_the_mst() {
    // The first and third points differ only in a coordinate near 1e-68, which the
    // triangulation flushes to zero; the heuristic once answered with a bent chain of
    // length 2 against the spanning tree's 1 (Prim's algorithm by hand: edges 0-2 and 0-1).
    let pts = vec![[0.0, 0.0], [3.1e-182, -1.0], [-8.4e-68, 0.0]];
    for method in [SteinerMethod::Heuristic, SteinerMethod::Exact, SteinerMethod::Auto] {
        let t = steiner_tree(&pts, &SteinerOptions { method, ..SteinerOptions::default() }).unwrap();
        assert!((t.length - 1.0).abs() <= 1e-12, "{method:?}: {}", t.length);
        assert!(t.length <= t.mst_length + 1e-12);
    }
}
