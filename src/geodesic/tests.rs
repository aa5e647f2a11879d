//! Checks of the geodesic kernels against brute force and closed forms.

use super::earth::Earth;
use super::*;
use crate::geometry::random::SplitMix64;
use proptest::prelude::*;

fn cost(points: &[Point], x: Point) -> f64 {
    let earth = Earth::wgs84();
    points.iter().map(|&p| earth.distance(x, p)).sum()
}

fn lonlat() -> impl Strategy<Value = Point> {
    (-180.0f64..180.0, -90.0f64..=90.0).prop_map(|(x, y)| [x, y])
}

#[test]
fn two_points_minimax_is_the_geodesic_midpoint() {
    // Closed form: the 1-center of two points is the midpoint of the geodesic joining them,
    // at half their distance from each.
    let earth = Earth::wgs84();
    for pair in [[[179.0, 10.0], [-178.0, -20.0]], [[0.0, 85.0], [180.0, 80.0]], [[10.0, 1.0], [60.0, 40.0]]] {
        let r = geodesic_minimax_point(&pair, Weights::Unit, &CenterOptions::default()).unwrap();
        let d = earth.distance(pair[0], pair[1]);
        assert!((r.radius - d / 2.0).abs() < 1e-6, "{r:?} {d}");
        assert!((earth.distance(r.location, pair[0]) - d / 2.0).abs() < 1e-6);
        assert!((earth.distance(r.location, pair[1]) - d / 2.0).abs() < 1e-6);
        assert!(r.converged && r.gap <= 1e-9 * r.radius + 1e-6, "{r:?}");
    }
}

#[test]
fn symmetric_about_the_equator_puts_the_weber_point_on_it() {
    // Symmetry: the objective is unchanged by reflection in the equator and convex on the
    // cap, so its unique minimiser lies on the equator.
    let pts = [[170.0, 5.0], [170.0, -5.0], [-175.0, 12.0], [-175.0, -12.0], [178.0, 1.0], [178.0, -1.0]];
    let r = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions { tol: 1e-12, ..Default::default() }).unwrap();
    assert!(r.location[1].abs() < 1e-8, "{r:?}");
    assert!(r.converged);
}

#[test]
fn weber_gap_bounds_the_error_and_the_point_is_locally_optimal() {
    let mut rng = SplitMix64::new(7);
    let pts: Vec<Point> = (0..300).map(|_| [170.0 + 20.0 * rng.next_f64(), -60.0 + 30.0 * rng.next_f64()]).collect();
    let rough = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions { tol: 1e-3, ..Default::default() }).unwrap();
    let fine = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions { tol: 1e-13, ..Default::default() }).unwrap();
    assert!(rough.cost - fine.cost <= rough.gap);
    assert!((cost(&pts, fine.location) - fine.cost).abs() <= 1e-9 * fine.cost);
    // Brute force: no point 10 m away in eight directions is better.
    let earth = Earth::wgs84();
    for k in 0..8 {
        let a = k as f64 * std::f64::consts::FRAC_PI_4;
        let q = earth.exp(fine.location, [10.0 * a.sin(), 10.0 * a.cos()]);
        assert!(cost(&pts, q) >= fine.cost * (1.0 - 1e-13));
    }
}

#[test]
fn more_than_a_hemisphere_is_refused() {
    let pts = [[0.0, 0.0], [90.0, 0.0], [180.0, 0.0], [-90.0, 0.0]];
    let e = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap_err();
    assert!(e.is_degenerate() && e.to_string().contains("hemisphere"), "{e}");
    assert!(geodesic_minimax_point(&pts, Weights::Unit, &CenterOptions::default()).is_err());
}

#[test]
fn out_of_range_latitude_names_the_row() {
    let e = geodesic_weber_point(&[[0.0, 0.0], [1.0, 91.0]], Weights::Unit, &WeberOptions::default()).unwrap_err();
    assert_eq!(e.row(), Some(1));
    assert!(e.to_string().contains("latitude"), "{e}");
}

#[test]
fn circle_around_the_pole_covers_its_points() {
    let pts: Vec<Point> = (0..12).map(|k| [k as f64 * 30.0 - 180.0, 80.0 + (k % 3) as f64]).collect();
    let c = geodesic_enclosing_circle(&pts, &CenterOptions::default()).unwrap();
    let earth = Earth::wgs84();
    for &p in &pts {
        assert!(earth.distance(c.center.location, p) <= c.center.radius * (1.0 + 1e-12));
    }
    // Spherical cap area 2πR²(1 − cos θ) as a rough outside check (within 1 %).
    let r = 6_371_008.8;
    let cap = 2.0 * std::f64::consts::PI * r * r * (1.0 - (c.center.radius / r).cos());
    assert!((c.area - cap).abs() < 0.01 * cap, "{} {}", c.area, cap);
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn nearest_site_equals_brute_force(points in prop::collection::vec(lonlat(), 1..60),
                                       sites in prop::collection::vec(lonlat(), 1..25)) {
        let a = geodesic_nearest_site(&points, &sites, Weights::Unit).unwrap();
        let earth = Earth::wgs84();
        for (i, &p) in points.iter().enumerate() {
            let (mut best, mut best_d) = (0, f64::INFINITY);
            for (j, &s) in sites.iter().enumerate() {
                let d = earth.distance(p, s);
                if d < best_d {
                    best = j;
                    best_d = d;
                }
            }
            prop_assert!((a.distance[i] - best_d).abs() <= 1e-9 * best_d.max(1.0));
            prop_assert!(a.index[i] == best || (earth.distance(p, sites[a.index[i]]) - best_d).abs() < 1e-9);
        }
    }

    #[test]
    fn weber_is_never_worse_than_a_data_point(centre in lonlat(), offsets in prop::collection::vec((-1.0f64..1.0, -1.0f64..1.0), 1..30)) {
        let earth = Earth::wgs84();
        let pts: Vec<Point> = offsets.iter().map(|&(e, n)| earth.exp(centre, [e * 2e6, n * 2e6])).collect();
        let r = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap();
        let best = pts.iter().map(|&c| cost(&pts, c)).fold(f64::INFINITY, f64::min);
        prop_assert!(r.cost <= best * (1.0 + 1e-12) + 1e-6);
    }

    #[test]
    fn minimax_gap_is_honest(centre in lonlat(), offsets in prop::collection::vec((-1.0f64..1.0, -1.0f64..1.0), 1..30)) {
        let earth = Earth::wgs84();
        let pts: Vec<Point> = offsets.iter().map(|&(e, n)| earth.exp(centre, [e * 3e6, n * 3e6])).collect();
        let r = geodesic_minimax_point(&pts, Weights::Unit, &CenterOptions::default()).unwrap();
        let far = pts.iter().map(|&p| earth.distance(r.location, p)).fold(0.0, f64::max);
        prop_assert!((far - r.radius).abs() <= 1e-6);
        // The pair bound is a lower bound: no answer beats half the diameter.
        let mut diameter = 0.0f64;
        for &p in &pts { for &q in &pts { diameter = diameter.max(earth.distance(p, q)); } }
        prop_assert!(r.radius >= diameter / 2.0 - 1e-6);
        prop_assert!(r.radius - r.gap <= r.radius);
    }
}

#[test]
fn a_cancelled_weber_run_stops_after_its_first_pass_and_counts_it() {
    // Skewed weights over a 7 x 7 grid of lon/lat points: the start (the optimum of the
    // spherical model) is not the geodesic optimum, so an unwatched run takes several passes.
    let points: Vec<Point> = (0..49).map(|i| [10.0 + f64::from(i % 7) * 0.3, 45.0 + f64::from(i / 7) * 0.2]).collect();
    let weights: Vec<f64> = (0..49).map(|i| 1.0 + f64::from(i % 5)).collect();
    let full = geodesic_weber_point(&points, Weights::Given(&weights), &WeberOptions::default()).unwrap();
    assert!(full.converged && full.iterations > 1, "{full:?}");
    let limits = RunLimits::default();
    let watch = &limits.watch;
    watch.cancel();
    let stopped =
        geodesic_weber_point_watched(&points, Weights::Given(&weights), &WeberOptions::default(), &limits).unwrap();
    assert_eq!(stopped.iterations, 1);
    assert!(stopped.cost >= full.cost);
    // The first pass, planned from the start, made and counted.
    assert_eq!(watch.progress(), (1, 1));
}

#[test]
fn default_tolerance_reports_the_geographiclib_cost_of_its_site() {
    // At the default tolerance the exact passes take the quicker inverse problem; reference:
    // GeographicLib's distances (geographiclib-rs, Karney 2013) summed at the returned site.
    let mut rng = SplitMix64::new(17);
    let pts: Vec<Point> = (0..5_000).map(|_| [5.0 + 10.0 * rng.next_f64(), 45.0 + 10.0 * rng.next_f64()]).collect();
    let r = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap();
    let exact = cost(&pts, r.location);
    assert!((r.cost - exact).abs() <= 1e-12 * exact, "{} {exact}", r.cost);
    assert!(r.converged && r.gap <= 1e-10 * r.cost, "{r:?}");
    let strict = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions { tol: 1e-12, ..Default::default() }).unwrap();
    assert!(r.cost - strict.cost <= r.gap, "{r:?} {strict:?}");
}

#[test]
fn a_spent_time_limit_returns_the_start_with_its_true_radius_and_a_valid_gap() {
    // Brute force: the radius reported is the largest weighted distance from the centre
    // returned, and radius − gap stays below the optimum the full run reaches.
    let mut rng = SplitMix64::new(41);
    let pts: Vec<Point> = (0..5_000).map(|_| [rng.next_f64() * 40.0 - 20.0, rng.next_f64() * 30.0 + 30.0]).collect();
    let w: Vec<f64> = (0..pts.len()).map(|_| 1.0 + rng.next_f64()).collect();
    let full = geodesic_minimax_point(&pts, Weights::Given(&w), &CenterOptions::default()).unwrap();
    let watch = crate::cancel::Watch::new();
    let spent =
        CenterOptions { limits: crate::cancel::RunLimits::new(Some(0.0), watch.clone()), ..CenterOptions::default() };
    let cut = geodesic_minimax_point(&pts, Weights::Given(&w), &spent).unwrap();
    let earth = Earth::wgs84();
    let largest = pts.iter().zip(&w).map(|(&p, &wi)| wi * earth.distance(cut.location, p)).fold(0.0, f64::max);
    assert_eq!(cut.iterations, 0);
    assert!(!cut.converged && (cut.radius - largest).abs() <= 1e-9 * largest, "{cut:?} {largest}");
    assert!(cut.radius - cut.gap <= full.radius && full.radius - full.gap <= cut.radius, "{cut:?} {full:?}");
    // Progress plans each iteration as it begins (the first from the start) and closes at
    // the total: a run stopped before its first iteration ends at (1, 1), not at max_iter.
    assert_eq!(watch.progress(), (1, 1));
    // Unstopped, the count ends at its total, the iterations made, on the unwatched centre.
    let counted = CenterOptions::default();
    let again = geodesic_minimax_point(&pts, Weights::Given(&w), &counted).unwrap();
    assert!(again.iterations < counted.max_iter && again.location == full.location && again.radius == full.radius);
    let n = again.iterations as u64;
    assert_eq!(counted.limits.watch.progress(), (n, n));
    // A cancelled watch also stops the run; the caller drops its answer (Watch::finish).
    watch.cancel();
    let cancelled =
        CenterOptions { limits: crate::cancel::RunLimits::new(None, watch.clone()), ..CenterOptions::default() };
    let r = geodesic_enclosing_circle(&pts, &cancelled).unwrap();
    assert!(!r.center.converged && watch.finish(r).is_err());
}

#[test]
fn a_weber_run_out_of_time_returns_its_measured_start_uncertified() {
    // The same skewed grid: with a deadline already passed the run still makes its first exact
    // pass (so the site has a cost) and stops there. Reference for the cost: GeographicLib's
    // distances (geographiclib-rs, Karney 2013) summed at the returned site.
    let points: Vec<Point> = (0..49).map(|i| [10.0 + f64::from(i % 7) * 0.3, 45.0 + f64::from(i / 7) * 0.2]).collect();
    let weights: Vec<f64> = (0..49).map(|i| 1.0 + f64::from(i % 5)).collect();
    let full = geodesic_weber_point(&points, Weights::Given(&weights), &WeberOptions::default()).unwrap();
    let limits = RunLimits::new(Some(0.0), Watch::new());
    let cut =
        geodesic_weber_point_watched(&points, Weights::Given(&weights), &WeberOptions::default(), &limits).unwrap();
    assert!(!cut.converged && cut.iterations == 1, "{cut:?}");
    let earth = Earth::wgs84();
    let exact: f64 = points.iter().zip(&weights).map(|(&p, &w)| w * earth.distance(cut.location, p)).sum();
    assert!((cut.cost - exact).abs() <= 1e-12 * exact, "{} {exact}", cut.cost);
    assert!(cut.cost >= full.cost && cut.cost - cut.gap <= full.cost);
    // Progress counts exact passes, each planned as it begins: the one pass made.
    assert_eq!(limits.watch.progress(), (1, 1));
    // Unstopped, the count ends at its total, the passes made (the result's `iterations`),
    // on the same site as the unwatched run.
    let watched = RunLimits::default();
    let r =
        geodesic_weber_point_watched(&points, Weights::Given(&weights), &WeberOptions::default(), &watched).unwrap();
    assert!(r.converged && r == full, "{r:?}");
    assert_eq!(watched.watch.progress(), (r.iterations as u64, r.iterations as u64));
}

#[test]
fn a_watched_grouped_nearest_site_counts_every_point_and_skips_groups_once_cancelled() {
    // Three groups of points, each served by its own sites; a fourth label has points but no
    // sites (its error is kept with Skip). Reference: brute force over each group's sites with
    // GeographicLib's distance (geographiclib-rs, Karney 2013).
    let mut rng = SplitMix64::new(23);
    let points: Vec<Point> = (0..6_000).map(|_| [40.0 * rng.next_f64() - 20.0, 30.0 + 30.0 * rng.next_f64()]).collect();
    let labels: Vec<i64> = (0..points.len()).map(|i| (i % 4) as i64).collect();
    let sites: Vec<Point> = (0..30).map(|_| [40.0 * rng.next_f64() - 20.0, 30.0 + 30.0 * rng.next_f64()]).collect();
    let site_labels: Vec<i64> = (0..sites.len()).map(|j| (j % 3) as i64).collect();
    let watch = Watch::new();
    let r = geodesic_nearest_site_grouped_watched(
        &points,
        Weights::Unit,
        &labels,
        &sites,
        &site_labels,
        OnGroupError::Skip,
        &watch,
    )
    .unwrap();
    assert_eq!(watch.progress(), (6_000, 6_000));
    let earth = Earth::wgs84();
    for (g, outcome) in r.grouped.results.iter().enumerate() {
        let label = r.grouped.labels[g];
        let Ok(a) = outcome else {
            assert_eq!(label, 3);
            continue;
        };
        let mine: Vec<usize> = (0..sites.len()).filter(|&j| site_labels[j] == label).collect();
        let members: Vec<usize> = (0..points.len()).filter(|&i| labels[i] == label).collect();
        for (k, &i) in members.iter().enumerate().step_by(97) {
            let best = mine.iter().map(|&j| earth.distance(points[i], sites[j])).fold(f64::INFINITY, f64::min);
            assert!((a.distance[k] - best).abs() <= 1e-9 * best.max(1.0), "{} {best}", a.distance[k]);
        }
    }
    let cancelled = Watch::new();
    cancelled.cancel();
    let stopped = geodesic_nearest_site_grouped_watched(
        &points,
        Weights::Unit,
        &labels,
        &sites,
        &site_labels,
        OnGroupError::Skip,
        &cancelled,
    )
    .unwrap();
    assert!(stopped.grouped.results.iter().all(|o| o.is_err()));
    assert_eq!(cancelled.progress(), (6_000, 6_000));
}

#[test]
fn a_cluster_of_a_few_metres_converges_at_the_distances_accuracy() {
    // Points within about 60 m (and a 6 m cluster for the minimax point): `tol · cost` at
    // the default tolerance is below the gap's fixed allowance for GeographicLib's accuracy
    // (about 3e-8 m per distance; Karney 2013, §1), so no run could reach it and every one
    // ended unconverged after its passes ran out of progress. Converged now means the gap
    // is within `tol` of that allowance. Reference: brute force, no site 1 cm away in eight
    // directions is better than the returned one by more than its gap.
    let earth = Earth::wgs84();
    let mut rng = SplitMix64::new(23);
    let near = |spread: f64, rng: &mut SplitMix64| -> Vec<Point> {
        (0..40)
            .map(|_| earth.exp([10.75, 59.9], [spread * (rng.next_f64() - 0.5), spread * (rng.next_f64() - 0.5)]))
            .collect()
    };
    let pts = near(60.0, &mut rng);
    let r = geodesic_weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap();
    // Seven passes before this rule; a Newton step and a certifying pass are typical.
    assert!(r.converged && r.iterations <= 4, "{r:?}");
    // The allowance: W · DISTANCE_ACCURACY_M (GeographicLib's accuracy, Karney 2013, §1)
    // plus rounding and the quick inverse problem's relative terms (below 1e-12 of the cost).
    let allowance = 40.0 * super::weber::DISTANCE_ACCURACY_M + 1e-12 * r.cost;
    assert!(r.gap <= 1e-10 * r.cost + allowance, "{r:?}");
    for k in 0..8 {
        let a = k as f64 * std::f64::consts::FRAC_PI_4;
        let q = earth.exp(r.location, [0.01 * a.sin(), 0.01 * a.cos()]);
        assert!(cost(&pts, q) >= r.cost - r.gap, "{k}");
    }
    let pts = near(6.0, &mut rng);
    let c = geodesic_minimax_point(&pts, Weights::Unit, &CenterOptions::default()).unwrap();
    assert!(c.converged, "{c:?}");
    let radius_at = |x: Point| pts.iter().map(|&p| earth.distance(x, p)).fold(0.0, f64::max);
    assert!((radius_at(c.location) - c.radius).abs() <= 1e-9, "{c:?}");
    for k in 0..8 {
        let a = k as f64 * std::f64::consts::FRAC_PI_4;
        let q = earth.exp(c.location, [0.001 * a.sin(), 0.001 * a.cos()]);
        assert!(radius_at(q) >= c.radius - c.gap, "{k}");
    }
}
