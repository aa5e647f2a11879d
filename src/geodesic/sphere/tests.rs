use super::hull::{orient, unit};
use super::*;
use crate::geodesic::earth::unit_normal;
use crate::geometry::random::SplitMix64;

/// `n` points uniform on the sphere (uniform longitude, uniform sine of latitude).
fn global(n: usize, seed: u64) -> Vec<Point> {
    let mut rng = SplitMix64::new(seed);
    (0..n).map(|_| [360.0 * rng.next_f64() - 180.0, (2.0 * rng.next_f64() - 1.0).asin().to_degrees()]).collect()
}

/// Brute force: no point lies strictly beyond the plane of a triangle (its circumcap is
/// empty), and the triangles' solid angles add up to the sphere's (they tile it).
fn assert_delaunay(points: &[Point], t: &SphereTriangulation) {
    let v: Vec<Vec3> = points.iter().map(|&p| unit_normal(p)).collect();
    for tri in &t.triangles {
        for (i, &x) in v.iter().enumerate() {
            assert!(orient(v[tri[0]], v[tri[1]], v[tri[2]], x) >= 0.0, "{tri:?} sees {i}");
        }
    }
}

#[test]
fn global_points_tile_the_sphere_and_the_ellipsoid() {
    let points = global(2000, 7);
    let t = sphere_delaunay(&points).unwrap();
    assert_delaunay(&points, &t);
    assert_eq!(t.outward_faces, 0);
    assert!(t.boundary.is_empty());
    // Euler: a triangulated sphere with n vertices has 2n − 4 triangles and 3n − 6 edges.
    assert_eq!(t.triangles.len(), 2 * points.len() - 4);
    assert_eq!(t.edges.len(), 3 * points.len() - 6);
    let earth = Earth::wgs84();
    // The ellipsoid's area (GeographicLib's total area, Karney 2013).
    let globe = {
        let ring = [[0.0, 0.0], [90.0, 0.0], [0.0, 90.0]];
        8.0 * earth.ccw_ring_area(&ring)
    };
    let total: f64 = t.area.iter().sum();
    assert!((total / globe - 1.0).abs() < 1e-9, "{total} {globe}");
    let cells = sphere_voronoi_cells(&points, &SphereCellOptions::default()).unwrap();
    let total: f64 = cells.area.iter().sum();
    assert!((total / globe - 1.0).abs() < 1e-9, "{total} {globe}");
    let solid: f64 = cells.solid_angle.iter().sum();
    assert!((solid - 4.0 * std::f64::consts::PI).abs() < 1e-9, "{solid}");
}

#[test]
fn voronoi_vertices_are_equidistant_from_their_sites() {
    let points = global(300, 3);
    let cells = sphere_voronoi_cells(&points, &SphereCellOptions::default()).unwrap();
    let v: Vec<Vec3> = points.iter().map(|&p| unit_normal(p)).collect();
    for i in 0..points.len() {
        for &k in &cells.cell_vertices[cells.vertex_offsets[i]..cells.vertex_offsets[i + 1]] {
            let x = cells.vertex_vectors[k];
            let own = dot(x, v[i]);
            // No site is nearer the vertex than the cell's own.
            assert!(v.iter().all(|&s| dot(x, s) <= own + 1e-12));
        }
    }
}

#[test]
fn points_in_a_hemisphere_drop_the_faces_turned_from_the_centre() {
    let points: Vec<Point> = global(500, 11).into_iter().map(|p| [p[0] / 4.0, 30.0 + p[1].abs() / 3.0]).collect();
    let t = sphere_delaunay(&points).unwrap();
    assert_delaunay(&points, &t);
    assert!(t.outward_faces > 0 && !t.boundary.is_empty());
    // Planar Euler for a triangulated disc: t = 2n − h − 2 with h boundary vertices.
    assert_eq!(t.triangles.len(), 2 * points.len() - t.boundary.len() - 2);
    let cells = sphere_voronoi_cells(&points, &SphereCellOptions::default()).unwrap();
    let solid: f64 = cells.solid_angle.iter().sum();
    assert!((solid - 4.0 * std::f64::consts::PI).abs() < 1e-9, "{solid}");
}

#[test]
fn co_circular_points_on_a_latitude_circle() {
    // 12 points on the parallel at 40° N: co-planar, one flat polygon (10 triangles), and
    // two Voronoi vertices (the pole side and its antipode) bounding 12 lunes.
    let points: Vec<Point> = (0..12).map(|k| [-180.0 + 30.0 * k as f64, 40.0]).collect();
    let t = sphere_delaunay(&points).unwrap();
    assert_eq!(t.triangles.len(), 10);
    let cells = sphere_voronoi_cells(&points, &SphereCellOptions::default()).unwrap();
    assert_eq!(cells.vertices.len(), 2);
    let solid: f64 = cells.solid_angle.iter().sum();
    assert!((solid - 4.0 * std::f64::consts::PI).abs() < 1e-9, "{solid}");
    for s in &cells.solid_angle {
        assert!((s - 4.0 * std::f64::consts::PI / 12.0).abs() < 1e-9, "{s}");
    }
    // Three sites always lie on one circle: two Voronoi vertices (the circle's poles), and
    // each cell is the lune between its bisectors with the other two; the lunes tile the
    // sphere.
    let three = [[0.0, 10.0], [50.0, -5.0], [120.0, 30.0]];
    let cells = sphere_voronoi_cells(&three, &SphereCellOptions::default()).unwrap();
    assert_eq!(cells.vertices.len(), 2);
    let solid: f64 = cells.solid_angle.iter().sum();
    assert!((solid - 4.0 * std::f64::consts::PI).abs() < 1e-9, "{solid}");
    assert!(cells.solid_angle.iter().all(|&s| s > 0.0));
    // With the pole: the parallel's plane is a hull face shared by co-planar triangles.
    let mut with_pole = points.clone();
    with_pole.push([0.0, 90.0]);
    let t = sphere_delaunay(&with_pole).unwrap();
    assert_delaunay(&with_pole, &t);
    let cells = sphere_voronoi_cells(&with_pole, &SphereCellOptions::default()).unwrap();
    assert_eq!(cells.vertices.len(), 13);
}

#[test]
fn degenerate_input() {
    // Three points: one spherical triangle, and its reversed face does not count.
    let three = [[0.0, 0.0], [10.0, 0.0], [0.0, 10.0]];
    let t = sphere_delaunay(&three).unwrap();
    assert_eq!(t.triangles, vec![[0, 1, 2]]);
    // A great circle spans no triangle.
    let meridian = [[0.0, 0.0], [0.0, 45.0], [180.0, 10.0], [0.0, -30.0]];
    assert!(matches!(sphere_delaunay(&meridian), Err(Error::Degenerate { .. })));
    let tree = sphere_spanning_tree(&meridian).unwrap();
    assert_eq!(tree.edges.len(), 3);
    // Repeats: the same place written three ways, and both poles with any longitude.
    let mut points = global(50, 5);
    points.push([points[3][0] + 360.0, points[3][1]]);
    points.push([17.0, 90.0]);
    points.push([-120.0, 90.0]);
    let t = sphere_delaunay(&points).unwrap();
    assert_eq!(t.representative[50], 3);
    assert_eq!(t.representative[52], 51);
    assert!(matches!(
        sphere_voronoi_cells(&points, &SphereCellOptions::default()),
        Err(Error::RepeatedPoint { row: 50, first: 3, .. })
    ));
    let tree = sphere_spanning_tree(&points).unwrap();
    assert_eq!(tree.edges.len(), points.len() - 1);
    assert!(matches!(sphere_delaunay(&[[0.0, 0.0], [360.0, 0.0], [1.0, 1.0]]), Err(Error::TooFewPoints { .. })));
}

#[test]
fn spanning_tree_matches_prim_on_geodesic_lengths() {
    let points = global(150, 9);
    let earth = Earth::wgs84();
    let length = |a: usize, b: usize| earth.distance(points[a], points[b]);
    // Prim (1957) on the complete graph of WGS84 geodesic lengths: an independent O(n²)
    // reference, with no triangulation in it.
    let n = points.len();
    let mut best = vec![f64::INFINITY; n];
    let mut done = vec![false; n];
    best[0] = 0.0;
    let mut prim = 0.0;
    for _ in 0..n {
        let u = (0..n).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).unwrap();
        done[u] = true;
        prim += best[u];
        for w in 0..n {
            if !done[w] {
                best[w] = best[w].min(length(u, w));
            }
        }
    }
    let tree = sphere_spanning_tree(&points).unwrap();
    let ours: f64 = tree.length.iter().sum();
    assert!((ours - prim).abs() <= 1e-9 * prim, "{ours} {prim}");
    for (e, &l) in tree.edges.iter().zip(&tree.length) {
        assert_eq!(l, length(e[0], e[1]));
    }
    let _ = unit([1.0, 0.0, 0.0]);
}

#[test]
fn sites_a_hair_apart_are_named_not_answered_with_nan() {
    // Longitudes 0 and 1e-260 degrees at one latitude: distinct unit vectors whose bisector
    // is lost to rounding (found by a property test).
    let sites = [[-180.0, 90.0], [0.0, 1.0], [179.999, 0.0], [9.385798202975875e-261, 1.0]];
    match sphere_voronoi_cells(&sites, &SphereCellOptions::default()) {
        Ok(cells) => assert!(cells.solid_angle.iter().chain(&cells.area).all(|x| x.is_finite())),
        Err(Error::Degenerate { reason, .. }) => assert!(reason.contains("sites[1] and sites[3]"), "{reason}"),
        Err(other) => panic!("unexpected error {other:?}"),
    }
}

#[test]
fn watched_cells_count_three_steps_per_site_and_a_cancel_leaves_no_answer() {
    // 10,000 global sites: more than one block of hull insertions between polls. Watching
    // changes nothing in the cells (checked against the unwatched call, which the tests
    // above check against brute force and the ellipsoid's area).
    let sites = global(10_000, 41);
    let options = SphereCellOptions::default();
    let watch = Watch::new();
    let watched = sphere_voronoi_cells_watched(&sites, &options, &watch).unwrap();
    assert_eq!(watched, sphere_voronoi_cells(&sites, &options).unwrap());
    assert_eq!(watch.progress(), (30_000, 30_000));
    let cancelled = Watch::new();
    cancelled.cancel();
    assert!(sphere_voronoi_cells_watched(&sites, &options, &cancelled).is_err());
    assert_eq!(cancelled.finish(()), Err(crate::cancel::Cancelled));
}
