//! Parallel construction: vertical strips triangulated in parallel and stitched along their
//! seams (the "merge by re-triangulating the boundary" scheme of parallel Delaunay
//! construction, Blelloch et al. 1999, Chen 2010).

use std::collections::HashMap;
use std::sync::atomic::{AtomicUsize, Ordering};

use rayon::prelude::*;
use spade::{ConstrainedDelaunayTriangulation, Point2, Triangulation as SpadeTriangulation};

use super::adapter::{collinear, faces_of, hull_of, Vertex};
use super::whole::triangulate;
use super::Mesh;
use crate::cancel::Watch;
use crate::geometry::predicates::incircle;

/// One strip's triangulation.
struct Strip {
    triangles: Vec<[usize; 3]>,
    adjacent: Vec<[Option<usize>; 3]>,
    /// Whether each triangle is Delaunay in the whole set, known from the strip alone.
    fixed: Vec<bool>,
    hull: Vec<usize>,
    kept: usize,
}

/// Whether the circumcircle of the triangle lies strictly between `x = lower` and
/// `x = upper` (`None`: unbounded), with a relative margin for the rounding of its centre
/// and radius.
fn circle_within(a: Point2<f64>, b: Point2<f64>, c: Point2<f64>, lower: Option<f64>, upper: Option<f64>) -> bool {
    let (bx, by, cx, cy) = (b.x - a.x, b.y - a.y, c.x - a.x, c.y - a.y);
    let d = 2.0 * (bx * cy - by * cx);
    let (b2, c2) = (bx * bx + by * by, cx * cx + cy * cy);
    let ux = (cy * b2 - by * c2) / d;
    let uy = (bx * c2 - cx * b2) / d;
    let radius_squared = (ux * ux + uy * uy) * (1.0 + 1e-8);
    let centre = a.x + ux;
    if !(radius_squared.is_finite() && centre.is_finite()) {
        return false;
    }
    // Clearance of the circle from a bound: positive, and its square beyond the radius'
    // (squares rather than a square root: this runs for every triangle).
    // The rounding of the centre's x is a few units in the last place of the coordinates
    // (the radius' relative error is covered by the factor above); the bound test then
    // needs only that much slack, even far from the origin.
    let slack = 1e-14 * (centre.abs() + a.x.abs() + lower.unwrap_or(0.0).abs() + upper.unwrap_or(0.0).abs());
    let clear = |gap: f64| gap > slack && (gap - slack) * (gap - slack) > radius_squared;
    lower.is_none_or(|l| clear(centre - l)) && upper.is_none_or(|u| clear(u - centre))
}

/// The triangulation stitched from `strips` vertical strips triangulated in parallel, or
/// `None` when the input does not suit it (then [`super::whole::whole`] decides).
///
/// The points are split at x-quantiles; strip `j` holds the points with
/// `t_j <= x < t_{j+1}`, so repeated locations share a strip. A triangle of a strip whose
/// circumcircle stays strictly inside the strip's slab (between the largest x of the strips
/// left of it and the smallest x of those right of it) has no point of any strip inside its
/// circle, so it is a triangle of the whole Delaunay triangulation: it is *fixed*. The
/// rest of the hull, the seam, is covered by the Delaunay triangles whose vertices are all
/// vertices of unfixed triangles or of a strip's hull (a vertex whose star is all fixed
/// already has its whole neighbourhood). So the seam is re-triangulated from those vertices
/// alone, as a constrained Delaunay triangulation whose constraints are the edges between
/// fixed triangles and the seam, and the seam's triangles are collected by a flood fill
/// that starts beside those edges and never crosses one. This is the "merge by
/// re-triangulating the boundary" scheme of parallel Delaunay construction, e.g.
/// Blelloch et al. (1999) and Chen (2010).
///
/// The result is accepted only after a check that makes it a Delaunay triangulation:
/// every seam edge is met from both sides with opposite orientation, the hull is covered
/// once, the triangle count is Euler's `2n − 2 − h`, and the exact in-circle test passes
/// across every constraint edge (edges inside a strip or inside the seam are locally
/// Delaunay by construction; locally Delaunay everywhere is Delaunay, Delaunay 1934).
///
/// Each strip's points are counted on `watch` as its triangulation ends (`counted` says how
/// many were); once `watch` is cancelled the strips not yet begun are skipped and the
/// outcome is `None` (the caller tells a cancel from an unsuitable input).
pub(super) fn by_strips(positions: &[Point2<f64>], strips: usize, watch: &Watch, counted: &mut usize) -> Option<Mesh> {
    let n = positions.len();
    let mut xs: Vec<f64> = positions.iter().map(|p| p.x).collect();
    let cuts: Vec<f64> = (1..strips)
        .map(|q| {
            let at = q * n / strips;
            *xs.select_nth_unstable_by(at, f64::total_cmp).1
        })
        .collect();
    let strip_of_x = |x: f64| cuts.partition_point(|&t| t <= x);
    let mut members: Vec<Vec<Vertex>> = (0..strips).map(|_| Vec::with_capacity(n / strips + 1)).collect();
    let mut strip_of = vec![0u8; n];
    let mut lowest = vec![f64::INFINITY; strips];
    let mut highest = vec![f64::NEG_INFINITY; strips];
    for (row, &position) in positions.iter().enumerate() {
        let j = strip_of_x(position.x);
        strip_of[row] = j as u8;
        lowest[j] = lowest[j].min(position.x);
        highest[j] = highest[j].max(position.x);
        members[j].push(Vertex { position, row });
    }
    if members.iter().any(|m| m.len() < 3) {
        return None;
    }

    let done = AtomicUsize::new(0);
    let built: Vec<Option<Strip>> = members
        .into_par_iter()
        .enumerate()
        .map(|(j, vertices)| {
            if watch.is_cancelled() || collinear(vertices.iter().map(|v| v.position)) {
                return None;
            }
            let size = vertices.len();
            let dt = triangulate(vertices, watch)?;
            watch.advance(size as u64);
            done.fetch_add(size, Ordering::Relaxed);
            // A cancelled run drops the mesh: its faces need not be read.
            if dt.num_inner_faces() == 0 || watch.is_cancelled() {
                return None;
            }
            let lower = (j > 0).then(|| highest[j - 1]);
            let upper = (j + 1 < strips).then(|| lowest[j + 1]);
            let (triangles, adjacent, fixed) = faces_of(&dt, |a, b, c| circle_within(a, b, c, lower, upper));
            Some(Strip { triangles, adjacent, fixed, hull: hull_of(&dt), kept: dt.num_vertices() })
        })
        .collect();
    *counted = done.into_inner();
    let built: Vec<Strip> = built.into_iter().collect::<Option<_>>()?;
    // Cancelled while the last strips were built: the stitching below is not watched, and
    // its work would only delay the stop (the caller drops a cancelled run's mesh).
    if watch.is_cancelled() {
        return None;
    }

    // Seam vertices and the constraint edges (u, v): counter-clockwise edges of fixed
    // triangles whose other side is unfixed or outside the strip. The seam lies to their right.
    let mut on_seam = vec![false; n];
    let mut boundary: Vec<(usize, usize, usize)> = Vec::new(); // (strip, triangle, corner)
    for (j, s) in built.iter().enumerate() {
        for &v in &s.hull {
            on_seam[v] = true;
        }
        for (t, tri) in s.triangles.iter().enumerate() {
            if !s.fixed[t] {
                tri.iter().for_each(|&v| on_seam[v] = true);
                continue;
            }
            for k in 0..3 {
                if s.adjacent[t][k].is_none_or(|o| !s.fixed[o]) {
                    boundary.push((j, t, k));
                }
            }
        }
    }
    let seam_rows: Vec<usize> = (0..n).filter(|&v| on_seam[v]).collect();
    if 2 * seam_rows.len() > n {
        // Most triangles cross the cuts (points on a circle, two long lines): stitching
        // would redo nearly everything, so the cloud is triangulated whole.
        return None;
    }
    let mut seam_index = vec![u32::MAX; n];
    for (i, &v) in seam_rows.iter().enumerate() {
        seam_index[v] = i as u32;
    }
    let corner = |&(j, t, k): &(usize, usize, usize)| {
        let tri = built[j].triangles[t];
        (tri[(k + 1) % 3], tri[(k + 2) % 3])
    };
    let constraints: Vec<[usize; 2]> = boundary
        .iter()
        .map(|b| {
            let (u, v) = corner(b);
            [seam_index[u] as usize, seam_index[v] as usize]
        })
        .collect();
    let seam_vertices: Vec<Vertex> = seam_rows.iter().map(|&row| Vertex { position: positions[row], row }).collect();
    let mut conflict = false;
    let cdt: ConstrainedDelaunayTriangulation<Vertex> =
        ConstrainedDelaunayTriangulation::try_bulk_load_cdt(seam_vertices, constraints, |_| conflict = true).ok()?;
    if conflict || cdt.num_vertices() != seam_rows.len() {
        return None;
    }
    let (seam_triangles, seam_adjacent, _) = faces_of(&cdt, |_, _, _| true);
    let is_constraint: Vec<[bool; 3]> = cdt
        .inner_faces()
        .map(|face| {
            let e = face.adjacent_edges();
            [1, 2, 0].map(|k| cdt.is_constraint_edge(e[k].fix().as_undirected()))
        })
        .collect();
    // Directed seam edges (u, v) → (seam triangle, corner opposite).
    let mut seam_edge: HashMap<(usize, usize), (usize, usize)> = HashMap::with_capacity(3 * seam_triangles.len());
    for (t, tri) in seam_triangles.iter().enumerate() {
        for k in 0..3 {
            seam_edge.insert((tri[(k + 1) % 3], tri[(k + 2) % 3]), (t, k));
        }
    }

    // Flood fill of the seam from beside the constraint edges (and from any triangle with
    // corners in two strips), never crossing a constraint edge.
    let mut in_seam = vec![false; seam_triangles.len()];
    let mut stack: Vec<usize> = boundary
        .iter()
        .filter_map(|b| {
            let (u, v) = corner(b);
            seam_edge.get(&(v, u)).map(|&(t, _)| t)
        })
        .collect();
    stack.extend((0..seam_triangles.len()).filter(|&t| {
        let s = seam_triangles[t].map(|v| strip_of[v]);
        s[0] != s[1] || s[1] != s[2]
    }));
    if boundary.is_empty() {
        stack.extend(0..seam_triangles.len());
    }
    while let Some(t) = stack.pop() {
        if std::mem::replace(&mut in_seam[t], true) {
            continue;
        }
        for k in 0..3 {
            if let Some(o) = seam_adjacent[t][k] {
                if !is_constraint[t][k] && !in_seam[o] {
                    stack.push(o);
                }
            }
        }
    }

    // Global numbering: the fixed triangles strip by strip, then the seam's.
    let mut first_of_strip = Vec::with_capacity(strips + 1);
    let mut count = 0usize;
    let numbering: Vec<Vec<usize>> = built
        .iter()
        .map(|s| {
            first_of_strip.push(count);
            s.fixed
                .iter()
                .map(|&f| {
                    if f {
                        count += 1;
                        count - 1
                    } else {
                        usize::MAX
                    }
                })
                .collect()
        })
        .collect();
    let seam_first = count;
    first_of_strip.push(seam_first);
    let mut seam_number = vec![usize::MAX; seam_triangles.len()];
    for t in (0..seam_triangles.len()).filter(|&t| in_seam[t]) {
        seam_number[t] = count;
        count += 1;
    }
    let kept: usize = built.iter().map(|s| s.kept).sum();
    let hull = hull_of(&cdt);
    if count + 2 + hull.len() != 2 * kept {
        return None;
    }

    let mut triangles = vec![[0usize; 3]; count];
    let mut adjacent = vec![[None; 3]; count];
    {
        // Fixed triangles, strip by strip in parallel; edges to the seam are filled below.
        let mut rest: &mut [[usize; 3]] = &mut triangles[..seam_first];
        let mut rest_adjacent: &mut [[Option<usize>; 3]] = &mut adjacent[..seam_first];
        let mut parts = Vec::with_capacity(strips);
        for (j, s) in built.iter().enumerate() {
            let size = first_of_strip[j + 1] - first_of_strip[j];
            let (head, tail) = rest.split_at_mut(size);
            let (head_adjacent, tail_adjacent) = rest_adjacent.split_at_mut(size);
            rest = tail;
            rest_adjacent = tail_adjacent;
            parts.push((s, &numbering[j], head, head_adjacent));
        }
        parts.into_par_iter().for_each(|(s, number, out, out_adjacent)| {
            let mut i = 0;
            for (t, tri) in s.triangles.iter().enumerate() {
                if number[t] == usize::MAX {
                    continue;
                }
                out[i] = *tri;
                out_adjacent[i] = s.adjacent[t].map(|o| o.map(|o| number[o]).filter(|&g| g != usize::MAX));
                i += 1;
            }
        });
    }
    for t in 0..seam_triangles.len() {
        let g = seam_number[t];
        if g == usize::MAX {
            continue;
        }
        triangles[g] = seam_triangles[t];
        adjacent[g] = seam_adjacent[t].map(|o| o.map(|o| seam_number[o]).filter(|&h| h != usize::MAX));
    }

    // Stitch and check every constraint edge from the fixed side.
    let mut hull_claimed = 0usize;
    let mut claimed = 0usize;
    let point = |v: usize| [positions[v].x, positions[v].y];
    for b in &boundary {
        let &(j, t, k) = b;
        let (u, v) = corner(b);
        let g = numbering[j][t];
        match seam_edge.get(&(v, u)) {
            Some(&(st, sk)) => {
                let h = seam_number[st];
                if h == usize::MAX || adjacent[h][sk].is_some() {
                    return None;
                }
                let mine = triangles[g];
                let theirs = triangles[h];
                if incircle(point(mine[0]), point(mine[1]), point(mine[2]), point(theirs[sk])) > 0.0
                    || incircle(point(theirs[0]), point(theirs[1]), point(theirs[2]), point(mine[k])) > 0.0
                {
                    return None;
                }
                adjacent[g][k] = Some(h);
                adjacent[h][sk] = Some(g);
                claimed += 1;
            }
            None => {
                // Nothing of the seam beyond (u, v): it must be a hull edge, with the seam
                // triangle on its inner side left out of the seam.
                let &(st, sk) = seam_edge.get(&(u, v))?;
                if seam_adjacent[st][sk].is_some() || in_seam[st] {
                    return None;
                }
                hull_claimed += 1;
            }
        }
    }
    // Every seam edge without a seam triangle beyond it must have been met by a fixed one,
    // and the hull covered once.
    let mut open = 0usize;
    let mut seam_hull = 0usize;
    for t in (0..seam_triangles.len()).filter(|&t| in_seam[t]) {
        for across in seam_adjacent[t] {
            match across {
                None => seam_hull += 1,
                Some(o) if !in_seam[o] => open += 1,
                Some(_) => {}
            }
        }
    }
    if open != claimed || seam_hull + hull_claimed != hull.len() {
        return None;
    }
    Some(Mesh { triangles, adjacent, hull, kept })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::Point;
    use crate::partition::delaunay::testing::{positions, triangle_set};
    use crate::partition::delaunay::{check_triangulation, delaunay_in_strips};
    use crate::partition::testing::lcg_cloud;
    use proptest::prelude::*;

    #[test]
    fn strips_stitch_to_the_whole_triangulation() {
        // In general position the Delaunay triangulation is unique (Delaunay 1934), so the
        // stitched one must hold exactly the triangles of the one built whole.
        let mut clustered = lcg_cloud(10_000, 14, [0.0, 0.0], 1.0);
        clustered.iter_mut().for_each(|p| *p = [p[0] * 0.001, p[1] * 0.001]);
        clustered.extend(lcg_cloud(20_000, 15, [-0.5, -0.5], 1.0).iter().map(|p| [p[0] * 50.0, p[1] * 50.0]));
        let clouds = [
            (lcg_cloud(30_000, 11, [0.0, 0.0], 1.0), 2),
            (lcg_cloud(30_000, 12, [500_000.0, 6_000_000.0], 1.0), 3),
            (lcg_cloud(30_000, 13, [-1e9, 3e8], 1.0), 8),
            (clustered, 4),
        ];
        for (seed, (pts, strips)) in clouds.into_iter().enumerate() {
            assert!(
                by_strips(&positions(&pts), strips, &Watch::new(), &mut 0).is_some(),
                "cloud {seed}: the stitch was refused"
            );
            let stitched = delaunay_in_strips(&pts, strips, &Watch::new()).unwrap();
            check_triangulation(&pts, &stitched).unwrap();
            let whole = delaunay_in_strips(&pts, 1, &Watch::new()).unwrap();
            assert_eq!(triangle_set(&stitched), triangle_set(&whole));
            assert_eq!(stitched.hull, whole.hull);
            let mut a = stitched.edges.clone();
            let mut b = whole.edges.clone();
            a.sort_unstable();
            b.sort_unstable();
            assert_eq!(a, b);
        }
    }

    #[test]
    fn strips_stitch_grids_and_repeats() {
        // Cocircular cells and repeated rows: the stitch keeps a Delaunay triangulation
        // (exact in-circle check), 2 (k − 1)² triangles for a k × k grid (closed form).
        let k = 150usize;
        let mut pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
        assert!(by_strips(&positions(&pts), 4, &Watch::new(), &mut 0).is_some(), "the grid stitch was refused");
        let t = delaunay_in_strips(&pts, 4, &Watch::new()).unwrap();
        assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
        check_triangulation(&pts, &t).unwrap();
        pts.extend_from_within(..500);
        let t = delaunay_in_strips(&pts, 3, &Watch::new()).unwrap();
        assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
        assert_eq!(t.representative[k * k + 7], 7);
        check_triangulation(&pts, &t).unwrap();
    }

    #[test]
    fn strips_that_cannot_be_triangulated_fall_back() {
        // Two columns of points: each strip is collinear, so the input is triangulated whole.
        let pts: Vec<Point> = (0..200).map(|i| [(i % 2) as f64, (i / 2) as f64]).collect();
        assert!(by_strips(&positions(&pts), 2, &Watch::new(), &mut 0).is_none());
        let t = delaunay_in_strips(&pts, 2, &Watch::new()).unwrap();
        check_triangulation(&pts, &t).unwrap();
        assert_eq!(t.triangles.len(), 2 * 99);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn stitched_integer_clouds_satisfy_invariants(
            raw in proptest::collection::vec((-8i32..8, -8i32..8), 3..200),
            strips in 2usize..6,
        ) {
            // Heavily degenerate input through the stitched path (or its fallback).
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            match delaunay_in_strips(&pts, strips, &Watch::new()) {
                Ok(t) => prop_assert_eq!(check_triangulation(&pts, &t), Ok(())),
                Err(e) => prop_assert!(e.is_degenerate()),
            }
        }

        #[test]
        fn stitched_clouds_equal_whole(seed in 0u64..1000, strips in 2usize..6) {
            // General position: unique triangulation (Delaunay 1934), stitched = whole.
            let pts = lcg_cloud(3000, seed, [0.0, 0.0], 1.0);
            let stitched = delaunay_in_strips(&pts, strips, &Watch::new()).unwrap();
            prop_assert_eq!(check_triangulation(&pts, &stitched), Ok(()));
            prop_assert_eq!(triangle_set(&stitched), triangle_set(&delaunay_in_strips(&pts, 1, &Watch::new()).unwrap()));
        }
    }
}
