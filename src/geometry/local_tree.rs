//! Points in an R*-tree (Beckmann et al. 1990, on `rstar`) held in a [`WorkingFrame`]'s local
//! coordinates, for radius and nearest queries at any coordinate scale.
//!
//! Why: the tree compares squared distances. In the caller's units those overflow near
//! 1e±154 and, worse, round among subnormals below it: a pair √1.2 units apart at 2^-537,
//! inside a radius of √1.3 units, squared to two least subnormals against one for the
//! radius and was missed. In the frame every coordinate lies within a unit of the origin.
//! Queries return supersets; callers decide on the caller's coordinates (by `distance`,
//! which is `hypot`), so answers do not depend on the frame.

use rstar::primitives::GeomWithData;
use rstar::RTree;

use super::{Point, WorkingFrame};

/// Absolute slack of a query in the frame: a few roundings of the shift and the scale. It
/// also keeps the squared reach a normal number, so pairs whose squared local distance
/// underflows are still returned.
const LOCAL_SLACK: f64 = 4.0 * f64::EPSILON;

/// Relative slack of a query's radius once scaled into the frame.
const RADIUS_SLACK: f64 = 1e-12;

/// The points of one set, by row, in `frame`'s local coordinates.
#[derive(Debug, Clone)]
pub struct LocalTree {
    tree: RTree<GeomWithData<Point, usize>>,
    frame: WorkingFrame,
}

impl LocalTree {
    /// Index `points` (rows `0..n`) in `frame`, which should hold them.
    pub fn new(points: &[Point], frame: WorkingFrame) -> LocalTree {
        let local = points.iter().enumerate().map(|(i, &p)| GeomWithData::new(frame.to_local(p), i)).collect();
        LocalTree { tree: RTree::bulk_load(local), frame }
    }

    /// The rows whose points may lie within `radius` (caller's units) of `centre`: every
    /// row whose [`super::distance`] to it is within `radius`, and perhaps a few beyond.
    pub fn within(&self, centre: Point, radius: f64) -> impl Iterator<Item = usize> + '_ {
        let reach = radius * self.frame.factor * (1.0 + RADIUS_SLACK) + LOCAL_SLACK;
        self.tree.locate_within_distance(self.frame.to_local(centre), reach * reach).map(|q| q.data)
    }

    /// A row nearest `centre` in the frame (the caller's nearest may differ by rounding:
    /// ask [`LocalTree::within`] that distance for the ties); `None` for an empty tree.
    pub fn nearest(&self, centre: Point) -> Option<usize> {
        self.tree.nearest_neighbor(self.frame.to_local(centre)).map(|q| q.data)
    }

    /// The tree itself, to be freed where its many nodes cost least.
    pub fn into_tree(self) -> RTree<GeomWithData<Point, usize>> {
        self.tree
    }
}
