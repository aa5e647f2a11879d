//! The convex hull of points on (or, by rounding, next to) the unit sphere.
//!
//! Randomised incremental construction (Clarkson and Shor 1989) in a biased randomised
//! insertion order (Amenta, Choi and Rote 2003): rounds of doubling size, each sorted along
//! a Morton curve, so that each point is located by a short walk from the faces made for
//! the previous one. A point is located by walking, across edges, to the face whose cone
//! from a fixed interior point `q` holds it; the faces it sees form a disc, which is
//! replaced by a fan of new faces on its horizon (Bowyer–Watson on the sphere).
//!
//! Every sign decision is Shewchuk's exact `orient3d` (through the `robust` crate), so the
//! combinatorics are those of the exact hull of the given floating-point vectors:
//! - a point on a face's plane is not "beyond" it, so co-planar points (co-circular on the
//!   sphere, such as points on one latitude circle) give co-planar adjacent faces, never
//!   slivers of the wrong orientation;
//! - a point that the exact hull of the others already holds (a near-duplicate which
//!   rounding put a hair inside the sphere) is not a vertex: it is reported in `interior`.

use robust::{orient3d, Coord3D};
use std::collections::HashMap;

use crate::cancel::Watch;
use crate::geometry::random::SplitMix64;

/// A vector in Earth-centred axes.
pub(crate) type Vec3 = [f64; 3];

pub(crate) const NONE: u32 = u32::MAX;

#[inline]
fn c3(p: Vec3) -> Coord3D<f64> {
    Coord3D { x: p[0], y: p[1], z: p[2] }
}

/// Exact orientation: positive when `d` lies on the inner side of the face `a, b, c`
/// (counter-clockwise seen from outside), negative beyond it, zero on its plane.
#[inline]
pub(crate) fn orient(a: Vec3, b: Vec3, c: Vec3, d: Vec3) -> f64 {
    orient3d(c3(a), c3(b), c3(c), c3(d))
}

/// A triangulated convex polytope (or a doubly covered polygon, see [`flat_hull`]).
#[derive(Debug, Clone, Default)]
pub(crate) struct Hull {
    /// Corners of every face, counter-clockwise seen from outside.
    pub faces: Vec<[u32; 3]>,
    /// `across[f][k]`: the face sharing the edge of `f` opposite its corner `k`.
    pub across: Vec<[u32; 3]>,
    /// Points that are not vertices (held by the hull of the others).
    pub interior: Vec<u32>,
}

/// What the points span.
#[derive(Debug)]
pub(crate) enum Span {
    /// Four or more points not on one plane: a solid hull.
    Solid(Hull),
    /// Every point on one plane (through `a`, `b`, `c`, distinct and not collinear).
    Plane([u32; 3]),
    /// Every point on one line (or fewer than three points).
    Line,
}

/// Insertions between two looks at the cancel flag (a few milliseconds of work).
const INSERTIONS_PER_POLL: usize = 4096;

/// The convex hull of distinct `points`, counting one step of `watch` per point inserted
/// (every point but the four of the first simplex); `None` once `watch` is cancelled
/// (asked every [`INSERTIONS_PER_POLL`] insertions).
///
/// # Runtime
/// Expected O(n log n) for points spread over the sphere.
pub(crate) fn convex_hull(points: &[Vec3], watch: &Watch) -> Option<Span> {
    let Some(seed) = initial_simplex(points) else {
        return Some(match initial_triangle(points) {
            Some(t) => Span::Plane(t),
            None => Span::Line,
        });
    };
    let mut b = Builder::new(points, seed);
    for block in insertion_order(points, &seed).chunks(INSERTIONS_PER_POLL) {
        if watch.is_cancelled() {
            return None;
        }
        block.iter().for_each(|&i| b.insert(i));
        watch.advance(block.len() as u64);
    }
    Some(Span::Solid(b.finish()))
}

/// Three indices of points that are not collinear, far apart where possible.
pub(crate) fn initial_triangle(points: &[Vec3]) -> Option<[u32; 3]> {
    if points.len() < 3 {
        return None;
    }
    let a = 0;
    let b = argmax(points, |p| norm2(sub(p, points[a])))?;
    let ab = sub(points[b], points[a]);
    let c = argmax(points, |p| norm2(cross(ab, sub(p, points[a]))))?;
    if collinear(points[a], points[b], points[c]) {
        // Rounding hid a turn; the exact test over all points decides.
        let c = (0..points.len()).find(|&c| !collinear(points[a], points[b], points[c]))?;
        return Some([a as u32, b as u32, c as u32]);
    }
    Some([a as u32, b as u32, c as u32])
}

fn initial_simplex(points: &[Vec3]) -> Option<[u32; 4]> {
    let [a, b, c] = initial_triangle(points)?.map(|i| i as usize);
    let normal = cross(sub(points[b], points[a]), sub(points[c], points[a]));
    let far = argmax(points, |p| dot(normal, sub(p, points[a])).abs())?;
    let d = if orient(points[a], points[b], points[c], points[far]) != 0.0 {
        far
    } else {
        (0..points.len()).find(|&d| orient(points[a], points[b], points[c], points[d]) != 0.0)?
    };
    // Counter-clockwise seen from outside: d on the inner side of (a, b, c).
    if orient(points[a], points[b], points[c], points[d]) > 0.0 {
        Some([a as u32, b as u32, c as u32, d as u32])
    } else {
        Some([a as u32, c as u32, b as u32, d as u32])
    }
}

/// Exactly collinear: every coordinate-plane projection has zero turn.
fn collinear(a: Vec3, b: Vec3, c: Vec3) -> bool {
    use crate::geometry::predicates::orient2d;
    orient2d([a[0], a[1]], [b[0], b[1]], [c[0], c[1]]) == 0.0
        && orient2d([a[1], a[2]], [b[1], b[2]], [c[1], c[2]]) == 0.0
        && orient2d([a[0], a[2]], [b[0], b[2]], [c[0], c[2]]) == 0.0
}

fn argmax(points: &[Vec3], f: impl Fn(Vec3) -> f64) -> Option<usize> {
    let mut best = None;
    let mut value = 0.0;
    for (i, &p) in points.iter().enumerate() {
        let v = f(p);
        if v > value {
            value = v;
            best = Some(i);
        }
    }
    best
}

/// The neighbours across every edge of a closed triangulated surface given by its faces.
pub(crate) fn link(faces: &[[u32; 3]]) -> Vec<[u32; 3]> {
    let mut edge_face: HashMap<(u32, u32), (u32, usize)> = HashMap::with_capacity(faces.len() * 3);
    for (f, t) in faces.iter().enumerate() {
        for k in 0..3 {
            edge_face.insert((t[(k + 1) % 3], t[(k + 2) % 3]), (f as u32, k));
        }
    }
    let mut across = vec![[NONE; 3]; faces.len()];
    for (f, t) in faces.iter().enumerate() {
        for k in 0..3 {
            if let Some(&(g, _)) = edge_face.get(&(t[(k + 2) % 3], t[(k + 1) % 3])) {
                across[f][k] = g;
            }
        }
    }
    across
}

/// The neighbours across every edge of a doubly covered polygon: faces `..front` face one
/// way, the rest are the same triangles reversed. A directed edge's reverse lies in up to
/// two faces — the neighbour on the same side (across a diagonal of the fan) and the face's
/// own reverse on the other side — and the neighbour on the same side is taken when there
/// is one, so the other side is reached only across the polygon's boundary. Then the faces
/// round every vertex form one cycle, as on a closed solid (`link` alone may pick the
/// reverse face across a diagonal, and a walk round a vertex never returns).
pub(crate) fn link_doubled(faces: &[[u32; 3]], front: usize) -> Vec<[u32; 3]> {
    let mut edge_faces: HashMap<(u32, u32), [u32; 2]> = HashMap::with_capacity(faces.len() * 3);
    for (f, t) in faces.iter().enumerate() {
        for k in 0..3 {
            let slot = edge_faces.entry((t[(k + 1) % 3], t[(k + 2) % 3])).or_insert([NONE; 2]);
            slot[usize::from(f >= front)] = f as u32;
        }
    }
    let mut across = vec![[NONE; 3]; faces.len()];
    for (f, t) in faces.iter().enumerate() {
        let side = usize::from(f >= front);
        for k in 0..3 {
            if let Some(pair) = edge_faces.get(&(t[(k + 2) % 3], t[(k + 1) % 3])) {
                across[f][k] = if pair[side] != NONE { pair[side] } else { pair[1 - side] };
            }
        }
    }
    across
}

/// Biased randomised insertion order of every point but the seed's four: rounds of
/// doubling size (a point goes to the last round with probability 1/2, ...), each round
/// sorted along a 3-D Morton curve. A fixed seed keeps the output deterministic.
fn insertion_order(points: &[Vec3], seed: &[u32; 4]) -> Vec<u32> {
    let mut rng = SplitMix64::new(0x05ee_d0f5_fe7e);
    let mut keyed: Vec<(u32, u32, u32)> = Vec::with_capacity(points.len());
    let rounds = (usize::BITS - points.len().leading_zeros()).max(1);
    for (i, &p) in points.iter().enumerate() {
        if seed.contains(&(i as u32)) {
            continue;
        }
        // The last round holds about half the points, the one before a quarter, ...
        let round = rounds - 1 - rng.next_u64().leading_zeros().min(rounds - 1);
        keyed.push((round, morton(p), i as u32));
    }
    keyed.sort_unstable();
    keyed.into_iter().map(|k| k.2).collect()
}

/// The Morton (Z-order) code of a vector in [-1, 1]³, 10 bits per axis.
fn morton(p: Vec3) -> u32 {
    let mut code = 0u32;
    let q = p.map(|x| (((x.clamp(-1.0, 1.0) + 1.0) * 511.5) as u32).min(1023));
    for bit in (0..10).rev() {
        for axis in q {
            code = code << 1 | (axis >> bit & 1);
        }
    }
    code
}

struct Builder<'a> {
    p: &'a [Vec3],
    faces: Vec<[u32; 3]>,
    across: Vec<[u32; 3]>,
    alive: Vec<bool>,
    seen: Vec<u32>,
    stamp: u32,
    free: Vec<u32>,
    inside: Vec3,
    last: u32,
    turn: usize,
    stack: Vec<u32>,
    visible: Vec<u32>,
    horizon: Vec<(u32, u32, u32, usize)>,
    fan_start: Vec<u32>,
    interior: Vec<u32>,
}

impl<'a> Builder<'a> {
    fn new(p: &'a [Vec3], s: [u32; 4]) -> Builder<'a> {
        let [a, b, c, d] = s;
        let faces = vec![[a, b, c], [a, d, b], [b, d, c], [a, c, d]];
        let across = link(&faces);
        let inside = (0..3).fold([0.0; 3], |mut acc, k| {
            acc[k] = s.iter().map(|&i| p[i as usize][k]).sum::<f64>() / 4.0;
            acc
        });
        Builder {
            p,
            alive: vec![true; 4],
            seen: vec![0; 4],
            faces,
            across,
            stamp: 0,
            free: Vec::new(),
            inside,
            last: 0,
            turn: 0,
            stack: Vec::new(),
            visible: Vec::new(),
            horizon: Vec::new(),
            fan_start: vec![NONE; p.len()],
            interior: Vec::new(),
        }
    }

    #[inline]
    fn corner(&self, f: u32, k: usize) -> Vec3 {
        self.p[self.faces[f as usize][k] as usize]
    }

    /// Strictly beyond the face's plane.
    #[inline]
    fn sees(&self, f: u32, x: Vec3) -> bool {
        orient(self.corner(f, 0), self.corner(f, 1), self.corner(f, 2), x) < 0.0
    }

    /// The face whose cone from the interior point holds `x` (a remembering walk with a
    /// rotating first edge, so it cannot cycle; a scan if it runs long).
    fn locate(&mut self, x: Vec3) -> u32 {
        let mut f = self.last;
        let mut came = NONE;
        for _ in 0..self.faces.len() + 8 {
            self.turn = (self.turn + 1) % 3;
            let mut moved = false;
            for t in 0..3 {
                let k = (self.turn + t) % 3;
                let g = self.across[f as usize][k];
                if g == came {
                    continue;
                }
                let (a, b) = (self.corner(f, (k + 1) % 3), self.corner(f, (k + 2) % 3));
                if orient(self.inside, a, b, x) > 0.0 {
                    came = f;
                    f = g;
                    moved = true;
                    break;
                }
            }
            if !moved {
                return f;
            }
        }
        (0..self.faces.len() as u32).find(|&g| self.alive[g as usize] && self.sees(g, x)).unwrap_or(f)
    }

    fn insert(&mut self, i: u32) {
        let x = self.p[i as usize];
        let start = self.locate(x);
        if !self.sees(start, x) {
            self.interior.push(i);
            return;
        }
        self.stamp += 1;
        let stamp = self.stamp;
        self.stack.clear();
        self.visible.clear();
        self.horizon.clear();
        self.stack.push(start);
        self.seen[start as usize] = stamp;
        while let Some(f) = self.stack.pop() {
            self.visible.push(f);
            for k in 0..3 {
                let g = self.across[f as usize][k];
                if self.seen[g as usize] == stamp {
                    continue;
                }
                if self.sees(g, x) {
                    self.seen[g as usize] = stamp;
                    self.stack.push(g);
                } else {
                    let back = (0..3).find(|&j| self.across[g as usize][j] == f).expect("adjacency is symmetric");
                    let t = self.faces[f as usize];
                    self.horizon.push((t[(k + 1) % 3], t[(k + 2) % 3], g, back));
                }
            }
        }
        for &f in &self.visible {
            self.alive[f as usize] = false;
            self.free.push(f);
        }
        let horizon = std::mem::take(&mut self.horizon);
        for &(u, v, g, back) in &horizon {
            let f = self.allocate([u, v, i]);
            self.across[f as usize][2] = g;
            self.across[g as usize][back] = f;
            self.fan_start[u as usize] = f;
        }
        // Face (u, v, i) meets the face starting at v across its edge v → i.
        for &(u, v, _, _) in &horizon {
            let (f, g) = (self.fan_start[u as usize], self.fan_start[v as usize]);
            self.across[f as usize][0] = g;
            self.across[g as usize][1] = f;
            self.last = f;
        }
        self.horizon = horizon;
    }

    fn allocate(&mut self, t: [u32; 3]) -> u32 {
        if let Some(f) = self.free.pop() {
            self.faces[f as usize] = t;
            self.across[f as usize] = [NONE; 3];
            self.alive[f as usize] = true;
            f
        } else {
            self.faces.push(t);
            self.across.push([NONE; 3]);
            self.alive.push(true);
            self.seen.push(0);
            (self.faces.len() - 1) as u32
        }
    }

    fn finish(self) -> Hull {
        let mut index = vec![NONE; self.faces.len()];
        let mut next = 0u32;
        for (f, &alive) in self.alive.iter().enumerate() {
            if alive {
                index[f] = next;
                next += 1;
            }
        }
        let mut faces = Vec::with_capacity(next as usize);
        let mut across = Vec::with_capacity(next as usize);
        for (f, &alive) in self.alive.iter().enumerate() {
            if alive {
                faces.push(self.faces[f]);
                across.push(self.across[f].map(|g| index[g as usize]));
            }
        }
        let mut interior = self.interior;
        interior.sort_unstable();
        Hull { faces, across, interior }
    }
}

pub(crate) fn sub(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

pub(crate) fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

pub(crate) fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]
}

pub(crate) fn norm2(a: Vec3) -> f64 {
    dot(a, a)
}

pub(crate) fn unit(a: Vec3) -> Vec3 {
    let n = norm2(a).sqrt();
    [a[0] / n, a[1] / n, a[2] / n]
}

/// The hull of points that all lie on one plane not through the centre (co-circular on the
/// sphere), through `t`: their planar hull (exact turns in the coordinate plane the plane
/// projects onto without folding) fanned from its first vertex, once facing away from the
/// centre and once, reversed, facing it — a doubly covered polygon whose faces link like a
/// solid's. Points inside the polygon are `interior`.
pub(crate) fn flat_faces(points: &[Vec3], t: [u32; 3]) -> Hull {
    let [a, b, c] = t.map(|i| points[i as usize]);
    let normal = cross(sub(b, a), sub(c, a));
    let drop = (0..3).max_by(|&i, &j| normal[i].abs().total_cmp(&normal[j].abs())).expect("three axes");
    let (u, v) = ((drop + 1) % 3, (drop + 2) % 3);
    let projected: Vec<[f64; 2]> = points.iter().map(|p| [p[u], p[v]]).collect();
    let ring = crate::geometry::hull::hull_vertices(&projected);
    let mut faces: Vec<[u32; 3]> =
        (1..ring.len() - 1).map(|k| [ring[0] as u32, ring[k] as u32, ring[k + 1] as u32]).collect();
    let f = faces[0].map(|i| points[i as usize]);
    if orient(f[0], f[1], f[2], [0.0; 3]) < 0.0 {
        faces.iter_mut().for_each(|f| f.swap(1, 2));
    }
    let back: Vec<[u32; 3]> = faces.iter().map(|&[x, y, z]| [x, z, y]).collect();
    let front = faces.len();
    faces.extend(back);
    let across = link_doubled(&faces, front);
    let mut is_vertex = vec![false; points.len()];
    ring.iter().for_each(|&i| is_vertex[i] = true);
    let interior = (0..points.len() as u32).filter(|&i| !is_vertex[i as usize]).collect();
    Hull { faces, across, interior }
}
