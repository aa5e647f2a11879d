//! The regular (weighted Delaunay) triangulation: the projection of the lower convex hull
//! of the sites lifted to `(x, y, x² + y² - w)` (Aurenhammer 1987), built by incremental
//! insertion in the Bowyer–Watson manner (Bowyer 1981, Watson 1981) with the power test in
//! place of the in-circle test (Edelsbrunner & Shah 1996, "Incremental topological flipping
//! works for regular triangulations").
//!
//! Each new site's conflict region (the triangles whose lifted plane passes above it, and the
//! outer "ghost" triangles of hull edges it sees) is removed and its boundary joined to the
//! site; vertices left inside the region are hidden (their lifted point is above the new lower
//! hull: their power cells are empty). A site in conflict with nothing is redundant from the
//! start. Sites are inserted along a Hilbert curve so each point location walk is short.
//! Every sign decision is an exact `orient2d` / `orient3d` on the given lifted coordinates,
//! so the triangulation is exactly the regular one of those coordinates.

use std::collections::HashMap;

use crate::geometry::predicates::{orient2d, orient3d};
use crate::geometry::random::SplitMix64;
use crate::geometry::{BoundingBox, Point};

/// The vertex at infinity: triangle `[a, b, GHOST]` lies outside the hull edge `b → a`.
const GHOST: usize = usize::MAX;

/// A regular triangulation, indexed by input site.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Regular {
    /// Triangles as counter-clockwise triples of sites (none when all sites are collinear).
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]`: the triangle across the edge opposite corner `k` (`None` on the hull).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// Every edge once as `[smaller, larger]` (along the line when all sites are collinear).
    pub edges: Vec<[usize; 2]>,
    /// `redundant[i]`: the lifted site lies on or above the lower hull of the others (an
    /// empty power cell); redundant sites are on no triangle or edge.
    pub redundant: Vec<bool>,
}

/// The regular triangulation of distinct `sites` lifted to `lifted[i] = (x, y, x² + y² - w)`.
pub(crate) fn regular(sites: &[Point], lifted: &[[f64; 3]]) -> Regular {
    let n = sites.len();
    let order = hilbert_order(sites);
    let Some((a, b, c)) = first_triangle(sites, &order) else {
        return collinear(sites, lifted);
    };
    let mut mesh = Mesh::new(sites, lifted, [a, b, c]);
    for &q in &order {
        if q != a && q != b && q != c {
            mesh.insert(q);
        }
    }
    mesh.finish(n)
}

/// Sites sorted along a Hilbert curve on a 2^16 grid over their bounding box (ties by row).
fn hilbert_order(sites: &[Point]) -> Vec<usize> {
    let b = BoundingBox::of(sites).expect("sites validated non-empty");
    let side = (b.max[0] - b.min[0]).max(b.max[1] - b.min[1]);
    let scale = if side > 0.0 { 65535.0 / side } else { 0.0 };
    let key = |p: Point| {
        let (mut x, mut y) = (((p[0] - b.min[0]) * scale) as u32, ((p[1] - b.min[1]) * scale) as u32);
        let mut d = 0u64;
        let mut s = 1u32 << 15;
        while s > 0 {
            let rx = u32::from(x & s > 0);
            let ry = u32::from(y & s > 0);
            d += u64::from(s) * u64::from(s) * u64::from((3 * rx) ^ ry);
            if ry == 0 {
                if rx == 1 {
                    x = s.wrapping_sub(1).wrapping_sub(x) & 0xFFFF;
                    y = s.wrapping_sub(1).wrapping_sub(y) & 0xFFFF;
                }
                std::mem::swap(&mut x, &mut y);
            }
            s >>= 1;
        }
        d
    };
    let mut keyed: Vec<(u64, usize)> = sites.iter().enumerate().map(|(i, &p)| (key(p), i)).collect();
    keyed.sort_unstable();
    keyed.into_iter().map(|(_, i)| i).collect()
}

/// Three sites of a counter-clockwise triangle: the first two in `order` and the first
/// one off their line; `None` when every site lies on one line.
fn first_triangle(sites: &[Point], order: &[usize]) -> Option<(usize, usize, usize)> {
    let (&a, &b) = (order.first()?, order.get(1)?);
    let &c = order.iter().find(|&&c| orient2d(sites[a], sites[b], sites[c]) != 0.0)?;
    Some(if orient2d(sites[a], sites[b], sites[c]) > 0.0 { (a, b, c) } else { (a, c, b) })
}

/// Sites all on one line: the lower hull of the lifted points in the vertical plane above
/// the line, by one monotone pass (Andrew 1979) with an exact `orient3d` side test.
fn collinear(sites: &[Point], lifted: &[[f64; 3]]) -> Regular {
    let n = sites.len();
    // Along a line, lexicographic order is the order along the line.
    let mut along: Vec<usize> = (0..n).collect();
    along.sort_by(|&i, &j| sites[i][0].total_cmp(&sites[j][0]).then(sites[i][1].total_cmp(&sites[j][1])));
    let mut redundant = vec![false; n];
    let mut stack: Vec<usize> = Vec::with_capacity(n);
    for &c in &along {
        while stack.len() >= 2 {
            let (a, b) = (stack[stack.len() - 2], stack[stack.len() - 1]);
            if strictly_below(sites, lifted, a, c, b) {
                break;
            }
            redundant[b] = true;
            stack.pop();
        }
        stack.push(c);
    }
    let edges = stack.windows(2).map(|w| [w[0].min(w[1]), w[0].max(w[1])]).collect();
    Regular { triangles: Vec::new(), adjacent: Vec::new(), edges, redundant }
}

/// For sites `a`, `b`, `c` on one line with `b` between the others: whether lifted `b` lies
/// strictly below the segment of lifted `a` and `c`. The test plane holds that segment and a
/// point off the line; a probe known to be below the segment fixes which sign is "below".
fn strictly_below(sites: &[Point], lifted: &[[f64; 3]], a: usize, c: usize, b: usize) -> bool {
    let (pa, pc) = (sites[a], sites[c]);
    let d = [pc[0] - pa[0], pc[1] - pa[1]];
    let off = [[pa[0] - d[1], pa[1] + d[0]], [pa[0] + 1.0, pa[1]], [pa[0], pa[1] + 1.0]]
        .into_iter()
        .find(|&z| orient2d(pa, pc, z) != 0.0)
        .expect("one of the probes is off the line");
    let z = [off[0], off[1], 0.0];
    let low = lifted[a][2].min(lifted[c][2]);
    let probe = [sites[b][0], sites[b][1], low - (low.abs() + 1.0)];
    let side = orient3d(lifted[a], lifted[c], z, lifted[b]);
    let below = orient3d(lifted[a], lifted[c], z, probe);
    side != 0.0 && (side > 0.0) == (below > 0.0)
}

/// The triangles under construction, ghosts included.
struct Mesh<'a> {
    xy: &'a [Point],
    lifted: &'a [[f64; 3]],
    tri: Vec<[usize; 3]>,
    /// `nbr[t][k]`: the triangle across the edge opposite corner `k`.
    nbr: Vec<[usize; 3]>,
    alive: Vec<bool>,
    free: Vec<usize>,
    /// Triangles in the current conflict region carry the current epoch.
    mark: Vec<u32>,
    /// Vertices on the current region's boundary carry the current epoch.
    vertex_mark: Vec<u32>,
    epoch: u32,
    hidden: Vec<bool>,
    last: usize,
    rng: SplitMix64,
}

impl<'a> Mesh<'a> {
    fn new(xy: &'a [Point], lifted: &'a [[f64; 3]], [a, b, c]: [usize; 3]) -> Mesh<'a> {
        let mut mesh = Mesh {
            xy,
            lifted,
            tri: vec![[a, b, c], [b, a, GHOST], [c, b, GHOST], [a, c, GHOST]],
            nbr: vec![[0; 3]; 4],
            alive: vec![true; 4],
            free: Vec::new(),
            mark: vec![0; 4],
            vertex_mark: vec![0; xy.len()],
            epoch: 0,
            hidden: vec![false; xy.len()],
            last: 0,
            rng: SplitMix64::new(0x5eed),
        };
        let mut open: HashMap<(usize, usize), (usize, usize)> = HashMap::new();
        for t in 0..4 {
            for k in 0..3 {
                let (u, v) = (mesh.tri[t][(k + 1) % 3], mesh.tri[t][(k + 2) % 3]);
                if let Some((s, j)) = open.remove(&(v, u)) {
                    mesh.nbr[t][k] = s;
                    mesh.nbr[s][j] = t;
                } else {
                    open.insert((u, v), (t, k));
                }
            }
        }
        mesh
    }

    fn ghost_corner(&self, t: usize) -> Option<usize> {
        self.tri[t].iter().position(|&v| v == GHOST)
    }

    /// Whether site `q` conflicts with triangle `t`: lifted `q` lies strictly below its lifted
    /// plane, or (a ghost) `q` lies strictly outside its hull edge, or on that edge's interior
    /// and in conflict with the finite triangle inside it.
    fn conflict(&self, t: usize, q: usize) -> bool {
        match self.ghost_corner(t) {
            None => {
                let [a, b, c] = self.tri[t];
                orient3d(self.lifted[a], self.lifted[b], self.lifted[c], self.lifted[q]) > 0.0
            }
            Some(k) => {
                let (a, b) = (self.tri[t][(k + 1) % 3], self.tri[t][(k + 2) % 3]);
                let (pa, pb, pq) = (self.xy[a], self.xy[b], self.xy[q]);
                let o = orient2d(pa, pb, pq);
                if o != 0.0 {
                    return o > 0.0;
                }
                // On the edge's line: strictly between its ends (exact coordinate comparisons).
                let between = |i: usize| (pa[i].min(pb[i]) < pq[i]) && (pq[i] < pa[i].max(pb[i]));
                let inside = if pa[0] != pb[0] { between(0) } else { between(1) };
                inside && self.conflict(self.nbr[t][k], q)
            }
        }
    }

    /// A triangle in conflict with `q`, by a stochastic visibility walk (Devillers, Pion &
    /// Teillaud 2002) from the last new triangle; `None` when `q` is redundant.
    fn locate(&mut self, q: usize) -> Option<usize> {
        let mut t = self.last;
        let pq = self.xy[q];
        loop {
            if let Some(k) = self.ghost_corner(t) {
                if self.conflict(t, q) {
                    return Some(t);
                }
                t = self.nbr[t][k];
                continue;
            }
            let start = self.rng.below(3);
            let mut next = None;
            for j in 0..3 {
                let k = (start + j) % 3;
                let (a, b) = (self.tri[t][(k + 1) % 3], self.tri[t][(k + 2) % 3]);
                if orient2d(self.xy[a], self.xy[b], pq) < 0.0 {
                    next = Some(self.nbr[t][k]);
                    break;
                }
            }
            match next {
                Some(n) => t = n,
                // `q` is in the closed triangle `t`, whose plane is the lower hull above `q`
                // (its neighbours' planes meet it along the shared edges).
                None => return self.conflict(t, q).then_some(t),
            }
        }
    }

    fn insert(&mut self, q: usize) {
        let Some(t0) = self.locate(q) else {
            self.hidden[q] = true;
            return;
        };
        self.epoch += 1;
        let epoch = self.epoch;
        let mut cavity = vec![t0];
        self.mark[t0] = epoch;
        let mut stack = vec![t0];
        while let Some(t) = stack.pop() {
            for k in 0..3 {
                let n = self.nbr[t][k];
                if self.mark[n] != epoch && self.conflict(n, q) {
                    self.mark[n] = epoch;
                    cavity.push(n);
                    stack.push(n);
                }
            }
        }
        // The boundary, as edges (u, v) of cavity triangles with the triangle outside. Every
        // new triangle (u, v, q) must turn counter-clockwise; where a degenerate lifted
        // configuration leaves one flat, the region takes in the triangle across that edge.
        let boundary = loop {
            let mut boundary: Vec<(usize, usize, usize)> = Vec::new();
            let mut flat = None;
            for &t in &cavity {
                for k in 0..3 {
                    let n = self.nbr[t][k];
                    if self.mark[n] == epoch {
                        continue;
                    }
                    let (u, v) = (self.tri[t][(k + 1) % 3], self.tri[t][(k + 2) % 3]);
                    if u != GHOST && v != GHOST && !(orient2d(self.xy[u], self.xy[v], self.xy[q]) > 0.0) {
                        flat = Some(n);
                    }
                    boundary.push((u, v, n));
                }
            }
            match flat {
                Some(n) => {
                    self.mark[n] = epoch;
                    cavity.push(n);
                }
                None => break boundary,
            }
        };
        for &(u, v, _) in &boundary {
            for w in [u, v] {
                if w != GHOST {
                    self.vertex_mark[w] = epoch;
                }
            }
        }
        for &t in &cavity {
            for &w in &self.tri[t] {
                if w != GHOST && self.vertex_mark[w] != epoch {
                    // Inside the region: no longer on the lower hull.
                    self.hidden[w] = true;
                }
            }
            self.alive[t] = false;
            self.free.push(t);
        }
        let mut by_first: HashMap<usize, usize> = HashMap::with_capacity(boundary.len());
        let mut by_second: HashMap<usize, usize> = HashMap::with_capacity(boundary.len());
        let mut created = Vec::with_capacity(boundary.len());
        for &(u, v, outside) in &boundary {
            let t = match self.free.pop() {
                Some(t) => t,
                None => {
                    self.tri.push([0; 3]);
                    self.nbr.push([0; 3]);
                    self.alive.push(false);
                    self.mark.push(0);
                    self.tri.len() - 1
                }
            };
            self.tri[t] = [u, v, q];
            self.nbr[t][2] = outside;
            self.alive[t] = true;
            self.mark[t] = 0;
            // The outside triangle's corner off the edge (u, v) faces the new triangle.
            let j = (0..3).find(|&j| self.tri[outside][j] != u && self.tri[outside][j] != v).expect("a third corner");
            self.nbr[outside][j] = t;
            by_first.insert(u, t);
            by_second.insert(v, t);
            created.push(t);
        }
        for &t in &created {
            let [u, v, _] = self.tri[t];
            self.nbr[t][0] = by_first[&v];
            self.nbr[t][1] = by_second[&u];
        }
        self.last = created[0];
    }

    fn finish(self, n: usize) -> Regular {
        let finite: Vec<usize> =
            (0..self.tri.len()).filter(|&t| self.alive[t] && self.ghost_corner(t).is_none()).collect();
        let mut number = vec![usize::MAX; self.tri.len()];
        for (k, &t) in finite.iter().enumerate() {
            number[t] = k;
        }
        let triangles: Vec<[usize; 3]> = finite.iter().map(|&t| self.tri[t]).collect();
        let adjacent: Vec<[Option<usize>; 3]> =
            finite.iter().map(|&t| self.nbr[t].map(|s| (number[s] != usize::MAX).then_some(number[s]))).collect();
        let mut edges = Vec::with_capacity(3 * triangles.len() / 2 + 3);
        for (k, (tri, across)) in triangles.iter().zip(&adjacent).enumerate() {
            for j in 0..3 {
                if across[j].is_none_or(|o| o > k) {
                    let (a, b) = (tri[(j + 1) % 3], tri[(j + 2) % 3]);
                    edges.push([a.min(b), a.max(b)]);
                }
            }
        }
        debug_assert_eq!(self.hidden.len(), n);
        Regular { triangles, adjacent, edges, redundant: self.hidden }
    }
}
