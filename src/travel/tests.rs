//! Tests of the travel family against references written here: the Manhattan closed form
//! on a complete street grid, Floyd–Warshall (Floyd 1962) on small random graphs, and
//! brute-force minima for spots part-way along edges.

use proptest::prelude::*;

use super::*;
use crate::cancel::Watch;
use crate::geometry::Weights;

/// A complete `w × h` street grid with unit blocks, as lines (one per block side).
fn grid_lines(w: usize, h: usize) -> (Vec<[f64; 2]>, Vec<usize>) {
    let mut coords = Vec::new();
    let mut offsets = vec![0];
    for y in 0..h {
        for x in 0..w {
            if x + 1 < w {
                coords.extend([[x as f64, y as f64], [x as f64 + 1.0, y as f64]]);
                offsets.push(coords.len());
            }
            if y + 1 < h {
                coords.extend([[x as f64, y as f64], [x as f64, y as f64 + 1.0]]);
                offsets.push(coords.len());
            }
        }
    }
    (coords, offsets)
}

/// All-pairs costs by Floyd–Warshall (Floyd 1962) over the edge directions.
fn floyd(graph: &TravelGraph) -> Vec<Vec<f64>> {
    let n = graph.node_count();
    let mut d = vec![vec![f64::INFINITY; n]; n];
    for (u, row) in d.iter_mut().enumerate() {
        row[u] = 0.0;
    }
    let (t, h) = graph.ends();
    let (f, b) = graph.edge_costs();
    for e in 0..graph.edge_count() {
        let (a, c) = (t[e] as usize, h[e] as usize);
        d[a][c] = d[a][c].min(f[e]);
        d[c][a] = d[c][a].min(b[e]);
    }
    for k in 0..n {
        for i in 0..n {
            for j in 0..n {
                let via = d[i][k] + d[k][j];
                if via < d[i][j] {
                    d[i][j] = via;
                }
            }
        }
    }
    d
}

/// Brute-force cost between two spots from the all-pairs node costs.
fn spot_cost(graph: &TravelGraph, all: &[Vec<f64>], from: Spot, to: Spot) -> f64 {
    let mut best = graph.direct(from, to).unwrap_or(f64::INFINITY);
    for (u, a) in graph.leave(from).iter() {
        for (v, b) in graph.arrive(to).iter() {
            best = best.min(a + all[u as usize][v as usize] + b);
        }
    }
    best
}

#[test]
fn grid_costs_are_manhattan_distances() {
    // Closed form: on a complete grid of unit blocks, the shortest street path between
    // corners is |dx| + |dy|.
    let (coords, offsets) = grid_lines(6, 5);
    let g = TravelGraph::from_lines(&coords, &offsets, &LineOptions::default()).unwrap();
    g.check().unwrap();
    assert_eq!(g.component_count(), 1);
    let pts: Vec<[f64; 2]> = (0..30).map(|i| [(i % 6) as f64, (i / 6) as f64]).collect();
    let snaps: Vec<Spot> = snap_points(&g, &pts, "points", Some(0.0)).unwrap().iter().map(|s| s.spot).collect();
    let rows = travel_costs(&g, &snaps, &snaps, &CostOptions::default()).unwrap();
    let dense = rows.dense(pts.len());
    for (i, p) in pts.iter().enumerate() {
        for (j, q) in pts.iter().enumerate() {
            let manhattan = (p[0] - q[0]).abs() + (p[1] - q[1]).abs();
            assert_eq!(dense[i * pts.len() + j], manhattan);
        }
    }
}

#[test]
fn part_way_points_on_grid_follow_manhattan_through_corners() {
    // Closed form: a point at (0.25, 0) to one at (2, 0.5) on unit blocks: 1.75 + 0.5.
    let (coords, offsets) = grid_lines(4, 4);
    let g = TravelGraph::from_lines(&coords, &offsets, &LineOptions::default()).unwrap();
    let s = snap_points(&g, &[[0.25, -0.1], [2.1, 0.5]], "points", Some(0.2)).unwrap();
    assert!((s[0].gap - 0.1).abs() < 1e-12 && (s[0].along - 0.25).abs() < 1e-12);
    let spots = [s[0].spot, s[1].spot];
    let rows = travel_costs(&g, &spots[..1], &spots[1..], &CostOptions::default()).unwrap();
    assert!((rows.costs[0] - 2.25).abs() < 1e-12);
    // Same edge: straight along it.
    let s2 = snap_points(&g, &[[0.75, 0.0]], "points", None).unwrap();
    let rows = travel_costs(&g, &spots[..1], &[s2[0].spot], &CostOptions::default()).unwrap();
    assert!((rows.costs[0] - 0.5).abs() < 1e-12);
}

#[test]
fn one_way_edge_is_travelled_one_way_only() {
    // 0 -> 1 one way (cost 1); 1 -> 2 -> 0 both ways (cost 5 each).
    let g =
        TravelGraph::from_edges(&[0, 1, 2], &[1, 2, 0], &[1.0, 5.0, 5.0], None, Some(&[1, 0, 0]), None, None).unwrap();
    g.check().unwrap();
    let rows = travel_costs(&g, &[Spot::Node(0), Spot::Node(1)], &[Spot::Node(1), Spot::Node(0)], &Default::default())
        .unwrap();
    // 1 back to 0 must go round by 2: 5 + 5.
    assert_eq!(rows.dense(2), vec![1.0, 0.0, 0.0, 10.0]);
    // Part-way on the one-way edge, at 0.5: ahead costs 0.5, behind needs the loop.
    let mid = Spot::OnEdge { edge: 0, fraction: 0.5 };
    let rows = travel_costs(&g, &[mid], &[Spot::Node(1), Spot::Node(0)], &Default::default()).unwrap();
    assert_eq!(rows.costs, vec![0.5, 10.5]);
    let back = Spot::OnEdge { edge: 0, fraction: 0.25 };
    let rows = travel_costs(&g, &[mid], &[back], &Default::default()).unwrap();
    // From 0.5 back to 0.25 against the one-way: round the loop, 0.5 + 10 + 0.25.
    assert_eq!(rows.costs, vec![10.75]);
}

#[test]
fn edges_drawn_along_one_shape_carry_a_point_on_it_both_ways() {
    // Nodes (0, 0), (10, 0), (0, 5). Edge 0 runs 0 -> 1 one way, edge 1 runs 1 -> 0 one way
    // along the same segment (a two-way street as two one-way records), edge 2 joins 0 and 2
    // both ways, edge 3 is a faster lane 0 -> 1 (cost 4) on the same segment again.
    // Closed form: from (7, 0) east to node 1 costs 0.3 of the cheapest eastbound edge (4),
    // west to node 0 0.7 of the westbound edge (10), then 5 to node 2.
    let xy = [[0.0, 0.0], [10.0, 0.0], [0.0, 5.0]];
    let g = TravelGraph::from_edges(
        &[0, 1, 0, 0],
        &[1, 0, 2, 1],
        &[10.0, 10.0, 5.0, 4.0],
        None,
        Some(&[1, 1, 0, 1]),
        None,
        Some(&xy),
    )
    .unwrap();
    let snaps = snap_points(&g, &[[7.0, 1.0], [3.0, -1.0]], "points", None).unwrap();
    // Both on the shape's lowest edge, measured along it.
    assert_eq!(snaps[0].spot, Spot::OnEdge { edge: 0, fraction: 0.7 });
    assert_eq!(snaps[1].spot, Spot::OnEdge { edge: 0, fraction: 0.3 });
    let spots: Vec<Spot> = snaps.iter().map(|s| s.spot).collect();
    let to = [Spot::Node(1), Spot::Node(2), spots[1]];
    let rows = travel_costs(&g, &spots[..1], &to, &CostOptions::default()).unwrap();
    let expected = [0.3 * 4.0, 0.7 * 10.0 + 5.0, 0.4 * 10.0];
    for (got, want) in rows.costs.iter().zip(expected) {
        assert!((got - want).abs() < 1e-12, "{:?} against {expected:?}", rows.costs);
    }
    // From (3, 0) east to (7, 0): 0.4 of the faster lane.
    let rows = travel_costs(&g, &spots[1..], &spots[..1], &CostOptions::default()).unwrap();
    assert!((rows.costs[0] - 0.4 * 4.0).abs() < 1e-12);
    // Against Floyd–Warshall through the nodes (spot_cost, which leaves and arrives by the
    // same shape costs): equal.
    let all = floyd(&g);
    for &from in &spots {
        for &dest in &to {
            let rows = travel_costs(&g, &[from], &[dest], &CostOptions::default()).unwrap();
            assert!((rows.costs[0] - spot_cost(&g, &all, from, dest)).abs() < 1e-12);
        }
    }
    // Catchments: the site at (3, 0) serves every place of the street, at its distance by
    // the cheapest edge each way.
    let pieces = catchment_pieces(&g, &spots[1..], None).unwrap();
    for p in &pieces.pieces {
        assert_eq!(p.site, 0);
        if p.edge != 2 {
            // x along the street of a share of edge `p.edge` (edge 1 is drawn from x = 10).
            let x = |share: f64| if p.edge == 1 { 10.0 * (1.0 - share) } else { 10.0 * share };
            let cost = |x: f64| if x >= 3.0 { (x - 3.0) * 0.4 } else { 3.0 - x };
            assert!((p.cost_start - cost(x(p.start))).abs() < 1e-9, "{p:?}");
            assert!((p.cost_end - cost(x(p.end))).abs() < 1e-9, "{p:?}");
        }
    }
    let street: f64 = pieces.pieces.iter().filter(|p| p.edge != 2).map(|p| (p.end - p.start) * 10.0).sum::<f64>() / 3.0;
    assert!((street - 10.0).abs() < 1e-9, "each of the three edges of the street is covered once: {street}");
}

#[test]
fn a_cost_for_a_direction_not_travelled_may_be_missing() {
    // Edge 0 runs 0 -> 1 only, with no reverse cost (NaN); edge 1 both ways; edge 2 runs
    // 1 -> 0 only (backward), with no forward cost (NaN) but a reverse cost of 5.
    let g = TravelGraph::from_edges(
        &[0, 1, 0],
        &[1, 2, 1],
        &[1.0, 2.0, f64::NAN],
        Some(&[f64::NAN, 3.0, 5.0]),
        Some(&[1, 0, -1]),
        None,
        None,
    )
    .unwrap();
    g.check().unwrap();
    // Floyd–Warshall over the directions travelled: 0 -> 1 costs 1, 1 -> 0 costs 5.
    let all = floyd(&g);
    assert_eq!((all[0][1], all[1][0], all[2][0]), (1.0, 5.0, 8.0));
    // Where the direction is travelled the cost must be given: named by row.
    for (cost, reverse, way, argument) in [
        ([f64::NAN, 2.0], [1.0, 3.0], [0, 0], "cost"),
        ([1.0, 2.0], [f64::NAN, 3.0], [-1, 0], "reverse_cost"),
        ([f64::NAN, 2.0], [1.0, 3.0], [1, 0], "cost"),
    ] {
        match TravelGraph::from_edges(&[0, 1], &[1, 2], &cost, Some(&reverse), Some(&way), None, None) {
            Err(crate::error::Error::InvalidEdge { argument: a, row: 0, .. }) => assert_eq!(a, argument),
            other => panic!("{other:?}"),
        }
    }
    // Backward only without a reverse column: `cost` prices the travelled direction.
    assert!(TravelGraph::from_edges(&[0], &[1], &[f64::NAN], None, Some(&[-1]), None, None).is_err());
}

#[test]
fn separate_components_are_found_and_unreachable_pairs_absent() {
    let g = TravelGraph::from_edges(&[0, 2], &[1, 3], &[1.0, 1.0], None, None, Some(5), None).unwrap();
    assert_eq!(g.component_count(), 3); // {0,1}, {2,3}, {4}
    assert_eq!(g.node_components(), &[0, 0, 1, 1, 2]);
    let rows = travel_costs(&g, &[Spot::Node(0)], &[Spot::Node(1), Spot::Node(3)], &Default::default()).unwrap();
    assert_eq!(rows.columns, vec![0]);
    let dense = rows.dense(2);
    assert_eq!(dense[0], 1.0);
    assert!(dense[1].is_nan());
}

#[test]
fn bad_rows_are_named() {
    let e = TravelGraph::from_edges(&[0], &[1], &[f64::NAN], None, None, None, None).unwrap_err();
    assert_eq!(e.row(), Some(0));
    assert!(e.to_string().starts_with("cost[0]"), "{e}");
    let e = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1.0, -1.0], None, None, None, None).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("cost", Some(1)));
    let e = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1.0, 1.0], None, Some(&[0, 2]), None, None).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("one_way", Some(1)));
    let e = TravelGraph::from_edges(&[0], &[7], &[1.0], None, None, Some(3), None).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("head", Some(0)));
    // A node count that disagrees with the coordinates' (one point per node) is refused.
    let three = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
    let e = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1.0, 1.0], None, None, Some(5), Some(&three)).unwrap_err();
    assert_eq!(e.argument(), "nodes");
    assert!(e.to_string().contains("coordinates hold 3 points"), "{e}");
    let g = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1.0, 1.0], None, None, Some(3), Some(&three)).unwrap();
    assert_eq!(g.node_count(), 3);
    let e =
        TravelGraph::from_lines(&[[0.0, 0.0], [1.0, 0.0], [2.0, 2.0]], &[0, 2, 3], &Default::default()).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("lines", Some(1)));
    let (coords, offsets) = grid_lines(2, 2);
    let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
    let e = snap_points(&g, &[[0.5, 0.0], [9.0, 9.0]], "sites", Some(1.0)).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("sites", Some(1)));
}

#[test]
fn tolerance_joins_nearby_ends_and_zero_leaves_them_dangling() {
    let coords = [[0.0, 0.0], [1.0, 0.0], [1.0 + 1e-9, 0.0], [2.0, 0.0]];
    let exact = TravelGraph::from_lines(&coords, &[0, 2, 4], &Default::default()).unwrap();
    assert_eq!((exact.node_count(), exact.dangling_ends(), exact.component_count()), (4, 4, 2));
    let joined =
        TravelGraph::from_lines(&coords, &[0, 2, 4], &LineOptions { tolerance: 1e-6, ..Default::default() }).unwrap();
    assert_eq!((joined.node_count(), joined.dangling_ends(), joined.component_count()), (3, 2, 1));
}

#[test]
fn k_nearest_and_limit_agree_with_the_full_matrix() {
    let (coords, offsets) = grid_lines(7, 7);
    let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
    let pts: Vec<[f64; 2]> = (0..40).map(|i| [(i * 37 % 61) as f64 / 10.0, (i * 17 % 59) as f64 / 10.0]).collect();
    let spots: Vec<Spot> = snap_points(&g, &pts, "points", None).unwrap().iter().map(|s| s.spot).collect();
    let full = travel_costs(&g, &spots, &spots, &Default::default()).unwrap().dense(40);
    let limited =
        travel_costs(&g, &spots, &spots, &CostOptions { limit: Some(3.0), ..Default::default() }).unwrap().dense(40);
    let nearest = travel_costs(&g, &spots, &spots, &CostOptions { k: Some(5), ..Default::default() }).unwrap();
    for i in 0..40 {
        for j in 0..40 {
            let c = full[i * 40 + j];
            let l = limited[i * 40 + j];
            if c <= 3.0 {
                assert_eq!(l, c);
            } else {
                assert!(l.is_nan());
            }
        }
        let mut row: Vec<(f64, usize)> = (0..40).map(|j| (full[i * 40 + j], j)).collect();
        row.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let got = &nearest.columns[nearest.offsets[i]..nearest.offsets[i + 1]];
        let mut want: Vec<u32> = row[..5].iter().map(|r| r.1 as u32).collect();
        want.sort_unstable();
        // Ties at the fifth cost go to the lower column, as the sort above orders them.
        assert_eq!(got, &want[..]);
    }
}

#[test]
fn ties_go_to_the_lower_row_in_k_nearest_and_catchments() {
    // Path 0 - 1 - 2 with unit costs and a zero-cost edge 0 - 3. Closed form: from node 3,
    // nodes 0 and 3 both cost 0, so k = 1 keeps destination row 0 (node 0), and node 1 is
    // 1 from node 0 and from node 2 alike, so it goes to site row 0 even when that site is
    // the higher node.
    let g = TravelGraph::from_edges(&[0, 1, 0], &[1, 2, 3], &[1.0, 1.0, 0.0], None, None, None, None).unwrap();
    let one = CostOptions { k: Some(1), ..Default::default() };
    let rows = travel_costs(&g, &[Spot::Node(3)], &[Spot::Node(0), Spot::Node(3)], &one).unwrap();
    assert_eq!((rows.columns, rows.costs), (vec![0], vec![0.0]));
    let sites = [Spot::Node(2), Spot::Node(0)];
    let points = [Spot::Node(1), Spot::Node(3)];
    let c = network_catchments(&g, &points, &sites, Weights::Unit, None).unwrap();
    assert_eq!(c.site, vec![Some(0), Some(1)]);
    assert_eq!(c.node_site, vec![Some(1), Some(0), Some(0), Some(1)]);
    assert_eq!(c.cost, vec![1.0, 0.0]);
}

#[test]
fn catchment_pieces_cover_each_edge_once_and_match_the_cheapest_site() {
    let (coords, offsets) = grid_lines(5, 5);
    let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
    let sites: Vec<Spot> =
        snap_points(&g, &[[0.3, 0.0], [4.0, 3.6]], "sites", None).unwrap().iter().map(|s| s.spot).collect();
    let pieces = catchment_pieces(&g, &sites, None).unwrap();
    let all = floyd(&g);
    let mut covered = vec![0.0; g.edge_count()];
    for p in &pieces.pieces {
        covered[p.edge as usize] += p.end - p.start;
        for (t, c) in [(p.start, p.cost_start), (p.end, p.cost_end)] {
            let here = if t <= 0.0 {
                Spot::Node(g.ends().0[p.edge as usize])
            } else if t >= 1.0 {
                Spot::Node(g.ends().1[p.edge as usize])
            } else {
                Spot::OnEdge { edge: p.edge, fraction: t }
            };
            let cheapest = sites.iter().map(|&s| spot_cost(&g, &all, s, here)).fold(f64::INFINITY, f64::min);
            assert!((c - cheapest).abs() < 1e-9, "edge {} at {t}: {c} vs {cheapest}", p.edge);
        }
    }
    for c in covered {
        assert!((c - 1.0).abs() < 1e-12);
    }
    let points: Vec<Spot> = (0..25).map(|i| Spot::Node(i as u32)).collect();
    let nc = network_catchments(&g, &points, &sites, Weights::Unit, None).unwrap();
    for (i, &p) in points.iter().enumerate() {
        let cheapest = sites.iter().map(|&s| spot_cost(&g, &all, s, p)).fold(f64::INFINITY, f64::min);
        assert!((nc.cost[i] - cheapest).abs() < 1e-12);
    }
    assert_eq!(nc.count.iter().sum::<usize>(), 25);
}

#[test]
fn reach_stops_at_the_limit() {
    let (coords, offsets) = grid_lines(5, 5);
    let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
    let r = reach(&g, &[Spot::Node(12)], 1.5).unwrap(); // centre node (2, 2)
                                                        // Closed form: within 1.5 of an inner grid corner lie its 4 block sides (4 × 1) and the
                                                        // first half of each of the 3 further sides at each neighbour (12 × 0.5): 10 units.
    let total: f64 = r.pieces.iter().map(|p| p.end - p.start).sum();
    assert!((total - 10.0).abs() < 1e-12, "{total}");
    assert!(r.pieces.iter().all(|p| p.cost_start <= 1.5 + 1e-12 && p.cost_end <= 1.5 + 1e-12));
    assert_eq!(r.offsets.len(), r.pieces.len() + 1);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn random_graph_costs_match_floyd_warshall(
        edges in prop::collection::vec((0u32..12, 0u32..12, 0.0f64..10.0, -1i64..=1), 1..40),
        fractions in prop::collection::vec(0.01f64..0.99, 6),
    ) {
        let tail: Vec<i64> = edges.iter().map(|e| e.0 as i64).collect();
        let head: Vec<i64> = edges.iter().map(|e| e.1 as i64).collect();
        let cost: Vec<f64> = edges.iter().map(|e| e.2).collect();
        let way: Vec<i64> = edges.iter().map(|e| e.3).collect();
        let g = TravelGraph::from_edges(&tail, &head, &cost, None, Some(&way), Some(12), None).unwrap();
        prop_assert!(g.check().is_ok());
        let all = floyd(&g);
        let mut spots: Vec<Spot> = (0..12).map(Spot::Node).collect();
        for (i, f) in fractions.iter().enumerate() {
            spots.push(Spot::OnEdge { edge: (i % edges.len()) as u32, fraction: *f });
        }
        let dense = travel_costs(&g, &spots, &spots, &Default::default()).unwrap().dense(spots.len());
        for (i, &a) in spots.iter().enumerate() {
            for (j, &b) in spots.iter().enumerate() {
                let want = spot_cost(&g, &all, a, b);
                let got = dense[i * spots.len() + j];
                if want.is_finite() {
                    prop_assert!((got - want).abs() <= 1e-9 * (1.0 + want), "{} {}: {} vs {}", i, j, got, want);
                } else {
                    prop_assert!(got.is_nan());
                }
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn snapping_finds_the_nearest_segment_by_brute_force(
        lines in prop::collection::vec(((-50.0f64..50.0, -50.0f64..50.0), (-50.0f64..50.0, -50.0f64..50.0)), 1..30),
        points in prop::collection::vec((-80.0f64..80.0, -80.0f64..80.0), 1..30),
    ) {
        // Reference: the smallest point-to-segment distance over every segment (brute force).
        let mut coords = Vec::new();
        let mut offsets = vec![0];
        for (a, b) in &lines {
            coords.extend([[a.0, a.1], [b.0, b.1]]);
            offsets.push(coords.len());
        }
        let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
        let pts: Vec<[f64; 2]> = points.iter().map(|p| [p.0, p.1]).collect();
        let Ok(snaps) = snap_points(&g, &pts, "points", None) else { return Ok(()) };
        for (p, s) in pts.iter().zip(&snaps) {
            let brute = lines
                .iter()
                .filter(|(a, b)| a != b)
                .map(|(a, b)| {
                    let (ax, ay, bx, by) = (a.0, a.1, b.0, b.1);
                    let (dx, dy) = (bx - ax, by - ay);
                    let t = (((p[0] - ax) * dx + (p[1] - ay) * dy) / (dx * dx + dy * dy)).clamp(0.0, 1.0);
                    ((p[0] - ax - t * dx).powi(2) + (p[1] - ay - t * dy).powi(2)).sqrt()
                })
                .fold(f64::INFINITY, f64::min);
            prop_assert!((s.gap - brute).abs() <= 1e-9 * (1.0 + brute), "{} vs {}", s.gap, brute);
        }
    }
}

#[test]
fn costs_count_one_step_per_origin_and_a_cancelled_run_searches_nothing_more() {
    let (coords, offsets) = grid_lines(6, 6);
    let g = TravelGraph::from_lines(&coords, &offsets, &Default::default()).unwrap();
    let spots: Vec<Spot> = (0..g.node_count() as u32).map(Spot::Node).collect();
    let watch = Watch::new();
    let options = CostOptions { watch: watch.clone(), ..Default::default() };
    let rows = travel_costs(&g, &spots, &spots, &options).unwrap();
    let n = spots.len() as u64;
    assert_eq!(watch.progress(), (n, n));
    // Every corner reaches every corner on a complete grid: the Manhattan distance.
    assert_eq!(rows.columns.len(), spots.len() * spots.len());
    watch.cancel();
    let stopped = travel_costs(&g, &spots, &spots, &options).unwrap();
    assert!(stopped.columns.is_empty());
    assert_eq!(watch.progress(), (n, 2 * n));
    assert!(watch.finish(()).is_err());
}

#[test]
fn a_cost_of_negative_zero_is_zero_and_its_destination_the_nearest() {
    // A street of cost -0.0 (equal to 0): the destination on it is the cheapest (brute force
    // over the destinations' costs). Its sign bit ordered it after every positive cost.
    let coords = [[0.0, 0.0], [10.0, 0.0], [10.0, 0.0], [20.0, 0.0]];
    let options = LineOptions { cost: Some(&[-0.0, 1.0]), ..Default::default() };
    let graph = TravelGraph::from_lines(&coords, &[0, 2, 4], &options).unwrap();
    assert!(graph.edge_costs().0.iter().chain(graph.edge_costs().1).all(|c| c.is_sign_positive()));
    let origin = [Spot::OnEdge { edge: 0, fraction: 0.5 }];
    let destinations = [Spot::OnEdge { edge: 1, fraction: 0.5 }, Spot::OnEdge { edge: 0, fraction: 0.2 }];
    let all = travel_costs(&graph, &origin, &destinations, &CostOptions::default()).unwrap();
    let cheapest = (0..2).min_by(|&a, &b| all.costs[a].total_cmp(&all.costs[b])).unwrap();
    let options = CostOptions { k: Some(1), ..Default::default() };
    let nearest = travel_costs(&graph, &origin, &destinations, &options).unwrap();
    assert_eq!(nearest.columns, vec![cheapest as u32]);
    assert_eq!(nearest.costs, vec![0.0]);
}

#[test]
fn points_attach_at_extreme_scales_as_at_unit_scale() {
    // A found crash (an index out of bounds): near 1e300 squared distances overflowed and
    // near 1e-300 they underflowed, so no segment was ever nearest. Reference: the unit-scale
    // closed form (the point above the street's 4, gap 3), times the scale.
    for scale in [1e300, 1e-300, 1.0] {
        let coords = [[0.0, 0.0], [10.0 * scale, 0.0]];
        let graph = TravelGraph::from_lines(&coords, &[0, 2], &LineOptions::default()).unwrap();
        let snaps = snap_points(&graph, &[[4.0 * scale, 3.0 * scale]], "points", None).unwrap();
        assert_eq!(snaps[0].edge, 0);
        assert!((snaps[0].along / scale - 4.0).abs() < 1e-12, "{scale}: {:?}", snaps[0]);
        assert!((snaps[0].gap / scale - 3.0).abs() < 1e-12, "{scale}: {:?}", snaps[0]);
    }
}

#[test]
fn costs_whose_sum_could_overflow_are_refused() {
    // Two edges of 1e308 in a chain cost 2e308 together, beyond the largest float.
    let refused = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1e308, 1e308], None, None, None, None);
    assert!(matches!(refused, Err(crate::Error::InvalidParameter { name: "cost", .. })));
    let graph = TravelGraph::from_edges(&[0, 1], &[1, 2], &[1e307, 1e307], None, None, None, None).unwrap();
    let rows = travel_costs(&graph, &[Spot::Node(0)], &[Spot::Node(2)], &CostOptions::default()).unwrap();
    assert_eq!(rows.costs, vec![2e307]);
}

/// Geodesic lon/lat lines from `lines`, joined at equal places.
fn lonlat_graph(lines: &[&[[f64; 2]]], tolerance: f64) -> Result<TravelGraph, crate::error::Error> {
    let mut coords = Vec::new();
    let mut offsets = vec![0];
    for line in lines {
        coords.extend_from_slice(line);
        offsets.push(coords.len());
    }
    TravelGraph::from_lines(&coords, &offsets, &LineOptions { geodesic: true, tolerance, ..Default::default() })
}

#[test]
fn lonlat_ends_at_180_and_minus_180_join_and_travel_across() {
    let halves: [&[[f64; 2]]; 2] = [&[[179.9, -16.7], [180.0, -16.7]], &[[-180.0, -16.7], [-179.9, -16.7]]];
    for tolerance in [0.0, 1e-6] {
        let g = lonlat_graph(&halves, tolerance).expect("valid lines");
        assert_eq!((g.node_count(), g.component_count()), (3, 1));
    }
    // A pole is one place whatever its longitude.
    let spokes: [&[[f64; 2]]; 2] = [&[[0.0, 89.9], [0.0, 90.0]], &[[180.0, 90.0], [180.0, 89.9]]];
    assert_eq!(lonlat_graph(&spokes, 0.0).expect("valid lines").node_count(), 3);
    // Within the tolerance (metres) of a pole, ends join there whatever their longitudes:
    // (45, 90) and (45, 89.9999999) are 1e-7 degree of meridian apart, 0.011 m (before, the
    // pole end was moved to longitude 0 first and the two were 45 degrees apart); so are
    // (-135, 89.9999999) and (45, 89.9999999), across the pole. Four spokes, one shared end:
    // 5 nodes.
    let near: [&[[f64; 2]]; 4] = [
        &[[45.0, 89.0], [45.0, 90.0]],
        &[[45.0, 89.9999999], [45.0, 89.5]],
        &[[-135.0, 89.9999999], [-135.0, 89.5]],
        &[[90.0, 89.2], [90.0, 90.0]],
    ];
    assert_eq!(lonlat_graph(&near, 0.05).expect("valid lines").node_count(), 5);
    assert_eq!(lonlat_graph(&near, 0.005).expect("valid lines").node_count(), 7);
}

#[test]
fn lonlat_tolerance_is_metres_on_the_ellipsoid() {
    // Two streets whose ends are 1e-3 degree of longitude apart at 60° N: 55.8 m by the
    // geodesic inverse (Karney 2013), against 1e-3 in degrees. They join at a tolerance just
    // above the geodesic distance and stay apart just below it; before, a tolerance of 1
    // (read as degrees) merged every end within 111 km into one node.
    let a: &[[f64; 2]] = &[[10.0, 60.0], [10.01, 60.0]];
    let b: &[[f64; 2]] = &[[10.011, 60.0], [10.02, 60.0]];
    let gap = crate::geodesic::geodesic_distances(&[[10.01, 60.0]], &[[10.011, 60.0]]).expect("valid")[0];
    assert!((gap - 55.8).abs() < 0.1, "{gap}");
    let joined = lonlat_graph(&[a, b], gap * (1.0 + 1e-9)).expect("valid lines");
    assert_eq!((joined.node_count(), joined.component_count()), (3, 1));
    let apart = lonlat_graph(&[a, b], gap * (1.0 - 1e-9)).expect("valid lines");
    assert_eq!((apart.node_count(), apart.component_count()), (4, 2));
    // The 1 m tolerance a planner would type keeps these streets apart too.
    assert_eq!(lonlat_graph(&[a, b], 1.0).expect("valid lines").node_count(), 4);
}

#[test]
fn the_degree_radius_holds_every_place_within_the_metres() {
    // Property: for seeded random places and distances, a place reached by the geodesic
    // direct problem (GeographicLib through the geodesic family) at that distance in any
    // direction lies within `degrees_within` of the start in the plane of lon/lat, taking
    // the shorter way round in longitude. Latitudes up to the poles, distances 1 m to 500 km.
    use geographiclib_rs::{DirectGeodesic, Geodesic};
    let wgs84 = Geodesic::wgs84();
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let mut uniform = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    for _ in 0..20_000 {
        let (lon, lat) = (360.0 * uniform() - 180.0, 180.0 * uniform() - 90.0);
        let metres = 10f64.powf(5.7 * uniform());
        let azimuth = 360.0 * uniform() - 180.0;
        let (lat2, lon2): (f64, f64) = wgs84.direct(lat, lon, azimuth, metres);
        let mut dlon = (lon2 - lon).rem_euclid(360.0);
        if dlon > 180.0 {
            dlon = 360.0 - dlon;
        }
        let radius = super::build::degrees_within(lat, metres);
        assert!(dlon.hypot(lat2 - lat) <= radius, "{lon} {lat} {azimuth} {metres}: {dlon} {} > {radius}", lat2 - lat);
    }
}

#[test]
fn lonlat_points_attach_across_the_antimeridian_and_by_the_pole_in_closed_form() {
    // The equator is a geodesic: from (180, 0.01) the nearest place of the equatorial ferry
    // from 179.9 to -179.9 is (180, 0), half-way, 0.01 degree of meridian away.
    let ferry: [&[[f64; 2]]; 1] = [&[[179.9, 0.0], [-179.9, 0.0]]];
    let g = lonlat_graph(&ferry, 0.0).expect("valid lines");
    let s = snap_points(&g, &[[180.0, 0.01]], "points", None).expect("attached")[0];
    let meridian = crate::geodesic::geodesic_distances(&[[180.0, 0.01]], &[[180.0, 0.0]]).expect("valid")[0];
    assert!((s.gap - meridian).abs() < 1e-6 * meridian, "{} vs {meridian}", s.gap);
    assert!(matches!(s.spot, Spot::OnEdge { fraction, .. } if (fraction - 0.5).abs() < 1e-9));
    assert!((s.on_edge[0].abs() - 180.0).abs() < 1e-9 && s.on_edge[1].abs() < 1e-12);
    // On the meridian opposite a street out from the pole, the nearest place is the pole.
    let spoke: [&[[f64; 2]]; 1] = [&[[45.0, 90.0], [45.0, 89.7]]];
    let g = lonlat_graph(&spoke, 0.0).expect("valid lines");
    let s = snap_points(&g, &[[-135.0, 89.9]], "points", None).expect("attached")[0];
    let to_pole = crate::geodesic::geodesic_distances(&[[-135.0, 89.9]], &[[0.0, 90.0]]).expect("valid")[0];
    assert!((s.gap - to_pole).abs() < 1e-6 * to_pole, "{} vs {to_pole}", s.gap);
    assert_eq!(s.spot, Spot::Node(g.ends().0[0]));
}

#[test]
fn lonlat_segments_over_a_pole_are_refused_by_row() {
    let lines: [&[[f64; 2]]; 2] = [&[[0.0, 89.5], [0.0, 89.9]], &[[0.0, 89.9], [180.0, 89.9]]];
    match lonlat_graph(&lines, 0.0) {
        Err(crate::error::Error::InvalidEdge { argument: "lines", row: 1, reason }) => {
            assert!(reason.contains("pole"), "{reason}")
        }
        other => panic!("expected a refusal of row 1, got {other:?}"),
    }
}

#[test]
fn parts_of_a_row_share_its_cost_by_length_and_name_the_row() {
    // Row 0 is two parts end to end, 3 and 4 long (closed form: a row cost of 14 goes 6 and
    // 8, adding up to 14); row 1 is one line. Every edge names its row, and the parts keep the
    // row's one-way code.
    let coords = [[0.0, 0.0], [3.0, 0.0], [3.0, 0.0], [3.0, 4.0], [3.0, 4.0], [0.0, 4.0]];
    let options =
        LineOptions { cost: Some(&[14.0, 1.0]), one_way: Some(&[1, 0]), parts: Some(&[0, 2, 3]), ..Default::default() };
    let g = TravelGraph::from_lines(&coords, &[0, 2, 4, 6], &options).unwrap();
    assert_eq!((g.edge_count(), g.node_count()), (3, 4));
    assert_eq!(g.edge_lines(), Some(&[0u32, 0, 1][..]));
    let (forward, backward) = g.edge_costs();
    assert_eq!(forward, &[6.0, 8.0, 1.0]);
    assert!(backward[0].is_infinite() && backward[1].is_infinite() && backward[2] == 1.0);
    // Split where they cross (row 1 crosses row 0's first part at x = 1), the pieces still
    // name the rows, not the parts.
    let coords = [[0.0, 0.0], [3.0, 0.0], [3.0, 0.0], [3.0, 4.0], [1.0, -1.0], [1.0, 1.0]];
    let split = LineOptions { parts: Some(&[0, 2, 3]), split_crossings: true, ..Default::default() };
    let g = TravelGraph::from_lines(&coords, &[0, 2, 4, 6], &split).unwrap();
    assert_eq!(g.edge_lines(), Some(&[0u32, 0, 0, 1, 1][..]));
}

#[test]
fn a_row_without_parts_or_with_a_short_part_is_refused_naming_the_row() {
    let coords = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
    // Row 1 has no parts (an empty geometry), as an empty line is refused.
    let empty = LineOptions { parts: Some(&[0, 1, 1]), ..Default::default() };
    match TravelGraph::from_lines(&coords[..2], &[0, 2], &empty).unwrap_err() {
        crate::Error::InvalidEdge { argument: "lines", row: 1, reason } => assert!(reason.contains("got 0")),
        other => panic!("{other:?}"),
    }
    // Row 0's second part has one point: named by row and part.
    let short = LineOptions { parts: Some(&[0, 2]), ..Default::default() };
    match TravelGraph::from_lines(&coords, &[0, 2, 3], &short).unwrap_err() {
        crate::Error::InvalidEdge { argument: "lines", row: 0, reason } => {
            assert!(reason.starts_with("part 1: a line needs at least 2 points"), "{reason}")
        }
        other => panic!("{other:?}"),
    }
    // A bad one-way code names its row (one code per row, so no part).
    let coords4 = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
    let code = LineOptions { parts: Some(&[0, 2]), one_way: Some(&[5]), ..Default::default() };
    match TravelGraph::from_lines(&coords4, &[0, 2, 4], &code).unwrap_err() {
        crate::Error::InvalidEdge { argument: "one_way", row: 0, reason } => assert!(!reason.starts_with("part")),
        other => panic!("{other:?}"),
    }
    // A bad cost names its row, with the row's own value.
    let bad = LineOptions { parts: Some(&[0, 1, 2]), cost: Some(&[1.0, -2.0]), ..Default::default() };
    let coords = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
    match TravelGraph::from_lines(&coords, &[0, 2, 4], &bad).unwrap_err() {
        crate::Error::InvalidEdge { argument: "cost", row: 1, reason } => assert!(reason.contains("-2")),
        other => panic!("{other:?}"),
    }
}
