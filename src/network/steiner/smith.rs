//! Re-optimisation of Steiner point positions for a fixed topology, and the clean-up that
//! restores the 120° rule around it.
//!
//! Smith (1992, "How to find Steiner minimal trees in Euclidean d-space", Algorithmica 7):
//! with every edge weighted by the reciprocal of its current length, the new Steiner point
//! positions solve a linear system whose graph is the (forest) subgraph of Steiner points,
//! so one iteration is a leaf-to-root elimination and a back substitution, O(n). The
//! iteration never lengthens the tree (it minimises a majorant of the length, as
//! Weiszfeld's does) and converges to the optimal positions for the topology.

use std::f64::consts::PI;

use super::{angle_at, fermat_point, Network};
use crate::geometry::{add, distance, scale, sub, Point};

/// Edges shorter than this (working-frame coordinates) are contracted.
const SHORT: f64 = 1e-9;
/// Smallest edge length used in the weights.
const FLOOR: f64 = 1e-15;
/// Angles are at 120° to within this after [`settle`] (radians).
pub(crate) const ANGLE_TOL: f64 = 1e-8;

/// Move the Steiner points of `net` towards their optimal positions for its topology:
/// Smith iterations until the largest angle error at a degree-3 Steiner point is below
/// [`ANGLE_TOL`] or `max_iter` iterations are done. Returns the iterations used.
pub(crate) fn optimise_positions(net: &mut Network, max_iter: usize) -> usize {
    let t = net.terminal_count;
    let s_count = net.nodes.len() - t;
    if s_count == 0 {
        return 0;
    }
    let adjacency = net.adjacency();
    // Breadth-first order of each Steiner component, parents first.
    let mut order = Vec::with_capacity(s_count);
    let mut parent = vec![usize::MAX; net.nodes.len()];
    let mut seen = vec![false; net.nodes.len()];
    for root in t..net.nodes.len() {
        if seen[root] {
            continue;
        }
        seen[root] = true;
        let start = order.len();
        order.push(root);
        let mut k = start;
        while k < order.len() {
            let u = order[k];
            k += 1;
            for &v in &adjacency[u] {
                if v >= t && !seen[v] {
                    seen[v] = true;
                    parent[v] = u;
                    order.push(v);
                }
            }
        }
    }
    let mut a = vec![[0.0f64; 2]; net.nodes.len()];
    let mut b = vec![0.0f64; net.nodes.len()];
    let mut sum_wb = vec![0.0f64; net.nodes.len()];
    let mut sum_wa = vec![[0.0f64; 2]; net.nodes.len()];
    for iteration in 0..max_iter {
        if iteration % 8 == 0 && worst_angle_error(net, &adjacency) < ANGLE_TOL {
            return iteration;
        }
        sum_wb.iter_mut().for_each(|x| *x = 0.0);
        sum_wa.iter_mut().for_each(|x| *x = [0.0, 0.0]);
        for &s in order.iter().rev() {
            let xs = net.nodes[s];
            let mut diagonal = 0.0;
            let mut rhs = sum_wa[s];
            let mut w_parent = 0.0;
            for &j in &adjacency[s] {
                let w = 1.0 / distance(xs, net.nodes[j]).max(FLOOR);
                diagonal += w;
                if j < t {
                    rhs = add(rhs, scale(net.nodes[j], w));
                } else if j == parent[s] {
                    w_parent = w;
                }
            }
            let den = diagonal - sum_wb[s];
            a[s] = scale(rhs, 1.0 / den);
            b[s] = w_parent / den;
            if parent[s] != usize::MAX {
                let p = parent[s];
                sum_wa[p] = add(sum_wa[p], scale(a[s], w_parent));
                sum_wb[p] += w_parent * b[s];
            }
        }
        for &s in &order {
            let x = if parent[s] == usize::MAX { a[s] } else { add(a[s], scale(net.nodes[parent[s]], b[s])) };
            net.nodes[s] = x;
        }
    }
    max_iter
}

/// Largest deviation from 120° over the angles at degree-3 Steiner points.
fn worst_angle_error(net: &Network, adjacency: &[Vec<usize>]) -> f64 {
    let third = 2.0 * PI / 3.0;
    let mut worst: f64 = 0.0;
    for (s, around) in adjacency.iter().enumerate().skip(net.terminal_count) {
        if let [i, j, k] = around[..] {
            let (p, a, b, c) = (net.nodes[s], net.nodes[i], net.nodes[j], net.nodes[k]);
            if distance(p, a).min(distance(p, b)).min(distance(p, c)) <= SHORT {
                return f64::INFINITY;
            }
            worst = worst
                .max((angle_at(p, a, b) - third).abs())
                .max((angle_at(p, b, c) - third).abs())
                .max((angle_at(p, c, a) - third).abs());
        } else {
            return f64::INFINITY;
        }
    }
    worst
}

/// Bring `net` to a tree obeying the rules of a Steiner tree — every Steiner point of
/// degree three at 120°, no two edges at a node meeting at less than 120° — without
/// lengthening it: alternate position optimisation with contraction of collapsed edges,
/// removal of Steiner points of degree one or two, and a new Steiner point wherever two
/// edges meet at less than 120° at a terminal or at a Steiner point of degree four or more.
pub(crate) fn settle(net: &mut Network, max_rounds: usize, max_iter: usize) {
    for _ in 0..max_rounds {
        optimise_positions(net, max_iter);
        polish(net, 1000);
        let mut changed = contract_short_edges(net);
        changed |= drop_thin_steiner_points(net);
        changed |= split_narrow_angles(net);
        if !changed {
            let adjacency = net.adjacency();
            if worst_angle_error(net, &adjacency) < ANGLE_TOL {
                return;
            }
        }
    }
    polish(net, 1000);
    contract_short_edges(net);
    drop_thin_steiner_points(net);
}

/// Gauss–Seidel sweeps over the Steiner points still off 120°: each is moved to the Fermat
/// point of its three neighbours (exact for that point, so the tree never lengthens), until
/// none is off by more than a tenth of [`ANGLE_TOL`] or `max_sweeps` sweeps are done.
fn polish(net: &mut Network, max_sweeps: usize) {
    let third = 2.0 * PI / 3.0;
    let adjacency = net.adjacency();
    for _ in 0..max_sweeps {
        let mut moved = false;
        for (s, around) in adjacency.iter().enumerate().skip(net.terminal_count) {
            let [i, j, k] = around[..] else { continue };
            let (p, a, b, c) = (net.nodes[s], net.nodes[i], net.nodes[j], net.nodes[k]);
            if distance(p, a).min(distance(p, b)).min(distance(p, c)) <= SHORT {
                continue;
            }
            let error = (angle_at(p, a, b) - third)
                .abs()
                .max((angle_at(p, b, c) - third).abs())
                .max((angle_at(p, c, a) - third).abs());
            if error > 0.1 * ANGLE_TOL {
                // A Fermat point at a neighbour collapses the Steiner point onto it, for the
                // clean-up to contract.
                net.nodes[s] = fermat_point(a, b, c);
                moved = true;
            }
        }
        if !moved {
            return;
        }
    }
}

/// Merge every Steiner point into a neighbour it has (nearly) reached.
fn contract_short_edges(net: &mut Network) -> bool {
    let t = net.terminal_count;
    let mut target: Vec<usize> = (0..net.nodes.len()).collect();
    let mut changed = false;
    // Process edges so that a Steiner end merges into the other end; terminals never move.
    for e in &net.edges {
        let (u, v) = (e[0], e[1]);
        if distance(net.nodes[u], net.nodes[v]) > SHORT {
            continue;
        }
        let (ru, rv) = (resolve(&target, u), resolve(&target, v));
        if ru == rv {
            continue;
        }
        if ru >= t {
            target[ru] = rv;
            changed = true;
        } else if rv >= t {
            target[rv] = ru;
            changed = true;
        }
    }
    if !changed {
        return false;
    }
    let map: Vec<usize> = (0..net.nodes.len()).map(|i| resolve(&target, i)).collect();
    rebuild(net, |i| map[i]);
    true
}

fn resolve(target: &[usize], mut i: usize) -> usize {
    while target[i] != i {
        i = target[i];
    }
    i
}

/// Renumber nodes through `map` (merging nodes), drop loops and duplicate edges and the
/// Steiner points no edge reaches.
fn rebuild(net: &mut Network, map: impl Fn(usize) -> usize) {
    let mut edges: Vec<[usize; 2]> = net
        .edges
        .iter()
        .map(|e| {
            let (a, b) = (map(e[0]), map(e[1]));
            [a.min(b), a.max(b)]
        })
        .filter(|e| e[0] != e[1])
        .collect();
    edges.sort_unstable();
    edges.dedup();
    net.edges = edges;
    compact(net);
}

/// Remove Steiner points without edges and renumber the rest.
fn compact(net: &mut Network) {
    let t = net.terminal_count;
    let mut used = vec![false; net.nodes.len()];
    for e in &net.edges {
        used[e[0]] = true;
        used[e[1]] = true;
    }
    let mut new_index = vec![usize::MAX; net.nodes.len()];
    let mut nodes = Vec::with_capacity(net.nodes.len());
    for (i, &p) in net.nodes.iter().enumerate() {
        if i < t || used[i] {
            new_index[i] = nodes.len();
            nodes.push(p);
        }
    }
    for e in &mut net.edges {
        *e = [new_index[e[0]], new_index[e[1]]];
    }
    net.nodes = nodes;
}

/// Remove Steiner points of degree one (with their edge) and of degree two (joining their
/// neighbours directly, which the triangle inequality says is no longer), repeatedly.
pub(crate) fn drop_thin_steiner_points(net: &mut Network) -> bool {
    let t = net.terminal_count;
    let mut adjacency: Vec<Vec<usize>> = net.adjacency();
    let mut removed = vec![false; net.nodes.len()];
    let mut queue: Vec<usize> = (t..net.nodes.len()).filter(|&s| adjacency[s].len() <= 2).collect();
    let mut changed = false;
    while let Some(s) = queue.pop() {
        if removed[s] || adjacency[s].len() > 2 {
            continue;
        }
        removed[s] = true;
        changed = true;
        let neighbours = std::mem::take(&mut adjacency[s]);
        for &j in &neighbours {
            adjacency[j].retain(|&x| x != s);
        }
        if let [i, j] = neighbours[..] {
            adjacency[i].push(j);
            adjacency[j].push(i);
        } else {
            for &j in &neighbours {
                if j >= t && adjacency[j].len() <= 2 {
                    queue.push(j);
                }
            }
        }
    }
    if !changed {
        return false;
    }
    net.edges = adjacency
        .iter()
        .enumerate()
        .flat_map(|(u, list)| list.iter().filter(move |&&v| u < v).map(move |&v| [u, v]))
        .collect();
    compact(net);
    true
}

/// At each terminal and each Steiner point of degree four or more, replace two edges that
/// meet at less than 120° by a new Steiner point at the Fermat point of their three ends.
fn split_narrow_angles(net: &mut Network) -> bool {
    let t = net.terminal_count;
    let limit = 2.0 * PI / 3.0 - 1e-9;
    let mut adjacency = net.adjacency();
    let mut changed = false;
    let original = net.nodes.len();
    for v in 0..original {
        if v >= t && adjacency[v].len() <= 3 {
            continue;
        }
        loop {
            let narrowest = narrowest_pair(net.nodes[v], &adjacency[v], &net.nodes);
            let Some((a, b, angle)) = narrowest else {
                break;
            };
            if angle >= limit {
                break;
            }
            let f = fermat_point(net.nodes[v], net.nodes[a], net.nodes[b]);
            if distance(f, net.nodes[v]) <= SHORT
                || distance(f, net.nodes[a]) <= SHORT
                || distance(f, net.nodes[b]) <= SHORT
            {
                break;
            }
            let s = net.nodes.len();
            net.nodes.push(f);
            adjacency.push(vec![v, a, b]);
            for (x, y) in [(v, a), (v, b)] {
                adjacency[x].retain(|&z| z != y);
                adjacency[y].retain(|&z| z != x);
            }
            adjacency[v].push(s);
            adjacency[a].push(s);
            adjacency[b].push(s);
            changed = true;
        }
    }
    if changed {
        net.edges = adjacency
            .iter()
            .enumerate()
            .flat_map(|(u, list)| list.iter().filter(move |&&w| u < w).map(move |&w| [u, w]))
            .collect();
    }
    changed
}

/// The two neighbours of `p` whose directions make the smallest angle, with that angle.
fn narrowest_pair(p: Point, neighbours: &[usize], nodes: &[Point]) -> Option<(usize, usize, f64)> {
    if neighbours.len() < 2 {
        return None;
    }
    let mut by_angle: Vec<(f64, usize)> = neighbours
        .iter()
        .map(|&j| {
            let d = sub(nodes[j], p);
            (d[1].atan2(d[0]), j)
        })
        .collect();
    by_angle.sort_by(|x, y| x.0.total_cmp(&y.0));
    let m = by_angle.len();
    let mut best: Option<(usize, usize, f64)> = None;
    for k in 0..m {
        let (a1, j1) = by_angle[k];
        let (a2, j2) = by_angle[(k + 1) % m];
        let mut gap = a2 - a1;
        if k + 1 == m {
            gap += 2.0 * PI;
        }
        if m == 2 {
            gap = gap.min(2.0 * PI - gap);
        }
        if best.is_none_or(|(_, _, g)| gap < g) {
            best = Some((j1, j2, gap));
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::steiner::HALF_SQRT3;

    #[test]
    fn smith_iteration_moves_a_steiner_point_to_the_fermat_point() {
        // Closed form: the equilateral triangle's Steiner point is its centroid.
        let mut net = Network {
            nodes: vec![[0.0, 0.0], [1.0, 0.0], [0.5, HALF_SQRT3], [0.9, 0.1]],
            terminal_count: 3,
            edges: vec![[0, 3], [1, 3], [2, 3]],
        };
        optimise_positions(&mut net, 10_000);
        assert!(distance(net.nodes[3], [0.5, HALF_SQRT3 / 3.0]) < 1e-9);
    }

    #[test]
    fn settle_turns_a_unit_square_star_into_its_steiner_tree() {
        // Closed form: the unit square's Steiner tree has two Steiner points and length 1 + √3.
        let mut net = Network {
            nodes: vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.5, 0.45]],
            terminal_count: 4,
            edges: vec![[0, 4], [1, 4], [2, 4], [3, 4]],
        };
        settle(&mut net, 50, 5_000);
        assert_eq!(net.nodes.len(), 6);
        assert!((net.length() - (1.0 + 3f64.sqrt())).abs() < 1e-9, "{}", net.length());
    }

    #[test]
    fn collapsing_steiner_point_is_contracted_into_the_wide_terminal() {
        // Closed form: with an angle of 150° at the middle terminal the Fermat point is that
        // terminal, so the best tree is its two edges.
        let mut net = Network {
            nodes: vec![[-1.0, 0.0], [0.0, 0.0], [1.0, -0.577], [0.1, -0.1]],
            terminal_count: 3,
            edges: vec![[0, 3], [1, 3], [2, 3]],
        };
        let expected = distance([-1.0, 0.0], [0.0, 0.0]) + distance([0.0, 0.0], [1.0, -0.577]);
        settle(&mut net, 50, 5_000);
        assert_eq!(net.nodes.len(), 3);
        assert!((net.length() - expected).abs() < 1e-12);
    }
}
