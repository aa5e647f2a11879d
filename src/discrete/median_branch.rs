//! Lagrangian branch and bound for the discrete p-median (Christofides & Beasley 1982).
//!
//! When the Lagrangian bound of the root (see `median_bound.rs`) stays below the best plan,
//! the gap is the relaxation's (its LP optimum is fractional) or the plan's. A tree search
//! over the candidates settles it: a node forces some candidates open and closes others, its
//! bound is the same Lagrangian function with those decisions (the forced ones open, the
//! closed ones never chosen), maximised by the same subgradient steps from its parent's
//! multipliers, and a node whose bound reaches the best plan is dropped.
//!
//! At every node, before branching, reduced-cost fixing (Beasley 1993) settles what the bound
//! alone decides: with `L` the node's bound, `ρ` the reduced sums at its multipliers and the
//! relaxation opening the `k` free candidates of least `ρ`,
//! - opening a free candidate `j` the relaxation left closed bounds every plan with `j` open
//!   by `L − ρ₍ₖ₎ + ρⱼ` (it replaces the dearest one chosen), so `j` closes when that reaches
//!   the best plan;
//! - closing a chosen `j` bounds every plan without it by `L − ρⱼ + ρ₍ₖ₊₁₎`, so `j` is forced
//!   open when that reaches the best plan.
//!
//! The search then branches on the chosen candidate nearest to being forced open (least
//! `ρⱼ`), depth first with its "open" side first: those decisions shrink the problem fastest
//! and keep the stack short. Every plan the relaxation meets goes to the interchange as in
//! the root (Beasley's Lagrangian heuristic), so the best plan can improve on the way.
//!
//! Invariants: every node's bound is at least its parent's (a child's relaxation allows fewer
//! plans); a dropped node or fixed decision never hides a plan cheaper than the best plan by
//! more than the proof tolerance (`PROOF_TOLERANCE · cost`); the least bound of the nodes not yet settled
//! (and of the decisions made) is a proven bound on the optimum whenever the search stops.

use super::median_bound::{settles, MedianRelaxation};
use crate::cancel::{Clock, Steps};
use crate::geometry::CompensatedSum;

/// Most subgradient iterations at one node (its multipliers start at the parent's best).
const NODE_ITERATIONS: usize = 150;
/// The step factor `θ` a node starts from: its multipliers start near a maximum of a
/// relaxation allowing more plans, so long steps would only leave it.
const NODE_THETA: f64 = 0.25;

/// One node: the decisions on the root's free candidates and a bound valid for every plan
/// that honours them.
struct Node {
    /// Candidates forced open (besides the caller's fixed ones).
    open: Vec<usize>,
    /// `closed[j]`: candidate `j` may not open.
    closed: Vec<bool>,
    /// A lower bound on every plan of the node (its parent's).
    bound: f64,
    /// Where its subgradient starts (its parent's best multipliers).
    lambda: Vec<f64>,
}

/// What the tree search proved.
pub(super) struct BranchOutcome {
    /// A lower bound on the optimum (at most the best plan's cost), within the tolerance of
    /// the best plan's cost when the search finished.
    pub bound: f64,
    /// Nodes whose bound was computed.
    pub nodes: usize,
    /// Subgradient iterations spent over all nodes.
    pub spent: usize,
}

/// Search the tree below the root `relaxation` (`closed` empty), whose best multipliers are
/// `lambda` with bound `root_bound`, while the best plan costs `upper`; at most `iterations`
/// subgradient iterations in all. `improve(open)` is the Lagrangian heuristic: it improves
/// the plan from an open set and returns the cost of the best plan known. Every iteration
/// is a step of `steps`; a stop of `clock` ends the search with the bound proven so far.
#[allow(clippy::too_many_arguments)]
pub(super) fn branch_and_bound(
    relaxation: &MedianRelaxation<'_, '_>,
    lambda: Vec<f64>,
    root_bound: f64,
    mut upper: f64,
    iterations: usize,
    improve: &mut dyn FnMut(&[usize]) -> f64,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> BranchOutcome {
    let m = relaxation.costs.columns();
    let sites = relaxation.fixed.len() + relaxation.p;
    let mut stack = vec![Node { open: Vec::new(), closed: vec![false; m], bound: root_bound, lambda }];
    // The least bound of what was settled without being searched to the end: dropped nodes
    // and fixed decisions (each at least the best plan's cost less the tolerance then).
    let mut settled = f64::INFINITY;
    let (mut nodes, mut spent) = (0usize, 0usize);
    while let Some(mut node) = stack.pop() {
        if settles(upper, node.bound) {
            settled = settled.min(node.bound);
            continue;
        }
        if spent >= iterations || clock.stop() {
            stack.push(node);
            break;
        }
        nodes += 1;
        let fixed: Vec<usize> = relaxation.fixed.iter().chain(&node.open).copied().collect();
        let here = MedianRelaxation { fixed: &fixed, p: sites - fixed.len(), closed: &node.closed, ..*relaxation };
        let budget = NODE_ITERATIONS.min(iterations - spent);
        let run = here.bound(upper, &node.lambda, budget, NODE_THETA, improve, clock, steps);
        spent += run.spent;
        upper = upper.min(run.upper);
        // A child allows fewer plans than its parent: the parent's bound holds too.
        let value = run.value.max(node.bound);
        if settles(upper, value) {
            settled = settled.min(value);
            continue;
        }
        if clock.stop() {
            node.bound = value;
            stack.push(node);
            break;
        }
        // Reduced-cost fixing and the branching candidate at the node's best multipliers.
        let rho = here.reduced_sums(&run.lambda);
        let mut free = here.free_candidates();
        free.sort_unstable_by(|&a, &b| rho[a].total_cmp(&rho[b]).then(a.cmp(&b)));
        let k = here.p;
        // The Lagrangian function at these multipliers, recomputed from ρ: the fixing tests
        // change its terms, so they must start from this value itself (not from the larger
        // of it and the parent's bound, which holds for the node but not term by term).
        let mut at = CompensatedSum::default();
        run.lambda.iter().for_each(|&l| at.add(l));
        fixed.iter().chain(&free[..k]).for_each(|&j| at.add(rho[j]));
        let at = at.total();
        let node_bound = value.max(at);
        let dearest_chosen = k.checked_sub(1).map(|last| rho[free[last]]);
        let first_left_out = free.get(k).map(|&j| rho[j]);
        let mut child =
            Node { open: node.open.clone(), closed: node.closed.clone(), bound: node_bound, lambda: run.lambda };
        for &j in &free[k..] {
            // Opening j: the relaxation swaps it for its dearest chosen candidate.
            let with_j = match dearest_chosen {
                Some(dearest) => at - dearest + rho[j],
                None => f64::INFINITY, // nothing more may open
            };
            if settles(upper, with_j) {
                settled = settled.min(with_j);
                child.closed[j] = true;
            }
        }
        for &j in &free[..k] {
            // Closing j: the relaxation takes the cheapest candidate left out instead.
            let without_j = match first_left_out {
                Some(next) => at - rho[j] + next,
                None => f64::INFINITY, // every free candidate must open
            };
            if settles(upper, without_j) {
                settled = settled.min(without_j);
                child.open.push(j);
            }
        }
        let forced = relaxation.fixed.len() + child.open.len();
        let open_able = (0..m).filter(|&j| !child.closed[j]).count();
        if forced >= sites || open_able <= sites {
            // One plan is left (or none): the forced sites, topped up with every candidate
            // still open-able. Its cost is the best plan's or above, unless the heuristic
            // finds it cheaper.
            if open_able >= sites {
                let mut plan: Vec<usize> = relaxation.fixed.to_vec();
                plan.extend(child.open.iter().copied());
                let mut is_open = vec![false; m];
                plan.iter().for_each(|&j| is_open[j] = true);
                plan.extend((0..m).filter(|&j| !is_open[j] && !child.closed[j]).take(sites - forced));
                plan[relaxation.fixed.len()..].sort_unstable();
                upper = upper.min(improve(&plan));
            }
            continue;
        }
        // Branch on the chosen candidate nearest to being forced open: the least ρ among the
        // chosen ones not yet forced.
        let is_forced = |j: usize| child.open.contains(&j);
        let Some(&branch) = free[..k].iter().find(|&&j| !is_forced(j)) else {
            // Not reached (fewer forced sites than sites leaves a chosen one unforced); were
            // it reached, settling the node at its own bound keeps the proof sound.
            settled = settled.min(node_bound);
            continue;
        };
        let mut without = Node {
            open: child.open.clone(),
            closed: child.closed.clone(),
            bound: node_bound,
            lambda: child.lambda.clone(),
        };
        without.closed[branch] = true;
        child.open.push(branch);
        stack.push(without);
        stack.push(child);
    }
    // Nodes left on the stack (a stop or the budget) bound what they were to search.
    let pending = stack.iter().map(|node| node.bound).fold(f64::INFINITY, f64::min);
    BranchOutcome { bound: settled.min(pending).min(upper).max(root_bound), nodes, spent }
}

#[cfg(test)]
mod tests {
    use crate::discrete::median::{discrete_p_median, DiscreteMedianOptions};
    use crate::discrete::testing::least_median_total;
    use crate::discrete::{CostMatrix, Costs};
    use crate::geometry::random::SplitMix64 as Rng;
    use crate::geometry::Weights;

    /// Planar instances: `n` points and `m` candidates uniform in the unit square.
    fn planar(rng: &mut Rng, n: usize, m: usize) -> (Vec<f64>, Vec<f64>) {
        let pts: Vec<[f64; 2]> = (0..n).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        let cands: Vec<[f64; 2]> = (0..m).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        let values = pts.iter().flat_map(|a| cands.iter().map(move |b| (a[0] - b[0]).hypot(a[1] - b[1]))).collect();
        let w = (0..n).map(|_| 1.0 + (rng.next_f64() * 8.0).floor()).collect();
        (values, w)
    }

    #[test]
    fn a_weak_root_is_closed_by_the_tree_to_the_brute_force_optimum() {
        // The root gets a few iterations and no search, so a gap is left for the tree; the
        // tree must prove the optimum that enumeration finds (outside check: every p-subset).
        let mut rng = Rng::new(11);
        let mut searched = 0;
        for case in 0..40 {
            let (n, m) = (16, 11);
            let (values, w) = planar(&mut rng, n, m);
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            let p = 1 + case % 4;
            let fixed: Vec<usize> = if case % 3 == 0 { vec![case % m] } else { vec![] };
            let options =
                DiscreteMedianOptions { bound_iterations: 5, search_rounds: 0, ..DiscreteMedianOptions::default() };
            let r = discrete_p_median(&costs, Weights::Given(&w), p, &fixed, &options).unwrap();
            let exact = least_median_total(&values, m, &w, p, &fixed);
            assert!(
                (r.service.total_cost - exact).abs() <= 1e-9 * exact,
                "case {case}: {} vs {exact}",
                r.service.total_cost
            );
            assert!(r.lower_bound <= exact * (1.0 + 1e-12), "case {case}: bound {} above {exact}", r.lower_bound);
            assert!(r.relative_gap <= 1e-9, "case {case}: gap {} left", r.relative_gap);
            searched += usize::from(r.branch_nodes > 0);
        }
        // The check above means something only if the tree had work to do.
        assert!(searched >= 20, "the tree ran on {searched} of 40 cases");
    }

    #[test]
    fn integer_costs_with_ties_are_proven_too() {
        // Integer costs in 0..20 (many ties, degenerate relaxations).
        let mut rng = Rng::new(12);
        for case in 0..30 {
            let (n, m) = (12, 10);
            let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 20.0).floor()).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 3.0).floor()).collect();
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            let p = 2 + case % 3;
            let options = DiscreteMedianOptions { bound_iterations: 10, ..DiscreteMedianOptions::default() };
            let r = discrete_p_median(&costs, Weights::Given(&w), p, &[], &options).unwrap();
            let exact = least_median_total(&values, m, &w, p, &[]);
            assert!((r.service.total_cost - exact).abs() <= 1e-9 * exact.max(1.0), "case {case}");
            assert!(r.lower_bound <= exact + 1e-9 * exact.max(1.0), "case {case}: bound above the optimum");
            assert!(r.service.total_cost - r.lower_bound <= 1e-9 * exact.max(1.0), "case {case}: not proven");
        }
    }

    #[test]
    fn no_budget_keeps_the_root_bound_and_a_small_budget_stays_a_bound() {
        let mut rng = Rng::new(13);
        let (n, m) = (40, 14);
        let (values, w) = planar(&mut rng, n, m);
        let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
        let exact = least_median_total(&values, m, &w, 4, &[]);
        let root_only = DiscreteMedianOptions {
            bound_iterations: 3,
            search_rounds: 0,
            branch_iterations: Some(0),
            ..DiscreteMedianOptions::default()
        };
        let r0 = discrete_p_median(&costs, Weights::Given(&w), 4, &[], &root_only).unwrap();
        assert_eq!(r0.branch_nodes, 0);
        assert!(r0.relative_gap > 1e-6, "the case must leave a gap at the root");
        for budget in [1, 10, 100, 100_000] {
            let options = DiscreteMedianOptions { branch_iterations: Some(budget), ..root_only.clone() };
            let r = discrete_p_median(&costs, Weights::Given(&w), 4, &[], &options).unwrap();
            assert!(r.lower_bound >= r0.lower_bound, "budget {budget}: the tree lowered the bound");
            assert!(r.lower_bound <= exact * (1.0 + 1e-12), "budget {budget}: bound above the optimum");
            assert!(r.bound_iterations <= 3 + budget);
        }
        let full = DiscreteMedianOptions { branch_iterations: Some(100_000), ..root_only };
        let r = discrete_p_median(&costs, Weights::Given(&w), 4, &[], &full).unwrap();
        assert!((r.service.total_cost - exact).abs() <= 1e-9 * exact && r.relative_gap <= 1e-9);
    }
}
