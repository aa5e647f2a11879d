//! Capacitated allocation: demand to given sites at least total distance within capacities.
//!
//! - Split demand (`split = true`): the transportation problem, solved exactly by
//!   [`super::transport`]. The optimal capacity prices `y_j` certify it: every point is served
//!   only by sites minimising `distance + y_j`, and `y_j = 0` wherever a site has slack.
//! - Single source (`split = false`): a heuristic (the problem is NP-hard), the best of the
//!   split plan rounded and two packing starts, each improved by shifts and swaps (see
//!   [`super::single_source`]). The split plan's cost is a lower bound on any single-source
//!   plan (it is the linear-programming relaxation), so the reported `relative_gap` is
//!   proven; on small instances an exhaustive search that finishes proves the plan optimal
//!   (then `lower_bound` is its cost).
//! - Shortfall: when the capacities cannot hold the demand, the caller either gets
//!   [`Error::Shortfall`](crate::error::Error::Shortfall) or, with `allow_unserved`, a
//!   virtual site of capacity equal to the shortfall and the same cost `C` from every point takes it. As every plan sends exactly
//!   the shortfall there, `C` does not change the optimum: the plan serves the most demand
//!   possible at least cost, and what it leaves unserved is reported per point.

use super::single_source::single_source;
use super::transport::{site_loads, transport_watched, Flows, Plan};
use super::{plain_distance, relative_gap, shortfall, validate};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::error::Result;
use crate::geometry::{distance, BoundingBox, CompensatedSum, Point, Weights};

/// Options of [`capacity_allocation`].
#[derive(Debug, Clone)]
pub struct AllocationOptions {
    /// May a point's demand be split between sites (exact transportation plan)? When false,
    /// each point is served whole by one site (heuristic with a proven gap).
    pub split: bool,
    /// Leave demand unserved when total capacity is short instead of refusing.
    pub allow_unserved: bool,
    /// Deadline and cancel flag. No plan meeting the capacities exists before the exact
    /// solve ends, so a run stopped early fails (see [`super::stopped`]); progress counts
    /// two steps, the solve and the rounding to single sources.
    pub limits: RunLimits,
}

impl Default for AllocationOptions {
    fn default() -> Self {
        AllocationOptions { split: true, allow_unserved: false, limits: RunLimits::default() }
    }
}

/// A capacitated allocation. Costs are demand × distance; distances are in input units.
#[derive(Debug, Clone, PartialEq)]
pub struct CapacityAllocation {
    /// Per point, the site serving the largest share of its demand (`None`: unserved).
    pub assignment: Vec<Option<usize>>,
    /// Per point, the share (0–1) of its demand that `assignment` serves.
    pub share: Vec<f64>,
    /// Per point, the distance to `assignment` (NaN when unserved).
    pub distance: Vec<f64>,
    /// Per point, `Σ_j amount_ij · distance_ij` over every site serving it.
    pub cost: Vec<f64>,
    /// Per point, the demand left unserved.
    pub unserved: Vec<f64>,
    /// Every `(point, site, amount)` of the points served by more than one site (rows
    /// ascending by point, then site).
    pub parts: Vec<(usize, usize, f64)>,
    /// Per site, the demand it serves.
    pub load: Vec<f64>,
    /// Per site, `capacity − load`.
    pub slack: Vec<f64>,
    /// Per site, the optimal capacity price of the split plan (distance units per unit of
    /// demand; 0 where the site has slack): the dual certificate of optimality.
    pub price: Vec<f64>,
    /// `Σ cost`.
    pub total_cost: f64,
    /// `Σ weights`.
    pub total_demand: f64,
    /// `Σ unserved`.
    pub total_unserved: f64,
    /// A proven lower bound on `total_cost`: the cost of the optimal split plan, or, for a
    /// single-source plan the exhaustive search proved optimal (small instances), that
    /// plan's own cost.
    pub lower_bound: f64,
    /// `(total_cost − lower_bound) / total_cost`: 0 for the split plan; NaN when a
    /// single-source plan leaves more demand unserved than the split plan (costs of
    /// different served amounts are not comparable).
    pub relative_gap: f64,
    /// Whether demand was allowed to split.
    pub split: bool,
    /// Augmenting paths the transportation solver used.
    pub augmentations: usize,
}

/// Solve the split transportation plan over `sites` with `capacities`; with a shortfall a
/// virtual last site of that capacity takes the unserved demand at one cost from every point.
pub(crate) fn split_plan(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    short: f64,
    cost: impl Fn(Point, Point) -> f64 + Sync,
    clock: &Clock,
) -> Result<Plan> {
    let demand: Vec<f64> = (0..points.len()).map(|i| weights.get(i)).collect();
    let mut capacity = capacities.to_vec();
    let m = sites.len();
    // The virtual site's cost: at least every real cost, so no point starts there.
    let mut span = points.to_vec();
    span.extend_from_slice(sites);
    let bbox = BoundingBox::of(&span).expect("points are not empty");
    let virtual_cost = cost(bbox.min, bbox.max);
    if short > 0.0 {
        capacity.push(short);
    }
    transport_watched(&demand, &capacity, &|i, j| if j < m { cost(points[i], sites[j]) } else { virtual_cost }, clock)
}

/// Serve weighted demand from `sites` with `capacities` at least total distance.
///
/// # Errors
/// Bad points, sites, weights or capacities (see [`super::validate`]);
/// [`Error::Shortfall`](crate::error::Error::Shortfall) when total capacity is below total
/// demand and `options.allow_unserved` is false;
/// [`Error::Degenerate`](crate::error::Error::Degenerate) naming `capacities` when
/// `split = false` finds no single-source placement for a point (no site has room for it
/// whole) and unserved demand is not allowed.
///
/// # Runtime
/// O(n·m) to start, then O(m²) per augmenting path; about the number of points that cannot
/// go to their nearest site.
pub fn capacity_allocation(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    options: &AllocationOptions,
) -> Result<CapacityAllocation> {
    Ok(allocate_with_flows(points, sites, capacities, weights, options)?.0)
}

/// [`capacity_allocation`] and the plan's flows: per point, `(site, amount)` (site `m`: the
/// virtual site of unserved demand).
pub(crate) fn allocate_with_flows(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    options: &AllocationOptions,
) -> Result<(CapacityAllocation, Flows)> {
    allocate_on_clock(points, sites, capacities, weights, options, &options.limits.clock(), None)
}

/// [`allocate_with_flows`] stopped by `clock` instead of `options.limits` (for a kernel that
/// allocates inside a run of its own, under the run's deadline). `checked` holds the total
/// demand and capacity when [`validate`] has passed the input already (`None`: check it
/// here): a kernel that moves its own sites allocates to them round after round without
/// checking again, and two of its sites may then share a location with different capacities
/// (to the transportation problem they are one site holding both), which the check refuses.
pub(crate) fn allocate_on_clock(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    options: &AllocationOptions,
    clock: &Clock,
    checked: Option<(f64, f64)>,
) -> Result<(CapacityAllocation, Flows)> {
    let (demand, capacity) = match checked {
        Some(totals) => totals,
        None => validate(points, sites, capacities, weights)?,
    };
    let short = shortfall(demand, capacity, options.allow_unserved)?;
    let mut steps = Steps::new(&clock.watch, 2);
    let plan = split_plan(points, sites, capacities, weights, short, plain_distance, clock)?;
    steps.step();
    let m = sites.len();
    let mut flows = plan.flows;
    let mut lower_bound = served_cost(points, sites, &flows, m);
    let mut proven = false;
    if !options.split {
        let prices = (short == 0.0).then(|| &plan.price[..m]);
        proven = single_source(points, sites, capacities, weights, &mut flows, prices, options.allow_unserved)?;
    }
    steps.finish();
    let mut out = describe(points, sites, capacities, weights, &flows, demand);
    out.price = plan.price[..m].to_vec();
    if proven {
        // The exhaustive search closed the gap: no single-source plan costs less.
        lower_bound = out.total_cost;
    }
    out.lower_bound = lower_bound;
    out.split = options.split;
    out.augmentations = plan.augmentations;
    let comparable = out.total_unserved <= short + 1e-9 * demand.max(1.0);
    out.relative_gap = if comparable { relative_gap(out.total_cost, lower_bound) } else { f64::NAN };
    Ok((out, flows))
}

/// `Σ amount · distance` over the real sites (compensated).
pub(crate) fn served_cost(points: &[Point], sites: &[Point], flows: &[Vec<(u32, f64)>], m: usize) -> f64 {
    let mut sum = CompensatedSum::default();
    for (i, f) in flows.iter().enumerate() {
        for &(j, x) in f {
            if (j as usize) < m {
                sum.add(x * distance(points[i], sites[j as usize]));
            }
        }
    }
    sum.total()
}

/// The per-point and per-site tables of a plan (sites `0..m` real, `m` virtual).
fn describe(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    flows: &[Vec<(u32, f64)>],
    demand: f64,
) -> CapacityAllocation {
    let (n, m) = (points.len(), sites.len());
    let mut out = CapacityAllocation {
        assignment: vec![None; n],
        share: vec![0.0; n],
        distance: vec![f64::NAN; n],
        cost: vec![0.0; n],
        unserved: vec![0.0; n],
        parts: Vec::new(),
        load: vec![0.0; m],
        slack: vec![0.0; m],
        price: vec![0.0; m],
        total_cost: 0.0,
        total_demand: demand,
        total_unserved: 0.0,
        lower_bound: 0.0,
        relative_gap: 0.0,
        split: true,
        augmentations: 0,
    };
    let mut total = CompensatedSum::default();
    let mut unserved = CompensatedSum::default();
    for i in 0..n {
        let w = weights.get(i);
        let mut f = flows[i].clone();
        f.sort_by_key(|e| e.0);
        let mut best: Option<(usize, f64)> = None;
        let mut cost = CompensatedSum::default();
        for &(j, x) in &f {
            let j = j as usize;
            if j >= m {
                out.unserved[i] += x;
                continue;
            }
            cost.add(x * distance(points[i], sites[j]));
            if best.is_none_or(|(_, bx)| x > bx) {
                best = Some((j, x));
            }
        }
        if f.len() > 1 {
            out.parts.extend(f.iter().map(|&(j, x)| (i, j as usize, x)));
        }
        if w == 0.0 {
            // No demand to serve: report the nearest site, share 0.
            let j = (0..m).min_by(|&a, &b| distance(points[i], sites[a]).total_cmp(&distance(points[i], sites[b])));
            best = j.map(|j| (j, 0.0));
        }
        if let Some((j, x)) = best {
            out.assignment[i] = Some(j);
            out.share[i] = if w > 0.0 { x / w } else { 0.0 };
            out.distance[i] = distance(points[i], sites[j]);
        }
        out.cost[i] = cost.total();
        total.add(out.cost[i]);
        unserved.add(out.unserved[i]);
    }
    // The loads the solve settled within the capacities, summed as it summed them.
    let loads = site_loads(flows, m + 1);
    for j in 0..m {
        out.load[j] = loads[j];
        out.slack[j] = capacities[j] - out.load[j];
    }
    out.total_cost = total.total();
    out.total_unserved = unserved.total();
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::capacity::transport::SITE_ROUNDING;
    use crate::error::Error;
    use crate::partition::testing::lcg_cloud;

    #[test]
    fn ample_capacity_gives_nearest_site() {
        let points = lcg_cloud(500, 3, [0.0, 0.0], 10.0);
        let sites = lcg_cloud(7, 4, [0.0, 0.0], 10.0);
        let a = capacity_allocation(&points, &sites, &[1e6; 7], Weights::Unit, &AllocationOptions::default()).unwrap();
        for (i, p) in points.iter().enumerate() {
            let near = (0..7).map(|j| distance(*p, sites[j])).fold(f64::INFINITY, f64::min);
            assert_eq!(a.distance[i], near);
        }
        assert!(a.price.iter().all(|&y| y == 0.0));
    }

    #[test]
    fn a_stopped_solve_fails_naming_the_time_limit_and_counts_its_steps() {
        // Tight capacities: most points cannot stay at their nearest site, so the solve
        // needs augmenting paths, and it polls its clock before the first one.
        let points = lcg_cloud(2000, 5, [0.0, 0.0], 10.0);
        let sites = lcg_cloud(12, 6, [0.0, 0.0], 10.0);
        let caps = [2000.0 / 12.0; 12];
        let cancelled = crate::cancel::Watch::new();
        cancelled.cancel();
        for limits in [RunLimits { time_limit: Some(0.0), ..Default::default() }, RunLimits::new(None, cancelled)] {
            let options = AllocationOptions { limits: limits.clone(), ..Default::default() };
            let e = capacity_allocation(&points, &sites, &caps, Weights::Unit, &options).unwrap_err();
            assert!(matches!(e, Error::InvalidParameter { name: "time_limit", .. }), "{e}");
        }
        let watch = crate::cancel::Watch::new();
        let options = AllocationOptions { limits: RunLimits::new(None, watch.clone()), ..Default::default() };
        let a = capacity_allocation(&points, &sites, &caps, Weights::Unit, &options).unwrap();
        assert!(a.augmentations > 0);
        assert_eq!(watch.progress(), (2, 2));
    }

    #[test]
    fn loads_respect_capacities_and_prices_certify_optimality() {
        let points = lcg_cloud(2000, 5, [0.0, 0.0], 10.0);
        let sites = lcg_cloud(12, 6, [0.0, 0.0], 10.0);
        let caps: Vec<f64> = (0..12).map(|j| 100.0 + 20.0 * j as f64).collect();
        let a = capacity_allocation(&points, &sites, &caps, Weights::Unit, &AllocationOptions::default()).unwrap();
        for ((l, c), (s, y)) in a.load.iter().zip(&caps).zip(a.slack.iter().zip(&a.price)) {
            assert!(*l <= c + 1e-9);
            if *s > 1e-9 {
                assert_eq!(*y, 0.0);
            }
        }
        // Complementary slackness: each point's sites minimise distance + price.
        for (i, p) in points.iter().enumerate() {
            let best = (0..12).map(|j| distance(*p, sites[j]) + a.price[j]).fold(f64::INFINITY, f64::min);
            let j = a.assignment[i].unwrap();
            assert!(distance(*p, sites[j]) + a.price[j] <= best + 1e-9);
        }
        let single = capacity_allocation(
            &points,
            &sites,
            &caps,
            Weights::Unit,
            &AllocationOptions { split: false, allow_unserved: false, ..Default::default() },
        )
        .unwrap();
        assert!(single.total_cost >= a.total_cost - 1e-9);
        assert!(single.share.iter().all(|&s| s == 1.0));
        assert!(single.relative_gap >= 0.0 && single.relative_gap < 0.05);
    }

    #[test]
    fn shortfall_is_refused_or_reported() {
        let points = lcg_cloud(50, 8, [0.0, 0.0], 1.0);
        let sites = [[0.0, 0.0], [1.0, 1.0]];
        let e = capacity_allocation(&points, &sites, &[10.0, 15.0], Weights::Unit, &AllocationOptions::default())
            .unwrap_err();
        assert_eq!(e, Error::Shortfall { demand: 50.0, capacity: 25.0, may_leave_unserved: true });
        assert!(e.to_string().contains("25 short"));
        let a = capacity_allocation(
            &points,
            &sites,
            &[10.0, 15.0],
            Weights::Unit,
            &AllocationOptions { split: true, allow_unserved: true, ..Default::default() },
        )
        .unwrap();
        assert!((a.total_unserved - 25.0).abs() < 1e-9);
        assert!((a.load[0] - 10.0).abs() < 1e-9 && (a.load[1] - 15.0).abs() < 1e-9);
    }

    #[test]
    fn bad_capacities_name_argument_and_row() {
        let points = [[0.0, 0.0]];
        let sites = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0]];
        let run = |c: &[f64]| {
            capacity_allocation(&points, &sites, c, Weights::Unit, &AllocationOptions::default())
                .unwrap_err()
                .to_string()
        };
        assert_eq!(run(&[1.0, -1.0, 1.0]), "capacities must be finite and >= 0; capacities[1] = -1");
        assert!(run(&[1.0, f64::NAN, 1.0]).starts_with("capacities must be finite"));
        assert!(run(&[1.0, 1.0]).contains("one entry per site (3); got 2"));
        assert!(run(&[1.0, 1.0, 2.0]).contains("sites[2] repeats the location of sites[0]"));
        let e = capacity_allocation(&points, &sites, &[1.0, 1.0, 2.0], Weights::Unit, &AllocationOptions::default());
        assert_eq!(
            e.unwrap_err(),
            Error::TwoCapacities { argument: "sites", row: 2, first: 0, capacities: (1.0, 2.0) }
        );
    }

    /// Every point's amounts, summed.
    fn served(a: &CapacityAllocation, w: &[f64]) -> f64 {
        w.iter().zip(&a.unserved).map(|(w, u)| w - u).sum()
    }

    #[test]
    fn a_site_of_capacity_zero_neither_stalls_the_solve_nor_keeps_a_residue() {
        // A float instance on which the solve once moved the excess a few ulps per path
        // forever: a residue at the site of capacity 0 bounded a detour through it that
        // refilled the residue. Under a time limit, a stall fails instead of blocking.
        let points = [
            [9.956638831635857, 1.0040240554275015],
            [5.823277999342019, 6.191817653351129],
            [7.257109157361324, 0.4526105481567022],
            [2.5977236118159794, 8.632425527291202],
            [5.386807388548711, 5.035137183098404],
            [1.092375321749196, 7.626396124696746],
            [3.9217465753290437, 3.34625231162358],
        ];
        let sites = [
            [3.7504131669466343, 6.522472578915303],
            [5.517217158171494, 7.856199003543808],
            [2.149301640492993, 4.341264156610876],
        ];
        let caps = [0.0, 1.1504083180083717, 3.6243803772603935];
        let w = [0.0, 2.0, 0.0, 3.0, 1.0, 1.0, 3.0];
        let limits = RunLimits { time_limit: Some(30.0), ..Default::default() };
        for split in [true, false] {
            let options = AllocationOptions { split, allow_unserved: true, limits: limits.clone() };
            let a = capacity_allocation(&points, &sites, &caps, Weights::Given(&w), &options).unwrap();
            assert_eq!(a.load[0], 0.0);
            assert!(a.load.iter().zip(&caps).all(|(l, c)| l <= c), "{:?}", a.load);
            // The split plan uses every unit of capacity (the demand of 10 exceeds it).
            let capacity: f64 = caps.iter().sum();
            assert!(served(&a, &w) <= capacity + 1e-12 * 10.0);
            assert!(!split || (served(&a, &w) - capacity).abs() <= 1e-12 * 10.0);
        }
        // The same without the points of weight 0 once left 4.4e-16 at the site of capacity 0.
        let keep = [1, 3, 4, 5, 6];
        let (p2, w2): (Vec<Point>, Vec<f64>) = keep.iter().map(|&i| (points[i], w[i])).unzip();
        let options = AllocationOptions { allow_unserved: true, limits, ..Default::default() };
        let a = capacity_allocation(&p2, &sites, &caps, Weights::Given(&w2), &options).unwrap();
        assert_eq!(a.load[0], 0.0);
        assert!(a.load.iter().zip(&caps).all(|(l, c)| l <= c), "{:?}", a.load);
    }

    #[test]
    fn capacities_met_to_the_ulp_leave_no_load_past_them() {
        // 0.1 + 0.2 + 0.3 meets 0.6 + 0 only to rounding (binary 0.1, 0.2, 0.3 sum above
        // binary 0.6): the site of capacity 0 once kept 5.55e-17.
        let points = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
        let sites = [[0.0, 0.0], [2.0, 0.0]];
        let w = [0.1, 0.2, 0.3];
        let a = capacity_allocation(&points, &sites, &[0.6, 0.0], Weights::Given(&w), &AllocationOptions::default())
            .unwrap();
        assert_eq!(a.load, vec![0.6, 0.0]);
        // 0.1 + 0.2 passes 0.3 by one ulp and neither point uses another site: the residue
        // stays, within 4 ulps of the demand, and no part is made of it.
        let a = capacity_allocation(&points, &sites, &[0.3, 0.4], Weights::Given(&w), &AllocationOptions::default())
            .unwrap();
        assert!(a.load[0] <= 0.3 + SITE_ROUNDING * 0.6 && a.load[1] <= 0.4, "{:?}", a.load);
        assert!(a.parts.is_empty());
    }
}
