//! Lines split where they cross: every point where two lines meet in the interior of at
//! least one of them becomes a vertex of both, so the pieces can be joined there.
//!
//! Candidate segment pairs come from an R*-tree of segment bounding boxes (Beckmann et al.
//! 1990); whether two segments meet is decided by exact orientation tests (Shewchuk 1997,
//! through `geometry::predicates`). The crossing point itself is rounded to `f64` once per
//! pair and given to both lines as the same coordinates, so with `tolerance == 0` the two
//! pieces share a node exactly. Three or more lines through one point give crossing points
//! that may differ in the last bits; a positive joining tolerance merges them. Collinear
//! overlapping parts are not split (they share no single point).

use rayon::prelude::*;
use rstar::primitives::{GeomWithData, Rectangle};
use rstar::{RTree, AABB};

use crate::geometry::predicates::orient2d;
use crate::geometry::Point;

/// A cut of line `line` on its segment `k` at parameter `t` in [0, 1] (at `point`).
#[derive(Debug, Clone, Copy)]
struct Cut {
    line: u32,
    k: u32,
    t: f64,
    point: Point,
}

/// Lines cut where they cross: line `i` of the output is `coords[offsets[i]..offsets[i+1]]`,
/// a piece of input line `source[i]` (its share of the line's costs is measured by the
/// caller, as the graph measures lengths).
pub(crate) struct SplitLines {
    pub(crate) coords: Vec<Point>,
    pub(crate) offsets: Vec<usize>,
    pub(crate) source: Vec<u32>,
}

/// Where segments `a-b` and `c-d` meet in a single point, as (parameter on a-b, parameter on
/// c-d, point), decided exactly; `None` when they do not meet or are collinear.
fn meet(a: Point, b: Point, c: Point, d: Point) -> Option<(f64, f64, Point)> {
    let (o1, o2) = (orient2d(a, b, c), orient2d(a, b, d));
    let (o3, o4) = (orient2d(c, d, a), orient2d(c, d, b));
    if (o1 > 0.0 && o2 > 0.0) || (o1 < 0.0 && o2 < 0.0) || (o3 > 0.0 && o4 > 0.0) || (o3 < 0.0 && o4 < 0.0) {
        return None;
    }
    if o1 == 0.0 && o2 == 0.0 {
        return None; // collinear: an overlap or a shared end, not a single crossing
    }
    let param = |p: Point, q: Point, x: Point| {
        let (dx, dy) = (q[0] - p[0], q[1] - p[1]);
        (((x[0] - p[0]) * dx + (x[1] - p[1]) * dy) / (dx * dx + dy * dy)).clamp(0.0, 1.0)
    };
    // An end lying exactly on the other segment is the meeting point itself (no rounding).
    if o1 == 0.0 {
        return Some((param(a, b, c), 0.0, c));
    }
    if o2 == 0.0 {
        return Some((param(a, b, d), 1.0, d));
    }
    if o3 == 0.0 {
        return Some((0.0, param(c, d, a), a));
    }
    if o4 == 0.0 {
        return Some((1.0, param(c, d, b), b));
    }
    // A proper crossing: o1 and o2 have opposite signs, so o1 - o2 != 0.
    let s = o1 / (o1 - o2);
    let x = [c[0] + s * (d[0] - c[0]), c[1] + s * (d[1] - c[1])];
    Some((param(a, b, x), s, x))
}

/// Split `lines` (`coords`, `offsets` as in `TravelGraph::from_lines`, already validated)
/// where they cross. A meeting at both lines' own ends is left to the end joining.
pub(crate) fn split_at_crossings(coords: &[Point], offsets: &[usize]) -> SplitLines {
    let m = offsets.len() - 1;
    let line_of = |v: usize| offsets.partition_point(|&o| o <= v) - 1;
    // Segment n runs from vertex n to vertex n + 1 of the same line.
    let segments: Vec<usize> = (0..m).flat_map(|i| offsets[i]..offsets[i + 1] - 1).collect();
    let boxes: Vec<GeomWithData<Rectangle<Point>, u32>> = segments
        .iter()
        .enumerate()
        .map(|(n, &v)| GeomWithData::new(Rectangle::from_corners(coords[v], coords[v + 1]), n as u32))
        .collect();
    let tree = RTree::bulk_load(boxes);
    let is_end = |v: usize, p: Point| {
        let i = line_of(v);
        p == coords[offsets[i]] || p == coords[offsets[i + 1] - 1]
    };
    let mut cuts: Vec<Cut> = segments
        .par_iter()
        .enumerate()
        .with_min_len(256)
        .flat_map_iter(|(n, &v)| {
            let (a, b) = (coords[v], coords[v + 1]);
            let (li, mut out) = (line_of(v), Vec::new());
            let envelope = AABB::from_corners(a, b);
            for other in tree.locate_in_envelope_intersecting(envelope) {
                let n2 = other.data as usize;
                if n2 <= n {
                    continue; // each pair once
                }
                let w = segments[n2];
                let lj = line_of(w);
                if li == lj && w == v + 1 {
                    continue; // consecutive segments of one line share their vertex
                }
                let (c, d) = (coords[w], coords[w + 1]);
                let Some((t, s, x)) = meet(a, b, c, d) else { continue };
                if is_end(v, x) && is_end(w, x) {
                    continue;
                }
                out.push(Cut { line: li as u32, k: (v - offsets[li]) as u32, t, point: x });
                out.push(Cut { line: lj as u32, k: (w - offsets[lj]) as u32, t: s, point: x });
            }
            out
        })
        .collect();
    cuts.sort_by(|x, y| (x.line, x.k).cmp(&(y.line, y.k)).then(x.t.total_cmp(&y.t)));
    let mut out = SplitLines { coords: Vec::new(), offsets: vec![0], source: Vec::new() };
    let mut next = 0;
    for i in 0..m {
        let line = &coords[offsets[i]..offsets[i + 1]];
        let (first, last) = (line[0], line[line.len() - 1]);
        let lo = next;
        while next < cuts.len() && cuts[next].line as usize == i {
            next += 1;
        }
        let here = &cuts[lo..next];
        if here.is_empty() {
            out.coords.extend_from_slice(line);
            out.offsets.push(out.coords.len());
            out.source.push(i as u32);
            continue;
        }
        // Vertices and cuts in order along the line: vertex k, then the cuts on segment k.
        let mut stops: Vec<(Point, bool)> = Vec::with_capacity(line.len() + here.len());
        let mut c = 0;
        for (k, &v) in line.iter().enumerate() {
            stops.push((v, false));
            while c < here.len() && here[c].k as usize == k {
                stops.push((here[c].point, true));
                c += 1;
            }
        }
        let mut start = out.coords.len();
        out.coords.push(first);
        for &(p, is_cut) in &stops[1..] {
            if p != *out.coords.last().expect("a piece has a point") {
                out.coords.push(p);
            }
            if is_cut && p != first && p != last && out.coords.len() - start >= 2 {
                out.offsets.push(out.coords.len());
                out.source.push(i as u32);
                start = out.coords.len();
                out.coords.push(p);
            }
        }
        if out.coords.len() - start >= 2 {
            out.offsets.push(out.coords.len());
            out.source.push(i as u32);
        } else {
            out.coords.truncate(start);
        }
    }
    out
}
