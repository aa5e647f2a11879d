//! Capacity-constrained catchments: the powers `w` for which every site's power cell
//! (`|x − s_j|² − w_j` least) holds exactly its capacity of demand.
//!
//! By the duality of Aurenhammer, Hoffmann & Aronov (1998), these powers maximise the
//! concave dual of the transportation problem with cost `|x − s|²`,
//! `g(w) = Σ_i μ_i min_j (|x_i − s_j|² − w_j) + Σ_j ν_j w_j`, and the cells of the optimal
//! powers carry an optimal plan. For point demand `g` is piecewise linear, so the powers are
//! found in two stages:
//!
//! 1. approximate powers from damped Newton steps on the entropically smoothed dual, its
//!    smoothing lowered level by level (`smooth`; Kitagawa, Mérigot & Thibert 2019 for the
//!    damped Newton method on the semi-discrete dual, Cuturi 2013 for the smoothing);
//! 2. an exact finish: points farther than a margin from every cell boundary keep their
//!    cell; the rest (and the capacity left by the kept ones) form a small transportation
//!    problem solved exactly by successive shortest paths seeded with the approximate
//!    powers (`super::transport`). Each of its points may use only its listed sites (a
//!    sparse transportation problem: the shortest paths run over the graph of sites listed
//!    together, not all site pairs). Its optimal prices are the final powers; every kept
//!    point is then checked to lie in its site's final cell, and every open point to be
//!    served only by sites of least power distance among all sites; a kept point that
//!    fails joins the exact problem, an open one that fails may use every site, and the
//!    problem is solved again from the last prices. When the check passes, every point is
//!    served only by sites of least power distance and every capacity is met: the plan and
//!    the powers satisfy complementary slackness, so both are optimal.
//!
//! The cells as polygons are those of the final powers, built by the power-diagram family
//! ([`crate::partition::power_cells`]) over the locations with capacity and clipped to the
//! region there.
//!
//! Capacity above the demand: sites may be under-full. The dual then has the constraint
//! `w_j ≤ 0` with `w_j = 0` wherever a site has slack; equivalently a virtual point of the
//! surplus, at cost 0 from every site, goes to the sites of largest power. Powers are
//! normalised so that the largest is 0 (balanced totals fix them only up to a constant).

mod assign;
mod smooth;

use assign::{power_nearest_with_gap, Candidates};
use smooth::Smoothed;

use super::transport::{solve_from_watched, Reach};
use super::validate;
use crate::cancel::{Clock, RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::{
    distance_squared, location_key, power_of_two_factor, BoundingBox, CompensatedSum, FeasibleRegion, Point, Weights,
};
use crate::partition::{default_rings, power_cells, Region, VoronoiCells};

/// Stage timings on stderr, in test builds with `CELLS_STAGES` set (the `timing_stages`
/// test); nothing otherwise.
macro_rules! stage {
    ($($t:tt)*) => {
        if cfg!(test) && std::env::var_os("CELLS_STAGES").is_some() {
            eprintln!($($t)*);
        }
    };
}

/// Options of [`capacity_cells`].
#[derive(Debug, Clone)]
pub struct CellsOptions {
    /// Relative tolerance on the totals: total capacity within `tol` of total demand counts
    /// as equal (capacities are scaled to the demand).
    pub tol: f64,
    /// Deadline and cancel flag, polled every Newton step and every few augmenting paths
    /// of the exact finish. The plan meets the capacities only once the finish ends, so a
    /// run stopped early fails (see [`super::stopped`]); progress counts Newton steps (at
    /// most [`NEWTON_STEPS`]) and the finish.
    pub limits: RunLimits,
}

/// Most Newton steps over both levels of the smoothed problem.
pub const NEWTON_STEPS: usize = 400;

impl Default for CellsOptions {
    fn default() -> Self {
        CellsOptions { tol: 1e-9, limits: RunLimits::default() }
    }
}

/// Capacity-constrained power cells and the optimal plan they carry. Costs are
/// demand × squared distance (input units²) unless named otherwise.
#[derive(Debug, Clone, PartialEq)]
pub struct CapacityCells {
    /// Per site, its power `w_j` (squared input units): the largest is 0 among sites with
    /// capacity, 0 at every site with slack; a site without capacity gets the largest power
    /// at which it serves nothing.
    pub power: Vec<f64>,
    /// Per point, the site serving the largest share of its demand (a point of zero weight:
    /// its least power distance site).
    pub assignment: Vec<usize>,
    /// Per point, the share (0–1) of its demand that `assignment` serves.
    pub share: Vec<f64>,
    /// Per point, `Σ_j amount_ij · |x_i − s_j|²`.
    pub cost: Vec<f64>,
    /// Every `(point, site, amount)` of the points whose demand is split between sites (on
    /// a cell boundary), ascending by point, then site.
    pub parts: Vec<(usize, usize, f64)>,
    /// Per site, the demand it serves.
    pub load: Vec<f64>,
    /// Per site, `capacity − load`.
    pub slack: Vec<f64>,
    /// `Σ cost` (demand × squared distance).
    pub total_cost: f64,
    /// `Σ amount · |x − s|` of the same plan (demand × distance).
    pub total_distance_cost: f64,
    /// `Σ weights`.
    pub total_demand: f64,
    /// Newton steps of the smoothed stage.
    pub newton_steps: usize,
    /// Points solved exactly in the finish.
    pub exact_points: usize,
    /// Augmenting paths of the exact finish.
    pub augmentations: usize,
    /// The cells of the final powers clipped to the region, one per input site (the layout
    /// of [`VoronoiCells`]). Sites at one location share one cell: the first of them with
    /// capacity holds its rings, the others have none (see `cell_site`); a site without
    /// capacity has no cell.
    pub cells: VoronoiCells,
    /// Per site, the site whose rings in `cells` are its cell: itself, the first site with
    /// capacity at its location, or `None` for a site without capacity (no cell).
    pub cell_site: Vec<Option<usize>>,
}

/// Most rounds of the exact finish before it takes every point.
const FINISH_ROUNDS: usize = 24;

/// The powers whose power cells hold each site's capacity of demand, the plan, and the
/// cells clipped to `region` (default: the bounding box of the points and sites together,
/// grown by 10 % on every side, so that it holds every point).
///
/// # Errors
/// Bad points, sites, weights or capacities (see [`super::validate`]); the region's errors
/// of [`power_cells`] and [`FeasibleRegion::new`] (rings that cross are refused);
/// [`Error::OutsideRegion`] naming the first point outside the region (on its boundary is
/// inside); [`Error::Degenerate`] naming `region` when there is none and the points and
/// sites all coincide;
/// [`Error::InvalidParameter`] naming `tol` unless `0 < tol < 1`; [`Error::Shortfall`]
/// when total capacity is below total demand by more than `tol` relative.
///
/// # Runtime
/// O(n log m) to list each point's nearest sites (twice: by plain, then by power
/// distance), O(n) per Newton step (tens of steps), then the exact finish: O(n') plus
/// O(E log m) per augmentation for the `n'` points near cell boundaries, over the `E` site
/// pairs they list together (O(m²) per augmentation in the last resort of every point
/// open, which bounds the rounds); O(m log m) for the cells (O(r) more per cell meeting an r-vertex region
/// boundary) and O(n log r) to check the points against a given region.
pub fn capacity_cells(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    region: Option<Region<'_>>,
    options: &CellsOptions,
) -> Result<CapacityCells> {
    validate(points, sites, capacities, weights)?;
    // Squared distances and areas overflow past coordinates near 1e154 and underflow below
    // 1e-154: there the problem is solved with every coordinate scaled by one power of two
    // (exact), and mapped back.
    let reach = points
        .iter()
        .chain(sites)
        .chain(region.iter().flat_map(|r| r.vertices))
        .map(|p| p[0].abs().max(p[1].abs()))
        .fold(0.0f64, f64::max);
    if reach <= 1e100 && (reach >= 1e-100 || reach == 0.0) {
        return cells_in_frame(points, sites, capacities, weights, region, options);
    }
    let factor = power_of_two_factor(reach);
    let local = |q: &[Point]| -> Vec<Point> { q.iter().map(|p| [p[0] * factor, p[1] * factor]).collect() };
    let (points_local, sites_local) = (local(points), local(sites));
    let ring = region.map(|r| local(r.vertices));
    let region_local = region.zip(ring.as_deref()).map(|(r, v)| Region { vertices: v, ring_offsets: r.ring_offsets });
    let mut out = cells_in_frame(&points_local, &sites_local, capacities, weights, region_local, options).map_err(
        |e| match e {
            Error::OutsideRegion { argument, row, .. } => Error::OutsideRegion { argument, row, point: points[row] },
            other => other,
        },
    )?;
    let (length, area) = (1.0 / factor, 1.0 / (factor * factor));
    out.power.iter_mut().for_each(|w| *w *= area);
    out.cost.iter_mut().for_each(|c| *c *= area);
    out.total_cost *= area;
    out.total_distance_cost *= length;
    out.cells.vertices.iter_mut().for_each(|v| *v = [v[0] * length, v[1] * length]);
    out.cells.area.iter_mut().for_each(|a| *a *= area);
    let finite = out.total_cost.is_finite()
        && out.power.iter().chain(&out.cells.area).all(|x| x.is_finite())
        && out.cells.vertices.iter().all(|v| v[0].is_finite() && v[1].is_finite());
    if !finite {
        return Err(Error::InvalidParameter {
            name: "points",
            reason: format!(
                "the coordinates reach {reach:e}: demand × squared distance, the powers and the cells' areas \
                 overflow float64 in these units; rescale the coordinates (e.g. kilometres instead of metres)"
            ),
        });
    }
    Ok(out)
}

/// [`capacity_cells`] on coordinates whose squares neither overflow nor underflow.
fn cells_in_frame(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
    region: Option<Region<'_>>,
    options: &CellsOptions,
) -> Result<CapacityCells> {
    let tol = options.tol;
    if !(tol > 0.0 && tol < 1.0) {
        return Err(Error::InvalidParameter { name: "tol", reason: format!("tol must be in (0, 1); got {tol}") });
    }
    let (demand_total, capacity_total) = validate(points, sites, capacities, weights)?;
    let clock = options.limits.clock();
    let mut progress = Steps::new(&clock.watch, NEWTON_STEPS as u64 + 1);
    if capacity_total < demand_total * (1.0 - tol) {
        return Err(Error::Shortfall { demand: demand_total, capacity: capacity_total, may_leave_unserved: false });
    }
    let default_box = match region {
        Some(r) => {
            inside_region(points, r)?;
            None
        }
        None => Some(grown_box(points, sites)?),
    };
    // Totals equal within tol: scale the capacities to the demand (exactly balanced).
    let factor = if capacity_total <= demand_total * (1.0 + tol) { demand_total / capacity_total } else { 1.0 };
    let surplus = if factor == 1.0 { capacity_total - demand_total } else { 0.0 };
    let groups = Locations::of(sites, capacities, factor);
    let demand: Vec<f64> = (0..points.len()).map(|i| weights.get(i)).collect();
    let t0 = std::time::Instant::now();
    let candidates = Candidates::new(points, &groups.sites, &vec![0.0; groups.sites.len()]);
    stage!("candidates {:?}", t0.elapsed());

    // Stage 1: approximate powers.
    let mut span = points.to_vec();
    span.extend_from_slice(&groups.sites);
    let diagonal = BoundingBox::of(&span).map_or(0.0, |b| b.diagonal());
    let scale = if diagonal > 0.0 { diagonal * diagonal } else { 1.0 };
    // Start at a sixteenth of the area per site (the soft minimum then spans a few
    // neighbours), end a thousand times finer (the finish then takes few points).
    let start_eps = scale / (16.0 * groups.sites.len() as f64);
    let final_eps = start_eps * 1e-3;
    let smoothed = Smoothed::new(points, &demand, &groups.sites, &groups.capacity, surplus, &candidates);
    stage!("pattern {:?}", t0.elapsed());
    // The first level gives the powers their large-scale shape; the lists are then drawn
    // again by power distance (see `assign`) for the finer levels and the finish.
    let zero = vec![0.0; groups.sites.len()];
    let (w, _, first_steps) =
        smoothed.solve(zero, (start_eps, start_eps), NEWTON_STEPS, true, false, (&clock, &mut progress));
    if clock.stop() {
        return Err(super::stopped());
    }
    drop(smoothed);
    let candidates = Candidates::new(points, &groups.sites, &w);
    let smoothed = Smoothed::new(points, &demand, &groups.sites, &groups.capacity, surplus, &candidates);
    stage!("first level {first_steps} steps, lists again {:?}", t0.elapsed());
    let next_eps = (start_eps / 4.0).max(final_eps);
    let watched = (&clock, &mut progress);
    let (mut w, eps, newton_steps) =
        smoothed.solve(w, (next_eps, final_eps), NEWTON_STEPS - first_steps, false, true, watched);
    if clock.stop() {
        return Err(super::stopped());
    }
    let newton_steps = newton_steps + first_steps;
    normalise(&mut w);
    stage!("newton {:?} steps {newton_steps} eps {eps:e}", t0.elapsed());

    // Stage 2: the exact finish. The band of open points is 64 ε wide in power: measured
    // at 3·10⁵ points, 16 ε left so few points per boundary that the exact prices moved
    // past the band (ten times the kept points turned out in the wrong cell, and a second
    // round took ten times the augmenting paths).
    let finish = exact_finish(points, &demand, &groups, &candidates, w, (64.0 * eps, 1e-12 * scale), &clock)?;
    progress.finish();
    stage!("finish {:?} exact {} aug {}", t0.elapsed(), finish.exact_points, finish.augmentations);
    // The cells of the final powers, one per location with capacity, then laid out by site.
    let boxed = default_box.as_ref().map(|ring| Region { vertices: ring, ring_offsets: &[0, 4] });
    let located = power_cells(&groups.sites, &finish.power, region.or(boxed)).map_err(|e| match e {
        // Its rows are locations, not input rows.
        Error::Degenerate { argument: "sites", .. } => Error::Degenerate {
            argument: "sites",
            reason: "two sites are too close together for the extent of the region and points: they round to one \
                     location once scaled to it"
                .into(),
        },
        other => other,
    })?;
    let cell_site: Vec<Option<usize>> = groups.of_site.iter().map(|g| g.map(|g| groups.members[g][0])).collect();
    let holder: Vec<Option<usize>> =
        (0..sites.len()).map(|j| groups.of_site[j].filter(|&g| groups.members[g][0] == j)).collect();
    let cells = located.cells.picked(&holder);
    let d =
        describe(points, sites, capacities, &demand, &groups, finish, (cells, cell_site), newton_steps, demand_total);
    stage!("describe+cells {:?}", t0.elapsed());
    Ok(d)
}

/// Refuse the first point outside `region` (exact membership; the boundary is inside).
fn inside_region(points: &[Point], region: Region<'_>) -> Result<()> {
    use rayon::prelude::*;
    let area = FeasibleRegion::new(region.vertices, region.ring_offsets)?;
    match points.par_iter().position_first(|&p| !area.contains(p)) {
        Some(row) => Err(Error::OutsideRegion { argument: "points", row, point: points[row] }),
        None => Ok(()),
    }
}

/// The default region: the points' and sites' bounding box grown by 10 % on every side.
fn grown_box(points: &[Point], sites: &[Point]) -> Result<Vec<Point>> {
    let mut span = points.to_vec();
    span.extend_from_slice(sites);
    let mut rings = default_rings(&span).map_err(|_| Error::Degenerate {
        argument: "region",
        reason: "the points and sites all coincide (their bounding box has no extent); pass a region".into(),
    })?;
    Ok(rings.swap_remove(0))
}

/// Shift powers so that the largest is 0.
fn normalise(w: &mut [f64]) {
    let top = w.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if top.is_finite() {
        w.iter_mut().for_each(|x| *x -= top);
    }
}

/// Sites merged by location: sites at one location share one cell (they tie everywhere),
/// so the solver sees each location with capacity once, with the capacities summed.
struct Locations {
    /// Locations with positive capacity.
    sites: Vec<Point>,
    /// Their capacities (scaled).
    capacity: Vec<f64>,
    /// Per location, its input sites with positive capacity (ascending).
    members: Vec<Vec<usize>>,
    /// Per input site, its location (None: no capacity there).
    of_site: Vec<Option<usize>>,
}

impl Locations {
    fn of(sites: &[Point], capacities: &[f64], factor: f64) -> Locations {
        let mut index = std::collections::HashMap::new();
        let mut out = Locations { sites: Vec::new(), capacity: Vec::new(), members: Vec::new(), of_site: Vec::new() };
        for (j, &s) in sites.iter().enumerate() {
            if capacities[j] <= 0.0 {
                out.of_site.push(None);
                continue;
            }
            let g = *index.entry(location_key(s)).or_insert_with(|| {
                out.sites.push(s);
                out.capacity.push(0.0);
                out.members.push(Vec::new());
                out.sites.len() - 1
            });
            out.capacity[g] += capacities[j] * factor;
            out.members[g].push(j);
            out.of_site.push(Some(g));
        }
        out
    }
}

/// The exact plan over locations: per point its `(location, amount)` parts, the powers.
struct Finish {
    flows: Vec<Vec<(u32, f64)>>,
    power: Vec<f64>,
    exact_points: usize,
    augmentations: usize,
}

/// Stage 2 (see the module docs). `margin`: points whose power gap is below it join the
/// exact problem; `slop`: rounding allowed in the final membership check.
#[allow(clippy::too_many_arguments)]
fn exact_finish(
    points: &[Point],
    demand: &[f64],
    groups: &Locations,
    candidates: &Candidates,
    w: Vec<f64>,
    (margin, slop): (f64, f64),
    clock: &Clock,
) -> Result<Finish> {
    let n = points.len();
    let m = groups.sites.len();
    let total: f64 = groups.capacity.iter().sum();
    let (best, gap) = power_nearest_with_gap(points, &groups.sites, &w, candidates);
    let mut forced = vec![false; n];
    // Sites an open point may use beyond its listed ones and its start site: those found
    // of least power distance after a round in which its listed sites did not hold them.
    let mut extra: std::collections::HashMap<usize, Vec<u32>> = std::collections::HashMap::new();
    let mut prices: Vec<f64> = w.iter().map(|&x| -x).collect();
    for round in 0..=FINISH_ROUNDS {
        let everything = round == FINISH_ROUNDS;
        let open: Vec<usize> =
            (0..n).filter(|&i| demand[i] > 0.0 && (everything || forced[i] || gap[i] < margin)).collect();
        let mut is_open = vec![false; n];
        open.iter().for_each(|&i| is_open[i] = true);
        let mut kept = vec![CompensatedSum::default(); m];
        for i in 0..n {
            if demand[i] > 0.0 && !is_open[i] {
                kept[best[i] as usize].add(demand[i]);
            }
        }
        let residual: Vec<f64> = (0..m).map(|j| groups.capacity[j] - kept[j].total()).collect();
        if residual.iter().any(|&r| r < -1e-12 * total) {
            // The kept points overfill a cell: open its kept points nearest a boundary (least
            // gap first, then by row) until the rest fit. Only that cell's points open, so
            // one badly placed boundary does not widen the band everywhere.
            let mut members: Vec<Vec<usize>> = vec![Vec::new(); m];
            for i in 0..n {
                if demand[i] > 0.0 && !is_open[i] && residual[best[i] as usize] < 0.0 {
                    members[best[i] as usize].push(i);
                }
            }
            for (j, mut list) in members.into_iter().enumerate() {
                list.sort_by(|&a, &b| gap[a].total_cmp(&gap[b]).then(a.cmp(&b)));
                let mut over = -residual[j];
                for i in list {
                    if over <= 0.0 {
                        break;
                    }
                    forced[i] = true;
                    over -= demand[i];
                }
            }
            stage!("round {round} overfilled {}", residual.iter().filter(|&&r| r < 0.0).count());
            continue;
        }
        let residual: Vec<f64> = residual.into_iter().map(|r| r.max(0.0)).collect();
        // Capacity above the demand needs no virtual point here: the transportation problem
        // allows sites below capacity, and prices them at 0 (the largest power).
        let sub_demand: Vec<f64> = open.iter().map(|&i| demand[i]).collect();
        let cost = |i: usize, j: usize| distance_squared(points[open[i]], groups.sites[j]);
        let mut start = Vec::with_capacity(open.len() + 1);
        let mut listed = Vec::with_capacity(open.len() * candidates.per_point);
        start.push(0);
        for &i in &open {
            let row = candidates.of(i);
            listed.extend_from_slice(row);
            if !row.contains(&best[i]) {
                listed.push(best[i]);
            }
            if let Some(more) = extra.get(&i) {
                listed.extend(more.iter().filter(|j| !row.contains(j) && **j != best[i]));
            }
            start.push(listed.len());
        }
        let t1 = std::time::Instant::now();
        let plan = if everything {
            solve_from_watched(&sub_demand, &residual, &cost, &prices, Reach::All, clock)?
        } else {
            // A site whose listing points cannot reach a site with room makes the sparse
            // problem infeasible: then every pair is allowed.
            let reach = Reach::Listed { start: &start, sites: &listed };
            // A stop is final; any other failure of the listed sites falls back to all of them.
            solve_from_watched(&sub_demand, &residual, &cost, &prices, reach, clock).or_else(|e| {
                if clock.stop() {
                    Err(e)
                } else {
                    solve_from_watched(&sub_demand, &residual, &cost, &prices, Reach::All, clock)
                }
            })?
        };
        stage!("round {round} open {} aug {} in {:?}", open.len(), plan.augmentations, t1.elapsed());
        prices.clone_from(&plan.price);
        let mut power: Vec<f64> = plan.price.iter().map(|&y| -y).collect();
        normalise(&mut power);
        // Every point must be served only by sites of least power distance among all sites.
        let t2 = std::time::Instant::now();
        let (now, _) = power_nearest_with_gap(points, &groups.sites, &power, candidates);
        let value = |i: usize, j: usize| distance_squared(points[i], groups.sites[j]) - power[j];
        let mut violations = 0;
        for i in 0..n {
            let kept = demand[i] > 0.0 && !is_open[i];
            if kept && now[i] != best[i] && value(i, best[i] as usize) > value(i, now[i] as usize) + slop {
                forced[i] = true;
                violations += 1;
            }
        }
        for (a, &i) in open.iter().enumerate() {
            let least = value(i, now[i] as usize);
            if plan.flows[a].iter().any(|&(j, _)| value(i, j as usize) > least + slop) {
                let more = extra.entry(i).or_default();
                if !more.contains(&now[i]) {
                    more.push(now[i]);
                }
                violations += 1;
            }
        }
        stage!("round {round} violations {violations} (extra {}) check {:?}", extra.len(), t2.elapsed());
        if violations > 0 && !everything {
            continue;
        }
        let mut flows: Vec<Vec<(u32, f64)>> = vec![Vec::new(); n];
        for i in 0..n {
            if demand[i] > 0.0 && !is_open[i] {
                flows[i].push((best[i], demand[i]));
            }
        }
        for (a, &i) in open.iter().enumerate() {
            flows[i] = plan.flows[a].clone();
        }
        return Ok(Finish { flows, power, exact_points: open.len(), augmentations: plan.augmentations });
    }
    unreachable!("the last round takes every point")
}

/// The per-point and per-site tables, with each location's demand handed to its input
/// sites in point order (each filled before the next: at most one point split between
/// two sites of one location).
#[allow(clippy::too_many_arguments)]
fn describe(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    demand: &[f64],
    groups: &Locations,
    finish: Finish,
    cells: (VoronoiCells, Vec<Option<usize>>),
    newton_steps: usize,
    total_demand: f64,
) -> CapacityCells {
    let (n, m) = (points.len(), sites.len());
    let factor = groups.capacity.iter().sum::<f64>() / capacities.iter().sum::<f64>();
    // Fill cursors per location: (member position, room left in that member).
    let mut cursor: Vec<(usize, f64)> = groups.members.iter().map(|ms| (0, capacities[ms[0]] * factor)).collect();
    let mut out = CapacityCells {
        power: vec![0.0; m],
        assignment: vec![0; n],
        share: vec![0.0; n],
        cost: vec![0.0; n],
        parts: Vec::new(),
        load: vec![0.0; m],
        slack: vec![0.0; m],
        total_cost: 0.0,
        total_distance_cost: 0.0,
        total_demand,
        newton_steps,
        exact_points: finish.exact_points,
        augmentations: finish.augmentations,
        cells: cells.0,
        cell_site: cells.1,
    };
    let mut loads = vec![CompensatedSum::default(); m];
    let mut total = CompensatedSum::default();
    let mut plain = CompensatedSum::default();
    let weightless: Vec<usize> = (0..n).filter(|&i| demand[i] == 0.0).collect();
    let mut least = vec![f64::INFINITY; n];
    for i in 0..n {
        let mut parts: Vec<(usize, f64)> = Vec::new();
        for &(g, x) in &finish.flows[i] {
            let g = g as usize;
            let ms = &groups.members[g];
            let mut left = x;
            while left > 0.0 {
                let (pos, room) = &mut cursor[g];
                let take = if *pos + 1 == ms.len() { left } else { left.min(*room) };
                if take > 0.0 {
                    parts.push((ms[*pos], take));
                }
                left -= take;
                *room -= take;
                // A room left by rounding alone counts as full (no spurious sliver parts).
                let full = *room <= 1e-12 * capacities[ms[*pos]] * factor;
                if left > 0.0 || full {
                    if *pos + 1 < ms.len() {
                        *pos += 1;
                        *room = capacities[ms[*pos]] * factor;
                    } else {
                        break;
                    }
                }
            }
        }
        parts.sort_by_key(|e| e.0);
        let mut merged: Vec<(usize, f64)> = Vec::new();
        for (j, x) in parts {
            match merged.last_mut() {
                Some(last) if last.0 == j => last.1 += x,
                _ => merged.push((j, x)),
            }
        }
        let mut cost = CompensatedSum::default();
        let mut best: Option<(usize, f64)> = None;
        for &(j, x) in &merged {
            let d2 = distance_squared(points[i], sites[j]);
            cost.add(x * d2);
            plain.add(x * d2.sqrt());
            loads[j].add(x);
            if best.is_none_or(|(_, bx)| x > bx) {
                best = Some((j, x));
            }
        }
        if merged.len() > 1 {
            out.parts.extend(merged.iter().map(|&(j, x)| (i, j, x)));
        }
        out.cost[i] = cost.total();
        total.add(out.cost[i]);
        if let Some((j, x)) = best {
            out.assignment[i] = j;
            out.share[i] = x / demand[i];
            let g = groups.of_site[j].expect("a serving site has capacity");
            least[i] = distance_squared(points[i], groups.sites[g]) - finish.power[g];
        }
    }
    // Points of zero weight: their least power distance location, its first site.
    for &i in &weightless {
        let g = (0..groups.sites.len())
            .min_by(|&a, &b| {
                let va = distance_squared(points[i], groups.sites[a]) - finish.power[a];
                let vb = distance_squared(points[i], groups.sites[b]) - finish.power[b];
                va.total_cmp(&vb)
            })
            .expect("some site has capacity");
        out.assignment[i] = groups.members[g][0];
    }
    for j in 0..m {
        out.load[j] = loads[j].total();
        out.slack[j] = capacities[j] - out.load[j];
        out.power[j] = match groups.of_site[j] {
            Some(g) => finish.power[g],
            // No capacity: the largest power at which the site is nowhere strictly least.
            None => {
                let served = (0..n).filter(|&i| demand[i] > 0.0);
                served.map(|i| distance_squared(points[i], sites[j]) - least[i]).fold(f64::INFINITY, f64::min)
            }
        };
    }
    out.total_cost = total.total();
    out.total_distance_cost = plain.total();
    out
}

#[cfg(test)]
#[allow(clippy::needless_range_loop)]
mod tests {
    use super::*;
    use crate::capacity::transport::transport;
    use crate::partition::testing::lcg_cloud;

    fn check_cells(points: &[Point], sites: &[Point], caps: &[f64], c: &CapacityCells) {
        let split: std::collections::HashSet<usize> = c.parts.iter().map(|e| e.0).collect();
        for (i, p) in points.iter().enumerate() {
            if split.contains(&i) {
                continue;
            }
            let least = (0..sites.len())
                .filter(|&j| caps[j] > 0.0)
                .map(|j| distance_squared(*p, sites[j]) - c.power[j])
                .fold(f64::INFINITY, f64::min);
            let j = c.assignment[i];
            assert!(distance_squared(*p, sites[j]) - c.power[j] <= least + 1e-9, "point {i}");
        }
        for j in 0..sites.len() {
            assert!(c.load[j] <= caps[j] * (1.0 + 1e-9) + 1e-9, "site {j}: {} > {}", c.load[j], caps[j]);
        }
    }

    #[test]
    fn matches_the_squared_distance_transportation_optimum() {
        for (seed, surplus) in [(1, 1.0), (2, 1.0), (3, 1.3)] {
            let points = lcg_cloud(3000, seed, [0.0, 0.0], 10.0);
            let sites = lcg_cloud(9, seed + 10, [0.0, 0.0], 10.0);
            // Σ_{j<9} (200 + 30 j) = 2880: the capacities scaled to the 3000 points (times the surplus).
            let caps: Vec<f64> = (0..9).map(|j| (200.0 + 30.0 * j as f64) * surplus * 3000.0 / 2880.0).collect();
            let c = capacity_cells(&points, &sites, &caps, Weights::Unit, None, &CellsOptions::default()).unwrap();
            let reference = transport(&vec![1.0; 3000], &caps, &|i, j| distance_squared(points[i], sites[j])).unwrap();
            let best: f64 = reference
                .flows
                .iter()
                .enumerate()
                .flat_map(|(i, f)| {
                    let (points, sites) = (&points, &sites);
                    f.iter().map(move |&(j, x)| x * distance_squared(points[i], sites[j as usize]))
                })
                .sum();
            assert!((c.total_cost - best).abs() <= 1e-9 * best, "{} vs {best}", c.total_cost);
            check_cells(&points, &sites, &caps, &c);
            if surplus == 1.0 {
                for j in 0..9 {
                    assert!((c.load[j] - caps[j]).abs() <= 1e-9 * caps[j]);
                }
            }
            assert!(c.power.iter().all(|&w| w <= 0.0) && c.power.contains(&0.0));
        }
    }

    #[test]
    fn duplicates_zero_capacity_and_shortfall() {
        let points = lcg_cloud(400, 7, [0.0, 0.0], 1.0);
        let sites = [[0.2, 0.2], [0.8, 0.8], [0.2, 0.2], [5.0, 5.0]];
        let caps = [100.0, 200.0, 100.0, 0.0];
        let c = capacity_cells(&points, &sites, &caps, Weights::Unit, None, &CellsOptions::default()).unwrap();
        check_cells(&points, &sites, &caps, &c);
        assert_eq!(c.power[0], c.power[2]);
        for j in 0..3 {
            assert!((c.load[j] - caps[j]).abs() < 1e-9);
        }
        assert_eq!(c.load[3], 0.0);
        let e =
            capacity_cells(&points, &sites, &[10.0, 10.0, 10.0, 0.0], Weights::Unit, None, &CellsOptions::default())
                .unwrap_err();
        assert_eq!(e, Error::Shortfall { demand: 400.0, capacity: 30.0, may_leave_unserved: false });
        assert!(e.to_string().ends_with("raise capacities (this model serves all the demand)"), "{e}");
    }

    #[test]
    fn a_stopped_run_fails_naming_the_time_limit_and_progress_ends_at_the_total() {
        let points = lcg_cloud(600, 4, [5.0, 5.0], 4.0);
        let sites = [[3.0, 3.0], [7.0, 7.0], [7.0, 3.0]];
        let caps = [250.0, 200.0, 150.0];
        let expired =
            CellsOptions { limits: RunLimits { time_limit: Some(0.0), ..Default::default() }, ..Default::default() };
        let e = capacity_cells(&points, &sites, &caps, Weights::Unit, None, &expired).unwrap_err();
        assert!(matches!(e, Error::InvalidParameter { name: "time_limit", .. }), "{e}");
        let watch = crate::cancel::Watch::new();
        let watched = CellsOptions { limits: RunLimits::new(None, watch.clone()), ..Default::default() };
        let c = capacity_cells(&points, &sites, &caps, Weights::Unit, None, &watched).unwrap();
        let (done, total) = watch.progress();
        assert!(c.newton_steps > 0 && done == total && total == NEWTON_STEPS as u64 + 1);
    }

    #[test]
    fn cells_tile_the_region_share_locations_and_refuse_outside_points() {
        let points = lcg_cloud(600, 4, [5.0, 5.0], 4.0);
        let sites = [[3.0, 3.0], [7.0, 7.0], [3.0, 3.0], [7.0, 3.0], [5.0, 5.0]];
        let caps = [150.0, 200.0, 150.0, 100.0, 0.0];
        let square = [[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]];
        let region = Region { vertices: &square, ring_offsets: &[0, 4] };
        let c = capacity_cells(&points, &sites, &caps, Weights::Unit, Some(region), &CellsOptions::default()).unwrap();
        assert_eq!(c.cell_site, [Some(0), Some(1), Some(0), Some(3), None]);
        // Area of the tiling (shoelace, an independent sum) and empty rows for the sharers.
        assert!((c.cells.area.iter().sum::<f64>() - 100.0).abs() < 1e-9);
        assert!(c.cells.area[0] > 0.0 && c.cells.area[2] == 0.0 && c.cells.area[4] == 0.0);
        assert_eq!(c.cells.offsets[3], c.cells.offsets[2]);
        // Each point lies in its site's cell, up to rounding: its least power distance site.
        check_cells(&points, &sites, &caps, &c);
        let mut outside = points.clone();
        outside[17] = [10.5, 2.0];
        let e =
            capacity_cells(&outside, &sites, &caps, Weights::Unit, Some(region), &CellsOptions::default()).unwrap_err();
        assert_eq!(e, Error::OutsideRegion { argument: "points", row: 17, point: [10.5, 2.0] });
        assert_eq!(
            e.to_string(),
            "points[17] at (10.5, 2) lies outside the region; every point must lie in the region or on its boundary"
        );
        let e = capacity_cells(&[[1.0, 1.0]], &[[1.0, 1.0]], &[1.0], Weights::Unit, None, &CellsOptions::default())
            .unwrap_err();
        assert!(matches!(e, Error::Degenerate { argument: "region", .. }));
    }

    #[test]
    #[ignore]
    fn timing_stages() {
        let sizes: Vec<(usize, usize)> = std::env::var("CELLS_SIZES")
            .unwrap_or("100000x100".into())
            .split(',')
            .map(|t| {
                let (a, b) = t.split_once('x').unwrap();
                (a.parse().unwrap(), b.parse().unwrap())
            })
            .collect();
        for (n, m) in sizes {
            let mut r = crate::geometry::random::SplitMix64::new(5);
            let points: Vec<Point> = (0..n).map(|_| [20_000.0 * r.next_f64(), 20_000.0 * r.next_f64()]).collect();
            let sites: Vec<Point> = (0..m).map(|_| [20_000.0 * r.next_f64(), 20_000.0 * r.next_f64()]).collect();
            let mut caps: Vec<f64> = (0..m).map(|_| 0.8 + 0.4 * r.next_f64()).collect();
            let s: f64 = caps.iter().sum();
            caps.iter_mut().for_each(|c| *c *= n as f64 / s);
            let t = std::time::Instant::now();
            let c = capacity_cells(&points, &sites, &caps, Weights::Unit, None, &CellsOptions::default()).unwrap();
            let worst = (0..m).map(|j| (c.load[j] - caps[j]).abs() / caps[j]).fold(0.0, f64::max);
            eprintln!("total {n}x{m}: {:?}, worst load error {worst:e}", t.elapsed());
        }
    }
}
