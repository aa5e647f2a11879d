//! Network catchments: every point's cheapest site by travel cost, from one multi-source
//! search (all sites start at once), with the load and cost of each site.

use rayon::prelude::*;

use super::graph::TravelGraph;
use super::search::{check_limit, label_nodes};
use super::snap::Spot;
use crate::error::{Error, Result};
use crate::geometry::{validate_weights, CompensatedSum, Weights};

/// Every point's cheapest site, travelling from the sites to the points.
#[derive(Debug, Clone, PartialEq)]
pub struct NetworkCatchments {
    /// Site row of every point; `None` where no site reaches it (another component, cut off
    /// by one-way edges, or beyond the limit).
    pub site: Vec<Option<u32>>,
    /// Travel cost from that site; `f64::NAN` where unreachable.
    pub cost: Vec<f64>,
    /// Weight each site serves.
    pub load: Vec<f64>,
    /// Number of points each site serves.
    pub count: Vec<usize>,
    /// Cheapest travel cost to every node from any site (`f64::NAN` where unreached).
    pub node_cost: Vec<f64>,
    /// The site of every node (`None` where unreached).
    pub node_site: Vec<Option<u32>>,
    /// Weight and number of the points no site reaches.
    pub unreachable_weight: f64,
    /// Number of points no site reaches.
    pub unreachable: usize,
    /// Σ weight × cost over the reached points.
    pub total_cost: f64,
    /// Largest cost over the reached points (0 when none is reached).
    pub worst_cost: f64,
}

/// Every point's cheapest site by travel cost from the site to the point.
///
/// One multi-source Dijkstra search (Dijkstra 1959) labels every node with its cheapest
/// site; a point part-way along an edge then takes the cheaper of its edge's two ends (in
/// the directions the edge allows) and of any site on the same edge. Ties go to the lower
/// site row.
///
/// # Errors
/// [`Error::TooFewPoints`] without sites; weight errors as [`validate_weights`];
/// [`Error::InvalidParameter`] for a bad limit.
///
/// # Runtime
/// O(A + N log N) for the search, then O(1) per point, parallel over points.
pub fn network_catchments(
    graph: &TravelGraph,
    points: &[Spot],
    sites: &[Spot],
    weights: Weights<'_>,
    limit: Option<f64>,
) -> Result<NetworkCatchments> {
    if sites.is_empty() {
        return Err(Error::TooFewPoints { argument: "sites", needed: 1, got: 0, counted: "sites" });
    }
    validate_weights("weights", weights, points.len())?;
    let limit = check_limit(limit)?;
    let (dist, label) = label_nodes(graph, sites, limit);
    let mut by_edge: Vec<(u32, u32)> = sites
        .iter()
        .enumerate()
        .filter_map(|(s, spot)| match spot {
            Spot::OnEdge { edge, .. } => Some((*edge, s as u32)),
            Spot::Node(_) => None,
        })
        .collect();
    by_edge.sort_unstable();
    let best: Vec<(Option<u32>, f64)> = points
        .par_iter()
        .with_min_len(4096)
        .map(|&p| {
            let mut best: (Option<u32>, f64) = (None, f64::INFINITY);
            let mut offer = |s: u32, c: f64| {
                if c <= limit && (c < best.1 || (c == best.1 && best.0.is_some_and(|b| s < b))) {
                    best = (Some(s), c);
                }
            };
            for (u, extra) in graph.arrive(p).iter() {
                if label[u as usize] != u32::MAX {
                    offer(label[u as usize], dist[u as usize] + extra);
                }
            }
            if let Spot::OnEdge { edge, .. } = p {
                let lo = by_edge.partition_point(|x| x.0 < edge);
                for &(e, s) in &by_edge[lo..] {
                    if e != edge {
                        break;
                    }
                    if let Some(c) = graph.direct(sites[s as usize], p) {
                        offer(s, c);
                    }
                }
            }
            (best.0, if best.0.is_some() { best.1 } else { f64::NAN })
        })
        .collect();
    let mut load = vec![CompensatedSum::default(); sites.len()];
    let mut count = vec![0usize; sites.len()];
    let (mut lost, mut unreachable) = (CompensatedSum::default(), 0usize);
    let (mut total, mut worst) = (CompensatedSum::default(), 0.0f64);
    for (i, &(s, c)) in best.iter().enumerate() {
        let w = weights.get(i);
        match s {
            Some(s) => {
                load[s as usize].add(w);
                count[s as usize] += 1;
                total.add(w * c);
                worst = worst.max(c);
            }
            None => {
                lost.add(w);
                unreachable += 1;
            }
        }
    }
    Ok(NetworkCatchments {
        site: best.iter().map(|b| b.0).collect(),
        cost: best.iter().map(|b| b.1).collect(),
        load: load.iter().map(|l| l.total()).collect(),
        count,
        node_cost: dist.iter().map(|&d| if d.is_finite() { d } else { f64::NAN }).collect(),
        node_site: label.iter().map(|&s| (s != u32::MAX).then_some(s)).collect(),
        unreachable_weight: lost.total(),
        unreachable,
        total_cost: total.total(),
        worst_cost: worst,
    })
}
