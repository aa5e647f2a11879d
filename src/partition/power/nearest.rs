//! The site of least power distance for many query points.
//!
//! Power distance `|x - s|² - w` is a Euclidean distance in one more dimension: with
//! `M = max w`, site `s` of power `w` lifted to `(s, √(M - w))` lies at squared Euclidean
//! distance `|x - s|² + M - w` from the query `(x, 0)`, the power distance plus the constant
//! `M` (Aurenhammer 1987, "Power diagrams: properties, algorithms and applications"). An
//! R*-tree on the lifted sites hands out candidates in increasing lifted distance; the
//! candidates' power distances are then compared as evaluated directly, so the square root's
//! rounding only orders the search, never decides the answer.

use rayon::prelude::*;
use rstar::primitives::GeomWithData;
use rstar::RTree;

use super::validate_powers;
use crate::error::Result;
use crate::geometry::{distance_squared, validate_points, Point};

type Lifted = GeomWithData<[f64; 3], u32>;

/// For every query point, the row of the site of least power distance `|x - s|² - w`
/// (ties go to the lowest site row).
///
/// Other kernels call this for power-weighted assignment; it agrees with the cells of
/// [`super::power_cells`]: a point inside site `i`'s cell gets `i`.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] without sites;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate (sites or points);
/// - [`crate::Error::LengthMismatch`] when `powers` does not have one entry per site;
/// - [`crate::Error::NonFiniteValue`] for a NaN or infinite power;
/// - [`crate::Error::Degenerate`] with more than `u32::MAX` sites.
///
/// # Runtime
/// O(k log k) to build the tree, then about O(log k) per point, the points in parallel.
pub fn power_nearest(sites: &[Point], powers: &[f64], points: &[Point]) -> Result<Vec<u32>> {
    validate_points("sites", sites, 1)?;
    validate_powers(powers, sites.len())?;
    validate_points("points", points, 0)?;
    if u32::try_from(sites.len()).is_err() {
        return Err(crate::error::Error::Degenerate {
            argument: "sites",
            reason: format!("{} sites; at most {} are supported", sites.len(), u32::MAX),
        });
    }
    let top = powers.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let lifted: Vec<Lifted> = sites
        .iter()
        .zip(powers)
        .enumerate()
        .map(|(i, (s, &w))| GeomWithData::new([s[0], s[1], (top - w).sqrt()], i as u32))
        .collect();
    let tree = RTree::bulk_load(lifted);
    Ok(points.par_iter().map(|&x| least_power(&tree, sites, powers, top, x)).collect())
}

/// The site of least power distance from `x`, by the lifted tree's nearest-first walk.
fn least_power(tree: &RTree<Lifted>, sites: &[Point], powers: &[f64], top: f64, x: Point) -> u32 {
    let mut best = (f64::INFINITY, u32::MAX);
    for (candidate, lifted_d2) in tree.nearest_neighbor_iter_with_distance_2([x[0], x[1], 0.0]) {
        let i = candidate.data;
        // Lifted distances carry the rounding of the square root and of the sums: a
        // candidate can only beat `best` while its lifted distance, less `top`, is within a
        // few units in the last place of `best`.
        let slack = 16.0 * f64::EPSILON * (lifted_d2.abs() + top.abs() + best.0.abs());
        if lifted_d2 - top > best.0 + slack {
            break;
        }
        let power = distance_squared(x, sites[i as usize]) - powers[i as usize];
        if power < best.0 || (power == best.0 && i < best.1) {
            best = (power, i);
        }
    }
    best.1
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::partition::testing::lcg_cloud;

    /// Independent reference: every site tried, lowest row on ties.
    fn brute(sites: &[Point], powers: &[f64], x: Point) -> u32 {
        let mut best = (f64::INFINITY, 0u32);
        for (i, (&s, &w)) in sites.iter().zip(powers).enumerate() {
            let p = distance_squared(x, s) - w;
            if p < best.0 {
                best = (p, i as u32);
            }
        }
        best.1
    }

    #[test]
    fn agrees_with_trying_every_site() {
        let sites = lcg_cloud(300, 3, [0.0, 0.0], 10.0);
        let powers: Vec<f64> = lcg_cloud(300, 4, [0.0, 0.0], 4.0).iter().map(|p| p[0] - 1.0).collect();
        let points = lcg_cloud(2000, 5, [-1.0, -1.0], 12.0);
        let got = power_nearest(&sites, &powers, &points).unwrap();
        for (k, &x) in points.iter().enumerate() {
            assert_eq!(got[k], brute(&sites, &powers, x), "point {k}");
        }
    }

    #[test]
    fn ties_go_to_the_lowest_row_and_huge_powers_are_compared_directly() {
        // Two sites equidistant from the query with equal powers: the lower row wins.
        let sites = [[1.0, 0.0], [-1.0, 0.0], [0.0, 5.0]];
        assert_eq!(power_nearest(&sites, &[0.0, 0.0, 0.0], &[[0.0, 0.0]]).unwrap(), vec![0]);
        assert_eq!(power_nearest(&[[-1.0, 0.0], [1.0, 0.0]], &[0.0, 0.0], &[[0.0, 0.0]]).unwrap(), vec![0]);
        // A power of 1e12 beside powers near zero: the square root's rounding must not decide.
        let powers = [1e12, 1e12 - 3.0, 0.0];
        assert_eq!(power_nearest(&sites, &powers, &[[0.0, 0.0]]).unwrap(), vec![0]);
        assert_eq!(power_nearest(&sites, &powers, &[[-0.8, 0.0]]).unwrap(), vec![brute(&sites, &powers, [-0.8, 0.0])]);
    }

    #[test]
    fn refuses_bad_powers() {
        let e = power_nearest(&[[0.0, 0.0], [1.0, 0.0]], &[0.0, f64::NAN], &[[0.0, 0.0]]).unwrap_err();
        assert_eq!(e.to_string(), "powers must be finite; powers[1] = NaN");
        assert!(power_nearest(&[[0.0, 0.0]], &[0.0, 1.0], &[]).is_err());
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]
        #[test]
        fn matches_brute_force_on_small_integer_input(
            raw in proptest::collection::vec((-6i32..6, -6i32..6, -20i32..20), 1..40),
            queries in proptest::collection::vec((-8i32..8, -8i32..8), 1..30),
        ) {
            // Integer coordinates and powers: every power distance is exact, ties are real.
            let sites: Vec<Point> = raw.iter().map(|&(x, y, _)| [x as f64, y as f64]).collect();
            let powers: Vec<f64> = raw.iter().map(|&(_, _, w)| w as f64).collect();
            let points: Vec<Point> = queries.iter().map(|&(x, y)| [x as f64 * 0.5, y as f64 * 0.5]).collect();
            let got = power_nearest(&sites, &powers, &points).unwrap();
            for (k, &x) in points.iter().enumerate() {
                proptest::prop_assert_eq!(got[k], brute(&sites, &powers, x));
            }
        }
    }
}
