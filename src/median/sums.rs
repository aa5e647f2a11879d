//! The sums one pass of a Fermat–Weber iteration gathers over the points at a trial
//! location `x`, shared by the planar iteration (Weiszfeld 1937, with Newton steps) and the
//! geodesic one (the same sums in the tangent plane at `x`).

use crate::geometry::{norm, CompensatedSum, Point};

/// What every Fermat–Weber pass yields at `x`: cost, the smooth part's gradient and
/// Hessian, the Weiszfeld weight sum, the weight at `x` and the nearest and farthest point.
#[derive(Debug, Clone, Copy)]
pub(crate) struct WeberSums {
    pub cost: CompensatedSum,
    /// Gradient of the part that is smooth at x: Σ_{aᵢ≠x} wᵢ uᵢ (uᵢ the unit vector from
    /// aᵢ towards x).
    pub grad: [CompensatedSum; 2],
    /// Weiszfeld sum Σ wᵢ/dᵢ over aᵢ ≠ x.
    pub inv: f64,
    /// Hessian of the smooth part, as (xx, xy, yy).
    pub hess: [f64; 3],
    /// Total weight of the points that coincide with x.
    pub eta: f64,
    /// Largest distance to a positive-weight point.
    pub max_dist: f64,
    /// Nearest positive-weight point not at x, and its distance.
    pub nearest: usize,
    pub nearest_dist: f64,
}

impl WeberSums {
    pub fn empty() -> WeberSums {
        WeberSums {
            cost: CompensatedSum::default(),
            grad: [CompensatedSum::default(); 2],
            inv: 0.0,
            hess: [0.0; 3],
            eta: 0.0,
            max_dist: 0.0,
            nearest: usize::MAX,
            nearest_dist: f64::INFINITY,
        }
    }

    /// Add the sums of a later chunk of the points. Returns whether `other`'s nearest point
    /// is strictly nearer and was taken (on ties the earlier chunk, the smaller index, wins).
    pub fn merge(&mut self, other: &WeberSums) -> bool {
        self.cost.merge(other.cost);
        self.grad[0].merge(other.grad[0]);
        self.grad[1].merge(other.grad[1]);
        self.inv += other.inv;
        for k in 0..3 {
            self.hess[k] += other.hess[k];
        }
        self.eta += other.eta;
        self.max_dist = self.max_dist.max(other.max_dist);
        let nearer = other.nearest_dist < self.nearest_dist;
        if nearer {
            self.nearest = other.nearest;
            self.nearest_dist = other.nearest_dist;
        }
        nearer
    }

    /// Add a point `index` of weight `w` at distance `d > 0` from `x`, where `away` is the
    /// unit vector from the point towards `x`, `inv` its Weiszfeld weight `w/d` (as the
    /// caller rounds it) and `curvature` the weight of its Hessian term `(I − uuᵀ)`.
    /// Returns whether it is the nearest point so far (strictly: the smaller index wins ties).
    #[inline]
    pub fn add_point(&mut self, index: usize, w: f64, d: f64, away: Point, inv: f64, curvature: f64) -> bool {
        self.cost.add(w * d);
        self.grad[0].add(w * away[0]);
        self.grad[1].add(w * away[1]);
        self.inv += inv;
        self.hess[0] += curvature * (1.0 - away[0] * away[0]);
        self.hess[1] -= curvature * away[0] * away[1];
        self.hess[2] += curvature * (1.0 - away[1] * away[1]);
        self.max_dist = self.max_dist.max(d);
        let nearer = d < self.nearest_dist;
        if nearer {
            self.nearest = index;
            self.nearest_dist = d;
        }
        nearer
    }

    pub fn cost(&self) -> f64 {
        self.cost.total()
    }

    pub fn gradient(&self) -> Point {
        [self.grad[0].total(), self.grad[1].total()]
    }

    /// Norm of the minimal-norm subgradient: at a data point the subdifferential is the
    /// smooth gradient plus a ball of radius η.
    pub fn subgradient_norm(&self) -> f64 {
        (norm(self.gradient()) - self.eta).max(0.0)
    }
}

#[cfg(test)]
mod tests {
    use super::WeberSums;

    /// Worked by hand at x = (0, 0): a point of weight 2 at (3, 4) (d = 5, u = (−0.6, −0.8)
    /// from it towards x) and one of weight 1 at (−1, 0) (d = 1, u = (1, 0)), gathered in
    /// two chunks: cost 2·5 + 1 = 11, gradient 2u₁ + u₂ = (−0.2, −1.6), Weiszfeld sum
    /// 2/5 + 1 = 1.4, Hessian Σ w/d (I − uuᵀ) = 0.4·(0.64, −0.48, 0.36) + (0, 0, 1) =
    /// (0.256, −0.192, 1.144), farthest 5, nearest the second point at 1; the subgradient
    /// norm with nothing at x is |(−0.2, −1.6)| = √2.6.
    #[test]
    fn sums_of_two_chunks_match_the_hand_computed_pass() {
        let mut first = WeberSums::empty();
        assert!(first.add_point(0, 2.0, 5.0, [-0.6, -0.8], 2.0 / 5.0, 2.0 / 5.0));
        let mut second = WeberSums::empty();
        assert!(second.add_point(1, 1.0, 1.0, [1.0, 0.0], 1.0, 1.0));
        assert!(first.merge(&second));
        let close = |a: f64, b: f64| (a - b).abs() < 1e-12;
        assert!(close(first.cost(), 11.0));
        let g = first.gradient();
        assert!(close(g[0], -0.2) && close(g[1], -1.6));
        assert!(close(first.inv, 1.4));
        assert!(close(first.hess[0], 0.256) && close(first.hess[1], -0.192) && close(first.hess[2], 1.144));
        assert_eq!((first.max_dist, first.nearest, first.nearest_dist), (5.0, 1, 1.0));
        assert!(close(first.subgradient_norm(), 2.6f64.sqrt()));
        // Weight at x (η) larger than the gradient's norm: x is optimal, the norm is 0.
        first.eta = 2.0;
        assert_eq!(first.subgradient_norm(), 0.0);
    }
}
