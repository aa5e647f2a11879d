//! The linear relaxation of the concatenation program, kept warm across cuts and branching.
//!
//! `microlp` edits a solved LP in place (a constraint added, a variable fixed or released)
//! and re-optimises from the previous basis by the dual simplex method. An edit that
//! proves the LP infeasible consumes the solver, so the rows and fixes are also kept here
//! and the LP is rebuilt from them when needed; the answer is the same either way.

use std::collections::BTreeMap;
use std::time::{Duration, Instant};

use microlp::{
    ComparisonOp, Error, OptimizationDirection, Problem, ResumeOptions, SolutionStatus, SolveOptions, SolveOutcome,
    Variable,
};

use crate::cancel::Clock;
use crate::network::steiner::fst::FullTree;

/// Longest uninterrupted stretch of the LP solver between polls of the clock.
const SLICE: Duration = Duration::from_millis(50);

/// A sparse row: `(FST index, coefficient)`.
pub(super) type Row = Vec<(usize, f64)>;

/// What a solve of the relaxation ended in.
pub(super) enum Answer {
    /// Optimal: the objective and the value of every FST's variable.
    Solved(f64, Vec<f64>),
    /// No point meets the rows and the fixes.
    Infeasible,
    /// The clock stopped the solve.
    Stopped,
    /// The solver failed (numerical trouble); the node cannot be decided.
    Failed,
}

enum State {
    /// Solved (optimal) and ready for warm edits.
    Warm(microlp::Solution),
    /// Proven infeasible with the present fixes (adding rows keeps it so).
    Infeasible,
    /// To be built from the rows and fixes.
    Cold,
}

/// The LP relaxation: FST variables in `[0, 1]`, the rows, and the fixes of branching.
pub(super) struct Relaxation<'a> {
    trees: &'a [FullTree],
    rows: Vec<(Row, ComparisonOp, f64)>,
    fixed: BTreeMap<usize, f64>,
    vars: Vec<Variable>,
    state: State,
}

impl<'a> Relaxation<'a> {
    /// The relaxation with the rows of Warme's (1998) formulation that are stated at once:
    /// the total rank `Σ (|S_i| − 1) x_i = n − 1`, one covering row per terminal, and the
    /// subtour rows of the pairs of terminals that two or more FSTs share.
    pub fn new(n: usize, trees: &'a [FullTree]) -> Relaxation<'a> {
        let mut rows = Vec::new();
        let sizes: Row = trees.iter().enumerate().map(|(i, t)| (i, (t.terminals.len() - 1) as f64)).collect();
        rows.push((sizes, ComparisonOp::Eq, (n - 1) as f64));
        let mut covering: Vec<Row> = vec![Vec::new(); n];
        let mut pairs: std::collections::HashMap<(usize, usize), Row> = std::collections::HashMap::new();
        for (i, t) in trees.iter().enumerate() {
            for (a, &u) in t.terminals.iter().enumerate() {
                covering[u].push((i, 1.0));
                for &w in &t.terminals[a + 1..] {
                    pairs.entry((u, w)).or_default().push((i, 1.0));
                }
            }
        }
        rows.extend(covering.into_iter().map(|row| (row, ComparisonOp::Ge, 1.0)));
        let mut shared: Vec<_> = pairs.into_iter().filter(|(_, row)| row.len() > 1).collect();
        shared.sort_by_key(|(k, _)| *k);
        rows.extend(shared.into_iter().map(|(_, row)| (row, ComparisonOp::Le, 1.0)));
        Relaxation { trees, rows, fixed: BTreeMap::new(), vars: Vec::new(), state: State::Cold }
    }

    /// Add the row `Σ row ≤ rhs` (a cut valid for every node). An infeasible LP stays so.
    pub fn add_le(&mut self, row: Row, rhs: f64, clock: &Clock) {
        match std::mem::replace(&mut self.state, State::Cold) {
            State::Warm(solution) => {
                let expr: Vec<(Variable, f64)> = row.iter().map(|&(i, c)| (self.vars[i], c)).collect();
                self.state = settle(solution.add_constraint(expr.as_slice(), ComparisonOp::Le, rhs), clock);
            }
            other => self.state = other,
        }
        self.rows.push((row, ComparisonOp::Le, rhs));
    }

    /// Make `target` (FST index → 0 or 1) the fixes, editing the warm LP where it can.
    ///
    /// Invariant: a [`State::Infeasible`] left behind is proven for a subset of the target's
    /// fixes (releases come first, and a release that fails leaves the state cold), so it
    /// holds for the target too.
    pub fn set_fixes(&mut self, target: &BTreeMap<usize, f64>, clock: &Clock) {
        let releases: Vec<usize> =
            self.fixed.iter().filter(|&(i, v)| target.get(i) != Some(v)).map(|(&i, _)| i).collect();
        let fixes: Vec<(usize, f64)> =
            target.iter().filter(|&(i, v)| self.fixed.get(i) != Some(v)).map(|(&i, &v)| (i, v)).collect();
        self.fixed.clone_from(target);
        if !releases.is_empty() && matches!(self.state, State::Infeasible) {
            self.state = State::Cold;
        }
        for i in releases {
            let State::Warm(solution) = std::mem::replace(&mut self.state, State::Cold) else {
                break;
            };
            if let Ok((outcome, _)) = solution.unfix_var(self.vars[i]) {
                if let State::Warm(solution) = settle(Ok(outcome), clock) {
                    self.state = State::Warm(solution);
                }
            }
        }
        for (i, v) in fixes {
            // Cold stays cold (rebuilt with every fix); infeasible stays infeasible.
            match std::mem::replace(&mut self.state, State::Cold) {
                State::Warm(solution) => self.state = settle(solution.fix_var(self.vars[i], v), clock),
                other => {
                    self.state = other;
                    break;
                }
            }
        }
    }

    /// Solve (or read) the relaxation with the present rows and fixes.
    pub fn solve(&mut self, clock: &Clock) -> Answer {
        if matches!(self.state, State::Cold) {
            self.state = self.build(clock);
        }
        match &self.state {
            State::Warm(solution) => {
                let values = self.vars.iter().map(|&v| solution.var_value(v)).collect();
                Answer::Solved(solution.objective(), values)
            }
            State::Infeasible => Answer::Infeasible,
            State::Cold => {
                if clock.stop() {
                    Answer::Stopped
                } else {
                    Answer::Failed
                }
            }
        }
    }

    /// Build the LP from the rows and fixes and solve it from scratch.
    fn build(&mut self, clock: &Clock) -> State {
        let mut problem = Problem::new(OptimizationDirection::Minimize);
        self.vars = self
            .trees
            .iter()
            .enumerate()
            .map(|(i, t)| {
                let bounds = self.fixed.get(&i).map_or((0.0, 1.0), |&v| (v, v));
                problem.add_var(t.length, bounds)
            })
            .collect();
        for (row, op, rhs) in &self.rows {
            let expr: Vec<(Variable, f64)> = row.iter().map(|&(i, c)| (self.vars[i], c)).collect();
            problem.add_constraint(expr.as_slice(), *op, *rhs);
        }
        let mut options = SolveOptions::default();
        options.time_limit = slice(clock);
        settle(problem.solve_with(options), clock)
    }
}

/// The time left for one slice of the solver.
fn slice(clock: &Clock) -> Option<Duration> {
    let left = clock.deadline().map_or(SLICE, |d| d.saturating_duration_since(Instant::now()));
    Some(left.min(SLICE))
}

/// Resume a solve in slices until it is optimal, infeasible, failed, or stopped by the clock
/// (then [`State::Cold`]: the caller sees the clock stopped).
fn settle(outcome: Result<SolveOutcome, Error>, clock: &Clock) -> State {
    let mut outcome = match outcome {
        Ok(outcome) => outcome,
        Err(Error::Infeasible) => return State::Infeasible,
        Err(_) => return State::Cold,
    };
    loop {
        if let SolveOutcome::Solution(solution) = &outcome {
            if solution.status() == SolutionStatus::Optimal {
                let SolveOutcome::Solution(solution) = outcome else { unreachable!("matched above") };
                return State::Warm(solution);
            }
        }
        if clock.stop() {
            return State::Cold;
        }
        let mut resume = ResumeOptions::default();
        resume.time_limit = slice(clock);
        outcome = match outcome.resume_with(resume) {
            Ok(outcome) => outcome,
            Err(Error::Infeasible) => return State::Infeasible,
            Err(_) => return State::Cold,
        };
    }
}
