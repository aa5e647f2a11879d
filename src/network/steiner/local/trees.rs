//! Full Steiner trees of small terminal sets that are connected in the Delaunay graph of the
//! terminals: the candidate sets of Zachariasen and Winter (1999, "Concatenation-based
//! greedy heuristics for the Euclidean Steiner tree problem", Algorithmica 25), whose
//! experiments found the full Steiner trees of a Steiner minimum tree of spread terminals
//! to join few terminals that are close in the Delaunay graph.
//!
//! The sets are enumerated once each by Wernicke's (2006, "Efficient detection of network
//! motifs", IEEE/ACM TCBB 3) ESU scheme: from every root, extend by neighbours of larger
//! index that are exclusive to the newest member. A set is passed to the construction only
//! if a full Steiner tree on it can beat the minimum spanning tree of its terminals under
//! the bottleneck Steiner distances (the upper bound test of Winter and Zachariasen 1997):
//! the Steiner ratio, proven for up to five terminals (Pollak 1978 for four; Du, Yao and
//! Hwang 1982 for five), bounds any tree on the set from below by `√3/2` times the
//! Euclidean spanning tree of the set, which rejects most sets without any trigonometry.
//! The trees themselves are the Fermat point for three terminals, Melzak's construction on
//! each pairing for four, and the generation of [`super::super::fst`] on the set alone for
//! more; the shortest one spanning the whole set is kept when it passes the upper bound test
//! against the bottleneck distances of all the terminals.

use rayon::prelude::*;

use super::super::fst::{full_steiner_trees, prim_length, Bottleneck, End, FullTree};
use super::super::path_maxima::PathMaxima;
use super::super::solve::RATIO_BOUND;
use super::super::{cross, equilateral_point, fermat_point, simpson_hit, Network, HALF_SQRT3};
use crate::cancel::Clock;
use crate::geometry::{add, distance, dot, scale, sub, Point};
use crate::partition::delaunay;

/// Tolerance of the upper bound test (working-frame coordinates), on the side of keeping.
const TOL: f64 = 1e-10;

/// The full Steiner trees (three to `max_size` terminals) of the Delaunay-connected terminal
/// sets of `points` (distinct, in the working frame, not all collinear) that pass the tests
/// above, given the points' minimum spanning tree `mst`. Ordered by their smallest terminal
/// (the enumeration root), so the same input gives the same list on any thread count.
/// `None` when `clock` stops the generation (it is polled once per root).
///
/// # Runtime
/// O(n log n) for a fixed `max_size` on spread terminals: each terminal roots O(1) sets (the
/// mean Delaunay degree is below six) and each set costs O(log n) bottleneck queries.
pub(crate) fn local_full_trees(
    points: &[Point],
    mst: &[[usize; 2]],
    max_size: usize,
    clock: &Clock,
) -> Option<Vec<FullTree>> {
    let n = points.len();
    let Ok(triangulation) = delaunay(points) else {
        return Some(Vec::new());
    };
    let mut adjacency: Vec<Vec<usize>> = vec![Vec::new(); n];
    for &[a, b] in &triangulation.edges {
        adjacency[a].push(b);
        adjacency[b].push(a);
    }
    // A point the triangulation merged into a representative keeps that link.
    for (i, &r) in triangulation.representative.iter().enumerate() {
        if r != i {
            adjacency[r].push(i);
            adjacency[i].push(r);
        }
    }
    for list in &mut adjacency {
        list.sort_unstable();
        list.dedup();
    }
    let net = Network { nodes: points.to_vec(), terminal_count: n, edges: mst.to_vec() };
    let bottleneck = PathMaxima::new(&net);
    let per_root: Vec<Option<Vec<FullTree>>> = (0..n)
        .into_par_iter()
        .map(|root| {
            if clock.stop() {
                return None;
            }
            let mut found = Vec::new();
            let mut set = vec![root];
            let extension: Vec<usize> = adjacency[root].iter().copied().filter(|&u| u > root).collect();
            extend(&mut set, extension, &adjacency, max_size, &mut |members| {
                if let Some(tree) = best_tree(points, members, &bottleneck) {
                    found.push(tree);
                }
            });
            Some(found)
        })
        .collect();
    let mut trees = Vec::new();
    for list in per_root {
        trees.extend(list?);
    }
    Some(trees)
}

/// ESU's extension step (Wernicke 2006): `set` is connected, rooted at `set[0]`, and every
/// member of `extension` is a neighbour of it with a larger index than the root that no
/// earlier branch has taken; each connected set of size 3 to `max_size` whose smallest
/// member is the root is visited exactly once.
fn extend(
    set: &mut Vec<usize>,
    mut extension: Vec<usize>,
    adjacency: &[Vec<usize>],
    max_size: usize,
    visit: &mut impl FnMut(&[usize]),
) {
    if set.len() >= 3 {
        visit(set);
    }
    if set.len() == max_size {
        return;
    }
    let root = set[0];
    while let Some(w) = extension.pop() {
        let mut next = extension.clone();
        for &u in &adjacency[w] {
            // Exclusive neighbours of w: outside the set and not next to any member of it.
            if u > root
                && !set.contains(&u)
                && !next.contains(&u)
                && !set.iter().any(|&s| adjacency[s].binary_search(&u).is_ok())
            {
                next.push(u);
            }
        }
        set.push(w);
        extend(set, next, adjacency, max_size, visit);
        set.pop();
    }
}

/// The shortest full Steiner tree spanning all of `members` that passes the upper bound test
/// against the bottleneck distances of every terminal, in global terminal indices.
fn best_tree(points: &[Point], members: &[usize], bottleneck: &PathMaxima) -> Option<FullTree> {
    let mut members = members.to_vec();
    members.sort_unstable();
    let k = members.len();
    let bsd = |a: usize, b: usize| bottleneck.query(members[a], members[b]).0;
    let limit = prim_length(k, bsd);
    let ratio = if k <= 5 { HALF_SQRT3 } else { RATIO_BOUND };
    let spanning = prim_length(k, |a, b| distance(points[members[a]], points[members[b]]));
    if ratio * spanning >= limit - TOL {
        return None;
    }
    let sub: Vec<Point> = members.iter().map(|&t| points[t]).collect();
    let best = match k {
        3 => three(&sub),
        4 => four(&sub),
        _ => full_steiner_trees(&sub, &Bottleneck::new(&sub), &Clock::unlimited())?
            .into_iter()
            .filter(|t| t.terminals.len() == k)
            .min_by(|a, b| a.length.total_cmp(&b.length)),
    }?;
    if best.length >= limit - TOL {
        return None;
    }
    // Local indices are ascending like `members`, so the terminal list stays sorted.
    let global = |end: End| match end {
        End::Terminal(t) => End::Terminal(members[t]),
        other => other,
    };
    Some(FullTree {
        terminals: best.terminals.iter().map(|&t| members[t]).collect(),
        edges: best.edges.iter().map(|&[a, b]| [global(a), global(b)]).collect(),
        steiner: best.steiner,
        length: best.length,
    })
}

/// The full Steiner tree of three terminals: a star on the Fermat point, which exists when
/// every angle of the triangle is below 120° (Torricelli).
fn three(p: &[Point]) -> Option<FullTree> {
    let f = fermat_point(p[0], p[1], p[2]);
    if p.contains(&f) {
        return None;
    }
    let length = p.iter().map(|&q| distance(q, f)).sum();
    let edges = (0..3).map(|t| [End::Terminal(t), End::Steiner(0)]).collect();
    Some(FullTree { terminals: vec![0, 1, 2], steiner: vec![f], edges, length })
}

/// The shortest full Steiner tree of four terminals, by Melzak's (1961) construction on each
/// of the three pairings `{a, b} | {c, d}` and each side of the equilateral points: with
/// `e₁` the equilateral point on `a, b` and `e₂` on `c, d`, the Steiner points are where the
/// segment `e₁e₂` (Simpson's line) meets the two circles through `a, b, e₁` and `c, d, e₂`.
/// The tree is full when each lies on the arc opposite its equilateral point (where `a` and
/// `b` are seen at 120°, so the Simpson line leaves at 120° from both) and they come in the
/// order `e₁, s₁, s₂, e₂`; its length is then `|e₁e₂|`.
fn four(p: &[Point]) -> Option<FullTree> {
    let mut best: Option<FullTree> = None;
    for [a, b, c, d] in [[0, 1, 2, 3], [0, 2, 1, 3], [0, 3, 1, 2]] {
        for ([a, b], [c, d]) in [([a, b], [c, d]), ([b, a], [c, d]), ([a, b], [d, c]), ([b, a], [d, c])] {
            let (e1, e2) = (equilateral_point(p[a], p[b]), equilateral_point(p[c], p[d]));
            let centre = |u: Point, v: Point, e: Point| scale(add(add(u, v), e), 1.0 / 3.0);
            let Some(s1) = simpson_hit(e1, e2, centre(p[a], p[b], e1)) else { continue };
            let Some(s2) = simpson_hit(e2, e1, centre(p[c], p[d], e2)) else { continue };
            let opposite = |u: Point, v: Point, e: Point, s: Point| {
                let line = sub(v, u);
                cross(line, sub(e, u)) * cross(line, sub(s, u)) < 0.0
            };
            if !opposite(p[a], p[b], e1, s1) || !opposite(p[c], p[d], e2, s2) || dot(sub(s2, s1), sub(e2, e1)) <= 0.0 {
                continue;
            }
            let ends = [(a, s1), (b, s1), (c, s2), (d, s2)];
            let length = ends.iter().map(|&(t, s)| distance(p[t], s)).sum::<f64>() + distance(s1, s2);
            if ends.iter().any(|&(t, s)| distance(p[t], s) <= TOL) || distance(s1, s2) <= TOL {
                continue;
            }
            if best.as_ref().is_some_and(|t| t.length <= length) {
                continue;
            }
            let edges = vec![
                [End::Terminal(a), End::Steiner(0)],
                [End::Terminal(b), End::Steiner(0)],
                [End::Steiner(0), End::Steiner(1)],
                [End::Steiner(1), End::Terminal(c)],
                [End::Steiner(1), End::Terminal(d)],
            ];
            best = Some(FullTree { terminals: vec![0, 1, 2, 3], steiner: vec![s1, s2], edges, length });
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeSet;

    /// Every connected vertex set of size 3..=max containing `root` as its smallest member,
    /// by brute force over all subsets of a small graph.
    fn brute_force(adjacency: &[Vec<usize>], max_size: usize) -> BTreeSet<Vec<usize>> {
        let n = adjacency.len();
        let mut out = BTreeSet::new();
        for mask in 1u32..(1 << n) {
            let members: Vec<usize> = (0..n).filter(|&v| mask >> v & 1 == 1).collect();
            if members.len() < 3 || members.len() > max_size {
                continue;
            }
            let mut reached = vec![members[0]];
            let mut k = 0;
            while k < reached.len() {
                let u = reached[k];
                k += 1;
                for &v in &adjacency[u] {
                    if mask >> v & 1 == 1 && !reached.contains(&v) {
                        reached.push(v);
                    }
                }
            }
            if reached.len() == members.len() {
                out.insert(members);
            }
        }
        out
    }

    #[test]
    fn three_and_four_terminal_trees_agree_with_the_general_generation() {
        // Reference: the exact solver's FST generation (fst.rs, Melzak's method with pruning
        // switched to the set alone), whose shortest full tree on all the terminals is what
        // the direct constructions must find, on 200 seeded sets of three and four points.
        let mut rng = crate::geometry::random::SplitMix64::new(17);
        for k in 0..200 {
            let size = 3 + k % 2;
            let p: Vec<Point> = (0..size).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
            let direct = if size == 3 { three(&p) } else { four(&p) };
            let general = full_steiner_trees(&p, &Bottleneck::new(&p), &Clock::unlimited())
                .unwrap()
                .into_iter()
                .filter(|t| t.terminals.len() == size)
                .min_by(|a, b| a.length.total_cmp(&b.length));
            match (direct, general) {
                (Some(d), Some(g)) => {
                    assert!((d.length - g.length).abs() < 1e-9, "{p:?}: {} against {}", d.length, g.length)
                }
                // The general generation prunes full trees that cannot be in a Steiner minimum
                // tree of the set; the direct one keeps them, never shorter than the optimum.
                (Some(d), None) => {
                    let b = Bottleneck::new(&p);
                    let trees = full_steiner_trees(&p, &b, &Clock::unlimited()).unwrap();
                    let optimum =
                        crate::network::steiner::concatenate::concatenate(size, &trees, &Clock::unlimited()).unwrap();
                    assert!(d.length >= optimum.length - 1e-9, "{p:?}");
                }
                (None, Some(g)) => panic!("{p:?}: the direct construction missed a full tree of length {}", g.length),
                (None, None) => {}
            }
        }
    }

    #[test]
    fn enumeration_visits_each_connected_set_once() {
        // Reference: brute force over all 2^10 subsets of the Delaunay graph of ten seeded
        // points (connected sets of three to five vertices).
        let mut rng = crate::geometry::random::SplitMix64::new(11);
        let pts: Vec<Point> = (0..10).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        let tri = delaunay(&pts).unwrap();
        let mut adjacency = vec![Vec::new(); 10];
        for &[a, b] in &tri.edges {
            adjacency[a].push(b);
            adjacency[b].push(a);
        }
        adjacency.iter_mut().for_each(|l| l.sort_unstable());
        let mut seen = Vec::new();
        for root in 0..10 {
            let mut set = vec![root];
            let ext = adjacency[root].iter().copied().filter(|&u| u > root).collect();
            extend(&mut set, ext, &adjacency, 5, &mut |m| {
                let mut m = m.to_vec();
                m.sort_unstable();
                seen.push(m);
            });
        }
        let unique: BTreeSet<Vec<usize>> = seen.iter().cloned().collect();
        assert_eq!(unique.len(), seen.len(), "a set was visited twice");
        assert_eq!(unique, brute_force(&adjacency, 5));
    }
}
