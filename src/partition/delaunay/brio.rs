//! Incremental insertion in a biased randomised insertion order (Amenta, Choi & Rote 2003),
//! for points on a few long lines, where spade's circle sweep is quadratic.
//!
//! The points are inserted in rounds of doubling size in random order, each round sorted
//! along a Hilbert curve, every insertion walking from the previous vertex. The expected work
//! is O(n log n) whatever the configuration (Clarkson & Shor 1989).

use spade::{DelaunayTriangulation, Point2, Triangulation as SpadeTriangulation};

use super::adapter::Vertex;
use crate::cancel::Watch;
use crate::geometry::random::SplitMix64;

/// Insertions between two looks at the watch (about a millisecond of work).
const INSERT_BLOCK: usize = 1 << 12;

/// The Delaunay triangulation of `vertices` by biased randomised incremental insertion;
/// `None` when spade refuses a position (never after validation and scaling), or once
/// `watch` is cancelled (looked at every [`INSERT_BLOCK`] insertions: a million points take
/// seconds, and the set triangulated whole when strips do not suit it is this large).
pub(super) fn insert_biased(vertices: Vec<Vertex>, watch: &Watch) -> Option<DelaunayTriangulation<Vertex>> {
    let n = vertices.len();
    let (mut low, mut high) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for v in &vertices {
        let p = v.position;
        low = [low[0].min(p.x), low[1].min(p.y)];
        high = [high[0].max(p.x), high[1].max(p.y)];
    }
    let cells = f64::from(HILBERT_SIDE - 1);
    let per_unit = [0, 1].map(|k| if high[k] > low[k] { cells / (high[k] - low[k]) } else { 0.0 });
    let cell = |c: f64, k: usize| (((c - low[k]) * per_unit[k]) as u32).min(HILBERT_SIDE - 1);
    let rounds = usize::BITS - n.leading_zeros();
    let mut random = SplitMix64::new(0x5eed_de1a_0a7e);
    let mut order: Vec<(u32, u64, u32)> = vertices
        .iter()
        .enumerate()
        .map(|(i, v)| {
            // Round r (counted from the last, largest one) holds each point with probability
            // 2^-(r+1): the trailing ones of a random word.
            let r = random.next_u64().trailing_ones().min(rounds);
            (rounds - r, hilbert_index(cell(v.position.x, 0), cell(v.position.y, 1)), i as u32)
        })
        .collect();
    order.sort_unstable();
    let mut dt = DelaunayTriangulation::<Vertex>::with_capacity(n, 3 * n, 2 * n);
    let mut previous = None;
    for (k, &(_, _, i)) in order.iter().enumerate() {
        if k % INSERT_BLOCK == 0 && watch.is_cancelled() {
            return None;
        }
        let v = vertices[i as usize];
        previous = Some(match previous {
            Some(hint) => dt.insert_with_hint(v, hint).ok()?,
            None => dt.insert(v).ok()?,
        });
    }
    Some(dt)
}

/// Cells per side of the Hilbert curve's grid.
pub(crate) const HILBERT_SIDE: u32 = 1 << 16;

/// Position of cell `(x, y)` along the Hilbert curve (Hilbert 1891) filling the
/// `HILBERT_SIDE`² grid, by the classic quadrant-by-quadrant rotation.
pub(crate) fn hilbert_index(mut x: u32, mut y: u32) -> u64 {
    let mut index = 0u64;
    let mut s = HILBERT_SIDE / 2;
    while s > 0 {
        let rx = u32::from(x & s > 0);
        let ry = u32::from(y & s > 0);
        index += u64::from(s) * u64::from(s) * u64::from((3 * rx) ^ ry);
        if ry == 0 {
            if rx == 1 {
                x = HILBERT_SIDE - 1 - x;
                y = HILBERT_SIDE - 1 - y;
            }
            std::mem::swap(&mut x, &mut y);
        }
        s /= 2;
    }
    index
}

/// Whether many points share an x or a y value: in an evenly spaced sample of up to 4,096
/// points, more than a quarter repeat another sample point's x, or its y. (Generic clouds
/// repeat none.)
pub(super) fn lies_on_lines(vertices: &[Vertex]) -> bool {
    const SAMPLE: usize = 4096;
    let n = vertices.len();
    if n < 64 {
        return false;
    }
    let picked: Vec<Point2<f64>> = (0..SAMPLE.min(n)).map(|i| vertices[i * n / SAMPLE.min(n)].position).collect();
    [0, 1].into_iter().any(|axis| {
        let mut values: Vec<f64> = picked.iter().map(|p| if axis == 0 { p.x } else { p.y }).collect();
        values.sort_unstable_by(f64::total_cmp);
        let repeated = (0..values.len())
            .filter(|&i| (i > 0 && values[i - 1] == values[i]) || (i + 1 < values.len() && values[i + 1] == values[i]))
            .count();
        4 * repeated > values.len()
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::Point;
    use crate::partition::delaunay::{check_triangulation, delaunay, testing::positions};
    use crate::partition::testing::lcg_cloud;

    fn vertices(points: &[Point]) -> Vec<Vertex> {
        positions(points).into_iter().enumerate().map(|(row, position)| Vertex { position, row }).collect()
    }

    #[test]
    fn points_on_few_lines_take_the_randomised_insertion() {
        // Three columns and two rows of points: the sweep's worst case. Checked by Euler's
        // counts and the exact empty-circumcircle test.
        let mut random = SplitMix64::new(3);
        let columns: Vec<Point> = (0..6000).map(|i| [(i % 3) as f64, random.next_f64()]).collect();
        let rows: Vec<Point> = (0..6000).map(|i| [random.next_f64() * 100.0, (i % 2) as f64]).collect();
        for pts in [columns, rows] {
            assert!(lies_on_lines(&vertices(&pts)));
            let t = delaunay(&pts).unwrap();
            check_triangulation(&pts, &t).unwrap();
        }
        assert!(!lies_on_lines(&vertices(&lcg_cloud(5000, 4, [0.0, 0.0], 1.0))));
    }

    #[test]
    fn hilbert_curve_visits_the_corner_square_cell_by_cell() {
        // Property of the Hilbert curve (Hilbert 1891): its first 4^k cells fill a
        // 2^k × 2^k corner square, and consecutive cells share a side.
        let side = 64u32;
        let mut by_index = vec![None; (side * side) as usize];
        for x in 0..side {
            for y in 0..side {
                let i = hilbert_index(x, y) as usize;
                assert!(i < by_index.len() && by_index[i].is_none(), "cell ({x}, {y}) -> {i}");
                by_index[i] = Some((x as i64, y as i64));
            }
        }
        for pair in by_index.windows(2) {
            let ((x0, y0), (x1, y1)) = (pair[0].unwrap(), pair[1].unwrap());
            assert_eq!((x0 - x1).abs() + (y0 - y1).abs(), 1);
        }
    }
}
