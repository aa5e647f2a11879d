//! Euclidean Steiner trees: the shortest network joining the terminals when junctions
//! (Steiner points) may be added anywhere.
//!
//! - [`fst`]: full Steiner trees by Melzak's equilateral-point construction with the
//!   pruning tests of Winter and Zachariasen (1997).
//! - [`concatenate`]: the shortest spanning tree of the hypergraph of full Steiner trees,
//!   Warme's integer program solved by LP-based branch and cut (subtour constraints
//!   separated from fractional answers), with a proven lower bound when stopped early.
//! - [`local`]: for large terminal sets, the full Steiner trees of small Delaunay-local
//!   terminal sets concatenated greedily, then exactly within windows of terminals.
//! - [`heuristic`]: Steiner insertion on Delaunay triangles, quicker than [`local`] and
//!   used beyond [`solve::LOCAL_TERMINALS`] terminals.
//! - [`smith`]: re-optimisation of Steiner point positions for a fixed topology, and the
//!   clean-up that restores the 120° rule.
//! - [`solve`]: the choice between the exact solver and the heuristic.
//!
//! Everything here works on distinct terminals in the one working frame
//! ([`crate::geometry::WorkingFrame`], see [`super::steiner_tree`]): coordinates centred and
//! scaled by a power of two so that the longer side of the terminals' bounding box lies in
//! (0.5, 1], which makes the absolute tolerances below meaningful.

mod concatenate;
mod fst;
mod heuristic;
mod local;
mod path_maxima;
mod smith;
mod solve;
mod terminal_sets;

pub(super) use solve::{solve_distinct, Solved};

use crate::geometry::{add, distance, scale, sub, Point};

/// `√3 / 2`.
pub(crate) const HALF_SQRT3: f64 = 0.866_025_403_784_438_6;

/// A tree on terminals `0..terminal_count` and Steiner points after them, in the working frame.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Network {
    /// Terminals first, then Steiner points.
    pub nodes: Vec<Point>,
    /// How many of `nodes` are terminals.
    pub terminal_count: usize,
    /// Undirected edges.
    pub edges: Vec<[usize; 2]>,
}

impl Network {
    /// Total edge length.
    pub fn length(&self) -> f64 {
        let mut sum = crate::geometry::CompensatedSum::default();
        for e in &self.edges {
            sum.add(distance(self.nodes[e[0]], self.nodes[e[1]]));
        }
        sum.total()
    }

    /// Adjacency lists.
    pub fn adjacency(&self) -> Vec<Vec<usize>> {
        let mut adjacency = vec![Vec::new(); self.nodes.len()];
        for e in &self.edges {
            adjacency[e[0]].push(e[1]);
            adjacency[e[1]].push(e[0]);
        }
        adjacency
    }
}

/// The third vertex of the equilateral triangle on `p → q` that lies to its right
/// (clockwise side): Melzak's (1961) equilateral point.
#[inline]
pub(crate) fn equilateral_point(p: Point, q: Point) -> Point {
    let d = sub(q, p);
    add(p, [0.5 * d[0] + HALF_SQRT3 * d[1], -HALF_SQRT3 * d[0] + 0.5 * d[1]])
}

/// Cross product `a × b` (the z-component), a magnitude for angle computations; signs
/// that decide anything go through [`crate::geometry::predicates`].
#[inline]
pub(crate) fn cross(a: Point, b: Point) -> f64 {
    a[0] * b[1] - a[1] * b[0]
}

/// Angle at `apex` between the directions to `a` and to `b`, in `[0, π]`.
#[inline]
pub(crate) fn angle_at(apex: Point, a: Point, b: Point) -> f64 {
    let u = sub(a, apex);
    let v = sub(b, apex);
    cross(u, v).abs().atan2(crate::geometry::dot(u, v))
}

/// The Fermat (Torricelli) point of a triangle: the vertex with an angle of at least 120°
/// when there is one, otherwise the point seeing every side at 120°, found by Simpson's
/// construction (the line from a vertex to the equilateral point on the opposite side).
pub(crate) fn fermat_point(a: Point, b: Point, c: Point) -> Point {
    const WIDE: f64 = 2.0 * std::f64::consts::FRAC_PI_3;
    for (apex, u, v) in [(a, b, c), (b, c, a), (c, a, b)] {
        if angle_at(apex, u, v) >= WIDE {
            return apex;
        }
    }
    // Orient b → c so that the equilateral point falls on the side away from a.
    let (p, q) = if crate::geometry::predicates::orient2d(b, c, a) > 0.0 { (b, c) } else { (c, b) };
    let e = equilateral_point(p, q);
    let centre = scale(add(add(p, q), e), 1.0 / 3.0);
    simpson_hit(e, a, centre).unwrap_or(centre)
}

/// The second intersection of the segment from `e` (a point of the circle about `centre`)
/// towards `t` with that circle, when it lies strictly between `e` and `t`.
#[inline]
pub(crate) fn simpson_hit(e: Point, t: Point, centre: Point) -> Option<Point> {
    let d = sub(t, e);
    let dd = crate::geometry::dot(d, d);
    if dd == 0.0 {
        return None;
    }
    let tau = -2.0 * crate::geometry::dot(sub(e, centre), d) / dd;
    if tau > 0.0 && tau < 1.0 {
        Some(add(e, scale(d, tau)))
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fermat_point_of_equilateral_triangle_is_its_centroid() {
        // Closed form: by symmetry the Fermat point of an equilateral triangle is its centroid.
        let (a, b, c) = ([0.0, 0.0], [1.0, 0.0], [0.5, HALF_SQRT3]);
        let f = fermat_point(a, b, c);
        assert!(distance(f, [0.5, HALF_SQRT3 / 3.0]) < 1e-15);
        let f = fermat_point(c, b, a);
        assert!(distance(f, [0.5, HALF_SQRT3 / 3.0]) < 1e-15);
    }

    #[test]
    fn fermat_point_with_a_wide_angle_is_that_vertex() {
        // Closed form (Torricelli): an angle of at least 120° makes its vertex the Fermat point.
        let f = fermat_point([0.0, 0.0], [-1.0, 0.1], [1.0, 0.1]);
        assert_eq!(f, [0.0, 0.0]);
    }

    #[test]
    fn fermat_point_sees_every_side_at_120_degrees() {
        let (a, b, c) = ([0.0, 0.0], [4.0, 0.0], [1.0, 3.0]);
        let f = fermat_point(a, b, c);
        let third = 2.0 * std::f64::consts::FRAC_PI_3;
        for (u, v) in [(a, b), (b, c), (c, a)] {
            assert!((angle_at(f, u, v) - third).abs() < 1e-12);
        }
    }
}
