//! Building a travel graph from line geometries: the ends of the lines become nodes, ends
//! within a snapping tolerance of each other joined into one node.

use std::collections::HashMap;

use rstar::primitives::GeomWithData;
use rstar::RTree;

use super::crossings::split_at_crossings;
use super::graph::{check_cost, polyline_length, shape_length, OneWay, Shapes, TravelGraph, MAX_GRAPH_INDEX};
use super::lonlat::{departure, place_of, short_way, Unwrapped, MAX_DEPARTURE};
use crate::error::{Error, Result};
use crate::geodesic::normalised_longitude;
use crate::geometry::{distance, location_key, Point};

/// Options of [`TravelGraph::from_lines`].
#[derive(Debug, Clone, Default)]
pub struct LineOptions<'a> {
    /// Cost of each line forward (default: its planar length in coordinate units).
    pub cost: Option<&'a [f64]>,
    /// Cost of each line backward (default: the forward cost).
    pub reverse_cost: Option<&'a [f64]>,
    /// Direction codes: 0 both ways, 1 along the drawing direction only, -1 against it only.
    pub one_way: Option<&'a [i64]>,
    /// Line ends closer than this (coordinate units, >= 0; metres with `geodesic`) are joined
    /// into one node; 0 joins only ends with equal coordinates.
    pub tolerance: f64,
    /// Split lines where they cross or where one ends on another (off by default: a bridge
    /// or tunnel crosses a street without meeting it). Each piece keeps its line's one-way
    /// code and the share of its cost in proportion to length; [`TravelGraph::edge_lines`]
    /// maps pieces to input rows.
    pub split_crossings: bool,
    /// Coordinates are longitude/latitude in degrees: default costs (and snapping gaps and
    /// positions) are WGS84 geodesic lengths in metres (Karney 2013, through the geodesic
    /// family), and so is `tolerance`. Segments run the shorter way round in
    /// longitude (across the antimeridian where that is shorter) and ends at one place join
    /// whatever turn their longitudes are given in; a segment that strays from its geodesic
    /// by more than 1% of its length (over or near a pole) is refused (see `lonlat`).
    pub geodesic: bool,
    /// Input rows of several lines each (multi-part geometries): row `r` is made of the lines
    /// `parts[r]..parts[r + 1]`, each its own chain of vertices joined to others only at its
    /// ends (as separate lines are). `cost`, `reverse_cost` and `one_way` then hold one value
    /// per row: every part keeps the row's one-way code, and a row's cost is shared among its
    /// parts in proportion to their lengths (planar, or geodesic with `geodesic`), equally
    /// when they all have length zero, so the parts' costs add up to the row's.
    /// [`TravelGraph::edge_lines`] maps edges to rows, and errors name rows. `None`: each line
    /// is its own row.
    pub parts: Option<&'a [usize]>,
}

impl TravelGraph {
    /// A graph whose edges are the lines `coords[offsets[i]..offsets[i + 1]]` (planar
    /// coordinates), each from its first point (tail) to its last (head).
    ///
    /// Ends are joined greedily in line order: an end within `tolerance` of an existing
    /// node (the nearest one, found in an R*-tree) joins it, else it starts a new node at its
    /// own location; with `tolerance == 0` ends join exactly when their coordinates are equal
    /// ([`location_key`]). Joining is not transitive: two ends `2 × tolerance` apart stay
    /// apart unless an end between them came first. Lines are split where they cross only
    /// with [`LineOptions::split_crossings`] (see `crossings` for the method).
    ///
    /// With [`LineOptions::parts`], rows of several lines (multi-part geometries) share their
    /// costs among their parts by length.
    ///
    /// # Errors
    /// [`Error::InvalidEdge`] naming the row of a line with fewer than two points or a
    /// non-finite coordinate (a row without parts, or with a part of fewer than two points,
    /// too: the part is named), a bad cost or one-way code, or (geodesic) a segment that
    /// strays from its geodesic over or near a pole; [`Error::LengthMismatch`] for
    /// columns of the wrong length; [`Error::InvalidParameter`] for a negative or NaN
    /// tolerance, offsets or parts out of order, or beyond 32-bit indices.
    ///
    /// # Runtime
    /// O(V + L log L) for V vertices and L lines.
    pub fn from_lines(coords: &[Point], offsets: &[usize], options: &LineOptions<'_>) -> Result<TravelGraph> {
        let tolerance = options.tolerance;
        if !(tolerance >= 0.0 && tolerance.is_finite()) {
            return Err(Error::InvalidParameter {
                name: "tolerance",
                reason: format!("tolerance must be finite and >= 0; got {tolerance}"),
            });
        }
        if offsets.is_empty() || offsets[0] != 0 || *offsets.last().expect("non-empty") != coords.len() {
            return Err(Error::InvalidParameter {
                name: "offsets",
                reason: "offsets must start at 0 and end at the number of coordinates".into(),
            });
        }
        match options.parts {
            Some(parts) => Self::from_multipart_lines(coords, offsets, parts, options),
            None => Self::from_single_lines(coords, offsets, options, None),
        }
    }

    /// [`TravelGraph::from_lines`] with one line per row (`offsets` and `tolerance` checked;
    /// `checked`: the lines' lengths from [`line_lengths`], when already measured).
    fn from_single_lines(
        coords: &[Point],
        offsets: &[usize],
        options: &LineOptions<'_>,
        checked: Option<Vec<f64>>,
    ) -> Result<TravelGraph> {
        let tolerance = options.tolerance;
        let m = offsets.len() - 1;
        if m == 0 {
            return Err(Error::TooFewPoints { argument: "lines", needed: 1, got: 0, counted: "lines" });
        }
        if coords.len() > MAX_GRAPH_INDEX || 2 * m > MAX_GRAPH_INDEX {
            return Err(Error::InvalidParameter {
                name: "lines",
                reason: format!("{m} lines of {} vertices exceed the 32-bit indices of the graph", coords.len()),
            });
        }
        for (argument, column) in [("cost", options.cost), ("reverse_cost", options.reverse_cost)] {
            if let Some(c) = column {
                if c.len() != m {
                    return Err(Error::LengthMismatch { argument, expected: m, got: c.len() });
                }
            }
        }
        if let Some(o) = options.one_way {
            if o.len() != m {
                return Err(Error::LengthMismatch { argument: "one_way", expected: m, got: o.len() });
            }
        }
        let lengths = match checked {
            Some(lengths) => lengths,
            None => line_lengths(coords, offsets, options.geodesic)?,
        };
        if options.split_crossings {
            return Self::from_split_lines(coords, offsets, options);
        }
        let mut tail = Vec::with_capacity(m);
        let mut head = Vec::with_capacity(m);
        let mut nodes = 0u32;
        // Where an end lies: on a geodesic graph one longitude per place (180° is -180°, any
        // longitude at a pole is that pole), so ends across the antimeridian join.
        let geodesic = options.geodesic;
        let place = |p: Point| if geodesic { place_of(p) } else { p };
        if tolerance == 0.0 {
            let mut seen: HashMap<(u64, u64), u32> = HashMap::with_capacity(2 * m);
            let mut node_of = |p: Point| {
                *seen.entry(location_key(place(p))).or_insert_with(|| {
                    nodes += 1;
                    nodes - 1
                })
            };
            for row in 0..m {
                tail.push(node_of(coords[offsets[row]]));
                head.push(node_of(coords[offsets[row + 1] - 1]));
            }
        } else {
            // An end within `tolerance` of the nearest node joins it. On a lon/lat graph
            // `tolerance` is metres on the ellipsoid, as every other length there: the
            // R*-tree holds degrees, so it lists the nodes within a radius of degrees that
            // holds every place within `tolerance` metres ([`degrees_within`]), and the
            // geodesic distance (Karney 2013) picks the nearest of them.
            let mut tree: RTree<GeomWithData<Point, u32>> = RTree::new();
            let metres = |a: Point, b: Point| crate::geodesic::geodesic_length(&[a, b]).unwrap_or(f64::INFINITY);
            let mut node_of = |p: Point| {
                let (p, near) = if geodesic {
                    let p = place(p);
                    // An end within `tolerance` of a pole joins at the pole, whatever its
                    // longitude: there longitudes far apart are one place.
                    let pole = [0.0, 90f64.copysign(p[1])];
                    let p = if metres(p, pole) <= tolerance { place(pole) } else { p };
                    let reach = degrees_within(p[1], tolerance);
                    // Across the antimeridian, a node a turn of longitude away in the coordinates.
                    let near = [0.0, 360.0, -360.0]
                        .iter()
                        .flat_map(|&turn| tree.locate_within_distance([p[0] + turn, p[1]], reach * reach))
                        .map(|near| (metres(p, *near.geom()), near.data))
                        .min_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
                    (p, near)
                } else {
                    (p, tree.nearest_neighbor(p).map(|near| (distance(*near.geom(), p), near.data)))
                };
                match near {
                    Some((d, node)) if d <= tolerance => node,
                    _ => {
                        tree.insert(GeomWithData::new(p, nodes));
                        nodes += 1;
                        nodes - 1
                    }
                }
            };
            for row in 0..m {
                tail.push(node_of(coords[offsets[row]]));
                head.push(node_of(coords[offsets[row + 1] - 1]));
            }
        }
        let cost = options.cost.unwrap_or(&lengths);
        let shapes = Shapes::Lines { offsets: offsets.iter().map(|&o| o as u32).collect(), coords: coords.to_vec() };
        let mut graph =
            TravelGraph::assemble(nodes as usize, tail, head, cost, options.reverse_cost, options.one_way, shapes)?;
        graph.geodesic = options.geodesic;
        Ok(graph)
    }

    /// [`TravelGraph::from_lines`] on rows of several lines ([`LineOptions::parts`]): each
    /// part becomes a line of its own with its share of its row's costs, and edges and errors
    /// name rows.
    fn from_multipart_lines(
        coords: &[Point],
        offsets: &[usize],
        parts: &[usize],
        options: &LineOptions<'_>,
    ) -> Result<TravelGraph> {
        let m = offsets.len() - 1;
        if parts.is_empty() || parts[0] != 0 || parts[parts.len() - 1] != m || parts.windows(2).any(|w| w[1] < w[0]) {
            return Err(Error::InvalidParameter {
                name: "parts",
                reason: "parts must start at 0, never decrease and end at the number of lines".into(),
            });
        }
        let rows = parts.len() - 1;
        if rows == 0 {
            return Err(Error::TooFewPoints { argument: "lines", needed: 1, got: 0, counted: "lines" });
        }
        if let Some(o) = options.one_way {
            if o.len() != rows {
                return Err(Error::LengthMismatch { argument: "one_way", expected: rows, got: o.len() });
            }
        }
        // As the graph checks them: only a direction the row may be travelled in needs a cost
        // (an unknown direction code is refused by the graph, naming it).
        let way = |row: usize| options.one_way.and_then(|o| OneWay::from_code(o[row])).unwrap_or(OneWay::Both);
        let reverse_given = options.reverse_cost.is_some();
        for (argument, column) in [("cost", options.cost), ("reverse_cost", options.reverse_cost)] {
            if let Some(c) = column {
                if c.len() != rows {
                    return Err(Error::LengthMismatch { argument, expected: rows, got: c.len() });
                }
                for (row, &value) in c.iter().enumerate() {
                    let travelled = match (argument, way(row)) {
                        ("cost", OneWay::Backward) => !reverse_given,
                        ("reverse_cost", OneWay::Forward) => false,
                        _ => true,
                    };
                    if travelled {
                        check_cost(argument, row, value)?;
                    }
                }
            }
        }
        // An empty geometry (no parts) is refused as an empty line is.
        if let Some(row) = (0..rows).find(|&r| parts[r] == parts[r + 1]) {
            return Err(Error::InvalidEdge {
                argument: "lines",
                row,
                reason: "a line needs at least 2 points; got 0".into(),
            });
        }
        if m > MAX_GRAPH_INDEX {
            return Err(Error::InvalidParameter {
                name: "lines",
                reason: format!("{m} parts exceed the 32-bit indices of the graph"),
            });
        }
        let row_of: Vec<u32> = (0..rows).flat_map(|r| std::iter::repeat_n(r as u32, parts[r + 1] - parts[r])).collect();
        // Errors about a part (or a piece of it, already named by part) name its row, and
        // for its shape the part within it when the row has several.
        let named = |e: Error| match e {
            Error::InvalidEdge { argument, row: part, reason } => {
                let row = row_of[part] as usize;
                let reason = if argument == "lines" && parts[row + 1] - parts[row] > 1 {
                    format!("part {}: {reason}", part - parts[row])
                } else {
                    reason
                };
                Error::InvalidEdge { argument, row, reason }
            }
            other => other,
        };
        let lengths = line_lengths(coords, offsets, options.geodesic).map_err(named)?;
        let mut share = vec![0.0; m];
        for r in 0..rows {
            let own = parts[r]..parts[r + 1];
            let total: f64 = lengths[own.clone()].iter().sum();
            let count = own.len() as f64;
            for p in own {
                share[p] = if total > 0.0 { lengths[p] / total } else { 1.0 / count };
            }
        }
        let spread = |column: &[f64]| -> Vec<f64> { (0..m).map(|p| column[row_of[p] as usize] * share[p]).collect() };
        let cost = options.cost.map(spread);
        let reverse = options.reverse_cost.map(spread);
        let one_way: Option<Vec<i64>> = options.one_way.map(|o| row_of.iter().map(|&r| o[r as usize]).collect());
        let inner = LineOptions {
            cost: cost.as_deref(),
            reverse_cost: reverse.as_deref(),
            one_way: one_way.as_deref(),
            parts: None,
            ..options.clone()
        };
        let mut graph = Self::from_single_lines(coords, offsets, &inner, Some(lengths)).map_err(named)?;
        // One map from edges to input rows: through the pieces' parts when split.
        graph.source_line = if graph.source_line.is_empty() {
            row_of
        } else {
            graph.source_line.iter().map(|&part| row_of[part as usize]).collect()
        };
        Ok(graph)
    }

    /// [`TravelGraph::from_lines`] on the lines split where they cross: the pieces' costs are
    /// their shares of their lines' costs, their one-way codes their lines' codes.
    fn from_split_lines(coords: &[Point], offsets: &[usize], options: &LineOptions<'_>) -> Result<TravelGraph> {
        // Lon/lat lines are split in one turn of longitude (see `lonlat`), each segment the
        // shorter way round, so that lines across the antimeridian cross where they are drawn;
        // the pieces come back with longitudes in [-180, 180].
        let unwrapped;
        let coords = if options.geodesic {
            unwrapped = unwrap_lines(coords, offsets)?;
            &unwrapped[..]
        } else {
            coords
        };
        let mut split = split_at_crossings(coords, offsets);
        if options.geodesic {
            for p in &mut split.coords {
                if p[0].abs() > 180.0 {
                    p[0] = normalised_longitude(p[0]);
                }
            }
        }
        let pieces = split.source.len();
        if split.coords.len() > MAX_GRAPH_INDEX || 2 * pieces > MAX_GRAPH_INDEX {
            return Err(Error::InvalidParameter {
                name: "lines",
                reason: format!("{pieces} pieces exceed the 32-bit indices of the graph"),
            });
        }
        // Each piece's share of its line: its length over the sum of its line's pieces'
        // lengths, measured as the graph measures them (planar, or geodesic metres on the
        // ellipsoid for lon/lat lines: degrees shrink with latitude, metres do not).
        let measured: Vec<f64> =
            split.offsets.windows(2).map(|w| shape_length(&split.coords[w[0]..w[1]], options.geodesic)).collect();
        let mut whole = vec![0.0; offsets.len() - 1];
        for (&i, &length) in split.source.iter().zip(&measured) {
            whole[i as usize] += length;
        }
        let shares: Vec<f64> = split
            .source
            .iter()
            .zip(&measured)
            .map(|(&i, &length)| if whole[i as usize] > 0.0 { length / whole[i as usize] } else { 1.0 })
            .collect();
        let share = |column: &[f64]| -> Vec<f64> {
            split.source.iter().zip(&shares).map(|(&i, &f)| column[i as usize] * f).collect()
        };
        // Without costs each piece measures itself (planar or geodesic length).
        let cost = options.cost.map(share);
        let reverse = options.reverse_cost.map(share);
        let one_way: Option<Vec<i64>> = options.one_way.map(|o| split.source.iter().map(|&i| o[i as usize]).collect());
        let inner = LineOptions {
            cost: cost.as_deref(),
            reverse_cost: reverse.as_deref(),
            one_way: one_way.as_deref(),
            tolerance: options.tolerance,
            split_crossings: false,
            geodesic: options.geodesic,
            parts: None,
        };
        // Errors about a piece (a bad cost or code) name its input line.
        let mut graph = TravelGraph::from_lines(&split.coords, &split.offsets, &inner).map_err(|e| match e {
            Error::InvalidEdge { argument, row, reason } => {
                Error::InvalidEdge { argument, row: split.source[row] as usize, reason }
            }
            other => other,
        })?;
        graph.source_line = split.source;
        Ok(graph)
    }
}

/// The length of every line `coords[offsets[i]..offsets[i + 1]]` (planar, or WGS84 geodesic
/// metres with `geodesic`), each checked first.
///
/// # Errors
/// [`Error::InvalidEdge`] naming the line (its index) with fewer than two points or a
/// non-finite coordinate, or (geodesic) a segment that strays from its geodesic over or near
/// a pole or has (nearly) antipodal ends.
/// A radius in the plane of longitude and latitude (degrees) that holds every place within
/// `metres` of a place at latitude `lat` on WGS84.
///
/// A geodesic of length `metres` stays within `metres` of its start, so it never passes the
/// latitude `φ = |lat| + Δlat`. Along it a degree of latitude is at least `a(1 − e²)·π/180`
/// = 110,574.27 m (the meridian's radius of curvature is least at the equator), and a degree
/// of longitude at least `a·cos φ·π/180` (the prime vertical's radius is at least `a`), so
/// the latitude changes by at most `Δlat = metres / 110,574` degrees and the longitude by at
/// most `metres / (a·cos φ·π/180)`; past a pole every longitude is within reach.
pub(super) fn degrees_within(lat: f64, metres: f64) -> f64 {
    const METRES_PER_DEGREE_OF_LATITUDE_AT_LEAST: f64 = 110_574.0;
    let dlat = metres / METRES_PER_DEGREE_OF_LATITUDE_AT_LEAST;
    let farthest = (lat.abs() + dlat).min(90.0);
    let per_degree_of_longitude = crate::geodesic::WGS84_A * farthest.to_radians().cos() * std::f64::consts::PI / 180.0;
    let dlon = if per_degree_of_longitude > 0.0 { (metres / per_degree_of_longitude).min(360.0) } else { 360.0 };
    // A little more than the box's half-diagonal, so that rounding never drops a node.
    (dlat.hypot(dlon) * (1.0 + 1e-9)).min(720.0)
}

fn line_lengths(coords: &[Point], offsets: &[usize], geodesic: bool) -> Result<Vec<f64>> {
    let m = offsets.len() - 1;
    let mut lengths = Vec::with_capacity(m);
    for row in 0..m {
        let (a, b) = (offsets[row], offsets[row + 1]);
        if b < a + 2 {
            let got = b.saturating_sub(a);
            return Err(Error::InvalidEdge {
                argument: "lines",
                row,
                reason: format!("a line needs at least 2 points; got {got}"),
            });
        }
        let line = &coords[a..b];
        if let Some(p) = line.iter().find(|p| !(p[0].is_finite() && p[1].is_finite())) {
            return Err(Error::InvalidEdge {
                argument: "lines",
                row,
                reason: format!("coordinate ({}, {}) is not finite", p[0], p[1]),
            });
        }
        if geodesic {
            let length = crate::geodesic::geodesic_length(line).map_err(|e| Error::InvalidEdge {
                argument: "lines",
                row,
                reason: format!("not a longitude/latitude line: {e}"),
            })?;
            for (k, w) in line.windows(2).enumerate() {
                let off = departure(w[0], w[1]);
                if off > MAX_DEPARTURE {
                    let why = if w[0][1].abs() == 90.0 || w[1][1].abs() == 90.0 {
                        format!(
                            "it meets a pole under another longitude than its other end's, so drawn straight \
                             in longitude/latitude it strays from the geodesic (a meridian) between its ends by \
                             {:.1}% of its length: give the pole the longitude of the segment's other end",
                            100.0 * off
                        )
                    } else if off.is_finite() {
                        format!(
                            "drawn straight in longitude/latitude it strays from the geodesic between its ends \
                             (which its length measures) by {:.1}% of its length, more than {}% (it passes over \
                             or near a pole, or is long for its latitude): add vertices along it, or project \
                             the lines (to a polar CRS such as EPSG:3413 or EPSG:3031 near a pole)",
                            100.0 * off,
                            100.0 * MAX_DEPARTURE
                        )
                    } else {
                        "its ends are (nearly) antipodal, so no one geodesic joins them: add vertices along it"
                            .to_string()
                    };
                    return Err(Error::InvalidEdge {
                        argument: "lines",
                        row,
                        reason: format!(
                            "segment {k}, from ({}, {}) to ({}, {}): {why}",
                            w[0][0], w[0][1], w[1][0], w[1][1]
                        ),
                    });
                }
            }
            lengths.push(length);
        } else {
            lengths.push(polyline_length(line));
        }
    }
    Ok(lengths)
}

/// Lon/lat lines with their longitudes in one turn ([`Unwrapped`]), each segment the shorter
/// way round.
///
/// # Errors
/// [`Error::InvalidEdge`] naming a line that leaves the turn: the network circles the globe
/// (round a pole, say), so no meridian is free of it.
fn unwrap_lines(coords: &[Point], offsets: &[usize]) -> Result<Vec<Point>> {
    let turn = Unwrapped::around(offsets.windows(2).map(|w| &coords[w[0]..w[1]]));
    let mut out = Vec::with_capacity(coords.len());
    for row in 0..offsets.len() - 1 {
        let line = &coords[offsets[row]..offsets[row + 1]];
        out.push(turn.point(line[0]));
        for (k, w) in line.windows(2).enumerate() {
            let b = short_way(*out.last().expect("a line has a point"), w[1]);
            if !turn.holds(b[0]) {
                return Err(Error::InvalidEdge {
                    argument: "lines",
                    row,
                    reason: format!(
                        "segment {k}, from ({}, {}) to ({}, {}), closes a ring of lines round the globe in \
                         longitude (round a pole, say), so crossings cannot be found in one flat view of the \
                         network; split the network into parts that leave a meridian free, or project it",
                        w[0][0], w[0][1], w[1][0], w[1][1]
                    ),
                });
            }
            out.push(b);
        }
    }
    Ok(out)
}
