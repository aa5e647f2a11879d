use super::*;
use crate::geometry::predicates::{orient2d, orient3d};
use crate::partition::testing::lcg_cloud;
use crate::partition::voronoi_cells;

fn square(lo: f64, hi: f64) -> Vec<Point> {
    vec![[lo, lo], [hi, lo], [hi, hi], [lo, hi]]
}

fn cell_rings(cells: &VoronoiCells, i: usize) -> Vec<&[Point]> {
    let (lo, hi) = (cells.offsets[i], cells.offsets[i + 1]);
    cells
        .parts
        .windows(2)
        .filter(|w| w[0] >= lo && w[1] <= hi && w[0] < w[1])
        .map(|w| &cells.vertices[w[0]..w[1]])
        .collect()
}

/// Even-odd membership, counted independently of the kernel's own ray test.
fn inside(rings: &[&[Point]], p: Point) -> bool {
    let mut odd = false;
    for ring in rings {
        for k in 0..ring.len() {
            let (a, b) = (ring[k], ring[(k + 1) % ring.len()]);
            if (a[1] > p[1]) != (b[1] > p[1]) && p[0] < a[0] + (p[1] - a[1]) * (b[0] - a[0]) / (b[1] - a[1]) {
                odd = !odd;
            }
        }
    }
    odd
}

/// The definition, checked by brute force on the lifted points: every triangle's lifted
/// plane has no lifted site strictly below it, and every redundant site lies on or above
/// the plane of a triangle containing it.
fn check_regular(sites: &[Point], powers: &[f64], p: &PowerCells) {
    let lift = |i: usize| [sites[i][0], sites[i][1], sites[i][0].powi(2) + sites[i][1].powi(2) - powers[i]];
    for t in &p.triangles {
        assert!(orient2d(sites[t[0]], sites[t[1]], sites[t[2]]) > 0.0, "triangle {t:?} not counter-clockwise");
        for q in 0..sites.len() {
            assert!(
                !(orient3d(lift(t[0]), lift(t[1]), lift(t[2]), lift(q)) > 0.0),
                "site {q} below the lifted triangle {t:?}"
            );
        }
    }
    for (q, _) in p.redundant.iter().enumerate().filter(|(_, &r)| r) {
        assert!(!p.edges.iter().flatten().any(|&v| v == q), "redundant site {q} on an edge");
        let held = p.triangles.iter().any(|t| {
            (0..3).all(|k| orient2d(sites[t[k]], sites[t[(k + 1) % 3]], sites[q]) >= 0.0)
                && !(orient3d(lift(t[0]), lift(t[1]), lift(t[2]), lift(q)) > 0.0)
        });
        assert!(held || p.triangles.is_empty(), "redundant site {q} not above a triangle over it");
    }
}

#[test]
fn equal_powers_give_the_voronoi_cells() {
    let sites = lcg_cloud(400, 9, [0.0, 0.0], 50.0);
    let sq = square(-5.0, 55.0);
    let region = Region { vertices: &sq, ring_offsets: &[0, 4] };
    let power = power_cells(&sites, &vec![3.5; sites.len()], Some(region)).unwrap();
    let voronoi = voronoi_cells(&sites, Some(region)).unwrap();
    assert!(power.redundant.iter().all(|&r| !r));
    for (a, b) in power.cells.area.iter().zip(&voronoi.area) {
        assert!((a - b).abs() <= 1e-9 * b.abs(), "{a} vs {b}");
    }
}

#[test]
fn every_sample_point_lies_in_the_cell_of_its_least_power_site() {
    let sites = lcg_cloud(150, 21, [0.0, 0.0], 10.0);
    let powers: Vec<f64> = lcg_cloud(150, 22, [0.0, 0.0], 1.0).iter().map(|p| 4.0 * p[0] - 1.0).collect();
    let outer = [[-1.0, -1.0], [11.0, -1.0], [11.0, 5.0], [5.0, 5.0], [5.0, 11.0], [-1.0, 11.0]];
    let hole = [[1.0, 1.0], [1.0, 3.0], [3.0, 3.0], [3.0, 1.0]];
    let vertices: Vec<Point> = outer.iter().chain(hole.iter()).copied().collect();
    let region = Region { vertices: &vertices, ring_offsets: &[0, 6, 10] };
    let p = power_cells(&sites, &powers, Some(region)).unwrap();
    check_regular(&sites, &powers, &p);
    assert!(p.redundant.iter().any(|&r| r), "the test should hold redundant sites");
    // Closed form: 12 × 12 − 6 × 6 − 2 × 2 = 104.
    let total: f64 = p.cells.area.iter().sum();
    assert!((total - 104.0).abs() < 1e-9, "total {total}");
    let samples = lcg_cloud(3000, 23, [-1.0, -1.0], 12.0);
    let nearest = power_nearest(&sites, &powers, &samples).unwrap();
    for (x, &i) in samples.iter().zip(&nearest) {
        let i = i as usize;
        let own = inside(&cell_rings(&p.cells, i), *x);
        let in_region = inside(&[&outer[..], &hole[..]], *x);
        // Points within 1e-9 of a bisector may fall either way.
        let margin = (0..sites.len())
            .filter(|&j| j != i)
            .map(|j| {
                (crate::geometry::distance_squared(*x, sites[j]) - powers[j])
                    - (crate::geometry::distance_squared(*x, sites[i]) - powers[i])
            })
            .fold(f64::INFINITY, f64::min);
        if margin > 1e-9 {
            assert_eq!(own, in_region, "sample {x:?}, site {i}");
        }
    }
    for (i, &r) in p.redundant.iter().enumerate() {
        if r {
            assert_eq!(p.cells.area[i], 0.0);
            assert_eq!(p.cells.offsets[i], p.cells.offsets[i + 1]);
        }
    }
}

#[test]
fn powers_keep_their_weight_in_a_region_wider_than_2_to_the_537() {
    // Closed form: sites at (∓d, 0) with powers W and 0 meet where (x + d)² − W = (x − d)²,
    // at x = W / (4d); with d = 2^504 and W = 2^1009, at x = 2^503. The square region is 2^541
    // across, so the frame's factor is 2^-541, whose square (2^-1082) underflowed to zero:
    // the powers were dropped and the cells met at x = 0. The areas overflow (2^1082), so
    // the test reads the vertices.
    let (d, w, half) = (2f64.powi(504), 2f64.powi(1009), 2f64.powi(540));
    let region_vertices = square(-half, half);
    let region = Region { vertices: &region_vertices, ring_offsets: &[0, 4] };
    let p = power_cells(&[[-d, 0.0], [d, 0.0]], &[w, 0.0], Some(region)).unwrap();
    let xs = |i: usize| cell_rings(&p.cells, i).into_iter().flatten().map(|v| v[0]).collect::<Vec<f64>>();
    let left_end = xs(0).into_iter().fold(f64::MIN, f64::max);
    let right_start = xs(1).into_iter().fold(f64::MAX, f64::min);
    let meet = 2f64.powi(503);
    // The meeting line is 2^-38 of the frame across: a few local roundings are 2^-15 of it.
    for got in [left_end, right_start] {
        assert!((got - meet).abs() <= 1e-3 * meet, "cells meet at {got:e}, not {meet:e}");
    }
}

#[test]
fn overflowing_powers_and_sites_that_round_together_are_named_as_such() {
    // Both stop the cell builder early with every cell empty; the region is not to blame.
    let e = power_cells(&[[0.0, 0.0], [1e-200, 0.0], [0.0, 1e-200]], &[0.0, 1e300, 0.0], None).unwrap_err();
    assert!(matches!(e, Error::Degenerate { argument: "powers", .. }), "{e:?}");
    assert!(e.to_string().contains("powers[1] is too large"), "{e}");
    // 1e-20 and 2e-20 both round to the frame's -1 once shifted to the centre (1, 1).
    let wide = square(-1.0, 3.0);
    let e = power_cells(
        &[[1e-20, 0.0], [2e-20, 0.0], [0.5, 2.0]],
        &[0.0, 0.0, 0.0],
        Some(Region { vertices: &wide, ring_offsets: &[0, 4] }),
    )
    .unwrap_err();
    assert!(matches!(e, Error::Degenerate { argument: "sites", .. }), "{e:?}");
    assert!(e.to_string().contains("too close together"), "{e}");
}

#[test]
fn degenerate_inputs() {
    let sq = square(-10.0, 10.0);
    let region = Region { vertices: &sq, ring_offsets: &[0, 4] };
    // One site: the whole region.
    let one = power_cells(&[[1.0, 2.0]], &[5.0], Some(region)).unwrap();
    assert!((one.cells.area[0] - 400.0).abs() < 1e-9);
    // Two sites: the power bisector x = (w0 − w1) / (2 · 2) = 1 for sites at x = ±1 with
    // powers 4 and 0 (closed form), so areas 11 × 20 and 9 × 20.
    let two = power_cells(&[[-1.0, 0.0], [1.0, 0.0]], &[4.0, 0.0], Some(region)).unwrap();
    assert!((two.cells.area[0] - 220.0).abs() < 1e-9 && (two.cells.area[1] - 180.0).abs() < 1e-9);
    // Collinear: lifted z = x² − w at x = −2, 0, 2 is 4, 3, 4 with powers 0, −3, 0 (the
    // middle one below the chord, kept) and 4, 5, 4 with powers 0, −5, 0 (above, redundant).
    let line = [[-2.0, 0.0], [0.0, 0.0], [2.0, 0.0]];
    let kept = power_cells(&line, &[0.0, -3.0, 0.0], Some(region)).unwrap();
    assert_eq!(kept.redundant, vec![false, false, false]);
    assert_eq!(kept.edges, vec![[0, 1], [1, 2]]);
    let hidden = power_cells(&line, &[0.0, -5.0, 0.0], Some(region)).unwrap();
    assert_eq!(hidden.redundant, vec![false, true, false]);
    assert_eq!(hidden.edges, vec![[0, 2]]);
    assert_eq!(hidden.cells.area[1], 0.0);
    assert!((hidden.cells.area.iter().sum::<f64>() - 400.0).abs() < 1e-9);
    // Four cocircular sites, equal powers: four quarter squares.
    let four = [[1.0, 0.0], [0.0, 1.0], [-1.0, 0.0], [0.0, -1.0]];
    let quarter = power_cells(&four, &[2.0; 4], Some(region)).unwrap();
    for a in &quarter.cells.area {
        assert!((a - 100.0).abs() < 1e-9);
    }
    // A site of far smaller power inside a triangle of others: redundant.
    let tri = [[0.0, 0.0], [6.0, 0.0], [0.0, 6.0], [1.0, 1.0]];
    let p = power_cells(&tri, &[10.0, 10.0, 10.0, -30.0], Some(region)).unwrap();
    assert_eq!(p.redundant, vec![false, false, false, true]);
    // ...and of far larger power: hull sites keep (far-away) cells, so only the interior
    // neighbours are hidden; within the region the big site holds everything but corners.
    let p = power_cells(&tri, &[0.0, 0.0, 0.0, 1e6], Some(region)).unwrap();
    assert_eq!(p.redundant, vec![false, false, false, false]);
    assert!((p.cells.area[3] - 400.0).abs() < 1e-9);
    let six = [[-100.0, -100.0], [100.0, -100.0], [0.0, 100.0], [1.0, 1.0], [2.0, 1.0], [1.5, 1.2]];
    let powers = [0.0, 0.0, 0.0, 0.0, 0.0, 1e4];
    let p = power_cells(&six, &powers, Some(region)).unwrap();
    check_regular(&six, &powers, &p);
    assert_eq!(p.redundant, vec![false, false, false, true, true, false]);
}

#[test]
fn bad_input_is_refused_with_its_row() {
    let sites = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0]];
    let e = power_cells(&sites, &[1.0, 2.0, 3.0], None).unwrap_err();
    assert_eq!(e, Error::RepeatedPoint { argument: "sites", row: 2, first: 0 });
    let e = power_cells(&sites[..2], &[1.0, f64::NAN], None).unwrap_err();
    assert_eq!(e.to_string(), "powers must be finite; powers[1] = NaN");
    assert!(matches!(power_cells(&sites[..2], &[1.0], None), Err(Error::LengthMismatch { .. })));
    let e = power_cells(&sites[..2], &[-1e308, 1e308], None).unwrap_err();
    assert!(matches!(e, Error::Degenerate { argument: "powers", .. }));
}

#[test]
fn grouped_equals_separate_calls() {
    let sites = lcg_cloud(60, 3, [0.0, 0.0], 10.0);
    let powers: Vec<f64> = (0..60).map(|i| (i % 7) as f64 - 3.0).collect();
    let labels: Vec<i64> = (0..60).map(|i| (i % 3) as i64).collect();
    let sq = square(-1.0, 11.0);
    let region = Region { vertices: &sq, ring_offsets: &[0, 4] };
    let (g, places) = power_cells_grouped(&sites, &powers, &labels, Some(region), OnGroupError::Raise).unwrap();
    let by_row = PowerCells::cells_by_row(&g, &places);
    for label in 0..3 {
        let rows: Vec<usize> = (0..60).filter(|&i| labels[i] == label).collect();
        let own: Vec<Point> = rows.iter().map(|&i| sites[i]).collect();
        let own_powers: Vec<f64> = rows.iter().map(|&i| powers[i]).collect();
        let alone = power_cells(&own, &own_powers, Some(region)).unwrap();
        for (k, &i) in rows.iter().enumerate() {
            assert_eq!(by_row.area[i], alone.cells.area[k]);
        }
        let mapped: Vec<[usize; 2]> = alone.edges.iter().map(|e| [rows[e[0]], rows[e[1]]]).collect();
        assert_eq!(g.results[label as usize].as_ref().unwrap().edges, mapped);
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(96))]
    #[test]
    fn random_small_grids_are_regular_and_tile(
        raw in proptest::collection::vec((-6i32..6, -6i32..6, -12i32..12), 1..40),
        scale_exp in -20i32..20,
    ) {
        // Integer grids: many collinear and cocircular sites, equal powers, repeats.
        let mut seen = std::collections::HashSet::new();
        let raw: Vec<_> = raw.into_iter().filter(|&(x, y, _)| seen.insert((x, y))).collect();
        let s = 2f64.powi(scale_exp);
        let sites: Vec<Point> = raw.iter().map(|&(x, y, _)| [x as f64 * s, y as f64 * s]).collect();
        let powers: Vec<f64> = raw.iter().map(|&(_, _, w)| w as f64 * s * s).collect();
        let sq = square(-8.0 * s, 8.0 * s);
        let region = Region { vertices: &sq, ring_offsets: &[0, 4] };
        let p = power_cells(&sites, &powers, Some(region)).unwrap();
        check_regular(&sites, &powers, &p);
        let total: f64 = p.cells.area.iter().sum();
        let expected = 256.0 * s * s;
        proptest::prop_assert!((total - expected).abs() <= 1e-9 * expected, "total {} vs {}", total, expected);
        // Redundant sites have empty cells.
        for (i, &r) in p.redundant.iter().enumerate() {
            if r {
                proptest::prop_assert_eq!(p.cells.area[i], 0.0);
            }
        }
    }
}
