//! The reference concatenation for the tests: the same program as [`super::concatenate`]
//! solved as a whole by `microlp`'s own branch and bound, with subtour constraints added
//! only from integer answers.
//!
//! The integer program of Warme (1998, "Spanning trees in hypergraphs with applications to
//! Steiner trees"): a binary `x_i` per FST, `Σ (|S_i| − 1) x_i = n − 1`, every terminal
//! covered, and the subtour constraints `Σ max(0, |S_i ∩ U| − 1) x_i ≤ |U| − 1` for
//! terminal sets `U`. The pair constraints (`|U| = 2`) are stated at once; larger ones are
//! added lazily for the components of an integer answer that is not a tree, and the program
//! is solved again, until the answer is a tree. Each program is solved by branch and bound
//! with `microlp`, a pure-Rust LP/MIP solver, so the crate keeps no native dependency.
//!
//! The solver runs in short slices (it can be resumed where a time limit stopped it), so a
//! cancelled run stops within one slice however long the branch and bound takes.

use std::collections::HashMap;
use std::time::{Duration, Instant};

use microlp::{
    ComparisonOp, OptimizationDirection, Problem, ResumeOptions, SolutionStatus, SolveOptions, SolveOutcome,
    TerminationReason, Variable,
};

use crate::cancel::Clock;

/// Longest uninterrupted stretch of the solver between polls of the clock.
const SLICE: Duration = Duration::from_millis(50);

use crate::network::steiner::fst::FullTree;
use crate::network::union_find::UnionFind;

/// The chosen FSTs (indices into `trees`) and whether their optimality is proven; `None`
/// when the run is cancelled, or the deadline passes or the solver fails before any tree is
/// found.
pub(crate) fn concatenate_mip(n: usize, trees: &[FullTree], clock: &Clock) -> Option<(Vec<usize>, bool)> {
    if n < 2 {
        return Some((Vec::new(), true));
    }
    let mut problem = Problem::new(OptimizationDirection::Minimize);
    let vars: Vec<Variable> = trees.iter().map(|t| problem.add_binary_var(t.length)).collect();
    let sizes: Vec<(Variable, f64)> =
        trees.iter().zip(&vars).map(|(t, &v)| (v, (t.terminals.len() - 1) as f64)).collect();
    problem.add_constraint(sizes.as_slice(), ComparisonOp::Eq, (n - 1) as f64);
    let mut covering: Vec<Vec<(Variable, f64)>> = vec![Vec::new(); n];
    let mut pairs: HashMap<(usize, usize), Vec<(Variable, f64)>> = HashMap::new();
    for (t, &v) in trees.iter().zip(&vars) {
        for (a, &u) in t.terminals.iter().enumerate() {
            covering[u].push((v, 1.0));
            for &w in &t.terminals[a + 1..] {
                pairs.entry((u, w)).or_default().push((v, 1.0));
            }
        }
    }
    for row in &covering {
        problem.add_constraint(row.as_slice(), ComparisonOp::Ge, 1.0);
    }
    let mut pair_rows: Vec<_> = pairs.into_iter().filter(|(_, row)| row.len() > 1).collect();
    pair_rows.sort_by_key(|(k, _)| *k);
    for (_, row) in &pair_rows {
        problem.add_constraint(row.as_slice(), ComparisonOp::Le, 1.0);
    }
    loop {
        if clock.stop() {
            return None;
        }
        let solution = solve_sliced(&problem, clock)?.into_solution().ok()?;
        let chosen: Vec<usize> = (0..trees.len()).filter(|&i| solution.var_value(vars[i]) > 0.5).collect();
        let proven = solution.status() == SolutionStatus::Optimal;
        let cuts = violated_components(n, trees, &chosen);
        if cuts.is_empty() {
            return Some((chosen, proven));
        }
        for component in cuts {
            let row: Vec<(Variable, f64)> = trees
                .iter()
                .zip(&vars)
                .filter_map(|(t, &v)| {
                    let inside = t.terminals.iter().filter(|&&u| component[u]).count();
                    (inside >= 2).then(|| (v, (inside - 1) as f64))
                })
                .collect();
            let size = component.iter().filter(|&&b| b).count();
            problem.add_constraint(row.as_slice(), ComparisonOp::Le, (size - 1) as f64);
        }
    }
}

/// Solve `problem` in slices of at most [`SLICE`], resuming until it is proven optimal or
/// the clock stops it (then the outcome so far, which may hold a feasible incumbent); `None`
/// when cancelled or when the solver fails.
fn solve_sliced(problem: &Problem, clock: &Clock) -> Option<SolveOutcome> {
    let slice = || {
        let left = clock.deadline().map_or(SLICE, |d| d.saturating_duration_since(Instant::now()));
        Some(left.min(SLICE))
    };
    let mut options = SolveOptions::default();
    options.time_limit = slice();
    let mut outcome = problem.solve_with(options).ok()?;
    while outcome.termination_reason() == TerminationReason::TimeLimit {
        if clock.watch.is_cancelled() {
            return None;
        }
        if clock.expired() {
            break;
        }
        let mut resume = ResumeOptions::default();
        resume.time_limit = slice();
        outcome = outcome.resume_with(resume).ok()?;
    }
    Some(outcome)
}

/// Terminal sets (as membership flags) of the components of `chosen` that hold a cycle; empty
/// when `chosen` is a spanning tree of the hypergraph.
pub(super) fn violated_components(n: usize, trees: &[FullTree], chosen: &[usize]) -> Vec<Vec<bool>> {
    let mut sets = UnionFind::new(n);
    for &i in chosen {
        let t = &trees[i].terminals;
        for &u in &t[1..] {
            sets.union(t[0], u);
        }
    }
    let mut rank: HashMap<usize, (usize, i64)> = HashMap::new();
    for u in 0..n {
        let root = sets.find(u);
        let entry = rank.entry(root).or_insert((0, 0));
        entry.0 += 1;
    }
    for &i in chosen {
        let root = sets.find(trees[i].terminals[0]);
        rank.get_mut(&root).expect("every root is counted").1 += trees[i].terminals.len() as i64 - 1;
    }
    let mut roots: Vec<usize> =
        rank.iter().filter(|(_, &(size, used))| used > size as i64 - 1).map(|(&r, _)| r).collect();
    roots.sort_unstable();
    roots.into_iter().map(|r| (0..n).map(|u| sets.find(u) == r).collect()).collect()
}
